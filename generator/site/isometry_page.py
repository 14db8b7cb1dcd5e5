"""Page data for an entry's computed symmetry: isometry algebra, Killing basis and brackets,
Killing tensors and conformal symmetries, Weyl scalars in a principal frame, invariant count.

Kept apart from ``entry_page`` so the symmetry block is one self-contained partial
(``site_templates/_isometry.html``) with its own data.
"""

from __future__ import annotations

from typing import Any

import sympy
from markupsafe import Markup

from generator.model import EntryReport, IsometryAlgebra, WeylFrame
from generator.site import mathtex
from generator.site.common import math_inline, verdict_row

PSI_LATEX = {f"Psi{k}": rf"\Psi_{k}" for k in range(5)}


def isometry_dimension_text(report: EntryReport) -> str:
    """The computed isometry dimension as the search index holds it ("" when unknown)."""
    c = report.classification
    if c is None or c.symmetry is None or c.symmetry.isometry.dimension is None:
        return ""
    return str(c.symmetry.isometry.dimension)


def isometry_data(report: EntryReport) -> dict[str, Any] | None:
    c, st = report.classification, report.spacetime
    if c is None or st is None or c.symmetry is None:
        return None
    s = c.symmetry
    coordinates = st.coordinates
    return {
        "algebra": algebra_data(s.isometry, coordinates),
        "tensors": [verdict_row(v) for v in s.tensors_checked],
        "frame": frame_data(s.weyl_frame, coordinates),
        "frame_reason": c.reasons.get("weyl_frame", ""),
        "invariants": {"count": s.invariants.count, "used": ", ".join(s.invariants.used),
                       "relation": s.invariants.relation,
                       "consistent": s.invariants.consistent,
                       "why_null": s.invariants.why_null},
    }


def algebra_data(iso: IsometryAlgebra, coordinates: tuple[sympy.Symbol, ...]
                 ) -> dict[str, Any]:
    names = {str(x): x for x in coordinates}
    first_found = len(iso.basis) - iso.found
    basis = [{"math": math_inline(rf"X_{{{k + 1}}} = " + vector_latex(vector, names,
                                                                      coordinates)),
              "found": k >= first_found}
             for k, vector in enumerate(iso.basis)]
    brackets = [bracket_math(i, j, coefficients, coordinates)
                for i, j, coefficients in iso.structure]
    isotropy = (None if iso.dimension is None or iso.orbit_dimension is None
                else iso.dimension - iso.orbit_dimension)
    return {"dimension": iso.dimension, "orbit_dimension": iso.orbit_dimension,
            "isotropy": isotropy, "listed": iso.listed, "basis": basis,
            "complete": iso.complete, "method": iso.method, "why_null": iso.why_null,
            "brackets": brackets, "name": iso.algebra_name, "found": iso.found,
            "known": iso.algebra_structure,
            "search": iso.search,
            "missing": None if iso.dimension is None else iso.dimension - len(iso.basis)}


def vector_latex(vector: tuple[tuple[str, sympy.Expr], ...], names: dict[str, sympy.Symbol],
                 coordinates: tuple[sympy.Symbol, ...]) -> str:
    terms = []
    for name, value in vector:
        part = rf"\partial_{{{sympy.latex(names[name])}}}"
        if value == 1:
            terms.append(part)
        elif value == -1:
            terms.append("-" + part)
        else:
            terms.append(rf"\left({mathtex.to_latex(value, coordinates)}\right){part}")
    return " + ".join(terms).replace("+ -", "- ") or "0"


def bracket_math(i: int, j: int, coefficients: tuple[sympy.Expr, ...],
                 coordinates: tuple[sympy.Symbol, ...]) -> Markup:
    combination = sympy.Add(*(c * sympy.Symbol(f"X_{k + 1}")
                              for k, c in enumerate(coefficients)))
    return math_inline(rf"[X_{{{i + 1}}}, X_{{{j + 1}}}] = "
                       + mathtex.to_latex(combination, coordinates))


def frame_data(frame: WeylFrame | None, coordinates: tuple[sympy.Symbol, ...]
               ) -> dict[str, Any] | None:
    if frame is None:
        return None
    scalars = [math_inline(f"{PSI_LATEX[name]} = {mathtex.to_latex(value, coordinates)}")
               for name, value in frame.scalars]
    invariants = []
    for label, value in (("I", frame.invariant_i), ("J", frame.invariant_j)):
        if value is not None:
            invariants.append(math_inline(f"{label} = {mathtex.to_latex(value, coordinates)}"))
    names = {str(x): x for x in coordinates}
    symbols = {"l": "l", "n": "n", "m": "m"}
    tetrad = [math_inline(f"{symbols[label]} = " + vector_latex(vector, names, coordinates))
              for label, vector in frame.tetrad]
    return {"name": frame.name, "principal": frame.principal, "scalars": scalars,
            "invariants": invariants, "why": frame.why, "tetrad": tetrad,
            "checks": list(frame.checks)}
