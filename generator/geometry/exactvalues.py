"""Exact values at sample points, signs of exact numbers, and readable component names.

The classification stage decides inequalities (energy conditions, which eigenvector is
timelike) by evaluating at the exact rational sample points of ``sampling``. A sign is only
reported when it is certain: rationals directly; algebraic numbers after their minimal
polynomial rules out zero; anything else only when a 60-digit evaluation is far from zero.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence

import sympy
from sympy.core.function import AppliedUndef
from sympy.polys.polyerrors import NotAlgebraic

from generator.geometry.equality import decide_zero, zeros_at_once
from generator.geometry.sampling import angle_coordinates, substitute
from generator.model import Decision, Spacetime

Point = Mapping[sympy.Basic, sympy.Expr]

DIGITS = 60
ZERO_TOLERANCE = sympy.Float("1e-45", DIGITS)
CANCEL_LIMIT = 400  # operations; larger expressions go straight to decide_zero


def value_at(expr: sympy.Expr, point: Point, spacetime: Spacetime) -> sympy.Expr | None:
    """The exact value of ``expr`` at ``point``, or None if it is not a finite number there."""
    value = substitute(sympy.sympify(expr), dict(point), angle_coordinates(spacetime))
    if value.has(sympy.Derivative):
        value = value.doit()
        value = substitute(value, dict(point), angle_coordinates(spacetime))
    if not value.is_number or value.has(sympy.zoo, sympy.oo, sympy.nan, -sympy.oo):
        return None
    return value


def exact_sign(value: sympy.Expr) -> int | None:
    """-1, 0 or +1 for a constant expression, None when it cannot be decided with certainty.

    A 60-digit evaluation far from zero fixes the sign; a zero is only accepted when the
    minimal polynomial proves it (algebraic numbers).
    """
    if value.is_Rational:
        return int(sympy.sign(value))
    numeric = value.evalf(DIGITS)
    if not numeric.is_number or numeric.is_real is False:
        return None
    if numeric.is_real and abs(numeric) > ZERO_TOLERANCE:
        return 1 if numeric > 0 else -1
    try:
        minimal = sympy.minimal_polynomial(value, sympy.Dummy("x"), polys=True)
    except (NotAlgebraic, NotImplementedError, ValueError, TypeError, sympy.PolynomialError):
        return None
    return 0 if minimal.degree() == 1 and minimal.TC() == 0 else None


def sign_at(expr: sympy.Expr, point: Point, spacetime: Spacetime) -> int | None:
    """The certain sign of ``expr`` at ``point`` (None if undefined there or undecidable)."""
    value = value_at(expr, point, spacetime)
    return None if value is None else exact_sign(value)


def describe_point(point: Point) -> dict[str, str]:
    """A witness point as plain strings: coordinates and parameters, then the values the free
    functions and their derivatives take there (a = 3/2, a′ = 5, a″ = −2), which are what a
    counter-example of a free-function entry is about (its coordinates alone say nothing)."""
    plain = {str(k): str(v) for k, v in sorted(point.items(), key=lambda kv: str(kv[0]))
             if isinstance(k, sympy.Symbol)}
    functions = sorted(((function_value_name(k), str(v)) for k, v in point.items()
                        if not isinstance(k, sympy.Symbol) and function_value_name(k)),
                       key=lambda kv: (kv[0].rstrip("′″‴"), len(kv[0]), kv[0]))
    return {**plain, **dict(functions)}


def function_value_name(key: sympy.Basic) -> str:
    """``a`` for a(t), ``a′``/``a″`` for its derivatives in one variable, ``∂_r∂_t m`` for
    mixed ones; empty for anything else."""
    if isinstance(key, AppliedUndef):
        return key.func.__name__
    if isinstance(key, sympy.Derivative) and isinstance(key.expr, AppliedUndef):
        name = key.expr.func.__name__
        counts = key.variable_count
        if len(key.expr.args) == 1 and len(counts) == 1 and counts[0][1] <= 3:
            return name + "′″‴"[int(counts[0][1]) - 1]
        return "".join(f"∂_{x}" * int(n) for x, n in counts) + " " + name
    return ""


def point_text(point: Point) -> str:
    return ", ".join(f"{k} = {v}" for k, v in describe_point(point).items())


def index_label(names: Sequence[str], indices: Sequence[int]) -> str:
    """``tt`` for one-letter coordinate names, ``(r,theta)`` otherwise."""
    chosen = [names[i] for i in indices]
    if len(chosen) == 1:
        return chosen[0]
    if all(len(c) == 1 for c in chosen):
        return "".join(chosen)
    return "(" + ",".join(chosen) + ")"


def coordinate_names(spacetime: Spacetime) -> tuple[str, ...]:
    return tuple(str(x) for x in spacetime.coordinates)


def vanishes(expr: sympy.Expr, spacetime: Spacetime) -> Decision:
    """``equality.decide_zero`` after a cheap exact shortcut.

    A literal zero, or one that polynomial cancellation reaches (an exact operation on
    rational functions), is zero; everything else goes to the project's zero test, which
    confirms at sample points. A non-zero result of cancellation is never taken as proof.
    """
    expr = sympy.sympify(expr)
    if expr == 0:
        return Decision(True, "exact", "identically zero")
    if sympy.count_ops(expr, visual=False) <= CANCEL_LIMIT and not _has_radicals(expr):
        try:
            if sympy.cancel(expr) == 0:
                return Decision(True, "exact", "cancels to zero")
        except (sympy.PolynomialError, TypeError, ValueError):
            pass
    return decide_zero(expr, spacetime)


def vanish_each(exprs: Sequence[sympy.Expr], spacetime: Spacetime) -> list[Decision]:
    """``vanishes`` for each of several expressions that share their generators (a tensor's
    components): the zeros are first sought in one field built for all of them, which is
    most of the cost of one decision; the rest are decided one by one (``decide_zero``, or
    ``vanishes`` with SymPy's cancel where no field holds them all)."""
    exprs = [sympy.sympify(e) for e in exprs]
    asked = [e for e in exprs if e != 0]
    shown = zeros_at_once(asked, spacetime) if asked else []
    proved = iter(shown if shown is not None else [False] * len(asked))
    out = []
    for expr in exprs:
        if expr == 0:
            out.append(Decision(True, "exact", "identically zero"))
        elif next(proved):
            out.append(Decision(True, "exact", "normal form is zero"))
        elif shown is None:
            out.append(vanishes(expr, spacetime))
        else:
            out.append(decide_zero(expr, spacetime))
    return out


def _has_radicals(expr: sympy.Expr) -> bool:
    """Roots make SymPy's cancel slow and rarely reach zero; the field handles them."""
    return any(p.exp.is_Rational and not p.exp.is_Integer for p in expr.atoms(sympy.Pow))
