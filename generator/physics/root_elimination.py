"""A horizon quantity in h_root written "in terms of the root": a parameter eliminated with the
horizon's own polynomial.

At a root of P(h) that is linear in a parameter p (P = c₁ p + c₀, as Kerr–AdS's Δ_r is in the
mass M), p = −c₀/c₁ holds at the root, so any quantity q(h, p, …) equals q(h, −c₀/c₁, …)
there, exactly. Relativists write horizon data this way (κ, Ω_H, A as functions of r₊ with M
eliminated); for Kerr–AdS in five dimensions it turns a surface gravity of several hundred
terms reduced modulo P into a quotient of a few factors. The substitution is done in the
exact field (python-flint): numerator and denominator are homogenised in c₁ rather than
expanded in SymPy.
"""

from __future__ import annotations

from dataclasses import dataclass

import flint
import sympy

from generator.geometry.algebra import Frac
from generator.model import Spacetime
from generator.physics.rootfield import RootField, coefficient

# Below this many terms (numerator and denominator of κ²) the form reduced modulo P is kept
# as the only one shown.
LONG_TERMS = 60


@dataclass(frozen=True)
class Elimination:
    """The parameter eliminated, its value at the root (in h), and the quantity rewritten."""

    parameter: sympy.Symbol
    value: Frac
    result: Frac


def eliminate_parameter(rf: RootField, spacetime: Spacetime, quantity: Frac
                        ) -> Elimination | None:
    """``quantity`` with one parameter in which P is linear replaced by its value at the root
    (the shortest result over such parameters); None when P is linear in none, or no result
    is shorter than ``quantity``."""
    best: Elimination | None = None
    for parameter in spacetime.parameters:
        found = _eliminated(rf, parameter, quantity)
        if found is not None and (best is None or found.result.size() < best.result.size()):
            best = found
    if best is None or best.result.size() >= quantity.size():
        return None
    return best


def _eliminated(rf: RootField, parameter: sympy.Symbol, quantity: Frac) -> Elimination | None:
    field = rf.field
    var = field.index.get(parameter)
    if var is None or var == rf.h_var or rf.relation.degrees()[var] != 1:
        return None
    ctx = field.ctx
    c1 = coefficient(rf.relation, var, 1, ctx)
    c0 = coefficient(rf.relation, var, 0, ctx)
    if rf.vanishes(c1):
        return None  # the coefficient is zero at the root: p is not fixed by it
    top, bottom = -c0, c1
    if top.degrees()[var] or bottom.degrees()[var]:
        return None
    num, d_num = _substituted(quantity.num, var, top, bottom, ctx)
    den, d_den = _substituted(quantity.den, var, top, bottom, ctx)
    if den.is_zero() or rf.vanishes(den):
        return None
    # num/bottom^d_num divided by den/bottom^d_den
    if d_den >= d_num:
        num = num * bottom ** (d_den - d_num)
    else:
        den = den * bottom ** (d_num - d_den)
    result = field.normal(num, den)
    return Elimination(parameter, field.normal(top, bottom), result)


def _substituted(p: flint.fmpq_mpoly, var: int, top: flint.fmpq_mpoly,
                 bottom: flint.fmpq_mpoly, ctx: flint.fmpq_mpoly_ctx
                 ) -> tuple[flint.fmpq_mpoly, int]:
    """(Σ_k p_k top^k bottom^(d−k), d): p with var = top/bottom, times bottom^d."""
    if p.is_zero():
        return p, 0
    degree = p.degrees()[var]
    total = ctx.constant(0)
    for k in range(degree + 1):
        part = coefficient(p, var, k, ctx)
        if not part.is_zero():
            total += part * top**k * bottom ** (degree - k)
    return total, degree
