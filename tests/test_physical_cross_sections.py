"""Horizon cross-sections whose range the metric fixes (the C-metric's x between two axes),
non-compact horizons (black strings, planar and toroidal AdS black holes: area per unit
coordinate range, never a made-up total), and horizons that rotate in several planes
(Myers–Perry and Kerr–AdS in five dimensions: χ = ∂_t + Ω_a ∂_φ + Ω_b ∂_ψ).

Sources beside each check; "from memory" marks values recalled, "common practice" facts of
the trade.
"""

from __future__ import annotations

import mpmath
import pytest
import sympy as sp

from generator.entry.catalog import vocabulary
from generator.entry.loader import LoadResult, load_text
from generator.geometry.equality import decide_equal
from generator.geometry.sampling import entry_points
from generator.model import Spacetime
from generator.physics.horizons import H, inward_coordinate
from generator.physics.physical import check_physical_claims, computed_claim
from generator.site.physical_json import horizon_json
from tests._hostile import SEED_ENTRY, SEED_LINE_ELEMENT
from tests._shipped_entries import (
    CATALOG,
    data_for,
    data_of,
    equal,
    loaded,
    path_of,
    the,
    with_claims,
)


def sample_parameters(spacetime: Spacetime) -> dict[sp.Symbol, mpmath.mpf]:
    point = entry_points(spacetime, 1)[0]
    return {p: mpmath.mpf(sp.Rational(point[p]).p) / sp.Rational(point[p]).q
            for p in spacetime.parameters}


def polynomial_roots(coefficients: list[mpmath.mpf]) -> list[mpmath.mpf]:
    """Real roots, ascending (mpmath as the reference library)."""
    found = mpmath.polyroots(coefficients, maxsteps=400, extraprec=200)
    return sorted(mpmath.re(r) for r in found if abs(mpmath.im(r)) < mpmath.mpf(10) ** -30)




def claim_verdict(entry_id: str, name: str, value: str):
    result = with_claims(entry_id, f"  {name}: {{value: '{value}', source: computed-here}}\n")
    verdicts, problems = check_physical_claims(result.entry, result.spacetime,
                                               data_of(entry_id))
    [verdict] = [v for v in verdicts if v.subject == f"claims.{name}"]
    return verdict, problems


# ---------------------------------------------------------------------------- C-metric


def test_c_metric_kinds_follow_the_inward_running_y() -> None:
    """y grows inwards (r = 1/(A(x + y))): the black-hole horizon is the root of
    F(y) = −1 + y² − 2MAy³ near 1/(2MA), the acceleration horizon the one near y = 1, which
    bounds the static region from outside and is labelled "acceleration" (it reaches
    conformal infinity; not a cosmological horizon). Source: J. B.
    Griffiths, P. Krtouš, J. Podolský, Interpreting the C-metric, Class. Quantum Grav. 23,
    6745 (2006) — from memory."""
    st = loaded("c-metric").spacetime
    p = sample_parameters(st)
    M, A = p[st.symbols["M"]], p[st.symbols["A"]]
    event, acceleration = the("c-metric", "event"), the("c-metric", "acceleration")
    assert abs(mpmath.mpf(event.numeric_location) * 2 * M * A - 1) < mpmath.mpf("0.05")
    assert abs(mpmath.mpf(acceleration.numeric_location) - 1) < mpmath.mpf("0.05")
    assert inward_coordinate(st, 2, entry_points(st, 1)[0])
    plain = loaded("schwarzschild").spacetime  # and r of Schwarzschild runs outwards
    assert not inward_coordinate(plain, 1, entry_points(plain, 1)[0])


def test_c_metric_surface_gravity_is_half_the_slope_of_its_structure_function() -> None:
    """κ = |F'(y_h)|/2 for the conformally static C-metric (κ is unchanged by a conformal
    factor regular on the horizon; common practice)."""
    st = loaded("c-metric").spacetime
    p = sample_parameters(st)
    M, A = p[st.symbols["M"]], p[st.symbols["A"]]
    with mpmath.workdps(50):
        roots = polynomial_roots([-2 * M * A, 1, 0, -1])
        for h in data_of("c-metric").horizons:
            y_h = min(roots, key=lambda v: abs(v - mpmath.mpf(h.numeric_location)))
            expected = abs(2 * y_h - 6 * M * A * y_h**2) / 2
            got = sp.N(h.surface_gravity.xreplace({s: sp.Float(v, 50) for s, v in p.items()})
                       .xreplace({H: sp.Float(y_h, 50)}), 40)
            assert abs(mpmath.mpf(str(got)) - expected) < mpmath.mpf(10) ** -30


def test_c_metric_black_hole_area_is_exact_between_the_axes() -> None:
    """A = Δφ ∫ dx / (A²(x + y_h)²) over x between the roots x₁ < x₂ of
    G(x) = 1 − x² − 2MAx³ next to (−1, 1), the two half-axes; here Δφ = 2π, which leaves a
    conical singularity on the axes (the period is a choice of the C-metric; J. B. Griffiths
    and J. Podolský, Exact Space-Times in Einstein's General Relativity (2009), ch. 14 — from
    memory). The exact value in the named roots is checked against mpmath's quadrature of
    the formula at 50 digits."""
    st = loaded("c-metric").spacetime
    h = the("c-metric", "event")
    assert h.area is not None and h.area_method == "exact"
    assert {r[0] for r in h.area_roots} == {"x_1", "x_2"}
    assert "conical" in h.how and "period 2π" in h.how
    p = sample_parameters(st)
    M, A = p[st.symbols["M"]], p[st.symbols["A"]]
    with mpmath.workdps(50):
        x_roots = polynomial_roots([-2 * M * A, -1, 0, 1])
        x_1 = max(v for v in x_roots if v < 0)
        x_2 = min(v for v in x_roots if v > 0)
        y_h = max(polynomial_roots([-2 * M * A, 1, 0, -1]))
        reference = 2 * mpmath.pi * mpmath.quad(lambda x: 1 / (A**2 * (x + y_h) ** 2),
                                                [x_1, x_2])
        values = {s: sp.Float(v, 50) for s, v in p.items()}
        values.update({sp.Symbol("x_1", real=True): sp.Float(x_1, 50),
                       sp.Symbol("x_2", real=True): sp.Float(x_2, 50), H: sp.Float(y_h, 50)})
        got = mpmath.mpf(str(sp.N(h.area.xreplace(values), 45)))
        assert abs(got - reference) < mpmath.mpf(10) ** -35 * reference
    shown = horizon_json(h)
    assert [r["symbol"] for r in shown["area_roots"]] == ["x_1", "x_2"]
    assert {r["end"] for r in shown["area_roots"]} == {"lower", "upper"}


def test_c_metric_acceleration_horizon_has_no_finite_area() -> None:
    """The acceleration horizon y = −x₁ (F(y) = −G(−y)) meets conformal infinity x + y = 0
    on the axis: its area diverges (common practice), so no area is given — the
    antiderivative's finite value between the ends is refused by the quadrature check, and
    the reason names conformal infinity."""
    h = the("c-metric", "acceleration")
    assert h.area is None and h.area_method == ""
    assert "no finite area" in h.reasons["area"] and "conformal infinity" in h.reasons["area"]


def test_an_area_claim_in_the_range_roots_is_refused_not_guessed() -> None:
    verdict, problems = claim_verdict("c-metric", "horizon_area", "4*pi/A**2")
    assert not verdict.ok and "x_1" in verdict.detail
    assert any(p.code == "claim.horizon_area" for p in problems)


X_COS_LINE = ("-(1 - 2*M/r)*dt**2 + dr**2/(1 - 2*M/r) + "
              "r**2*(dx**2/(1 - x**2) + (1 - x**2)*dphi**2)")


def x_cos_load() -> LoadResult:
    """Schwarzschild with x = cos θ (common practice): x runs between the regular axes
    x = ±1, a range the metric fixes through g^{xx} = (1 − x²)/r²."""
    text = (SEED_ENTRY.replace(SEED_LINE_ELEMENT, X_COS_LINE)
            .replace("coordinates: [t, r, theta, phi]", "coordinates: [t, r, x, phi]")
            .replace("  - 0 < theta < pi\n", "  - -1 < x < 1\n")
            .replace("matter:\n  kind: vacuum", "matter:\n  kind: unspecified"))
    family = path_of("schwarzschild").parent
    load = load_text(text, "schwarzschild.yaml", family / "schwarzschild.yaml",
                     vocabulary(CATALOG), True)
    assert load.spacetime is not None, load.diagnostics
    return load


def test_a_range_between_regular_axes_gives_the_published_area() -> None:
    """Schwarzschild in x = cos θ: A = 16πM² (R. M. Wald, General Relativity (1984), §12.5
    — from memory), the ends x = ±1 in closed form, no conical axis reported."""
    load = x_cos_load()
    [h] = data_for(load).horizons
    M = load.spacetime.symbols["M"]
    assert h.area is not None and equal(h.area, 16 * sp.pi * M**2, load.spacetime)
    assert h.area_roots == () and "conical" not in h.how
    assert "x between the zeros -1 and 1" in h.how


# ---------------------------------------------------------------------------- non-compact


def test_black_string_area_is_per_unit_length_of_z() -> None:
    """The uniform black string: horizon S² × line at r = 2M with κ = 1/4M; area per unit
    length of z 16πM², entropy per unit length 4πM² (common practice: a product with a flat
    line); no total area is made up."""
    st = loaded("schwarzschild-black-string").spacetime
    M = st.symbols["M"]
    h = the("schwarzschild-black-string", "event")
    assert h.area is None and h.entropy is None
    assert h.area_per == ("z",)
    assert equal(h.area_per_unit, 16 * sp.pi * M**2, st)
    assert equal(h.entropy_per_unit, 4 * sp.pi * M**2, st)
    assert equal(h.surface_gravity, 1 / (4 * M), st)
    assert "per unit coordinate length of z" in h.reasons["area"]
    shown = horizon_json(h)
    assert shown["area"] is None and shown["area_per_unit"]["per_unit_of"] == ["z"]
    assert shown["area_per_unit"]["entropy"] is not None


def test_a_horizon_area_claim_on_a_non_compact_horizon_is_refused() -> None:
    verdict, problems = claim_verdict("schwarzschild-black-string", "horizon_area",
                                      "16*pi*M**2")
    assert not verdict.ok and "not compact" in verdict.detail
    assert problems


def test_planar_anti_de_sitter_horizon_radius_surface_gravity_and_area_density() -> None:
    """f = r²/ℓ² − 2m/r: r_h = (2mℓ²)^{1/3}, κ = f'(r_h)/2 = 3r_h/(2ℓ²), area per unit
    coordinate area of the plane r_h². Source: J. P. S. Lemos, Cylindrical black hole in
    general relativity, Phys. Lett. B 353, 46 (1995) — from memory; κ = f'/2 common
    practice."""
    st = loaded("planar-anti-de-sitter-black-hole").spacetime
    m, ell = st.symbols["m"], st.symbols["ell"]
    r_h = (2 * m * ell**2) ** sp.Rational(1, 3)
    h = the("planar-anti-de-sitter-black-hole", "event")
    assert equal(h.location, r_h, st)
    assert equal(h.surface_gravity, 3 * r_h / (2 * ell**2), st)
    assert h.area is None and h.area_per == ("x", "y")
    assert equal(h.area_per_unit, r_h**2, st)
    assert "per unit coordinate area of x, y" in h.reasons["area"]


def test_anti_de_sitter_black_brane_temperature_and_entropy_density() -> None:
    """T = r₀/(πℓ²) and entropy per unit coordinate volume r₀³/(4ℓ³) for the planar AdS₅
    brane ds² = (r²/ℓ²)(−f dt² + dx⃗²) + ℓ² dr²/(r² f), f = 1 − r₀⁴/r⁴. Source: E. Witten,
    Anti-de Sitter space, thermal phase transition, and confinement in gauge theories,
    Adv. Theor. Math. Phys. 2, 505 (1998) — from memory; common practice."""
    st = loaded("anti-de-sitter-black-brane-5d").spacetime
    r0, ell = st.symbols["r0"], st.symbols["ell"]
    h = the("anti-de-sitter-black-brane-5d", "event")
    assert equal(h.temperature, r0 / (sp.pi * ell**2), st)
    assert h.area_per == ("x", "y", "z")
    assert equal(h.entropy_per_unit, r0**3 / (4 * ell**3), st)


def test_rotating_black_string_keeps_its_azimuth_and_is_per_unit_z() -> None:
    """Lemos–Zanchin: φ is periodic (2π), z is not: the area is per unit length of z."""
    for h in data_of("lemos-zanchin-black-string").horizons:
        assert h.area is None and h.area_per == ("z",) and h.area_per_unit is not None
        assert "period 2π" in h.how


# ---------------------------------------------------------------------------- two planes


def test_myers_perry_generator_turns_in_both_planes() -> None:
    """Ω_a = a/(r₊² + a²), Ω_b = b/(r₊² + b²), κ = (r₊⁴ − a²b²)/(r₊(r₊² + a²)(r₊² + b²)).
    Source: R. C. Myers, M. J. Perry, Black holes in higher dimensional space-times, Ann.
    Phys. 172, 304 (1986) — from memory."""
    st = loaded("myers-perry-5d").spacetime
    a, b = st.symbols["a"], st.symbols["b"]
    h = the("myers-perry-5d", "event")
    r = h.location
    omegas = dict(h.angular_velocities)
    assert set(omegas) == {"phi", "psi"} and h.angular_velocity is None
    assert equal(omegas["phi"], a / (r**2 + a**2), st)
    assert equal(omegas["psi"], b / (r**2 + b**2), st)
    assert dict(h.normal_killing_vector) == {"t": 1, **omegas}
    kappa = (r**4 - a**2 * b**2) / (r * (r**2 + a**2) * (r**2 + b**2))
    assert equal(h.surface_gravity, kappa, st)
    assert not equal(h.surface_gravity, kappa * sp.Rational(8, 7), st)  # the check can fail
    assert "2 rotation planes" in h.reasons["angular_velocity"]
    shown = horizon_json(h)
    assert set(shown["angular_velocities"]) == {"phi", "psi"}


def test_one_angular_velocity_claim_is_refused_where_there_are_two() -> None:
    verdict, problems = claim_verdict("myers-perry-5d", "horizon_angular_velocity",
                                      "a/(r**2 + a**2)")
    assert not verdict.ok and "rotation planes" in verdict.detail and problems


def test_mutated_surface_gravity_claims_are_refused_in_five_dimensions() -> None:
    """The Myers–Perry κ claimed in r (standing for r₊ … written with its closed form):
    the right value verifies, scaled and shifted copies do not."""
    st = loaded("myers-perry-5d").spacetime
    h = the("myers-perry-5d", "event")
    value, _ = computed_claim("surface_gravity", data_of("myers-perry-5d"))
    assert value is not None and value == h.surface_gravity
    for wrong in (value * sp.Rational(8, 7), value + 1 / (st.parameters[0] ** 2 + 3), -value):
        assert decide_equal(wrong, value, st).equal is False


KERR_ADS_5D_SURFACE_GRAVITY = (
    "(2*r**6/ell**2 + r**4*(1 + a**2/ell**2 + b**2/ell**2) - a**2*b**2)"
    "/(r*(r**2 + a**2)*(r**2 + b**2))")


@pytest.mark.slow
def test_kerr_anti_de_sitter_5d_against_hawking_hunter_taylor_robinson() -> None:
    """S. W. Hawking, C. J. Hunter, M. M. Taylor-Robinson, Rotation and the AdS/CFT
    correspondence, Phys. Rev. D 59, 064005 (1999) — from memory: Ω_a = a(1 + r₊²/ℓ²)/(r₊² +
    a²) measured against a frame at rest at infinity, where these coordinates turn with
    −a/ℓ² (so the chart's Ω_a is a Ξ_a/(r₊² + a²), Ξ_a = 1 − a²/ℓ²), likewise Ω_b; area
    2π²(r₊² + a²)(r₊² + b²)/(r₊ Ξ_a Ξ_b); κ = 2πT with T as in KERR_ADS_5D_SURFACE_GRAVITY.
    ℓ → ∞ gives the Myers–Perry values of the test above. Every check is exact in the
    root's field (the relation Δ_r(r₊) = 0), and a mutated κ is refused."""
    st = loaded("kerr-anti-de-sitter-5d").spacetime
    a, b, ell = st.symbols["a"], st.symbols["b"], st.symbols["ell"]
    data = data_of("kerr-anti-de-sitter-5d")
    h = next(x for x in data.horizons if x.kind == "event")
    assert h.location == H
    omegas = dict(h.angular_velocities)
    from generator.physics.rootclaims import decide_at_root

    def at_root(claimed: sp.Expr, computed: sp.Expr) -> bool | None:
        return decide_at_root(claimed, computed, st, 1, h.polynomial, H,
                              h.numeric_location).equal

    r = st.symbols["r"]
    for name, rot in (("phi", a), ("psi", b)):
        published = rot * (1 + r**2 / ell**2) / (r**2 + rot**2)
        assert at_root(published - rot / ell**2, omegas[name]) is True
        assert at_root(published, omegas[name]) is False  # the frame matters
    xi_a, xi_b = 1 - a**2 / ell**2, 1 - b**2 / ell**2
    area = 2 * sp.pi**2 * (r**2 + a**2) * (r**2 + b**2) / (r * xi_a * xi_b)
    assert at_root(area, h.area) is True
    good, _ = claim_verdict("kerr-anti-de-sitter-5d", "surface_gravity",
                            KERR_ADS_5D_SURFACE_GRAVITY)
    bad, problems = claim_verdict("kerr-anti-de-sitter-5d", "surface_gravity",
                                  f"({KERR_ADS_5D_SURFACE_GRAVITY})*8/7")
    assert good.ok, good.detail
    assert not bad.ok and problems
    # Λ → 0: the published κ becomes Myers–Perry's (r⁴ − a²b²)/(r(r² + a²)(r² + b²))
    limit = sp.limit(sp.sympify(KERR_ADS_5D_SURFACE_GRAVITY, locals=st.symbols), ell, sp.oo)
    assert sp.simplify(limit - (r**4 - a**2 * b**2) / (r * (r**2 + a**2) * (r**2 + b**2))) == 0


# ---------------------------------------------------------------------------- the page


def test_the_page_shows_per_unit_areas_and_two_angular_velocities_as_typeset_math() -> None:
    """No program syntax in what the reader sees; the label names the coordinates."""
    from generator.physics.verify import check_loaded
    from generator.site.physical_page import physical_section

    for entry_id, label in (("schwarzschild-black-string", "area per unit coordinate length "
                             "of z"), ("myers-perry-5d", "angular velocity")):
        result = loaded(entry_id)
        related = {item.entry: loaded(item.entry) for item in result.entry.related}
        section = physical_section(check_loaded(result, related))
        assert section is not None
        rows = [row for h in section["horizons"] for row in h["rows"]]
        assert any(row["label"] == label and row["math"] for row in rows)
        for h in section["horizons"]:
            assert h["generator"] is None or "&#x02202;" in str(h["generator"])  # ∂
        for row in rows:
            assert "**" not in str(row["math"] or "") and "sqrt(" not in str(row["math"] or "")
