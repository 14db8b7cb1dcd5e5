"""Photon sphere, innermost stable circular orbit and ergosurface.

Static spherically symmetric entries written as −f(r) dt² + … + r² dΩ² (areal radius r, no
cross terms with t): circular null orbits sit where d(f/r²)/dr = 0, i.e. 2f − r f' = 0, and the
marginally stable timelike circular orbits where r f f'' − 2 r f'² + 3 f f' = 0 (from the
effective potential f (1 + L²/r²); common practice). The reported orbit is the outermost real
root in the static region (f > 0 between the event and any cosmological horizon) at the first
sample parameters — the innermost one for the ISCO, since with Λ > 0 an outermost stable orbit
lies further out; a root without a closed form stays exact as the generator h_root of its
irreducible polynomial (``OrbitRoot``), never shown only approximately.

The ergosurface of a stationary rotating entry is where the stationary Killing vector turns
null, g_tt = 0, outside the event horizon; for a static entry it coincides with the horizon.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field

import mpmath
import sympy

from generator.geometry.sampling import Point, numeric_value
from generator.model import Horizon, Spacetime
from generator.physics.horizons import (
    H,
    closed_form_roots,
    cyclic_coordinates,
    factors_in,
    polar_range,
)

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


@dataclass(frozen=True)
class OrbitRoot:
    """An orbit radius with no closed form, kept exact: the root h_root of ``polynomial`` (in
    h_root, irreducible over the parameters' field), ≈ ``numeric`` at the first sample
    parameters."""

    coordinate: str
    polynomial: sympy.Expr
    numeric: str


def orbit_radius(condition: sympy.Expr, r: sympy.Symbol, f: sympy.Expr,
                 window: tuple[float, float], params: dict, what: str, innermost: bool
                 ) -> tuple[sympy.Expr | None, str, OrbitRoot | None]:
    """The root of ``condition`` (a rational function of r) in the static region between
    the horizons (``window``, where f > 0), at the first sample parameters: the innermost
    one for the ISCO (with Λ > 0 an outermost stable orbit lies further out), else the
    outermost. Exact: a closed form by radicals where its factor has one, else the
    generator h_root of its irreducible factor."""
    numerator = sympy.factor(sympy.numer(sympy.together(condition)))
    found: list[tuple[mpmath.mpf, sympy.Expr]] = []
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
                if window[0] < value < window[1] and static_at(f, r, value, params):
                    found.append((value, base))
    if not found:
        at = ", ".join(f"{k} = {v}" for k, v in sorted(params.items(), key=str))
        return None, (f"no {what} outside the horizons at the first sample parameters "
                      f"({at}); it may exist elsewhere in the parameter range"), None
    value, base = min(found, key=lambda item: item[0]) if innermost else max(
        found, key=lambda item: item[0])
    with mpmath.workdps(DIGITS):
        for candidate in closed_form_roots(base, r) or []:
            number = numeric_value(candidate.xreplace(params), DIGITS)
            if number is not None and abs(number - value) < mpmath.mpf(10) ** (
                    10 - DIGITS) * (1 + abs(value)):
                return sympy.factor(candidate), "", None
        shown = mpmath.nstr(value, 20)
    polynomial = sympy.expand(base.xreplace({r: H}))
    return H, "", OrbitRoot(str(r), polynomial, shown)


def static_at(f: sympy.Expr, r: sympy.Symbol, value: mpmath.mpf, params: dict) -> bool:
    """f > 0 at r = value (a static region, where circular orbits of the Killing time exist)."""
    number = numeric_value(f.xreplace(params).xreplace({r: sympy.Rational(mpmath.nstr(
        value, 25))}), DIGITS)
    return number is not None and abs(mpmath.im(number)) < 1e-20 and mpmath.re(number) > 0


def photon_sphere_and_isco(spacetime: Spacetime, horizons: Sequence[Horizon],
                           points: Sequence[Point]) -> Orbits:
    form = static_spherical_f(spacetime)
    if isinstance(form, str):
        return Orbits(None, form, None, form)
    f, r = form
    params = {p: points[0][p] for p in spacetime.parameters if p in points[0]}
    radii = [float(h.numeric_location) for h in horizons if h.coordinate == str(r)]
    inner = max([float(h.numeric_location) for h in horizons if h.coordinate == str(r)
                 and h.kind in ("event", "horizon")], default=0.0)
    outer = min([v for v, h in zip(radii, [h for h in horizons if h.coordinate == str(r)],
                                   strict=True)
                 if h.kind == "cosmological" and v > inner], default=float("inf"))
    fp = sympy.diff(f, r)
    photon, photon_why, photon_root = orbit_radius(2 * f - r * fp, r, f, (inner, outer), params,
                                                   "photon sphere", innermost=False)
    isco_condition = r * f * sympy.diff(f, r, 2) - 2 * r * fp**2 + 3 * f * fp
    isco, isco_why, isco_root = orbit_radius(isco_condition, r, f, (inner, outer), params,
                                             "innermost stable circular orbit", innermost=True)
    roots = {key: root for key, root in (("photon_sphere", photon_root), ("isco", isco_root))
             if root is not None}
    return Orbits(photon, photon_why, isco, isco_why, roots)


@dataclass(frozen=True)
class Orbits:
    photon_sphere: sympy.Expr | None
    photon_why: str
    isco: sympy.Expr | None
    isco_why: str
    roots: dict[str, OrbitRoot] = field(default_factory=dict)


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
    best = None
    for base in factors_in(spacetime.metric[t, t], x, spacetime):
        roots = closed_form_roots(base, x)
        if roots is None:
            return None, f"g_tt = 0 has no closed-form root in {x} here"
        best = max(roots, key=lambda root: outer_value(root, spacetime, points[0]))
    if best is None:
        return None, "g_tt does not vanish"
    return sympy.factor(best), ""
