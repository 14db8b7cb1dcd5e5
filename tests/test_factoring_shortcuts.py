"""Shortcuts past SymPy's polynomial algebra give SymPy's answers.

* ``polycancel.cancelled_fraction``: a quotient with the gcd of numerator and denominator
  divided out by flint; the result must equal SymPy's ``cancel`` as a rational function and
  be as reduced (same total degrees), and leave a quotient with nothing to cancel as written.
* ``weyl_frame.factor_list_over``: a polynomial of degree one in some variable, A·x + B
  with gcd(A, B) = 1, is irreducible (Gauss's lemma, common practice); the factor list given
  for it must be SymPy's ``factor_list(..., domain=QQ_I)`` itself, and reducible
  polynomials must still be factored.
* ``RationalField.display_factors``: the pieces ``display`` multiplies; each base is
  irreducible over Q and their product is the display (SymPy's ``factor_list`` as referee).
* ``horizons.density_root`` fed the field's factors: the same root as from SymPy's factor
  lists, for Kerr–Newman's horizon area density (area 4π(r₊² + a²), from memory; e.g.
  Poisson, "A Relativist's Toolkit", 2004, §5.3; the root's sign is fixed by the caller).
"""

from __future__ import annotations

import random

import pytest
import sympy as sp
from _known_metrics import kerr_newman

from generator.geometry.algebra import FieldRequest, build_field, factored_product
from generator.geometry.equality import factor_pairs
from generator.geometry.polycancel import cancelled_fraction
from generator.physics.horizons import density_root
from generator.physics.weyl_frame import factor_list_over

x, y, z = sp.symbols("x y z")
M, a, Q, r, theta = sp.symbols("M a Q r theta", real=True)


def _random_polynomial(rng: random.Random, terms: int = 4) -> sp.Expr:
    return sp.Add(*(sp.Rational(rng.randint(-6, 6), rng.randint(1, 3))
                    * x ** rng.randint(0, 2) * y ** rng.randint(0, 2) * z ** rng.randint(0, 1)
                    for _ in range(terms)))


def _total_degree(expr: sp.Expr) -> int:
    return sp.Poly(expr, x, y, z).total_degree() if expr.free_symbols else 0


@pytest.mark.parametrize("seed", range(12))
def test_cancelled_fraction_is_sympys_cancel(seed: int) -> None:
    rng = random.Random(seed)
    common, top, bottom = (_random_polynomial(rng) for _ in range(3))
    if 0 in (common, bottom):
        pytest.skip("a zero polynomial was drawn")
    expr = (common * top) / (common * bottom)
    numerator, denominator = cancelled_fraction(expr)
    reference = sp.cancel(expr)
    assert sp.cancel(numerator / denominator - reference) == 0
    ref_top, ref_bottom = sp.fraction(reference)
    assert _total_degree(sp.expand(denominator)) == _total_degree(ref_bottom)
    assert _total_degree(sp.expand(numerator)) == _total_degree(ref_top)


def test_cancelled_fraction_keeps_a_reduced_quotient_as_written() -> None:
    """Nothing in common: the products stay products (cheaper to prove signs of)."""
    expr = Q**2 / (8 * sp.pi * (a**2 * sp.cos(theta) ** 2 + r**2) ** 2)
    assert cancelled_fraction(expr) == (Q**2, 8 * sp.pi * (a**2 * sp.cos(theta) ** 2 + r**2) ** 2)
    # a common factor hidden in the expansion is found: (x² − y²)/(x − y) = x + y
    numerator, denominator = cancelled_fraction((x**2 - y**2) / (x - y))
    assert sp.expand(numerator - (x + y) * denominator) == 0 and denominator.is_number
    # a zero numerator stays zero; floats go to SymPy's own cancel
    assert cancelled_fraction(sp.Integer(0))[0] == 0
    numerator, denominator = cancelled_fraction((0.5 * x**2 - 0.5) / (x - 1))
    assert sp.simplify(numerator / denominator - (0.5 * x + 0.5)) == 0


IRREDUCIBLE = [
    -(sp.I * M * a * sp.cos(theta) + M * r - Q**2),  # Kerr–Newman's Ψ2 numerator
    3 * sp.I * M * a * sp.cos(theta) + 2 * M * r - Q**2 / 2,
    (2 + sp.I) * M * r + 4 * a,
    M * r / 3 - sp.I * Q**2 / 5 + a,
    3 * x,
]
REDUCIBLE = [x * y, x * (y + 1), (x + sp.I) * (y + 2), x**2 + y**2, x * y + x, 5 * x * r,
             sp.Integer(-3), 2 + sp.I]  # constants (Kerr's Ψ2 leaves −M; these are plainer)


@pytest.mark.parametrize("expr", IRREDUCIBLE + REDUCIBLE)
def test_factor_list_over_gaussian_rationals_is_sympys(expr: sp.Expr) -> None:
    assert factor_list_over(expr, sp.QQ_I) == sp.factor_list(expr, domain=sp.QQ_I)


def test_the_shortcut_is_taken_only_for_visibly_irreducible_polynomials() -> None:
    """Mutation guard: were ``x² + y²`` (which splits over Q(i)) taken for irreducible, the
    list would have one factor; SymPy's has two."""
    _unit, factors = factor_list_over(x**2 + y**2, sp.QQ_I)
    assert len(factors) == 2
    _unit, factors = factor_list_over(x * y + x, sp.QQ_I)  # x(y + 1): degree one in y, A = x
    assert sorted(str(f) for f, _ in factors) == ["x", "y + 1"]


def _kerr_newman_field(expressions):
    st = kerr_newman()
    request = FieldRequest(st.coordinates, st.parameters, st.functions, tuple(expressions), 0)
    return build_field(request)


def test_display_factors_are_the_displayed_product_of_irreducibles() -> None:
    st = kerr_newman()
    g = st.metric
    field, values = _kerr_newman_field([g[0, 0], g[0, 3], g[3, 3], g[0, 0] * g[3, 3]
                                        - g[0, 3] ** 2])
    for value in values:
        scale, pairs = field.display_factors(value)
        assert factored_product((scale, pairs)) == field.display(value)
        assert sp.Mul(scale, *(b**e for b, e in pairs)) == field.display(value)
        for base, _ in pairs:
            _, found = sp.factor_list(base)
            assert len(found) == 1 and found[0][1] == 1, base


def test_density_root_from_the_fields_factors_is_the_sympy_one() -> None:
    """Kerr–Newman's cross-section density at the horizon, sin²θ (r₊² + a²)², written with
    r₊ = M + √(M² − a² − Q²): the same root with the field's factors as with SymPy's."""
    st = kerr_newman()
    mass, spin, charge = st.parameters
    polar = st.coordinates[2]
    plus = mass + sp.sqrt(mass**2 - spin**2 - charge**2)
    density = sp.sin(polar) ** 2 * (plus**2 + spin**2) ** 2
    field, (value,) = _kerr_newman_field([density])
    shown = field.display(value)
    ours = density_root(field.display_factors(value), st, [polar])
    theirs = density_root(factor_pairs(shown), st, [polar])
    assert ours is not None and theirs is not None
    assert sp.simplify(ours - theirs) == 0
    area = sp.integrate(ours, (polar, 0, sp.pi)) * 2 * sp.pi  # the root's sign is open
    expected = 4 * sp.pi * (plus**2 + spin**2)
    assert sp.expand(area - expected) == 0 or sp.expand(area + expected) == 0


def test_remembered_conversions_are_the_fresh_ones() -> None:
    """The field remembers converted subexpressions (Σ and Δ recur in every component of
    Kerr–Newman's metric): converting again with the memory emptied must give the same
    normal forms, and the memory must hold the shared subexpression."""
    from generator.geometry.algebra import _convert

    st = kerr_newman()
    entries = [st.metric[a, b] for a in range(4) for b in range(4)]
    field, values = _kerr_newman_field(entries)
    mass, spin, _charge = st.parameters
    sigma = st.coordinates[1] ** 2 + spin**2 * sp.cos(st.coordinates[2]) ** 2
    assert sigma in field.converted
    field.converted.clear()
    fresh = [_convert(field, e, {}) for e in entries]
    assert all(field.equal(x, y) for x, y in zip(values, fresh, strict=True))
    assert field.equal(field.converted[sigma], _convert(field, sigma, {}))
    assert not field.equal(field.converted[sigma], _convert(field, sigma + mass, {}))
