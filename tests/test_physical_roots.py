"""Horizon areas where the root or the integral is awkward, claims in the root h_root, and
the ISCO as an algebraic root: exact where the algebra allows, numeric (and said so) where the
integral is not elementary. Sources beside each check; "from memory" where recalled.
"""

from __future__ import annotations

from functools import cache
from pathlib import Path

import mpmath
import pytest
import sympy as sp

from generator.entry.catalog import vocabulary
from generator.entry.loader import LoadResult, load_entry, load_text
from generator.geometry.curvature import compute_geometry
from generator.geometry.sampling import entry_points
from generator.model import Horizon, PhysicalData
from generator.physics.horizons import H
from generator.physics.physical import physical_data
from generator.site.physical_json import horizon_json
from tests._hostile import SEED_ENTRY, SEED_LINE_ELEMENT

CATALOG = Path(__file__).resolve().parent.parent / "catalog"


def path_of(entry_id: str) -> Path:
    return next(CATALOG.glob(f"*/{entry_id}.yaml"))


@cache
def loaded(entry_id: str) -> LoadResult:
    path = path_of(entry_id)
    result = load_entry(path, path.name, vocabulary(CATALOG))
    assert result.ok, result.diagnostics
    return result


def data_for(load: LoadResult) -> PhysicalData:
    return physical_data(load.spacetime, compute_geometry(load.spacetime), None)


@cache
def data_of(entry_id: str) -> PhysicalData:
    return data_for(loaded(entry_id))


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
