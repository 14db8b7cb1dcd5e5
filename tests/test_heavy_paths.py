"""The cheaper forms used by the heavy checks give the same values as the plain definitions.

* ``rootfield.coefficient``: the coefficient of x**k of a polynomial, taken as the k-th
  derivative at x = 0 divided by k! (Taylor's formula, common practice), against collecting
  the terms with x**k one by one.
* ``energy.quick_determinant``: det [[a, b], [c, d]] = ad − bc (common practice), against
  SymPy's Matrix.det, and the sign it gives at a sample point.
"""

from __future__ import annotations

import random

import flint
import sympy as sp

from generator.physics.energy import quick_determinant
from generator.physics.rootfield import coefficient, pseudo_remainder


def _collected(p: flint.fmpq_mpoly, var: int, k: int, ctx: flint.fmpq_mpoly_ctx):
    terms = {}
    for monom, coeff in p.terms():
        if monom[var] == k:
            reduced = list(monom)
            reduced[var] = 0
            terms[tuple(reduced)] = coeff
    return ctx.from_dict(terms) if terms else ctx.constant(0)


def _random_polynomial(rng: random.Random, ctx: flint.fmpq_mpoly_ctx):
    x, y, z = ctx.gens()
    p = ctx.constant(0)
    for _ in range(rng.randint(1, 12)):
        p += flint.fmpq(rng.randint(-9, 9), rng.randint(1, 5)) * x ** rng.randint(0, 6) \
            * y ** rng.randint(0, 6) * z ** rng.randint(0, 3)
    return p


def test_coefficient_equals_collecting_terms():
    ctx = flint.fmpq_mpoly_ctx.get(("x", "y", "z"), "lex")
    rng = random.Random(20261203)
    for _ in range(60):
        p = _random_polynomial(rng, ctx)
        for var in range(3):
            for k in range(0, 8):
                assert coefficient(p, var, k, ctx) == _collected(p, var, k, ctx)


def test_coefficient_notices_a_wrong_term():
    """A mutant check: a polynomial differing in one term has a different coefficient."""
    ctx = flint.fmpq_mpoly_ctx.get(("x", "y", "z"), "lex")
    x, y, _ = ctx.gens()
    p = 3 * x**2 * y + x * y**2 + 5
    assert coefficient(p, 0, 2, ctx) == 3 * y
    assert coefficient(p + x**2, 0, 2, ctx) != coefficient(p, 0, 2, ctx)
    assert coefficient(p, 0, 0, ctx) == ctx.constant(5)


def test_pseudo_remainder_decides_divisibility():
    """(h² − 2)(h + y) is divisible by h² − 2; adding 1 breaks it (common practice)."""
    ctx = flint.fmpq_mpoly_ctx.get(("h", "y"), "lex")
    h, y = ctx.gens()
    relation = h**2 - 2 * y
    assert pseudo_remainder(relation * (h**3 + y * h + 1), relation, 0, ctx).is_zero()
    assert not pseudo_remainder(relation * (h + y) + 1, relation, 0, ctx).is_zero()


def test_quick_determinant_is_the_determinant():
    r, th, a = sp.symbols("r theta a", positive=True)
    block = sp.Matrix([[-(1 - 2 / r), a * sp.sin(th) ** 2 / r],
                       [a * sp.sin(th) ** 2 / r, r**2 + a**2 * sp.sin(th) ** 2]])
    assert sp.simplify(quick_determinant(block) - block.det()) == 0
    assert quick_determinant(sp.Matrix([[r]])) == r
    point = {r: sp.Rational(3), th: sp.pi / 4, a: sp.Rational(1, 2)}
    assert sp.sign(quick_determinant(block).subs(point)) == -1
