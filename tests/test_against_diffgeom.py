"""The geometry engine against two references outside the project.

1. SymPy's own ``sympy.diffgeom`` (metric_to_Riemann_components, metric_to_Ricci_components).
   Its conventions, read from its source and docstrings: ``riemann[rho][sig][mu][nu]`` is
   R^rho_{sig mu nu} = d_mu G^rho_{nu sig} - d_nu G^rho_{mu sig} + G^rho_{mu lam} G^lam_{nu sig}
   - G^rho_{nu lam} G^lam_{mu sig}, which is the catalog's R^a_bcd with (a,b,c,d) =
   (rho,sig,mu,nu); and ``ricci[mu][nu]`` = sum_rho riemann[rho][mu][rho][nu], the catalog's
   R_bd = R^a_bad. So the mapping is the identity once our R_abcd is compared with
   g_ae R^e_bcd built from diffgeom's components.
2. An mpmath evaluator written here from the definitions (Christoffel symbols from numerical
   derivatives of the metric functions with ``mpmath.diff``, R^a_bcd by the catalog formula,
   full contractions for R and R_abcd R^abcd), compared at points of each metric.
"""

from __future__ import annotations

import itertools

import mpmath
import pytest
import sympy as sp
from _known_metrics import (
    M,
    Q,
    a,
    btz,
    flrw_flat,
    kasner,
    kerr,
    kruskal,
    painleve_gullstrand,
    r,
    reissner_nordstrom,
    round_sphere,
    schwarzschild,
    t,
    theta,
)
from sympy.diffgeom import (
    CoordSystem,
    Manifold,
    Patch,
    metric_to_Ricci_components,
    metric_to_Riemann_components,
)
from sympy.diffgeom import TensorProduct as TP

from generator.geometry.curvature import compute_geometry
from generator.geometry.equality import decide_equal
from generator.model import Geometry, Spacetime

# ---------------------------------------------------------------------------- sympy.diffgeom


def diffgeom_components(st: Spacetime) -> tuple[list, list]:
    """(R^a_bcd, R_bd) from sympy.diffgeom, in the entry's own symbols."""
    n = st.dimension
    patch = Patch("P", Manifold("Mfd", n))
    chart = CoordSystem("chart", patch, list(st.coordinates))
    fields, forms = chart.coord_functions(), chart.base_oneforms()
    # xreplace, not subs: subs would also rewrite the symbols inside the chart's own fields.
    to_fields = dict(zip(st.coordinates, fields, strict=True))
    to_symbols = dict(zip(fields, st.coordinates, strict=True))
    metric = sum(
        st.metric[i, j].xreplace(to_fields) * TP(forms[i], forms[j])
        for i in range(n)
        for j in range(n)
        if st.metric[i, j] != 0
    )
    riemann = metric_to_Riemann_components(metric)
    ricci = metric_to_Ricci_components(metric)

    def back(e: sp.Expr) -> sp.Expr:
        return sp.sympify(e).xreplace(to_symbols).doit()

    upper = [
        [[[back(riemann[i][j][k][m]) for m in range(n)] for k in range(n)] for j in range(n)]
        for i in range(n)
    ]
    return upper, [[back(ricci[i][j]) for j in range(n)] for i in range(n)]


def compare_with_diffgeom(st: Spacetime) -> None:
    n = st.dimension
    g = compute_geometry(st)
    upper, ricci = diffgeom_components(st)
    for a_, b, c, d in itertools.product(range(n), repeat=4):
        if not (a_ < b and c < d and (a_, b) <= (c, d)):
            continue
        lowered = sum(st.metric[a_, e] * upper[e][b][c][d] for e in range(n))
        mine = g.riemann.get((a_, b, c, d), sp.Integer(0))
        assert decide_equal(mine, lowered, st).equal is True, (a_, b, c, d)
    for b, d in itertools.product(range(n), repeat=2):
        assert decide_equal(g.ricci[b, d], ricci[b][d], st).equal is True, (b, d)


@pytest.mark.parametrize("builder", [round_sphere, btz])
def test_small_metrics_match_diffgeom(builder) -> None:
    compare_with_diffgeom(builder())


def test_free_function_metric_matches_diffgeom() -> None:
    # A 2D warped metric with a free function: -dt^2 + a(t)^2 dx^2.
    x = sp.Symbol("x", real=True)
    scale = sp.Function("a", positive=True)(t)
    st = Spacetime((t, x), (), (scale,), sp.ImmutableMatrix(sp.diag(-1, scale**2)), "-+", 1, ())
    compare_with_diffgeom(st)


@pytest.mark.slow
@pytest.mark.parametrize("builder", [schwarzschild, reissner_nordstrom])
def test_black_holes_match_diffgeom(builder) -> None:
    compare_with_diffgeom(builder())


# ---------------------------------------------------------------------------- mpmath numerics

DIGITS = 40


def numeric_curvature(metric: sp.Matrix, coords: tuple, point: list) -> tuple[mpmath.mpf, ...]:
    """(R, Kretschmann) at ``point`` from the metric functions alone, by the definitions."""
    n = len(coords)
    funcs = [[sp.lambdify(coords, metric[i, j], "mpmath") for j in range(n)] for i in range(n)]

    def partial(i: int, j: int, orders: tuple[int, ...]) -> mpmath.mpf:
        if not any(orders):
            return mpmath.mpf(funcs[i][j](*point))
        return mpmath.diff(lambda *x: funcs[i][j](*x), point, orders)

    unit = [tuple(int(k == c) for k in range(n)) for c in range(n)]
    g = mpmath.matrix([[partial(i, j, (0,) * n) for j in range(n)] for i in range(n)])
    ginv = g**-1
    dg = [[[partial(i, j, unit[c]) for j in range(n)] for i in range(n)] for c in range(n)]
    ddg = [
        [
            [
                [
                    partial(i, j, tuple(u + v for u, v in zip(unit[c], unit[d], strict=True)))
                    for j in range(n)
                ]
                for i in range(n)
            ]
            for d in range(n)
        ]
        for c in range(n)
    ]
    # Gamma^a_bc and its derivative d_e Gamma^a_bc, with d g^-1 = -g^-1 (d g) g^-1
    first = [
        [[(dg[b][a_][c] + dg[c][a_][b] - dg[a_][b][c]) / 2 for c in range(n)] for b in range(n)]
        for a_ in range(n)
    ]
    dfirst = [
        [
            [
                [(ddg[e][b][a_][c] + ddg[e][c][a_][b] - ddg[e][a_][b][c]) / 2 for c in range(n)]
                for b in range(n)
            ]
            for a_ in range(n)
        ]
        for e in range(n)
    ]
    dginv = [-(ginv * mpmath.matrix(dg[e]) * ginv) for e in range(n)]
    gamma = [
        [[sum(ginv[a_, f] * first[f][b][c] for f in range(n)) for c in range(n)] for b in range(n)]
        for a_ in range(n)
    ]
    dgamma = [
        [
            [
                [
                    sum(
                        dginv[e][a_, f] * first[f][b][c] + ginv[a_, f] * dfirst[e][f][b][c]
                        for f in range(n)
                    )
                    for c in range(n)
                ]
                for b in range(n)
            ]
            for a_ in range(n)
        ]
        for e in range(n)
    ]
    riemann = {}
    for a_, b, c, d in itertools.product(range(n), repeat=4):
        riemann[a_, b, c, d] = (
            dgamma[c][a_][d][b]
            - dgamma[d][a_][c][b]
            + sum(
                gamma[a_][c][e] * gamma[e][d][b] - gamma[a_][d][e] * gamma[e][c][b]
                for e in range(n)
            )
        )
    ricci = [[sum(riemann[a_, b, a_, d] for a_ in range(n)) for d in range(n)] for b in range(n)]
    scalar = sum(ginv[b, d] * ricci[b][d] for b in range(n) for d in range(n))
    lower = {k: sum(g[k[0], e] * riemann[(e, *k[1:])] for e in range(n)) for k in riemann}
    upper = {}
    for a_, b, c, d in itertools.product(range(n), repeat=4):
        upper[a_, b, c, d] = sum(
            ginv[b, f] * ginv[c, h] * ginv[d, m] * riemann[a_, f, h, m]
            for f in range(n)
            for h in range(n)
            for m in range(n)
            if ginv[b, f] and ginv[c, h] and ginv[d, m]
        )
    kretschmann = sum(lower[k] * upper[k] for k in lower)
    return scalar, kretschmann


def engine_value(expr: sp.Expr, values: dict) -> mpmath.mpf:
    """The engine's expression at the point, evaluated numerically (evalf with subs keeps
    track of precision; an exact substitution of large values into rational powers can take
    SymPy minutes of perfect-power tests)."""
    return mpmath.mpf(sp.N(expr, DIGITS, subs=values))


def close(x: mpmath.mpf, y: mpmath.mpf) -> bool:
    return abs(x - y) <= mpmath.mpf("1e-15") * max(1, abs(x), abs(y))


def check_numerically(st: Spacetime, g: Geometry, values: dict, metric: sp.Matrix) -> None:
    mpmath.mp.dps = DIGITS
    try:
        point = [mpmath.mpf(sp.N(values[x], DIGITS)) for x in st.coordinates]
        concrete = metric.xreplace({k: v for k, v in values.items() if k not in st.coordinates})
        scalar, kretschmann = numeric_curvature(concrete, st.coordinates, point)
        assert close(scalar, engine_value(g.ricci_scalar, values)), (scalar, g.ricci_scalar)
        assert close(kretschmann, engine_value(g.kretschmann, values)), kretschmann
        # the check itself must be able to fail: a perturbed value is told apart
        assert not close(
            kretschmann * (1 + mpmath.mpf("1e-6")), engine_value(g.kretschmann, values)
        )
    finally:
        mpmath.mp.dps = 15


NUMERIC_CASES = {
    "schwarzschild": (schwarzschild, {M: sp.Rational(3, 4), r: sp.Rational(41, 10)}),
    "reissner-nordstrom": (reissner_nordstrom, {M: 1, Q: sp.Rational(3, 5), r: sp.Rational(7, 2)}),
    "painleve-gullstrand": (painleve_gullstrand, {M: sp.Rational(1, 2), r: sp.Rational(13, 5)}),
    "btz": (btz, {M: 2, sp.Symbol("ell", positive=True): sp.Rational(3, 2), r: 4}),
}


@pytest.mark.parametrize("case", sorted(NUMERIC_CASES))
def test_invariants_match_finite_differences(case: str) -> None:
    builder, values = NUMERIC_CASES[case]
    st = builder()
    values = dict(values)
    values.update(
        {x: sp.Rational(k + 3, 7) for k, x in enumerate(st.coordinates) if x not in values}
    )
    g = compute_geometry(st)
    check_numerically(st, g, values, st.metric)


def test_kasner_matches_finite_differences() -> None:
    st = kasner()
    p1, p2, p3 = st.parameters
    values = {
        p1: sp.Rational(1, 3),
        p2: sp.Rational(-1, 5),
        p3: sp.Rational(7, 10),
        t: sp.Rational(9, 5),
        sp.Symbol("x", real=True): 1,
        sp.Symbol("y", real=True): 2,
        sp.Symbol("z", real=True): 3,
    }
    check_numerically(st, compute_geometry(st), values, st.metric)


def test_kruskal_matches_finite_differences() -> None:
    st = kruskal()
    T, X = st.coordinates[:2]
    values = {
        M: sp.Rational(1, 2),
        T: sp.Rational(1, 3),
        X: sp.Rational(6, 5),
        theta: sp.Rational(9, 10),
        st.coordinates[3]: sp.Rational(1, 2),
    }
    check_numerically(st, compute_geometry(st), values, st.metric)


def test_flrw_with_a_concrete_scale_factor_matches_finite_differences() -> None:
    # The engine works with the free function a(t); the numeric side uses a(t) = t^(2/3) + t/3
    # and the same values are substituted for a, a' and a'' in the engine's result.
    st = flrw_flat()
    scale = st.functions[0]
    concrete = t ** sp.Rational(2, 3) + t / 3
    t0 = sp.Rational(5, 4)
    values = {
        t: t0,
        sp.Symbol("x", real=True): 1,
        sp.Symbol("y", real=True): 2,
        sp.Symbol("z", real=True): 3,
    }
    for order in (2, 1):
        values[sp.Derivative(scale, (t, order)) if order > 1 else sp.Derivative(scale, t)] = (
            sp.diff(concrete, t, order).subs(t, t0)
        )
    values[scale] = concrete.subs(t, t0)
    g = compute_geometry(st)
    check_numerically(st, g, values, st.metric.xreplace({scale: concrete}))


@pytest.mark.slow
def test_kerr_matches_finite_differences() -> None:
    st = kerr()
    values = {
        M: 1,
        a: sp.Rational(7, 10),
        r: sp.Rational(19, 5),
        theta: sp.Rational(4, 5),
        t: 0,
        st.coordinates[3]: sp.Rational(1, 3),
    }
    check_numerically(st, compute_geometry(st), values, st.metric)
