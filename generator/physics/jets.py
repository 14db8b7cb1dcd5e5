"""Truncated Taylor series ("jets") of an entry's metric at a random point, modulo a prime.

The isometry stage needs many derivatives of the metric at one point, never the derivatives
as functions. Differentiating the exact rational functions of the engine that often swells
them; a jet — the Taylor polynomial at the point, truncated at a fixed total degree — does not.
Arithmetic is exact modulo a 31-bit prime p: every value is an integer in [0, p), nothing is
rounded, and a rank computed this way can only come out *lower* than the rank over the
rationals (reduction modulo p cannot create independence), which is the safe direction for
the upper bounds drawn from it (see ``isometry``).

The point is chosen in the engine's field (``geometry.algebra``), not in the chart: every
generator (coordinate, parameter, sin/cos pair, exponential, radical, free function and its
derivatives) gets a value modulo p that satisfies the field's algebraic relations
(sin² + cos² = 1 by a rational parametrisation, Z² = radicand by a square root modulo p), and
the generators' jets are then grown order by order from their derivative rules (the field is a
differential field: ∂_i g is a rational function of the generators). Free functions get random
Taylor coefficients: at a single point every derivative of a free function is independent.
Because the generators are algebraically independent apart from their relations, a random
such point is generic with high probability (Schwartz–Zippel), as a random real point would be.
"""

from __future__ import annotations

import functools
import itertools
import random
from collections.abc import Sequence
from dataclasses import dataclass

import flint
import numpy as np
import sympy

from generator.geometry.algebra import Frac, NotInField, RationalField

PRIME_COUNT = 64  # primes below 2**31 to draw from (a constant radicand such as √2 needs a
# prime modulo which it is a square, so a point may have to move on to another prime)
FUNCTION_EXTRA_ORDER = 4  # free-function jets carry this many more orders (for derivatives)


@functools.cache
def primes() -> tuple[int, ...]:
    """The largest primes below 2**31 (small enough for int64 products), largest first."""
    out, p = [], 2**31
    while len(out) < PRIME_COUNT:
        p = sympy.prevprime(p)
        out.append(int(p))
    return tuple(out)


class BadPoint(Exception):
    """The random point is unusable (a denominator or radicand vanishes there): pick another."""


class JetWorkReached(Exception):
    """The jet arithmetic has done as much counted work as its bound allows."""


class JetWork:
    """Work of jet arithmetic counted in deterministic units, never in time, so that what is
    computed is the same on a slow and a fast machine: one unit per term product of a jet
    multiplication (an entry of the product table), per coefficient added when a polynomial
    is evaluated, and whatever the caller spends on its own arrays. ``spend`` is called
    before the work is done; past the bound it raises ``JetWorkReached``."""

    def __init__(self, bound: int) -> None:
        self.bound = bound
        self.used = 0

    def spend(self, amount: int) -> None:
        if self.used + amount > self.bound:
            self.used = self.bound
            raise JetWorkReached(f"{self.bound} units of counted jet arithmetic")
        self.used += amount


# ====================================================================== monomials


@dataclass(frozen=True)
class JetSpace:
    """Monomials h^α in n variables of total degree ≤ order, graded (degree first), with the
    index tables that make products and derivatives vectorised numpy operations."""

    n: int
    order: int

    @functools.cached_property
    def monomials(self) -> tuple[tuple[int, ...], ...]:
        return tuple(m for d in range(self.order + 1) for m in _of_degree(self.n, d))

    @functools.cached_property
    def index(self) -> dict[tuple[int, ...], int]:
        return {m: k for k, m in enumerate(self.monomials)}

    @property
    def size(self) -> int:
        return len(self.monomials)

    @functools.cached_property
    def degrees(self) -> np.ndarray:
        return np.array([sum(m) for m in self.monomials], dtype=np.int64)

    def of_degree(self, d: int) -> np.ndarray:
        return np.nonzero(self.degrees == d)[0]

    @functools.cached_property
    def product_table(self) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """(i, j, k): monomial i times monomial j is monomial k, total degree ≤ order.

        Exponent tuples are read as digits in base order + 1, so a product is a sum of keys
        with no carry; the table is built with numpy (a Python double loop took a second)."""
        weights = (self.order + 1) ** np.arange(self.n, dtype=np.int64)
        exponents = np.array(self.monomials, dtype=np.int64).reshape(self.size, self.n)
        keys = exponents @ weights
        ranked = np.argsort(keys)
        i, j = np.nonzero(self.degrees[:, None] + self.degrees[None, :] <= self.order)
        k = ranked[np.searchsorted(keys[ranked], keys[i] + keys[j])]
        return i.astype(np.int64), j.astype(np.int64), k.astype(np.int64)

    @functools.cache  # noqa: B019 - a handful of spaces per process
    def pairs_of_degree(self, d: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """(i, j, k): monomials i and j whose product has degree exactly d, k its position
        among the monomials of degree d."""
        local = np.full(self.size, -1, dtype=np.int64)
        targets = self.of_degree(d)
        local[targets] = np.arange(len(targets))
        ii, jj, kk = self.product_table
        chosen = self.degrees[kk] == d
        return ii[chosen], jj[chosen], local[kk[chosen]]

    @functools.cache  # noqa: B019
    def derivative_table(self, var: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """(source, target, factor): ∂/∂h_var maps h^α to α_var h^(α − e_var)."""
        src, dst, fac = [], [], []
        for k, m in enumerate(self.monomials):
            if m[var]:
                lowered = list(m)
                lowered[var] -= 1
                src.append(k)
                dst.append(self.index[tuple(lowered)])
                fac.append(m[var])
        return (np.array(src, dtype=np.int64), np.array(dst, dtype=np.int64),
                np.array(fac, dtype=np.int64))


def _of_degree(n: int, d: int) -> list[tuple[int, ...]]:
    """Exponent tuples of total degree d, in a fixed order independent of any truncation."""
    out = []
    for cuts in itertools.combinations(range(d + n - 1), n - 1):
        bounds = (-1, *cuts, d + n - 1)
        out.append(tuple(bounds[k + 1] - bounds[k] - 1 for k in range(n)))
    return sorted(out, reverse=True)


@functools.lru_cache(maxsize=16)
def jet_space(n: int, order: int) -> JetSpace:
    return JetSpace(n, order)


# ====================================================================== jet arithmetic


class JetAlgebra:
    """Arithmetic on jets (int64 arrays over a ``JetSpace``) modulo the prime ``p``."""

    def __init__(self, space: JetSpace, p: int, work: JetWork | None = None) -> None:
        self.space, self.p, self.work = space, p, work

    def constant(self, value: int) -> np.ndarray:
        out = np.zeros(self.space.size, dtype=np.int64)
        out[0] = value % self.p
        return out

    def mul(self, a: np.ndarray, b: np.ndarray) -> np.ndarray:
        if not a[1:].any():
            return (b * int(a[0])) % self.p
        if not b[1:].any():
            return (a * int(b[0])) % self.p
        i, j, k = self.space.product_table
        if self.work is not None:
            self.work.spend(len(i))
        # Each term is below 2**31 and at most a few thousand meet in one slot, so the float
        # sums of bincount stay exact integers (below 2**53).
        terms = ((a[i] * b[j]) % self.p).astype(np.float64)
        out = np.bincount(k, weights=terms, minlength=self.space.size)
        return out.astype(np.int64) % self.p

    def inv(self, a: np.ndarray) -> np.ndarray:
        """1/a by the geometric series in the non-constant part (nilpotent in the jet)."""
        c = int(a[0]) % self.p
        if c == 0:
            raise BadPoint("a denominator vanishes at the point")
        c_inv = pow(c, -1, self.p)
        if not a[1:].any():
            return self.constant(c_inv)
        u = (a * c_inv) % self.p
        u[0] = 0
        minus_u = (-u) % self.p
        total, term = self.constant(1), self.constant(1)
        for _ in range(self.space.order):
            term = self.mul(term, minus_u)
            total = (total + term) % self.p
        return (total * c_inv) % self.p

    def diff(self, a: np.ndarray, var: int) -> np.ndarray:
        """∂a/∂h_var; the top degree of the result is lost (it is zero, not known)."""
        src, dst, fac = self.space.derivative_table(var)
        out = np.zeros(self.space.size, dtype=np.int64)
        out[dst] = (a[src] * fac) % self.p
        return out


# ====================================================================== the field at a point


def modular(q: flint.fmpq | sympy.Rational, p: int) -> int:
    num, den = (int(q.p), int(q.q))
    if den % p == 0:
        raise BadPoint("a coefficient's denominator is divisible by the prime")
    return num * pow(den, -1, p) % p


@dataclass(frozen=True)
class FieldPoint:
    """Values modulo p of every generator of a field, satisfying its relations."""

    p: int
    values: tuple[int, ...]


def random_field_point(field: RationalField, rng: random.Random, p: int,
                       preset: dict[int, int] | None = None) -> FieldPoint:
    """Generators are valued from the last discovered to the first, the order in which their
    relations refer to one another; raises BadPoint when a radicand has no root modulo p.
    ``preset``: values already fixed (free functions, whose jets are drawn first)."""
    values: list[int | None] = [None] * len(field.specs)
    for k, v in (preset or {}).items():
        values[k] = v
    for k in reversed(range(len(field.specs))):
        spec = field.specs[k]
        if values[k] is not None:
            continue
        if spec.kind in ("trig", "hyperbolic"):
            partner = field.index[spec.partner]
            q = rng.randrange(2, p - 1)
            one = 1 + q * q if spec.kind == "trig" else 1 - q * q
            if one % p == 0:
                raise BadPoint("degenerate circle point")
            scale = pow(one, -1, p)
            cos_like = ((1 - q * q) if spec.kind == "trig" else (1 + q * q)) * scale % p
            sin_like = 2 * q * scale % p
            cos_index, sin_index = (k, partner) if spec.degree == 0 else (partner, k)
            values[cos_index], values[sin_index] = cos_like, sin_like
        elif spec.degree:
            values[k] = _root(field, k, values, p)
        else:
            values[k] = rng.randrange(1, p)
    return FieldPoint(p, tuple(int(v) for v in values))  # type: ignore[arg-type]


def _root(field: RationalField, k: int, values: list[int | None], p: int) -> int:
    """A value Z with Z**q = (the rest of the relation) at the point."""
    var, degree, rel = next(r for r in field.relations if r[0] == k)
    rest = rel - field.gens[var] ** degree  # Z**q + rest = 0
    known = [v if v is not None else 0 for v in values]
    target = (-poly_at(rest, known, p)) % p
    if target == 0:
        return 0
    if degree == 2:
        return square_root_mod(target, p)
    roots = sympy.ntheory.residue_ntheory.nthroot_mod(target, degree, p, all_roots=False)
    if roots is None:
        raise BadPoint("a radicand has no root modulo p at this point")
    return int(roots)


def square_root_mod(a: int, p: int) -> int:
    """The square root of a ≠ 0 modulo the odd prime p that is at most p // 2 (the one SymPy's
    ``sqrt_mod`` gives), by Euler's criterion and Tonelli–Shanks: SymPy factorises p first,
    which made square roots the costliest step of drawing a point."""
    a %= p
    if pow(a, (p - 1) // 2, p) != 1:
        raise BadPoint("a radicand has no root modulo p at this point")
    if p % 4 == 3:
        r = pow(a, (p + 1) // 4, p)
    else:
        q, s = p - 1, 0
        while q % 2 == 0:
            q, s = q // 2, s + 1
        z = 2
        while pow(z, (p - 1) // 2, p) != p - 1:
            z += 1
        m, c, t, r = s, pow(z, q, p), pow(a, q, p), pow(a, (q + 1) // 2, p)
        while t != 1:
            i, t2 = 0, t
            while t2 != 1:
                t2, i = t2 * t2 % p, i + 1
            b = pow(c, 1 << (m - i - 1), p)
            m, c, t, r = i, b * b % p, t * b * b % p, r * b % p
    return min(r, p - r)


def poly_at(poly: flint.fmpq_mpoly, values: Sequence[int], p: int) -> int:
    total = 0
    for exps, coeff in poly.terms():
        term = modular(coeff, p)
        for v, e in zip(values, exps, strict=True):
            if e:
                term = term * pow(v, int(e), p) % p
        total += term
    return total % p


class FieldJets:
    """Jets of every generator of ``field`` at a ``FieldPoint`` (in chart displacements h)."""

    def __init__(self, field: RationalField, order: int, rng: random.Random, p: int,
                 work: JetWork | None = None) -> None:
        """``work``: a counter the arithmetic spends on (None: not counted)."""
        self.field, self.p, self.work = field, p, work
        self.n = len(field.coordinates)
        self.space = jet_space(self.n, order)
        self.algebra = JetAlgebra(self.space, self.p, work)
        self._powers: dict[tuple[int, int], np.ndarray] = {}
        coordinate_of = {x: i for i, x in enumerate(field.coordinates)}
        functions = self._function_jets(rng, coordinate_of)
        self.point = random_field_point(field, rng, p,
                                        {k: int(j[0]) for k, j in functions.items()})
        self.jets: list[np.ndarray] = [functions[k] if k in functions else
                                       self.algebra.constant(v)
                                       for k, v in enumerate(self.point.values)]
        self.constant = [True] * len(field.specs)
        self._grow(coordinate_of)

    # ------------------------------------------------------------------ building
    def _grow(self, coordinate_of: dict) -> None:
        moving = []
        for k, spec in enumerate(self.field.specs):
            if spec.kind == "coordinate":
                self.jets[k][self.space.index[_unit(self.n, coordinate_of[spec.key])]] = 1
                self.constant[k] = False
            elif spec.kind == "function":
                self.constant[k] = False
            elif any(rule is not None for rule in self.field.rules[k]):
                moving.append(k)
                self.constant[k] = False
        for degree in range(self.space.order):
            rule_jets = {(k, i): self.rational(rule) for k in moving
                         for i, rule in enumerate(self.field.rules[k]) if rule is not None}
            targets = self.space.of_degree(degree + 1)
            for k in moving:
                for t in targets:
                    alpha = self.space.monomials[t]
                    i = next(v for v in range(self.n) if alpha[v])
                    rule = rule_jets.get((k, i))
                    if rule is None:
                        continue
                    lowered = list(alpha)
                    lowered[i] -= 1
                    value = int(rule[self.space.index[tuple(lowered)]])
                    self.jets[k][t] = value * pow(alpha[i], -1, self.p) % self.p
            self._powers = {}

    def _function_jets(self, rng: random.Random, coordinate_of: dict
                       ) -> dict[int, np.ndarray]:
        """Random Taylor coefficients for each free function (in its own arguments only);
        every derivative generator is the matching derivative of that one jet."""
        big = jet_space(self.n, self.space.order + FUNCTION_EXTRA_ORDER)
        big_algebra = JetAlgebra(big, self.p)
        base: dict[sympy.Basic, np.ndarray] = {}
        out: dict[int, np.ndarray] = {}
        for k, spec in enumerate(self.field.specs):
            if spec.kind != "function":
                continue
            applied = spec.key.expr if isinstance(spec.key, sympy.Derivative) else spec.key
            if applied not in base:
                args = {coordinate_of[a] for a in applied.args}
                jet = np.array([rng.randrange(self.p) if all(m[v] == 0 for v in range(self.n)
                                                             if v not in args) else 0
                                for m in big.monomials], dtype=np.int64)
                base[applied] = jet
            jet = base[applied]
            if isinstance(spec.key, sympy.Derivative):
                for x, count in spec.key.variable_count:
                    if int(count) > FUNCTION_EXTRA_ORDER:
                        raise NotInField("derivative order of a free function too high")
                    for _ in range(int(count)):
                        jet = big_algebra.diff(jet, coordinate_of[x])
            out[k] = jet[: self.space.size].copy()
        return out

    # ------------------------------------------------------------------ evaluation
    def _power(self, k: int, e: int) -> np.ndarray:
        key = (k, e)
        if key not in self._powers:
            self._powers[key] = (self.jets[k] if e == 1 else
                                 self.algebra.mul(self._power(k, e - 1), self.jets[k]))
        return self._powers[key]

    def poly(self, poly: flint.fmpq_mpoly) -> np.ndarray:
        p = self.p
        total = np.zeros(self.space.size, dtype=np.int64)
        if self.work is not None:
            self.work.spend(len(poly) * self.space.size)
        for exps, coeff in poly.terms():
            scalar = modular(coeff, p)
            jet = None
            for k, e in enumerate(exps):
                if not e:
                    continue
                if self.constant[k]:
                    scalar = scalar * pow(int(self.jets[k][0]), int(e), p) % p
                else:
                    factor = self._power(k, int(e))
                    jet = factor if jet is None else self.algebra.mul(jet, factor)
            if jet is None:
                total[0] = (total[0] + scalar) % p
            else:
                total = (total + jet * scalar) % p
        return total

    def rational(self, x: Frac) -> np.ndarray:
        if x.is_zero():
            return np.zeros(self.space.size, dtype=np.int64)
        num = self.poly(x.num)
        if x.den.is_constant():
            return num * pow(modular(x.den.leading_coefficient(), self.p), -1, self.p) % self.p
        return self.algebra.mul(num, self.algebra.inv(self.poly(x.den)))


def _unit(n: int, i: int) -> tuple[int, ...]:
    return tuple(1 if v == i else 0 for v in range(n))
