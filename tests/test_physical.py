"""Horizons, orbits, Komar charges and observers' kinematics computed from shipped entries,
against published values (sources beside each check), plus mutants of every new claim.

Published values recalled from memory are marked so; "common practice" marks textbook
formulas of the trade (f'(r_h)/2 for static horizons, the Schwarzschild-like orbit formulas).
"""

from __future__ import annotations

from functools import cache

import mpmath
import pytest
import sympy as sp

from generator.entry.catalog import vocabulary
from generator.entry.loader import load_text
from generator.geometry.curvature import compute_geometry
from generator.geometry.sampling import entry_points
from generator.model import Horizon, PhysicalData
from generator.physics.horizons import H
from generator.physics.physical import check_physical_claims, physical_data
from generator.physics.rootfield import pseudo_remainder
from generator.physics.verify import check_loaded
from generator.site.export import report_json
from tests._shipped_entries import CATALOG, equal, loaded, path_of, with_claims


@cache
def data_of(entry_id: str) -> PhysicalData:
    result = loaded(entry_id)
    spacetime = result.spacetime
    assert spacetime is not None
    from generator.physics.matter import classify_matter

    geometry = compute_geometry(spacetime)
    matter = classify_matter(result.entry, spacetime, geometry)
    declared = (matter.source.vector if matter.source is not None
                and matter.source.kind == "perfect-fluid" else None)
    return physical_data(spacetime, geometry, declared)


def symbols(entry_id: str) -> dict[str, sp.Basic]:
    return loaded(entry_id).spacetime.symbols


def the(entry_id: str, kind: str) -> Horizon:
    found = [h for h in data_of(entry_id).horizons if h.kind == kind]
    assert len(found) == 1, [h.kind for h in data_of(entry_id).horizons]
    return found[0]


# ---------------------------------------------------------------------------- horizons


def test_schwarzschild_horizon_orbits_and_mass() -> None:
    """Event horizon r = 2M with κ = 1/4M, A = 16πM²; photon sphere 3M, ISCO 6M; Komar
    mass M. Source: S. M. Carroll, Spacetime and Geometry (2004), ch. 5 (orbits) and ch. 6
    (surface gravity, area) — from memory; R. M. Wald, General Relativity (1984), §11.2 (Komar
    mass) — from memory."""
    st = loaded("schwarzschild").spacetime
    M = symbols("schwarzschild")["M"]
    h = the("schwarzschild", "event")
    data = data_of("schwarzschild")
    assert len(data.horizons) == 1
    assert equal(h.location, 2 * M, st)
    assert equal(h.surface_gravity, 1 / (4 * M), st)
    assert equal(h.temperature, 1 / (8 * sp.pi * M), st)
    assert equal(h.area, 16 * sp.pi * M**2, st)
    assert equal(h.entropy, 4 * sp.pi * M**2, st)
    assert h.angular_velocity == 0
    assert equal(data.photon_sphere, 3 * M, st)
    assert equal(data.isco, 6 * M, st)
    assert equal(data.komar_mass, M, st)
    assert data.komar_angular_momentum == 0
    assert data.ergosurface is None and "static" in data.reasons["ergosurface"]


def test_schwarzschild_other_charts_agree_where_the_chart_reaches_the_horizon() -> None:
    """The ingoing Eddington–Finkelstein chart finds the same horizon with ∂_v as generator
    (κ = 1/4M, from memory as above); the isotropic chart's g^{ρρ} never vanishes, so that
    entry says none was found instead of inventing one."""
    st = loaded("schwarzschild-ingoing-eddington-finkelstein").spacetime
    M = st.symbols["M"]
    h = the("schwarzschild-ingoing-eddington-finkelstein", "event")
    assert dict(h.normal_killing_vector) == {"v": 1}
    assert equal(h.surface_gravity, 1 / (4 * M), st)
    isotropic = data_of("schwarzschild-isotropic")
    assert isotropic.horizons == ()
    assert isotropic.reasons["horizons"].startswith("none found")


def test_reissner_nordstrom_surface_gravity_of_both_horizons() -> None:
    """κ± = (r₊ − r₋)/2r±² with r± = M ± √(M² − Q²); photon sphere (3M + √(9M² − 8Q²))/2.
    Source: E. Poisson, A Relativist's Toolkit (2004), §5.3 — from memory."""
    st = loaded("reissner-nordstrom").spacetime
    M, Q = st.symbols["M"], st.symbols["Q"]
    root = sp.sqrt(M**2 - Q**2)
    plus, minus = M + root, M - root
    event, inner = the("reissner-nordstrom", "event"), the("reissner-nordstrom", "inner")
    assert equal(event.location, plus, st) and equal(inner.location, minus, st)
    assert equal(event.surface_gravity, (plus - minus) / (2 * plus**2), st)
    assert equal(inner.surface_gravity, (plus - minus) / (2 * minus**2), st)
    assert equal(event.area, 4 * sp.pi * plus**2, st)
    assert equal(data_of("reissner-nordstrom").photon_sphere,
                 (3 * M + sp.sqrt(9 * M**2 - 8 * Q**2)) / 2, st)
    assert "Q" in data_of("reissner-nordstrom").extremality[0]


def test_kerr_horizon_rotation_area_and_charges() -> None:
    """κ = (r₊ − r₋)/2(r₊² + a²), Ω_H = a/(r₊² + a²), A = 4π(r₊² + a²), Komar M and J = aM,
    ergosurface r = M + √(M² − a² cos²θ). Source: R. M. Wald, General Relativity (1984),
    §12.3 and §12.5 — from memory."""
    st = loaded("kerr-boyer-lindquist").spacetime
    M, a = st.symbols["M"], st.symbols["a"]
    theta = st.symbols["theta"]
    root = sp.sqrt(M**2 - a**2)
    plus, minus = M + root, M - root
    h = the("kerr-boyer-lindquist", "event")
    assert equal(h.location, plus, st)
    assert equal(h.surface_gravity, (plus - minus) / (2 * (plus**2 + a**2)), st)
    assert equal(h.angular_velocity, a / (plus**2 + a**2), st)
    assert equal(h.area, 4 * sp.pi * (plus**2 + a**2), st)
    assert dict(h.normal_killing_vector)["t"] == 1
    data = data_of("kerr-boyer-lindquist")
    assert equal(data.komar_mass, M, st)
    assert equal(data.komar_angular_momentum, a * M, st)
    assert equal(data.ergosurface, M + sp.sqrt(M**2 - a**2 * sp.cos(theta) ** 2), st)
    assert data.photon_sphere is None and "static" in data.reasons["photon_sphere"]


def test_de_sitter_static_cosmological_horizon() -> None:
    """Cosmological horizon r = √(3/Λ) with κ = √(Λ/3) and A = 12π/Λ. Source: G. W. Gibbons,
    S. W. Hawking, Cosmological event horizons, thermodynamics, and particle creation,
    Phys. Rev. D 15, 2738 (1977) — from memory."""
    st = loaded("de-sitter-static").spacetime
    Lam = st.symbols["Lambda"]
    h = the("de-sitter-static", "cosmological")
    assert equal(h.location, sp.sqrt(3 / Lam), st)
    assert equal(h.surface_gravity, sp.sqrt(Lam / 3), st)
    assert equal(h.area, 12 * sp.pi / Lam, st)
    assert data_of("de-sitter-static").komar_mass is None


def test_btz_horizons() -> None:
    """r±² = (Mℓ²/2)(1 ± √(1 − J²/M²ℓ²)), κ = (r₊² − r₋²)/(ℓ² r₊), Ω_H = J/(2r₊²), horizon
    length 2πr₊. Source: M. Bañados, C. Teitelboim, J. Zanelli, Black hole in
    three-dimensional spacetime, Phys. Rev. Lett. 69, 1849 (1992) — from memory."""
    st = loaded("btz").spacetime
    M, J, ell = st.symbols["M"], st.symbols["J"], st.symbols["ell"]
    disc = sp.sqrt(1 - J**2 / (M**2 * ell**2))
    plus = sp.sqrt(M * ell**2 / 2 * (1 + disc))
    minus = sp.sqrt(M * ell**2 / 2 * (1 - disc))
    h = the("btz", "event")
    assert equal(h.location, plus, st)
    assert equal(h.surface_gravity, (plus**2 - minus**2) / (ell**2 * plus), st)
    assert equal(h.angular_velocity, J / (2 * plus**2), st)
    assert equal(h.area, 2 * sp.pi * plus, st)
    assert equal(the("btz", "inner").location, minus, st)


def test_tangherlini_five_dimensions_with_its_normalisation() -> None:
    """f = 1 − μ/r²: horizon r = √μ, κ = 1/√μ, area 2π²μ^{3/2}; Komar mass with the
    D-dimensional normalisation M = −(D−2)/(16π(D−3)) ∮∇ξ gives M = 3πμ/8. Source: R. C.
    Myers, M. J. Perry, Black holes in higher dimensional space-times, Ann. Phys. 172, 304
    (1986) — from memory (μ = 8GM/3π in five dimensions)."""
    st = loaded("schwarzschild-tangherlini-5d").spacetime
    mu = st.symbols["mu"]
    h = the("schwarzschild-tangherlini-5d", "event")
    assert len(data_of("schwarzschild-tangherlini-5d").horizons) == 1  # r = −√μ is dropped
    assert equal(h.location, sp.sqrt(mu), st)
    assert equal(h.surface_gravity, 1 / sp.sqrt(mu), st)
    assert equal(h.area, 2 * sp.pi**2 * mu ** sp.Rational(3, 2), st)
    assert equal(data_of("schwarzschild-tangherlini-5d").komar_mass, 3 * sp.pi * mu / 8, st)


def test_schwarzschild_de_sitter_roots_stay_exact_generators() -> None:
    """A cubic without a closed form here: each horizon is h_root of its polynomial, and κ is
    f'(r_h)/2 in absolute value at the numeric root (common practice for static metrics)."""
    st = loaded("schwarzschild-de-sitter").spacetime
    M, Lam = st.symbols["M"], st.symbols["Lambda"]
    event = the("schwarzschild-de-sitter", "event")
    cosmological = the("schwarzschild-de-sitter", "cosmological")
    point = entry_points(st, 1)[0]
    r = sp.Symbol("r")
    f = 1 - 2 * M / r - Lam * r**2 / 3
    for h in (event, cosmological):
        assert h.location == H and h.polynomial.has(H)
        root = mpmath.mpf(h.numeric_location)
        values = {M: point[M], Lam: point[Lam]}
        expected = abs(sp.diff(f, r).xreplace(values).xreplace({r: sp.Float(root, 30)})) / 2
        got = h.surface_gravity.xreplace(values).xreplace({H: sp.Float(root, 30)})
        assert abs(sp.N(got - expected, 30)) < 1e-20
    assert mpmath.mpf(event.numeric_location) < mpmath.mpf(cosmological.numeric_location)


@pytest.mark.parametrize("entry_id", ["minkowski-spherical", "flrw-flat", "godel"])
def test_entries_without_horizons_say_so(entry_id: str) -> None:
    data = data_of(entry_id)
    assert data.horizons == ()
    assert data.reasons["horizons"].startswith("none found")


def test_unsolved_factors_are_not_reported_as_no_horizon() -> None:
    """Bardeen's g^{rr} = 1 − 2Mr²/(r² + g²)^{3/2} vanishes at radii this version does not
    locate (a radical in r): the entry must not claim there is no horizon."""
    data = data_of("bardeen")
    assert data.horizons == ()
    assert data.reasons["horizons"].startswith("not determined")


def test_axes_are_not_horizons() -> None:
    """The C-metric's g^{xx} vanishes on the axes x = const, where ∂_φ degenerates and no
    Killing vector ∂_t + Ω∂_φ is normal: only the y = const roots remain (common practice)."""
    assert {h.coordinate for h in data_of("c-metric").horizons} == {"y"}


# ---------------------------------------------------------------------------- kinematics


def test_flrw_expansion_hubble_rate_and_deceleration() -> None:
    """θ = 3ȧ/a, H = ȧ/a, q = −aä/ȧ², no shear, vorticity or acceleration for the comoving
    observers. Source: G. F. R. Ellis, H. van Elst, Cosmological models (Cargèse lectures
    1998), arXiv:gr-qc/9812046 — from memory."""
    st = loaded("flrw-flat").spacetime
    t = st.symbols["t"]
    a = st.functions[0]
    k = data_of("flrw-flat").kinematics
    assert k is not None
    adot = sp.diff(a, t)
    assert equal(k.expansion, 3 * adot / a, st)
    assert equal(k.hubble_rate, adot / a, st)
    assert equal(k.deceleration, -a * sp.diff(a, t, 2) / adot**2, st)
    assert k.shear_squared == 0 and k.vorticity_squared == 0 and k.acceleration_squared == 0


def test_godel_dust_rotates() -> None:
    """Gödel's dust: ω = 1/(√2 a), so ω_ab ω^ab = 2ω² = 1/a², with no expansion, shear or
    acceleration. Source: K. Gödel, An example of a new type of cosmological solutions of
    Einstein's field equations of gravitation, Rev. Mod. Phys. 21, 447 (1949) — from
    memory."""
    st = loaded("godel").spacetime
    a = st.symbols["a"]
    k = data_of("godel").kinematics
    assert k is not None and "declared" in k.source
    assert equal(k.vorticity_squared, 1 / a**2, st)
    assert k.expansion == 0 and k.shear_squared == 0 and k.acceleration_squared == 0
    assert k.hubble_rate is None


def test_lemaitre_tolman_bondi_shear() -> None:
    """With areal radius R(t, r): θ = Ṙ'/R' + 2Ṙ/R and σ_ab σ^ab = (2/3)(Ṙ'/R' − Ṙ/R)².
    Source: J. Plebański, A. Krasiński, An Introduction to General Relativity and Cosmology
    (2006), ch. 18 — from memory. R is read off the entry's g_θθ = R²."""
    st = loaded("lemaitre-tolman-bondi").spacetime
    t, r, theta = st.symbols["t"], st.symbols["r"], st.symbols["theta"]
    R = sp.sqrt(st.metric[2, 2])
    R = sp.powsimp(sp.powdenest(R, force=True), force=True)
    k = data_of("lemaitre-tolman-bondi").kinematics
    assert k is not None
    dot, prime_dot, prime = sp.diff(R, t), sp.diff(R, t, r), sp.diff(R, r)
    assert equal(k.expansion, prime_dot / prime + 2 * dot / R, st)
    assert equal(k.shear_squared, sp.Rational(2, 3) * (prime_dot / prime - dot / R) ** 2, st)
    assert k.vorticity_squared == 0
    assert not theta.free_symbols & k.shear_squared.free_symbols


def test_static_observers_accelerate() -> None:
    """Static observers in Reissner–Nordström: a² = (Mr − Q²)²/(r⁴ Δ), Δ = r² − 2Mr + Q²
    (from |a| = (Mr − Q²)/(r² √Δ), common practice: a = f'/(2√f) for −f dt² + dr²/f)."""
    st = loaded("reissner-nordstrom").spacetime
    M, Q, r = st.symbols["M"], st.symbols["Q"], st.symbols["r"]
    k = data_of("reissner-nordstrom").kinematics
    assert k is not None and "normal" in k.source
    delta = r**2 - 2 * M * r + Q**2
    assert equal(k.acceleration_squared, (M * r - Q**2) ** 2 / (r**4 * delta), st)


# ---------------------------------------------------------------------------- claims




SCHWARZSCHILD_MUTANTS = [
    ("horizon_location", "3*M"), ("surface_gravity", "1/(2*M)"), ("horizon_area", "8*pi*M**2"),
    ("photon_sphere", "2*M"), ("isco", "3*M"), ("komar_mass", "2*M"),
    ("komar_angular_momentum", "M"), ("acceleration_squared", "M**2/r**4"),
    ("expansion", "1/r"),
]


@pytest.mark.parametrize(("name", "wrong"), SCHWARZSCHILD_MUTANTS)
def test_mutated_claims_are_rejected(name: str, wrong: str) -> None:
    """Each new claim kind: the computed value is accepted (also shown by the shipped claims)
    and a corrupted one is an error at the claim."""
    result = with_claims("schwarzschild", f"  {name}: {{value: {wrong}, source: computed-here}}\n")
    verdicts, problems = check_physical_claims(result.entry, result.spacetime,
                                               data_of("schwarzschild"))
    mine = [v for v in verdicts if v.subject == f"claims.{name}"]
    assert mine and not mine[0].ok
    assert any(p.code == f"claim.{name}" and p.severity == "error" for p in problems)


def test_shipped_physical_claims_verify() -> None:
    result = loaded("schwarzschild")
    verdicts, problems = check_physical_claims(result.entry, result.spacetime,
                                               data_of("schwarzschild"))
    assert len(verdicts) >= 5 and all(v.ok for v in verdicts) and not problems


def test_kinematic_claims_on_godel_and_their_mutant() -> None:
    good = with_claims("godel", "  vorticity_squared: {value: 1/a**2, source: original}\n")
    bad = with_claims("godel", "  vorticity_squared: {value: 1/(2*a**2), source: original}\n")
    ok, _ = check_physical_claims(good.entry, good.spacetime, data_of("godel"))
    wrong, problems = check_physical_claims(bad.entry, bad.spacetime, data_of("godel"))
    assert [v.ok for v in ok] == [True] and [v.ok for v in wrong] == [False] and problems


def test_a_horizon_claim_without_a_horizon_is_refused() -> None:
    result = with_claims("minkowski-spherical",
                         "  surface_gravity: {value: 1, source: original}\n")
    verdicts, problems = check_physical_claims(result.entry, result.spacetime,
                                               data_of("minkowski-spherical"))
    assert not verdicts[0].ok and "none found" in problems[0].message


# ---------------------------------------------------------------------------- limits


def check_with(entry_id: str, text_change: tuple[str, str] | None = None):
    path = path_of(entry_id)
    text = path.read_text(encoding="utf-8")
    if text_change:
        assert text_change[0] in text
        text = text.replace(*text_change)
    result = load_text(text, path.name, path, vocabulary(CATALOG), True)
    related = {item.entry: loaded(item.entry) for item in result.entry.related}
    return check_loaded(result, related)


@pytest.mark.slow
def test_limit_links_verify_and_a_wrong_limit_fails() -> None:
    """Kerr with a → 0 is Schwarzschild (common practice); with a → M it is not."""
    report = check_with("kerr-boyer-lindquist")
    limits = [v for v in report.verdicts if v.subject.startswith("related.")]
    assert limits and all(v.ok for v in limits), limits
    broken = check_with("kerr-boyer-lindquist", ("limit: {a: 0}", "limit: {a: M/2}"))
    assert not broken.ok
    assert any(d.code == "related.map" for d in broken.diagnostics)


def test_limit_to_the_wrong_entry_and_an_unknown_parameter_fail() -> None:
    wrong_target = check_with("reissner-nordstrom", ("entry: schwarzschild, kind: limit",
                                                     "entry: de-sitter-static, kind: limit"))
    assert not wrong_target.ok
    unknown = check_with("reissner-nordstrom", ("limit: {Q: 0}", "limit: {q: 0}"))
    assert any(d.code == "related.limit" for d in unknown.diagnostics)


# ---------------------------------------------------------------------------- exactness


def test_pseudo_remainder_decides_divisibility_exactly() -> None:
    """h⁴ − 4 is divisible by h² − 2, h⁴ − 3 is not (a broken remainder would pass both)."""
    import flint

    ctx = flint.fmpq_mpoly_ctx.get(("h", "m"), "lex")
    h, m = ctx.gens()
    relation = m * h**2 - 2 * m
    assert pseudo_remainder(h**4 - 4, relation, 0, ctx).is_zero()
    assert not pseudo_remainder(h**4 - 3, relation, 0, ctx).is_zero()
    assert not pseudo_remainder(h**3 - 4, relation, 0, ctx).is_zero()


def test_check_json_has_the_contract_keys() -> None:
    result = loaded("kerr-boyer-lindquist")
    related = {item.entry: loaded(item.entry) for item in result.entry.related}
    computed = report_json(check_loaded(result, related))["computed"]
    horizon = computed["horizons"][-1]
    for key in ("coordinate", "location", "kind", "normal_killing_vector", "angular_velocity",
                "surface_gravity", "temperature", "area", "how"):
        assert key in horizon
    assert set(computed["komar"]) == {"mass", "angular_momentum"}
    for key in ("ergosurface", "photon_sphere", "isco", "kinematics"):
        assert key in computed
    assert computed["photon_sphere"] is None and "photon_sphere" in computed["physical_reasons"]


# ---------------------------------------------------------------------------- page and groups


def test_limit_tree_nests_from_the_most_general_entry() -> None:
    """Kerr–Newman → Kerr → Schwarzschild and Kerr–Newman → RN → Schwarzschild (common
    practice): one top, Schwarzschild reached along both paths, this entry marked."""
    from generator.site.physical_page import limit_tree

    edges = [("kerr-newman", "kerr", "Q → 0"), ("kerr-newman", "rn", "a → 0"),
             ("kerr", "schwarzschild", "a → 0"), ("rn", "schwarzschild", "Q → 0")]
    tree = limit_tree(edges, "kerr")
    assert [n["entry"] for n in tree] == ["kerr-newman"]
    kerr, rn = tree[0]["children"]
    assert kerr["here"] and kerr["limit"] == "Q → 0" and not rn["here"]
    assert [n["entry"] for n in kerr["children"]] == ["schwarzschild"]
    assert [n["entry"] for n in rn["children"]] == ["schwarzschild"]


def test_limit_links_do_not_join_chart_groups() -> None:
    """Kerr and Schwarzschild are different spacetimes: a limit link must not make them
    charts of one spacetime for the duplicate search, while a chart link still does."""
    from generator.entry.catalog import Outline, chart_groups, outline_links
    from generator.errors import SourcePos

    at = SourcePos("x.yaml", 1, 1)
    outlines = [Outline("a.yaml", "kerr", at, (("schwarzschild", at),),
                        frozenset({"schwarzschild"})),
                Outline("b.yaml", "kerr-ks", at, (("kerr", at),)),
                Outline("c.yaml", "schwarzschild", at, ())]
    groups = chart_groups(outline_links(outlines))
    assert groups["kerr"] == groups["kerr-ks"]
    assert groups["kerr"] != groups["schwarzschild"]


@pytest.mark.parametrize("entry_id", ["rindler", "melvin", "kasner", "bardeen"])
def test_komar_is_refused_where_there_is_no_sphere_at_infinity_to_read(entry_id: str) -> None:
    """No Komar value is invented: Rindler and Melvin have no sphere of angles around a radius
    (cyclic planar coordinates), Kasner no timelike Killing coordinate, and Bardeen's
    integrand holds a radical in r whose leading term is not read here (common practice: the
    Komar mass needs a stationary, asymptotically flat region)."""
    data = data_of(entry_id)
    assert data.komar_mass is None and data.reasons["komar_mass"]


def test_horizons_that_depend_on_the_parameters_are_not_denied() -> None:
    """Hayward's g^{rr} numerator r³ − 2Mr² + 2Ml² has real roots only for M large enough
    against l (S. A. Hayward, Formation and evaporation of nonsingular black holes, Phys. Rev.
    Lett. 96, 031103 (2006) — from memory): without roots at the sample parameters the entry
    says so instead of "none"."""
    reason = data_of("hayward").reasons.get("horizons", "")
    assert data_of("hayward").horizons or reason.startswith("none at the first sample")


SHIPPED_WITH_PHYSICAL_CLAIMS = sorted(
    p.stem for p in CATALOG.glob("*/*.yaml") if any(
        line.strip().startswith(tuple(f"{name}:" for name in (
            "horizon_location", "surface_gravity", "horizon_area", "horizon_angular_velocity",
            "photon_sphere", "isco", "komar_mass", "komar_angular_momentum", "expansion",
            "shear_squared", "vorticity_squared", "acceleration_squared")))
        for line in p.read_text(encoding="utf-8").splitlines()))


@pytest.mark.slow
@pytest.mark.parametrize("entry_id", SHIPPED_WITH_PHYSICAL_CLAIMS)
def test_every_shipped_physical_claim_verifies_and_its_mutants_fail(entry_id: str) -> None:
    """Like tests/test_claim_mutations.py for the invariants: the whole check accepts the
    entry's claims, and each claim's scaled, shifted or sign-flipped copy is rejected by the
    same decision the check makes (``decide_physical_claim``: root-aware where the value sits
    at an algebraic root h_root). A claimed location is also compared with the horizon's own
    polynomial (a root of it, and the right one), and every other real root of that
    polynomial given by radicals is rejected (r₋ for r₊)."""
    from generator.entry.loader import parse_at, symbol_table
    from generator.physics.physical import (
        computed_claim,
        decide_physical_claim,
        root_of_claim,
    )

    result = loaded(entry_id)
    entry, st = result.entry, result.spacetime
    data = data_of(entry_id)
    verdicts, problems = check_physical_claims(entry, st, data)
    assert verdicts and all(v.ok for v in verdicts) and not problems, [
        (v.subject, v.detail) for v in verdicts if not v.ok]
    table, _ = symbol_table(entry)
    for claim in entry.claims.physical:
        computed, why = computed_claim(claim.name, data)
        assert computed is not None, why
        claimed, problem = parse_at(claim.value, table)
        assert problem is None
        at_root = root_of_claim(claim.name, data, st)
        relation = at_root is not None and claimed.has(st.coordinates[at_root[0]])
        if claim.name == "horizon_location" and not relation:
            assert_the_right_root(claimed, st, data)
        for mutant in physical_mutants(claimed, st, relation, at_root):
            decided = decide_physical_claim(claim.name, mutant, computed, st, at_root)
            assert decided.equal is False, (claim.name, mutant, decided)


def physical_mutants(claimed: sp.Expr, st, relation: bool, at_root) -> list[sp.Expr]:
    """Wrong copies of a claim. A relation's multiples vanish at the same root (the same
    relation, rightly accepted): only shifted copies of it are wrong."""
    shift = 1 / (st.parameters[0] ** 2 + 3)
    if relation:
        return [claimed + shift, claimed + st.coordinates[at_root[0]]]
    mutants = [claimed * sp.Rational(8, 7) if claimed != 0 else sp.Rational(1, 7),
               claimed + shift]
    return mutants + ([-claimed] if claimed != 0 else [])


def assert_the_right_root(claimed: sp.Expr, st, data) -> None:
    """The claimed closed form is the principal horizon's root of its polynomial (exactly:
    a root, isolated from the others at the first sample parameters); the polynomial's other
    real roots by radicals are not."""
    from generator.physics.horizons import H, closed_form_roots
    from generator.physics.physical import principal_horizon
    from generator.physics.root_isolation import closed_form_at_root

    horizon = principal_horizon(data)
    x_index = [str(c) for c in st.coordinates].index(horizon.coordinate)
    found = closed_form_at_root(claimed, st, x_index, horizon.polynomial, H,
                                horizon.numeric_location)
    assert found.equal is True, found
    others = [root for root in closed_form_roots(horizon.polynomial, H) or []
              if not equal(root, claimed, st)]
    for other in others:
        wrong = closed_form_at_root(other, st, x_index, horizon.polynomial, H,
                                    horizon.numeric_location)
        assert wrong.equal is not True, (other, wrong)
