"""Horizon kinds and readable horizon data: the C-metric's acceleration horizon is not called
cosmological, and a long surface gravity at an algebraic root is shown with the mass
eliminated by the root's polynomial (in terms of r₊). Sources beside each check."""

from __future__ import annotations

import mpmath
import pytest
import sympy as sp

from generator.geometry.sampling import entry_points
from generator.physics.horizons import H, HorizonAlgebra, reaches_conformal_infinity
from generator.physics.root_elimination import eliminate_parameter
from generator.physics.rootclaims import numeric_at_root
from tests._shipped_entries import data_of, loaded


def kinds(entry_id: str) -> list[str]:
    return [h.kind for h in data_of(entry_id).horizons]


# ---------------------------------------------------------------------------- kinds


@pytest.mark.parametrize("entry_id", ["c-metric", "charged-c-metric"])
def test_the_c_metric_has_an_acceleration_horizon_not_a_cosmological_one(entry_id: str) -> None:
    """The C-metric's outer root of F(y) near y = 1 is the acceleration horizon, which reaches
    conformal infinity x + y = 0 at the axis (W. Kinnersley and M. Walker, Uniformly
    accelerating charged mass in general relativity, Phys. Rev. D 2, 1359 (1970); J. B.
    Griffiths and J. Podolský, Exact Space-Times, 2009, ch. 14 — from memory)."""
    found = kinds(entry_id)
    assert "acceleration" in found and "cosmological" not in found and "event" in found
    horizon = next(h for h in data_of(entry_id).horizons if h.kind == "acceleration")
    assert horizon.area is None and "conformal infinity" in horizon.reasons["area"]


def test_only_the_horizon_reaching_infinity_is_so_detected() -> None:
    """The C-metric's black-hole horizon is compact (x + y ≠ 0 on it); the de Sitter-type
    horizons of Schwarzschild–de Sitter and Kiselev's quintessence stay cosmological (their
    cross-section is a round sphere; common practice)."""
    st = loaded("c-metric").spacetime
    point = entry_points(st, 1)[0]
    event = next(h for h in data_of("c-metric").horizons if h.kind == "event")
    assert not reaches_conformal_infinity(st, event, point)
    for entry_id in ("schwarzschild-de-sitter", "kiselev-quintessence", "de-sitter-static"):
        assert "cosmological" in kinds(entry_id) and "acceleration" not in kinds(entry_id)


# ---------------------------------------------------------------------------- κ in terms of r₊


def test_eliminating_the_mass_gives_the_schwarzschild_de_sitter_kappa_in_r_plus() -> None:
    """With M = r(1 − Λr²/3)/2 at a root of f, κ = M/r² − Λr/3 becomes (1 − Λr²)/(2r)
    (common practice: f'(r_h)/2 with f(r_h) = 0). A wrong value (the other parameter Λ kept
    and M replaced by 0) would not equal κ² at the root."""
    st = loaded("schwarzschild-de-sitter").spacetime
    event = next(h for h in data_of("schwarzschild-de-sitter").horizons if h.kind == "event")
    algebra = HorizonAlgebra(st, 1, event.polynomial, entry_points(st, 3))
    square = algebra.kappa_squared
    found = eliminate_parameter(algebra.rf, st, square) or _forced(algebra, st, square)
    lam, m = st.symbols["Lambda"], st.symbols["M"]
    shown = algebra.rf.field.display(found.result)
    assert sp.simplify(shown - ((1 - lam * H**2) / (2 * H)) ** 2) == 0
    assert found.parameter in (m, lam)
    assert algebra.rf.equal_at_root(found.result, square)
    wrong = algebra.rf.field.sub(found.result, algebra.rf.field.const(1))
    assert not algebra.rf.equal_at_root(wrong, square)


def _forced(algebra: HorizonAlgebra, st, square):
    """The elimination of M even where it is not shorter (a small κ², as here)."""
    from generator.physics.root_elimination import _eliminated

    found = _eliminated(algebra.rf, st.symbols["M"], square)
    assert found is not None
    return found


@pytest.mark.slow
def test_kerr_ads_five_dimensions_kappa_is_shown_in_terms_of_r_plus() -> None:
    """Kerr–AdS in five dimensions: with 2M = (r₊² + a²)(r₊² + b²)(1 + r₊²/ℓ²)/r₊²,
    κ = r₊(1 + r₊²/ℓ²)(1/(r₊² + a²) + 1/(r₊² + b²)) − 1/r₊ (S. W. Hawking, C. J. Hunter and
    M. M. Taylor-Robinson, Rotation and the AdS/CFT correspondence, Phys. Rev. D 59, 064005
    (1999) — from memory). The long form reduced modulo the polynomial stays the computed
    κ; the short one is equal to it at the root."""
    st = loaded("kerr-anti-de-sitter-5d").spacetime
    a, b, ell, m = (st.symbols[n] for n in ("a", "b", "ell", "M"))
    event = next(h for h in data_of("kerr-anti-de-sitter-5d").horizons if h.kind == "event")
    assert event.in_root_parameter == "M"
    expected_m = (H**2 + a**2) * (H**2 + b**2) * (1 + H**2 / ell**2) / (2 * H**2)
    assert sp.simplify(event.in_root_value - expected_m) == 0
    expected = H * (1 + H**2 / ell**2) * (1 / (H**2 + a**2) + 1 / (H**2 + b**2)) - 1 / H
    assert sp.simplify(event.surface_gravity_in_root - expected) == 0
    assert sp.count_ops(event.surface_gravity_in_root) < sp.count_ops(event.surface_gravity) / 20
    # equal to the long form at the root of the first sample parameters, refined to 80
    # digits (the long form cancels many digits)
    long, short = (numeric_at_root(e, st, H, event.numeric_location, event.polynomial)
                   for e in (event.surface_gravity, event.surface_gravity_in_root))
    assert abs(long - short) < mpmath.mpf(10) ** -30 * abs(short)
    assert not event.surface_gravity_in_root.has(m)


def test_the_page_and_json_show_the_short_form() -> None:
    """The row shows κ in r₊ with a note naming the elimination; the JSON keeps both."""
    from dataclasses import replace

    from generator.site.physical_json import horizon_json
    from generator.site.physical_page import horizon_row

    st = loaded("schwarzschild-de-sitter").spacetime
    event = next(h for h in data_of("schwarzschild-de-sitter").horizons if h.kind == "event")
    lam = st.symbols["Lambda"]
    short = (1 - lam * H**2) / (2 * H)
    shown = replace(event, in_root_parameter="M", in_root_value=H * (1 - lam * H**2 / 3) / 2,
                    surface_gravity_in_root=short)
    rows = {r["label"]: r for r in horizon_row(shown, st.coordinates, {}, True)["rows"]}
    assert "M eliminated" in rows["surface gravity"]["note"]
    assert "Λ" in rows["temperature"]["text"] and "π" in rows["temperature"]["text"]
    data = horizon_json(shown)
    assert data["in_terms_of_root"]["eliminated"] == "M"
    assert data["surface_gravity"] == str(event.surface_gravity)
    assert horizon_json(event)["in_terms_of_root"] is None


# ---------------------------------------------------------------------------- Komar in 5D


def test_myers_perry_komar_mass_and_one_angular_momentum_per_plane() -> None:
    """Myers–Perry in five dimensions: M = 3πμ/8, J_φ = πμa/4 = 2Ma/3, J_ψ = πμb/4, with
    M = −(n−2)/(16π(n−3)) K(∂_t) and J = K(∂_φ)/16π (R. C. Myers and M. J. Perry, Black holes
    in higher dimensional space-times, Ann. Phys. 172, 304 (1986) — from memory). The single
    angular momentum is refused (two planes), never one of them passed off as the whole."""
    st = loaded("myers-perry-5d").spacetime
    mu, a, b = (st.symbols[n] for n in ("mu", "a", "b"))
    data = data_of("myers-perry-5d")
    assert sp.simplify(data.komar_mass - 3 * sp.pi * mu / 8) == 0
    assert data.komar_angular_momentum is None
    assert "2 rotation planes" in data.reasons["komar_angular_momentum"]
    spins = dict(data.komar_angular_momenta)
    assert set(spins) == {"phi", "psi"}
    assert sp.simplify(spins["phi"] - sp.pi * mu * a / 4) == 0
    assert sp.simplify(spins["psi"] - sp.pi * mu * b / 4) == 0
    assert sp.simplify(spins["phi"] - 2 * data.komar_mass * a / 3) == 0


def test_a_wrong_myers_perry_komar_mass_is_rejected() -> None:
    """Other normalisations are rejected: the four-dimensional −K(∂_t)/8π would give πμ/2
    (K(∂_t) = −4π²μ here; arithmetic from the normalisation above), and doubled or
    a third of the value are plain errors."""
    from generator.physics.physical import check_physical_claims
    from tests._shipped_entries import with_claims

    for wrong in ("pi*mu/2", "3*pi*mu/4", "pi*mu/8"):
        result = with_claims("myers-perry-5d",
                             f"  komar_mass: {{value: {wrong}, source: computed-here}}\n")
        verdicts, problems = check_physical_claims(result.entry, result.spacetime,
                                                   data_of("myers-perry-5d"))
        assert [v.ok for v in verdicts] == [False], wrong
        assert any(p.code == "claim.komar_mass" for p in problems)


def test_kerr_ads_five_dimensions_angular_momenta_converge_and_mass_is_refused() -> None:
    """Kerr–AdS₅ in this entry's normalisation (φ, ψ scaled by Ξ_a = 1 − a²/ℓ², Ξ_b):
    J_φ = πMa/(2Ξ_a²Ξ_b), J_ψ = πMb/(2Ξ_b²Ξ_a) (G. W. Gibbons, M. J. Perry and C. N. Pope, The
    first law of thermodynamics for Kerr–anti-de Sitter black holes, Class. Quantum Grav. 22,
    1503 (2005) — from memory); the Komar mass diverges with Λ ≠ 0 and is refused, not
    given (common practice: it needs a background subtraction)."""
    from generator.physics.komar import komar_angular_momenta, komar_charges

    st = loaded("kerr-anti-de-sitter-5d").spacetime
    m, a, b, ell = (st.symbols[n] for n in ("M", "a", "b", "ell"))
    points = entry_points(st, 3)
    mass, mass_why, spin, _ = komar_charges(st, points)
    assert mass is None and "grows" in mass_why and spin is None
    spins = dict(komar_angular_momenta(st, points))
    xi_a, xi_b = 1 - a**2 / ell**2, 1 - b**2 / ell**2
    assert sp.simplify(spins["phi"] - sp.pi * m * a / (2 * xi_a**2 * xi_b)) == 0
    assert sp.simplify(spins["psi"] - sp.pi * m * b / (2 * xi_b**2 * xi_a)) == 0
