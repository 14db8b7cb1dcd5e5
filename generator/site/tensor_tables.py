"""Collapsible tables of the nonzero curvature components on an entry page.

Christoffel symbols, the independent Riemann components, Ricci, Einstein and the independent
Weyl components, typeset with the entry's abbreviations, so that nobody has to open the JSON
download to read them. A table whose typeset size passes a bound is not put on the page (the
JSON has every component); the page says so instead of silently dropping rows.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

import sympy
from markupsafe import Markup

from generator.model import EntryReport
from generator.site import mathtex

MAX_TABLE_LATEX = 40_000  # characters of LaTeX per table; beyond this the JSON is the place


def _name(symbol: sympy.Symbol) -> str:
    return sympy.latex(symbol)


def _rows(items: Sequence[tuple[str, sympy.Expr]], coords: Sequence[sympy.Symbol],
          pairs: Sequence[tuple[sympy.Symbol, sympy.Expr]]) -> tuple[list[Markup], bool]:
    latex_rows = []
    total = 0
    for lhs, value in items:
        latex = f"{lhs} = {mathtex.signed_latex(mathtex.abbreviate(value, pairs), coords)}"
        total += len(latex)
        if total > MAX_TABLE_LATEX:
            return [], True
        latex_rows.append(latex)
    return [Markup(mathtex.latex_to_mathml(row)) for row in latex_rows], False


def tensor_tables(report: EntryReport,
                  pairs: Sequence[tuple[sympy.Symbol, sympy.Expr]] = ()) -> list[dict[str, Any]]:
    """One table per tensor: ``{"key", "title", "rows", "count", "too_large"}``."""
    st, g = report.spacetime, report.geometry
    if st is None or g is None:
        return []
    x = [_name(c) for c in st.coordinates]
    n = st.dimension
    wanted: list[tuple[str, str, list[tuple[str, sympy.Expr]]]] = [
        ("christoffel", "Christoffel symbols Γ^a_bc (b ≤ c)",
         [(rf"\Gamma^{{{x[a]}}}{{}}_{{{x[b]}{x[c]}}}", v)
          for (a, b, c), v in sorted(g.christoffel.items()) if v != 0]),
        ("riemann", "Riemann tensor R_abcd (independent components)",
         [(rf"R_{{{x[a]}{x[b]}{x[c]}{x[d]}}}", v)
          for (a, b, c, d), v in sorted(g.riemann.items()) if v != 0]),
        ("ricci", "Ricci tensor R_ab (a ≤ b)",
         [(rf"R_{{{x[a]}{x[b]}}}", g.ricci[a, b]) for a in range(n) for b in range(a, n)
          if g.ricci[a, b] != 0]),
        ("einstein", "Einstein tensor G_ab (a ≤ b)",
         [(rf"G_{{{x[a]}{x[b]}}}", g.einstein[a, b]) for a in range(n) for b in range(a, n)
          if g.einstein[a, b] != 0]),
    ]
    ricci_flat = all(v == 0 for v in g.ricci)
    if g.weyl is not None and ricci_flat:
        wanted.append(("weyl", "Weyl tensor C_abcd: equal to the Riemann tensor (R_ab = 0)",
                       []))
    elif g.weyl is not None:
        wanted.append(("weyl", "Weyl tensor C_abcd (independent components)",
                       [(rf"C_{{{x[a]}{x[b]}{x[c]}{x[d]}}}", v)
                        for (a, b, c, d), v in sorted(g.weyl.items()) if v != 0]))
    tables = []
    for key, title, items in wanted:
        rows, too_large = _rows(items, st.coordinates, pairs)
        tables.append({"key": key, "title": title, "rows": rows, "count": len(items),
                       "too_large": too_large, "same_as_riemann": key == "weyl" and ricci_flat})
    return tables
