"""Matter content: kinds decided from the geometry, declared sources verified, and mutations of
each declared source rejected with the failing components named."""

from __future__ import annotations

import sympy
from classify_cases import (
    POSITIONS,
    de_sitter_static_entry,
    flrw_dust_entry,
    make_entry,
    prepared,
    reissner_nordstrom_entry,
    schwarzschild_entry,
    text,
    vector,
)

from generator.model import Matter
from generator.physics.classify import classify
from generator.physics.matter import classify_matter


def run(entry):
    return classify_matter(*prepared(entry))


def errors(result) -> list[str]:
    return [d.message for d in result.diagnostics if d.severity == "error"]


# ---------------------------------------------------------------------------- published kinds


def test_schwarzschild_is_vacuum() -> None:
    # Schwarzschild (1916): R_ab = 0.
    result = run(schwarzschild_entry())
    assert result.kind == "vacuum"
    assert result.cosmological_constant is None
    assert errors(result) == []


def test_de_sitter_is_lambda_vacuum_with_lambda_three_over_ell_squared() -> None:
    # de Sitter (1917) static chart: R = 12/ell**2, Λ = 3/ell**2 (Griffiths & Podolský 2009,
    # §4.1, from memory).
    entry = de_sitter_static_entry(matter=Matter(kind="lambda-vacuum"))
    entry, spacetime, geometry = prepared(entry)
    result = classify_matter(entry, spacetime, geometry)
    ell = spacetime.symbols["ell"]
    assert result.kind == "lambda-vacuum"
    assert sympy.simplify(result.cosmological_constant - 3 / ell**2) == 0
    assert errors(result) == []


def test_declared_lambda_must_match_the_geometry() -> None:
    entry = de_sitter_static_entry(matter=Matter(kind="lambda-vacuum",
                                                 cosmological_constant=text("1/ell**2")))
    result = run(entry)
    assert len(errors(result)) == 1
    assert "declared Λ = ell**(-2)" in errors(result)[0]
    assert "3/ell**2" in errors(result)[0]
    assert result.diagnostics[0].line == POSITIONS["matter.cosmological_constant"].line


def test_reissner_nordstrom_electrovacuum_from_its_potential() -> None:
    # Reissner (1916), Nordström (1918): A = -Q/r dt; T^t_t = -Q**2/(8 pi r**4)
    # (e.g. Griffiths & Podolský 2009, §9.2, from memory).
    entry, spacetime, geometry = prepared(reissner_nordstrom_entry())
    result = classify_matter(entry, spacetime, geometry)
    Q, r = spacetime.symbols["Q"], spacetime.symbols["r"]
    assert result.kind == "electrovacuum"
    assert errors(result) == []
    expected = -Q**2 / (8 * sympy.pi * r**4)
    assert sympy.simplify(result.stress_energy_mixed[0, 0] - expected) == 0


def test_dust_flrw_perfect_fluid_is_verified() -> None:
    # Einstein–de Sitter: a = t**(2/3), rho = 1/(6 pi t**2), p = 0 (Friedmann equation
    # H**2 = 8 pi rho/3 with H = 2/(3t); common practice).
    result = run(flrw_dust_entry())
    assert result.kind == "perfect-fluid"
    assert errors(result) == []


def test_vaidya_null_dust_is_verified() -> None:
    # Vaidya, Proc. Indian Acad. Sci. A33 (1951) 264, with m(v) = v: T_ab = m'(v)/(4 pi r**2)
    # k_a k_b, k_a = -dv (from memory).
    entry = make_entry("v r theta phi",
                       "-(1 - 2*v/r)*dv**2 + 2*dv*dr + r**2*(dtheta**2 + sin(theta)**2*dphi**2)",
                       {}, ("v > 0", "r > 2*v", "0 < theta < pi"),
                       matter=Matter(kind="null-dust", density=text("1/(4*pi*r**2)"),
                                     null_direction=vector(r="-1")))
    result = run(entry)
    assert result.kind == "null-dust"
    assert errors(result) == []


def test_anisotropic_fluid_reissner_nordstrom_as_diagonal_stress() -> None:
    # The RN field as T^a_b = diag(-rho, -rho, rho, rho), rho = Q**2/(8 pi r**4).
    rho = "Q**2/(8*pi*r**4)"
    matter = Matter(kind="anisotropic-fluid", density=text(rho),
                    principal_pressures=vector(r=f"-{rho}", theta=rho, phi=rho))
    assert errors(run(reissner_nordstrom_entry(matter=matter))) == []


def test_unspecified_reports_stress_energy_only() -> None:
    result = run(flrw_dust_entry(matter=Matter(kind="unspecified")))
    assert result.kind == "non-vacuum"
    assert errors(result) == []
    assert result.stress_energy_mixed is not None


# ---------------------------------------------------------------------------- mutations


def test_vacuum_claim_on_charged_black_hole_names_ricci_components() -> None:
    result = run(reissner_nordstrom_entry(matter=Matter(kind="vacuum")))
    message = errors(result)[0]
    assert message.startswith("matter.kind is vacuum but R_ab ≠ 0: R_tt, R_rr")
    assert result.diagnostics[0].line == POSITIONS["matter.kind"].line


def test_vacuum_claim_on_de_sitter_suggests_lambda_vacuum() -> None:
    result = run(de_sitter_static_entry(matter=Matter(kind="vacuum")))
    assert "Λ-vacuum with Λ = 3/ell**2" in errors(result)[0]
    assert result.diagnostics[0].hint == "declare kind: lambda-vacuum"


def test_lambda_vacuum_claim_on_schwarzschild_is_rejected() -> None:
    result = run(schwarzschild_entry(matter=Matter(kind="lambda-vacuum")))
    assert errors(result) == ["matter.kind is lambda-vacuum but the geometry is Ricci-flat "
                              "(Λ = 0)"]


def test_wrong_density_is_rejected_naming_the_tt_component() -> None:
    matter = Matter(kind="perfect-fluid", density=text("1/(7*pi*t**2)"), pressure=text("0"),
                    velocity=vector(t="1"))
    result = run(flrw_dust_entry(matter=matter))
    # Issue 18: at the density line, with the value the field equations give (1/(6π t²),
    # the Einstein–de Sitter density; see this file's sources).
    assert errors(result) == ["the declared perfect-fluid source does not satisfy "
                              "G_ab + Λ g_ab = 8π T_ab: G_tt − 8π T_tt ≠ 0; with the declared "
                              "velocity the field equations give density = 1/(6*pi*t**2)"]
    assert result.diagnostics[0].line == POSITIONS["matter.density"].line
    assert result.kind == "non-vacuum"


def test_wrong_pressure_is_rejected_naming_the_spatial_components() -> None:
    matter = Matter(kind="perfect-fluid", density=text("1/(6*pi*t**2)"),
                    pressure=text("1/(18*pi*t**2)"), velocity=vector(t="1"))
    message = errors(run(flrw_dust_entry(matter=matter)))[0]
    assert "G_xx − 8π T_xx, G_yy − 8π T_yy, G_zz − 8π T_zz ≠ 0" in message
    assert "G_tt" not in message


def test_unnormalised_velocity_is_rejected() -> None:
    matter = Matter(kind="perfect-fluid", density=text("1/(6*pi*t**2)"), pressure=text("0"),
                    velocity=vector(t="2"))
    result = run(flrw_dust_entry(matter=matter))
    velocity = [d for d in result.diagnostics if d.code == "matter.velocity"]
    assert len(velocity) == 1
    assert "g_ab u^a u^b = -4" in velocity[0].message
    assert velocity[0].line == POSITIONS["matter.velocity"].line


def test_potential_that_fails_maxwell_is_rejected() -> None:
    matter = Matter(kind="electrovacuum", potential=vector(t="-Q/r**2"))
    result = run(reissner_nordstrom_entry(matter=matter))
    codes = [d.code for d in result.diagnostics]
    assert codes == ["matter.maxwell", "matter.field-equations"]
    assert "∇_a F^at" in result.diagnostics[0].message


def test_wrong_charge_factor_is_rejected() -> None:
    matter = Matter(kind="electrovacuum", potential=vector(t="-2*Q/r"))
    result = run(reissner_nordstrom_entry(matter=matter))
    assert [d.code for d in result.diagnostics] == ["matter.field-equations"]


def test_non_null_direction_is_rejected() -> None:
    entry = make_entry("v r theta phi",
                       "-(1 - 2*v/r)*dv**2 + 2*dv*dr + r**2*(dtheta**2 + sin(theta)**2*dphi**2)",
                       {}, ("v > 0", "r > 2*v", "0 < theta < pi"),
                       matter=Matter(kind="null-dust", density=text("1/(4*pi*r**2)"),
                                     null_direction=vector(v="1")))
    codes = [d.code for d in run(entry).diagnostics]
    assert "matter.null-direction" in codes


def test_anisotropic_fluid_with_wrong_tangential_pressure_is_rejected() -> None:
    rho = "Q**2/(8*pi*r**4)"
    matter = Matter(kind="anisotropic-fluid", density=text(rho),
                    principal_pressures=vector(r=f"-{rho}", theta=f"-{rho}", phi=rho))
    message = errors(run(reissner_nordstrom_entry(matter=matter)))[0]
    assert "G^theta_theta − 8π T^theta_theta ≠ 0" in message


def test_missing_source_data_is_an_error_not_a_crash() -> None:
    result = run(flrw_dust_entry(matter=Matter(kind="perfect-fluid")))
    assert errors(result) == ["matter kind 'perfect-fluid' needs 'density'"]


def test_unparsable_density_points_at_the_character() -> None:
    matter = Matter(kind="perfect-fluid", density=text("1/(6*pi*t**2"), pressure=text("0"),
                    velocity=vector(t="1"))
    result = run(flrw_dust_entry(matter=matter))
    assert [d.code for d in result.diagnostics] == ["math.syntax"]


def test_classify_reports_lambda_for_de_sitter() -> None:
    entry, spacetime, geometry = prepared(de_sitter_static_entry(
        matter=Matter(kind="lambda-vacuum")))
    classification, problems = classify(entry, spacetime, geometry, {})
    assert problems == []
    assert classification.matter_kind == "lambda-vacuum"
    assert classification.hawking_ellis_type is None
    assert "no matter" in classification.reasons["hawking_ellis_type"]
    assert {c.status for c in classification.energy_conditions} == {"not-applicable"}
