"""Mathematics in prose: $...$ spans parsed by the whitelisted grammar, typeset at build time,
and program syntax outside math reported by `check`.

The demo entry is set in our own scenario (tests/roots/demo-catalog: a lighthouse dome as a
round sphere). The Kerr forms Σ = r² + a² cos²θ and Δ = r² − 2Mr + a² are the textbook
abbreviations (R. P. Kerr 1963; R. H. Boyer & R. W. Lindquist, J. Math. Phys. 8, 265 (1967),
common practice).
"""

from __future__ import annotations

import xml.etree.ElementTree as ET
from pathlib import Path

import pytest
import sympy

from generator.entry.loader import load_entry
from generator.entry.mathparse import (
    MinusPlus,
    PlusMinus,
    ProseChain,
    SymbolTable,
    parse_prose,
)
from generator.entry.prose import plain_prose, split_prose
from generator.errors import MathSyntaxError
from generator.site.prose_html import prose_line, prose_markdown, prose_symbols

ROOT = Path(__file__).resolve().parent.parent
DEMO_ENTRY = ROOT / "tests" / "roots" / "demo-catalog" / "catalog" / "riemannian" / \
    "lighthouse-dome.yaml"
r, M, a, theta = sympy.symbols("r M a theta", positive=True)
TABLE = SymbolTable({"r": r, "M": M, "a": a, "theta": theta}, {}, {})


def variant(tmp_path: Path, replace: dict[str, str]) -> Path:
    text = DEMO_ENTRY.read_text(encoding="utf-8")
    for old, new in replace.items():
        assert old in text, old
        text = text.replace(old, new)
    folder = tmp_path / "catalog" / "riemannian"
    folder.mkdir(parents=True)
    path = folder / "lighthouse-dome.yaml"
    path.write_text(text, encoding="utf-8")
    return path


def prose_diagnostics(path: Path) -> list:
    return [d for d in load_entry(path).diagnostics if d.code.startswith(("prose", "entry.ab",
                                                                          "entry.name"))]


# ---------------------------------------------------------------------------- splitting


def test_split_finds_math_code_fences_and_escaped_dollars() -> None:
    text = "With $r = 0$ and `x**2`, costs \\$5.\n\n```\n$not math$\n```\nend $M$"
    kinds = [(p.kind, p.text) for p in split_prose(text)]
    assert ("math", "r = 0") in kinds
    assert ("code", "`x**2`") in kinds
    assert ("dollar", "$") in kinds
    assert any(k == "fence" and "$not math$" in t for k, t in kinds)
    assert ("math", "M") in kinds
    assert not any(k == "math" and "not math" in t for k, t in kinds)


def test_math_does_not_run_across_a_paragraph_break() -> None:
    pieces = split_prose("costs $5\n\nand $6 more")
    assert [p.kind for p in pieces] == ["text"]


def test_plain_prose_drops_only_the_delimiters() -> None:
    assert plain_prose("mass $M$ and spin $a*M$") == "mass M and spin a*M"


# ---------------------------------------------------------------------------- grammar


def test_prose_grammar_reads_relations_lists_plus_minus_and_infinity() -> None:
    (chain,) = parse_prose("r = M ± sqrt(M**2 - a**2)", TABLE)
    assert chain.relations == ("=",)
    assert chain.parts[1] == PlusMinus(M, sympy.sqrt(M**2 - a**2))
    assert parse_prose("r = 0, theta = pi/2", TABLE) == (
        ProseChain((r, sympy.S.Zero), ("=",)), ProseChain((theta, sympy.pi / 2), ("=",)))
    assert parse_prose("0 < r < infinity", TABLE)[0].parts[2] == sympy.oo
    assert parse_prose("a**2 <= M**2", TABLE)[0].relations == ("≤",)
    assert parse_prose("r -> infinity", TABLE)[0].relations == ("→",)
    assert parse_prose("∓ a", TABLE)[0].parts[0] == MinusPlus(0, a)


@pytest.mark.parametrize("text, offset", [
    ("Sigma = 0", 0),  # undeclared name
    ("r = 2*M*Q", 8),
    ("r = __import__", 4),
    ("r = 'x'", 4),
])
def test_prose_grammar_refuses_unknown_names_with_their_offset(text: str, offset: int) -> None:
    with pytest.raises(MathSyntaxError) as error:
        parse_prose(text, TABLE)
    assert error.value.offset == offset


def test_relations_are_never_evaluated() -> None:
    """``M = 0`` for a positive M would evaluate to False as a SymPy relation; prose keeps it."""
    (chain,) = parse_prose("M = 0", TABLE)
    assert chain.parts == (M, 0)


# ---------------------------------------------------------------------------- check


def test_unknown_name_in_notes_is_an_error_at_its_line_and_column(tmp_path: Path) -> None:
    path = variant(tmp_path, {"so its curvature is constant.":
                              "so its curvature is $2/rho**2 + Q$."})
    (problem,) = [d for d in prose_diagnostics(path) if d.code == "prose.math"]
    assert problem.severity == "error"
    lines = path.read_text(encoding="utf-8").splitlines()
    assert lines[problem.line - 1][problem.column - 1] == "Q"
    assert "unknown name 'Q'" in problem.message


def test_program_syntax_outside_math_is_a_warning_at_its_position(tmp_path: Path) -> None:
    path = variant(tmp_path, {"so its curvature is constant.":
                              "so R = 2/rho**2, and **this** is bold, *this* emphasised."})
    problems = prose_diagnostics(path)
    assert [d.code for d in problems] == ["prose.program-syntax"]
    (warning,) = problems
    assert warning.severity == "warning"
    line = path.read_text(encoding="utf-8").splitlines()[warning.line - 1]
    assert line[warning.column - 1:].startswith("o**2")


@pytest.mark.parametrize("prose", ["radius sqrt(rho)", "area 4*pi*rho", "rho ** 2"])
def test_each_kind_of_program_syntax_is_noticed(tmp_path: Path, prose: str) -> None:
    path = variant(tmp_path, {"so its curvature is constant.": prose})
    assert [d.code for d in prose_diagnostics(path)] == ["prose.program-syntax"]


def test_the_same_math_between_dollars_passes(tmp_path: Path) -> None:
    path = variant(tmp_path, {"so its curvature is constant.":
                              "so the curvature is $2/rho**2$ and the area $4*pi*rho**2$."})
    assert prose_diagnostics(path) == []


def test_an_unclosed_dollar_is_an_error(tmp_path: Path) -> None:
    path = variant(tmp_path, {"summary: The glass dome": "summary: The $glass dome"})
    assert [d.code for d in prose_diagnostics(path)] == ["prose.math"]


def test_abbreviations_are_checked(tmp_path: Path) -> None:
    ok = variant(tmp_path / "ok", {"domain:": "abbreviations:\n  A: 4*pi*rho**2\ndomain:",
                                   "constant.": "constant and its area is $A$."})
    assert prose_diagnostics(ok) == []
    clash = variant(tmp_path / "clash", {"domain:": "abbreviations:\n  rho: 2\ndomain:"})
    assert any("reuses a declared name" in d.message for d in prose_diagnostics(clash))
    constant = variant(tmp_path / "constant", {"domain:": "abbreviations:\n  A: 2*pi\ndomain:"})
    assert [d.code for d in prose_diagnostics(constant)] == ["entry.abbreviation"]
    unknown = variant(tmp_path / "unknown", {"domain:": "abbreviations:\n  A: 2*Q\ndomain:"})
    assert any("unknown name 'Q'" in d.message for d in load_entry(unknown).diagnostics)


def test_shipped_catalog_has_no_program_syntax_in_prose() -> None:
    """Every shipped entry's prose reads as mathematics, not as code."""
    problems = []
    for path in sorted((ROOT / "catalog").glob("*/*.yaml")):
        result = load_entry(path)
        problems += [d.format_text() for d in result.diagnostics
                     if d.code.startswith("prose.") or d.code == "entry.abbreviation"]
    assert problems == []


# ---------------------------------------------------------------------------- rendering


def _loaded(tmp_path: Path, replace: dict[str, str]):
    result = load_entry(variant(tmp_path, replace))
    assert result.entry is not None and result.spacetime is not None
    return result.entry, result.spacetime


def test_notes_math_becomes_mathml_and_markdown_still_works(tmp_path: Path) -> None:
    entry, st = _loaded(tmp_path, {"so its curvature is constant.":
                                   "so **its** curvature is $2/rho**2$ (`raw` code)."})
    html = str(prose_markdown(entry.notes, prose_symbols(entry, st)))
    root = ET.fromstring(f"<div>{html}</div>")
    maths = [e for e in root.iter() if e.tag.endswith("math")]
    assert len(maths) == 1
    assert "$" not in "".join(root.itertext())
    assert root.find(".//strong").text == "its"
    assert root.find(".//code").text == "raw"
    assert "**" not in "".join(t for e in root.iter() if not e.tag.endswith(("code", "math"))
                               for t in [e.text or ""])


def test_math_spans_cannot_carry_markup(tmp_path: Path) -> None:
    entry, st = _loaded(tmp_path, {})
    symbols = prose_symbols(entry, st)
    html = str(prose_markdown("a $<script>alert(1)</script>$ b", symbols))
    assert "<script" not in html
    assert "&lt;script&gt;" in html  # shown as code, escaped
    assert "<script" not in str(prose_line("x $rho<img src=x>$ y", symbols))


def test_summary_line_is_escaped_text_with_math(tmp_path: Path) -> None:
    entry, st = _loaded(tmp_path, {})
    html = str(prose_line("radius $rho$ & <b>bold</b>", prose_symbols(entry, st)))
    assert "<math" in html and "&lt;b&gt;" in html and "&amp;" in html


def test_program_syntax_in_a_parameter_meaning_is_noticed(tmp_path: Path) -> None:
    path = variant(tmp_path, {"meaning: radius of the dome": "meaning: radius sqrt(A/pi)"})
    assert [d.code for d in prose_diagnostics(path)] == ["prose.program-syntax"]
