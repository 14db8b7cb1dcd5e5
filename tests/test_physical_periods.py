"""Declared periods of compact coordinates (top-level `periods`): a horizon cross-section is
integrated over an identified direction, so the area and entropy are totals; without the
declaration they stay per unit coordinate range. Sources beside each check."""

from __future__ import annotations

import pytest
import sympy as sp

from generator.entry.catalog import vocabulary
from generator.entry.loader import LoadResult, load_text
from generator.physics.physical import check_physical_claims
from tests._shipped_entries import CATALOG, data_for, data_of, path_of

PERIOD_PARAMETER = "  L: {assume: positive, meaning: period of the identified direction}\n"


def with_periods(entry_id: str, periods: str, claims: str = "") -> LoadResult:
    """The shipped entry with a parameter L, ``periods`` (one YAML line) and claims added."""
    path = path_of(entry_id)
    text = path.read_text(encoding="utf-8")
    text = text.replace("parameters:\n", "parameters:\n" + PERIOD_PARAMETER, 1)
    text = text.replace("domain:\n", periods + "domain:\n", 1)
    if claims:
        text = text.replace("claims:\n", "claims:\n" + claims, 1)
    return load_text(text, path.name, path, vocabulary(CATALOG), True)


def event(result: LoadResult):
    return next(h for h in data_for(result).horizons if h.kind == "event")


def test_a_black_string_with_period_l_has_total_area_16_pi_m2_l() -> None:
    """The black string Schwarzschild × R with z ~ z + L: A = 16πM² L (common practice: the
    area of the r = 2M sphere times the length of the circle)."""
    result = with_periods("schwarzschild-black-string", "periods: {z: L}\n")
    assert result.ok, result.diagnostics
    st = result.spacetime
    m, length = st.symbols["M"], st.symbols["L"]
    horizon = event(result)
    assert horizon.area_per == () and horizon.area_per_unit is None
    assert sp.simplify(horizon.area - 16 * sp.pi * m**2 * length) == 0
    assert sp.simplify(horizon.entropy - 4 * sp.pi * m**2 * length) == 0
    assert "declared period L" in horizon.how
    # without the declaration: per unit length, no total (as before)
    shipped = next(h for h in data_of("schwarzschild-black-string").horizons
                   if h.kind == "event")
    assert shipped.area is None and shipped.area_per == ("z",)


def test_a_planar_brane_made_a_torus_has_the_product_of_its_periods() -> None:
    """The planar AdS₅ black brane with x, y, z identified: A = (r₀/ℓ)³ L_x L_y L_z (common
    practice: the induced metric on the horizon is (r₀/ℓ)² times flat)."""
    result = with_periods("anti-de-sitter-black-brane-5d", "periods: {x: L, y: L, z: 2*L}\n")
    assert result.ok, result.diagnostics
    st = result.spacetime
    r0, ell, length = st.symbols["r0"], st.symbols["ell"], st.symbols["L"]
    assert sp.simplify(event(result).area - 2 * length**3 * r0**3 / ell**3) == 0


def test_a_claimed_total_area_verifies_and_the_per_unit_value_is_rejected() -> None:
    good = with_periods("schwarzschild-black-string", "periods: {z: L}\n",
                        "  horizon_area: {value: 16*pi*M**2*L, source: computed-here}\n")
    bad = with_periods("schwarzschild-black-string", "periods: {z: L}\n",
                       "  horizon_area: {value: 16*pi*M**2, source: computed-here}\n")
    ok, _ = check_physical_claims(good.entry, good.spacetime, data_for(good))
    wrong, problems = check_physical_claims(bad.entry, bad.spacetime, data_for(bad))
    assert [v.ok for v in ok] == [True]
    assert [v.ok for v in wrong] == [False] and problems


@pytest.mark.parametrize(("periods", "code"), [
    ("periods: {w: L}\n", "periods.coordinate"),
    ("periods: {z: L*r}\n", "periods.value"),
    ("periods: {z: -2}\n", "periods.value"),
])
def test_bad_periods_are_errors_at_the_key(periods: str, code: str) -> None:
    """A period of something that is not a coordinate, one that depends on the coordinates,
    or a non-positive number is refused with a diagnostic, never used."""
    result = with_periods("schwarzschild-black-string", periods)
    assert not result.ok
    assert any(d.code == code and d.severity == "error" for d in result.diagnostics), [
        (d.code, d.message) for d in result.diagnostics]
