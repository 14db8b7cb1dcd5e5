"""The range of a horizon cross-section's coordinates that are neither polar angles nor
azimuths: fixed by the metric where the coordinate runs between two axes, else none.

The C-metric's x plays the role of cos θ: the metric fixes its range, between the two roots
of its structure function G(x) next to the entry's domain, where g^{xx} = G vanishes and so
does g_φφ (the two half-axes). Such a coordinate has a compact range and the cross-section
closes there. A coordinate whose g^{xx} has no root bounding the domain on both sides (the
flat direction z of a black string, the plane x, y of a planar black hole) has no range the
metric fixes: the area is then only defined per unit coordinate range of it.

Each end is a closed form where the factor is linear or quadratic, else a new symbol (x_1 for
the lower end, x_2 for the upper) standing for that root of its polynomial: the area stays
exact in it, like a horizon's h_root.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import mpmath
import sympy

from generator.geometry.sampling import Point, numeric_value
from generator.model import Spacetime

DIGITS = 30


@dataclass(frozen=True)
class RangeRoot:
    """One end of a coordinate's range with no closed form: ``symbol`` stands for the root
    of ``polynomial`` (written in ``symbol``) that is ≈ ``numeric`` at the first sample
    parameters."""

    symbol: sympy.Symbol
    coordinate: str
    polynomial: sympy.Expr
    numeric: str
    end: str  # "lower" | "upper"


@dataclass(frozen=True)
class AxisRange:
    """low < y < high between two axes (exact expressions or RangeRoot symbols)."""

    low: sympy.Expr
    high: sympy.Expr
    roots: tuple[RangeRoot, ...]
    numeric: tuple[str, str]  # both ends at the first sample parameters
    conical: tuple[str, ...] = ()  # the ends that are not regular axes with period 2π

    def describe(self, y: sympy.Symbol) -> str:
        words = (f"{y} between the zeros {self.low} and {self.high} of g^{{{y}{y}}} that "
                 "bound the entry's domain (axes, where the azimuth's norm vanishes too)")
        if self.conical:
            many = len(self.conical) > 1
            noun, verb = ("axes", "are conical (regular axes need") if many else (
                "axis", "is conical (a regular axis needs")
            words += (f"; with period 2π the {noun} {' and '.join(self.conical)} {verb} "
                      "another period): the area scales with the period chosen")
        return words


def axis_range(spacetime: Spacetime, y_index: int, azimuths: Sequence[int],
               points: Sequence[Point]) -> AxisRange | str | None:
    """The range of coordinate y fixed by the metric (between two axes), a reason when y is
    bounded by zeros of g^{yy} that are not both axes, or None when g^{yy} has no zeros
    bounding the domain on both sides (no range: the area is per unit coordinate range)."""
    y = spacetime.coordinates[y_index]
    n = spacetime.dimension
    if any(spacetime.metric[y_index, b] != 0 for b in range(n) if b != y_index):
        return f"{y} mixes with other coordinates in the metric: its range is not read here"
    if not points or y not in points[0]:
        return None
    params = {p: points[0][p] for p in spacetime.parameters if p in points[0]}
    factors = zero_factors(spacetime.metric[y_index, y_index], y, spacetime)
    found: list[tuple[mpmath.mpf, sympy.Expr]] = []
    for factor in factors:
        found += [(value, factor) for value in real_roots(factor, y, params)]
    found.sort(key=lambda item: item[0])
    samples = [mpmath.mpf(sympy.Rational(point[y]).p) / sympy.Rational(point[y]).q
               for point in points if y in point and point[y].is_Rational]
    if not samples:
        return None
    below = [item for item in found if all(item[0] < s for s in samples)]
    above = [item for item in found if all(item[0] > s for s in samples)]
    if len(below) + len(above) < len(found):
        return f"the zeros of g^{{{y}{y}}} in {y} do not all lie outside the sampled domain"
    if not below or not above:
        return None
    (low_value, low_factor), (high_value, high_factor) = below[-1], above[0]
    for factor in (low_factor, high_factor):
        if not any(divides(factor, spacetime.metric[j, j], y) for j in azimuths):
            return (f"{y} is bounded by zeros of g^{{{y}{y}}} where no azimuth's norm "
                    "vanishes (not an axis): its range is not read here")
    taken = {str(s) for s in spacetime.symbols.values()} | {str(s) for s in
                                                            spacetime.metric.free_symbols}
    ends, roots = [], []
    for value, factor, end, label in ((low_value, low_factor, "lower", 1),
                                      (high_value, high_factor, "upper", 2)):
        closed = closed_root(factor, y, value, params)
        if closed is not None:
            ends.append(closed)
            continue
        name = f"{y}_{label}"
        while name in taken:
            name += "'"
        symbol = sympy.Symbol(name, real=True)
        roots.append(RangeRoot(symbol, str(y), sympy.expand(factor.xreplace({y: symbol})),
                               mpmath.nstr(value, 20), end))
        ends.append(symbol)
    conical = tuple(f"{y} = {end}" for end, value, factor in zip(
        ends, (low_value, high_value), (low_factor, high_factor), strict=True)
        if not regular_axis(spacetime, y_index, azimuths, factor, value, params))
    return AxisRange(ends[0], ends[1], tuple(roots),
                     (mpmath.nstr(low_value, 20), mpmath.nstr(high_value, 20)), conical)


def regular_axis(spacetime: Spacetime, y_index: int, azimuths: Sequence[int],
                 factor: sympy.Expr, value: mpmath.mpf, params: dict) -> bool:
    """Is y = value a regular axis for an azimuth of period 2π? There
    (∂_y g_φφ)² / (4 g_φφ g_yy) → 1 (no conical angle; common practice, e.g. the C-metric's
    G'(x_i)²/4 = 1). Judged at the sample parameters; False when it cannot be evaluated."""
    y = spacetime.coordinates[y_index]
    g_yy = spacetime.metric[y_index, y_index]
    for j in azimuths:
        g_phi = spacetime.metric[j, j]
        if not divides(factor, g_phi, y):
            continue
        ratio = sympy.cancel(sympy.diff(g_phi, y) ** 2 / (4 * g_phi * g_yy))
        if ratio.free_symbols - {y, *spacetime.parameters}:
            continue
        with mpmath.workdps(DIGITS):
            at = ratio.xreplace(params).xreplace({y: sympy.Float(mpmath.nstr(value, DIGITS),
                                                                 DIGITS)})
            number = numeric_value(at, DIGITS)
        if number is None:
            return False
        return abs(number - 1) < mpmath.mpf(10) ** (10 - DIGITS)
    return False


def zero_factors(component: sympy.Expr, y: sympy.Symbol, spacetime: Spacetime
                 ) -> list[sympy.Expr]:
    """Factors of g^{yy} = 1/g_yy's numerator (g_yy's denominator) in y and the parameters
    only."""
    allowed = {y, *spacetime.parameters}
    _, bottom = sympy.fraction(sympy.together(component))
    _, factors = sympy.factor_list(bottom)
    return [f for f, _ in factors if f.has(y) and f.free_symbols <= allowed]


def divides(factor: sympy.Expr, component: sympy.Expr, y: sympy.Symbol) -> bool:
    """Does ``factor`` divide the numerator of ``component`` (as polynomials in y)?"""
    top, _ = sympy.fraction(sympy.together(component))
    if not top.has(y):
        return False
    try:
        return sympy.rem(sympy.expand(top), factor, y) == 0
    except sympy.PolynomialError:
        return False


def real_roots(factor: sympy.Expr, y: sympy.Symbol, params: dict) -> list[mpmath.mpf]:
    coeffs = sympy.Poly(factor.xreplace(params), y).all_coeffs()
    if len(coeffs) < 2:
        return []
    with mpmath.workdps(DIGITS):
        found = mpmath.polyroots([mpmath.mpf(sympy.Rational(c).p) / sympy.Rational(c).q
                                  for c in coeffs], maxsteps=200, extraprec=60)
        return sorted({mpmath.mpf(mpmath.re(r)) for r in found
                       if abs(mpmath.im(r)) < mpmath.mpf(10) ** (5 - DIGITS)})


def closed_root(factor: sympy.Expr, y: sympy.Symbol, value: mpmath.mpf, params: dict
                ) -> sympy.Expr | None:
    """The linear or quadratic factor's root that takes ``value`` at the sample parameters."""
    poly = sympy.Poly(factor, y)
    if poly.degree() > 2:
        return None
    for candidate in sympy.roots(poly, y):
        number = numeric_value(candidate.xreplace(params), DIGITS)
        if number is not None and abs(number - value) < mpmath.mpf(10) ** (10 - DIGITS) * (
                1 + abs(value)):
            return candidate
    return None


def per_unit_words(names: Sequence[str]) -> str:
    """"per unit coordinate length of z", "… area of x, y", "… volume of x, y, z"."""
    measure = {1: "length", 2: "area", 3: "volume"}.get(len(names), f"{len(names)}-volume")
    return f"per unit coordinate {measure} of {', '.join(names)}"
