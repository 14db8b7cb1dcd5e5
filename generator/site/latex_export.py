"""The LaTeX download: a document that compiles with plain pdflatex (and LuaLaTeX).

Two things used to break it. Text from entries is Unicode (Λ, −, ≤, ₀, ö) and pdflatex with
only the base packages knows little of it, so every character outside ASCII is mapped here to
a LaTeX command (Greek and symbols in math mode, accented letters with accent commands); what
has no mapping becomes a visible "?" rather than an error. And long expressions were set in
one unbreakable equation (963 pt too wide for Kerr–de Sitter), so sums are broken between
terms into the rows of a ``split`` — and a fraction with a long numerator as
``\\frac{1}{den}`` times its numerator's terms — using only amsmath.
"""

from __future__ import annotations

import unicodedata
from collections.abc import Sequence

import sympy

from generator.entry.prose import parse_span, split_prose
from generator.site import mathtex

ROW_WIDTH = 52  # printed characters per row (mathtex.visual_width) on an article page

_MATH_CHARACTERS = {
    "α": r"\alpha", "β": r"\beta", "γ": r"\gamma", "δ": r"\delta", "ε": r"\varepsilon",
    "ζ": r"\zeta", "η": r"\eta", "θ": r"\theta", "ι": r"\iota", "κ": r"\kappa",
    "λ": r"\lambda", "μ": r"\mu", "ν": r"\nu", "ξ": r"\xi", "π": r"\pi", "ρ": r"\rho",
    "σ": r"\sigma", "ς": r"\varsigma", "τ": r"\tau", "υ": r"\upsilon", "φ": r"\phi",
    "χ": r"\chi", "ψ": r"\psi", "ω": r"\omega", "Γ": r"\Gamma", "Δ": r"\Delta",
    "Θ": r"\Theta", "Λ": r"\Lambda", "Ξ": r"\Xi", "Π": r"\Pi", "Σ": r"\Sigma",
    "Υ": r"\Upsilon", "Φ": r"\Phi", "Ψ": r"\Psi", "Ω": r"\Omega", "ϕ": r"\varphi",
    "ϑ": r"\vartheta", "−": "-", "≤": r"\le", "≥": r"\ge", "≠": r"\ne", "≈": r"\approx",
    "±": r"\pm", "∓": r"\mp", "×": r"\times", "·": r"\cdot", "→": r"\to", "←": r"\leftarrow",
    "↔": r"\leftrightarrow", "⇒": r"\Rightarrow", "∞": r"\infty", "∂": r"\partial",
    "∇": r"\nabla", "√": r"\surd", "∝": r"\propto", "∼": r"\sim", "≡": r"\equiv",
    "∈": r"\in", "∫": r"\int", "∑": r"\sum", "′": "'", "″": "''", "ℓ": r"\ell",
    "ħ": r"\hbar", "⊗": r"\otimes", "∧": r"\wedge", "°": r"^{\circ}", "½": r"\tfrac{1}{2}",
    "¼": r"\tfrac{1}{4}", "¾": r"\tfrac{3}{4}", "…": r"\ldots", "⋯": r"\cdots",
}
_SUPERSCRIPTS = "⁰¹²³⁴⁵⁶⁷⁸⁹⁺⁻⁽⁾"
_SUBSCRIPTS = "₀₁₂₃₄₅₆₇₈₉₊₋₍₎"
_SCRIPT_PLAIN = "0123456789+-()"
_TEXT_CHARACTERS = {
    "–": "--", "—": "---", "‘": "`", "’": "'", "“": "``", "”": "''", "„": ",,",
    "\u00a0": "~", "\u2009": r"\,", "\u202f": r"\,", "ß": r"\ss{}", "æ": r"\ae{}",
    "Æ": r"\AE{}", "ø": r"\o{}", "Ø": r"\O{}", "å": r"\aa{}", "Å": r"\AA{}", "ł": r"\l{}",
    "Ł": r"\L{}", "ı": r"\i{}", "§": r"\S{}", "¶": r"\P{}", "†": r"\dag{}", "‡": r"\ddag{}",
    "•": r"\textbullet{}", "©": r"\copyright{}",
}
_ACCENTS = {
    "\u0300": "`", "\u0301": "'", "\u0302": "^", "\u0303": "~", "\u0304": "=", "\u0306": "u",
    "\u0307": ".", "\u0308": '"', "\u030a": "r", "\u030b": "H", "\u030c": "v", "\u0327": "c",
    "\u0328": "k",
}
_SPECIALS = {
    "\\": r"\textbackslash{}", "{": r"\{", "}": r"\}", "$": r"\$", "&": r"\&", "#": r"\#",
    "%": r"\%", "_": r"\_", "^": r"\^{}", "~": r"\~{}", "<": r"\textless{}",
    ">": r"\textgreater{}", "|": r"\textbar{}",
}


def latex_text(text: str) -> str:
    """Any Unicode text as LaTeX that pdflatex reads with no package beyond the base."""
    return "".join(_latex_char(ch) for ch in text.replace("\n", " "))


def _latex_char(ch: str) -> str:
    if ch in _SPECIALS:
        return _SPECIALS[ch]
    if ch.isascii():
        return ch
    if ch in _TEXT_CHARACTERS:
        return _TEXT_CHARACTERS[ch]
    if ch in _MATH_CHARACTERS:
        return f"${_MATH_CHARACTERS[ch]}$"
    if ch in _SUPERSCRIPTS:
        return f"$^{{{_SCRIPT_PLAIN[_SUPERSCRIPTS.index(ch)]}}}$"
    if ch in _SUBSCRIPTS:
        return f"$_{{{_SCRIPT_PLAIN[_SUBSCRIPTS.index(ch)]}}}$"
    decomposed = unicodedata.normalize("NFD", ch)
    base, marks = decomposed[0], decomposed[1:]
    if base.isascii() and base.isalpha() and marks and all(m in _ACCENTS for m in marks):
        out = base if base not in "ij" else "\\" + base
        for mark in marks:
            out = f"\\{_ACCENTS[mark]}{{{out}}}"
        return out
    return "?"


def prose_latex_text(text: str, table: object | None,
                     coordinates: Sequence[sympy.Symbol] = ()) -> str:
    """Prose (summary, chart) with its $math$ typeset by the same printer as the pages."""
    out = []
    for piece in split_prose(text):
        math = parse_span(piece.text, table) if piece.kind == "math" and table else None
        if math is not None:
            out.append(f"${mathtex.prose_latex(math, coordinates)}$")
        elif piece.kind in ("code", "fence", "math"):
            out.append(r"\texttt{" + latex_text(piece.text.strip("`")) + "}")
        else:
            out.append(latex_text(piece.text))
    return "".join(out).replace(r"\text{d}", r"\mathrm{d}")


# ---------------------------------------------------------------------------- long formulas


def expression_rows(expr: sympy.Expr, coordinates: Sequence[sympy.Symbol],
                    width: int = ROW_WIDTH) -> list[str]:
    """An expression as rows no wider than ``width`` where it can be broken: between the
    terms of a sum, or as 1/den times the terms of a long numerator. The rows joined in order
    read as the expression; every row after the first starts with its sign."""
    printer = mathtex.TextbookLatexPrinter(coordinates)
    latex = mathtex.signed_latex(expr, coordinates)
    if mathtex.visual_width(latex) <= width:
        return [latex]
    sign = ""
    if expr.could_extract_minus_sign() and not expr.is_Add:
        sign, expr = "-", -expr
    if expr.is_Add:
        return _pack([printer.doprint(t) for t in mathtex.textbook_order(
            list(expr.args), frozenset(coordinates))], width, sign)
    numerator, denominator = sympy.fraction(sympy.factor_terms(expr))
    factors = sympy.Mul.make_args(numerator)
    sums = [f for f in factors if f.is_Add]
    if len(sums) == 1:
        long_sum = sums[0]
        rest = sympy.Mul(*[f for f in factors if f is not long_sum])
        lead = printer.doprint(rest) if rest != 1 else ""
        if denominator != 1:
            content, primitive = denominator.as_content_primitive()
            below = printer.doprint(denominator)
            if content != 1 and primitive.is_Add:  # 2520 (r² + a²), not 2520 r² + 2520 a²
                below = rf"{printer.doprint(content)} \left({printer.doprint(primitive)}\right)"
            lead = rf"\frac{{{printer.doprint(rest)}}}{{{below}}}"
        terms = [printer.doprint(t) for t in mathtex.textbook_order(
            list(long_sum.args), frozenset(coordinates))]
        rows = _pack(terms, width - 6, "")
        rows[0] = rf"{sign}{lead}\Bigl[{rows[0]}"
        rows[-1] += r"\Bigr]"
        return rows
    return [sign + latex]


def _pack(terms: list[str], width: int, sign: str) -> list[str]:
    """Terms into rows, greedily, with explicit signs between them."""
    rows: list[str] = []
    current = ""
    for k, term in enumerate(terms):
        negative = term.startswith("-")
        body = term[1:].lstrip() if negative else term
        piece = (("- " if negative else "") + body) if k == 0 else \
            ((" - " if negative else " + ") + body)
        if current and mathtex.visual_width(current + piece) > width:
            rows.append(current)
            current = piece.strip()
        else:
            current += piece
    rows.append(current)
    if sign:
        rows[0] = rf"{sign}\Bigl({rows[0]}"
        rows[-1] += r"\Bigr)"
    return rows


def equation_block(lhs: str, rows: Sequence[str]) -> str:
    """``lhs = rows`` as one numbered equation, broken with split when there are rows."""
    if len(rows) == 1:
        return "\n".join([r"\begin{equation}", f"{lhs} = {rows[0]}", r"\end{equation}"])
    lines = [f"{lhs} &= {rows[0]}"] + [rf"&\quad {row}" for row in rows[1:]]
    return "\n".join([r"\begin{equation}", r"\begin{split}", " \\\\\n".join(lines),
                      r"\end{split}", r"\end{equation}"])


def line_element_rows(metric: sympy.MatrixBase, coordinates: Sequence[sympy.Symbol],
                      width: int = ROW_WIDTH) -> list[str]:
    """The signed pieces of ds² packed into rows; a piece wider than a row gets a row of its
    own (its coefficient is broken by `expression_rows` in the component list below)."""
    pieces = mathtex.line_element_pieces(metric, coordinates)
    rows: list[str] = []
    current = ""
    for piece in pieces:
        if current and mathtex.visual_width(current + piece) > width:
            rows.append(current)
            current = piece.strip()
        else:
            current += piece
    rows.append(current)
    return [row.replace(r"\text{d}", r"\mathrm{d}") for row in rows]
