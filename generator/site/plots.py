"""Plots for entry pages, drawn with matplotlib at build time as SVG.

Two figures where they carry the physics: the curvature invariants along the radial-type
coordinate (where singularities and asymptotic falloff are seen at a glance), and the metric
functions -g_tt and g_rr (horizons are where they vanish or blow up). Parameters are set to
stated sample values that satisfy the entry's domain, and every figure says which.

SVG output is made deterministic: a fixed ``svg.hashsalt``, no date in the metadata, text kept
as text (``svg.fonttype = none``), and matplotlib's global state is only touched inside an
``rc_context``.
"""

from __future__ import annotations

import hashlib
import io
import re
from collections.abc import Iterator, Sequence
from contextlib import contextmanager
from dataclasses import dataclass, replace
from typing import Any

import matplotlib
import numpy
import sympy
from matplotlib.figure import Figure
from matplotlib.ticker import LogFormatterSciNotation, NullFormatter

from generator.model import EntryReport, Spacetime
from generator.site.mathtex import ANGLE_NAMES, TIME_NAMES, radial_coordinate
from generator.versions import library_versions

SAMPLE_COUNT = 241
SVG_SETTINGS = {
    "svg.hashsalt": "metric-almanac",
    "svg.fonttype": "none",
    "font.family": "sans-serif",
    "font.size": 9.0,
    "axes.grid": True,
    "grid.alpha": 0.3,
    "path.simplify": False,
    "axes.formatter.use_mathtext": True,  # 10⁻¹ on log axes, not 1e−01
}
INVARIANT_LABELS = (  # key, axis label (mathtext), name in alt text
    ("ricci_scalar", r"Ricci scalar $R$", "Ricci scalar"),
    ("kretschmann", r"Kretschmann $R_{abcd}R^{abcd}$", "Kretschmann scalar"),
    ("ricci_squared", r"Ricci square $R_{ab}R^{ab}$", "Ricci square"),
    ("weyl_squared", r"Weyl square $C_{abcd}C^{abcd}$", "Weyl square"),
)
_READABLE = {"theta": "θ", "phi": "φ", "pi": "π", "chi": "χ", "rho": "ρ", "tau": "τ",
             "Lambda": "Λ", "ell": "ℓ", "mu": "μ", "sigma": "σ", "eta": "η", "xi": "ξ"}


def readable(text: str) -> str:
    """``theta = pi/2`` as a reader writes it: ``θ = π/2``."""
    return re.sub(r"\b(" + "|".join(_READABLE) + r")\b", lambda m: _READABLE[m.group(1)], text)


def axis_label(setting: PlotSetting) -> str:
    """``r/M`` when the plot's mass scale M is set to 1 (the axis is then in units of M)."""
    r = readable(str(setting.radial))
    mass = next((s for s in setting.values if str(s) == "M"), None)
    if mass is not None and setting.values[mass] == 1:
        return f"{r}/M   (G = c = 1)"
    return f"{r}   (G = c = 1)"
SAMPLE_BY_ASSUMPTION = {
    "positive": sympy.Integer(1),
    "nonnegative": sympy.Rational(1, 2),
    "negative": sympy.Integer(-1),
    "nonzero": sympy.Integer(1),
    "real": sympy.Rational(1, 2),
}


@dataclass(frozen=True)
class Plot:
    """One finished figure: SVG text, file name, alt text and a caption naming the values."""

    file_name: str
    svg: str
    alt: str
    caption: str


# ---------------------------------------------------------------------------- kept figures

FIGURE_LIBRARIES = ("matplotlib", "numpy")  # what draws them (SymPy is in figures_key)
_UNTITLED = "\x00entry title\x00"  # stands for the title in kept figures' alt text
_kept: list[Any] = []  # the shelf figures are kept on while a build renders, if any


def keep_figures_on(shelf: Any) -> None:
    """Keep figures on ``shelf`` (``get(key, kind)``/``put(key, value)``, the build's view
    shelf) from now on in this process; None: draw every time."""
    _kept[:] = [] if shelf is None else [shelf]


@contextmanager
def figures_kept_on(shelf: Any) -> Iterator[None]:
    keep_figures_on(shelf)
    try:
        yield
    finally:
        keep_figures_on(None)


def kept_figures_key(report: EntryReport) -> str | None:
    """The shelf key of an entry's figures: what they are drawn from (``report.figures_key``:
    the entry's file without its title, the generator, the computing libraries) and the
    drawing libraries' versions. None for a report made outside the pipeline."""
    if not report.figures_key:
        return None
    parts = ("figures-1", report.figures_key, library_versions(FIGURE_LIBRARIES))
    return hashlib.sha256("\0".join(parts).encode()).hexdigest()


def entry_plots(report: EntryReport) -> tuple[Plot, ...]:
    """``drawn_plots``, or the same figures kept from an earlier build of the same
    mathematics: drawing is most of the time of an entry's view, and a retitled entry (or
    one whose neighbour was retitled) gets its view made again. Kept figures are drawn with
    a stand-in for the title, which is put into their alt text and captions here."""
    shelf = _kept[0] if _kept else None
    key = kept_figures_key(report) if shelf is not None else None
    if key is None or report.entry is None:
        return drawn_plots(report)
    found = shelf.get(key, tuple)
    if found is None or not all(isinstance(p, Plot) for p in found):
        found = drawn_plots(replace(report, entry=replace(report.entry, title=_UNTITLED)))
        if any(_UNTITLED in p.svg or _UNTITLED in p.file_name for p in found):
            return drawn_plots(report)  # the title is drawn: nothing to keep
        shelf.put(key, found)
    title = report.entry.title
    return tuple(replace(p, alt=p.alt.replace(_UNTITLED, title),
                         caption=p.caption.replace(_UNTITLED, title)) for p in found)


def drawn_plots(report: EntryReport) -> tuple[Plot, ...]:
    """The figures for one entry: invariants and metric functions along a radial coordinate,
    else the scale factors along time; none when no parameter values satisfy the domain."""
    st, entry = report.spacetime, report.entry
    if st is None or entry is None or report.geometry is None:
        return ()
    names = [str(c) for c in st.coordinates]
    along = radial_coordinate(names) or next((n for n in names if n in TIME_NAMES), None)
    if along is None:
        return ()
    setting = plot_setting(report, along)
    if setting is None:
        return ()
    with matplotlib.rc_context(SVG_SETTINGS):
        if along in TIME_NAMES:
            figures = [scale_factor_plot(report, setting)]
        else:
            figures = [invariants_plot(report, setting), metric_functions_plot(report, setting)]
    return tuple(f for f in figures if f is not None)


@dataclass(frozen=True)
class PlotSetting:
    """Where a plot samples: radial symbol and range, values of everything else."""

    radial: sympy.Symbol
    values: dict[sympy.Symbol, sympy.Expr]  # parameters and other coordinates
    low: float
    high: float
    parameters: tuple[sympy.Symbol, ...]


def describe_values(setting: PlotSetting, plotted: Sequence[sympy.Expr]) -> str:
    """``M = 1, a = 1/2, theta = pi/2``: every parameter, and the other coordinates only
    where a plotted expression depends on them."""
    used = set().union(*(e.free_symbols for e in plotted)) if plotted else set()
    shown = [s for s in setting.values if s in setting.parameters or s in used]
    return ", ".join(f"{s} = {setting.values[s]}" for s in sorted(shown, key=str))


def parameter_values(report: EntryReport) -> dict[sympy.Symbol, sympy.Expr] | None:
    """Simple exact sample values from each parameter's assumption, nudged into the domain;
    None when no candidate satisfies it (then nothing is plotted rather than a non-solution)."""
    st, entry = report.spacetime, report.entry
    assert st is not None and entry is not None
    by_name = {p.name: p.assume for p in entry.parameters}
    values = {s: SAMPLE_BY_ASSUMPTION.get(by_name.get(str(s), "real"), sympy.Rational(1, 2))
              for s in st.parameters}
    for trial in _candidate_values(st.parameters, values):
        if domain_holds_for_parameters(st, trial):
            return trial
    return None


def _candidate_values(
    parameters: Sequence[sympy.Symbol], values: dict[sympy.Symbol, sympy.Expr]
) -> list[dict[sympy.Symbol, sympy.Expr]]:
    """The plain values first, then the later parameters made smaller than the first (the
    first parameter is usually the mass that sets the scale: ``a < M``, ``Q**2 < M**2``)."""
    candidates = [values]
    for scale in (sympy.Rational(1, 2), sympy.Rational(1, 4), sympy.Rational(1, 10)):
        candidates.append({s: v * scale if k else v for k, (s, v) in enumerate(
            (p, values[p]) for p in parameters)})
    return candidates


def _relations(st: Spacetime) -> list[sympy.Basic]:
    out: list[sympy.Basic] = []
    for relation in st.domain:
        out.extend(relation.args if isinstance(relation, sympy.And) else (relation,))
    return out


def domain_holds_for_parameters(st: Spacetime, values: dict[sympy.Symbol, sympy.Expr]) -> bool:
    """True when every domain inequality that involves only parameters holds."""
    coords = set(st.coordinates)
    for relation in _relations(st):
        if relation.free_symbols & coords:
            continue
        if relation.subs(values) is not sympy.true:
            return False
    return True


def plot_setting(report: EntryReport, radial_name: str) -> PlotSetting | None:
    st = report.spacetime
    assert st is not None
    radial = next(c for c in st.coordinates if str(c) == radial_name)
    values = parameter_values(report)
    if values is None:
        return None
    for c in st.coordinates:
        if c != radial:
            values[c] = fixed_coordinate_value(str(c))
    scale = max([abs(float(v)) for s, v in values.items() if s in st.parameters] or [1.0])
    low, high = 0.0, 10.0 * max(scale, 1.0)
    return PlotSetting(radial, values, low, high, tuple(st.parameters))


def fixed_coordinate_value(name: str) -> sympy.Expr:
    """Where other coordinates sit: theta on the equator, angles and times at zero."""
    if name in ("theta", "vartheta"):
        return sympy.pi / 2
    if name in ANGLE_NAMES or name in TIME_NAMES:
        return sympy.Integer(0)
    return sympy.Integer(1)


def sample(expr: sympy.Expr, setting: PlotSetting, st: Spacetime) -> numpy.ndarray | None:
    """Values of ``expr`` along the radial range, NaN outside the domain; None if not numeric."""
    reduced = sympy.sympify(expr).subs(setting.values)
    if reduced.free_symbols - {setting.radial} or reduced.atoms(sympy.Function) - \
            reduced.atoms(*_KNOWN_FUNCTIONS):
        return None
    radius = numpy.linspace(setting.low, setting.high, SAMPLE_COUNT)[1:]
    function = sympy.lambdify(setting.radial, reduced, modules="numpy")
    with numpy.errstate(all="ignore"):
        values = numpy.asarray(function(radius), dtype=complex) * numpy.ones_like(radius)
        values = numpy.where(numpy.abs(values.imag) < 1e-12, values.real, numpy.nan)
    inside = domain_mask(st, setting, radius)
    return numpy.where(inside, values, numpy.nan).astype(float)


_KNOWN_FUNCTIONS = (
    sympy.sin, sympy.cos, sympy.tan, sympy.sec, sympy.csc, sympy.cot, sympy.sinh, sympy.cosh,
    sympy.tanh, sympy.exp, sympy.log, sympy.asin, sympy.acos, sympy.atan, sympy.asinh,
    sympy.acosh, sympy.atanh, sympy.Abs, sympy.LambertW,
)


def domain_mask(st: Spacetime, setting: PlotSetting, radius: numpy.ndarray) -> numpy.ndarray:
    """Which radial samples satisfy the entry's domain inequalities."""
    mask = numpy.ones_like(radius, dtype=bool)
    for relation in _relations(st):
        if setting.radial not in relation.free_symbols:
            continue
        reduced = relation.subs(setting.values)
        if reduced is sympy.false:  # the inequality fails for these parameter values
            return numpy.zeros_like(radius, dtype=bool)
        if not isinstance(reduced, sympy.Rel) or reduced.free_symbols - {setting.radial}:
            continue  # true for every radius (decided by the assumptions), or not radial
        test = sympy.lambdify(setting.radial, reduced.lhs - reduced.rhs, modules="numpy")
        with numpy.errstate(all="ignore"):
            difference = numpy.asarray(test(radius), dtype=float) * numpy.ones_like(radius)
        op = reduced.rel_op
        keep = {"<": difference < 0, "<=": difference <= 0, ">": difference > 0,
                ">=": difference >= 0}.get(op, numpy.ones_like(mask))
        mask &= keep
    return mask


@dataclass(frozen=True)
class Profile:
    """One line of sight through the spacetime: the plot's setting with the polar angle fixed
    (the equator, or the rotation axis of a rotating entry)."""

    setting: PlotSetting
    label: str  # mathtext legend label, "" when there is one profile
    words: str  # the same for alt text and captions


POLAR_NAMES = ("theta", "vartheta")


def rotating(st: Spacetime) -> bool:
    """A time coordinate with a cross term to an angle (g_tφ ≠ 0): a rotating chart, whose
    equator alone hides the rotation (Kerr's Kretschmann scalar on the equator is
    Schwarzschild's)."""
    names = [str(c) for c in st.coordinates]
    times = [i for i, n in enumerate(names) if n in TIME_NAMES]
    return bool(times) and any(polar in names for polar in POLAR_NAMES) and any(
        st.metric[times[0], j] != 0 for j, n in enumerate(names) if n in ANGLE_NAMES
        and n not in POLAR_NAMES)


def profiles(report: EntryReport, setting: PlotSetting, exprs: Sequence[sympy.Expr]
             ) -> list[Profile]:
    """The equator alone, or for a rotating entry whose plotted expressions depend on the
    polar angle, the equator θ = π/2 and the axis θ = 0 (θ = π/12 near the axis where the
    axis itself gives no finite value)."""
    st = report.spacetime
    assert st is not None
    polar = next((c for c in st.coordinates if str(c) in POLAR_NAMES), None)
    if polar is None or not rotating(st) or not any(polar in sympy.sympify(e).free_symbols
                                                     for e in exprs):
        return [Profile(setting, "", "")]
    equator = Profile(setting, r"equator $\theta = \pi/2$", "on the equator θ = π/2")
    for angle, label, words in ((sympy.Integer(0), r"axis $\theta = 0$", "on the axis θ = 0"),
                                (sympy.pi / 12, r"near the axis $\theta = \pi/12$",
                                 "near the axis θ = π/12")):
        values = dict(setting.values)
        values[polar] = angle
        candidate = PlotSetting(setting.radial, values, setting.low, setting.high,
                                setting.parameters)
        if all(_finite_count(sample(e, candidate, st)) >= 2 for e in exprs
               if polar in sympy.sympify(e).free_symbols):
            return [equator, Profile(candidate, label, words)]
    return [equator]


def _finite_count(values: numpy.ndarray | None) -> int:
    return 0 if values is None else int(numpy.isfinite(values).sum())


def without_polar(setting: PlotSetting, text_of: Sequence[sympy.Expr]) -> str:
    """The values shown on a two-profile plot: the polar angle is named per profile."""
    kept = {k: v for k, v in setting.values.items() if str(k) not in POLAR_NAMES}
    return describe_values(PlotSetting(setting.radial, kept, setting.low, setting.high,
                                       setting.parameters), text_of)


def invariants_plot(report: EntryReport, setting: PlotSetting) -> Plot | None:
    st, g, entry = report.spacetime, report.geometry, report.entry
    assert st is not None and g is not None and entry is not None
    panels, used, names = [], [], []
    vacuum = report.classification is not None and report.classification.matter_kind == "vacuum"
    wanted = []
    for key, label, name in INVARIANT_LABELS:
        if vacuum and key == "weyl_squared" and g.kretschmann is not None:
            continue  # with R_ab = 0 the Weyl square is the Kretschmann scalar: one panel
        if vacuum and key == "kretschmann":
            label, name = label + r" $= C_{abcd}C^{abcd}$", name + " (equal to the Weyl square)"
        expr = getattr(g, key)
        # Plotted against the radial coordinate only if it depends on it (a cheap test:
        # SymPy's is_constant() would run simplify on the whole invariant).
        if expr is None or setting.radial not in sympy.sympify(expr).free_symbols:
            continue
        wanted.append((label, name, sympy.sympify(expr)))
    lines = profiles(report, setting, [e for _, _, e in wanted])
    for label, name, expr in wanted:
        series = [(profile, sample(expr, profile.setting, st)) for profile in lines]
        series = [(profile, values) for profile, values in series if _finite_count(values) >= 2]
        if series:
            panels.append((label, series))
            used.append(expr)
            names.append(name)
    if not panels:
        return None
    two = len(lines) > 1
    values_text = readable(without_polar(setting, used) if two else describe_values(setting,
                                                                                    used))
    r = str(setting.radial)
    radius = numpy.linspace(setting.low, setting.high, SAMPLE_COUNT)[1:]
    figure = _figure(len(panels))
    marks = horizon_marks(report, setting)
    ergo = ergosurface_mark(report, setting)
    for axis, (label, series) in zip(figure.axes, panels, strict=True):
        _draw_profiles(axis, radius, series, label)
        _mark(axis, marks, ergo)
    if two:
        figure.axes[0].legend(loc="best", frameon=False, fontsize=7)
    figure.axes[-1].set_xlabel(axis_label(setting))
    where = f" {lines[0].words} and {lines[1].words}" if two else ""
    figure.suptitle(f"Curvature invariants along {readable(r)}; {values_text}")
    return Plot(
        file_name="invariants.svg",
        svg=_svg(figure),
        alt=f"{', '.join(names)} of {entry.title} plotted against {readable(r)}{where} for "
            f"{values_text}.{marks_sentence(marks, ergo, readable(r))}",
        caption=f"Curvature invariants against {r}{where}, units G = c = 1, with "
                f"{values_text}. Points outside the entry's domain are left out."
                f"{marks_sentence(marks, ergo, readable(r))}",
    )


def marks_sentence(marks: Sequence[float], ergo: float | None, r: str) -> str:
    parts = []
    if marks:
        parts.append(("dotted lines mark the horizons at " if len(marks) > 1 else
                      "the dotted line marks the horizon at ") + r + " ≈ "
                     + ", ".join(f"{m:.4g}" for m in marks))
    if ergo is not None:
        parts.append(f"the dash-dotted line the ergosurface on the equator at {r} ≈ {ergo:.4g}")
    return (" " + "; ".join(parts)[0].upper() + "; ".join(parts)[1:] + ".") if parts else ""


def _mark(axis: object, marks: Sequence[float], ergo: float | None) -> None:
    for mark in marks:
        axis.axvline(mark, color="0.3", linestyle=":", linewidth=1.0)  # type: ignore[attr-defined]
    if ergo is not None:
        axis.axvline(ergo, color="0.3", linestyle="-.", linewidth=1.0)  # type: ignore[attr-defined]


def ergosurface_mark(report: EntryReport, setting: PlotSetting) -> float | None:
    """The ergosurface's radius on the equator at the plot's values (None when there is none,
    or it falls outside the plotted range)."""
    c = report.classification
    if c is None or c.physical is None or c.physical.ergosurface is None:
        return None
    value = sympy.sympify(c.physical.ergosurface).xreplace(setting.values)
    try:
        number = complex(sympy.N(value))
    except (TypeError, ValueError):
        return None
    if abs(number.imag) > 1e-12 or not setting.low < number.real < setting.high:
        return None
    return float(number.real)


def _draw_profiles(axis: object, x: numpy.ndarray,
                   series: Sequence[tuple[Profile, numpy.ndarray]], label: str) -> None:
    """Each profile as its own line (solid equator, dashed axis); log scale when every line is
    positive over orders of magnitude, symmetric log when one changes sign over them."""
    styles = ("-", "--")
    for (profile, values), style in zip(series, styles, strict=False):
        axis.plot(x, values, linewidth=1.4, linestyle=style,  # type: ignore[attr-defined]
                  label=profile.label or None)
    axis.set_ylabel(label, fontsize=8)  # type: ignore[attr-defined]
    everything = numpy.concatenate([values for _, values in series])
    if _wants_log(everything):
        axis.set_yscale("log")  # type: ignore[attr-defined]
        axis.yaxis.set_major_formatter(LogFormatterSciNotation())  # type: ignore[attr-defined]
        axis.yaxis.set_minor_formatter(NullFormatter())  # type: ignore[attr-defined]
    elif len(series) > 1 and _wants_symlog(everything):
        finite = numpy.abs(everything[numpy.isfinite(everything)])
        axis.set_yscale("symlog", linthresh=float(finite.max()) * 1e-4)  # type: ignore[attr-defined]


def _wants_symlog(values: numpy.ndarray) -> bool:
    finite = numpy.abs(values[numpy.isfinite(values)])
    finite = finite[finite > 0]
    return finite.size > 0 and bool(finite.max() / finite.min() > 1e3)


def metric_functions_plot(report: EntryReport, setting: PlotSetting) -> Plot | None:
    """-g_tt (the squared lapse for static charts) and g_rr, when both depend on r."""
    st, entry = report.spacetime, report.entry
    assert st is not None and entry is not None
    names = [str(c) for c in st.coordinates]
    time = next((c for c in st.coordinates if str(c) in TIME_NAMES), None)
    r_index = names.index(str(setting.radial))
    wanted: list[tuple[str, sympy.Expr]] = []
    if time is not None:
        t_index = names.index(str(time))
        t_tex = sympy.latex(time)
        wanted.append((f"$-g_{{{t_tex}{t_tex}}}$", -st.metric[t_index, t_index]))
    r_tex = sympy.latex(setting.radial)
    wanted.append((f"$g_{{{r_tex}{r_tex}}}$", st.metric[r_index, r_index]))
    series, used = [], []
    lines = profiles(report, setting, [e for _, e in wanted[:1]])
    for k, (label, expr) in enumerate(wanted):
        expr = sympy.sympify(expr)
        if expr == 0 or setting.radial not in expr.free_symbols:
            continue
        # −g_tt on each profile (its zero on the equator is the ergosurface); g_rr once
        for profile in lines if k == 0 else lines[:1]:
            values = sample(expr, profile.setting, st)
            if values is not None and numpy.isfinite(values).sum() >= 2:
                shown = f"{label}, {profile.label}" if profile.label and k == 0 else label
                series.append((shown, numpy.clip(values, -20.0, 20.0)))
                used.append(expr)
    if not series:
        return None
    two = len(lines) > 1
    values_text = readable(without_polar(setting, used) if two else describe_values(setting,
                                                                                    used))
    r = readable(str(setting.radial))
    radius = numpy.linspace(setting.low, setting.high, SAMPLE_COUNT)[1:]
    figure = _figure(1)
    axis = figure.axes[0]
    for label, values in series:
        axis.plot(radius, values, label=label, linewidth=1.4,
                  linestyle="--" if two and "axis" in label else "-")
    axis.axhline(0.0, color="0.5", linewidth=0.6)
    marks = horizon_marks(report, setting)
    ergo = ergosurface_mark(report, setting)
    _mark(axis, marks, ergo)
    axis.legend(loc="best", frameon=False)
    axis.set_xlabel(axis_label(setting))
    axis.set_ylabel("metric component (clipped to ±20)")
    figure.suptitle(f"Metric functions along {r}; {values_text}")
    labels = " and ".join(plain_label(label) for label, _ in series)
    return Plot(
        file_name="metric-functions.svg",
        svg=_svg(figure),
        alt=f"{labels} of {entry.title} against {r} for {values_text}. Where −g_tt is zero "
            "the time-translation Killing vector is null (a horizon of a static chart, the "
            "static limit of a rotating one); where g_rr diverges the chart is singular."
            f"{marks_sentence(marks, ergo, r)}",
        caption=f"Metric functions against {r}, units G = c = 1, with "
                f"{values_text}; values clipped to ±20.{marks_sentence(marks, ergo, r)}",
    )


def plain_label(label: str) -> str:
    """A mathtext label as alt text: ``$-g_{tt}$, axis $\\theta = 0$`` → ``−g_tt, axis θ = 0``."""
    text = label.replace("\\theta", "θ").replace("\\pi", "π").replace("\\", "")
    return "".join({"$": "", "{": "", "}": "", "-": "−"}.get(ch, ch) for ch in readable(text))


def horizon_marks(report: EntryReport, setting: PlotSetting) -> list[float]:
    """Radii of the computed horizons along the plotted coordinate at the plot's parameter
    values: the real roots of each horizon's polynomial inside the plotted range."""
    c = report.classification
    if c is None or c.physical is None:
        return []
    found: set[float] = set()
    for polynomial in {h.polynomial for h in c.physical.horizons
                       if h.coordinate == str(setting.radial)}:
        variable = next(iter(s for s in polynomial.free_symbols if str(s) == "h_root"), None)
        if variable is None:
            continue
        values = {k: v for k, v in setting.values.items() if k in setting.parameters}
        try:
            coefficients = [complex(sympy.N(x.xreplace(values))) for x in
                            sympy.Poly(polynomial, variable).all_coeffs()]
        except (TypeError, ValueError, sympy.PolynomialError):
            continue
        for root in numpy.roots(coefficients):
            if abs(root.imag) < 1e-9 and setting.low < root.real < setting.high:
                found.add(round(float(root.real), 9))
    return sorted(found)


def scale_factor_plot(report: EntryReport, setting: PlotSetting) -> Plot | None:
    """sqrt(g_ii) against time for spatial directions whose metric depends on time only:
    the scale factor of FLRW-type models, the separate ones of Kasner/Bianchi I."""
    st, entry = report.spacetime, report.entry
    assert st is not None and entry is not None
    time = setting.radial
    n = st.dimension
    series, seen = [], []
    for i, c in enumerate(st.coordinates):
        g = sympy.sympify(st.metric[i, i])
        off_diagonal = any(st.metric[i, j] != 0 for j in range(n) if j != i)
        if c == time or off_diagonal or (g.free_symbols & set(st.coordinates)) != {time}:
            continue
        factor = sympy.sqrt(g)
        if any(sympy.cancel(factor - other) == 0 for other in seen):
            continue
        values = sample(factor, setting, st)
        if values is not None and numpy.isfinite(values).sum() >= 2:
            seen.append(factor)
            series.append((f"sqrt(g_{c}{c})", values))
    if not series:
        return None
    values_text = describe_values(setting, seen)
    x = numpy.linspace(setting.low, setting.high, SAMPLE_COUNT)[1:]
    figure = _figure(1)
    axis = figure.axes[0]
    for label, values in series:
        axis.plot(x, values, label=label, linewidth=1.4)
    if all(_wants_log(v) for _, v in series):
        axis.set_yscale("log")
        axis.yaxis.set_major_formatter(LogFormatterSciNotation())
        axis.yaxis.set_minor_formatter(NullFormatter())
    axis.legend(loc="best", frameon=False)
    axis.set_xlabel(f"{time}  (G = c = 1)")
    axis.set_ylabel("scale factor")
    title = f"Scale factors along {time}" + (f"; {values_text}" if values_text else "")
    figure.suptitle(title)
    labels = ", ".join(label for label, _ in series)
    return Plot(
        file_name="scale-factors.svg",
        svg=_svg(figure),
        alt=f"{labels} of {entry.title} against {time}"
            + (f" for {values_text}." if values_text else "."),
        caption=f"Scale factors (square roots of the spatial metric components) against {time}, "
                "units G = c = 1" + (f", with {values_text}" if values_text else "") + ".",
    )


def _wants_log(values: numpy.ndarray) -> bool:
    finite = values[numpy.isfinite(values)]
    if finite.size == 0 or (finite <= 0).any():
        return False
    return bool(finite.max() / max(finite.min(), 1e-300) > 1e3)


def _figure(rows: int) -> Figure:
    """Fixed margins instead of a layout engine: much faster, and the labels are short."""
    height = 1.9 * rows + 1.0
    figure = Figure(figsize=(6.4, height))
    figure.subplots(rows, 1, sharex=True, squeeze=False)
    figure.subplots_adjust(left=0.15, right=0.97, top=1 - 0.5 / height, bottom=0.45 / height,
                           hspace=0.12)
    return figure


def _svg(figure: Figure) -> str:
    buffer = io.StringIO()
    figure.savefig(buffer, format="svg", metadata={"Date": None, "Creator": None})
    return buffer.getvalue()
