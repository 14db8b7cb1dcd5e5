"""An entry's prose on the page: Markdown and plain lines with their $math$ typeset to MathML.

The math spans are found and parsed by the entry stage (`generator.entry.prose`), through the
whitelisted parser; here they become MathML. Markdown is rendered and sanitised with the math
replaced by placeholders, and only then is our own (allow-listed) MathML put back, so nothing
written in an entry can smuggle markup through a math span.
"""

from __future__ import annotations

import re
from collections.abc import Sequence
from dataclasses import dataclass

import sympy
from markupsafe import Markup, escape

from generator.entry.mathparse import SymbolTable
from generator.entry.prose import Piece, parse_span, prose_table, split_prose
from generator.model import Entry, Spacetime
from generator.site import mathtex
from generator.site.common import markdown_html

_MARK = "\u2063"  # invisible separator: never produced by Markdown, rare in text

# Index notation written in plain words (g_tt, R_ab, T_ab k^a k^b, Delta_r, nabla_a): shown
# with real subscripts and superscripts, never as program-like ASCII. The kernel is one letter
# or a Greek letter's name; the indices are one to four letters or digits.
_GREEK = {"alpha": "α", "beta": "β", "gamma": "γ", "delta": "δ", "epsilon": "ε", "zeta": "ζ",
          "eta": "η", "theta": "θ", "kappa": "κ", "lambda": "λ", "mu": "μ", "nu": "ν",
          "xi": "ξ", "rho": "ρ", "sigma": "σ", "tau": "τ", "phi": "φ", "chi": "χ", "psi": "ψ",
          "omega": "ω", "Gamma": "Γ", "Delta": "Δ", "Theta": "Θ", "Lambda": "Λ", "Xi": "Ξ",
          "Sigma": "Σ", "Phi": "Φ", "Psi": "Ψ", "Omega": "Ω", "nabla": "∇"}
_INDEXED = re.compile(r"(?<![\w\\])(?P<kernel>[A-Za-z]|" + "|".join(_GREEK) + r")"
                      r"(?P<indices>(?:[_^][A-Za-z0-9]{1,4})+)(?![\w^])")
_INDEX = re.compile(r"([_^])([A-Za-z0-9]{1,4})")


@dataclass(frozen=True)
class ProseSymbols:
    """What an entry's prose math may name, and the coordinates (for term order)."""

    table: SymbolTable | None
    coordinates: tuple[sympy.Symbol, ...] = ()


def prose_symbols(entry: Entry, spacetime: Spacetime | None) -> ProseSymbols:
    if spacetime is None:
        return ProseSymbols(None)
    return ProseSymbols(prose_table(entry, spacetime), spacetime.coordinates)


def math_piece_html(text: str, symbols: ProseSymbols) -> str:
    """MathML for one span, or the span as code when it cannot be read (``check`` reports it)."""
    math = parse_span(text, symbols.table) if symbols.table is not None else None
    if math is None:
        return f'<code class="math-fallback">{escape(text)}</code>'
    try:
        return mathtex.latex_to_mathml(mathtex.prose_latex(math, symbols.coordinates))
    except (mathtex.UnsafeMathML, ValueError, KeyError, IndexError):
        return f'<code class="math-fallback">{escape(text)}</code>'


def indexed_html(kernel: str, indices: str) -> str:
    """``g`` and ``_tt`` as g with subscript tt (escaped; our own markup only)."""
    parts = [f"<i>{escape(_GREEK.get(kernel, kernel))}</i>" if kernel not in ("nabla",)
             else "∇"]
    for mark, index in _INDEX.findall(indices):
        tag = "sub" if mark == "_" else "sup"
        parts.append(f"<{tag}>{escape(index)}</{tag}>")
    return f'<span class="indexed">{"".join(parts)}</span>'


def _with_indices_marked(text: str, inserts: list[str]) -> str:
    """Plain prose with index notation replaced by placeholders for `indexed_html`."""
    def mark(match: re.Match[str]) -> str:
        inserts.append(indexed_html(match["kernel"], match["indices"]))
        return f"{_MARK}{len(inserts) - 1}{_MARK}"
    return _INDEXED.sub(mark, text)


def prose_markdown(text: str, symbols: ProseSymbols) -> Markup:
    """Notes: Markdown (sanitised) with math typeset."""
    source: list[str] = []
    inserts: list[str] = []
    for piece in split_prose(text):
        if piece.kind == "math":
            inserts.append(math_piece_html(piece.text, symbols))
            source.append(f"{_MARK}{len(inserts) - 1}{_MARK}")
        elif piece.kind == "text":
            source.append(_with_indices_marked(piece.text, inserts))
        else:
            source.append(piece.text)
    html = str(markdown_html("".join(source), allow_links=False))
    for k, markup in enumerate(inserts):
        html = html.replace(f"{_MARK}{k}{_MARK}", markup)
    return Markup(html.replace(_MARK, ""))


def prose_line(text: str, symbols: ProseSymbols) -> Markup:
    """A one-line field (summary, chart description): escaped text with math typeset."""
    return Markup("".join(_line_piece(piece, symbols) for piece in split_prose(text)))


def _line_piece(piece: Piece, symbols: ProseSymbols) -> str:
    if piece.kind == "math":
        return math_piece_html(piece.text, symbols)
    if piece.kind in ("code", "fence"):
        return f"<code>{escape(piece.text.strip('`'))}</code>"
    if piece.kind == "text":
        inserts: list[str] = []
        html = str(escape(_with_indices_marked(piece.text, inserts)))
        for k, markup in enumerate(inserts):
            html = html.replace(f"{_MARK}{k}{_MARK}", markup)
        return html
    return str(escape(piece.text))


def abbreviation_rows(entry: Entry, spacetime: Spacetime | None,
                      values: dict[str, sympy.Expr]) -> list[Markup]:
    """``Σ = r² + a² cos²θ`` for each declared abbreviation, typeset."""
    if spacetime is None:
        return []
    coords: Sequence[sympy.Symbol] = spacetime.coordinates
    rows = []
    for name, _ in entry.abbreviations:
        if name not in values:
            continue
        latex = f"{sympy.latex(sympy.Symbol(name))} = {mathtex.to_latex(values[name], coords)}"
        rows.append(Markup(mathtex.latex_to_mathml(latex)))
    return rows
