"""Komar mass and angular momentum over a sphere at spatial infinity.

K(ξ) = ∮ √(−g) (∇^t ξ^r − ∇^r ξ^t) d^{n−2}θ over a sphere t, r = const (orientation: outward
r), with ∇_a ξ_b = ∂_[a ξ_b] for a Killing vector ξ (here the coordinate vectors of cyclic
coordinates). Normalisation, stated on the page and in DEVELOPERS.md (common practice, from
memory — e.g. the D-dimensional convention of Myers & Perry 1986):

    M = −(n − 2) / (16 π (n − 3)) · K(∂_t),    J = K(∂_φ) / (16 π)

so that in four dimensions M = −K(∂_t)/8π and the Schwarzschild–Tangherlini metric
1 − μ/r^{n−3} has M = (n − 2) Ω_{n−2} μ / (16 π) (5D: M = 3πμ/8). Only the leading term as
r → ∞ is integrated (exact: the leading coefficients of the rational integrand); an integrand
growing with r (e.g. with Λ ≠ 0) makes the charge null with that reason.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import flint
import sympy

from generator.geometry.algebra import FieldRequest, Frac, RationalField, build_field
from generator.geometry.curvature import Budget, FieldArithmetic, Limits, inverse_matrix
from generator.geometry.sampling import Point, inside_domain
from generator.model import Spacetime
from generator.physics.horizons import (
    AZIMUTHS,
    angle_range,
    cyclic_coordinates,
    density_root,
    field_det,
    integrate_separated,
    killing_coordinates,
    positive_cosines,
)
from generator.physics.rootfield import coefficient


@dataclass(frozen=True)
class Sphere:
    """What every Komar integral of an entry shares: the field, g, g⁻¹, −det g, the time and
    radial indices, the rotations and the ranges of the sphere's angles."""

    field: RationalField
    g: list
    ginv: list
    minus_det: Frac
    time: int
    r_index: int
    rotations: list[int]
    ranges: list


def komar_sphere(spacetime: Spacetime, points: Sequence[Point]) -> Sphere | str:
    """The sphere t, r = const at large r, or why there is none."""
    n = spacetime.dimension
    if not spacetime.lorentzian or n < 4:
        return "defined here for Lorentzian entries of four or more dimensions"
    time, rotations = killing_coordinates(spacetime, points)
    if time is None:
        return "no stationary Killing coordinate"
    cyclic = set(cyclic_coordinates(spacetime))
    radial = [i for i in range(n) if i not in cyclic
              and angle_range(spacetime, spacetime.coordinates[i]) is None]
    if len(radial) != 1:
        return "the chart has no single radial coordinate with spheres of angles around it"
    r_index = radial[0]
    r = spacetime.coordinates[r_index]
    far = dict(points[0])
    far[r] = sympy.Integer(10) ** 6
    if not inside_domain(spacetime, far):
        return f"the domain does not reach {r} → ∞"
    angles = [i for i in range(n) if i not in (time, r_index)]
    ranges = []
    for i in angles:
        y = spacetime.coordinates[i]
        bounds = angle_range(spacetime, y)
        if bounds is None and str(y) not in AZIMUTHS:
            return f"{y} is neither a polar angle nor an azimuth: no sphere around {r}"
        ranges.append((y, *(bounds or (sympy.Integer(0), 2 * sympy.pi))))
    entries = tuple(spacetime.metric[a, b] for a in range(n) for b in range(n))
    field, values = build_field(FieldRequest(spacetime.coordinates, spacetime.parameters,
                                             spacetime.functions, entries, 1))
    g = [values[a * n:(a + 1) * n] for a in range(n)]
    ginv = inverse_matrix(FieldArithmetic(field), g, Budget.start(Limits()))
    minus_det = field.neg(field_det(FieldArithmetic(field), g))
    return Sphere(field, g, ginv, minus_det, time, r_index, rotations, ranges)


def komar_charges(spacetime: Spacetime, points: Sequence[Point]
                  ) -> tuple[sympy.Expr | None, str, sympy.Expr | None, str]:
    """(mass, why not, angular momentum, why not)."""
    sphere = komar_sphere(spacetime, points)
    if isinstance(sphere, str):
        return None, sphere, None, sphere
    n = spacetime.dimension
    scale = sympy.Rational(n - 2, n - 3)
    mass, mass_why = sphere_charge(sphere, sphere.time, spacetime)
    if mass is not None:
        mass = sympy.factor(-scale * mass / (16 * sympy.pi))
    rotating = rotating_planes(sphere)
    if len(sphere.rotations) == 0:
        return mass, mass_why, None, "no axial Killing coordinate"
    if len(rotating) > 1:
        names = ", ".join(f"J_{spacetime.coordinates[j]}" for j in rotating)
        return mass, mass_why, None, (f"{len(rotating)} rotation planes: one Komar angular "
                                      f"momentum each ({names}, under komar_angular_momenta)")
    axis = rotating[0] if rotating else sphere.rotations[0]
    spin, spin_why = sphere_charge(sphere, axis, spacetime)
    if spin is not None:
        spin = sympy.factor(spin / (16 * sympy.pi))
    return mass, mass_why, spin, spin_why


def rotating_planes(sphere: Sphere) -> list[int]:
    """The axial Killing coordinates coupled to t (g_tφ ≠ 0)."""
    return [j for j in sphere.rotations if not sphere.g[sphere.time][j].is_zero()]


def komar_angular_momenta(spacetime: Spacetime, points: Sequence[Point]
                          ) -> tuple[tuple[str, sympy.Expr], ...]:
    """J_i = K(∂_{φ_i})/16π for each rotation plane where there are several (Myers–Perry's
    φ and ψ); empty with one plane or none, or where a charge is not found."""
    sphere = komar_sphere(spacetime, points)
    if isinstance(sphere, str):
        return ()
    rotating = rotating_planes(sphere)
    if len(rotating) < 2:
        return ()
    found = []
    for j in rotating:
        spin, _ = sphere_charge(sphere, j, spacetime)
        if spin is None:
            return ()
        found.append((str(spacetime.coordinates[j]), sympy.factor(spin / (16 * sympy.pi))))
    return tuple(found)


def sphere_charge(sphere: Sphere, killing: int, spacetime: Spacetime
                  ) -> tuple[sympy.Expr | None, str]:
    return charge(sphere.field, sphere.g, sphere.ginv, sphere.minus_det, killing,
                  sphere.r_index, sphere.time, sphere.ranges, spacetime)


def charge(field: RationalField, g: list[list[Frac]], ginv: list[list[Frac]], minus_det: Frac,
           killing: int, r_index: int, time: int, ranges: list, spacetime: Spacetime
           ) -> tuple[sympy.Expr | None, str]:
    """K(∂_killing) from the leading term of its integrand at large r."""
    n = len(g)
    xi = [g[a][killing] for a in range(n)]
    half = sympy.Rational(1, 2)
    curl = [[field.scale(field.sub(field.diff(xi[b], a), field.diff(xi[a], b)), half)
             for b in range(n)] for a in range(n)]
    upper = field.sum([field.mul(ginv[time][a], field.mul(ginv[r_index][b], curl[a][b]))
                       for a in range(n) for b in range(n) if not curl[a][b].is_zero()])
    integrand = field.scale(upper, 2)  # ∇^t ξ^r − ∇^r ξ^t
    if integrand.is_zero():
        return sympy.Integer(0), ""
    r = spacetime.coordinates[r_index]
    r_var = field.index[r]
    if not only_through(field, (integrand, minus_det), r_var, r):
        return None, (f"the integrand depends on {r} through functions or radicals, so its "
                      "leading term is not read off here")
    e_power, e_lead = leading(field, integrand, r_var)
    d_power, d_lead = leading(field, minus_det, r_var)
    if d_power % 2:
        return None, "√(−g) is not a power of r at large r"
    total = e_power + d_power // 2
    if total > 0:
        return None, "the integrand grows at large r (not asymptotically flat)"
    if total < 0:
        return sympy.Integer(0), ""
    angles = [y for y, _, _ in ranges]
    root = density_root(field.display_factors(d_lead), spacetime, angles)
    if root is None:
        return None, "√(−g) has no exact leading term"
    value = positive_cosines(root, ranges) * field.display(e_lead)
    for y, low, high in reversed(ranges):
        value = integrate_separated(value, y, low, high)
    if value.has(sympy.Integral):
        return None, "the sphere integral is not elementary"
    return value, ""


def only_through(field: RationalField, values: tuple[Frac, ...], r_var: int,
                 r: sympy.Symbol) -> bool:
    """The values depend on r only as a polynomial variable (no radical or function of r)."""
    for value in values:
        for poly in (value.num, value.den):
            degrees = poly.degrees()
            for k, spec in enumerate(field.specs):
                if k != r_var and degrees[k] and spec.meaning.has(r):
                    return False
    return True


def leading(field: RationalField, value: Frac, var: int) -> tuple[int, Frac]:
    """(p, c) with value ~ c r^p as r → ∞ (c free of r)."""
    top_degree = value.num.degrees()[var]
    bottom_degree = value.den.degrees()[var]
    top = coefficient(value.num, var, top_degree, field.ctx)
    bottom = coefficient(value.den, var, bottom_degree, field.ctx)
    return top_degree - bottom_degree, field.normal(top, bottom * flint.fmpq(1))
