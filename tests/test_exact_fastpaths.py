"""The faster exact paths of the heavy horizon checks give the answers of the plain methods.

* ``rootfield.divides`` / ``primitive_part``: "P(h) divides p in Q(params)[h]" decided by one
  multivariate division by P's primitive part (Gauss's lemma, common practice), against
  SymPy's pseudo-remainder ``sympy.prem`` over the polynomial ring, and with mutants.
* ``horizons.denested_root``: sqrt(A + B√d) = x + y√d (the classical denesting, common
  practice; e.g. √(3 + 2√2) = 1 + √2), its A, B read from the exact field's normal form
  (``radical_parts``) against SymPy's ``collect``, and the Kerr–Newman surface gravity
  κ = √(M² − a² − Q²)/(r₊² + a²) at r₊ = M + √(M² − a² − Q²) (from memory; e.g. Poisson,
  "A Relativist's Toolkit", 2004, §5.3) recovered from κ².
"""

from __future__ import annotations

import random
from functools import cache
from pathlib import Path

import flint
import pytest
import sympy as sp

from generator.entry.catalog import vocabulary
from generator.entry.loader import load_entry
from generator.model import Spacetime
from generator.physics.horizons import denested_root, has_fractional_power, radical_parts
from generator.physics.rootfield import divides, primitive_part, pseudo_remainder

CATALOG = Path(__file__).resolve().parent.parent / "catalog"


# ---------------------------------------------------------------------------- divisibility


def _random_polynomial(rng: random.Random, ctx: flint.fmpq_mpoly_ctx, top: int):
    x, y, h = ctx.gens()
    p = ctx.constant(0)
    for _ in range(rng.randint(1, 6)):
        p += flint.fmpq(rng.randint(-5, 5), rng.randint(1, 3)) * x ** rng.randint(0, 3) \
            * y ** rng.randint(0, 3) * h ** rng.randint(0, top)
    return p


def _sympy_divides(relation, p, ctx) -> bool:
    """SymPy's reference: the pseudo-remainder of p by the relation in h is zero."""
    x, y, h = sp.symbols("x y h")
    as_expr = {name: s for name, s in zip(("x", "y", "h"), (x, y, h), strict=True)}
    big, small = (sp.sympify(q.str(), locals=as_expr) for q in (p, relation))
    return sp.prem(big, small, h) == 0


def test_division_by_the_primitive_part_agrees_with_sympy_pseudo_remainder() -> None:
    ctx = flint.fmpq_mpoly_ctx.get(("x", "y", "h"), "lex")
    x, y, _h = ctx.gens()
    rng = random.Random(20261203)
    divisible = other = 0
    for i in range(150):
        relation = _random_polynomial(rng, ctx, 3)
        if relation.degrees()[2] < 1:
            continue
        if i % 3 == 0:
            relation = relation * (x + 2 * y)  # a content in h, which the test must strip
        multiple = _random_polynomial(rng, ctx, 3) * relation
        p = multiple if i % 2 == 0 else multiple + _random_polynomial(rng, ctx, 2)
        expected = _sympy_divides(relation, p, ctx)
        assert divides(primitive_part(relation, 2, ctx), p) is expected
        assert pseudo_remainder(p, relation, 2, ctx).is_zero() is expected
        divisible += expected
        other += not expected
    assert divisible > 20 and other > 20  # both answers were exercised


def test_a_content_in_the_relation_does_not_hide_a_root() -> None:
    """m h² − 2m has the roots ±√2 for every m ≠ 0: h⁴ − 4 vanishes there, h⁴ − 3 and h³ − 4
    do not (a test of P itself, not of its primitive part, would say 'no' to the first)."""
    ctx = flint.fmpq_mpoly_ctx.get(("h", "m"), "lex")
    h, m = ctx.gens()
    primitive = primitive_part(m * h**2 - 2 * m, 0, ctx)
    assert primitive == h**2 - 2
    assert divides(primitive, h**4 - 4)
    assert not divides(primitive, h**4 - 3)
    assert not divides(primitive, h**3 - 4)
    assert divides(primitive, ctx.constant(0))


# ---------------------------------------------------------------------------- denesting


@cache
def kerr_newman() -> Spacetime:
    path = CATALOG / "isolated-objects" / "kerr-newman.yaml"
    result = load_entry(path, path.name, vocabulary(CATALOG))
    assert result.ok, result.diagnostics
    return result.spacetime


def _symbols(spacetime: Spacetime) -> dict[str, sp.Symbol]:
    return {str(s): s for s in (*spacetime.parameters, *spacetime.coordinates)}


def test_radical_parts_match_sympy_collect() -> None:
    st = kerr_newman()
    s = _symbols(st)
    M, a, Q = s["M"], s["a"], s["Q"]
    root = sp.sqrt(M**2 - a**2 - Q**2)
    square = (3 * M + a * root) / (M - root) + Q**2 / M
    even, odd, w = radical_parts(square, root, st)
    assert sp.simplify(w - root) == 0  # a polynomial radicand: the generator is √d itself
    z = sp.Dummy("z")
    num, den = sp.fraction(sp.together(square.xreplace({root: z})))
    conj = den.xreplace({z: -z})
    collected = sp.collect(sp.expand(num * conj).subs(z**2, M**2 - a**2 - Q**2), z,
                           evaluate=False)
    norm = sp.expand(den * conj).subs(z**2, M**2 - a**2 - Q**2)
    assert sp.cancel(even - collected.get(sp.Integer(1), 0) / norm) == 0
    assert sp.cancel(odd - collected.get(z, 0) / norm) == 0


def test_the_classical_denesting() -> None:
    """√(3 + 2√2) = 1 + √2 (common practice); 3 + √2 is no square in Q(√2) (mutant)."""
    st = kerr_newman()
    M = _symbols(st)["M"]
    assert denested_root(3 + 2 * sp.sqrt(2), st) in (1 + sp.sqrt(2), -1 - sp.sqrt(2))
    assert denested_root(3 + sp.sqrt(2), st) is None
    found = denested_root(M**2 * (3 + 2 * sp.sqrt(2)), st)
    assert found is not None and sp.expand(found**2 - M**2 * (3 + 2 * sp.sqrt(2))) == 0


def test_kerr_newman_surface_gravity_is_recovered_from_its_square() -> None:
    st = kerr_newman()
    s = _symbols(st)
    M, a, Q = s["M"], s["a"], s["Q"]
    root = sp.sqrt(M**2 - a**2 - Q**2)
    outer = M + root
    kappa = root / (outer**2 + a**2)
    found = denested_root(sp.expand(kappa**2), st)
    assert found is not None
    point = {M: sp.Integer(5), a: sp.Integer(3), Q: sp.Integer(2)}
    assert sp.simplify(found**2 - kappa**2) == 0
    assert abs(abs(found.subs(point)) - kappa.subs(point)).evalf(40) < sp.Float("1e-35")
    # a mutant: κ² off by a factor 2 has no root of this form
    assert denested_root(sp.expand(2 * kappa**2), st) is None


@pytest.mark.parametrize("expr,expected", [
    (sp.sqrt(sp.Symbol("x")) + 1, True),
    (sp.Symbol("x") ** sp.Rational(3, 2), True),
    (sp.Symbol("x") ** 3 / (1 + sp.Symbol("y") ** 2), False),
    (sp.exp(sp.Symbol("x") / 2), False),
])
def test_has_fractional_power(expr: sp.Expr, expected: bool) -> None:
    assert has_fractional_power(expr) is expected
