"""Mathematics in an entry's prose: finding it, parsing it, and warning about program syntax.

Notes, summaries and chart descriptions are read by people, so their mathematics is written
between dollar signs — ``$Sigma = r**2 + a**2*cos(theta)**2$`` — in the entry's own math
grammar and typeset at build time. The spans go through the same whitelisted parser as the
metric (`mathparse.parse_prose`), so an unknown name is an error at its line and column, and
nothing in prose is ever evaluated as code. ``\\$`` is a literal dollar sign. Program syntax
left outside math (``r**2``, ``sqrt(``, ``2*M``) is what readers were shown before this
existed, so ``check`` warns about it.
"""

from __future__ import annotations

import bisect
import re
from collections.abc import Iterable
from dataclasses import dataclass

import sympy

from generator.entry.mathparse import ProseMath, SymbolTable, parse_expression, parse_prose
from generator.entry.mathparse import valid_name as _valid_name
from generator.errors import Diagnostic, MathSyntaxError, SourcePos
from generator.model import Entry, MathText, Spacetime

DELIMITER = "$"
PROSE_FIELDS = ("title", "chart", "summary", "notes")  # fields read as prose
MATH_FIELDS = ("chart", "summary", "notes")  # prose fields that may hold $math$
PROGRAM_SYNTAX = re.compile(
    r"(?P<power>[\w)\]](?:\*\*| \*\* )[\w(])"  # r**2; Markdown bold has a space on one side
    r"|(?P<sqrt>\bsqrt\s*\()"
    r"|(?P<product>[\w)](?:\*| \* )[\w(])"  # 2*M, (a)*(b); emphasis *word* starts after a space
)
PROGRAM_CODE = "prose.program-syntax"
MATH_CODE = "prose.math"


@dataclass(frozen=True)
class Piece:
    """A run of prose: ``text`` (Markdown or plain), ``math`` (between $), ``code`` (a code
    span), ``fence`` (a fenced code block) or ``dollar`` (an escaped literal $)."""

    kind: str
    text: str
    start: int  # offset of ``text`` in the field's value


_FENCE = re.compile(r"^ {0,3}(```|~~~)")


def split_prose(text: str) -> tuple[Piece, ...]:
    """Cut prose into text, math, code and literal-dollar pieces, in order.

    A ``$`` with no closing partner before a blank line is left as text (``check`` reports it).
    """
    pieces: list[Piece] = []
    offset = 0
    fence: str | None = None
    block_start = 0
    for line in text.splitlines(keepends=True):
        match = _FENCE.match(line)
        if fence is not None:
            if match and match.group(1) == fence:
                pieces.append(Piece("fence", text[block_start:offset + len(line)], block_start))
                fence = None
            offset += len(line)
            continue
        if match:
            fence, block_start = match.group(1), offset
            offset += len(line)
            continue
        offset += len(line)
    if fence is not None:
        pieces.append(Piece("fence", text[block_start:], block_start))
    fenced = [(p.start, p.start + len(p.text)) for p in pieces]
    out: list[Piece] = []
    cursor = 0
    for start, end in fenced:
        out.extend(_split_inline(text, cursor, start))
        out.append(Piece("fence", text[start:end], start))
        cursor = end
    out.extend(_split_inline(text, cursor, len(text)))
    return tuple(p for p in out if p.text)


def _split_inline(text: str, begin: int, end: int) -> list[Piece]:
    out: list[Piece] = []
    run_start = begin
    k = begin

    def flush(upto: int) -> None:
        if upto > run_start:
            out.append(Piece("text", text[run_start:upto], run_start))

    while k < end:
        char = text[k]
        if char == "\\" and k + 1 < end and text[k + 1] == DELIMITER:
            flush(k)
            out.append(Piece("dollar", DELIMITER, k))
            k += 2
            run_start = k
            continue
        if char == "`":
            ticks = len(text[k:end]) - len(text[k:end].lstrip("`"))
            close = text.find("`" * ticks, k + ticks, end)
            if close >= 0:
                flush(k)
                out.append(Piece("code", text[k:close + ticks], k))
                k = close + ticks
                run_start = k
                continue
            k += ticks
            continue
        if char == DELIMITER:
            close = _closing_dollar(text, k + 1, end)
            if close is not None:
                flush(k)
                out.append(Piece("math", text[k + 1:close], k + 1))
                k = close + 1
                run_start = k
                continue
        k += 1
    flush(end)
    return out


def _closing_dollar(text: str, begin: int, end: int) -> int | None:
    """The next unescaped $ before a blank line, or None."""
    k = begin
    while k < end:
        if text[k] == DELIMITER and text[k - 1] != "\\":
            return k if k > begin else None
        if text.startswith("\n\n", k) or text.startswith("\n \n", k):
            return None
        k += 1
    return None


def unclosed_dollars(pieces: Iterable[Piece]) -> list[int]:
    """Offsets of $ signs left in text pieces (no partner, or an empty $$)."""
    return [p.start + m.start() for p in pieces if p.kind == "text"
            for m in re.finditer(re.escape(DELIMITER), p.text)]


# ---------------------------------------------------------------------------- symbols


def abbreviation_symbols(entry: Entry) -> dict[str, sympy.Symbol]:
    """One plain symbol per declared abbreviation (its definition is kept apart)."""
    return {name: sympy.Symbol(name) for name, _ in entry.abbreviations if _valid_name(name)}


def prose_table(entry: Entry, spacetime: Spacetime) -> SymbolTable:
    """What prose math may name: the entry's symbols, differentials and abbreviations."""
    symbols: dict[str, sympy.Symbol] = {}
    functions: dict[str, tuple[sympy.FunctionClass, tuple[sympy.Symbol, ...]]] = {}
    for name, value in spacetime.symbols.items():
        if isinstance(value, sympy.Symbol):
            symbols[name] = value
        else:
            functions[name] = (value.func, tuple(value.args))
    for name, symbol in abbreviation_symbols(entry).items():
        symbols.setdefault(name, symbol)
    differentials = {f"d{c}": sympy.Symbol(f"d{c}") for c in entry.coordinates}
    return SymbolTable(symbols, functions, differentials)


def abbreviation_values(entry: Entry, spacetime: Spacetime) -> dict[str, sympy.Expr]:
    """Each abbreviation's definition as SymPy (those that parse)."""
    table = SymbolTable({k: v for k, v in spacetime.symbols.items()
                         if isinstance(v, sympy.Symbol)},
                        {k: (v.func, tuple(v.args)) for k, v in spacetime.symbols.items()
                         if not isinstance(v, sympy.Symbol)}, {})
    out = {}
    for name, math in entry.abbreviations:
        try:
            out[name] = parse_expression(math.text, table)
        except MathSyntaxError:
            continue
    return out


def parse_span(text: str, table: SymbolTable) -> ProseMath | None:
    """A prose math span parsed, or None when it does not parse (pages then show it as code)."""
    try:
        return parse_prose(text, table)
    except (MathSyntaxError, RecursionError, ValueError, TypeError):
        return None


# ---------------------------------------------------------------------------- check


def check_prose(entry: Entry, spacetime: Spacetime | None) -> list[Diagnostic]:
    """Diagnostics for abbreviations, math in prose, and program syntax left in prose."""
    out = list(_check_abbreviations(entry, spacetime))
    table = prose_table(entry, spacetime) if spacetime is not None else None
    for field in PROSE_FIELDS:
        value = getattr(entry, field)
        if not value:
            continue
        located = locate_value(entry, field, value)
        pieces = split_prose(value) if field in MATH_FIELDS else (Piece("text", value, 0),)
        for piece in pieces:
            if piece.kind == "math" and table is not None:
                out.extend(_math_problems(piece, table, located))
            elif piece.kind in ("text", "code"):  # code spans show on pages too
                out.extend(_program_syntax(piece, located))
        if field in MATH_FIELDS:
            for offset in unclosed_dollars(pieces):
                out.append(Diagnostic.at(
                    located.pos_at(offset), "error", "a $ without its closing $",
                    MATH_CODE, "close the math with a second $, or write \\$ for a dollar sign"))
    for declared in (*entry.parameters, *entry.functions):  # meanings are read as prose too
        out.extend(_program_syntax(Piece("text", declared.meaning, 0),
                                   MathText(declared.meaning, declared.pos)))
    return out


def _math_problems(piece: Piece, table: SymbolTable, located: MathText) -> list[Diagnostic]:
    try:
        parse_prose(piece.text, table)
    except MathSyntaxError as exc:
        hint = exc.hint
        if exc.message.startswith("unknown name"):
            hint = ("math in prose may name the entry's coordinates, parameters, functions and "
                    "abbreviations; declare a shorthand under 'abbreviations', or write other "
                    "symbols in words or Unicode outside the $ signs")
        return [Diagnostic.at(located.pos_at(piece.start + exc.offset), "error",
                              f"in math in prose: {exc.message}", MATH_CODE, hint)]
    except (RecursionError, ValueError, TypeError) as exc:
        return [Diagnostic.at(located.pos_at(piece.start), "error",
                              f"cannot read this math: {type(exc).__name__}", MATH_CODE,
                              "simplify the expression")]
    return []


def _program_syntax(piece: Piece, located: MathText) -> list[Diagnostic]:
    out = []
    reported_to = -1  # one warning per expression: up to the next white space after a match
    for match in PROGRAM_SYNTAX.finditer(piece.text):
        if match.start() < reported_to:
            continue
        space = re.search(r"\s(?![*/+-]\s)", piece.text[match.end():])
        reported_to = match.end() + (space.start() if space else len(piece.text))
        kind = match.lastgroup or "product"
        what = {"power": "'**'", "sqrt": "'sqrt('", "product": "'*'"}[kind]
        out.append(Diagnostic.at(
            located.pos_at(piece.start + match.start()), "warning",
            f"program syntax {what} in prose is shown to readers as it is",
            PROGRAM_CODE, "put the mathematics between $ signs (e.g. $r**2 + a**2$) so it is "
            "typeset, or write it in words"))
    return out


def _check_abbreviations(entry: Entry, spacetime: Spacetime | None) -> Iterable[Diagnostic]:
    declared = set(entry.coordinates) | {p.name for p in entry.parameters} | {
        f.name for f in entry.functions} | {f"d{c}" for c in entry.coordinates}
    values = abbreviation_values(entry, spacetime) if spacetime is not None else {}
    for name, math in entry.abbreviations:
        pos = entry.pos(f"abbreviations.{name}")
        if not _valid_name(name):
            yield Diagnostic.at(pos, "error", f"'{name}' cannot be an abbreviation's name",
                                "entry.name", "it is a reserved word of the math grammar")
            continue
        if name in declared:
            yield Diagnostic.at(pos, "error", f"abbreviation '{name}' reuses a declared name",
                                "entry.name", "choose a name not used by coordinates, "
                                "parameters or functions")
            continue
        if spacetime is None:
            continue
        if name not in values:
            try:
                abbreviation_values_strict(math, spacetime)
            except MathSyntaxError as exc:
                yield Diagnostic.at(math.pos_at(exc.offset), "error", exc.message,
                                    "math.syntax", exc.hint)
            continue
        if not values[name].free_symbols:
            yield Diagnostic.at(pos, "error", f"abbreviation '{name}' is a constant",
                                "entry.abbreviation", "an abbreviation names an expression of "
                                "the coordinates or parameters; write numbers directly")


def abbreviation_values_strict(math: MathText, spacetime: Spacetime) -> sympy.Expr:
    """Parse one definition, raising the parser's error (for its position)."""
    table = SymbolTable({k: v for k, v in spacetime.symbols.items()
                         if isinstance(v, sympy.Symbol)},
                        {k: (v.func, tuple(v.args)) for k, v in spacetime.symbols.items()
                         if not isinstance(v, sympy.Symbol)}, {})
    return parse_expression(math.text, table)


# ---------------------------------------------------------------------------- positions


def locate_value(entry: Entry, field: str, value: str) -> MathText:
    """The field's text with the file position of each of its characters.

    Block scalars and folding move characters between lines, so each non-space character is
    matched to its next occurrence in the file after the field's key, as for math strings.
    """
    pos = entry.pos(field)
    source = entry.source_text
    if not source:
        return MathText(value, pos)
    starts = [0, *(m.end() for m in re.finditer(r"\r\n|[\r\n\x85\u2028\u2029]", source))]
    line_index = min(max(pos.line - 1, 0), len(starts) - 1)
    start = starts[line_index] + max(pos.column - 1, 0)
    offsets: list[tuple[int, int]] = []
    cursor = start
    last = start
    for char in value:
        if not char.isspace():
            found = source.find(char, cursor)
            if found >= 0:
                last, cursor = found, found + 1
        line = bisect.bisect_right(starts, last) - 1
        offsets.append((line + 1, last - starts[line] + 1))
    return MathText(value, SourcePos(pos.file, pos.line, pos.column), tuple(offsets))


def plain_prose(text: str) -> str:
    """Prose with its $ delimiters removed (for search indexes and plain-text exports)."""
    return "".join(p.text for p in split_prose(text))
