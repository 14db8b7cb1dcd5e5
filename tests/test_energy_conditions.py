"""Hawking–Ellis types and energy conditions against published spacetimes, plus mutations of
the claims (a claim that disagrees, or "holds" where the tool can only say "undecided")."""

from __future__ import annotations

import pytest
import sympy
from classify_cases import (
    POSITIONS,
    alcubierre_entry,
    flrw_dust_entry,
    flrw_free_entry,
    make_entry,
    morris_thorne_entry,
    prepared,
    reissner_nordstrom_entry,
    text,
    vector,
)

from generator.geometry.equality import decide_equal
from generator.model import Claims, Matter
from generator.physics.classify import classify
from generator.physics.energy import (
    certainly_negative,
    certainly_positive,
    enclosure,
    has_complex_eigenvalue,
    interval_context,
    interval_matrix,
    type_at_point,
    violation_at,
)


def classified(entry):
    entry, spacetime, geometry = prepared(entry)
    classification, problems = classify(entry, spacetime, geometry, {})
    return classification, problems, spacetime


def statuses(classification) -> dict[str, str]:
    return {c.name: c.status for c in classification.energy_conditions}


# ---------------------------------------------------------------------------- published results


def test_reissner_nordstrom_type_one_and_all_conditions_hold() -> None:
    # Electrovacuum is Hawking–Ellis type I with rho = -p_r = p_t = Q**2/(8 pi r**4) and
    # satisfies the dominant energy condition (from memory; Hawking & Ellis 1973, §4.3).
    classification, problems, spacetime = classified(reissner_nordstrom_entry())
    Q, r = spacetime.symbols["Q"], spacetime.symbols["r"]
    rho = Q**2 / (8 * sympy.pi * r**4)
    assert problems == []
    assert classification.hawking_ellis_type == "I"
    assert sympy.simplify(classification.energy_density - rho) == 0
    assert sorted(sympy.simplify(p / rho) for p in classification.principal_pressures) == [
        -1, 1, 1]
    assert statuses(classification) == {"null": "holds", "weak": "holds", "strong": "holds",
                                        "dominant": "holds"}


def test_einstein_de_sitter_dust_satisfies_all_four() -> None:
    # Dust (p = 0, rho > 0) satisfies NEC, WEC, SEC and DEC (Hawking & Ellis 1973, §4.3,
    # from memory).
    classification, problems, _ = classified(flrw_dust_entry())
    assert problems == []
    assert classification.hawking_ellis_type == "I"
    assert set(statuses(classification).values()) == {"holds"}


def test_morris_thorne_throat_violates_the_null_energy_condition() -> None:
    # Morris & Thorne, Am. J. Phys. 56 (1988) 395: with b(r) = b0**2/r and Phi = 0,
    # rho = b'/(8 pi r**2) = -b0**2/(8 pi r**4) and p_r = -b/(8 pi r**3), so at the throat
    # r = b0 (l = 0): rho = p_r = -1/(8 pi b0**2) and rho + p_r < 0.
    classification, _, spacetime = classified(morris_thorne_entry())
    length, b0 = spacetime.symbols["l"], spacetime.symbols["b0"]
    throat = {length: 0}
    rho = classification.energy_density
    assert sympy.simplify(rho.subs(throat) + 1 / (8 * sympy.pi * b0**2)) == 0
    radial = classification.principal_pressures[0]
    assert sympy.simplify(radial.subs(throat) + 1 / (8 * sympy.pi * b0**2)) == 0
    null = statuses(classification)["null"]
    assert null == "violated"
    witness = next(c for c in classification.energy_conditions if c.name == "null").witness
    assert witness is not None and set(witness) >= {"l", "b0"}


@pytest.mark.slow
def test_alcubierre_eulerian_energy_density_is_negative() -> None:
    # Alcubierre, Class. Quantum Grav. 11 (1994) L73, eq. (19): the energy density seen by
    # Eulerian observers is T^00 = -(1/8pi) v**2 rho**2/(4 r_s**2) (df/dr_s)**2, rho**2 =
    # y**2 + z**2. With f = exp(-r_s**2): T^00 = -(v**2/(8 pi)) (y**2 + z**2) f**2.
    entry = alcubierre_entry()
    entry, spacetime, geometry = prepared(entry)
    classification, _ = classify(entry, spacetime, geometry, {})
    v, t, x, y, z = (spacetime.symbols[k] for k in ("v", "t", "x", "y", "z"))
    f = sympy.exp(-((x - v * t) ** 2 + y**2 + z**2))
    normal = sympy.Matrix([1, v * f, 0, 0])  # n^a, lapse 1, shift -v f
    stress = (geometry.einstein) / (8 * sympy.pi)
    eulerian = (normal.T * stress * normal)[0, 0]
    published = -(v**2) / (8 * sympy.pi) * (y**2 + z**2) * f**2
    assert decide_equal(eulerian, published, spacetime).equal is True
    assert statuses(classification)["weak"] == "violated"
    assert statuses(classification)["dominant"] == "violated"


def test_vaidya_null_dust_is_type_two_and_satisfies_the_conditions() -> None:
    # Vaidya (1951) with m(v) = v: pure null radiation, Hawking–Ellis type II; with
    # dm/dv > 0 every energy condition holds (Hawking & Ellis 1973, §4.3, from memory).
    entry = make_entry("v r theta phi",
                       "-(1 - 2*v/r)*dv**2 + 2*dv*dr + r**2*(dtheta**2 + sin(theta)**2*dphi**2)",
                       {}, ("v > 0", "r > 2*v", "0 < theta < pi"),
                       matter=Matter(kind="null-dust", density=text("1/(4*pi*r**2)"),
                                     null_direction=vector(r="-1")))
    classification, problems, _ = classified(entry)
    assert problems == []
    assert classification.hawking_ellis_type == "II"
    assert classification.energy_density is None
    assert set(statuses(classification).values()) == {"holds"}


def test_free_scale_factor_leaves_conditions_undecided() -> None:
    # For an arbitrary a(t) the conditions depend on a(t): never "holds", never "violated".
    classification, _, _ = classified(flrw_free_entry())
    assert statuses(classification)["null"] == "undecided"
    assert "free functions" in next(c.how for c in classification.energy_conditions
                                    if c.name == "null")


# ---------------------------------------------------------------------------- Segre types


def test_type_at_point_recognises_each_jordan_structure() -> None:
    # Linear algebra (common practice): diagonalisable -> I, 2-block -> II, 3-block -> III,
    # complex pair -> IV.
    assert type_at_point(sympy.diag(1, 2, 2, 3)) == "I"
    two = sympy.Matrix([[1, 1, 0, 0], [0, 1, 0, 0], [0, 0, 2, 0], [0, 0, 0, 3]])
    assert type_at_point(two) == "II"
    three = sympy.Matrix([[0, 1, 0, 0], [0, 0, 1, 0], [0, 0, 0, 0], [0, 0, 0, 5]])
    assert type_at_point(three) == "III"
    four = sympy.Matrix([[1, 2, 0, 0], [-2, 1, 0, 0], [0, 0, 1, 0], [0, 0, 0, 1]])
    assert type_at_point(four) == "IV"


# ---------------------------------------------------------------------------- claim mutations


def test_claim_that_wormhole_satisfies_null_condition_is_rejected() -> None:
    claims = Claims(energy_conditions=(("null", "holds"),))
    _, problems, _ = classified(morris_thorne_entry(claims=claims))
    assert len(problems) == 1
    assert problems[0].message.startswith("the null energy condition is claimed holds but it "
                                          "is violated: ρ + p_1 < 0 at")
    assert problems[0].line == POSITIONS["claims.energy_conditions.null"].line


def test_holds_claim_that_cannot_be_proved_is_an_error() -> None:
    claims = Claims(energy_conditions=(("weak", "holds"),))
    _, problems, _ = classified(flrw_free_entry(claims=claims))
    assert len(problems) == 1
    assert "claimed to hold but could not be proved" in problems[0].message
    assert problems[0].hint.startswith("claim 'undecided', or tighten the domain")


def test_violated_claim_on_dust_is_rejected() -> None:
    claims = Claims(energy_conditions=(("strong", "violated"),))
    _, problems, _ = classified(flrw_dust_entry(claims=claims))
    assert [p.message.split(":")[0] for p in problems] == [
        "the strong energy condition is claimed violated but it is holds"]


def test_wrong_hawking_ellis_type_is_rejected() -> None:
    claims = Claims(hawking_ellis_type="II")
    _, problems, _ = classified(reissner_nordstrom_entry(claims=claims))
    assert [p.message for p in problems] == [
        "claimed Hawking–Ellis type II but the computed type is I"]
    assert problems[0].line == POSITIONS["claims.hawking_ellis_type"].line


def test_energy_condition_claim_on_vacuum_does_not_apply() -> None:
    from classify_cases import schwarzschild_entry

    claims = Claims(energy_conditions=(("null", "holds"),))
    _, problems, _ = classified(schwarzschild_entry(claims=claims))
    assert [p.code for p in problems] == ["claim.energy-condition"]
    assert "does not apply" in problems[0].message


def test_non_rational_points_detect_only_clearly_complex_spectra() -> None:
    # A rotation block with irrational entries has eigenvalues 1 ± i*sqrt(2) (common practice);
    # a real diagonal matrix with the same entries must not be called type IV.
    root = sympy.sqrt(2)
    rotation = [1, root, 0, 0, -root, 1, 0, 0, 0, 0, 1, 0, 0, 0, 0, sympy.E]
    diagonal = [1, 0, 0, 0, 0, root, 0, 0, 0, 0, 1, 0, 0, 0, 0, sympy.E]
    assert has_complex_eigenvalue(rotation, 4)
    assert not has_complex_eigenvalue(diagonal, 4)


# ---------------------------------------------------------------------------- interval observers


def test_an_exact_zero_in_disguise_is_never_given_a_sign() -> None:
    # sqrt(3 + 2 sqrt 2) = 1 + sqrt 2 (a nested radical, common practice): the difference is
    # exactly zero, but SymPy keeps it unevaluated; its enclosure must straddle zero.
    iv = interval_context()
    disguised = sympy.sqrt(3 + 2 * sympy.sqrt(2)) - 1 - sympy.sqrt(2)
    assert disguised != 0
    zero = enclosure(iv, disguised)
    assert zero is not None and not certainly_negative(zero) and not certainly_positive(zero)
    tiny = enclosure(iv, sympy.exp(-30))  # far above the slack: a certain sign
    assert certainly_positive(tiny)
    assert enclosure(iv, sympy.I + 1) is None


@pytest.mark.parametrize(("density", "violated"), [
    # Dust, T_ab = rho u_a u_b in flat space: all four conditions hold for rho >= 0 and the
    # weak, strong and dominant ones fail for rho < 0 (Hawking & Ellis 1973, §4.3, from memory).
    (sympy.Integer(1), {"null": False, "weak": False, "strong": False, "dominant": False}),
    (sympy.Integer(0), {"null": False, "weak": False, "strong": False, "dominant": False}),
    (sympy.Rational(-1, 3), {"null": True, "weak": True, "strong": True, "dominant": True}),
])
def test_interval_observer_search_on_dust(density: sympy.Expr, violated: dict[str, bool]
                                          ) -> None:
    iv = interval_context()
    metric = sympy.diag(-1, 1, 1, 1)
    stress = sympy.diag(density, 0, 0, 0)
    T, g = interval_matrix(iv, list(stress), 4), interval_matrix(iv, list(metric), 4)
    for name, expected in violated.items():
        assert bool(violation_at(iv, name, T, g)) is expected, name


def test_an_enclosure_contains_the_exact_value_to_its_stated_precision() -> None:
    """The interval built from a 60-digit value must contain the exact number: rounding the
    centre to mpmath's default 53 bits lost 1e-16 relative, far beyond the 1e-50 slack, and made
    a Maxwell field of Kerr–Newman in Kerr–Schild form "violate" the null energy condition
    (T_ab k^a k^b of order 1e-19 along a nearly principal null direction). √2 and π to 300 bits
    (mpmath, a reference library) must lie inside, and the interval must stay narrow."""
    import mpmath
    import sympy

    from generator.physics.energy import enclosure, interval_context

    iv = interval_context()
    for exact, reference in ((sympy.sqrt(2), lambda: mpmath.sqrt(2)),
                             (sympy.pi / 3, lambda: mpmath.pi / 3),
                             (sympy.Rational(1, 3) + sympy.sqrt(3) / 10**20,
                              lambda: mpmath.mpf(1) / 3 + mpmath.sqrt(3) / 10**20)):
        box = enclosure(iv, exact)
        with mpmath.workprec(300):
            true = reference()
            assert box.a <= true <= box.b
            assert box.b - box.a < mpmath.mpf(10) ** -40


def test_a_free_function_counter_example_names_the_function_values() -> None:
    """For flat FLRW, ρ + p ≥ 0 exactly when a′² ≥ a a″ (Friedmann equations, common
    practice): a counter-example is about a, a′, a″ at a point, so those values are given."""
    import sympy

    from generator.geometry.exactvalues import point_text

    t = sympy.Symbol("t", real=True)
    a = sympy.Function("a", positive=True)(t)
    point = {t: sympy.Rational(1, 60), a: sympy.Integer(2), sympy.Derivative(a, t): 1,
             sympy.Derivative(a, (t, 2)): sympy.Integer(3)}
    text = point_text(point)
    assert text == "t = 1/60, a = 2, a′ = 1, a″ = 3"  # violates a′² ≥ a a″ (1 < 6)
