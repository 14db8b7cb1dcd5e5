"""mpmath evaluation that also counts the decimal digits lost on the way.

A value computed at p digits is only as good as the cancellations and amplifications inside
it allow: cosh(x)² − sinh(x)² at x = 40 000 is exactly 0 at a hundred digits, and so is every
expression built from it, consistently at every modest precision. Comparing two precisions
cannot see that; counting the loss can. Each sum loses log10(largest term / |sum|) digits
(all of them when a sum of non-zero terms comes out exactly 0), each function loses the
digits by which it magnifies the relative error of its argument (|x| for exp, sinh, cosh,
sin, cos, tan of x; |e·log b| for b**e; 1/|log x| for log x near 1), and the loss of an
expression is the largest loss along any of its paths plus the local one. The estimate is a
first-order one; callers keep a wide margin (``equality``).
"""

from __future__ import annotations

import math

import mpmath
import sympy

from generator.geometry.sampling import MPMATH_CONSTANTS, MPMATH_HEADS

Tracked = tuple[mpmath.mpc, float]  # value, digits lost
INFINITE_LOSS = math.inf

_MAGNIFY_BY_ARGUMENT = (sympy.exp, sympy.sinh, sympy.cosh, sympy.sin, sympy.cos, sympy.tan,
                        sympy.cot, sympy.sec, sympy.csc, sympy.tanh, sympy.coth, sympy.sech,
                        sympy.csch)


def tracked_value(expr: sympy.Basic, memo: dict[sympy.Basic, Tracked]) -> Tracked:
    """(value, digits lost) of ``expr`` at the current mpmath precision; ``memo`` holds the
    point's values (loss 0). Raises KeyError for a head mpmath is not given here, and
    ZeroDivisionError where the expression is undefined."""
    if expr in memo:
        return memo[expr]
    if expr.is_Rational:
        found: Tracked = (mpmath.mpc(mpmath.mpf(int(expr.p)) / int(expr.q)), 0.0)
    elif expr.is_Float:
        found = (mpmath.mpc(mpmath.mpf(expr)), 0.0)
    elif expr in MPMATH_CONSTANTS:
        found = (mpmath.mpc(+MPMATH_CONSTANTS[expr]), 0.0)
    elif expr.is_Add:
        found = _sum([tracked_value(a, memo) for a in expr.args])
    elif expr.is_Mul:
        parts = [tracked_value(a, memo) for a in expr.args]
        found = (mpmath.fprod(v for v, _ in parts), max(lost for _, lost in parts))
    elif expr.is_Pow:
        found = _power(tracked_value(expr.base, memo), tracked_value(expr.exp, memo),
                       expr.exp.is_Integer)
    else:
        head = MPMATH_HEADS[type(expr)]
        parts = [tracked_value(a, memo) for a in expr.args]
        value = mpmath.mpc(head(*(v for v, _ in parts)))
        found = (value, max(lost for _, lost in parts) + _magnification(type(expr), parts))
    memo[expr] = found
    return found


def _digits(x: mpmath.mpf) -> float:
    return float(mpmath.log10(x)) if x > 1 else 0.0


def _sum(parts: list[Tracked]) -> Tracked:
    total = mpmath.fsum(v for v, _ in parts)
    largest = max(abs(v) for v, _ in parts)
    lost = max(lost for _, lost in parts)
    if largest == 0:
        return total, lost
    if total == 0:
        return total, INFINITE_LOSS
    return total, lost + _digits(largest / abs(total))


def _power(base: Tracked, exponent: Tracked, integer: bool) -> Tracked:
    (b, b_lost), (e, e_lost) = base, exponent
    value = mpmath.power(b, e)
    if integer:
        return value, b_lost + _digits(abs(e))
    if b == 0:
        return value, max(b_lost, e_lost)
    return value, max(b_lost, e_lost) + _digits(abs(e * mpmath.log(b))) + _digits(abs(e))


def _magnification(head: type, parts: list[Tracked]) -> float:
    (x, _), *_ = parts
    if head in _MAGNIFY_BY_ARGUMENT:
        return _digits(abs(x))
    if head is sympy.log and x != 0:
        size = abs(mpmath.log(x))
        return _digits(1 / size) if size != 0 else INFINITE_LOSS
    return 0.0


class Program:
    """Expressions compiled once for evaluation at many points with ``tracked_value``'s loss
    count: the tree is flattened into a list of unique nodes, so a point costs mpmath
    arithmetic only, not SymPy's tree walking and hashing. Leaves are the point's keys;
    compiling raises KeyError for a head mpmath is not given here."""

    def __init__(self, exprs: list[sympy.Basic], leaves: set[sympy.Basic]) -> None:
        self.nodes: list[tuple[str, object, tuple[int, ...]]] = []
        self.index: dict[sympy.Basic, int] = {}
        self.roots = [self._add(e, leaves) for e in exprs]

    def _add(self, expr: sympy.Basic, leaves: set[sympy.Basic]) -> int:
        found = self.index.get(expr)
        if found is not None:
            return found
        if expr in leaves:
            node: tuple[str, object, tuple[int, ...]] = ("leaf", expr, ())
        elif expr.is_Rational or expr.is_Float or expr in MPMATH_CONSTANTS:
            node = ("const", expr, ())
        elif expr.is_Add or expr.is_Mul:
            node = ("add" if expr.is_Add else "mul", None,
                    tuple(self._add(a, leaves) for a in expr.args))
        elif expr.is_Pow:
            node = ("pow", bool(expr.exp.is_Integer),
                    (self._add(expr.base, leaves), self._add(expr.exp, leaves)))
        else:
            node = ("func", (MPMATH_HEADS[type(expr)], type(expr)),
                    tuple(self._add(a, leaves) for a in expr.args))
        self.nodes.append(node)
        self.index[expr] = len(self.nodes) - 1
        return self.index[expr]

    def run(self, point: dict[sympy.Basic, mpmath.mpc]) -> list[Tracked]:
        """(value, digits lost) of each expression at the current precision; ``point`` maps
        every leaf to its value. Raises ZeroDivisionError where an expression is undefined."""
        out: list[Tracked] = []
        for kind, payload, children in self.nodes:
            if kind == "leaf":
                out.append((point[payload], 0.0))
            elif kind == "const":
                out.append(tracked_value(payload, {}))
            elif kind == "add":
                out.append(_sum([out[c] for c in children]))
            elif kind == "mul":
                parts = [out[c] for c in children]
                out.append((mpmath.fprod(v for v, _ in parts), max(x for _, x in parts)))
            elif kind == "pow":
                out.append(_power(out[children[0]], out[children[1]], payload))
            else:
                head, sympy_head = payload
                parts = [out[c] for c in children]
                value = mpmath.mpc(head(*(v for v, _ in parts)))
                out.append((value, max(x for _, x in parts) + _magnification(sympy_head,
                                                                             parts)))
        return [out[r] for r in self.roots]
