"""Petrov types of published spacetimes, the Weyl scalars of the tool's tetrad, and rejected
wrong Petrov claims."""

from __future__ import annotations

import pytest
import sympy
from classify_cases import (
    POSITIONS,
    flrw_free_entry,
    kasner_entry,
    kerr_entry,
    make_entry,
    pp_wave_entry,
    prepared,
    reissner_nordstrom_entry,
    schwarzschild_entry,
)

from generator.geometry.curvature import compute_geometry_and_weyl
from generator.geometry.sampling import sample_points
from generator.model import Claims
from generator.physics.classify import classify
from generator.physics.petrov import (
    PAIRS,
    FieldAlgebra,
    decide_type,
    decide_type_in_field,
    determinant,
    field_operators,
    invariants,
    petrov_type,
)


def petrov_of(entry):
    entry, spacetime, geometry = prepared(entry)
    return petrov_type(geometry, spacetime, sample_points(spacetime, 4, 3)), spacetime


def test_schwarzschild_is_type_d_with_psi2_minus_m_over_r_cubed() -> None:
    # Type D with Psi2 = -M/r**3 in the static frame (Griffiths & Podolský 2009, §8.1;
    # Stephani et al. 2003, Table 15.1 — from memory).
    result, spacetime = petrov_of(schwarzschild_entry())
    M, r = spacetime.symbols["M"], spacetime.symbols["r"]
    assert result.type == "D"
    psi = result.weyl_scalars
    assert psi is not None
    assert sympy.simplify(psi["Psi2"] + M / r**3) == 0
    assert all(psi[k] == 0 for k in ("Psi0", "Psi1", "Psi3", "Psi4"))
    i, j = invariants(psi)
    assert sympy.simplify(i**3 - 27 * j**2) == 0


def test_reissner_nordstrom_is_type_d() -> None:
    # Psi2 = -M/r**3 + Q**2/r**4 (Griffiths & Podolský 2009, §9.2, from memory).
    result, spacetime = petrov_of(reissner_nordstrom_entry())
    M, Q, r = (spacetime.symbols[k] for k in ("M", "Q", "r"))
    assert result.type == "D"
    assert sympy.simplify(result.weyl_scalars["Psi2"] - (-M / r**3 + Q**2 / r**4)) == 0


@pytest.mark.slow
def test_kerr_is_type_d() -> None:
    # Kerr (1963) is algebraically special of type D (Stephani et al. 2003, §20.2;
    # Griffiths & Podolský 2009, §11.1).
    result, _ = petrov_of(kerr_entry())
    assert result.type == "D"


def test_plane_wave_is_type_n() -> None:
    # Vacuum pp-waves with H_xx = -H_yy != 0 are type N (Griffiths & Podolský 2009, §17.1;
    # Stephani et al. 2003, §24.5 — from memory).
    result, _ = petrov_of(pp_wave_entry())
    assert result.type == "N"
    assert "Q² = 0" in result.reason


def test_flat_flrw_is_type_o() -> None:
    # FLRW is conformally flat (Stephani et al. 2003, §14.1).
    result, _ = petrov_of(flrw_free_entry())
    assert result.type == "O"


def test_generic_kasner_is_type_i() -> None:
    # Kasner exponents (-2/7, 3/7, 6/7), all different: type I (Stephani et al. 2003, §13.3,
    # from memory). The tool's Psi's must then violate I**3 = 27 J**2.
    result, _ = petrov_of(kasner_entry())
    assert result.type == "I"
    i, j = invariants(result.weyl_scalars)
    assert sympy.simplify(i**3 - 27 * j**2) != 0


def test_kasner_with_two_equal_exponents_is_type_d() -> None:
    # Exponents (-1/3, 2/3, 2/3): the axisymmetric Kasner metric is type D (from memory).
    entry = make_entry("t x y z", "-dt**2 + t**(-2/3)*dx**2 + t**(4/3)*(dy**2 + dz**2)", {},
                       ("t > 0",))
    result, _ = petrov_of(entry)
    assert result.type == "D"


def test_three_dimensions_have_no_petrov_type() -> None:
    entry = make_entry("t r phi", "-dt**2 + dr**2 + r**2*dphi**2", {}, ("r > 0",))
    result, _ = petrov_of(entry)
    assert result.type is None
    assert "4-dimensional Lorentzian" in result.reason


# ---------------------------------------------------------------------------- claim mutations


def test_wrong_petrov_claim_is_rejected() -> None:
    entry, spacetime, geometry = prepared(schwarzschild_entry(claims=Claims(petrov_type="N")))
    classification, problems = classify(entry, spacetime, geometry, {})
    assert classification.petrov_type == "D"
    assert [p.message for p in problems] == ["claimed Petrov type N but the computed type is D"]
    assert problems[0].line == POSITIONS["claims.petrov_type"].line


def test_petrov_claim_in_three_dimensions_is_rejected() -> None:
    entry = make_entry("t r phi", "-dt**2 + dr**2 + r**2*dphi**2", {}, ("r > 0",),
                       claims=Claims(petrov_type="O"))
    entry, spacetime, geometry = prepared(entry)
    classification, problems = classify(entry, spacetime, geometry, {})
    assert classification.petrov_type is None
    assert "petrov_type" in classification.reasons
    assert [p.code for p in problems] == ["claim.petrov_type"]
    assert "does not apply" in problems[0].message


# Kundt waves ds² = 2 du dr + 2H du² + dx² + dy²: in the natural null tetrad Ψ0 = Ψ1 = 0,
# Ψ2 ∝ H_rr, Ψ3 ∝ ∂_ζ H_r and Ψ4 ∝ ∂_ζζ H (Griffiths & Podolský 2009, "Exact Space-Times",
# §18.2 — from memory). So H quadratic in r with a ζ-dependent part is type II, H linear in r
# with H_r non-constant is type III, H free of r is a pp-wave (N). The catalog has no type II
# or III entry; these cases exercise those branches.
KUNDT_WAVES = [
    ("r**2*x", "II"),
    ("r**2 + x*y", "II"),
    ("r**2*x + r*y", "II"),
    ("r*x", "III"),
    ("r*x*y", "III"),
    ("x**2 - y**2", "N"),
]


@pytest.mark.parametrize(("profile", "expected"), KUNDT_WAVES)
def test_kundt_waves_types_agree_on_all_three_paths(profile: str, expected: str) -> None:
    """The engine's exact operator, the operator rebuilt from display forms, and the SymPy
    path with complex 6×6 products (a different formulation) must all give the published type."""
    _entry, spacetime, geometry = prepared(make_entry(
        "u r x y", f"2*du*dr + 2*({profile})*du**2 + dx**2 + dy**2"))
    _, operator = compute_geometry_and_weyl(spacetime, None)
    assert operator is not None
    engine = decide_type_in_field(operator, spacetime)
    rebuilt = decide_type_in_field(field_operators(geometry, spacetime), spacetime)
    legacy = decide_type(geometry, spacetime)
    assert engine[0] == rebuilt[0] == legacy[0] == expected
    assert engine[1] == legacy[1]  # the same criteria decided in the same order


def test_duality_squares_to_minus_one_in_the_field() -> None:
    """(σS̃)² = ** = −1 on bivectors of a Lorentzian metric (common practice), which the
    field path's one-part test for (Q − λ)(Q + 2λ) = 0 relies on; checked exactly for Kerr's
    off-diagonal metric."""
    _entry, spacetime, _geometry = prepared(kerr_entry())
    _, operator = compute_geometry_and_weyl(spacetime, None)
    assert operator is not None
    f = operator.field
    algebra = FieldAlgebra(f, spacetime)
    levi = [[f.const(int(sympy.LeviCivita(*PAIRS[E], *PAIRS[B]))) for B in range(6)]
            for E in range(6)]
    dual = algebra.matmul(operator.bivector, levi)
    sigma2 = f.neg(determinant(f, operator.metric))
    square = algebra.matmul(dual, dual)
    minus_inverse = f.neg(f.inv(sigma2))
    for i in range(6):
        for j in range(6):
            assert f.equal(square[i][j], minus_inverse if i == j else f.zero())
