"""Deciding whether an expression vanishes (or two expressions agree) on an entry's spacetime.

Exact first: the expression is converted into the rational-function field of ``algebra``, whose
normal form is zero exactly when the expression is. Every outcome is then confirmed
independently by substituting exact random points of the domain (Schwartz–Zippel): a zero must
vanish there too, and a non-zero normal form must show a witness point. Expressions outside the
field are decided on sample points alone (exact rational arithmetic where possible, else 30
digits with a 1e-20 tolerance), and the decision says so. Strings are never compared and
``simplify`` is never trusted to decide.
"""

from __future__ import annotations

import mpmath
import sympy
from sympy.core.function import AppliedUndef

from generator.geometry.algebra import (
    FieldRequest,
    Frac,
    NotInField,
    RationalField,
    build_field,
)
from generator.geometry.sampling import (
    Point,
    angle_coordinates,
    entry_points,
    numeric_value,
    substitute,
    through_sin_cos,
)
from generator.model import Decision, Spacetime

CONFIRM_POINTS = 3
SAMPLED_POINTS = 8
MINIMUM_SAMPLED = 5
DIGITS = 30
TOLERANCE = sympy.Float("1e-20", DIGITS)


def decide_zero(expr: sympy.Expr, spacetime: Spacetime) -> Decision:
    """Is ``expr`` identically zero on the spacetime's domain?"""
    return _decide(sympy.sympify(expr), sympy.Integer(0), spacetime)


def decide_equal(claimed: sympy.Expr, computed: sympy.Expr, spacetime: Spacetime) -> Decision:
    """Is ``claimed`` equal to ``computed`` everywhere on the domain?"""
    return _decide(sympy.sympify(claimed), sympy.sympify(computed), spacetime)


def sampled_zero(expr: sympy.Expr, spacetime: Spacetime) -> bool:
    """True when ``expr`` is decided to vanish (used by the SymPy fallback engine)."""
    return decide_zero(expr, spacetime).equal is True


def canonical(expr: sympy.Expr, spacetime: Spacetime) -> sympy.Expr:
    """Display form: reduced fraction, factored (flint, display only), functions restored.

    Deterministic: the same expression always gives the same tree. Expressions outside the
    field get SymPy's ``factor(cancel(...))``, which is deterministic as well.
    """
    return canonical_all([expr], spacetime)[0]


def canonical_all(exprs: list[sympy.Expr], spacetime: Spacetime) -> list[sympy.Expr]:
    """``canonical`` of several expressions through one field (a tensor's components share
    their generators, and building the field is the costly part)."""
    aligned = tuple(_aligned(sympy.sympify(e), spacetime) for e in exprs)
    try:
        field, values = _field_of(aligned, spacetime)
    except (NotInField, ZeroDivisionError):
        return [sympy.factor(sympy.cancel(e)) for e in aligned]
    return [field.display(v) for v in values]


def exact_square_root(expr: sympy.Expr, spacetime: Spacetime) -> sympy.Expr | None:
    """±y with y**2 == ``expr`` exactly, when ``expr`` is a perfect square in the field
    (``RationalField.square_root``); None otherwise. Used where either sign will do, such as the
    pair of eigenvalues m ± sqrt(discriminant)."""
    expr = _aligned(sympy.sympify(expr), spacetime)
    try:
        field, (value,) = _field_of((expr,), spacetime)
    except (NotInField, ZeroDivisionError):
        return None
    root = field.square_root(value)
    return None if root is None else field.display(root)


def nonzero_in_field(field: RationalField, value: Frac, spacetime: Spacetime,
                     count: int = CONFIRM_POINTS) -> bool:
    """True when ``value`` is certainly not identically zero: it is non-zero at one of the
    first ``count`` sample points, evaluated exactly in the field (points where a generator is
    irrational, such as a square root, are skipped). A cheap witness for a non-zero normal
    form; False means only "no witness here", never "zero"."""
    angles = angle_coordinates(spacetime)
    # Only the generators in ``value`` need a rational value: an angle θ is a generator of a
    # field closed under derivatives, yet a value written in sin θ and cos θ never holds it.
    used = [max(n, d) > 0 for n, d in zip(value.num.degrees(), value.den.degrees(), strict=True)]
    for point in entry_points(spacetime, count):
        values = [substitute(spec.meaning, point, angles) if needed else sympy.Integer(0)
                  for spec, needed in zip(field.specs, used, strict=True)]
        if all(v.is_Rational for v in values):
            found = field.value_at(value, values)
            if found is not None and found != 0:
                return True
    return False


def _field_of(
    exprs: tuple[sympy.Expr, ...], spacetime: Spacetime
) -> tuple[RationalField, list[Frac]]:
    request = FieldRequest(
        spacetime.coordinates, spacetime.parameters, spacetime.functions, exprs, 0
    )
    return build_field(request)


# ====================================================================== the decision


def _decide(left: sympy.Expr, right: sympy.Expr, spacetime: Spacetime) -> Decision:
    left, right = (_without_subs(_aligned(e, spacetime)) for e in (left, right))
    try:
        field, (a, b) = _field_of((left, right), spacetime)
        normal_zero = field.equal(a, b)
    except (NotInField, ZeroDivisionError):
        return _decide_sampled(left, right, spacetime, "outside the exact field")
    if normal_zero:
        return _confirm_zero(left, right, spacetime)
    return _find_witness(left, right, spacetime)


def _confirm_zero(left: sympy.Expr, right: sympy.Expr, spacetime: Spacetime) -> Decision:
    """The normal form says equal; a disagreeing point would mean a branch problem (a root
    or Abs taken on the wrong sheet), and then the point wins."""
    witness, usable = _first_difference(left, right, spacetime, CONFIRM_POINTS)
    if witness is not None:
        detail = "normal form is zero but a sample point disagrees (branch of a root?)"
        return Decision(False, "sampled", detail, _witness(witness, spacetime))
    return Decision(True, "exact", f"normal form is zero; confirmed at {usable} points")


def _find_witness(left: sympy.Expr, right: sympy.Expr, spacetime: Spacetime) -> Decision:
    """The normal form says different; show a point where the two sides differ. If none is
    found the normal form was not canonical here (e.g. radicals of related bases), and the
    sample points decide, saying so."""
    witness, usable = _first_difference(left, right, spacetime, SAMPLED_POINTS)
    if witness is not None:
        detail = "normal forms differ; witness point found"
        return Decision(False, "exact", detail, _witness(witness, spacetime))
    return _sampled_verdict(usable, "normal form not canonical here")


def _first_difference(left: sympy.Expr, right: sympy.Expr, spacetime: Spacetime, count: int
                      ) -> tuple[Point | None, int]:
    """The first of ``count`` sample points where the sides differ (None if there is none),
    and how many points were usable (both sides defined) before it."""
    angles = angle_coordinates(spacetime)
    left, right = through_sin_cos(left, angles), through_sin_cos(right, angles)
    usable = 0
    for point in entry_points(spacetime, count):
        differs = _differs_at(left, right, point)
        if differs:
            return point, usable
        usable += differs is not None
    return None, usable


def _aligned(expr: sympy.Expr, spacetime: Spacetime) -> sympy.Expr:
    """Use the spacetime's own symbols and functions for same-named ones in ``expr``.

    SymPy tells ``Symbol('r')`` from ``Symbol('r', real=True)`` and ``Function('a')`` from
    ``Function('a', positive=True)``; a claim read with other assumptions than the metric must
    still be compared with it, not with an unrelated variable."""
    own = {str(s): s for s in (*spacetime.coordinates, *spacetime.parameters)}
    symbols = {s: own[s.name] for s in expr.free_symbols if s.name in own and own[s.name] != s}
    if symbols:
        expr = expr.xreplace(symbols)
    heads = {f.func.__name__: f.func for f in spacetime.functions}
    foreign = {
        f
        for f in expr.atoms(AppliedUndef)
        if f.func.__name__ in heads and f.func is not heads[f.func.__name__]
    }
    if foreign:
        expr = expr.xreplace({f: heads[f.func.__name__](*f.args) for f in foreign})
    return expr


def _without_subs(expr: sympy.Expr) -> sympy.Expr:
    """Evaluate ``Subs`` objects (SymPy writes derivatives of f(g(x)) with them) so both the
    field and the sample points see plain derivatives of the free functions."""
    if not expr.has(sympy.Subs):
        return expr
    return expr.replace(lambda e: isinstance(e, sympy.Subs), lambda e: e.doit())


def _decide_sampled(
    left: sympy.Expr, right: sympy.Expr, spacetime: Spacetime, why: str
) -> Decision:
    witness, usable = _first_difference(left, right, spacetime, SAMPLED_POINTS)
    if witness is not None:
        return Decision(
            False, "sampled", f"{why}; differs at a sample point", _witness(witness, spacetime)
        )
    return _sampled_verdict(usable, why)


def _sampled_verdict(usable: int, why: str) -> Decision:
    if usable < MINIMUM_SAMPLED:
        return Decision(None, "failed", f"{why}; only {usable} usable sample points in the domain")
    return Decision(
        True,
        "sampled",
        f"{why}; equal at {usable} exact random points of the domain (tolerance 1e-20 at "
        f"{DIGITS} digits where a value was not rational)",
    )


def _differs_at(left: sympy.Expr, right: sympy.Expr, point: Point) -> bool | None:
    """True/False when the two sides differ/agree at the point, None if undefined there.
    The sides are already written through sin and cos of the angles (``through_sin_cos``)."""
    try:
        a = substitute(left, point)
        b = substitute(right, point)
    except (ZeroDivisionError, ValueError):
        return None
    if any(v.has(sympy.zoo, sympy.nan, sympy.oo, -sympy.oo) for v in (a, b)):
        return None
    if a.is_Rational and b.is_Rational:
        return a != b
    return _numerically_differ(a, b)


def _numerically_differ(a: sympy.Expr, b: sympy.Expr) -> bool | None:
    """Agreement to the tolerance decides "equal here"; anything else is decided by SymPy's
    error-controlled evalf. Plain mpmath at twice the digits is tried first: agreement to
    1e-20 with 60 digits carried cannot come from rounding, and it is far cheaper."""
    x, y = numeric_value(a, 2 * DIGITS), numeric_value(b, 2 * DIGITS)
    if x is not None and y is not None:
        with mpmath.workdps(2 * DIGITS):
            scale = max(mpmath.mpf(1), abs(x), abs(y))
            if abs(x - y) <= mpmath.mpf(float(TOLERANCE)) * scale:
                return False
    try:
        x, y = complex(a.evalf(DIGITS)), complex(b.evalf(DIGITS))
    except (TypeError, ValueError):
        return None
    scale = max(1.0, abs(x), abs(y))
    difference = (a - b).evalf(DIGITS + 20)
    try:
        return abs(complex(difference)) > float(TOLERANCE) * scale
    except (TypeError, ValueError):
        return None


def _witness(point: Point, spacetime: Spacetime) -> dict[str, str]:
    """The point as readable strings: coordinates, parameters and free-function values."""
    keys = list(spacetime.parameters) + list(spacetime.coordinates)
    keys += [
        k
        for k in point
        if isinstance(k, (sympy.Function, sympy.Derivative))
        and not isinstance(k, (sympy.sin, sympy.cos))
    ]
    return {str(k): str(point[k]) for k in keys if k in point}
