"""Exact rational-function arithmetic for the geometry engine, on top of python-flint.

Every quantity of a metric (components, Christoffel symbols, curvature) is a reduced fraction of
polynomials over Q in a finite set of *generators*: coordinates, parameters, cos/sin of angles,
exponentials, radicals, free functions and their derivatives, and other elementary functions.
Each generator carries its derivative rule (so the field is a differential field) and, when it
is algebraic over the others, its defining relation (s**2 = 1 - c**2, Z**q = ...), used to
reduce numerators to a normal form. This is what makes the engine fast (flint's multivariate
gcd instead of SymPy's ``simplify``) and what makes zero tests exact rather than heuristic.

The normal form is canonical for quadratic extensions (trigonometric/hyperbolic pairs, square
roots, I): numerators are reduced modulo the relations and denominators are rationalised. For
higher radicals and for relations that happen to be reducible (``Abs``), a non-zero normal form
is only a strong hint; callers that decide equality therefore confirm every outcome at sample
points (see ``equality``).
"""

from __future__ import annotations

import functools
import itertools
import math
import time
from collections.abc import Sequence
from dataclasses import dataclass

import flint
import sympy

from generator.errors import BudgetExceeded

TRIG_PAIRS = {sympy.sin: "sin", sympy.cos: "cos"}
HYPERBOLIC_PAIRS = {sympy.sinh: "sinh", sympy.cosh: "cosh"}
MAX_GENERATORS = 80


Factored = tuple[sympy.Rational, list[tuple[sympy.Expr, int]]]  # scale, (base, exponent)


def factored_product(factored: Factored) -> sympy.Expr:
    """The expression a factor list stands for (``RationalField.display`` of its value)."""
    scale, factors = factored
    return sympy.Mul(scale, *(base**exponent for base, exponent in factors))


class NotInField(Exception):
    """An expression does not fit the generator scheme (the caller falls back to SymPy)."""


class _NeedGenerator(Exception):
    """Raised while converting when a new generator must be added first (build-time only)."""

    def __init__(self, specs: list[GeneratorSpec]) -> None:
        super().__init__("a new generator is needed")
        self.specs = specs


@dataclass(frozen=True)
class GeneratorSpec:
    """A generator as discovered in SymPy terms, before the flint context exists.

    ``key`` identifies the generator; ``meaning`` is its SymPy value (what it prints as);
    ``degree`` is q for a generator algebraic of degree q over the others (0: transcendental);
    ``base`` is the radicand for radicals, ``partner`` the other member of a sin/cos pair.
    """

    key: sympy.Basic
    meaning: sympy.Expr
    kind: str  # coordinate | parameter | constant | function | trig | hyperbolic | radical | other
    degree: int = 0
    base: sympy.Expr | None = None
    partner: sympy.Basic | None = None
    order: int = 0  # derivative order, for free-function generators


class Frac:
    """A fraction num/den of flint polynomials; immutable by convention, always normalised."""

    __slots__ = ("den", "num")

    def __init__(self, num: flint.fmpq_mpoly, den: flint.fmpq_mpoly) -> None:
        self.num = num
        self.den = den

    def is_zero(self) -> bool:
        return not self.num

    def size(self) -> int:
        """Number of terms, the budget's measure of expression swell."""
        return len(self.num) + len(self.den)


@dataclass(frozen=True)
class RationalField:
    """A differential field Q(generators)/relations with a flint context.

    Built once per metric by ``build_field``; immutable afterwards. ``rules[g][i]`` is the
    derivative of generator g with respect to coordinate i (None: zero), ``relations`` the
    reduction polynomials in context order.
    """

    ctx: flint.fmpq_mpoly_ctx
    specs: tuple[GeneratorSpec, ...]  # in context (variable) order
    coordinates: tuple[sympy.Symbol, ...]
    relations: tuple[tuple[int, int, flint.fmpq_mpoly], ...]  # (variable, degree, polynomial)
    rules: tuple[tuple[Frac | None, ...], ...]
    index: dict[sympy.Basic, int]

    # ------------------------------------------------------------------ basic arithmetic
    def const(self, value: int | sympy.Rational) -> Frac:
        q = sympy.Rational(value)
        return Frac(self.ctx.constant(flint.fmpq(int(q.p), int(q.q))), self.ctx.constant(1))

    def zero(self) -> Frac:
        return self._zero

    def one(self) -> Frac:
        return self._one

    @functools.cached_property
    def _zero(self) -> Frac:
        """Built once: creating flint constants costs more than most arithmetic here."""
        return Frac(self.ctx.constant(0), self._unit)

    @functools.cached_property
    def _one(self) -> Frac:
        return Frac(self._unit, self._unit)

    @functools.cached_property
    def converted(self) -> dict[sympy.Basic, Frac]:
        """SymPy subexpressions already converted into this field (a metric repeats Σ,
        Δ and their powers in many components; converting is deterministic for a field,
        and Fracs are immutable). Unknown generators raise before anything is stored."""
        return {}

    @functools.cached_property
    def gens(self) -> tuple[flint.fmpq_mpoly, ...]:
        """The generators as polynomials (flint builds a fresh tuple on every ctx.gens())."""
        return tuple(self.ctx.gens())

    @functools.cached_property
    def _cosine_like(self) -> tuple[int, ...]:
        """Variables of cos/cosh generators (the ones whose (c-1)(c+1) pairs display as sin)."""
        return tuple(
            k for k, s in enumerate(self.specs) if s.kind in ("trig", "hyperbolic") and not s.degree
        )

    @functools.cached_property
    def _coordinate_vars(self) -> tuple[int, ...]:
        return tuple(k for k, s in enumerate(self.specs) if s.kind == "coordinate")

    @functools.cached_property
    def _unit(self) -> flint.fmpq_mpoly:
        return self.ctx.constant(1)

    def var(self, i: int) -> Frac:
        return Frac(self.gens[i], self._unit)

    def reduce_poly(self, p: flint.fmpq_mpoly) -> flint.fmpq_mpoly:
        """Remainder modulo the algebraic relations (lex order: relation leads with Z**q)."""
        if not self.relations or p.is_zero():
            return p
        for var, degree, rel in self.relations:
            if p.degrees()[var] >= degree:
                p = divmod(p, rel)[1]
        return p

    def normal(self, num: flint.fmpq_mpoly, den: flint.fmpq_mpoly) -> Frac:
        """Normal form: reduced numerator, rationalised denominator, gcd cancelled, monic."""
        num = self.reduce_poly(num)
        if num.is_zero():
            return self.zero()
        den = self.reduce_poly(den)
        if den.is_zero():
            raise ZeroDivisionError("division by an expression that is zero")
        for var, degree, _rel in self.relations:
            if degree == 2 and den.degrees()[var] > 0:
                conj = self._conjugate(den, var)
                num = self.reduce_poly(num * conj)
                den = self.reduce_poly(den * conj)
        g = den if den.is_constant() else num.gcd(den)
        if not g.is_one() and not g.is_constant():
            num = num / g
            den = den / g
        lc = den.leading_coefficient()
        if lc != 1:
            num = num / lc
            den = den / lc
        return Frac(num, den)

    def _conjugate(self, p: flint.fmpq_mpoly, var: int) -> flint.fmpq_mpoly:
        """A - Z*B for p = A + Z*B (p reduced, so of degree < 2 in Z)."""
        z = self.gens[var]
        b, a = divmod(p, z)
        return a - z * b

    def add(self, x: Frac, y: Frac) -> Frac:
        return self.sum([x, y])

    def sub(self, x: Frac, y: Frac) -> Frac:
        return self.sum([x, self.neg(y)])

    def neg(self, x: Frac) -> Frac:
        return Frac(-x.num, x.den)

    def scale(self, x: Frac, q: sympy.Rational | int) -> Frac:
        num, den = (q, 1) if isinstance(q, int) else (int(q.p), int(q.q))
        if num == 0:
            return self.zero()
        if den == 1 and num in (1, -1):
            return x if num == 1 else Frac(-x.num, x.den)
        return Frac(x.num * flint.fmpq(num, den), x.den)

    def mul(self, x: Frac, y: Frac) -> Frac:
        """Product of two normal forms by cross-cancellation (Knuth): two gcds of the factors
        instead of one of the products, and the result is already in lowest terms unless the
        numerator now needs reducing by a relation (then ``normal`` does the rest)."""
        if x.is_zero() or y.is_zero():
            return self.zero()
        g1, g2 = x.num.gcd(y.den), y.num.gcd(x.den)
        num = (x.num if g1.is_one() else x.num / g1) * (y.num if g2.is_one() else y.num / g2)
        den = (x.den if g2.is_one() else x.den / g2) * (y.den if g1.is_one() else y.den / g1)
        degrees = num.degrees()
        if any(degrees[var] >= degree for var, degree, _rel in self.relations):
            return self.normal(num, den)
        lc = den.leading_coefficient()
        if lc != 1:
            num, den = num / lc, den / lc
        return Frac(num, den)

    def inv(self, x: Frac) -> Frac:
        if x.is_zero():
            raise ZeroDivisionError("division by an expression that is zero")
        return self.normal(x.den, x.num)

    def div(self, x: Frac, y: Frac) -> Frac:
        return self.mul(x, self.inv(y))

    def power(self, x: Frac, n: int) -> Frac:
        if n < 0:
            return self.power(self.inv(x), -n)
        if n == 0:
            return self.one()
        if not self.relations:
            return Frac(x.num**n, x.den**n)
        result = self.one()
        base = x
        while n:
            if n & 1:
                result = self.mul(result, base)
            n >>= 1
            if n:
                base = self.mul(base, base)
        return result

    def sum(self, terms: list[Frac]) -> Frac:
        """Sum over a common denominator built by lcm, normalised once at the end."""
        return self.sum_of_products([(t,) for t in terms])

    def sum_of_products(self, products: Sequence[tuple[Frac, ...]]) -> Frac:
        """Σ x·y(·z…) over a common denominator, normalised once at the end: the same normal
        form as ``sum`` of ``mul``s, without a normal form of every product (in a field with
        square roots each product otherwise pays for its own reduction, rationalisation and
        gcd; a sum of four to six products, as in a contraction, then costs several times
        more)."""
        num = den = None
        for factors in products:
            if any(x.is_zero() for x in factors):
                continue
            term_num, term_den = factors[0].num, factors[0].den
            for x in factors[1:]:
                term_num, term_den = term_num * x.num, term_den * x.den
            if num is None:
                num, den = term_num, term_den
            elif term_den == den:
                num = num + term_num
            else:
                g = den.gcd(term_den)
                mult = term_den / g
                num = num * mult + term_num * (den / g)
                den = den * mult
        if num is None:
            return self.zero()
        return self.normal(num, den)

    def equal(self, x: Frac, y: Frac) -> bool:
        return x.num == y.num and x.den == y.den

    def square_root(self, x: Frac) -> Frac | None:
        """A fraction whose square is ``x`` when ``x`` is visibly a square, else None.

        Visibly: numerator and denominator factor (exactly, over Q) into even powers times a
        positive rational square. Which of the two roots ±y comes back is not specified. The
        square of the result is compared with ``x`` in normal form before it is returned, so a
        factorisation can only ever make this say None, never give a wrong root.
        """
        if x.is_zero():
            return self.zero()
        parts = [self._square_root_poly(p) for p in (x.num, x.den)]
        if parts[0] is None or parts[1] is None:
            return None
        root = self.normal(parts[0], parts[1])
        return root if self.equal(self.mul(root, root), x) else None

    def _square_root_poly(self, p: flint.fmpq_mpoly) -> flint.fmpq_mpoly | None:
        content, factors = p.factor()
        if content <= 0 or any(e % 2 for _f, e in factors):
            return None
        top, bottom = int(content.p), int(content.q)
        top_root, bottom_root = math.isqrt(top), math.isqrt(bottom)
        if top_root**2 != top or bottom_root**2 != bottom:
            return None
        root = self.ctx.constant(flint.fmpq(top_root, bottom_root))
        for f, e in factors:
            root = root * f ** (int(e) // 2)
        return root

    def value_at(self, x: Frac, generator_values: Sequence[sympy.Rational]
                 ) -> sympy.Rational | None:
        """The exact value of ``x`` where generator k takes ``generator_values[k]`` (values
        that satisfy the relations, such as a rational point of the unit circle for sin and
        cos); None where the denominator vanishes."""
        args = [flint.fmpq(int(v.p), int(v.q)) for v in generator_values]
        den = x.den(*args)
        if den == 0:
            return None
        num = x.num(*args)
        return sympy.Rational(int(num.p), int(num.q)) / sympy.Rational(int(den.p), int(den.q))

    # ------------------------------------------------------------------ calculus
    def diff_poly(self, p: flint.fmpq_mpoly, i: int) -> Frac:
        """d p / d x_i by the chain rule over the generators."""
        terms = []
        for g, rule_row in enumerate(self.rules):
            rule = rule_row[i]
            if rule is None or p.degrees()[g] == 0:
                continue
            if isinstance(rule, _MissingRule):
                raise NotInField(f"derivative of {self.specs[g].meaning} beyond closure depth")
            dp = p.derivative(g)
            terms.append(Frac(dp * rule.num, rule.den))
        return self.sum(terms)

    def diff(self, x: Frac, i: int) -> Frac:
        if x.is_zero():
            return x
        dn = self.diff_poly(x.num, i)
        if x.den.is_constant():
            return Frac(dn.num / x.den.leading_coefficient(), dn.den) if not dn.is_zero() else dn
        dd = self.diff_poly(x.den, i)
        # (N/D)' = N'/D - N D'/D**2
        first = self.normal(dn.num, dn.den * x.den)
        second = self.normal(x.num * dd.num, dd.den * x.den * x.den) if not dd.is_zero() else None
        return first if second is None else self.sub(first, second)

    # ------------------------------------------------------------------ back to SymPy
    def poly_to_sympy(self, p: flint.fmpq_mpoly) -> sympy.Expr:
        meanings = [s.meaning for s in self.specs]
        powers: dict[tuple[int, int], sympy.Expr] = {}
        terms = []
        for monom, coeff in p.terms():
            factors = [sympy.Rational(int(coeff.p), int(coeff.q))]
            for k, e in enumerate(monom):
                if e:
                    if (k, e) not in powers:
                        powers[k, e] = meanings[k] ** int(e)
                    factors.append(powers[k, e])
            terms.append(sympy.Mul(*factors))
        return sympy.Add(*terms)

    def to_sympy(self, x: Frac) -> sympy.Expr:
        """Plain (expanded) SymPy value of a fraction; exact, not pretty."""
        return self.poly_to_sympy(x.num) / self.poly_to_sympy(x.den)

    def display(self, x: Frac) -> sympy.Expr:
        """Deterministic display form: numerator and denominator factored (flint), with
        (cos - 1)(cos + 1) pairs written back as -sin**2 (and cosh likewise)."""
        if x.is_zero():
            return sympy.Integer(0)
        return factored_product(self.display_factors(x))

    def display_factors(self, x: Frac) -> Factored:
        """``display``'s pieces: a rational scale and (base, exponent) pairs, negative
        exponents for the denominator's factors — a factor list of a non-zero ``x`` over Q
        (in its generators) that callers can use without SymPy factoring the display again."""
        num_scale, num_factors = self._display_parts(x.num)
        den_scale, den_factors = self._display_parts(x.den)
        return num_scale / den_scale, num_factors + [(f, -e) for f, e in den_factors]

    def _display_parts(self, p: flint.fmpq_mpoly
                       ) -> tuple[sympy.Rational, list[tuple[sympy.Expr, int]]]:
        if p.is_constant():
            c = p.leading_coefficient()
            return sympy.Rational(int(c.p), int(c.q)), []
        if len(p) == 1:
            return self._monomial_parts(p)
        content, found = p.factor()
        scale = sympy.Rational(int(content.p), int(content.q))
        factors = [[f, e] for f, e in found]
        out: list[tuple[sympy.Expr, int]] = []
        degrees = p.degrees()
        for spec_i in self._cosine_like:
            spec = self.specs[spec_i]
            if not degrees[spec_i]:
                continue
            c = self.gens[spec_i]
            minus = next((item for item in factors if item[0] == c - 1), None)
            plus = next((item for item in factors if item[0] == c + 1), None)
            k = min(minus[1], plus[1]) if minus and plus else 0
            if k == 0:
                continue
            minus[1] -= k
            plus[1] -= k
            partner = self.specs[self.index[spec.partner]].meaning
            if spec.kind == "trig":
                scale *= (-1) ** k
            out.append((partner, 2 * k))
        primitive = []
        for f, e in factors:
            if e:
                unit, g = self._primitive(f)
                scale *= unit**e
                primitive.append((g, e))
        if len(primitive) > 1:  # flint's factor order is deterministic; sort for readability
            primitive.sort(key=lambda item: str(item[0]))
        out += [(self.poly_to_sympy(f), int(e)) for f, e in primitive]
        return scale, out

    def _monomial_parts(self, p: flint.fmpq_mpoly
                        ) -> tuple[sympy.Rational, list[tuple[sympy.Expr, int]]]:
        """A single term needs no factorisation (most components of simple metrics)."""
        ((monom, coeff),) = p.terms()
        meanings = [s.meaning for s in self.specs]
        powers = [(meanings[k], int(e)) for k, e in enumerate(monom) if e]
        return sympy.Rational(int(coeff.p), int(coeff.q)), powers

    def _primitive(self, f: flint.fmpq_mpoly) -> tuple[sympy.Rational, flint.fmpq_mpoly]:
        """f = unit * g with g integral, primitive, and its most 'coordinate-heavy' term
        positive (so r - 2*M rather than 2*M - r; the choice only has to be deterministic)."""
        coords = self._coordinate_vars
        terms = list(f.terms())
        dens = [int(c.q) for _m, c in terms]
        nums = [int(c.p) for _m, c in terms]
        lcm = math.lcm(*dens)
        gcd = math.gcd(*nums)
        lead = max(terms, key=lambda t: (sum(t[0][k] for k in coords), sum(t[0]), t[0]))
        sign = 1 if lead[1] > 0 else -1
        unit = sympy.Rational(gcd * sign, lcm)
        return unit, f * flint.fmpq(lcm * sign, gcd)


# ====================================================================== building a field


@dataclass(frozen=True)
class FieldRequest:
    """What a field must contain: coordinates, parameters, free functions and expressions."""

    coordinates: tuple[sympy.Symbol, ...]
    parameters: tuple[sympy.Symbol, ...]
    functions: tuple[sympy.Expr, ...]
    expressions: tuple[sympy.Expr, ...]
    derivative_depth: int = 2  # how many times expressions will be differentiated
    deadline: float | None = None  # time.monotonic() value; past it, building raises


def build_field(request: FieldRequest) -> tuple[RationalField, list[Frac]]:
    """Discover the generators of ``request.expressions``, close them under differentiation
    (to ``derivative_depth``), and return the field with the expressions converted."""
    specs: list[GeneratorSpec] = [GeneratorSpec(x, x, "coordinate") for x in request.coordinates]
    specs += [GeneratorSpec(p, p, "parameter") for p in request.parameters]
    function_heads = {f.func: f for f in request.functions}
    depth_of: dict[sympy.Basic, int] = {}
    derivatives: dict[tuple[sympy.Basic, sympy.Symbol], sympy.Expr] = {}
    pending = list(request.expressions)
    depth = 0
    while True:
        _check_deadline(request)
        field = _discover(specs, pending, request.coordinates, function_heads)
        for s in field.specs:
            depth_of.setdefault(s.key, depth)
        if depth >= request.derivative_depth:
            break
        pending = _derivative_expressions(field, depth_of, depth, request.coordinates, derivatives)
        depth += 1
        if not pending:
            break
        specs = list(_discovery_order(field))
    final = _finalise(field, depth_of, request, derivatives)
    return final, [_convert(final, e, function_heads) for e in request.expressions]


def _check_deadline(request: FieldRequest) -> None:
    if request.deadline is not None and time.monotonic() > request.deadline:
        raise BudgetExceeded("generator field", "time limit exceeded while reading the metric")


def _discovery_order(field: RationalField) -> list[GeneratorSpec]:
    return list(reversed(field.specs))


def _derivative_expressions(
    field: RationalField,
    depth_of: dict[sympy.Basic, int],
    depth: int,
    coords: tuple,
    derivatives: dict[tuple[sympy.Basic, sympy.Symbol], sympy.Expr],
) -> list[sympy.Expr]:
    """SymPy derivatives of the generators found at ``depth`` (remembered in
    ``derivatives``: SymPy's diff is the slowest step of building a field)."""
    out = []
    for s in field.specs:
        if depth_of[s.key] != depth or s.kind in ("coordinate", "parameter", "constant"):
            continue
        for x in coords:
            if s.meaning.has(x):
                derivatives[s.key, x] = sympy.diff(s.meaning, x)
                out.append(derivatives[s.key, x])
    return out


def _discover(
    specs: list[GeneratorSpec], exprs: list[sympy.Expr], coords: tuple, heads: dict
) -> RationalField:
    """Convert every expression, adding generators as they are found (restart on each)."""
    specs = list(specs)
    while True:
        field = _make_field(specs, coords)
        try:
            for e in exprs:
                _convert(field, e, heads)
            return field
        except _NeedGenerator as need:
            known = {s.key for s in specs}
            specs += [s for s in need.specs if s.key not in known]
            if len(specs) > MAX_GENERATORS:
                raise NotInField("too many generators") from None


def _make_field(discovered: list[GeneratorSpec], coords: tuple) -> RationalField:
    """A field without derivative rules; later discoveries get earlier variables (lex order
    then makes every relation lead with its own generator)."""
    ordered = tuple(reversed(discovered))
    names = tuple(f"g{k}" for k in range(len(ordered)))
    ctx = flint.fmpq_mpoly_ctx.get(names, "lex")
    index = {s.key: k for k, s in enumerate(ordered)}
    empty_rules = tuple(tuple(None for _ in coords) for _ in ordered)
    relations: list[tuple[int, int, flint.fmpq_mpoly]] = []
    # Radicands are converted with the relations of the generators found before them, exactly
    # as ``_convert_radical`` sees them, so the relation and the generator's meaning agree.
    for k in reversed(range(len(ordered))):
        if ordered[k].degree:
            so_far = RationalField(ctx, ordered, coords, _ctx_order(relations), empty_rules, index)
            relations.append((k, ordered[k].degree, _relation(so_far, k, ordered[k])))
    return RationalField(ctx, ordered, coords, _ctx_order(relations), empty_rules, index)


def _ctx_order(relations: list[tuple[int, int, flint.fmpq_mpoly]]) -> tuple:
    """Reduction order: leading (later discovered) generators first."""
    return tuple(sorted(relations, key=lambda rel: rel[0]))


def _relation(field: RationalField, k: int, spec: GeneratorSpec) -> flint.fmpq_mpoly:
    z = field.gens[k]
    if spec.kind in ("trig", "hyperbolic"):
        partner = field.gens[field.index[spec.partner]]
        return z**2 + partner**2 - 1 if spec.kind == "trig" else z**2 - partner**2 + 1
    base = _convert(field, spec.base, {})
    # Z = D * f**(1/q) with f = N/D, so Z**q = D**(q-1) * N, a polynomial relation.
    return z**spec.degree - base.den ** (spec.degree - 1) * base.num


def _finalise(
    field: RationalField, depth_of: dict, request: FieldRequest, derivatives: dict
) -> RationalField:
    """Attach derivative rules to every generator that has them within the depth."""
    heads = {f.func: f for f in request.functions}
    rules = []
    for s in field.specs:
        if depth_of.get(s.key, 0) < request.derivative_depth:
            row = [_rule(field, s, x, heads, derivatives) for x in request.coordinates]
        else:
            row = [_MISSING if s.meaning.has(x) else None for x in request.coordinates]
        rules.append(tuple(row))
    return RationalField(
        field.ctx, field.specs, field.coordinates, field.relations, tuple(rules), field.index
    )


def _rule(
    field: RationalField, spec: GeneratorSpec, x: sympy.Symbol, heads: dict, derivatives: dict
) -> Frac | None:
    if spec.kind == "coordinate":
        return field.one() if spec.key == x else None
    if spec.kind in ("parameter", "constant") or not spec.meaning.has(x):
        return None
    derivative = derivatives.get((spec.key, x))
    if derivative is None:
        derivative = sympy.diff(spec.meaning, x)
    try:
        d = _convert(field, derivative, heads)
    except _NeedGenerator:
        return _MISSING
    return None if d.is_zero() else d


class _MissingRule(Frac):
    """Marker for a derivative beyond the closure depth: using it is an error."""


_MISSING = _MissingRule(None, None)  # type: ignore[arg-type]


# ====================================================================== SymPy -> field


def _convert(field: RationalField, e: sympy.Basic, heads: dict) -> Frac:
    """Convert a SymPy expression; raises _NeedGenerator for unknown generators."""
    if e.is_Rational:
        return field.const(e)
    k = field.index.get(e)
    if k is not None:
        return field.var(k)
    memo = field.converted
    found = memo.get(e)
    if found is not None:
        return found
    if e.is_Add:
        value = field.sum([_convert(field, a, heads) for a in e.args])
    elif e.is_Mul:
        value = field.one()
        for a in e.args:
            value = field.mul(value, _convert(field, a, heads))
    elif e.is_Pow:
        value = _convert_pow(field, e, heads)
    else:
        value = _convert_atom(field, e, heads)
    memo[e] = value
    return value


def _need(*specs: GeneratorSpec) -> None:
    raise _NeedGenerator(list(specs))


def _convert_pow(field: RationalField, e: sympy.Pow, heads: dict) -> Frac:
    base, exponent = e.args
    if base is sympy.E:
        return _convert(field, sympy.exp(exponent), heads)
    if exponent.is_Integer:
        return field.power(_convert(field, base, heads), int(exponent))
    if exponent.is_Rational:
        return _convert_radical(field, base, exponent, heads)
    if exponent.is_Float or exponent.has(sympy.Float):
        raise NotInField("floating-point exponent")
    const, rest = exponent.as_coeff_Add()
    if const.is_Integer and const != 0:
        return field.mul(
            field.power(_convert(field, base, heads), int(const)),
            _convert(field, sympy.Pow(base, rest, evaluate=False), heads),
        )
    coeff, unit = rest.as_coeff_Mul()
    if coeff.is_Integer and coeff not in (1, -1, 0):
        inner = _convert(field, sympy.Pow(base, unit), heads)
        return field.power(inner, int(coeff))
    if coeff == -1:
        return field.inv(_convert(field, sympy.Pow(base, unit), heads))
    key = sympy.Pow(base, exponent, evaluate=False)
    if key not in field.index:
        _need(GeneratorSpec(key, sympy.Pow(base, exponent), "other"))
    return field.var(field.index[key])


def _convert_radical(
    field: RationalField, base: sympy.Expr, exponent: sympy.Rational, heads: dict
) -> Frac:
    """base**(p/q) = base**k * (Z/D)**r with Z = D*base**(1/q), p = k*q + r, 0 <= r < q."""
    p, q = int(exponent.p), int(exponent.q)
    k, r = divmod(p, q)
    if base.has(sympy.Float):
        raise NotInField("floating-point radicand")
    canon = _cancelled(base)
    f = _convert(field, canon, heads)
    key = sympy.Tuple(canon, q)
    if key not in field.index:
        den = field.to_sympy(Frac(f.den, field.ctx.constant(1)))
        meaning = den * sympy.Pow(canon, sympy.Rational(1, q))
        _need(GeneratorSpec(key, meaning, "radical", degree=q, base=canon))
    z = field.var(field.index[key])
    root = field.div(z, Frac(f.den, field.ctx.constant(1)))
    return field.mul(field.power(f, k), field.power(root, r))


@functools.lru_cache(maxsize=4096)
def _cancelled(base: sympy.Expr) -> sympy.Expr:
    """``cancel`` of a radicand, remembered: field discovery converts every expression again
    each time it finds a new generator, and the same radicands recur across a whole check."""
    return sympy.cancel(base)


def _convert_atom(field: RationalField, e: sympy.Basic, heads: dict) -> Frac:
    if e.is_Symbol or e in (sympy.pi, sympy.E, sympy.EulerGamma, sympy.Catalan):
        _need(GeneratorSpec(e, e, "constant"))
    if e is sympy.I:
        return _convert_radical(field, sympy.Integer(-1), sympy.Rational(1, 2), heads)
    if e.is_Float:
        raise NotInField("floating-point number")
    if isinstance(e, sympy.exp):
        return _convert_exp(field, e.args[0], heads)
    if isinstance(e, (sympy.sin, sympy.cos, sympy.tan, sympy.cot, sympy.sec, sympy.csc)):
        return _convert_circular(field, e, heads, trig=True)
    if isinstance(e, (sympy.sinh, sympy.cosh, sympy.tanh, sympy.coth, sympy.sech, sympy.csch)):
        return _convert_circular(field, e, heads, trig=False)
    if isinstance(e, sympy.Abs):
        return _convert_radical(field, e.args[0] ** 2, sympy.Rational(1, 2), heads)
    if isinstance(e, sympy.Derivative) or (isinstance(e, sympy.Function) and e.func in heads):
        return _convert_function(field, e, heads)
    if isinstance(e, sympy.Function) and not isinstance(e, sympy.Derivative):
        if e.func.__name__ in ("sign", "Heaviside", "DiracDelta", "re", "im", "arg", "floor"):
            raise NotInField(f"{e.func.__name__} is not differentiable in the field")
        canon = e.func(*(sympy.cancel(arg) for arg in e.args))
        if canon in field.index:
            return field.var(field.index[canon])
        _need(GeneratorSpec(canon, canon, "other"))
    raise NotInField(f"cannot represent {type(e).__name__}")


def _convert_function(field: RationalField, e: sympy.Basic, heads: dict) -> Frac:
    applied = e.expr if isinstance(e, sympy.Derivative) else e
    if not isinstance(applied, sympy.Function) or applied.func not in heads:
        raise NotInField(f"derivative of {applied} is not a declared free function")
    if not all(a in field.coordinates for a in applied.args):
        raise NotInField(f"{applied} is not applied to coordinates")
    order = int(e.derivative_count) if isinstance(e, sympy.Derivative) else 0
    _need(GeneratorSpec(e, e, "function", order=order))
    raise AssertionError("unreachable")


def _convert_exp(field: RationalField, arg: sympy.Expr, heads: dict) -> Frac:
    """exp(sum) = product of exp(c*u) = exp(u)**c for integer c; other terms get their own."""
    result = field.one()
    for term in sympy.Add.make_args(sympy.expand(arg)):
        coeff, unit = term.as_coeff_Mul()
        if not coeff.is_Integer:
            coeff, unit = sympy.Integer(1), term
        if unit == 1 or isinstance(unit, sympy.LambertW):
            # exp(1) is the constant E; exp(W(u)) = u/W(u) keeps Lambert-W charts rational.
            inner = sympy.E if unit == 1 else unit.args[0] / unit
            result = field.mul(result, field.power(_convert(field, inner, heads), int(coeff)))
            continue
        key = sympy.exp(unit, evaluate=False)
        if key not in field.index:
            _need(GeneratorSpec(key, sympy.exp(unit), "other"))
        result = field.mul(result, field.power(field.var(field.index[key]), int(coeff)))
    return result


def _convert_circular(field: RationalField, e: sympy.Function, heads: dict, trig: bool) -> Frac:
    arg = e.args[0]
    coeff, _unit = arg.as_coeff_Mul()
    if coeff.is_Integer and abs(coeff) > 1:
        return _convert(field, sympy.expand_trig(e), heads)
    sin_f, cos_f = (sympy.sin, sympy.cos) if trig else (sympy.sinh, sympy.cosh)
    kind = "trig" if trig else "hyperbolic"
    s_key, c_key = sin_f(arg), cos_f(arg)
    if s_key not in field.index or c_key not in field.index:
        # cos first, so that in context order sin leads its relation.
        _need(
            GeneratorSpec(c_key, c_key, kind, degree=0, partner=s_key),
            GeneratorSpec(s_key, s_key, kind, degree=2, partner=c_key),
        )
    s, c = field.var(field.index[s_key]), field.var(field.index[c_key])
    name = type(e).__name__.removesuffix("h") if not trig else type(e).__name__
    table = {
        "sin": lambda: s,
        "cos": lambda: c,
        "tan": lambda: field.div(s, c),
        "cot": lambda: field.div(c, s),
        "sec": lambda: field.inv(c),
        "csc": lambda: field.inv(s),
    }
    return table[name]()


def generators_of(field: RationalField, x: Frac) -> set[int]:
    """Indices of the generators a fraction depends on."""
    used = set()
    for p in (x.num, x.den):
        used |= {k for k, d in enumerate(p.degrees()) if d}
    return used


def monomial_count(values: list[Frac]) -> int:
    return max((v.size() for v in values), default=0)


def pairs(n: int) -> list[tuple[int, int]]:
    """Ordered index pairs a < b: the independent slots of an antisymmetric index pair."""
    return list(itertools.combinations(range(n), 2))
