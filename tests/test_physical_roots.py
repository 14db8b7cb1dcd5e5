"""Horizon areas where the root or the integral is awkward, claims in the root h_root, and
the ISCO as an algebraic root: exact where the algebra allows, numeric (and said so) where the
integral is not elementary. Sources beside each check; "from memory" where recalled.
"""

from __future__ import annotations

import mpmath
import pytest
import sympy as sp

from generator.entry.catalog import vocabulary
from generator.entry.loader import LoadResult, load_text
from generator.geometry.sampling import entry_points
from generator.model import Horizon
from generator.physics.horizons import H
from generator.site.physical_json import horizon_json
from tests._hostile import SEED_ENTRY, SEED_LINE_ELEMENT
from tests._shipped_entries import CATALOG, data_for, data_of, loaded, path_of


def at_sample(expr: sp.Expr, entry_id: str, h: Horizon) -> mpmath.mpf:
    """expr at the entry's first sample parameters and the horizon's numeric root."""
    st = loaded(entry_id).spacetime
    point = entry_points(st, 1)[0]
    values = {p: point[p] for p in st.parameters}
    with mpmath.workdps(30):
        root = mpmath.mpf(h.numeric_location)
        number = sp.N(expr.xreplace(values).xreplace({H: sp.Float(str(root), 30)}), 30)
    return mpmath.mpf(str(number))


def close(a: mpmath.mpf, b: mpmath.mpf, digits: int = 15) -> bool:
    return abs(a - b) <= mpmath.mpf(10) ** -digits * (1 + abs(b))


# ---------------------------------------------------------------------------- areas


def test_myers_perry_area_is_exact_over_the_quarter_range() -> None:
    """A = 2π² (r₊² + a²)(r₊² + b²)/r₊ = 2π² μ r₊ (R. C. Myers and M. J. Perry, Black holes
    in higher dimensional space-times, Ann. Phys. 172, 304 (1986) — from memory), with θ
    over (0, π/2) between the two rotation planes."""
    st = loaded("myers-perry-5d").spacetime
    mu = st.symbols["mu"]
    event = next(h for h in data_of("myers-perry-5d").horizons if h.kind == "event")
    assert event.area_method == "exact" and event.area is not None
    assert sp.simplify(event.area - 2 * sp.pi**2 * mu * event.location) == 0


@pytest.mark.parametrize("entry_id", ["kerr-de-sitter", "kerr-newman-de-sitter"])
def test_kerr_de_sitter_areas_are_exact_in_the_root(entry_id: str) -> None:
    """A = 4π(r₊² + a²)/(1 + Λa²/3) at every root of Δ_r (G. W. Gibbons and S. W. Hawking,
    Cosmological event horizons, thermodynamics, and particle creation, Phys. Rev. D 15,
    2738 (1977) — from memory): the area stays exact in h_root (a square root of an
    expression in the root) and agrees with the formula at the numeric roots."""
    st = loaded(entry_id).spacetime
    a, lam = st.symbols["a"], st.symbols["Lambda"]
    expected = 4 * sp.pi * (H**2 + a**2) / (1 + lam * a**2 / 3)
    horizons = data_of(entry_id).horizons
    assert len(horizons) == 3
    for h in horizons:
        assert h.location == H and h.area_method == "exact" and h.area.has(H)
        assert close(at_sample(h.area, entry_id, h), at_sample(expected, entry_id, h), 14)


INVENTED_THETA = "(1 + c*sin(theta)**4)"


def invented_load() -> LoadResult:
    """Invented test metric (not physics): Schwarzschild with g_θθ = r²(1 + c sin⁴θ), whose
    horizon area 8πM² ∫₀^π sin θ √(1 + c sin⁴θ) dθ is an elliptic integral."""
    line = SEED_LINE_ELEMENT.replace("(dtheta**2 + ", f"({INVENTED_THETA}*dtheta**2 + ")
    text = SEED_ENTRY.replace(SEED_LINE_ELEMENT, line).replace(
        "  M: {assume: positive, meaning: mass}\n",
        "  M: {assume: positive, meaning: mass}\n  c: {assume: positive, meaning: invented}\n"
    ).replace("matter:\n  kind: vacuum", "matter:\n  kind: unspecified")
    family = path_of("schwarzschild").parent
    load = load_text(text, "schwarzschild.yaml", family / "schwarzschild.yaml",
                     vocabulary(CATALOG), True)
    assert load.spacetime is not None, load.diagnostics
    return load


def test_a_non_elementary_area_is_numeric_and_says_so() -> None:
    """The quadrature's value against mpmath's own integral of the same formula at the sample
    parameters (mpmath as the reference library), and the JSON says "numeric" with its
    digits and parameters."""
    load = invented_load()
    [h] = data_for(load).horizons
    assert h.area is None and h.area_method == "numeric"
    st = load.spacetime
    point = entry_points(st, 1)[0]
    M, c = (mpmath.mpf(sp.Rational(point[st.symbols[n]]).p) / sp.Rational(point[st.symbols[n]]).q
            for n in ("M", "c"))
    with mpmath.workdps(30):
        reference = 2 * mpmath.pi * (2 * M) ** 2 * mpmath.quad(
            lambda t: mpmath.sin(t) * mpmath.sqrt(1 + c * mpmath.sin(t) ** 4), [0, mpmath.pi])
    assert close(mpmath.mpf(h.area_numeric), reference, h.area_digits - 2)
    shown = horizon_json(h)
    assert shown["area"] is None and shown["area_method"] == "numeric"
    assert shown["area_numeric"]["significant_digits"] == h.area_digits >= 12
    assert set(shown["area_numeric"]["parameters"]) == {"M", "c"}
    assert "numerically" in h.reasons["area"]


def test_a_non_finite_quadrature_is_refused(monkeypatch: pytest.MonkeyPatch) -> None:
    """A NaN (or infinite) quadrature result is never shown as an area."""
    load = invented_load()
    monkeypatch.setattr(mpmath, "quad", lambda *args, **kwargs: (mpmath.nan, mpmath.mpf(0)))
    [h] = data_for(load).horizons
    assert h.area is None and h.area_method == "" and h.area_numeric == ""
    assert "did not converge" in h.reasons["area"]


def test_a_negative_density_is_refused() -> None:
    """g_θθ = r²(1 − c sin⁴θ) with c > 1 turns timelike near the equator: no area."""
    bad = SEED_LINE_ELEMENT.replace("(dtheta**2 + ", "((1 - 2*sin(theta)**4)*dtheta**2 + ")
    source = SEED_ENTRY.replace(SEED_LINE_ELEMENT, bad).replace(
        "matter:\n  kind: vacuum", "matter:\n  kind: unspecified")
    family = path_of("schwarzschild").parent
    other = load_text(source, "schwarzschild.yaml", family / "schwarzschild.yaml",
                      vocabulary(CATALOG), True)
    [h] = data_for(other).horizons
    assert h.area_method == "" and h.area is None
    assert "not real and positive" in h.reasons["area"]


# ---------------------------------------------------------------------------- claims at a root


def with_claims(entry_id: str, claims: str) -> LoadResult:
    """The shipped entry with ``claims`` (one-line YAML claims at claim indentation) added,
    replacing a shipped claim of the same name."""
    path = path_of(entry_id)
    names = {line.split(":")[0] for line in claims.splitlines()}
    text = "\n".join(line for line in path.read_text(encoding="utf-8").splitlines()
                     if line.split(":")[0] not in names) + "\n"
    assert "claims:\n" in text
    text = text.replace("claims:\n", "claims:\n" + claims, 1)
    result = load_text(text, path.name, path, vocabulary(CATALOG), True)
    assert result.entry is not None, result.diagnostics
    return result


def verdicts_of(entry_id: str, claims: dict[str, str]):
    from generator.physics.physical import check_physical_claims

    text = "".join(f"  {name}: {{value: '{value}', source: computed-here}}\n"
                   for name, value in claims.items())
    result = with_claims(entry_id, text)
    verdicts, problems = check_physical_claims(result.entry, result.spacetime,
                                               data_of(entry_id))
    return {v.subject.split(".", 1)[1]: v for v in verdicts}, problems


# Claims in the root (r stands for r_h; the location as its defining relation). Sources:
# f'(r_h)/2 for static horizons and A = 4π r_h² (common practice); Kerr–de Sitter with
# Δ_r = (r² + a²)(1 − Λr²/3) − 2Mr and Ξ = 1 + Λa²/3, in this entry's normalisation (t not
# rescaled, φ scaled by Ξ): κ = Δ_r'(r₊)/(2(r₊² + a²)) and Ω_H = aΞ/(r₊² + a²) (common
# practice: χ = ∂_t + Ω_H ∂_φ null on Δ_r = 0), A = 4π(r₊² + a²)/Ξ (G. W. Gibbons and
# S. W. Hawking, Phys. Rev. D 15, 2738 (1977) — from memory).
ROOT_CLAIMS = {
    "schwarzschild-de-sitter": {
        "horizon_location": "Lambda*r**3 - 3*r + 6*M",
        "surface_gravity": "M/r**2 - Lambda*r/3",
        "horizon_area": "4*pi*r**2",
    },
    "reissner-nordstrom-de-sitter": {
        "horizon_location": "1 - 2*M/r + Q**2/r**2 - Lambda*r**2/3",
        "surface_gravity": "M/r**2 - Q**2/r**3 - Lambda*r/3",
        "horizon_area": "4*pi*r**2",
    },
    "schwarzschild-anti-de-sitter": {
        "horizon_location": "r**3 + ell**2*r - 2*M*ell**2",
        "surface_gravity": "M/r**2 + r/ell**2",
        "horizon_area": "4*pi*r**2",
    },
    "kerr-de-sitter": {
        "horizon_location": "(r**2 + a**2)*(1 - Lambda*r**2/3) - 2*M*r",
        "surface_gravity": ("(2*r*(1 - Lambda*r**2/3) - 2*Lambda*r*(r**2 + a**2)/3 - 2*M)"
                            "/(2*(r**2 + a**2))"),
        "horizon_area": "4*pi*(r**2 + a**2)/(1 + Lambda*a**2/3)",
        "horizon_angular_velocity": "a*(1 + Lambda*a**2/3)/(r**2 + a**2)",
    },
}


@pytest.mark.parametrize("entry_id", sorted(ROOT_CLAIMS))
def test_claims_in_the_root_verify_exactly(entry_id: str) -> None:
    """Each claim holds in the root's extension field (the relation exactly; κ and A exactly
    or, where the computed value keeps a square root, by exact squares and the sign at the
    sample root)."""
    verdicts, problems = verdicts_of(entry_id, ROOT_CLAIMS[entry_id])
    assert not problems, [p.message for p in problems]
    # every claim passes, the shipped ones kept beside these (the entry may claim more)
    assert all(v.ok for v in verdicts.values()) and set(ROOT_CLAIMS[entry_id]) <= set(verdicts)
    assert verdicts["horizon_location"].method == "exact"
    assert "h_root a root of" in verdicts["surface_gravity"].computed


def mutants(value: str, coordinate: str = "r") -> list[str]:
    return [f"({value})*8/7", f"({value}) + 1/(M**2 + 3)", f"-({value})",
            f"({value})*{coordinate}/(M + {coordinate})"]


@pytest.mark.parametrize("entry_id", sorted(ROOT_CLAIMS))
def test_mutated_claims_in_the_root_are_rejected(entry_id: str) -> None:
    """Scaled, shifted, sign-flipped and r-dependent copies of every root claim fail (for the
    location, a relation, only the shifted copy: its multiples are the same relation)."""
    for name, value in ROOT_CLAIMS[entry_id].items():
        # a multiple of the relation (by a number or by r/(M + r)) vanishes at the same
        # root: it is the same relation, rightly accepted; shifted copies are not
        wrongs = [f"({value}) + 1/(M**2 + 3)", f"({value}) + r"] \
            if name == "horizon_location" else mutants(value)
        for wrong in wrongs:
            verdicts, problems = verdicts_of(entry_id, {name: wrong})
            assert not verdicts[name].ok, (name, wrong)
            assert any(p.code == f"claim.{name}" for p in problems)


def test_a_constant_or_zero_location_is_not_a_relation() -> None:
    """A closed-form number (there is none) or 0 is refused as a location at a root."""
    for wrong in ("2*M", "0", "r - r"):
        verdicts, _ = verdicts_of("schwarzschild-de-sitter", {"horizon_location": wrong})
        assert not verdicts["horizon_location"].ok, wrong


def test_the_cosmological_branch_is_not_accepted_for_the_event_horizon() -> None:
    """κ = −f'(r)/2 is the cosmological horizon's surface gravity: equal squares, wrong sign at
    the event horizon's root, so the claim on the principal (event) horizon fails."""
    verdicts, _ = verdicts_of("kerr-de-sitter", {"surface_gravity": "-(" + ROOT_CLAIMS[
        "kerr-de-sitter"]["surface_gravity"] + ")"})
    assert not verdicts["surface_gravity"].ok
    # κ is now rational in the root (its square root is found exactly), so the difference
    # is decided in the root's field; with κ under a square root it is the sign at the root
    verdict = verdicts["surface_gravity"]
    assert verdict.method == "exact" or "opposite signs" in verdict.detail


# ---------------------------------------------------------------------------- ISCO


def test_reissner_nordstrom_isco_is_the_root_of_the_published_cubic() -> None:
    """The marginally stable circular orbit of Reissner–Nordström solves
    M r³ − 6M² r² + 9M Q² r − 4Q⁴ = 0 (S. Chandrasekhar, The Mathematical Theory of Black
    Holes, 1983, ch. 5 §40; D. Pugliese, H. Quevedo and R. Ruffini, Phys. Rev. D 83, 104052
    (2011) — both from memory): the ISCO is kept as the generator h_root of that cubic, and
    a claim of the cubic verifies while a wrong coefficient fails."""
    data = data_of("reissner-nordstrom")
    st = loaded("reissner-nordstrom").spacetime
    M, Q = st.symbols["M"], st.symbols["Q"]
    assert data.isco == H
    coordinate, polynomial, numeric = data.orbit_roots["isco"]
    assert coordinate == "r"
    published = M * H**3 - 6 * M**2 * H**2 + 9 * M * Q**2 * H - 4 * Q**4
    assert sp.simplify(sp.cancel(polynomial / published)).is_number
    point = entry_points(st, 1)[0]
    with mpmath.workdps(30):
        value = mpmath.mpf(numeric)
        residual = published.xreplace({M: point[M], Q: point[Q]}).xreplace(
            {H: sp.Rational(str(value))})
        assert abs(sp.N(residual, 30)) < 1e-15
    good = "M*r**3 - 6*M**2*r**2 + 9*M*Q**2*r - 4*Q**4"
    verdicts, problems = verdicts_of("reissner-nordstrom", {"isco": good})
    assert verdicts["isco"].ok and not problems
    verdicts, problems = verdicts_of("reissner-nordstrom",
                                     {"isco": good.replace("9*M*Q", "8*M*Q")})
    assert not verdicts["isco"].ok and problems


def test_the_isco_cubic_gives_six_m_and_extremal_four_m() -> None:
    """The same code path at Q = 0 gives 6M (Schwarzschild; common practice) and at Q = M
    the extremal value 4M (from memory: the extremal Reissner–Nordström ISCO is 4M)."""
    from generator.physics.orbits import photon_sphere_and_isco

    st = loaded("reissner-nordstrom").spacetime
    M, Q = st.symbols["M"], st.symbols["Q"]
    point = dict(entry_points(st, 1)[0])
    for charge, expected in ((sp.Rational(1, 10**12), 6), (sp.Integer(1), 4)):
        point[M], point[Q] = sp.Integer(1), charge
        orbits = photon_sphere_and_isco(st, (), [point])
        value = orbits.isco if orbits.isco != H else sp.Float(orbits.roots["isco"].numeric, 20)
        assert abs(float(value.xreplace({M: 1, Q: charge})) - expected) < 1e-5


def test_schwarzschild_still_has_exact_three_and_six_m() -> None:
    """3M and 6M (common practice; e.g. R. M. Wald, General Relativity, 1984, §6.3 — from
    memory), exact, no root generator."""
    data = data_of("schwarzschild")
    M = loaded("schwarzschild").spacetime.symbols["M"]
    assert data.photon_sphere == 3 * M and data.isco == 6 * M and not data.orbit_roots


def test_schwarzschild_de_sitter_isco_is_the_inner_marginal_orbit() -> None:
    """Marginally stable orbits of Schwarzschild–de Sitter solve 4Λr⁴ − 15ΛMr³ − 3Mr + 18M²
    = 0 (Z. Stuchlík and S. Hledík, Some properties of the Schwarzschild–de Sitter and
    Schwarzschild–anti-de Sitter spacetimes, Phys. Rev. D 60, 044006 (1999) — from memory);
    for small ΛM² there are two in the static region, and the ISCO is the inner one, near
    6M; at the entry's own sample parameters (ΛM² ≈ 10⁻³) there is none and it says so."""
    from generator.physics.orbits import photon_sphere_and_isco

    st = loaded("schwarzschild-de-sitter").spacetime
    M, lam = st.symbols["M"], st.symbols["Lambda"]
    assert data_of("schwarzschild-de-sitter").isco is None
    assert "no innermost" in data_of("schwarzschild-de-sitter").reasons["isco"]
    point = dict(entry_points(st, 1)[0])
    point[M], point[lam] = sp.Integer(1), sp.Rational(1, 10**6)
    orbits = photon_sphere_and_isco(st, (), [point])
    assert orbits.isco == H
    root = orbits.roots["isco"]
    published = 4 * lam * H**4 - 15 * lam * M * H**3 - 3 * M * H + 18 * M**2
    assert sp.simplify(sp.cancel(root.polynomial / published)).is_number
    assert 6 < float(root.numeric) < 6.01
