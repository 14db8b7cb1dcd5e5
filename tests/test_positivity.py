"""The sign prover behind "holds" for energy conditions: what it proves, and what it must not.

Published inputs (from memory): Schwarzschild's interior solution of constant density, with
ρ = 3M/(4πR³) and p = ρ (A − B)/(3B − A), A = √(1 − 2Mr²/R³), B = √(1 − 2M/R)
(K. Schwarzschild 1916; e.g. R. M. Wald, "General Relativity", 1984, §6.2), for which
0 ≤ p ≤ ρ inside the star when 8M < 3R (Buchdahl's bound); Bardeen's regular black hole
with ρ = 3Mg²/(4π(r² + g²)^(5/2)) and p_t = 3Mg²(3r² − 2g²)/(8π(r² + g²)^(7/2)). The false
statements are elementary (common practice): each is negative somewhere in its domain, so a
prover that "proves" it is unsound.
"""

from __future__ import annotations

import pytest
import sympy as sp
from _known_metrics import spacetime

from generator.physics.positivity import proved_sign, proves_sign

t, r, theta, phi, x = sp.symbols("t r theta phi x", real=True)
M, R, g = sp.symbols("M R g", positive=True)
PLACEHOLDER = sp.diag(-1, 1, 1, 1)  # the prover reads only the symbols and the domain


def star():
    return spacetime((t, r, theta, phi), (M, R), PLACEHOLDER,
                     domain=(sp.Lt(0, r), sp.Lt(r, R), sp.Lt(8 * M, 3 * R)))


def interior_fluid() -> tuple[sp.Expr, sp.Expr]:
    A, B = sp.sqrt(1 - 2 * M * r**2 / R**3), sp.sqrt(1 - 2 * M / R)
    rho = 3 * M / (4 * sp.pi * R**3)
    return rho, rho * (A - B) / (3 * B - A)


@pytest.mark.parametrize("name", ["rho", "rho + p", "rho - p", "rho + 3p", "p"])
def test_the_interior_solution_satisfies_every_energy_condition(name: str) -> None:
    rho, p = interior_fluid()
    expr = {"rho": rho, "rho + p": rho + p, "rho - p": rho - p, "rho + 3p": rho + 3 * p,
            "p": p}[name]
    assert proves_sign(expr, star())


def test_the_interior_pressure_is_not_proved_larger_than_the_density() -> None:
    rho, p = interior_fluid()
    assert not proves_sign(p - rho, star())
    assert not proves_sign(-p, star(), strict=True)


def test_both_bounds_of_an_interval_are_used() -> None:
    # 0 < r < R gives R**2 - r**2 > 0; with r < R alone it is false (r = -2R).
    assert proves_sign(R**2 - r**2, star(), strict=True)
    one_sided = spacetime((t, r, theta, phi), (M, R), PLACEHOLDER, domain=(sp.Lt(r, R),))
    assert not proves_sign(R**2 - r**2, one_sided)


def test_a_linear_bound_with_a_coefficient_keeps_the_assumed_sign() -> None:
    # 8M < 3R with M > 0: both 3R - 8M > 0 and M*(3R - 8M) > 0; but not 2R - 8M (R = 3M).
    assert proves_sign(3 * R - 8 * M, star(), strict=True)
    assert proves_sign(M * (3 * R - 8 * M), star(), strict=True)
    assert not proves_sign(2 * R - 8 * M, star())


def test_differences_of_square_roots_are_compared_by_their_squares() -> None:
    unit = spacetime((t, x, theta, phi), (), PLACEHOLDER, domain=(sp.Lt(0, x), sp.Lt(x, 1)))
    assert proves_sign(sp.sqrt(2 - x) - sp.sqrt(1 - x), unit, strict=True)
    assert proves_sign(2 * sp.sqrt(1 - x) - sp.sqrt(4 - 4 * x), unit)  # exactly zero
    assert not proves_sign(sp.sqrt(x) - sp.sqrt(1 - x), unit)  # negative for x < 1/2
    assert not proves_sign(sp.sqrt(1 - x) - sp.sqrt(2 - x), unit)


def test_half_integer_powers_of_one_base_combine() -> None:
    bardeen = spacetime((t, r, theta, phi), (M, g), PLACEHOLDER, domain=(sp.Lt(0, r),))
    X = g**2 + r**2
    rho = 3 * M * g**2 / (4 * sp.pi * X ** sp.Rational(5, 2))
    p_t = 3 * M * g**2 * (3 * r**2 - 2 * g**2) / (8 * sp.pi * X ** sp.Rational(7, 2))
    assert proves_sign(rho + p_t, bardeen)
    assert not proves_sign(rho - p_t, bardeen)  # ρ − p_t < 0 for r > 2g: not dominant...
    assert not proves_sign(p_t, bardeen)  # ...and p_t < 0 for 3r² < 2g²


def test_a_bound_on_a_bare_coordinate_stays_with_that_coordinate() -> None:
    # Vaidya's exterior r > 2v, v > 0 (P. C. Vaidya 1951, with m(v) = v): r keeps its bound,
    # so r > 0 and the null-dust density 1/(4 pi r**2) is positive; v keeps 0 < v.
    v = sp.Symbol("v", real=True)
    vaidya = spacetime((v, r, theta, phi), (), PLACEHOLDER,
                       domain=(sp.Gt(v, 0), sp.Gt(r, 2 * v)))
    assert proves_sign(1 / (4 * sp.pi * r**2), vaidya, strict=True)
    assert proves_sign(r - 2 * v, vaidya, strict=True)
    assert proves_sign(r - v, vaidya, strict=True)
    assert not proves_sign(v - r, vaidya)


# ---------------------------------------------------------------------------- squared bounds
# Tolman's solution IV (R. C. Tolman, "Static solutions of Einstein's field equations for
# spheres of fluid", Phys. Rev. 55, 364, 1939; listed in M. S. R. Delgaty and K. Lake,
# Comput. Phys. Commun. 115, 395, 1998), in the form of the catalog entry (whose density and
# pressure the engine verifies from the metric): the surface p = 0 is at 3r² = Rt² − A², so
# the star is the domain 3r² < Rt² − A². There 8πRt²(A² + 2r²)²(ρ + 3p) =
# 6A⁴ + 18A²r² + 12r⁴ + (6A² + 8r²)s with Rt² = A² + 3r² + s (checked by expansion below).

A_, Rt = sp.symbols("A Rt", positive=True)


def tolman_iv(*domain: sp.Basic):
    return spacetime((t, r, theta, phi), (A_, Rt), PLACEHOLDER,
                     domain=domain or (sp.Lt(0, r), sp.Lt(3 * r**2, Rt**2 - A_**2)))


def tolman_iv_fluid() -> tuple[sp.Expr, sp.Expr]:
    rho = ((3 * A_**4 + 3 * A_**2 * Rt**2 + 7 * A_**2 * r**2 + 2 * Rt**2 * r**2 + 6 * r**4)
           / (8 * sp.pi * Rt**2 * (A_**2 + 2 * r**2) ** 2))
    p = (Rt**2 - A_**2 - 3 * r**2) / (8 * sp.pi * Rt**2 * (A_**2 + 2 * r**2))
    return rho, p


def test_the_slack_form_of_tolman_iv_is_a_sum_of_positive_terms() -> None:
    rho, p = tolman_iv_fluid()
    s = sp.Symbol("s", positive=True)
    scaled = sp.cancel((rho + 3 * p) * 8 * sp.pi * Rt**2 * (A_**2 + 2 * r**2) ** 2)
    expected = 6 * A_**4 + 18 * A_**2 * r**2 + 12 * r**4 + (6 * A_**2 + 8 * r**2) * s
    assert sp.expand(scaled.subs(Rt**2, A_**2 + 3 * r**2 + s) - expected) == 0


@pytest.mark.parametrize("name", ["rho + 3p", "rho + p", "rho - p", "p"])
def test_tolman_iv_satisfies_the_energy_conditions_inside_the_star(name: str) -> None:
    rho, p = tolman_iv_fluid()
    expr = {"rho + 3p": rho + 3 * p, "rho + p": rho + p, "rho - p": rho - p, "p": p}[name]
    assert proves_sign(expr, tolman_iv(), strict=name != "p")


def test_tolman_iv_outside_the_star_is_not_proved() -> None:
    # With Rt > A only (the surface bound forgotten) the pressure is negative for large r and
    # ρ + 3p too (its numerator ends in −12r⁴): a proof there would be unsound.
    rho, p = tolman_iv_fluid()
    too_wide = tolman_iv(sp.Lt(0, r), sp.Lt(A_, Rt))
    assert not proves_sign(rho + 3 * p, too_wide)
    assert not proves_sign(p, too_wide)


def test_only_lower_bounds_of_a_positive_square_are_used() -> None:
    from generator.physics.positivity import square_lower_bound

    inside = sp.Lt(3 * r**2, Rt**2 - A_**2)
    assert square_lower_bound(inside, Rt) == ("lower", A_**2 + 3 * r**2, True)
    assert square_lower_bound(inside, A_) is None  # an upper bound on A²
    assert square_lower_bound(inside, r) is None  # r is not declared positive
    assert square_lower_bound(sp.Lt(Rt**3, A_), Rt) is None  # not through the square only
    # an upper bound on Rt² must not be read as a lower one: Rt² < A² does not make Rt > A
    assert not proves_sign(Rt - A_, tolman_iv(sp.Lt(Rt**2, A_**2)))
    assert proves_sign(Rt - A_, tolman_iv(sp.Lt(A_**2, Rt**2)), strict=True)


@pytest.mark.parametrize("name", ["rho", "rho - p", "p", "bardeen"])
def test_one_pass_gives_either_sign(name: str) -> None:
    """``proved_sign`` (which ``proves_sign`` asks for +1) decides ``expr`` ≥ 0 and ``−expr``
    ≥ 0 from one substitution. The interior fluid's ρ, ρ − p and p are ≥ 0 in the star and
    Bardeen's density is > 0 (the published inputs above): +1 for each, −1 for its negative,
    and the strict answer the same on both sides."""
    rho, p = interior_fluid()
    bardeen = 3 * M * g**2 / (4 * sp.pi * (r**2 + g**2) ** sp.Rational(5, 2))
    expr = {"rho": rho, "rho - p": rho - p, "p": p, "bardeen": bardeen}[name]
    st = star()
    assert proved_sign(expr, st) == 1
    assert proved_sign(-expr, st) == -1
    strict = proved_sign(expr, st, strict=True)
    assert strict in (1, None) and proved_sign(-expr, st, strict=True) == (
        None if strict is None else -1)
    if name in ("rho", "bardeen"):
        assert strict == 1


def test_no_sign_for_a_sign_changing_expression_and_zero_is_not_positive() -> None:
    """r − 1 changes sign inside the star (0 < r < R, with R free): no sign either way.
    Zero is ≥ 0 but not > 0."""
    st = star()
    assert proved_sign(r - 1, st) is None and proved_sign(1 - r, st) is None
    assert proved_sign(sp.Integer(0), st) == 1 and proved_sign(sp.Integer(0), st, True) is None
