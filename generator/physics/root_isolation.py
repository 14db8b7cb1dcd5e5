"""Is a closed form (written with radicals) the algebraic root h_root the tool computed?

A horizon or orbit radius without a usable closed form is kept as h_root, "the root of P(h)
that is ≈ v at the first sample parameters". A claim may still give it by radicals
(r₊ = M + √(M² − Q²), a Cardano formula, …). Two steps decide it, both exact:

1. the claim is *a* root of P: P(claim) = 0 identically in the parameters, decided in the
   exact field with the radicals as generators (``decide_equal``);
2. it is *the* root the tool means, not another one (r₋ instead of r₊): at the first sample
   parameters P becomes a polynomial with rational coefficients whose real roots are
   isolated in disjoint intervals with rational ends (SymPy's exact real-root isolation);
   the claim is evaluated there in ball arithmetic (python-flint's arb, rigorous error
   bounds). The claim's value is a real root of P (step 1 and a finite real ball), so when
   its ball provably misses every isolating interval but the computed root's, it *is* the
   computed root.

The tool's own root is identified at the first sample parameters (its numeric value), so the
branch is compared there; the verdict says so.
"""

from __future__ import annotations

import flint
import mpmath
import sympy

from generator.geometry.equality import decide_equal
from generator.geometry.sampling import entry_points
from generator.model import Spacetime
from generator.physics.rootclaims import RootDecision

BALL_BITS = 256  # working precision of the ball evaluation
ISOLATION_WIDTH = sympy.Rational(1, 10**30)  # isolating intervals refined below this width
MATCH_TOLERANCE = mpmath.mpf(10) ** -15  # the computed root's 20-digit value vs its interval


def closed_form_at_root(claimed: sympy.Expr, spacetime: Spacetime, x_index: int,
                        polynomial: sympy.Expr, h: sympy.Symbol, numeric: str
                        ) -> RootDecision:
    """Is ``claimed`` (free of the coordinate) the root of ``polynomial`` (in h) that is
    ≈ ``numeric`` at the first sample parameters?"""
    x = spacetime.coordinates[x_index]
    if claimed.has(x) or claimed.has(h):
        return RootDecision(None, "failed", "not a closed form: it holds the coordinate")
    substituted = polynomial.xreplace({h: claimed})
    found = decide_equal(substituted, sympy.Integer(0), spacetime)
    if found.equal is False:
        return RootDecision(False, "exact", "the claimed value is not a root of the horizon's "
                                            "polynomial (exact)")
    if found.equal is not True:
        return RootDecision(None, "failed", "whether the claim is a root of the polynomial "
                                            f"could not be decided ({found.detail})")
    branch = same_branch(claimed, spacetime, polynomial, h, numeric)
    if branch.equal is True and found.method != "exact":
        # P(claim) = 0 was only confirmed at sample points: the verdict is no stronger
        return RootDecision(True, found.method, f"a root of the polynomial ({found.detail}), "
                                                "and the computed root at the first sample "
                                                "parameters (exact real-root isolation)")
    return branch


def same_branch(claimed: sympy.Expr, spacetime: Spacetime, polynomial: sympy.Expr,
                h: sympy.Symbol, numeric: str) -> RootDecision:
    """Step 2: given that ``claimed`` is a root of the polynomial, is it the one ≈ numeric?"""
    point = entry_points(spacetime, 1)
    if not point:
        return RootDecision(None, "failed", "no sample point to isolate the roots at")
    values = {p: point[0][p] for p in spacetime.parameters if p in point[0]}
    if any(not v.is_Rational for v in values.values()):
        return RootDecision(None, "failed", "the sample parameters are not rational")
    try:
        intervals = isolating_intervals(polynomial.xreplace(values), h)
    except (sympy.PolynomialError, ValueError, NotImplementedError):
        return RootDecision(None, "failed", "the roots could not be isolated")
    target = interval_of(intervals, mpmath.mpf(numeric))
    if target is None:
        return RootDecision(None, "failed", "the computed root is not matched by one "
                                            "isolating interval")
    ball = ball_value(claimed, values)
    if ball is None:
        return RootDecision(None, "failed", "the claim could not be evaluated as a real "
                                            "number at the sample parameters")
    others = [k for k in range(len(intervals)) if k != target and meets(ball, intervals[k])]
    if not others:
        return RootDecision(True, "exact", "a root of the polynomial (exact), and the computed "
                                           "root at the first sample parameters (exact real-"
                                           "root isolation and ball arithmetic)")
    if meets(ball, intervals[target]):
        return RootDecision(None, "failed", "the claim's value is too close to two roots to "
                                            "tell them apart")
    return RootDecision(False, "exact", "a root of the polynomial, but another one than the "
                                        "computed root (exact real-root isolation at the "
                                        "first sample parameters)")


def isolating_intervals(polynomial: sympy.Expr, h: sympy.Symbol
                        ) -> list[tuple[sympy.Rational, sympy.Rational]]:
    """Disjoint intervals [a, b] with rational ends, one around each real root (a = b for
    a rational root)."""
    poly = sympy.Poly(polynomial, h, domain="QQ")
    return [(sympy.Rational(a), sympy.Rational(b))
            for (a, b), _ in poly.intervals(eps=ISOLATION_WIDTH)]


def interval_of(intervals: list[tuple[sympy.Rational, sympy.Rational]], value: mpmath.mpf
                ) -> int | None:
    """The index of the one interval within MATCH_TOLERANCE of ``value``; None when no
    interval or more than one is that close."""
    tolerance = MATCH_TOLERANCE * (1 + abs(value))
    with mpmath.workdps(40):
        near = [k for k, (a, b) in enumerate(intervals)
                if mpmath.mpf(a.p) / a.q - tolerance <= value <= mpmath.mpf(b.p) / b.q + tolerance]
    return near[0] if len(near) == 1 else None


def meets(ball: flint.arb, interval: tuple[sympy.Rational, sympy.Rational]) -> bool:
    """False only when the ball provably lies below or above [a, b]."""
    low, high = (flint.arb(int(end.p)) / int(end.q) for end in interval)
    return not (ball < low or ball > high)


def ball_value(expr: sympy.Expr, values: dict) -> flint.arb | None:
    """``expr`` at rational parameter values as a real arb ball, or None (a function not
    handled here, a square root of a ball that is not provably positive, a non-finite or
    non-real value)."""
    old = flint.ctx.prec
    flint.ctx.prec = BALL_BITS
    try:
        ball = _ball(expr, values)
    except (ZeroDivisionError, ValueError, TypeError, OverflowError):
        ball = None
    finally:
        flint.ctx.prec = old
    if ball is None or not ball.is_finite():
        return None
    return ball


def _ball(expr: sympy.Expr, values: dict) -> flint.arb | None:
    if expr.is_Rational:
        return flint.arb(int(expr.p)) / int(expr.q)
    if expr is sympy.pi:
        return flint.arb.pi()
    if expr.is_Symbol:
        value = values.get(expr)
        return None if value is None else flint.arb(int(value.p)) / int(value.q)
    if isinstance(expr, (sympy.Add, sympy.Mul)):
        parts = [_ball(arg, values) for arg in expr.args]
        if any(p is None for p in parts):
            return None
        total = parts[0]
        for part in parts[1:]:
            total = total + part if isinstance(expr, sympy.Add) else total * part
        return total
    if isinstance(expr, sympy.Pow):
        return _power(expr, values)
    if isinstance(expr, sympy.Abs):
        inner = _ball(expr.args[0], values)
        return None if inner is None else abs(inner)
    return None


def _power(expr: sympy.Pow, values: dict) -> flint.arb | None:
    base = _ball(expr.base, values)
    exponent = expr.exp
    if base is None or not exponent.is_Rational:
        return None
    if exponent.is_Integer:
        if exponent < 0 and base.contains(0):
            return None
        power = base ** abs(int(exponent))
        return 1 / power if exponent < 0 else power
    if not base > 0:  # a real root of a ball that is not provably positive
        return None
    root = base.root(int(exponent.q))
    power = root ** abs(int(exponent.p))
    return 1 / power if exponent.p < 0 else power
