"""Exact arithmetic at a root of a polynomial: the field of an entry's metric with one more
generator h, and the remainder modulo P(h).

A horizon sits where a factor P of g^{xx} vanishes. Rather than writing its root with radicals
(impossible in general, and unwieldy even for a quadratic), the root is a new generator ``h``
of the metric's rational-function field and every quantity at the horizon is a fraction in h.
Two such fractions are equal at the root exactly when the numerator of their difference is
divisible by P(h): the pseudo-remainder below decides it without division by P's leading
coefficient, so no parameter is ever assumed nonzero beyond P's own degree.
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass

import flint
import sympy

from generator.geometry.algebra import FieldRequest, Frac, RationalField, build_field
from generator.model import Spacetime


@dataclass(frozen=True)
class RootField:
    """The metric's field with the root symbol ``h`` added as a parameter."""

    field: RationalField
    metric: tuple[tuple[Frac, ...], ...]
    h: sympy.Symbol
    h_var: int  # flint variable of h
    x_index: int  # which coordinate the root is a value of
    x_var: int  # flint variable of that coordinate
    relation: flint.fmpq_mpoly  # P(h)

    # ------------------------------------------------------------------ at the root
    def at_root_poly(self, p: flint.fmpq_mpoly) -> flint.fmpq_mpoly:
        """p with the coordinate x replaced by h."""
        gens = list(self.field.gens)
        gens[self.x_var] = gens[self.h_var]
        return p.compose(*gens)

    def at_root(self, x: Frac) -> Frac | None:
        """x at the root (as a fraction in h, unreduced modulo P); None where the denominator
        vanishes at the root (L'Hôpital is then the caller's business)."""
        den = self.at_root_poly(x.den)
        if self.vanishes(den):
            return None
        return self.field.normal(self.at_root_poly(x.num), den)

    def vanishes(self, p: flint.fmpq_mpoly) -> bool:
        """Is the polynomial p(h, …) zero at every root h of P, i.e. divisible by P?

        Decided by one exact division in flint by P's primitive part in h (``divides``),
        the same answer as the pseudo-remainder and far cheaper on the large numerators of
        a many-parameter horizon."""
        return divides(self.primitive_relation, p)

    @functools.cached_property
    def primitive_relation(self) -> flint.fmpq_mpoly:
        """P divided by its content as a polynomial in h (``primitive_part``)."""
        return primitive_part(self.relation, self.h_var, self.field.ctx)

    def limit(self, value: Frac, max_order: int = 4) -> Frac | None:
        """lim_{x → h} value by L'Hôpital's rule along x (None: infinite or not found)."""
        num, den = Frac(value.num, self.field.one().den), Frac(value.den, self.field.one().den)
        for _ in range(max_order + 1):
            top, bottom = self.at_root_poly(num.num), self.at_root_poly(den.num)
            top_zero, bottom_zero = self.vanishes(top), self.vanishes(bottom)
            if not bottom_zero:
                num_den = self.at_root_poly(num.den) * self.at_root_poly(den.den)
                if self.vanishes(num_den):
                    return None
                return self.field.normal(top * self.at_root_poly(den.den),
                                         bottom * self.at_root_poly(num.den))
            if not top_zero:
                return None
            num = self.field.diff(num, self.x_index)
            den = self.field.diff(den, self.x_index)
        return None

    def reduce(self, x: Frac) -> Frac | None:
        """x rewritten with numerator and denominator of degree < deg P in h, equal to x at
        every root of P (None where the denominator vanishes there). Terms that vanish at
        the root only modulo P (Δ(h)·… in an unreduced expression) are gone, so a factor
        structure hidden by them (an area density sin²θ·C(h)) shows."""
        lead = coefficient(self.relation, self.h_var, self.relation.degrees()[self.h_var],
                           self.field.ctx)
        top, k_top = reduced_power(x.num, self.relation, self.h_var, self.field.ctx)
        bottom, k_bottom = reduced_power(x.den, self.relation, self.h_var, self.field.ctx)
        if bottom.is_zero():
            return None
        return self.field.normal(top * lead ** k_bottom, bottom * lead ** k_top)

    def equal_at_root(self, x: Frac, y: Frac) -> bool:
        difference = self.field.sub(x, y)
        return difference.is_zero() or self.vanishes(difference.num)


def pseudo_remainder(p: flint.fmpq_mpoly, relation: flint.fmpq_mpoly, var: int,
                     ctx: flint.fmpq_mpoly_ctx) -> flint.fmpq_mpoly:
    """lc^k p mod relation as polynomials in the variable ``var`` (the others are
    coefficients): zero exactly when the relation divides p."""
    degree = relation.degrees()[var]
    lead = coefficient(relation, var, degree, ctx)
    gen = ctx.gens()[var]
    while not p.is_zero() and p.degrees()[var] >= degree:
        k = p.degrees()[var]
        p = p * lead - coefficient(p, var, k, ctx) * relation * gen ** (k - degree)
    return p


def primitive_part(relation: flint.fmpq_mpoly, var: int, ctx: flint.fmpq_mpoly_ctx
                   ) -> flint.fmpq_mpoly:
    """The relation divided by the gcd of its coefficients as a polynomial in ``var``: the
    same roots in ``var`` (over the field of the other variables), and primitive, so that by
    Gauss's lemma it divides p in Q(others)[var] exactly when it divides p in the polynomial
    ring Q[others, var]."""
    content = ctx.constant(0)
    for k in range(relation.degrees()[var] + 1):
        content = content.gcd(coefficient(relation, var, k, ctx))
        if content.is_constant() and not content.is_zero():
            return relation
    if content.is_zero() or content.is_constant():
        return relation
    return relation / content


def divides(primitive: flint.fmpq_mpoly, p: flint.fmpq_mpoly) -> bool:
    """Does the polynomial ``primitive`` divide p? One multivariate division: with a single
    divisor the remainder is zero exactly when it divides ({primitive} is a Gröbner basis of
    the ideal it generates)."""
    if p.is_zero():
        return True
    return divmod(p, primitive)[1].is_zero()


def reduced_power(p: flint.fmpq_mpoly, relation: flint.fmpq_mpoly, var: int,
                  ctx: flint.fmpq_mpoly_ctx) -> tuple[flint.fmpq_mpoly, int]:
    """(R, k) with lc^k p ≡ R modulo the relation and deg_var R < deg_var relation (the
    pseudo-remainder with its power of the leading coefficient lc, so that p = R / lc^k at
    every root)."""
    degree = relation.degrees()[var]
    lead = coefficient(relation, var, degree, ctx)
    gen = ctx.gens()[var]
    k = 0
    while not p.is_zero() and p.degrees()[var] >= degree:
        top = p.degrees()[var]
        p = p * lead - coefficient(p, var, top, ctx) * relation * gen ** (top - degree)
        k += 1
    return p, k


def coefficient(p: flint.fmpq_mpoly, var: int, k: int, ctx: flint.fmpq_mpoly_ctx
                ) -> flint.fmpq_mpoly:
    """The coefficient of var**k in p (a polynomial in the other variables).

    Taken in flint as the k-th derivative in ``var`` at var = 0, divided by k!: the same
    polynomial as collecting the terms with var**k, without a Python loop over every term
    (that loop was most of the time of a horizon of the seven-parameter Plebański–Demiański
    metric)."""
    if p.is_zero() or p.degrees()[var] < k:
        return ctx.constant(0)
    for _ in range(k):
        p = p.derivative(var)
    if p.degrees()[var] > 0:
        p = p.subs({var: 0})
    return p / math.factorial(k) if k > 1 else p


def root_field(spacetime: Spacetime, x_index: int, polynomial: sympy.Expr, h: sympy.Symbol,
               extra: tuple[sympy.Expr, ...] = ()) -> RootField:
    """The field of the metric (closed under one derivative) with h added; ``polynomial``
    is P written in h. Raises algebra.NotInField when the metric does not fit the field."""
    n = spacetime.dimension
    entries = tuple(spacetime.metric[a, b] for a in range(n) for b in range(n))
    request = FieldRequest(spacetime.coordinates, (*spacetime.parameters, h),
                           spacetime.functions, (*entries, polynomial, *extra), 2)
    field, values = build_field(request)
    metric = tuple(tuple(values[a * n:(a + 1) * n]) for a in range(n))
    relation = values[n * n]
    h_var = field.index[h]
    x_var = field.index[spacetime.coordinates[x_index]]
    return RootField(field, metric, h, h_var, x_index, x_var, relation.num)
