"""A tower of square roots over an entry's rational-function field, for the null tetrad.

A null tetrad of a metric whose components are rational in the field's generators needs
square roots (its normalisation), and a principal null direction of a type D field may need
one more. Each root is adjoined as a new generator z with the relation z² = R (R a polynomial
in the generators below it), placed first in the lex order so that the field's own reduction
and rationalisation (``RationalField.normal``) handle it like any radical of the metric.

Before a root is adjoined, ``square_root_in`` looks for it in the field as it stands (through
every quadratic level: √(A + B z) = x + y z with x² = (A ± √(A² − d B²))/2), and
``adjoin_square_root`` also tries the radicands already adjoined (√(d e) = w ⇒ √d = w √e / e),
so the tower stays free of the obvious dependencies that would make a non-zero normal form
hide a zero. Soundness does not depend on that: every generator satisfies its relation, so a
normal form that *is* zero proves a zero; a non-zero one is confirmed at sample points by the
callers before anything is shown as non-zero.

Only real radicands that are positive on the entry's domain are adjoined, besides i = √−1, so
complex conjugation is the automorphism i ↦ −i (``conjugate``).
"""

from __future__ import annotations

import itertools
from collections.abc import Callable, Sequence
from dataclasses import dataclass

import flint
import mpmath
import sympy

from generator.geometry.algebra import Frac, GeneratorSpec, RationalField
from generator.geometry.equality import _generator_values, _tracked_numbers
from generator.geometry.sampling import angle_coordinates
from generator.model import Spacetime

I_KEY = sympy.Tuple(sympy.Integer(-1), 2)  # the key the field reader gives to I = √−1
SQRT_SEARCH_CALLS = 120  # recursive calls of one square-root search before it gives up
FACTOR_TERM_LIMIT = 3000  # terms beyond which a polynomial is not factored to find a root
KUMMER_TERM_LIMIT = 400  # terms beyond which a radicand is not tried against the known roots


class TooLarge(Exception):
    """An expression grew beyond what the frame construction handles (a stated reason)."""


@dataclass(frozen=True)
class Tower:
    """The field with its adjoined roots; ``radicands[key]`` is R for the generator z = √R."""

    field: RationalField
    radicands: tuple[tuple[sympy.Basic, Frac], ...] = ()

    @property
    def i(self) -> Frac:
        return self.field.var(self.field.index[I_KEY])


def _shifted(poly: flint.fmpq_mpoly, ctx: flint.fmpq_mpoly_ctx, shift: int) -> flint.fmpq_mpoly:
    return ctx.from_dict({(0,) * shift + tuple(m): c for m, c in poly.to_dict().items()})


def extend(tower: Tower, key: sympy.Basic, meaning: sympy.Expr, radicand: Frac
           ) -> tuple[Tower, Callable[[Frac], Frac]]:
    """The tower with z = √radicand adjoined (radicand with a constant denominator), and the
    map carrying the old field's fractions into the new one."""
    old = tower.field
    names = tuple(f"g{k}" for k in range(len(old.specs) + 1))
    ctx = flint.fmpq_mpoly_ctx.get(names, "lex")

    def embed_poly(p: flint.fmpq_mpoly) -> flint.fmpq_mpoly:
        return _shifted(p, ctx, 1)

    spec = GeneratorSpec(key, meaning, "radical", degree=2, base=meaning**2)
    specs = (spec, *old.specs)
    z = ctx.gens()[0]
    num = embed_poly(radicand.num) * flint.fmpq(1) / radicand.den.leading_coefficient()
    relations = ((0, 2, z**2 - num),
                 *((var + 1, degree, embed_poly(rel)) for var, degree, rel in old.relations))
    rules = tuple(tuple(None for _ in old.coordinates) for _ in specs)
    index = {spec.key: 0, **{k: v + 1 for k, v in old.index.items()}}
    field = RationalField(ctx, specs, old.coordinates, relations, rules, index)

    def embed(x: Frac) -> Frac:
        return Frac(embed_poly(x.num), embed_poly(x.den))

    radicands = (*tuple((k, embed(r)) for k, r in tower.radicands), (key, embed(radicand)))
    return Tower(field, radicands), embed


def with_i(field: RationalField) -> tuple[Tower, Callable[[Frac], Frac]]:
    """The field with i adjoined (unless it has it already)."""
    tower = Tower(field)
    if I_KEY in field.index:
        return tower, lambda x: x
    return extend(tower, I_KEY, sympy.I, field.const(-1))


# ---------------------------------------------------------------------------- conjugation


def conjugate(tower: Tower, x: Frac) -> Frac:
    """i ↦ −i (every other generator is real on the domain)."""
    f = tower.field
    k = f.index[I_KEY]
    gens = list(f.gens)
    gens[k] = -gens[k]
    return f.normal(x.num.compose(*gens), x.den.compose(*gens))


# ---------------------------------------------------------------------------- square roots


def _quadratic_levels(field: RationalField) -> list[int]:
    return [var for var, degree, _rel in field.relations if degree == 2]


def _split(field: RationalField, x: Frac, var: int) -> tuple[Frac, Frac]:
    """x = A + B z for the generator z of ``var`` (x reduced: degree < 2 in z, denominator
    rationalised so free of z)."""
    z = field.gens[var]
    b, a = divmod(x.num, z)
    return field.normal(a, x.den), field.normal(b, x.den)


def _radicand(field: RationalField, var: int) -> Frac:
    """d with z² = d for the quadratic generator ``var``."""
    for v, degree, rel in field.relations:
        if v == var and degree == 2:
            z = field.gens[var]
            return field.normal(z**2 - rel, field.one().den)
    raise ValueError("not a quadratic generator")


def square_root_in(field: RationalField, x: Frac) -> Frac | None:
    """y in the field with y² = x, or None when none is found (not a proof that none exists).
    Every root returned has been squared back and compared in normal form."""
    calls = [0]
    root = _root(field, x, 0, calls)
    if root is None or not field.equal(field.mul(root, root), x):
        return None
    return root


def _root(field: RationalField, x: Frac, start: int, calls: list[int]) -> Frac | None:
    calls[0] += 1
    if calls[0] > SQRT_SEARCH_CALLS:
        return None
    if x.is_zero():
        return x
    levels = [v for v in _quadratic_levels(field) if v >= start
              and (x.num.degrees()[v] or x.den.degrees()[v])]
    if not levels:
        if x.size() > FACTOR_TERM_LIMIT:
            return None
        return field.square_root(x)
    var = min(levels)
    a, b = _split(field, x, var)
    d = _radicand(field, var)
    z = field.var(var)
    if b.is_zero():
        plain = _root(field, a, var + 1, calls)
        if plain is not None:
            return plain
        y = _root(field, field.div(a, d), var + 1, calls)
        return None if y is None else field.mul(y, z)
    n = _root(field, field.sub(field.mul(a, a), field.mul(d, field.mul(b, b))), var + 1, calls)
    if n is None:
        return None
    half = sympy.Rational(1, 2)
    for candidate in (field.scale(field.add(a, n), half), field.scale(field.sub(a, n), half)):
        if candidate.is_zero():
            continue
        root_x = _root(field, candidate, var + 1, calls)
        if root_x is None:
            continue
        y = field.div(b, field.scale(root_x, 2))
        root = field.add(root_x, field.mul(y, z))
        if field.equal(field.mul(root, root), x):
            return root
    return None


def _square_free(field: RationalField, p: flint.fmpq_mpoly
                 ) -> tuple[flint.fmpq_mpoly, flint.fmpq_mpoly]:
    """p = s² · q with q free of repeated factors over Q (as flint factors it)."""
    if len(p) > FACTOR_TERM_LIMIT:
        return field.ctx.constant(1), p
    content, factors = p.factor()
    square, rest = field.ctx.constant(1), field.ctx.constant(content)
    for f, e in factors:
        square = square * f ** (int(e) // 2)
        if e % 2:
            rest = rest * f
    return square, rest


def _through_known_roots(f: RationalField, rest: Frac) -> Frac | None:
    """√rest as w·z₁z₂/(d₁d₂) when rest·d₁d₂ = w² for one or two quadratic generators
    z_k = √d_k of the field (sin θ = √(1 − cos²θ), √2, an earlier root; i excepted, as rest
    is positive): the dependencies Kummer theory says a new root could have on them."""
    levels = [v for v in _quadratic_levels(f) if v != f.index.get(I_KEY)]
    radicands = {v: _radicand(f, v) for v in levels}
    for size in (1, 2):
        for chosen in itertools.combinations(levels, size):
            product = f.one()
            for v in chosen:
                product = f.mul(product, radicands[v])
            w = square_root_in(f, f.mul(rest, product))
            if w is None:
                continue
            root = w
            for v in chosen:
                root = f.div(f.mul(root, f.var(v)), radicands[v])
            return root
    return None


def adjoin_square_root(tower: Tower, x: Frac, name: str, embed_all: Sequence[Frac]
                       ) -> tuple[Tower, Frac, list[Frac]]:
    """√x in the tower, adjoining a generator when the root is not found in it; x must be
    positive on the domain (the caller checks). Returns the tower, the root and
    ``embed_all`` carried into the new tower."""
    f = tower.field
    root = square_root_in(f, x)
    if root is not None:
        return tower, root, list(embed_all)
    # √(N/D) = √(N D)/D with D free of the quadratic generators (rationalised)
    square, rest = _square_free(f, x.num * x.den)
    rest_frac = f.normal(rest, f.one().den)
    if rest_frac.size() <= KUMMER_TERM_LIMIT:
        found = _through_known_roots(f, rest_frac)
        if found is not None:
            return tower, f.mul(f.normal(square, x.den), found), list(embed_all)
    outside = f.one()
    for v in _quadratic_levels(f):
        d = _radicand(f, v)
        if v == f.index.get(I_KEY) or d.num.is_constant() or not d.den.is_one():
            continue
        quotient, remainder = divmod(rest_frac.num, d.num)
        if remainder.is_zero():  # √(d·q) = z·√q
            rest_frac = f.normal(quotient, rest_frac.den)
            outside = f.mul(outside, f.var(v))
    square_part = f.mul(f.normal(square, x.den), outside)
    if rest_frac.num.is_constant() and rest_frac.num.leading_coefficient() == 1:
        return tower, square_part, list(embed_all)
    found = _through_known_roots(f, rest_frac) if rest_frac.size() <= KUMMER_TERM_LIMIT \
        else None
    if found is not None:
        return tower, f.mul(square_part, found), list(embed_all)
    meaning = sympy.sqrt(f.display(rest_frac))
    key = sympy.Tuple(sympy.Symbol(f"frame_root_{name}"), 2)
    new, embed = extend(tower, key, meaning, rest_frac)
    z = new.field.var(0)
    root = new.field.mul(embed(square_part), z)
    return new, root, [embed(v) for v in embed_all]


# ---------------------------------------------------------------------------- values


def value_at(field: RationalField, x: Frac, point: dict, spacetime: Spacetime,
             digits: int = 40) -> mpmath.mpc | None:
    """x at a sample point, numerically (radicals on their principal branch, as their
    meanings say); None where it is not a finite number. For signs and orientation choices
    only: exact decisions are made on normal forms."""
    used = {k for p in (x.num, x.den) for k, d in enumerate(p.degrees()) if d}
    values = _generator_values(field, used, point, angle_coordinates(spacetime))
    if values is None:
        return None
    with mpmath.workdps(digits):
        numbers = _tracked_numbers(values, point)
        if numbers is None:
            return None
        plain = [v for v, _ in numbers]
        try:
            num, den = _evaluate(x.num, plain), _evaluate(x.den, plain)
            if den == 0:
                return None
            out = num / den
        except (ZeroDivisionError, OverflowError, ValueError):
            return None
        if not (mpmath.isfinite(out.real) and mpmath.isfinite(out.imag)):
            return None
        return out


def _evaluate(poly: flint.fmpq_mpoly, numbers: Sequence[mpmath.mpc]) -> mpmath.mpc:
    total = mpmath.mpc(0)
    for monomial, coefficient in poly.terms():
        term = mpmath.mpc(mpmath.mpf(int(coefficient.p)) / int(coefficient.q))
        for k, e in enumerate(monomial):
            if e:
                term *= numbers[k] ** int(e)
        total += term
    return total
