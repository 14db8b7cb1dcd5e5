"""Plots of rotating entries show the rotation: the equatorial and the axis profile, the
horizons and the ergosurface marked, typeset labels and alt text that says what is drawn.

Reference values (evaluated independently here with mpmath):
- Kerr's Kretschmann scalar on the equator is Schwarzschild's 48M²/r⁶, and on the axis
  θ = 0 it is 48M²(r⁶ − 15a²r⁴ + 15a⁴r² − a⁶)/(r² + a²)⁶ (both special cases of the
  closed form in C. Cherubini, D. Bini, S. Capozziello and R. Ruffini, Second order scalar
  invariants of the Riemann tensor: applications to black hole spacetimes, Int. J. Mod.
  Phys. D 11, 827 (2002) — from memory);
- horizons r± = M ± √(M² − a²) and the equatorial ergosurface r = 2M (common practice).
"""

from __future__ import annotations

import xml.etree.ElementTree as ET
from functools import cache
from pathlib import Path

import mpmath
import numpy
import sympy

from generator.entry.catalog import vocabulary
from generator.entry.loader import load_entry
from generator.geometry.curvature import compute_geometry
from generator.model import Classification, EntryReport
from generator.physics.physical import physical_data
from generator.site import plots

CATALOG = Path(__file__).resolve().parent.parent / "catalog"


@cache
def report_of(entry_id: str) -> EntryReport:
    """The parts of a report that plots read: geometry and physical data (the other physics is
    not needed for a figure)."""
    path = next(CATALOG.glob(f"*/{entry_id}.yaml"))
    load = load_entry(path, path.name, vocabulary(CATALOG))
    st = load.spacetime
    geometry = compute_geometry(st)
    classification = Classification(
        matter_kind="vacuum", cosmological_constant=None, stress_energy_mixed=None,
        hawking_ellis_type=None, energy_density=None, principal_pressures=None,
        energy_conditions=(), petrov_type=None, weyl_scalars=None,
        killing_vectors_checked=(), related_checked=(), geodesic_equations=(),
        physical=physical_data(st, geometry, None))
    return EntryReport(load.entry, load.file, st, geometry, classification, (), ())


def figure(entry_id: str, name: str) -> plots.Plot:
    return next(f for f in plots.entry_plots(report_of(entry_id)) if f.file_name == name)


def test_kerr_invariants_show_the_equator_and_the_axis() -> None:
    plot = figure("kerr-boyer-lindquist", "invariants.svg")
    assert "on the equator θ = π/2 and on the axis θ = 0" in plot.alt
    text = "".join(ET.fromstring(plot.svg).itertext())
    assert "θ" in text and "π" in text  # the typeset legend (mathtext keeps glyphs apart)
    assert "theta" not in text
    assert "$" not in plot.alt and "\\" not in plot.alt


def test_kerr_profiles_match_the_published_kretschmann_scalar() -> None:
    """The sampled equatorial profile is 48M²/r⁶ and the axis profile the published axis
    formula; the two differ (so the figure shows the rotation)."""
    report = report_of("kerr-boyer-lindquist")
    setting = plots.plot_setting(report, "r")
    lines = plots.profiles(report, setting, [report.geometry.kretschmann])
    assert [line.words for line in lines] == ["on the equator θ = π/2", "on the axis θ = 0"]
    st = report.spacetime
    M, a = (setting.values[st.symbols[n]] for n in ("M", "a"))
    radius = numpy.linspace(setting.low, setting.high, plots.SAMPLE_COUNT)[1:]
    equator = plots.sample(report.geometry.kretschmann, lines[0].setting, st)
    axis = plots.sample(report.geometry.kretschmann, lines[1].setting, st)
    m, s = mpmath.mpf(sympy.Rational(M).p) / sympy.Rational(M).q, \
        mpmath.mpf(sympy.Rational(a).p) / sympy.Rational(a).q
    checked = 0
    for r, eq, ax in zip(radius, equator, axis, strict=True):
        if not (numpy.isfinite(eq) and numpy.isfinite(ax)):
            continue
        r = mpmath.mpf(float(r))
        expected_eq = 48 * m**2 / r**6
        expected_ax = 48 * m**2 * (r**6 - 15 * s**2 * r**4 + 15 * s**4 * r**2 - s**6) / (
            r**2 + s**2) ** 6
        assert abs(eq - expected_eq) <= 1e-9 * abs(expected_eq)
        assert abs(ax - expected_ax) <= 1e-9 * max(abs(expected_ax), 1e-12)
        checked += 1
    assert checked > 100
    assert numpy.nanmax(numpy.abs(equator - axis)) > 1e-3


def test_kerr_marks_both_horizons_and_the_ergosurface() -> None:
    report = report_of("kerr-boyer-lindquist")
    setting = plots.plot_setting(report, "r")
    st = report.spacetime
    M, a = (float(setting.values[st.symbols[n]]) for n in ("M", "a"))
    marks = plots.horizon_marks(report, setting)
    assert numpy.allclose(marks, [M - (M**2 - a**2) ** 0.5, M + (M**2 - a**2) ** 0.5])
    assert abs(plots.ergosurface_mark(report, setting) - 2 * M) < 1e-12
    for name in ("invariants.svg", "metric-functions.svg"):
        plot = figure("kerr-boyer-lindquist", name)
        assert "dotted lines mark the horizons" in plot.alt.lower()
        assert "ergosurface on the equator at r ≈ 2" in plot.alt
        assert 'stroke-dasharray' in plot.svg


def test_static_entries_keep_one_profile_and_name_their_horizon() -> None:
    plot = figure("schwarzschild", "invariants.svg")
    assert "axis" not in plot.alt and "equator" not in plot.alt
    assert "The dotted line marks the horizon at r ≈ 2." in plot.alt
    assert plots.ergosurface_mark(report_of("schwarzschild"),
                                  plots.plot_setting(report_of("schwarzschild"), "r")) is None


def test_log_axes_are_typeset_not_e_notation() -> None:
    text = "".join(ET.fromstring(figure("schwarzschild", "invariants.svg").svg).itertext())
    assert "1e" not in text.replace("ergosurface", "")
