"""Kinematics of an observer field u^a: expansion, shear, vorticity and acceleration.

With B_ab = ∇_b u_a + a_a u_b (the gradient projected orthogonally to u, a_a = u^b ∇_b u_a):
θ = g^{ab} B_ab, σ_ab = B_(ab) − θ h_ab/(n−1), ω_ab = B_[ab], h_ab = g_ab + u_a u_b. The squares
σ_ab σ^ab and ω_ab ω^ab carry no factor ½. Everything is computed in the metric's exact field
(the normalisation of u may add a square root as a generator).

The observer is the declared (and verified) fluid velocity when there is one; otherwise the
unit normal to the surfaces x⁰ = const when the chart is static or comoving (no g_0a cross
terms) and they are spacelike (g^{00} < 0 at every sample point): the observers at rest.
"""

from __future__ import annotations

from collections.abc import Sequence

import sympy

from generator.geometry.algebra import FieldRequest, Frac, NotInField, build_field
from generator.geometry.curvature import (
    Budget,
    FieldArithmetic,
    Limits,
    christoffel_symbols,
    inverse_matrix,
)
from generator.geometry.equality import exact_square_root
from generator.geometry.sampling import Point, angle_coordinates, numeric_value, substitute
from generator.model import Geometry, Kinematics, Spacetime

DIGITS = 30


def natural_observer(spacetime: Spacetime, geometry: Geometry, points: Sequence[Point]
                     ) -> tuple[list[sympy.Expr] | None, str]:
    """u^a = −g^{a0}/sqrt(−g^{00}) when x⁰ = const is spacelike at every sample point."""
    g00 = geometry.inverse_metric[0, 0]
    angles = angle_coordinates(spacetime)
    if any(spacetime.metric[0, a] != 0 for a in range(1, spacetime.dimension)):
        return None, (f"no declared fluid velocity, and the chart is neither static nor "
                      f"comoving ({spacetime.coordinates[0]} has cross terms in the metric)")
    for point in points:
        number = numeric_value(substitute(g00, point, angles), DIGITS)
        if number is None or not number.real < 0:
            return None, (f"no declared fluid velocity, and {spacetime.coordinates[0]} = const "
                          "is not spacelike everywhere in the domain")
    top, bottom = sympy.fraction(sympy.cancel(-g00))
    # 1/sqrt(N/D) = sqrt(N D)/|N|, with the radicand expanded so that SymPy does not split
    # off factors such as sqrt(r**2) = Abs(r) (not differentiable in the exact field).
    value = numeric_value(substitute(top, points[0], angles), DIGITS)
    sign = -1 if value is not None and value.real < 0 else 1
    radicand = sympy.expand(top * bottom)
    root = exact_square_root(radicand, spacetime)
    if root is not None:
        value = numeric_value(substitute(root, points[0], angles), DIGITS)
        root = -root if value is not None and value.real < 0 else root
    lapse = (root if root is not None else sympy.sqrt(radicand)) / (sign * top)
    u = [-geometry.inverse_metric[a, 0] * lapse if geometry.inverse_metric[a, 0] != 0
         else sympy.Integer(0) for a in range(spacetime.dimension)]
    return u, f"unit normal to {spacetime.coordinates[0]} = const (observers at rest in the chart)"


def kinematics(spacetime: Spacetime, velocity: Sequence[sympy.Expr], source: str,
               limits: Limits | None = None) -> Kinematics:
    """θ, σ², ω², a² of the unit timelike field ``velocity`` (upper index)."""
    n = spacetime.dimension
    entries = tuple(spacetime.metric[a, b] for a in range(n) for b in range(n))
    request = FieldRequest(spacetime.coordinates, spacetime.parameters, spacetime.functions,
                           (*entries, *velocity), 2)
    field, values = build_field(request)
    ar = FieldArithmetic(field)
    budget = Budget.start(limits or Limits())
    g = [values[a * n:(a + 1) * n] for a in range(n)]
    up = values[n * n:]
    ginv = inverse_matrix(ar, g, budget)
    _, gamma = christoffel_symbols(ar, g, ginv, budget)
    down = [field.sum([field.mul(g[a][b], up[b]) for b in range(n)]) for a in range(n)]
    nabla = [[field.sub(field.diff(down[a], b),
                        field.sum([field.mul(gamma[c][a][b], down[c]) for c in range(n)]))
              for b in range(n)] for a in range(n)]  # ∇_b u_a
    accel = [field.sum([field.mul(up[b], nabla[a][b]) for b in range(n)]) for a in range(n)]
    projected = [[field.add(nabla[a][b], field.mul(accel[a], down[b])) for b in range(n)]
                 for a in range(n)]
    theta = contract(field, ginv, projected)
    h = [[field.add(g[a][b], field.mul(down[a], down[b])) for b in range(n)] for a in range(n)]
    third = field.div(theta, field.const(n - 1))
    half = sympy.Rational(1, 2)
    shear = [[field.sub(field.scale(field.add(projected[a][b], projected[b][a]), half),
                        field.mul(third, h[a][b])) for b in range(n)] for a in range(n)]
    vort = [[field.scale(field.sub(projected[a][b], projected[b][a]), half) for b in range(n)]
            for a in range(n)]
    accel_squared = field.sum([field.mul(ginv[a][b], field.mul(accel[a], accel[b]))
                               for a in range(n) for b in range(n)])
    out = Kinematics(
        observer=tuple((str(x), v) for x, v in zip(spacetime.coordinates,
                                                                  velocity, strict=True)
                       if v != 0),
        source=source,
        expansion=field.display(theta),
        shear_squared=field.display(square(field, ginv, shear)),
        vorticity_squared=field.display(square(field, ginv, vort)),
        acceleration_squared=field.display(accel_squared),
    )
    return with_hubble(field, out, theta, up, n)


def contract(field, ginv: list[list[Frac]], tensor: list[list[Frac]]) -> Frac:
    n = len(ginv)
    return field.sum([field.mul(ginv[a][b], tensor[a][b]) for a in range(n) for b in range(n)
                      if not ginv[a][b].is_zero()])


def square(field, ginv: list[list[Frac]], tensor: list[list[Frac]]) -> Frac:
    """T_ab T^ab with both indices raised by g^{ab}."""
    n = len(ginv)
    raised = [[field.sum([field.mul(ginv[a][c], field.mul(ginv[b][d], tensor[c][d]))
                          for c in range(n) for d in range(n)
                          if not tensor[c][d].is_zero() and not ginv[a][c].is_zero()
                          and not ginv[b][d].is_zero()])
               for b in range(n)] for a in range(n)]
    return field.sum([field.mul(tensor[a][b], raised[a][b]) for a in range(n) for b in range(n)
                      if not tensor[a][b].is_zero()])


def with_hubble(field, out: Kinematics, theta: Frac, up: list[Frac], n: int) -> Kinematics:
    """For shear- and vorticity-free expansion (a cosmology's comoving observers): the Hubble
    rate H = θ/(n−1) and the deceleration parameter q = −1 − (u^a ∂_a H)/H²."""
    from dataclasses import replace

    if theta.is_zero() or out.shear_squared != 0 or out.vorticity_squared != 0:
        return out
    hubble = field.div(theta, field.const(n - 1))
    rate = field.sum([field.mul(up[a], field.diff(hubble, a)) for a in range(n)])
    q = field.sub(field.neg(field.one()), field.div(rate, field.mul(hubble, hubble)))
    return replace(out, hubble_rate=field.display(hubble), deceleration=field.display(q))


def observer_kinematics(spacetime: Spacetime, geometry: Geometry, points: Sequence[Point],
                        declared: Sequence[sympy.Expr] | None
                        ) -> tuple[Kinematics | None, str]:
    if not spacetime.lorentzian:
        return None, "observers need a Lorentzian metric"
    if declared is not None:
        velocity, source = list(declared), "the declared fluid velocity (verified unit timelike)"
    else:
        velocity, source = natural_observer(spacetime, geometry, points)
        if velocity is None:
            return None, source
    try:
        return kinematics(spacetime, velocity, source), ""
    except (NotInField, ZeroDivisionError) as exc:
        return None, f"outside the exact field ({exc})"
