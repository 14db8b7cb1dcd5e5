"""Curvature computed by generator.geometry.curvature against published values.

Every expected value names its source. "from memory" marks a value recalled rather than
copied from the cited text; "common practice" marks a fact of the trade. Comparisons go
through generator.geometry.equality.decide_equal, whose exactness is tested in test_equality.py.
"""

from __future__ import annotations

import pytest
import sympy as sp
from _known_metrics import (
    Lam,
    M,
    Q,
    a,
    btz,
    de_sitter_static,
    flrw_flat,
    kasner,
    kerr,
    kerr_de_sitter,
    kerr_newman,
    kruskal,
    painleve_gullstrand,
    r,
    reissner_nordstrom,
    rho,
    round_sphere,
    schwarzschild,
    spacetime,
    t,
    theta,
)

from generator.errors import BudgetExceeded
from generator.geometry.curvature import (
    DegenerateMetric,
    Limits,
    compute_geometry,
    compute_geometry_with,
)
from generator.geometry.equality import decide_equal, decide_zero
from generator.model import Geometry, Spacetime


def assert_equal(claimed: sp.Expr, computed: sp.Expr, st: Spacetime) -> None:
    decision = decide_equal(claimed, computed, st)
    assert decision.equal is True, (claimed, computed, decision)


def assert_zero_tensor(values: sp.ImmutableMatrix | dict, st: Spacetime) -> None:
    items = values.values() if isinstance(values, dict) else list(values)
    for v in items:
        assert decide_zero(v, st).equal is True, v


def weyl_identity(g: Geometry) -> sp.Expr:
    """C^2 = K - 4/(n-2) Ric^2 + 2/((n-1)(n-2)) R^2 (common practice: from the Weyl
    decomposition of the Riemann tensor)."""
    n = g.dimension
    return (
        g.kretschmann
        - sp.Rational(4, n - 2) * g.ricci_squared
        + sp.Rational(2, (n - 1) * (n - 2)) * g.ricci_scalar**2
    )


# ---------------------------------------------------------------------------- static, spherical


def test_schwarzschild_kretschmann_and_vacuum() -> None:
    # C. Cherubini, D. Bini, S. Capozziello, R. Ruffini, "Second order scalar invariants of the
    # Riemann tensor: applications to black hole spacetimes", Int. J. Mod. Phys. D 11 (2002)
    # 827: K = 48 M^2 / r^6 (from memory).
    st = schwarzschild()
    g = compute_geometry(st)
    assert g.engine == "rational-function"
    assert_equal(48 * M**2 / r**6, g.kretschmann, st)
    assert g.ricci_scalar == 0
    assert_zero_tensor(g.ricci, st)
    assert_zero_tensor(g.einstein_mixed, st)
    # vacuum: the Weyl square equals the Kretschmann scalar (common practice)
    assert_equal(g.kretschmann, g.weyl_squared, st)


def test_schwarzschild_wrong_kretschmann_is_rejected() -> None:
    # Mutation check of the pipeline: a textbook value off by a factor must not pass.
    st = schwarzschild()
    g = compute_geometry(st)
    assert decide_equal(12 * M**2 / r**6, g.kretschmann, st).equal is False


def test_reissner_nordstrom_invariants() -> None:
    # Cherubini et al., Int. J. Mod. Phys. D 11 (2002) 827 (from memory):
    # K = (48 M^2 r^2 - 96 M Q^2 r + 56 Q^4) / r^8 and R_ab R^ab = 4 Q^4 / r^8; R = 0.
    st = reissner_nordstrom()
    g = compute_geometry(st)
    assert_equal((48 * M**2 * r**2 - 96 * M * Q**2 * r + 56 * Q**4) / r**8, g.kretschmann, st)
    assert_equal(4 * Q**4 / r**8, g.ricci_squared, st)
    assert g.ricci_scalar == 0
    assert_equal(weyl_identity(g), g.weyl_squared, st)


def test_reissner_nordstrom_einstein_tensor_is_maxwell() -> None:
    # Electrovacuum with A = -Q/r dt: G^t_t = G^r_r = -Q^2/r^4, G^theta_theta = G^phi_phi =
    # Q^2/r^4 in G=c=1 with this sign convention (from memory; e.g. S. Carroll, Spacetime and
    # Geometry, 2004, sec. 5.6).
    st = reissner_nordstrom()
    g = compute_geometry(st)
    expected = sp.diag(-1, -1, 1, 1) * Q**2 / r**4
    for i in range(4):
        for j in range(4):
            assert_equal(expected[i, j], g.einstein_mixed[i, j], st)


def test_de_sitter_static_chart() -> None:
    # De Sitter space is maximally symmetric with R_ab = Lambda g_ab, so R = 4 Lambda and
    # K = 2 R^2 / (n (n-1)) = 8 Lambda^2 / 3 (common practice; e.g. S. Carroll, Spacetime and
    # Geometry, 2004, ch. 8, from memory).
    st = de_sitter_static()
    g = compute_geometry(st)
    assert_equal(4 * Lam, g.ricci_scalar, st)
    assert_equal(8 * Lam**2 / 3, g.kretschmann, st)
    assert_zero_tensor(g.weyl, st)
    for i in range(4):
        for j in range(4):
            assert_equal(-Lam * st.metric[i, j], g.einstein[i, j], st)


def test_round_two_sphere_has_positive_curvature() -> None:
    # A round 2-sphere of radius rho has Ricci scalar 2/rho^2 (common practice); this fixes the
    # catalog's sign convention R_bd = R^a_bad.
    st = round_sphere()
    g = compute_geometry(st)
    assert_equal(2 / rho**2, g.ricci_scalar, st)
    assert g.weyl is None
    assert g.weyl_squared is None
    # In two dimensions R_abcd has one independent component, R_thetaphithetaphi = rho^2 sin^2
    # (common practice: K = R^2 in 2D).
    assert list(g.riemann) == [(0, 1, 0, 1)]
    assert_equal(rho**2 * sp.sin(theta) ** 2, g.riemann[(0, 1, 0, 1)], st)
    assert_equal(g.ricci_scalar**2, g.kretschmann, st)


def test_btz_is_locally_anti_de_sitter() -> None:
    # Bañados, Teitelboim, Zanelli, Phys. Rev. Lett. 69 (1992) 1849: locally AdS3 with
    # R = -6/ell^2 (from memory); three dimensions have no Weyl tensor (common practice).
    st = btz()
    g = compute_geometry(st)
    ell = st.parameters[1]
    assert_equal(-6 / ell**2, g.ricci_scalar, st)
    assert_equal(12 / ell**4, g.kretschmann, st)
    assert g.weyl is None and g.weyl_squared is None


# ---------------------------------------------------------------------------- counting


def generic_metric(n: int, diagonal: bool) -> Spacetime:
    """A metric whose components are distinct free functions of all coordinates."""
    coords = sp.symbols(f"x0:{n}", real=True)
    slots = [(i, j) for i in range(n) for j in range(i, n) if not diagonal or i == j]
    funcs = {ij: sp.Function(f"h{ij[0]}{ij[1]}")(*coords) for ij in slots}
    g = sp.Matrix(n, n, lambda i, j: funcs.get((min(i, j), max(i, j)), 0))
    return spacetime(coords, (), g, functions=tuple(funcs.values()), signature="+" * n)


def nonzero_slots(matrix: sp.ImmutableMatrix) -> set[tuple[int, int]]:
    n = matrix.shape[0]
    return {(i, j) for i in range(n) for j in range(i, n) if matrix[i, j] != 0}


@pytest.mark.parametrize(
    ("n", "diagonal", "metric_slots", "riemann_slots"),
    [
        (2, False, 3, 1),
        (3, True, 6, 6),
        pytest.param(4, True, 10, 18, marks=pytest.mark.slow),
    ],
)
def test_independent_components_of_generic_metrics(
    n: int, diagonal: bool, metric_slots: int, riemann_slots: int
) -> None:
    # A symmetric metric (and so the Ricci and Einstein tensors) has n(n+1)/2 = 10/6/3
    # independent components in 4/3/2 dimensions (common practice). R_abcd has
    # n^2(n^2-1)/12 = 20/6/1 independent components; for a diagonal metric the components with
    # four distinct indices vanish, leaving 21 - 3 = 18 of our 21 pair-symmetric slots in 4D
    # (common practice).
    st = generic_metric(n, diagonal)
    g = compute_geometry(st)
    assert len(g.riemann) == riemann_slots
    assert len(nonzero_slots(g.ricci)) == metric_slots
    assert len(nonzero_slots(g.einstein)) == (metric_slots if n > 2 else 0)


def test_two_dimensional_einstein_tensor_vanishes() -> None:
    # In two dimensions R_ab = (R/2) g_ab for every metric, so G_ab = 0 (common practice).
    u, v = sp.symbols("u v", real=True)
    e, f, h = (sp.Function(name)(u, v) for name in ("e", "f", "h"))
    st = spacetime((u, v), (), sp.Matrix([[e, f], [f, h]]), functions=(e, f, h), signature="++")
    g = compute_geometry(st)
    assert_zero_tensor(g.einstein, st)
    assert g.ricci_scalar != 0


# ---------------------------------------------------------------------------- cosmology


def test_flat_flrw_ricci_scalar() -> None:
    # Flat FLRW: R = 6 (a''/a + a'^2/a^2) (from memory; any cosmology textbook, e.g. S. Carroll,
    # Spacetime and Geometry, 2004, ch. 8).
    st = flrw_flat()
    g = compute_geometry(st)
    scale = st.functions[0]
    a1, a2 = sp.Derivative(scale, t), sp.Derivative(scale, (t, 2))
    assert_equal(6 * (a2 / scale + a1**2 / scale**2), g.ricci_scalar, st)
    # Friedmann: G^t_t = -3 (a'/a)^2 (from memory, same source).
    assert_equal(-3 * a1**2 / scale**2, g.einstein_mixed[0, 0], st)
    # conformally flat (common practice)
    assert_zero_tensor(g.weyl, st)
    assert_equal(0, g.weyl_squared, st)


def test_flrw_rejects_a_sign_error() -> None:
    st = flrw_flat()
    g = compute_geometry(st)
    scale = st.functions[0]
    a1, a2 = sp.Derivative(scale, t), sp.Derivative(scale, (t, 2))
    assert decide_equal(6 * (a2 / scale - a1**2 / scale**2), g.ricci_scalar, st).equal is False


def test_kasner_vacuum_conditions() -> None:
    # Kasner (E. Kasner, Am. J. Math. 43 (1921) 217): vacuum iff p1+p2+p3 = 1 and
    # p1^2+p2^2+p3^2 = 1 (common practice). With p3 eliminated, R_ab must vanish on the Kasner
    # circle; here we check R = ((sum p)^2 - sum p^2 ... ) structure directly:
    # R = 2 (sum p_i^2 + sum_{i<j} p_i p_j - sum p_i) / t^2 (derived from memory of the Bianchi I
    # formulas; independent check against mpmath in test_against_diffgeom.py).
    st = kasner()
    g = compute_geometry(st)
    p1, p2, p3 = st.parameters
    expected = 2 * (p1**2 + p2**2 + p3**2 + p1 * p2 + p1 * p3 + p2 * p3 - p1 - p2 - p3) / t**2
    assert_equal(expected, g.ricci_scalar, st)
    on_circle = {p1: sp.Rational(2, 3), p2: sp.Rational(2, 3), p3: sp.Rational(-1, 3)}
    assert all(decide_zero(v.subs(on_circle), st).equal for v in g.ricci)
    off_circle = {p1: sp.Rational(1, 2), p2: sp.Rational(1, 2), p3: 0}
    assert not all(decide_zero(v.subs(off_circle), st).equal for v in g.ricci)


# ---------------------------------------------------------------------------- other charts


def test_painleve_gullstrand_matches_schwarzschild() -> None:
    # The same spacetime in another chart has the same scalar invariants (common practice).
    st = painleve_gullstrand()
    g = compute_geometry(st)
    assert g.engine == "rational-function"
    assert_equal(48 * M**2 / r**6, g.kretschmann, st)
    assert_zero_tensor(g.ricci, st)


def test_kruskal_chart_with_lambert_w() -> None:
    # Kruskal–Szekeres: r = 2M (1 + W((X^2 - T^2)/e)); K = 48 M^2 / r^6 (common practice).
    st = kruskal()
    g = compute_geometry(st)
    T, X = st.coordinates[:2]
    radius = 2 * M * (1 + sp.LambertW((X**2 - T**2) / sp.E))
    assert g.engine == "rational-function"
    assert_equal(48 * M**2 / radius**6, g.kretschmann, st)
    assert_zero_tensor(g.ricci, st)


# ---------------------------------------------------------------------------- rotating (heavy)


@pytest.mark.slow
def test_kerr_kretschmann_and_vacuum() -> None:
    # Kerr Kretschmann scalar (from memory; e.g. C. Cherubini et al., Int. J. Mod. Phys. D 11
    # (2002) 827, and R. C. Henry, Astrophys. J. 535 (2000) 350):
    # K = 48 M^2 (r^6 - 15 a^2 r^4 c^2 + 15 a^4 r^2 c^4 - a^6 c^6) / (r^2 + a^2 c^2)^6.
    st = kerr()
    g = compute_geometry(st)
    c = sp.cos(theta)
    expected = (
        48
        * M**2
        * (r**6 - 15 * a**2 * r**4 * c**2 + 15 * a**4 * r**2 * c**4 - a**6 * c**6)
        / (r**2 + a**2 * c**2) ** 6
    )
    assert_equal(expected, g.kretschmann, st)
    assert g.ricci_scalar == 0
    assert_zero_tensor(g.ricci, st)
    assert_equal(g.kretschmann, g.weyl_squared, st)
    wrong = expected.subs(15, 14)
    assert decide_equal(wrong, g.kretschmann, st).equal is False


@pytest.mark.slow
def test_kerr_riemann_obeys_the_first_bianchi_identity() -> None:
    # R_a[bcd] = 0, i.e. R_0123 - R_0213 + R_0312 = 0 in our stored slots (common practice).
    # Kerr is the simplest metric here where all three components are non-zero.
    st = kerr()
    g = compute_geometry(st)
    r0123, r0213, r0312 = (g.riemann[k] for k in ((0, 1, 2, 3), (0, 2, 1, 3), (0, 3, 1, 2)))
    assert decide_zero(r0123 - r0213 + r0312, st).equal is True
    assert decide_zero(r0123 + r0213 + r0312, st).equal is False


@pytest.mark.slow
def test_kerr_newman_is_electrovacuum() -> None:
    # Kerr–Newman: R = 0 and R_ab R^ab = 4 Q^4 / (r^2 + a^2 cos^2 theta)^4 (from memory;
    # it reduces to the Reissner–Nordström value 4Q^4/r^8 at a = 0).
    st = kerr_newman()
    g = compute_geometry(st)
    assert g.ricci_scalar == 0
    assert_equal(4 * Q**4 / (r**2 + a**2 * sp.cos(theta) ** 2) ** 4, g.ricci_squared, st)
    assert_equal(weyl_identity(g), g.weyl_squared, st)


@pytest.mark.slow
def test_kerr_de_sitter_is_lambda_vacuum() -> None:
    # Carter's Kerr–de Sitter metric solves G_ab + Lambda g_ab = 0 (B. Carter, Commun. Math.
    # Phys. 10 (1968) 280; common practice), so R = 4 Lambda and Ric^2 = 4 Lambda^2.
    st = kerr_de_sitter()
    g = compute_geometry(st)
    assert_equal(4 * Lam, g.ricci_scalar, st)
    assert_equal(4 * Lam**2, g.ricci_squared, st)
    for i in range(4):
        for j in range(4):
            assert_equal(-Lam * st.metric[i, j], g.einstein[i, j], st)


# ---------------------------------------------------------------------------- engines, budget


@pytest.mark.parametrize("builder", [schwarzschild, flrw_flat, round_sphere, painleve_gullstrand])
def test_sympy_fallback_agrees_with_field_engine(builder) -> None:
    st = builder()
    fast = compute_geometry_with(st, None, "rational-function")
    slow = compute_geometry_with(st, None, "sympy")
    assert (fast.engine, slow.engine) == ("rational-function", "sympy")
    for name in ("ricci_scalar", "kretschmann", "ricci_squared"):
        assert_equal(getattr(fast, name), getattr(slow, name), st)
    assert set(fast.christoffel) == set(slow.christoffel)
    for key, value in fast.christoffel.items():
        assert_equal(value, slow.christoffel[key], st)
    assert set(fast.riemann) == set(slow.riemann)


def test_floating_point_metric_uses_sympy_engine() -> None:
    st = spacetime((t, r), (), sp.diag(-1, sp.Float("2.5") * r**2), signature="-+")
    g = compute_geometry(st)
    assert g.engine == "sympy"


def test_budget_names_the_stage() -> None:
    with pytest.raises(BudgetExceeded) as caught:
        compute_geometry(kerr(), Limits(seconds=60, max_terms=5))
    assert caught.value.stage in ("inverse metric", "Christoffel symbols", "Riemann tensor")


def test_time_budget_is_enforced() -> None:
    with pytest.raises(BudgetExceeded) as caught:
        compute_geometry(schwarzschild(), Limits(seconds=0.0))
    assert "time limit" in caught.value.limit


def test_output_is_readable_back_by_parse_expr() -> None:
    # The JSON contract: str() of every computed scalar parses back to the same value.
    from sympy.parsing.sympy_parser import parse_expr

    st = flrw_flat()
    g = compute_geometry(st)
    names = {"a": sp.Function("a", positive=True), "t": t}
    for value in (g.ricci_scalar, g.kretschmann, g.einstein_mixed[1, 1]):
        back = parse_expr(str(value), local_dict=names)
        assert_equal(back, value, st)


def test_degenerate_metric_is_reported() -> None:
    st = spacetime((t, r), (), sp.Matrix([[1, 1], [1, 1]]), signature="++")
    with pytest.raises(DegenerateMetric, match="degenerate"):
        compute_geometry(st)


def test_deterministic_display() -> None:
    first = compute_geometry(reissner_nordstrom())
    second = compute_geometry(reissner_nordstrom())
    assert str(first.kretschmann) == str(second.kretschmann)
    assert {k: str(v) for k, v in first.riemann.items()} == {
        k: str(v) for k, v in second.riemann.items()
    }


def test_display_forms_do_not_depend_on_the_hash_seed() -> None:
    # Byte-identical output across runs: Python's string hashing is randomised per process, so
    # compute in two subprocesses with different seeds and compare the printed results.
    import os
    import subprocess
    import sys
    from pathlib import Path

    script = (
        "import sys; sys.path.insert(0, 'tests')\n"
        "from _known_metrics import reissner_nordstrom\n"
        "from generator.geometry.curvature import compute_geometry\n"
        "g = compute_geometry(reissner_nordstrom())\n"
        "print(repr((g.kretschmann, g.riemann, g.christoffel, g.einstein_mixed)))\n"
    )
    root = Path(__file__).resolve().parent.parent
    outputs = []
    for seed in ("1", "2"):
        env = {**os.environ, "PYTHONHASHSEED": seed}
        done = subprocess.run(
            [sys.executable, "-c", script],
            cwd=root,
            env=env,
            capture_output=True,
            text=True,
            check=True,
        )
        outputs.append(done.stdout)
    assert outputs[0] == outputs[1]
    assert "Q**4" in outputs[0]
