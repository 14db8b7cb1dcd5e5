"""Exact rational sample points inside an entry's domain, for zero tests and witnesses.

A point gives every coordinate and parameter an exact rational value (respecting the SymPy
assumptions of each parameter and the entry's domain inequalities) and every free function and
each of its derivatives an independent random rational: at a single point these values are
unconstrained, which is what makes a vanishing at random points a meaningful (Schwartz–Zippel)
test of an identity in the free functions.

Angles that appear inside sin/cos/tan... of the metric are taken at rational points of the unit
circle, theta = 2*atan(q), so that sin(theta) = 2q/(1+q**2) and cos(theta) = (1-q**2)/(1+q**2)
stay rational. The returned point therefore also holds the keys sin(theta) and cos(theta);
``substitute`` uses them so that trigonometric expressions evaluate exactly.
"""

from __future__ import annotations

import functools
import itertools
import random
from collections.abc import Iterator
from dataclasses import dataclass
from fractions import Fraction

import mpmath
import sympy

from generator.model import Spacetime

FUNCTION_DERIVATIVE_ORDER = 4
ATTEMPTS_PER_POINT = 400
SCALES = (1, 10, 3)
CIRCULAR = (sympy.sin, sympy.cos, sympy.tan, sympy.cot, sympy.sec, sympy.csc)

Point = dict[sympy.Basic, sympy.Expr]


STREAM_SEED = 20261201
STREAM_LENGTH = 10


def entry_points(spacetime: Spacetime, count: int) -> list[Point]:
    """The first ``count`` points of the one stream that all checks of an entry share
    (signature, claims, classification). Each stream costs the rejection sampling of its
    points; one stream instead of three was a tenth of a second of a Kerr check."""
    return sample_points(spacetime, max(count, STREAM_LENGTH), STREAM_SEED)[:count]


def sample_points(spacetime: Spacetime, count: int, seed: int) -> list[Point]:
    """``count`` distinct exact points inside the domain (fewer if the domain is too thin to
    hit by rejection sampling); deterministic for a given seed.

    The same points are asked for many times while one entry is checked (signature, claims,
    classification); they are computed once per process and handed out as fresh copies.
    """
    return [dict(point) for point in _sample_points_once(spacetime, count, seed)]


@functools.lru_cache(maxsize=16)
def _sample_points_once(spacetime: Spacetime, count: int, seed: int) -> tuple[Point, ...]:
    rng = random.Random(seed)
    plan = domain_plan(spacetime)
    points: list[Point] = []
    seen: set[tuple] = set()
    for attempt in range(count * ATTEMPTS_PER_POINT):
        if len(points) >= count:
            break
        scale = SCALES[(attempt // 50) % len(SCALES)]
        point = random_point(spacetime, plan, rng, scale)
        if point is None:
            continue
        key = tuple(point.values())
        if key in seen or not _holds_everywhere(plan.relations, point, plan.angles):
            continue
        for f in spacetime.functions:
            point.update(function_values(f, rng, scale))
        if not regular_at(spacetime, point, plan.angles):
            continue
        seen.add(key)
        points.append(point)
    return tuple(points)


@dataclass(frozen=True)
class DomainPlan:
    """The domain of an entry sorted for sampling, worked out once per spacetime.

    ``parameter_relations`` involve parameters only and are tested before any coordinate is
    drawn (most rejections happen there, e.g. a**2 < M**2). ``bounds`` lists, per coordinate,
    the relations of the form x > f(parameters) or x < f(parameters), so that x is drawn
    between them instead of being found by rejection.
    """

    angles: tuple[sympy.Symbol, ...]
    parameter_relations: tuple[sympy.Basic, ...]
    bounds: dict[sympy.Symbol, tuple[tuple[str, sympy.Expr], ...]]
    relations: tuple[sympy.Basic, ...]


def domain_plan(spacetime: Spacetime) -> DomainPlan:
    coordinates = set(spacetime.coordinates)
    parameter_relations = tuple(
        relation for relation in spacetime.domain
        if isinstance(relation, sympy.core.relational.Relational)
        and not relation.free_symbols & coordinates)
    bounds = {x: tuple(_bounds_on(spacetime, x)) for x in spacetime.coordinates}
    return DomainPlan(angle_coordinates(spacetime), parameter_relations, bounds,
                      tuple(spacetime.domain))


def _bounds_on(spacetime: Spacetime, x: sympy.Symbol):
    """(">" or "<", bound) for each domain relation that bounds x by an expression free of
    coordinates (``r > 2*M``, ``3*r < R``), read by ``linear_bound``."""
    for relation in spacetime.domain:
        found = linear_bound(relation, x)
        if found is not None and not found[1].has(*spacetime.coordinates):
            yield (">" if found[0] == "lower" else "<"), found[1]


@functools.lru_cache(maxsize=4096)
def linear_bound(relation: sympy.Basic, x: sympy.Symbol) -> tuple[str, sympy.Expr, bool] | None:
    """('lower'|'upper', bound, strict) if ``relation`` bounds ``x`` by an x-free expression:
    any relation linear in x with a rational coefficient (``8*M < 3*Rs`` bounds Rs below by
    8*M/3, and M above by 3*Rs/8). A relation with a bare symbol on one side belongs to that
    symbol (``r > 2*v`` bounds r, not v), so it stays available for it. The sampler and the
    sign prover read bounds through this one function, so they agree on what a domain says.
    Remembered: a pure function, asked again for every proof and every sample of an entry."""
    if not isinstance(relation, sympy.core.relational.Relational):
        return None
    op = relation.rel_op
    if op not in ("<", "<=", ">", ">="):
        return None
    bare = {side for side in (relation.lhs, relation.rhs) if side.is_Symbol}
    if bare and x not in bare:
        return None
    difference = relation.lhs - relation.rhs  # difference OP 0
    if not difference.has(x):
        return None
    coefficient = sympy.diff(difference, x)
    if not coefficient.is_Rational or coefficient == 0:
        return None
    bound = -difference.subs(x, 0) / coefficient
    lower = (op in (">", ">=")) == (coefficient > 0)
    return ("lower" if lower else "upper"), bound, op in ("<", ">")


@functools.lru_cache(maxsize=64)
def angle_coordinates(spacetime: Spacetime) -> tuple[sympy.Symbol, ...]:
    """Coordinates that occur as the argument of a circular function in the metric
    (remembered: asked at every sample point and every zero test of an entry)."""
    found = set()
    for f in spacetime.metric.atoms(*CIRCULAR):
        for x in spacetime.coordinates:
            coeff, unit = f.args[0].as_coeff_Mul()
            if unit == x and coeff.is_Rational:
                found.add(x)
    return tuple(x for x in spacetime.coordinates if x in found)


def random_rational(rng: random.Random, scale: int, sign: str = "any") -> sympy.Rational:
    """A random rational of modest height; ``sign`` is any, positive, nonnegative, negative.

    The magnitude is drawn at a random decade around ``scale`` so that domains which need one
    parameter much smaller than another (e.g. Lambda*M**2 < 1/9) are still reached."""
    decade = Fraction(10) ** rng.choice((0, 0, 0, -1, -1, -2, 1))
    value = Fraction(rng.randint(1, 99), rng.randint(1, 12)) * _fraction(scale) * decade / 10
    if sign in ("nonnegative", "nonpositive") and rng.random() < 0.05:
        return sympy.Integer(0)
    if sign in ("negative", "nonpositive") or (sign == "any" and rng.random() < 0.25):
        value = -value
    return sympy.Rational(value.numerator, value.denominator)


def _fraction(value: int | sympy.Rational) -> Fraction:
    """A Python fraction of an integer or a SymPy rational (quick exact arithmetic)."""
    if isinstance(value, int):
        return Fraction(value)
    return Fraction(int(value.p), int(value.q))


def parameter_value(symbol: sympy.Symbol, rng: random.Random, scale: int) -> sympy.Rational:
    if symbol.is_integer:
        magnitude = sympy.Integer(rng.randint(1, 10))
        if symbol.is_positive or symbol.is_nonnegative:
            return magnitude
        return -magnitude if symbol.is_negative or rng.random() < 0.5 else magnitude
    if symbol.is_positive:
        return random_rational(rng, scale, "positive")
    if symbol.is_negative:
        return random_rational(rng, scale, "negative")
    if symbol.is_nonnegative:
        return random_rational(rng, scale, "nonnegative")
    if symbol.is_nonpositive:
        return -random_rational(rng, scale, "nonnegative")
    return random_rational(rng, scale)


def random_point(
    spacetime: Spacetime, plan: DomainPlan, rng: random.Random, scale: int
) -> Point | None:
    """Random values for parameters and coordinates, or None when the parameters already
    leave the domain (the caller then draws again)."""
    point: Point = {}
    for p in spacetime.parameters:
        point[p] = parameter_value(p, rng, scale)
    if not _holds_everywhere(plan.parameter_relations, point, ()):
        return None
    for x in spacetime.coordinates:
        bounded = None if x in plan.angles else _bounded_value(plan.bounds[x], point, rng)
        if bounded is not None:
            point[x] = bounded
        elif x in plan.angles:
            q = random_rational(rng, 10, "positive" if rng.random() < 0.9 else "any")
            point[sympy.sin(x)] = 2 * q / (1 + q**2)
            point[sympy.cos(x)] = (1 - q**2) / (1 + q**2)
            point[x] = 2 * sympy.atan(q)
        else:
            point[x] = parameter_value(x, rng, scale)
    return point


BOUND_DENOMINATOR = 64  # irrational bounds are rounded inwards to this grid


def direct_bounds(bounds: tuple[tuple[str, sympy.Expr], ...], point: Point
                  ) -> tuple[sympy.Rational | None, sympy.Rational | None]:
    """The tightest rational lower and upper bounds the domain sets on a coordinate directly,
    once the parameters of ``point`` are fixed (None where there is none)."""
    low = high = None
    for side, bound in bounds:
        value = _rational_bound(bound, point, side)
        if value is None:
            continue
        if side == ">":
            low = value if low is None else max(low, value)
        else:
            high = value if high is None else min(high, value)
    return low, high


def _bounded_value(
    bounds: tuple[tuple[str, sympy.Expr], ...], point: Point, rng: random.Random
) -> sympy.Rational | None:
    """A value between the bounds the domain sets on a coordinate directly (``r > 2*M``,
    ``r > M + sqrt(M**2 - a**2)``, ``x < 1``) once the parameters are fixed. An irrational
    bound (a root) is rounded inwards to a nearby rational, so the value stays strictly inside.
    Other domain conditions are left to rejection; this only makes thin domains reachable."""
    low, high = direct_bounds(bounds, point)
    if low is None and high is None:
        return None
    step = random_rational(rng, 1 + abs(low if low is not None else high), "positive")
    if low is not None and high is not None:
        return low + (high - low) * sympy.Rational(rng.randint(1, 99), 100) if high > low else low
    return low + step if low is not None else high - step


def _rational_bound(bound: sympy.Expr, point: Point, side: str) -> sympy.Rational | None:
    """The bound at the point if rational; otherwise a rational just inside it (above a lower
    bound, below an upper one), from a 30-digit value; None if it is not a real number."""
    if bound.is_rational_function():
        value = bound.xreplace(point)
        return value if value.is_Rational else None
    numeric = bound.evalf(30, subs=_symbol_values(point))
    if not numeric.is_Float:
        return None
    scaled = mpmath.mpf(numeric) * BOUND_DENOMINATOR
    inward = mpmath.ceil(scaled) if side == ">" else mpmath.floor(scaled)
    return sympy.Rational(int(inward), BOUND_DENOMINATOR)


def _symbol_values(point: Point) -> dict[sympy.Symbol, sympy.Expr]:
    return {k: v for k, v in point.items() if isinstance(k, sympy.Symbol)}


def function_values(f: sympy.Expr, rng: random.Random, scale: int) -> Point:
    """Independent values for f and its partial derivatives up to a fixed order."""
    values: Point = {}
    values[f] = random_rational(rng, scale, _sign_of(f))
    variables = f.args
    for order in range(1, FUNCTION_DERIVATIVE_ORDER + 1):
        for combo in itertools.combinations_with_replacement(variables, order):
            values[sympy.Derivative(f, *combo)] = random_rational(rng, scale)
    return values


def _sign_of(f: sympy.Expr) -> str:
    """The sign a free function's declared assumption allows for its values."""
    if f.is_positive:
        return "positive"
    if f.is_negative:
        return "negative"
    if f.is_nonnegative:
        return "nonnegative"
    if f.is_nonpositive:
        return "nonpositive"
    return "any"


def substitute(expr: sympy.Expr, point: Point, angles: tuple[sympy.Symbol, ...] = ()) -> sympy.Expr:
    """The value of ``expr`` at ``point``: exact wherever SymPy's arithmetic is exact.

    Circular functions of angle coordinates are first written through sin and cos of the
    angle itself (tan, sec, integer multiples), so that the rational sin/cos values apply.
    """
    if angles:
        expr = through_sin_cos(expr, angles)
    return expr.xreplace(point)


def through_sin_cos(expr: sympy.Expr, angles: tuple[sympy.Symbol, ...]) -> sympy.Expr:
    """``expr`` with circular functions of the angles written through sin and cos of the angle
    (done once for an expression that is evaluated at several points)."""
    replacements = {}
    for f in expr.atoms(*CIRCULAR):
        coeff, unit = f.args[0].as_coeff_Mul()
        if unit in angles and coeff.is_Integer:
            replacements[f] = _sin_cos_only(f.func, int(coeff), unit)
    return expr.xreplace(replacements) if replacements else expr


def _sin_cos_only(func: type, k: int, x: sympy.Symbol) -> sympy.Expr:
    """func(k*x) through sin(x) and cos(x) only (multiple-angle formulas)."""
    s, c = sympy.sin(x), sympy.cos(x)
    sin_k, cos_k = _multiple_angle(k, s, c)
    table = {
        sympy.sin: sin_k,
        sympy.cos: cos_k,
        sympy.tan: sin_k / cos_k,
        sympy.cot: cos_k / sin_k,
        sympy.sec: 1 / cos_k,
        sympy.csc: 1 / sin_k,
    }
    return table[func]


def _multiple_angle(k: int, s: sympy.Expr, c: sympy.Expr) -> tuple[sympy.Expr, sympy.Expr]:
    """(sin(kx), cos(kx)) as polynomials in s = sin x and c = cos x, by repeated addition."""
    sin_k, cos_k = sympy.Integer(0), sympy.Integer(1)
    for _ in range(abs(k)):
        sin_k, cos_k = sin_k * c + cos_k * s, cos_k * c - sin_k * s
    if k < 0:
        sin_k = -sin_k
    return sympy.expand(sin_k), sympy.expand(cos_k)


def inside_domain(
    spacetime: Spacetime, point: Point, angles: tuple[sympy.Symbol, ...] | None = None
) -> bool:
    """Every domain inequality holds at the point (decided exactly or at 30 digits)."""
    angles = angle_coordinates(spacetime) if angles is None else angles
    return _holds_everywhere(spacetime.domain, point, angles)


def _holds_everywhere(relations: tuple[sympy.Basic, ...], point: Point,
                      angles: tuple[sympy.Symbol, ...]) -> bool:
    """Exact for rational relations; a relation with roots or functions is judged on its
    30-digit value (a point within 1e-25 of its boundary counts as outside, which only costs
    a sample)."""
    for relation in relations:
        if not isinstance(relation, sympy.core.relational.Relational):
            if substitute(relation, point, angles) is not sympy.true:
                return False
            continue
        difference, rational = _difference_of(relation)
        exact = _exact_value(difference, point) if rational else None
        if exact is not None and relation.rel_op in _EXACT:
            if not _EXACT[relation.rel_op](exact):
                return False
        elif relation.rel_op in _MARGINS:
            if not _numeric_truth(relation, difference, point, angles):
                return False
        elif relation.xreplace(point) is not sympy.true:
            return False
    return True


@functools.lru_cache(maxsize=1024)
def _difference_of(relation: sympy.core.relational.Relational) -> tuple[sympy.Expr, bool]:
    """lhs − rhs of a relation and whether it is a rational function (asked for every
    sample drawn: remembered)."""
    difference = relation.lhs - relation.rhs
    return difference, bool(difference.is_rational_function())


@functools.lru_cache(maxsize=1024)
def _through_angles(difference: sympy.Expr, angles: tuple[sympy.Symbol, ...]) -> sympy.Expr:
    """``through_sin_cos`` of a relation's difference, remembered like ``_difference_of``
    (the same few relations are judged at every point drawn)."""
    return through_sin_cos(difference, angles)


def _exact_value(expr: sympy.Expr, point: Point) -> Fraction | None:
    """A rational function's value at the point in Python fractions (SymPy's substitution
    built a new expression tree for every sample); None where it is undefined or holds
    anything but sums, products, integer powers, rationals and the point's symbols."""
    try:
        return _fraction_of(expr, point)
    except (KeyError, ZeroDivisionError, _NotRational):
        return None


class _NotRational(Exception):
    """A node ``_fraction_of`` does not evaluate."""


def _fraction_of(e: sympy.Basic, point: Point) -> Fraction:
    if e.is_Rational:
        return Fraction(int(e.p), int(e.q))
    if e.is_Symbol:
        value = point[e]
        if not value.is_Rational:
            raise _NotRational(e)
        return Fraction(int(value.p), int(value.q))
    if e.is_Add:
        return sum((_fraction_of(a, point) for a in e.args), Fraction(0))
    if e.is_Mul:
        product = Fraction(1)
        for a in e.args:
            product *= _fraction_of(a, point)
        return product
    if e.is_Pow and e.exp.is_Integer and abs(int(e.exp)) <= 64:
        return _fraction_of(e.base, point) ** int(e.exp)
    raise _NotRational(e)


def _numeric_truth(relation: sympy.core.relational.Relational, difference: sympy.Expr,
                   point: Point, angles: tuple[sympy.Symbol, ...]) -> bool:
    """The relation at the point judged with the 1e-25 margin: in plain mpmath when its
    values at 30 and at 45 digits agree far beyond the margin (most points: SymPy's evalf was
    most of the cost of a sample), else on SymPy's error-controlled 30-digit value."""
    check = _MARGINS[relation.rel_op]
    margin = mpmath.mpf(10) ** -25
    quick = _agreeing_value(_through_angles(difference, angles), point)
    if quick is not None:
        return bool(check(quick, margin))
    value = difference.evalf(30, subs=_symbol_values(point))
    if not (value.is_Float or value.is_Rational):  # complex, or not a number at all
        return False
    return bool(check(value, sympy.Float("1e-25", 30)))


def _agreeing_value(expr: sympy.Expr, point: Point) -> mpmath.mpf | None:
    """``expr``'s real value at the point when mpmath's values at 30 and at 45 digits agree
    to 20 digits, are finite and real; None otherwise (the caller then asks SymPy's evalf,
    which controls its error). Plain mpmath has no error control, so agreement at two
    precisions stands in for it; a value near zero never agrees in relative terms and so is
    always left to evalf."""
    values = []
    for digits in (30, 45):
        with mpmath.workdps(digits):
            try:
                value = mpmath.mpc(_numeric(expr, numeric_memo(point)))
            except (KeyError, TypeError, ValueError, ZeroDivisionError, OverflowError):
                return None
            if not (mpmath.isfinite(value.real) and mpmath.isfinite(value.imag)):
                return None
            values.append(value)
    low, high = values
    with mpmath.workdps(45):
        scale = abs(high)
        if scale == 0 or abs(high.imag) > scale * mpmath.mpf(10) ** -20 \
                or abs(low - high) > scale * mpmath.mpf(10) ** -20:
            return None
        return high.real


_MARGINS = {">": lambda d, m: d > m, "<": lambda d, m: d < -m,
            ">=": lambda d, m: d > -m, "<=": lambda d, m: d < m}
_EXACT = {">": lambda d: d > 0, "<": lambda d: d < 0, ">=": lambda d: d >= 0,
          "<=": lambda d: d <= 0}


def regular_at(
    spacetime: Spacetime, point: Point, angles: tuple[sympy.Symbol, ...] | None = None
) -> bool:
    """The metric is finite, real and non-degenerate at the point.

    Judged on 30-digit values computed straight from the point (``numeric_memo``): a
    determinant within 1e-25 of zero counts as degenerate, which at worst costs a sample.
    """
    n = spacetime.dimension
    with mpmath.workdps(30):
        try:
            memo = numeric_memo(point)
            values = [mpmath.mpc(_numeric(e, memo)) for e in spacetime.metric]
        except ZeroDivisionError:
            return False
        except _NOT_NUMERIC:  # a function mpmath is not given here: SymPy substitutes
            return _regular_by_substitution(spacetime, point, angles)
        tiny = mpmath.mpf(10) ** -20
        if any(not mpmath.isfinite(v) or abs(mpmath.im(v)) > tiny * max(1, abs(v))
               for v in values):
            return False
        rows = [[mpmath.re(values[n * i + j]) for j in range(n)] for i in range(n)]
        return bool(abs(mpmath.det(mpmath.matrix(rows))) > mpmath.mpf(10) ** -25)


def _regular_by_substitution(spacetime: Spacetime, point: Point,
                             angles: tuple[sympy.Symbol, ...] | None) -> bool:
    angles = angle_coordinates(spacetime) if angles is None else angles
    try:
        values = spacetime.metric.applyfunc(lambda e: substitute(e, point, angles))
    except (ZeroDivisionError, ValueError):
        return False
    if any(v.has(sympy.zoo, sympy.nan, sympy.oo, -sympy.oo) for v in values):
        return False
    numeric = values.evalf(30)
    if any(not v.is_real for v in numeric):
        return False
    determinant = numeric.det()
    return bool(abs(determinant) > sympy.Float("1e-25", 30))


# ---------------------------------------------------------------------------- fast numbers

# SymPy heads evaluated by mpmath in ``numeric_value`` (principal branches on both sides).
MPMATH_HEADS = {
    sympy.sin: mpmath.sin, sympy.cos: mpmath.cos, sympy.tan: mpmath.tan,
    sympy.cot: mpmath.cot, sympy.sec: mpmath.sec, sympy.csc: mpmath.csc,
    sympy.sinh: mpmath.sinh, sympy.cosh: mpmath.cosh, sympy.tanh: mpmath.tanh,
    sympy.coth: mpmath.coth, sympy.sech: mpmath.sech, sympy.csch: mpmath.csch,
    sympy.asin: mpmath.asin, sympy.acos: mpmath.acos, sympy.atan: mpmath.atan,
    sympy.asinh: mpmath.asinh, sympy.acosh: mpmath.acosh, sympy.atanh: mpmath.atanh,
    sympy.exp: mpmath.exp, sympy.log: mpmath.log, sympy.Abs: abs,
    sympy.LambertW: mpmath.lambertw,
}
MPMATH_CONSTANTS = {sympy.pi: mpmath.pi, sympy.E: mpmath.e, sympy.I: mpmath.j}


def numeric_value(value: sympy.Expr, digits: int) -> mpmath.mpc | None:
    """A number (no free symbols left) in plain mpmath arithmetic at ``digits`` digits, or None
    if it holds something mpmath is not given here.

    Much faster than SymPy's evalf on the large trees that substituting a point into a
    pulled-back metric gives, but without evalf's error control: callers may trust it to say
    that two numbers agree to far fewer digits than it carries, and re-check anything else.
    """
    with mpmath.workdps(digits):
        try:
            return mpmath.mpc(_numeric(value, {}))
        except (KeyError, TypeError, ValueError, ZeroDivisionError, OverflowError):
            return None


_NOT_NUMERIC = (KeyError, TypeError, ValueError)


def numeric_memo(point: Point) -> dict[sympy.Basic, mpmath.mpc]:
    """The point's values as mpmath numbers at the current precision, to seed ``_numeric``:
    expressions are then evaluated at the point without building their exact value first
    (``_numeric`` raises ZeroDivisionError where an expression is undefined, and one of
    _NOT_NUMERIC for a head mpmath is not given here)."""
    return {key: _numeric(sympy.sympify(value), {}) for key, value in point.items()}


def numeric_tree(e: sympy.Basic, memo: dict[sympy.Basic, mpmath.mpc]) -> mpmath.mpc:
    """``expr``'s value in mpmath at the current precision, the point's values in ``memo``
    (raises like ``numeric_memo``)."""
    return _numeric(e, memo)


def _numeric(e: sympy.Basic, memo: dict[sympy.Basic, mpmath.mpc]) -> mpmath.mpc:
    if e in memo:
        return memo[e]
    if e.is_Rational:
        found = mpmath.mpf(int(e.p)) / int(e.q)
    elif e.is_Float:
        found = mpmath.mpf(e)
    elif e in MPMATH_CONSTANTS:
        found = +MPMATH_CONSTANTS[e]
    elif e.is_Add:
        found = mpmath.fsum(_numeric(a, memo) for a in e.args)
    elif e.is_Mul:
        found = mpmath.fprod(_numeric(a, memo) for a in e.args)
    elif e.is_Pow:
        found = mpmath.power(_numeric(e.base, memo), _numeric(e.exp, memo))
    else:
        head = MPMATH_HEADS[type(e)]  # KeyError: not handled here
        found = head(*(_numeric(a, memo) for a in e.args))
    memo[e] = found
    return found


# ---------------------------------------------------------------------------- wide points

# The sampling fallback of the equality decision draws from the whole declared domain, not
# from a box: every unbounded parameter or coordinate gets magnitudes spread log-uniformly over
# WIDE_DECADES decades each side of 1 (mixed with plain values up to 10), so a claim that is
# wrong only for large or small values meets such values. See DEVELOPERS.md §5.
WIDE_DECADES = 12
WIDE_ATTEMPTS_PER_POINT = 60


def wide_points(spacetime: Spacetime, count: int, rng: random.Random) -> list[Point]:
    """Up to ``count`` exact points of the domain drawn from ``rng`` over many decades
    (``iter_wide_points``)."""
    return list(itertools.islice(iter_wide_points(spacetime, count, rng), count))


def iter_wide_points(spacetime: Spacetime, count: int, rng: random.Random
                     ) -> Iterator[Point]:
    """Exact points of the domain drawn from ``rng`` over many decades, one at a time (a
    caller that finds a witness early stops drawing), at most ``count`` of them.

    Unlike ``sample_points`` these are not required to be regular points of the metric (a
    degenerate point is met with probability zero, and a side that is undefined there is
    skipped by the caller); the domain's inequalities are required, exactly where rational."""
    plan = domain_plan(spacetime)
    found = 0
    for _ in range(count * WIDE_ATTEMPTS_PER_POINT):
        if found >= count:
            return
        point = _wide_point(spacetime, plan, rng)
        if point is None or not _holds_everywhere(plan.relations, point, plan.angles):
            continue
        for f in spacetime.functions:
            point.update(_wide_function_values(f, rng))
        found += 1
        yield point


def wide_rational(rng: random.Random, sign: str = "any") -> sympy.Rational:
    """A rational whose magnitude is log-uniform over ±WIDE_DECADES decades (three draws in
    four) or uniform in (0, 10) (one in four), with seven significant digits."""
    mantissa = sympy.Rational(rng.randint(10**6, 10**7 - 1), 10**6)
    if rng.random() < 0.25:
        value = mantissa
    else:
        value = mantissa * sympy.Rational(10) ** rng.randint(-WIDE_DECADES, WIDE_DECADES - 1)
    if sign in ("nonnegative", "nonpositive") and rng.random() < 0.02:
        return sympy.Integer(0)
    if sign in ("negative", "nonpositive") or (sign == "any" and rng.random() < 0.5):
        return -value
    return value


def _wide_parameter(symbol: sympy.Symbol, rng: random.Random) -> sympy.Rational:
    if symbol.is_integer:
        magnitude = sympy.Integer(int(10 ** rng.uniform(0, 6)))
        if symbol.is_positive or symbol.is_nonnegative:
            return magnitude
        return -magnitude if symbol.is_negative or rng.random() < 0.5 else magnitude
    return wide_rational(rng, _symbol_sign(symbol))


def _symbol_sign(symbol: sympy.Basic) -> str:
    for sign in ("positive", "negative", "nonnegative", "nonpositive"):
        if getattr(symbol, f"is_{sign}"):
            return sign
    return "any"


def _wide_point(spacetime: Spacetime, plan: DomainPlan, rng: random.Random) -> Point | None:
    point: Point = {p: _wide_parameter(p, rng) for p in spacetime.parameters}
    if not _holds_everywhere(plan.parameter_relations, point, ()):
        return None
    for x in spacetime.coordinates:
        if x in plan.angles:
            q = wide_rational(rng, "positive" if rng.random() < 0.9 else "any")
            point[sympy.sin(x)] = 2 * q / (1 + q**2)
            point[sympy.cos(x)] = (1 - q**2) / (1 + q**2)
            point[x] = 2 * sympy.atan(q)
            continue
        bounded = _wide_between(plan.bounds[x], point, rng)
        point[x] = bounded if bounded is not None else _wide_parameter(x, rng)
    return point


def _wide_between(bounds: tuple[tuple[str, sympy.Expr], ...], point: Point,
                  rng: random.Random) -> sympy.Rational | None:
    """A value inside the direct bounds of a coordinate: near either end or anywhere between
    for an interval, at any distance above a lower or below an upper bound."""
    low, high = direct_bounds(bounds, point)
    if low is None and high is None:
        return None
    if low is not None and high is not None:
        if high <= low:
            return low
        fraction = (wide_rational(rng, "positive") % 1) or sympy.Rational(1, 2)
        if rng.random() < 0.5:  # close to an end, at a log-uniform relative distance
            fraction = sympy.Rational(10) ** -rng.randint(1, WIDE_DECADES) * fraction
            if rng.random() < 0.5:
                fraction = 1 - fraction
        return low + (high - low) * fraction
    step = wide_rational(rng, "positive")
    return low + step if low is not None else high - step


def _wide_function_values(f: sympy.Expr, rng: random.Random) -> Point:
    values: Point = {f: wide_rational(rng, _sign_of(f))}
    for order in range(1, FUNCTION_DERIVATIVE_ORDER + 1):
        for combo in itertools.combinations_with_replacement(f.args, order):
            values[sympy.Derivative(f, *combo)] = wide_rational(rng)
    return values
