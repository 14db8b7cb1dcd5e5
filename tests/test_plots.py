"""Plots: deterministic SVG, honest labels, samples only inside the entry's domain.

Reference values: the Schwarzschild Kretschmann scalar 48 M^2 / r^6 (from memory; e.g.
Henry, Astrophys. J. 535, 350 (2000), eq. 1) evaluated independently with mpmath.
"""

from __future__ import annotations

import xml.etree.ElementTree as ET
from dataclasses import replace
from pathlib import Path

import mpmath
import numpy
import sympy
from _site_demo import load_demo

from generator.site import plots

ROOTS = Path(__file__).parent / "roots"


demo = load_demo()


def test_radial_entries_get_invariant_and_metric_function_plots() -> None:
    figures = plots.entry_plots(demo.lantern_report())
    assert [f.file_name for f in figures] == ["invariants.svg", "metric-functions.svg"]
    for figure in figures:
        root = ET.fromstring(figure.svg)
        assert root.tag.endswith("svg")
        text = "".join(root.itertext())
        assert "G = c = 1" in text
        assert "m = 1" in text and "q = 1/2" in text  # parameter values on the plot
        assert "m = 1" in figure.alt and figure.caption


def test_parameter_values_respect_the_domain() -> None:
    report = demo.lantern_report()
    values = plots.parameter_values(report)
    m, q = report.spacetime.parameters
    assert values[q] < values[m]  # domain says q < m


def test_plots_are_byte_identical_across_runs_and_carry_no_date() -> None:
    first = plots.entry_plots(demo.lantern_report())
    second = plots.entry_plots(demo.lantern_report())
    assert [f.svg for f in first] == [f.svg for f in second]
    assert all("<dc:date>" not in f.svg for f in first)


def test_entries_without_a_radial_coordinate_get_no_plots() -> None:
    assert plots.entry_plots(demo.tide_report()) == ()


def test_samples_outside_the_domain_are_dropped_and_inside_match_mpmath() -> None:
    report = demo.lantern_report()
    r = report.spacetime.coordinates[1]
    m = report.spacetime.parameters[0]
    schwarzschild_like = replace(report, spacetime=replace(
        report.spacetime, parameters=(m,), domain=(sympy.StrictGreaterThan(r, 2 * m),)))
    setting = plots.plot_setting(schwarzschild_like, "r")
    values = plots.sample(48 * m**2 / r**6, setting, schwarzschild_like.spacetime)
    assert values is not None
    radius = numpy.linspace(setting.low, setting.high, plots.SAMPLE_COUNT)[1:]
    outside = radius <= 2.0
    assert numpy.isnan(values[outside]).all()
    for x, y in zip(radius[~outside], values[~outside], strict=True):
        expected = mpmath.mpf(48) / mpmath.mpf(float(x)) ** 6
        assert abs(y - float(expected)) <= 1e-12 * float(expected)


def test_expressions_with_free_functions_are_not_sampled() -> None:
    report = demo.lantern_report()
    setting = plots.plot_setting(report, "r")
    unknown = sympy.Function("h")(report.spacetime.coordinates[1])
    assert plots.sample(unknown, setting, report.spacetime) is None


def test_cosmologies_get_a_scale_factor_plot_along_time() -> None:
    """Einstein–de Sitter: a(t) proportional to t^(2/3) (from memory; e.g. Carroll, Spacetime
    and Geometry, 2004, sec. 8.3), written out in the metric so it can be plotted."""
    report = demo.tide_report()
    t = report.spacetime.coordinates[0]
    g = sympy.diag(-1, *(3 * [t ** sympy.Rational(4, 3)]))
    eds = replace(report, spacetime=replace(report.spacetime, metric=sympy.ImmutableMatrix(g),
                                            functions=(), domain=(sympy.StrictGreaterThan(t, 0),)))
    figures = plots.entry_plots(eds)
    assert [f.file_name for f in figures] == ["scale-factors.svg"]
    assert "sqrt(g_xx)" in figures[0].alt  # the three equal factors are drawn once
    assert "sqrt(g_yy)" not in figures[0].alt
    setting = plots.plot_setting(eds, "t")
    values = plots.sample(sympy.sqrt(g[1, 1]), setting, eds.spacetime)
    times = numpy.linspace(setting.low, setting.high, plots.SAMPLE_COUNT)[1:]
    expected = [float(mpmath.power(mpmath.mpf(float(x)), mpmath.mpf(2) / 3)) for x in times]
    assert numpy.allclose(values, expected, rtol=1e-12)


def test_no_plot_when_no_sample_values_satisfy_the_domain() -> None:
    report = demo.lantern_report()
    m = report.spacetime.parameters[0]
    impossible = replace(report, spacetime=replace(
        report.spacetime, domain=(sympy.StrictLessThan(m, 0),)))
    assert plots.entry_plots(impossible) == ()


def test_domain_that_fails_for_the_parameters_masks_every_radius() -> None:
    # Found building the real catalog: an inequality can become False (or True) once the
    # parameter values are substituted; the mask must say so instead of crashing.
    from generator.model import Spacetime

    r, m = sympy.Symbol("r", real=True), sympy.Symbol("m", positive=True)
    never = sympy.StrictLessThan(r**2 + m, 0, evaluate=False)  # as the parser builds them
    always = sympy.StrictGreaterThan(r**2 + m, 0, evaluate=False)
    st = Spacetime((r,), (m,), (), sympy.ImmutableMatrix([[1]]), "+", 1, (always,))
    setting = plots.PlotSetting(r, {m: 1}, 0.5, 2.0, (m,))
    radius = numpy.linspace(0.5, 2.0, 5)
    assert plots.domain_mask(st, setting, radius).all()
    st_never = replace(st, domain=(never,))
    assert not plots.domain_mask(st_never, setting, radius).any()


def test_alt_text_says_what_a_zero_of_g_tt_means() -> None:
    """−g_tt = 0 is where ∂_t turns null: a horizon only in static charts, the static limit
    (ergosurface) in rotating ones (e.g. Wald, General Relativity, 1984, §12.3; from memory)."""
    metric = next(f for f in plots.entry_plots(demo.lantern_report())
                  if f.file_name == "metric-functions.svg")
    assert "horizons show where" not in metric.alt
    assert "static limit" in metric.alt and "−g_tt" in metric.alt
    assert "$" not in metric.alt and "\\" not in metric.alt


def test_labels_are_typeset_and_vacuum_shows_one_panel_for_two_equal_invariants() -> None:
    """In vacuum R_ab = 0, so C_abcd C^abcd = R_abcd R^abcd (common practice)."""
    report = demo.lantern_report()
    assert report.classification is not None
    vacuum = replace(report, classification=replace(report.classification,
                                                     matter_kind="vacuum"))
    (both,) = [f for f in plots.entry_plots(vacuum) if f.file_name == "invariants.svg"]
    assert "Weyl square" not in both.alt.split(" (equal to the Weyl square)")[0]
    assert "equal to the Weyl square" in both.alt
    (other,) = [f for f in plots.entry_plots(report) if f.file_name == "invariants.svg"]
    assert other.svg.count("<g id=\"axes_") > both.svg.count("<g id=\"axes_")
    assert "R_abcd" not in "".join(ET.fromstring(other.svg).itertext())
