"""Sample points: exact, inside the domain, respecting assumptions, deterministic."""

from __future__ import annotations

import sympy as sp
from _known_metrics import (
    Lam,
    M,
    a,
    flrw_flat,
    kerr,
    kerr_de_sitter,
    r,
    schwarzschild,
    spacetime,
    t,
    theta,
)

from generator.geometry.sampling import (
    angle_coordinates,
    inside_domain,
    linear_bound,
    regular_at,
    sample_points,
    substitute,
)


def test_points_are_exact_and_inside_the_domain() -> None:
    st = kerr()
    points = sample_points(st, 6, seed=7)
    assert len(points) == 6
    for p in points:
        assert all(p[s].is_Rational for s in (M, a, r))
        assert p[M] > 0 and p[a] > 0
        assert p[r] > 2 * p[M] + p[a]
        assert inside_domain(st, p)


def test_angles_sit_on_rational_points_of_the_unit_circle() -> None:
    st = schwarzschild()
    assert angle_coordinates(st) == (theta,)
    for p in sample_points(st, 5, seed=3):
        s, c = p[sp.sin(theta)], p[sp.cos(theta)]
        assert s.is_Rational and c.is_Rational
        assert s**2 + c**2 == 1
        # the angle itself is consistent with its sine and cosine (common practice: the
        # half-angle parametrisation of the circle)
        assert abs(sp.sin(p[theta]).evalf(30) - s) < 1e-25
        assert 0 < p[theta].evalf() < sp.pi.evalf()
        exact = substitute(sp.tan(theta) + sp.sin(3 * theta), p, (theta,))
        assert exact.is_Rational


def test_deterministic_for_a_seed_and_different_across_seeds() -> None:
    st = kerr_de_sitter()
    first = sample_points(st, 4, seed=11)
    assert first == sample_points(st, 4, seed=11)
    assert first != sample_points(st, 4, seed=12)
    for p in first:
        delta_r = (p[r] ** 2 + p[a] ** 2) * (1 - p[Lam] * p[r] ** 2 / 3) - 2 * p[M] * p[r]
        assert delta_r > 0


def test_free_functions_and_derivatives_get_independent_values() -> None:
    st = flrw_flat()
    scale = st.functions[0]
    p = sample_points(st, 1, seed=5)[0]
    values = [p[scale], p[sp.Derivative(scale, t)], p[sp.Derivative(scale, (t, 2))]]
    assert all(v.is_Rational for v in values)
    assert p[scale] > 0  # declared positive
    assert len(set(values)) == 3
    expr = sp.Derivative(scale, (t, 2)) * scale
    assert substitute(expr, p) == values[2] * values[0]


def test_parameter_assumptions_are_respected() -> None:
    n = sp.Symbol("n", integer=True, positive=True)
    q = sp.Symbol("q", negative=True)
    st = spacetime((t, r), (n, q), sp.diag(-1, 1), signature="-+")
    for p in sample_points(st, 10, seed=1):
        assert p[n].is_Integer and p[n] > 0
        assert p[q] < 0


def test_empty_domain_gives_no_points() -> None:
    st = spacetime((t, r), (), sp.diag(-1, 1), domain=(sp.Gt(r, 1), sp.Lt(r, 0)), signature="-+")
    assert sample_points(st, 3, seed=1) == []


def test_singular_points_of_the_metric_are_avoided() -> None:
    # g_rr = 1/(r - 1) blows up at r = 1 and the metric degenerates at r = 0: never sampled.
    st = spacetime(
        (t, r), (), sp.diag(-r, 1 / (r - 1)), domain=(sp.Gt(r, 0), sp.Lt(r, 2)), signature="-+"
    )
    assert not regular_at(st, {t: 0, r: sp.Integer(1)})
    assert not regular_at(st, {t: 0, r: sp.Integer(0)})
    assert regular_at(st, {t: 0, r: sp.Rational(3, 2)})
    for p in sample_points(st, 10, seed=2):
        assert p[r] not in (0, 1)


def test_a_bound_with_a_root_is_met_exactly_and_thin_parameter_ranges_are_reached() -> None:
    # Kerr's outer horizon r+ = M + sqrt(M**2 - a**2) with a**2 < M**2 (common practice): the
    # coordinate is drawn above a rational just outside the irrational bound, and the
    # parameters are drawn until a**2 < M**2 holds, before any coordinate is tried.
    st = kerr()
    outside = (sp.Lt(a**2, M**2), sp.Gt(r, M + sp.sqrt(M**2 - a**2)))
    horizon = spacetime(st.coordinates, st.parameters, st.metric, domain=outside)
    points = sample_points(horizon, 8, seed=5)
    assert len(points) == 8
    for p in points:
        assert p[a] ** 2 < p[M] ** 2
        assert sp.Gt(p[r], p[M] + sp.sqrt(p[M] ** 2 - p[a] ** 2)) is sp.true  # exact
        assert p[r].is_Rational


def test_repeated_requests_get_the_same_points_as_fresh_copies() -> None:
    st = schwarzschild()
    first = sample_points(st, 3, seed=9)
    first[0][r] = sp.Integer(-1)  # a caller scribbling on its copy changes nothing else
    again = sample_points(st, 3, seed=9)
    assert again[0][r] != -1
    assert again == sample_points(st, 3, seed=9)


def test_fast_numbers_agree_with_sympy_evalf() -> None:
    # Reference: SymPy's own error-controlled evalf (a general-purpose library).
    from generator.geometry.sampling import numeric_value

    values = [
        sp.cos(sp.Rational(13, 7)) ** 2 * sp.cosh(sp.Rational(5, 3)) - sp.sqrt(2) / 3,
        sp.LambertW(sp.Rational(3, 2)) + sp.atan(sp.Rational(1, 9)) * sp.pi,
        sp.sqrt(-3 + sp.exp(sp.Rational(1, 4))),  # a negative radicand: an imaginary number
        sp.Abs(sp.log(sp.Rational(1, 5))) * sp.tanh(2) ** -3,
    ]
    for value in values:
        fast = numeric_value(value, 60)
        reference = complex(value.evalf(60))
        assert fast is not None
        assert abs(complex(fast) - reference) <= 1e-14 * max(1.0, abs(reference)), value
    assert numeric_value(sp.gamma(sp.Rational(1, 3)), 60) is None  # not handled: say so


def test_numeric_comparison_rejects_a_small_real_difference() -> None:
    from generator.geometry.equality import compare_at

    one = sp.cos(sp.Rational(1, 3)) ** 2 + sp.sin(sp.Rational(1, 3)) ** 2
    assert compare_at(one, sp.Integer(1), {}, 50) is False
    assert compare_at(one, 1 + sp.Rational(1, 10**15), {}, 50) is True


def test_linear_bounds_are_read_once_for_sampler_and_prover() -> None:
    R = sp.Symbol("R", positive=True)
    assert linear_bound(2 * r > 3 * M, r) == ("lower", 3 * M / 2, True)
    assert linear_bound(sp.Ge(r - M, 0), r) == ("lower", M, False)
    assert linear_bound(3 * r - R < 0, r) == ("upper", R / 3, True)
    assert linear_bound(3 * r < R, r) is None  # bare R: the relation bounds R ...
    assert linear_bound(3 * r < R, R) == ("lower", 3 * r, True)  # ... from below by 3r
    assert linear_bound(sp.Lt(M, r / 3), r) is None  # bare M: the relation bounds M
    assert linear_bound(r**2 > M, r) is None  # not linear in r
    assert linear_bound(sp.pi * r < 1, r) is None  # coefficient not rational


def test_a_thin_interval_set_by_linear_bounds_is_sampled_directly() -> None:
    """0.99 R < r < 1.01 R written without a bare symbol: drawn between the bounds, not
    hoped for by rejection (which finds no such point in its attempts); every point inside."""
    R = sp.Symbol("R", positive=True)
    st = spacetime((t, r), (R,), sp.diag(-1, 1),
                   domain=(100 * r - 99 * R > 0, 100 * r - 101 * R < 0))
    points = sample_points(st, 6, seed=11)
    assert len(points) == 6
    for p in points:
        assert p[R] * sp.Rational(99, 100) < p[r] < p[R] * sp.Rational(101, 100)


def test_domain_relations_are_judged_as_sympy_judges_them() -> None:
    # Reference: SymPy's own exact relational evaluation and error-controlled evalf (a
    # general-purpose library). The sampler judges rational relations in Python fractions and
    # the others in mpmath at two precisions; both must say what SymPy says.
    import random

    from generator.geometry.sampling import _holds_everywhere

    x, y = sp.symbols("x y", real=True)
    relations = [
        x**2 - 3 * x * y + y**3 / 7 > sp.Rational(1, 5),
        (x - y) ** 3 / (1 + x**2) <= y,
        sp.sqrt(x**2 + y**2) - sp.exp(x / 3) > 0,
        sp.cos(x) ** 2 * y >= sp.Rational(1, 4),
        sp.Ne(x, y),
    ]
    rng = random.Random(11)
    for _ in range(40):
        point = {x: sp.Rational(rng.randint(-40, 40), rng.randint(1, 9)),
                 y: sp.Rational(rng.randint(-40, 40), rng.randint(1, 9))}
        for relation in relations:
            expected = bool(relation.xreplace(point))
            assert _holds_everywhere((relation,), point, ()) is expected, (relation, point)


def test_a_value_thirty_digits_cannot_resolve_is_left_to_evalf() -> None:
    # x = 10³⁵ + 1/3 needs about 37 digits: at 30 digits plain mpmath rounds away the 1/3 and
    # takes sin(10³⁵) ≈ 0.958 instead of sin(x) ≈ 0.999 (SymPy's evalf, a general-purpose
    # library with error control, gives the latter). The values at 30 and 45 digits disagree,
    # so evalf decides; trusting the 30-digit value alone would call sin(x) > 0.97 false.
    from generator.geometry.sampling import _agreeing_value, _holds_everywhere

    x = sp.Symbol("x", real=True)
    point = {x: sp.Integer(10) ** 35 + sp.Rational(1, 3)}
    assert _agreeing_value(sp.sin(x), point) is None
    assert _holds_everywhere((sp.sin(x) > sp.Rational(97, 100),), point, ()) is True
    assert _holds_everywhere((sp.sin(x) > sp.Rational(9995, 10000),), point, ()) is False


def test_the_sampler_judges_a_value_at_zero_exactly_or_by_evalf() -> None:
    # A difference that is exactly zero never "agrees" in relative terms: evalf decides, and
    # with the margin the strict relation fails and the weak one holds (common practice).
    from generator.geometry.sampling import _agreeing_value, _holds_everywhere

    x = sp.Symbol("x", positive=True)
    zero = sp.sqrt(x) - sp.sqrt(4)
    assert _agreeing_value(zero, {x: sp.Integer(4)}) is None
    assert _holds_everywhere((zero > 0,), {x: sp.Integer(4)}, ()) is False
    assert _holds_everywhere((zero >= 0,), {x: sp.Integer(4)}, ()) is True
