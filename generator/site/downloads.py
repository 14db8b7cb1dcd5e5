"""An entry's downloads: its JSON data, a SymPy script that rebuilds the metric and a LaTeX
document.
"""

from __future__ import annotations

import keyword
from collections.abc import Sequence
from typing import Any

import sympy
from sympy.printing.str import StrPrinter

from generator.entry.content_hash import canonical_form
from generator.entry.prose import prose_table
from generator.model import (
    CatalogMeta,
    EntryReport,
    Reference,
)
from generator.site import cite, export, mathtex
from generator.site.common import (
    NOWHERE,
    RenderError,
    Surroundings,
    abbreviation_pairs,
    verdict_row,
)
from generator.site.latex_export import (
    ROW_WIDTH,
    equation_block,
    expression_rows,
    latex_text,
    line_element_rows,
    prose_latex_text,
)


def entry_json(report: EntryReport, meta: CatalogMeta,
               around: Surroundings = NOWHERE) -> dict[str, Any]:
    """The entry as written plus everything computed: the JSON download."""
    entry = report.entry
    assert entry is not None
    return {
        "format": "metric-almanac-entry-data-1",
        "catalog_version": meta.version,
        "generator_version": meta.generator_version,
        "sympy_version": meta.sympy_version,
        "content_hash": report.content_hash,
        "url": cite.entry_url(meta, entry.id),
        "id": entry.id,
        "file": entry.file,
        "mathematics": canonical_form(entry),
        "family": entry.family,
        "title": entry.title,
        "chart": entry.chart,
        "summary": entry.summary,
        "notes": entry.notes,
        "tags": list(entry.tags),
        "references": [reference_json(r) for r in entry.references],
        "computed": computed_json(report),
        "verdicts": [verdict_row(v) for v in report.verdicts],
        "same_spacetime": same_spacetime_json(around),
        "revisions": [
            {"commit": r.commit, "date": r.date, "content_hash": r.content_hash,
             "summary": r.summary} for r in meta.revisions.get(entry.id, ())
        ],
    }


def same_spacetime_json(around: Surroundings) -> list[dict[str, Any]]:
    """The published charts of this spacetime, joined by verified maps: written here, written
    there, or through a chain (``route``: the entries in between)."""
    rows = [{"entry": entry_id, "route": []} for entry_id in around.published_links]
    rows += [{"entry": link.entry, "route": list(link.route)} for link in around.charts]
    return sorted(rows, key=lambda row: row["entry"])


def reference_json(r: Reference) -> dict[str, Any]:
    return {
        "role": r.role, "authors": list(r.authors), "title": r.title, "venue": r.venue,
        "year": r.year, "doi": r.doi, "arxiv": r.arxiv, "isbn": r.isbn, "locator": r.locator,
        "unconfirmed": list(r.unconfirmed), "key": r.key,
    }


def computed_json(report: EntryReport) -> dict[str, Any]:
    """All computed data of an entry (one definition, shared with `check --json`)."""
    if report.spacetime is None or report.geometry is None:
        return {}
    return export.computed_json(report.spacetime, report.geometry, report.classification)


def python_literal(text: str) -> str:
    """A string as a safe, ASCII-only Python literal (contributor text never becomes code)."""
    return ascii(text)


SCRIPT_NAMES = frozenset({"sympy", "metric", "coordinates", "ENTRY_ID", "TITLE",
                          "CATALOG_VERSION", "CONTENT_HASH"})


def require_identifiers(symbols: Sequence[Any]) -> None:
    """Names written into the SymPy script as code must be plain, non-clashing identifiers."""
    for symbol in symbols:
        name = getattr(symbol, "__name__", None) or str(symbol)
        if not name.isidentifier() or keyword.iskeyword(name) or name in SCRIPT_NAMES:
            raise RenderError(f"symbol name {name!r} cannot be written into the SymPy script")


class _ScriptPrinter(StrPrinter):
    """SymPy's string printer, except that a bare fraction is ``Rational(p, q)``: in a
    script, ``r**(-3/2)`` would be evaluated by Python as a float power."""

    def _print_Rational(self, expr: sympy.Rational) -> str:
        if expr.q == 1:
            return str(expr.p)
        return f"Rational({expr.p}, {expr.q})"


def script_text(expr: sympy.Basic) -> str:
    """Python source for an expression that evaluates to exactly it."""
    return _ScriptPrinter({"order": "lex"}).doprint(expr)


def sympy_script(report: EntryReport, meta: CatalogMeta) -> str:
    """A standalone script that rebuilds the metric with SymPy (catalog signature)."""
    entry, st = report.entry, report.spacetime
    assert entry is not None
    lines = [
        "# Metric Almanac: SymPy script that rebuilds one entry's metric.",
        "# Conventions: signature -+++, G = c = 1. Check against the original literature.",
        "import sympy",
        "from sympy import (E, I, Abs, Derivative, LambertW, Rational, acos, acosh, acot, asin,",
        "                   asinh, atan, atanh, cos, cosh, cot, csc, exp, log, pi, sec, sin,",
        "                   sinh, sqrt, tan, tanh)",
        "",
        f"ENTRY_ID = {python_literal(entry.id)}",
        f"TITLE = {python_literal(entry.title)}",
        f"CATALOG_VERSION = {python_literal(meta.version)}",
        f"CONTENT_HASH = {python_literal(report.content_hash)}",
        "",
    ]
    if st is None:
        return "\n".join([*lines, "metric = None", ""])
    require_identifiers([*st.coordinates, *st.parameters, *(f.func for f in st.functions)])
    assumptions = {p.name: p.assume for p in entry.parameters}
    function_assumptions = {f.name: f.assume or "real" for f in entry.functions}
    for symbol in st.coordinates:
        lines.append(f"{symbol} = sympy.Symbol({python_literal(str(symbol))}, real=True)")
    for symbol in st.parameters:
        flags = SCRIPT_ASSUMPTIONS.get(assumptions.get(str(symbol), "real"), "real=True")
        lines.append(f"{symbol} = sympy.Symbol({python_literal(str(symbol))}, {flags})")
    for applied in st.functions:
        name = applied.func.__name__
        flags = SCRIPT_ASSUMPTIONS.get(function_assumptions.get(name, "real"), "real=True")
        lines.append(f"{name} = sympy.Function({python_literal(name)}, {flags})")
    n = st.dimension
    lines += ["", f"coordinates = ({', '.join(str(c) for c in st.coordinates)},)",
              f"metric = sympy.zeros({n}, {n})"]
    for i in range(n):
        for j in range(i, n):
            if st.metric[i, j] != 0:
                value = script_text(st.metric[i, j])
                target = f"metric[{i}, {j}]" if i == j else f"metric[{i}, {j}] = metric[{j}, {i}]"
                lines.append(f"{target} = {value}")
    lines += ["metric = sympy.ImmutableMatrix(metric)", "",
              'if __name__ == "__main__":', "    sympy.pprint(metric)", ""]
    return "\n".join(lines)


# The loader's assumptions (entry/loader.py), written as keyword arguments: the script's
# symbols must be the very symbols the entry declares (a test compares the matrices).
SCRIPT_ASSUMPTIONS = {
    "positive": "positive=True", "negative": "negative=True",
    "nonnegative": "nonnegative=True", "nonpositive": "nonpositive=True",
    "nonzero": "nonzero=True, real=True", "real": "real=True",
}
def latex_document(report: EntryReport, meta: CatalogMeta) -> str:
    """A standalone LaTeX file (amsmath only) with the line element, the abbreviations and
    the components, long formulas broken over rows; compiles with pdflatex and LuaLaTeX."""
    entry, st = report.entry, report.spacetime
    assert entry is not None
    table = prose_table(entry, st) if st is not None else None
    coords = st.coordinates if st is not None else ()
    head = [
        r"\documentclass{article}", r"\usepackage{amsmath}", r"\begin{document}", r"\sloppy",
        rf"\section*{{{latex_text(entry.title)}}}",
        rf"% Metric Almanac {latex_text(meta.version)}, entry {latex_text(entry.id)}",
        rf"\noindent Chart: {prose_latex_text(entry.chart, table, coords)}.",
        "",
        prose_latex_text(entry.summary, table, coords),
        "",
        r"Conventions: signature $-+++$, $G = c = 1$. Machine-checked; check against the "
        r"original literature before use.",
    ]
    body: list[str] = []
    if st is not None:
        pairs = abbreviation_pairs(report)
        metric = mathtex.abbreviate_matrix(st.metric, pairs)
        rows = line_element_rows(metric, coords)
        if any(mathtex.visual_width(row) > 1.3 * ROW_WIDTH for row in rows):
            # a single term wider than the page: name the components, set each broken below
            body.append(equation_block(r"\mathrm{d}s^{2}",
                                       [r"g_{ab}\,\mathrm{d}x^{a}\,\mathrm{d}x^{b}"]))
            body.append("with the components $g_{ab}$ listed below.")
        else:
            body.append(equation_block(r"\mathrm{d}s^{2}", rows))
        if pairs:
            where = [f"${sympy.latex(symbol)} = {mathtex.to_latex(value, coords)}$"
                     for symbol, value in pairs]
            body.append("where " + ", ".join(where) + ".")
        body.append(r"\paragraph{Nonzero components.}")
        for i in range(st.dimension):
            for j in range(i, st.dimension):
                if metric[i, j] != 0:
                    lhs = (f"g_{{{mathtex.to_latex(coords[i], coords)}"
                           f"{mathtex.to_latex(coords[j], coords)}}}")
                    body.append(equation_block(lhs, expression_rows(metric[i, j], coords)))
    text = "\n".join([*head, *body, r"\end{document}", ""])
    return text.replace(r"\text{d}", r"\mathrm{d}")
