"""Typesetting for the site: SymPy expressions -> LaTeX -> MathML, at build time.

Pages must read without JavaScript, so every formula is converted to MathML here. SymPy's own
LaTeX is correct but not textbook-shaped: it writes ``\\frac{2M}{r} - 1`` where a relativist
writes ``-(1 - 2M/r)``, orders line elements arbitrarily and italicises the differential. The
printer below fixes the shape (term order, overall signs, upright d, sin^2 theta without
brackets, grouped round-sphere part) without changing the value.

Only MathML produced here is ever marked safe in templates, and it is checked against an
element/attribute allow-list before it leaves this module.
"""

from __future__ import annotations

import re
import xml.etree.ElementTree as ET
from collections.abc import Sequence
from dataclasses import dataclass

import sympy
from latex2mathml.converter import convert as _latex_to_mathml
from sympy.core.function import AppliedUndef
from sympy.printing.latex import LatexPrinter

from generator.entry.mathparse import ProseMath

# Coordinate names by the role they usually play; the line element lists time first, then
# radial-type, then the rest in index order, then angles.
TIME_NAMES = frozenset({"t", "tau", "T", "eta", "u", "v", "U", "V", "t_"})
RADIAL_NAMES = frozenset({"r", "R", "rho", "chi", "varrho", "rbar", "r_"})
ANGLE_NAMES = frozenset({"theta", "phi", "psi", "vartheta", "varphi", "chi_", "alpha", "beta"})

_DIFF = r"\text{d}"  # upright differential; turned into <mi mathvariant="normal"> below


def coordinate_rank(name: str, index: int) -> tuple[int, int]:
    """Sort key putting time first, then radial, then other coordinates, then angles."""
    if name in TIME_NAMES:
        return (0, index)
    if name in RADIAL_NAMES:
        return (1, index)
    if name in ANGLE_NAMES:
        return (3, index)
    return (2, index)


def radial_coordinate(names: Sequence[str]) -> str | None:
    """The first coordinate that plays the radial role, if any (used for plots too)."""
    return next((n for n in names if n in RADIAL_NAMES), None)


# ---------------------------------------------------------------------------- term order


def _coordinate_degree(term: sympy.Expr, coords: frozenset[sympy.Symbol]) -> int:
    """Degree in the coordinates, counting denominators negatively: 2*M*r/(r**2 + a**2) -> -1.

    Functions of coordinates (sin(theta), a(t)) count as degree 0.
    """
    if term in coords:
        return 1
    if term.is_Add:
        return max(_coordinate_degree(t, coords) for t in term.args)
    if term.is_Mul:
        return sum(_coordinate_degree(t, coords) for t in term.args)
    if term.is_Pow and term.exp.is_Integer:
        return int(term.exp) * _coordinate_degree(term.base, coords)
    return 0


def textbook_order(terms: Sequence[sympy.Expr], coords: frozenset[sympy.Symbol]) -> list:
    """Order the terms of a sum as textbooks do.

    With a positive number among the terms (``1 - 2M/r + Q^2/r^2``, ``1 - k r^2``) the number
    comes first and the rest by growing power of the coordinates; a negative number goes last
    (``Lambda r^2 - 3``); otherwise (``r^2 - 2Mr + a^2``) by falling power, plain coordinate
    powers before terms carrying parameters, positive before negative among equals. A sum
    never opens with a minus sign when it has a positive term (``positive_first``).
    """
    numbers = [t for t in terms if t.is_Number]
    others = [t for t in terms if not t.is_Number]

    def params(term: sympy.Expr) -> int:
        return len(term.free_symbols - coords)

    if numbers and numbers[0].is_negative and others:
        others.sort(key=lambda t: (-_coordinate_degree(t, coords), params(t),
                                   sympy.default_sort_key(t)))
        return positive_first(others + numbers)  # Lambda r^2 - 3, not -3 + Lambda r^2
    if numbers:
        others.sort(key=lambda t: (abs(_coordinate_degree(t, coords)),
                                   _coordinate_degree(t, coords) > 0, params(t),
                                   sympy.default_sort_key(t)))
        return numbers + others
    others.sort(key=lambda t: (-_coordinate_degree(t, coords), params(t),
                               t.could_extract_minus_sign(), sympy.default_sort_key(t)))
    return positive_first(others)


def positive_first(terms: list) -> list:
    """A sum opens with a positive term where it has one (X² − T², not −T² + X²): the first
    positive term of the ordered list moves to the front, the rest keep their order."""
    if not terms or not terms[0].could_extract_minus_sign():
        return terms
    lead = next((k for k, t in enumerate(terms) if not t.could_extract_minus_sign()), None)
    if lead is None:
        return terms
    return [terms[lead], *terms[:lead], *terms[lead + 1:]]


def _prefers_minus(expr: sympy.Expr) -> bool:
    """True when ``expr`` reads better as ``-(...)``: a sum led by a negative number, or a
    sum with more negative than positive terms, or a product with a negative coefficient."""
    if expr.is_Add:
        constant = [t for t in expr.args if t.is_Number]
        if constant:
            return bool(constant[0].is_negative)
        negative = sum(1 for t in expr.args if t.could_extract_minus_sign())
        return negative > len(expr.args) - negative
    coefficient, rest = expr.as_coeff_Mul()
    if coefficient.is_negative:
        return True
    return bool(rest.is_Add and _prefers_minus(rest))


class TextbookLatexPrinter(LatexPrinter):
    """SymPy's LaTeX printer with textbook term order for sums."""

    def __init__(self, coordinates: Sequence[sympy.Symbol] = ()) -> None:
        super().__init__({"fold_func_brackets": True, "mul_symbol": None,
                          "inv_trig_style": "full"})
        self._coords = frozenset(coordinates)

    def _as_ordered_terms(self, expr: sympy.Expr, order: str | None = None) -> list:
        if expr.is_Add:
            return textbook_order(list(expr.args), self._coords)
        return super()._as_ordered_terms(expr, order=order)

    def _print_Function(self, expr: sympy.Expr, exp: str | None = None) -> str:
        """Free functions keep their brackets: ``a^{2}(t)``, never the misleading ``a^{2}t``."""
        if not isinstance(expr, AppliedUndef):
            return super()._print_Function(expr, exp)
        name = self._hprint_Function(expr.func.__name__)
        if exp is not None:
            name = f"{name}^{{{exp}}}"
        args = ", ".join(self._print(arg) for arg in expr.args)
        return rf"{name}\left({args}\right)"

    def _print_Derivative(self, expr: sympy.Expr) -> str:
        """Time derivatives of one-variable free functions as dots (``\\dot{a}``), other
        ordinary derivatives as primes; partial derivatives keep SymPy's notation."""
        function, variables = expr.expr, expr.variable_count
        if (
            isinstance(function, AppliedUndef)
            and len(function.args) == 1
            and len(variables) == 1
            and variables[0][0] == function.args[0]
            and 1 <= variables[0][1] <= 3
        ):
            order = int(variables[0][1])
            name = self._hprint_Function(function.func.__name__)
            if str(function.args[0]) in TIME_NAMES:
                accent = ("dot", "ddot", "dddot")[order - 1]
                return rf"\{accent}{{{name}}}"
            return name + "'" * order
        return super()._print_Derivative(expr)


    def _print_PlusMinus(self, expr: sympy.Expr) -> str:
        return self._print_signed_pair(expr, r"\pm")

    def _print_MinusPlus(self, expr: sympy.Expr) -> str:
        return self._print_signed_pair(expr, r"\mp")

    def _print_signed_pair(self, expr: sympy.Expr, sign: str) -> str:
        """``a ± b`` from prose (``± b`` when a is 0); b is bracketed when it is a sum."""
        left, right = expr.args
        body = self._print(right)
        if right.is_Add:
            body = rf"\left({body}\right)"
        return f"{sign} {body}" if left == 0 else f"{self._print(left)} {sign} {body}"


def to_latex(expr: sympy.Expr, coordinates: Sequence[sympy.Symbol] = ()) -> str:
    """LaTeX for a single expression, sums in textbook order."""
    return TextbookLatexPrinter(coordinates).doprint(sympy.sympify(expr))


# ---------------------------------------------------------------------------- prose

PROSE_RELATION_TEX = {"=": "=", "≠": r"\ne", "<": "<", "≤": r"\le", ">": ">", "≥": r"\ge",
                      "→": r"\to", "≈": r"\approx"}


def prose_latex(math: ProseMath, coordinates: Sequence[sympy.Symbol] = ()) -> str:
    """LaTeX for a span of math from prose: relation chains separated by commas."""
    printer = TextbookLatexPrinter(coordinates)
    chains = []
    for chain in math:
        text = printer.doprint(chain.parts[0])
        for relation, part in zip(chain.relations, chain.parts[1:], strict=True):
            text += f" {PROSE_RELATION_TEX[relation]} {printer.doprint(part)}"
        chains.append(text)
    return r",\; ".join(chains)


# ---------------------------------------------------------------------------- abbreviations


def abbreviate(expr: sympy.Expr, pairs: Sequence[tuple[sympy.Symbol, sympy.Expr]]) -> sympy.Expr:
    """``expr`` with each declared abbreviation's definition replaced by its symbol
    (r² + a² cos²θ → Σ), longest definitions first, as textbooks write Kerr.

    A replacement is kept only when putting the definition back gives the same expression
    exactly, so what is typeset is always the computed value.
    """
    result = sympy.sympify(expr)
    for symbol, definition in sorted(pairs, key=lambda p: (-sympy.count_ops(p[1]), str(p[0]))):
        candidate = result.subs(definition, symbol)
        if candidate == result:
            continue
        back = candidate.subs(symbol, definition)
        if back == result or sympy.cancel(back - result) == 0:
            result = candidate
    return result


def abbreviate_matrix(matrix: sympy.MatrixBase,
                      pairs: Sequence[tuple[sympy.Symbol, sympy.Expr]]) -> sympy.MatrixBase:
    if not pairs:
        return matrix
    return sympy.ImmutableMatrix(matrix.shape[0], matrix.shape[1],
                                 lambda i, j: abbreviate(matrix[i, j], pairs))


# ---------------------------------------------------------------------------- line element


@dataclass(frozen=True)
class Term:
    """One term ``coefficient * dx^a dx^b`` of a line element (cross terms carry the 2)."""

    coefficient: sympy.Expr
    a: int
    b: int


def line_element_terms(
    metric: sympy.MatrixBase, names: Sequence[str]
) -> list[Term]:
    """Nonzero terms of ds^2, ordered time, radial, others, angles; cross terms after the
    square of their earlier coordinate (``dt^2, dt dphi, dr^2, ...``)."""
    n = metric.shape[0]
    order = sorted(range(n), key=lambda i: coordinate_rank(names[i], i))
    position = {index: k for k, index in enumerate(order)}
    terms = []
    for i in range(n):
        for j in range(i, n):
            value = sympy.sympify(metric[i, j])
            if value == 0:
                continue
            a, b = sorted((i, j), key=position.__getitem__)
            terms.append(Term(value if a == b else 2 * value, a, b))
    terms.sort(key=lambda t: (position[t.a], t.a != t.b, position[t.b]))
    return terms


def _differential(symbol: sympy.Symbol, printer: LatexPrinter, power: int = 1) -> str:
    body = printer.doprint(symbol)
    if power == 2:
        return f"{_DIFF}{_wrap_power_base(body)}^{{2}}"
    return f"{_DIFF}{body}"


def _wrap_power_base(tex: str) -> str:
    """Braces around a symbol that already carries a sub/superscript (``r_{0}`` -> ``{r_{0}}``)."""
    return f"{{{tex}}}" if ("_" in tex or "^" in tex) else tex


def _differentials(term: Term, coords: Sequence[sympy.Symbol], printer: LatexPrinter) -> str:
    if term.a == term.b:
        return _differential(coords[term.a], printer, 2)
    return _differential(coords[term.a], printer) + r"\," + _differential(coords[term.b], printer)


def _term_latex(coefficient: sympy.Expr, diffs: str, printer: TextbookLatexPrinter) -> str:
    """``coefficient * diffs`` without a sign; ``diffs/(...)`` when the coefficient is 1/D."""
    if coefficient == 1:
        return diffs
    numerator, denominator = sympy.fraction(sympy.factor_terms(coefficient))
    if numerator == 1 and denominator != 1:
        return rf"\frac{{{diffs}}}{{{printer.doprint(denominator)}}}"
    body = printer.doprint(coefficient)
    if coefficient.is_Add:
        body = rf"\left({body}\right)"
    return rf"{body}\,{diffs}"


def _round_sphere_pair(terms: list[Term], coords: Sequence[sympy.Symbol]) -> tuple[int, int] | None:
    """Indices (in ``terms``) of f dtheta^2 and f sin^2(theta) dphi^2, if both are present."""
    diagonal = {coords[t.a]: k for k, t in enumerate(terms) if t.a == t.b}
    cross = {c for t in terms if t.a != t.b for c in (coords[t.a], coords[t.b])}
    for polar in coords:
        if str(polar) not in ("theta", "vartheta") or polar not in diagonal:
            continue
        for azimuth in coords:
            if str(azimuth) not in ("phi", "varphi") or azimuth not in diagonal:
                continue
            if azimuth in cross or polar in cross:
                continue
            f = terms[diagonal[polar]].coefficient
            g = terms[diagonal[azimuth]].coefficient
            if sympy.cancel(g - f * sympy.sin(polar) ** 2) == 0:
                return diagonal[polar], diagonal[azimuth]
    return None


def line_element_latex(
    metric: sympy.MatrixBase, coordinates: Sequence[sympy.Symbol]
) -> str:
    r"""``\text{d}s^{2} = ...`` in textbook shape (see module docstring).

    A round-sphere pair becomes ``f(d\theta^2 + \sin^2\theta\,d\phi^2)`` and a run of
    squares sharing one coefficient becomes ``a^2(t)(dx^2 + dy^2 + dz^2)``.
    """
    return rf"{_DIFF}s^{{2}} = " + "".join(line_element_pieces(metric, coordinates))


def line_element_pieces(
    metric: sympy.MatrixBase, coordinates: Sequence[sympy.Symbol]
) -> list[str]:
    """The signed terms of ds^2 in order: ``["-A", " + B", " - C", ...]``."""
    printer = TextbookLatexPrinter(coordinates)
    terms = line_element_terms(metric, [str(c) for c in coordinates])
    pieces = [_group_latex(group, coordinates, printer)
              for group in _term_groups(terms, coordinates)]
    if not pieces:
        return ["0"]
    out = []
    for k, (negative, body) in enumerate(pieces):
        if k == 0:
            out.append(("-" if negative else "") + body)
        else:
            out.append((" - " if negative else " + ") + body)
    return out


_COMMAND = re.compile(r"\\(left|right|,|quad)|\\[A-Za-z]+|[{}^_]")


def visual_width(latex: str) -> int:
    """A rough count of printed characters (commands as one, brackets and scripts as none);
    fractions are over-counted, which only makes lines break a little early."""
    return len(_COMMAND.sub(lambda m: "" if m.group(1) or len(m.group(0)) == 1 else "x", latex))


def line_element_display_latex(
    metric: sympy.MatrixBase, coordinates: Sequence[sympy.Symbol], max_width: int = 64
) -> str:
    """Like ``line_element_latex`` but broken into aligned rows when it would be too wide
    for a page, the way long metrics are set in papers (break before + or -)."""
    pieces = line_element_pieces(metric, coordinates)
    rows: list[list[str]] = [[]]
    for piece in pieces:
        row = rows[-1]
        if row and visual_width("".join(row) + piece) > max_width:
            rows.append([piece])
        else:
            row.append(piece)
    lhs = rf"{_DIFF}s^{{2}}"
    if len(rows) == 1:
        return f"{lhs} = " + "".join(rows[0])
    lines = [f"{lhs} &= " + "".join(rows[0])]
    lines += [r"&\quad " + "".join(row).lstrip() for row in rows[1:]]
    return r"\begin{split}" + r" \\ ".join(lines) + r"\end{split}"


@dataclass(frozen=True)
class _Group:
    """Terms printed together: one term, a round sphere, or squares with one coefficient."""

    coefficient: sympy.Expr
    inner: tuple[Term, ...]
    sphere: bool = False


def _term_groups(terms: list[Term], coords: Sequence[sympy.Symbol]) -> list[_Group]:
    sphere = _round_sphere_pair(terms, coords)
    groups: list[_Group] = []
    for k, term in enumerate(terms):
        if sphere and k == sphere[1]:
            continue
        if sphere and k == sphere[0]:
            groups.append(_Group(term.coefficient, (term, terms[sphere[1]]), sphere=True))
            continue
        last = groups[-1] if groups else None
        if (last is not None and not last.sphere and term.a == term.b
                and all(t.a == t.b for t in last.inner) and term.coefficient != 1
                and sympy.cancel(term.coefficient - last.coefficient) == 0):
            groups[-1] = _Group(last.coefficient, (*last.inner, term))
            continue
        groups.append(_Group(term.coefficient, (term,)))
    return groups


def _group_latex(
    group: _Group, coords: Sequence[sympy.Symbol], printer: TextbookLatexPrinter
) -> tuple[bool, str]:
    """(negative, body) of one group, the sign pulled out front."""
    negative = _prefers_minus(group.coefficient)
    coefficient = -group.coefficient if negative else group.coefficient
    if len(group.inner) == 1:
        diffs = _differentials(group.inner[0], coords, printer)
        return negative, _term_latex(coefficient, diffs, printer)
    if group.sphere:
        polar, azimuth = coords[group.inner[0].a], coords[group.inner[1].a]
        inner = (rf"{_differential(polar, printer, 2)} + "
                 rf"\sin^{{2}}{printer.doprint(polar)}\,{_differential(azimuth, printer, 2)}")
    else:
        inner = " + ".join(_differential(coords[t.a], printer, 2) for t in group.inner)
    body = rf"\left({inner}\right)"
    if coefficient != 1:
        lead = printer.doprint(coefficient)
        body = (rf"\left({lead}\right)" if coefficient.is_Add else lead) + body
    return negative, body


def signed_latex(expr: sympy.Expr, coordinates: Sequence[sympy.Symbol] = ()) -> str:
    """A sum that reads better negated as ``-(1 - 2M/r)``, as textbooks write g_tt; anything
    else as `to_latex` prints it."""
    expr = sympy.sympify(expr)
    if expr.is_Add and _prefers_minus(expr):
        return rf"-\left({to_latex(-expr, coordinates)}\right)"
    return to_latex(expr, coordinates)


def component_latex(
    a: sympy.Symbol, b: sympy.Symbol, value: sympy.Expr, coordinates: Sequence[sympy.Symbol]
) -> str:
    """``g_{tt} = ...`` for one lower-index metric component."""
    printer = TextbookLatexPrinter(coordinates)
    return (rf"g_{{{printer.doprint(a)}{printer.doprint(b)}}} = "
            rf"{signed_latex(value, coordinates)}")


# ---------------------------------------------------------------------------- MathML

_MATHML_ELEMENTS = frozenset({
    "math", "mrow", "mi", "mn", "mo", "ms", "mtext", "mspace", "msup", "msub", "msubsup",
    "mfrac", "msqrt", "mroot", "mover", "munder", "munderover", "mtable", "mtr", "mtd",
    "mstyle", "mpadded", "mphantom", "menclose", "semantics", "annotation",
})
_MATHML_ATTRIBUTES = frozenset({
    "xmlns", "display", "stretchy", "fence", "form", "width", "mathvariant", "separator",
    "accent", "accentunder", "linethickness", "columnalign", "rowspacing", "columnspacing",
    "displaystyle", "scriptlevel", "lspace", "rspace", "movablelimits", "largeop", "symmetric",
    "minsize", "maxsize", "notation", "height", "depth", "encoding",
})
_MATHML_NS = "{http://www.w3.org/1998/Math/MathML}"


class UnsafeMathML(ValueError):
    """Raised when converted MathML contains anything outside the allow-list."""


def _check_mathml(markup: str) -> None:
    """Reject MathML with unknown elements/attributes or text that could be markup."""
    try:
        root = ET.fromstring(markup)
    except ET.ParseError as exc:
        raise UnsafeMathML(f"not well-formed MathML: {exc}") from exc
    for element in root.iter():
        tag = element.tag.removeprefix(_MATHML_NS)
        if tag not in _MATHML_ELEMENTS:
            raise UnsafeMathML(f"element <{tag}> is not allowed in MathML output")
        for attribute in element.attrib:
            if attribute not in _MATHML_ATTRIBUTES:
                raise UnsafeMathML(f"attribute {attribute!r} is not allowed in MathML output")


_UPRIGHT_D = re.compile(r"<mtext>d</mtext>")


_OPERATOR_NAMES = ("arcsin|arccos|arctan|sinh|cosh|tanh|coth|sech|csch|sin|cos|tan|cot|sec|csc"
                   "|log|exp|ln")
_BEFORE_OPERATOR = re.compile(rf"(?<=[\w}})])\s*\\({_OPERATOR_NAMES})(?![a-z])")
_AFTER_OPERATOR = re.compile(rf"\\({_OPERATOR_NAMES})(\^{{[^{{}}]*}})?\s*(?=\{{|\\[a-zA-Z]|\w)")


def operator_spacing(latex: str) -> str:
    """Thin spaces around function names, as TeX's \\mathop gives them (a cos θ, not acosθ):
    MathML renderers set <mi>cos</mi> flush against its neighbours otherwise."""
    latex = _BEFORE_OPERATOR.sub(lambda m: rf"\,\{m.group(1)}", latex)
    return _AFTER_OPERATOR.sub(lambda m: rf"\{m.group(1)}{m.group(2) or ''}\,", latex)


def latex_to_mathml(latex: str, display: bool = False) -> str:
    """MathML for our own LaTeX; raises UnsafeMathML if the result fails the allow-list."""
    latex = operator_spacing(latex)
    markup = _latex_to_mathml(latex, display="block" if display else "inline")
    markup = _UPRIGHT_D.sub('<mi mathvariant="normal">d</mi>', markup)
    _check_mathml(markup)
    return markup


def expr_to_mathml(
    expr: sympy.Expr, coordinates: Sequence[sympy.Symbol] = (), display: bool = False
) -> str:
    """MathML for a SymPy expression (sums in textbook order)."""
    return latex_to_mathml(to_latex(expr, coordinates), display=display)
