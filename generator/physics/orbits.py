"""Photon sphere, innermost stable circular orbit and ergosurface.

Static spherically symmetric entries written as −f(r) dt² + … + r² dΩ² (areal radius r, no
cross terms with t): circular null orbits sit where d(f/r²)/dr = 0, i.e. 2f − r f' = 0, and the
marginally stable timelike circular orbits where r f f'' − 2 r f'² + 3 f f' = 0 (from the
effective potential f (1 + L²/r²); common practice). The reported orbit is the outermost real
root outside every horizon, at the first sample parameters; a root without a closed form is
refused with its polynomial rather than shown approximately.

The ergosurface of a stationary rotating entry is where the stationary Killing vector turns
null, g_tt = 0, outside the event horizon; for a static entry it coincides with the horizon.
"""

from __future__ import annotations

from collections.abc import Sequence

import mpmath
import sympy

from generator.geometry.sampling import Point, numeric_value
from generator.model import Horizon, Spacetime
from generator.physics.horizons import closed_form_roots, cyclic_coordinates, polar_range

DIGITS = 30


def static_spherical_f(spacetime: Spacetime) -> tuple[sympy.Expr, sympy.Symbol] | str:
    """f(r) with g_tt = −f, or why the entry is not of that form."""
    g = spacetime.metric
    n = spacetime.dimension
    if n != 4 or not spacetime.lorentzian:
        return "defined here for four-dimensional Lorentzian entries"
    cyclic = cyclic_coordinates(spacetime)
    if not cyclic or cyclic[0] != 0:
        return "the first coordinate is not a Killing time coordinate"
    if any(g[0, b] != 0 for b in range(1, n)):
        return "the metric is not static in this chart (g_t· cross terms)"
    r = spacetime.coordinates[1]
    theta, phi = spacetime.coordinates[2], spacetime.coordinates[3]
    if polar_range(spacetime, theta) is None:
        return "not written with a polar angle"
    if sympy.expand(g[2, 2] - r**2) != 0 or \
            sympy.expand(g[3, 3] - r**2 * sympy.sin(theta) ** 2) != 0 or phi not in [
                spacetime.coordinates[i] for i in cyclic]:
        return "not written with the areal radius r (g_θθ = r², g_φφ = r² sin²θ)"
    f = sympy.cancel(-g[0, 0])
    if f.free_symbols & (set(spacetime.coordinates) - {r}):
        return "g_tt depends on more than r"
    if not f.has(r):
        return "g_tt is constant: no circular orbits are singled out"
    return f, r


def orbit_radius(condition: sympy.Expr, r: sympy.Symbol, outside: float,
                 params: dict, what: str) -> tuple[sympy.Expr | None, str]:
    numerator = sympy.factor(sympy.numer(sympy.together(condition)))
    best: tuple[mpmath.mpf, sympy.Expr | None, sympy.Expr] | None = None
    for factor in sympy.Mul.make_args(numerator):
        base = factor.base if factor.is_Pow else factor
        if not base.has(r) or not sympy.Poly(base, r).degree() >= 1:
            continue
        coeffs = sympy.Poly(base.xreplace(params), r).all_coeffs()
        with mpmath.workdps(DIGITS):
            roots = mpmath.polyroots([mpmath.mpf(sympy.Rational(c).p) / sympy.Rational(c).q
                                      for c in coeffs], maxsteps=200, extraprec=60)
        for root in roots:
            if abs(mpmath.im(root)) > mpmath.mpf(10) ** (5 - DIGITS):
                continue
            value = mpmath.re(root)
            if value <= outside or (best is not None and value <= best[0]):
                continue
            closed = None
            for candidate in closed_form_roots(base, r) or []:
                number = numeric_value(candidate.xreplace(params), DIGITS)
                with mpmath.workdps(DIGITS):
                    if number is not None and abs(number - value) < mpmath.mpf(10) ** (
                            10 - DIGITS) * (1 + abs(value)):
                        closed = candidate
            best = (value, closed, base)
    if best is None:
        at = ", ".join(f"{k} = {v}" for k, v in sorted(params.items(), key=str))
        return None, (f"no {what} outside the horizons at the first sample parameters "
                      f"({at}); it may exist elsewhere in the parameter range")
    if best[1] is None:
        return None, (f"the {what} is the root r ≈ {mpmath.nstr(best[0], 10)} (at the first "
                      f"sample parameters) of {best[2]} = 0, which has no closed form here")
    return sympy.factor(best[1]), ""


def photon_sphere_and_isco(spacetime: Spacetime, horizons: Sequence[Horizon],
                           points: Sequence[Point]) -> tuple[sympy.Expr | None, str,
                                                             sympy.Expr | None, str]:
    form = static_spherical_f(spacetime)
    if isinstance(form, str):
        return None, form, None, form
    f, r = form
    params = {p: points[0][p] for p in spacetime.parameters if p in points[0]}
    outside = max([float(h.numeric_location) for h in horizons
                   if h.coordinate == str(r) and h.kind in ("event", "horizon")], default=0.0)
    fp = sympy.diff(f, r)
    photon, photon_why = orbit_radius(2 * f - r * fp, r, outside, params, "photon sphere")
    isco_condition = r * f * sympy.diff(f, r, 2) - 2 * r * fp**2 + 3 * f * fp
    isco, isco_why = orbit_radius(isco_condition, r, outside, params,
                                  "innermost stable circular orbit")
    return photon, photon_why, isco, isco_why


def outer_value(root: sympy.Expr, spacetime: Spacetime, point: Point) -> mpmath.mpf:
    """A root's value at the sample point (−∞ when it is not real there)."""
    from generator.geometry.sampling import angle_coordinates, numeric_value, substitute

    number = numeric_value(substitute(root, point, angle_coordinates(spacetime)), DIGITS)
    if number is None or abs(mpmath.im(number)) > mpmath.mpf(10) ** (5 - DIGITS):
        return mpmath.mpf("-inf")
    return mpmath.re(number)


def ergosurface(spacetime: Spacetime, horizons: Sequence[Horizon], points: Sequence[Point]
                ) -> tuple[sympy.Expr | None, str]:
    """The outer root of g_tt = 0 in r for stationary rotating entries."""
    if not spacetime.lorentzian:
        return None, "needs a Lorentzian metric"
    event = [h for h in horizons if h.kind == "event"]
    if not event:
        return None, "no event horizon found"
    n = spacetime.dimension
    coords = [str(x) for x in spacetime.coordinates]
    vector = event[0].normal_killing_vector
    if not vector:
        return None, "no Killing generator of the horizon"
    t = coords.index(vector[0][0])
    if all(spacetime.metric[t, b] == 0 for b in range(n) if b != t):
        return None, "static: the stationary limit g_tt = 0 coincides with the horizon"
    x = spacetime.coordinates[coords.index(event[0].coordinate)]
    numerator = sympy.factor(sympy.numer(sympy.together(spacetime.metric[t, t])))
    best = None
    for factor in sympy.Mul.make_args(numerator):
        base = factor.base if factor.is_Pow else factor
        if not base.has(x):
            continue
        roots = closed_form_roots(base, x)
        if roots is None:
            return None, f"g_tt = 0 has no closed-form root in {x} here"
        best = max(roots, key=lambda root: outer_value(root, spacetime, points[0]))
    if best is None:
        return None, "g_tt does not vanish"
    return sympy.factor(best), ""
