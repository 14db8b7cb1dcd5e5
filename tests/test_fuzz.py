"""Fuzzing the loader and the math parser with Hypothesis.

The contract under test (every entry is written by a stranger): any input ends either in a
loaded entry or in positioned diagnostics (``file:line:col`` inside the file) — never an
uncaught exception, never a hang, never unbounded memory. Each example runs under
`generator.run.limits.run_limited`, so a hang or a memory blow-up fails the test with the input
that caused it instead of stalling CI.

The runs are derandomized (same examples on every run) so CI is deterministic; the example
counts are printed by ``pytest -s`` via Hypothesis statistics (``--hypothesis-show-statistics``).
The nightly-scale run of the whole-input generators is bench/fuzz_catalog.py (bench/README.md).
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest
import sympy
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from generator.entry.catalog import vocabulary
from generator.entry.loader import LoadResult, load_entry, load_text, parse_at, symbol_table
from generator.entry.mathparse import MAX_DEPTH, parse_expression, parse_inequality
from generator.errors import BudgetExceeded, Diagnostic, MathSyntaxError, SourcePos
from generator.model import MathText
from generator.run.limits import run_limited
from tests._hostile import make_catalog

PROJECT = Path(__file__).resolve().parents[1]
SEED_FILE = PROJECT / "tests/roots/hostile-valid/isolated-objects/schwarzschild.yaml"
SEED = SEED_FILE.read_text(encoding="utf-8")
SEED_LINES = SEED.splitlines(keepends=True)
FILE = "catalog/isolated-objects/schwarzschild.yaml"
VOCABULARY = vocabulary(PROJECT / "catalog")
SECONDS_PER_INPUT = 20.0
MEMORY_PER_INPUT = 1 << 30

FUZZ = settings(derandomize=True, deadline=None, database=None, print_blob=True,
                suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large,
                                       HealthCheck.function_scoped_fixture])


def fuzz(examples: int) -> settings:
    """Bounded, derandomized Hypothesis settings with ``examples`` inputs."""
    return settings(FUZZ, max_examples=examples)


_LINE_BREAK = re.compile(r"\r\n|[\r\n\x85\u2028\u2029]")


def load_bounded(source: str) -> LoadResult:
    """Load under a hard limit; a hang or memory blow-up is a finding, reported as such."""
    try:
        return run_limited(load_text, source, FILE, Path(FILE), VOCABULARY,
                           seconds=SECONDS_PER_INPUT, memory_bytes=MEMORY_PER_INPUT)
    except BudgetExceeded as exc:
        problem = str(exc)  # reported outside the handler: the interrupted frames are odd
    pytest.fail(f"loading did not end within its limits ({problem}) for input {source!r:.400}")


def assert_inside(diagnostic: Diagnostic, source: str, file: str = FILE) -> None:
    """A diagnostic names this file and a line:column that exists in it (or just past it)."""
    lines = _LINE_BREAK.split(source)
    assert diagnostic.file == file
    assert diagnostic.severity in ("error", "warning", "note")
    assert diagnostic.message.strip()
    assert 1 <= diagnostic.line <= len(lines), (diagnostic, len(lines))
    assert 1 <= diagnostic.column <= len(lines[diagnostic.line - 1]) + 1, diagnostic
    assert "Traceback" not in diagnostic.format_text()


def assert_loaded_or_explained(result: LoadResult, source: str) -> None:
    for diagnostic in result.diagnostics:
        assert_inside(diagnostic, source)
    if result.ok:
        assert result.entry is not None and result.spacetime is not None
    else:
        assert any(d.severity == "error" for d in result.diagnostics)


def test_the_seed_entry_loads() -> None:
    """The mutations below start from a valid entry (else they would test nothing)."""
    result = load_bounded(SEED)
    assert result.ok, [d.format_text() for d in result.diagnostics]


# ---------------------------------------------------------------------------- YAML strategies

HOSTILE_SNIPPETS = (
    "!!python/object/apply:os.system ['touch pwned']",
    "&a [1, 2]", "*a", "!custom x", "{{ 7*7 }}", "{% for x in y %}", "<script>x</script>",
    "? complex key\n: value", "--- \n", "...", "%YAML 1.1", "\t", "\x00", "\ufeff", "\u2028",
    "[" * 60, "{a: " * 30, "- " * 40, "'unterminated", '"\\x', "key: value: other",
    "0x1F", "1e999", ".inf", "~", "null", "yes", "2026-13-45", "__import__('os')",
    "a" * 5000,
)


@st.composite
def mutated_entry(draw: st.DrawFn) -> str:
    """The valid seed after 1–5 random line-level or character-level edits."""
    lines = list(SEED_LINES)
    for _ in range(draw(st.integers(1, 5))):
        if not lines:
            lines = [""]
        i = draw(st.integers(0, len(lines) - 1))
        j = draw(st.integers(0, len(lines) - 1))
        edit = draw(st.sampled_from(("delete", "duplicate", "swap", "insert", "replace",
                                     "indent", "dedent", "snippet", "nest", "chars")))
        lines = _edit(draw, lines, edit, i, j)
    return "".join(lines)


def _edit(draw: st.DrawFn, lines: list[str], edit: str, i: int, j: int) -> list[str]:
    line = lines[i]
    if edit == "delete":
        return lines[:i] + lines[i + 1:]
    if edit == "duplicate":
        return [*lines[:i + 1], line, *lines[i + 1:]]
    if edit == "swap":
        lines[i], lines[j] = lines[j], lines[i]
        return lines
    if edit == "indent":
        lines[i] = " " * draw(st.integers(1, 6)) + line
        return lines
    if edit == "dedent":
        lines[i] = line.lstrip(" ")
        return lines
    at = draw(st.integers(0, len(line)))
    if edit == "insert":
        piece = draw(st.text(max_size=20))
    elif edit == "chars":
        piece = draw(st.binary(max_size=12)).decode("latin-1")
    elif edit == "snippet":
        piece = draw(st.sampled_from(HOSTILE_SNIPPETS))
    elif edit == "nest":
        depth = draw(st.integers(10, 400))
        piece = draw(st.sampled_from(("[" * depth + "]" * depth,
                                      "{a: " * depth + "1" + "}" * depth,
                                      "(" * depth + "r" + ")" * depth)))
    else:  # replace the value after the first colon
        head, colon, _ = line.partition(":")
        lines[i] = head + colon + " " + draw(st.text(max_size=30)) + "\n"
        return lines
    lines[i] = line[:at] + piece + line[at:]
    return lines


# ---------------------------------------------------------------------------- YAML tests


@pytest.mark.slow
@fuzz(300)
@given(st.text(max_size=400))
def test_random_text_is_loaded_or_explained(source: str) -> None:
    assert_loaded_or_explained(load_bounded(source), source)


@pytest.mark.slow
@fuzz(400)
@given(mutated_entry())
def test_mutated_entries_are_loaded_or_explained(source: str) -> None:
    assert_loaded_or_explained(load_bounded(source), source)


@pytest.mark.slow
@fuzz(200)
@given(st.binary(max_size=600), st.integers(0, len(SEED.encode())))
def test_random_bytes_in_a_file_are_loaded_or_explained(
    tmp_path: Path, noise: bytes, at: int
) -> None:
    raw = SEED.encode()[:at] + noise + SEED.encode()[at:]
    folder = tmp_path / "isolated-objects"
    folder.mkdir(exist_ok=True)
    path = folder / "schwarzschild.yaml"
    path.write_bytes(raw)
    result = run_limited(load_entry, path, FILE, VOCABULARY, seconds=SECONDS_PER_INPUT,
                         memory_bytes=MEMORY_PER_INPUT)
    try:
        source = raw.decode("utf-8")
    except UnicodeDecodeError:
        (diagnostic,) = result.diagnostics
        assert diagnostic.code == "file.encoding"
        assert (diagnostic.file, diagnostic.line) == (FILE, 1)
        return
    assert_loaded_or_explained(result, source)


@pytest.mark.parametrize("depth", [21, 100, 1000, 10_000])
def test_deep_yaml_nesting_is_refused_with_a_position(depth: int) -> None:
    source = SEED.replace("ricci_scalar: 0", "ricci_scalar: " + "[" * depth + "]" * depth)
    result = load_bounded(source)
    assert not result.ok
    assert_loaded_or_explained(result, source)
    assert any(d.code == "yaml.depth" for d in result.diagnostics)


# ---------------------------------------------------------------------------- math strategies

DECLARED = ("t", "r", "theta", "phi", "M")
STRANGERS = ("x", "os", "__class__", "__import__", "__builtins__", "self", "lambda", "eval",
             "exec", "import", "dr", "dtheta", "sympify", "Symbol", "oo", "zoo", "nan",
             "factorial", "Integral", "ln", "Function", "_", "r_", "M2")
FUNCTIONS = ("sin", "cos", "tan", "sec", "csc", "cot", "sinh", "cosh", "tanh", "exp", "log",
             "sqrt", "Abs", "LambertW", "asin", "acosh", "atanh", "diff")

leaves = st.one_of(
    st.sampled_from((*DECLARED, "pi", "E", "I")),
    st.sampled_from(STRANGERS),
    st.integers(0, 10**6).map(str),
    st.integers(0, 10**60).map(str),
    st.sampled_from(("0.5", ".25", "1e3", "1e-40", "2E+41", "1.", "0")),
)


def _combine(inner: st.SearchStrategy[str]) -> st.SearchStrategy[str]:
    binary = st.tuples(inner, st.sampled_from(("+", "-", "*", "/", "**", " ** ", "^", "//",
                                               "%", "<", "==", "@", ",")), inner)
    return st.one_of(
        binary.map("".join),
        inner.map(lambda s: f"({s})"),
        inner.map(lambda s: f"-{s}"),
        st.tuples(st.sampled_from(FUNCTIONS), inner).map(lambda p: f"{p[0]}({p[1]})"),
        st.tuples(inner, inner).map(lambda p: f"diff({p[0]}, {p[1]})"),
        st.tuples(inner, st.integers(-10**4, 10**4)).map(lambda p: f"({p[0]})**{p[1]}"),
        st.tuples(inner, st.integers(-5, 100)).map(lambda p: f"({p[0]})**({p[1]}/3)"),
        inner.map(lambda s: f"{s}.__class__.__bases__"),
        inner.map(lambda s: f"{s}[0]"),
        inner.map(lambda s: f"{s}(1)"),
        inner.map(lambda s: f"lambda: {s}"),
        inner.map(lambda s: f"'{s}'"),
    )


math_strings = st.recursive(leaves, _combine, max_leaves=40)


def table() -> object:
    from tests._entry_builders import schwarzschild

    return symbol_table(schwarzschild())[0]


TABLE = table()


def parse_bounded(text: str, relation: bool = False) -> tuple[object, Diagnostic | None]:
    math = MathText(text, SourcePos(FILE, 7, 3))
    try:
        return run_limited(parse_at, math, TABLE, relation, seconds=SECONDS_PER_INPUT,
                           memory_bytes=MEMORY_PER_INPUT)
    except BudgetExceeded as exc:
        problem = str(exc)
    pytest.fail(f"parsing did not end within its limits ({problem}) for {text!r:.400}")


def assert_parsed_or_positioned(text: str, relation: bool = False) -> None:
    value, problem = parse_bounded(text, relation)
    if problem is None:
        assert isinstance(value, sympy.Basic)
        return
    assert value is None
    assert (problem.file, problem.line, problem.severity) == (FILE, 7, "error")
    assert 3 <= problem.column <= 3 + len(text), (problem, text)


# ---------------------------------------------------------------------------- math tests


@pytest.mark.slow
@fuzz(1000)
@given(math_strings)
def test_grammar_shaped_math_is_parsed_or_positioned(text: str) -> None:
    assert_parsed_or_positioned(text)


@pytest.mark.slow
@fuzz(500)
@given(st.text(max_size=200))
def test_random_math_text_is_parsed_or_positioned(text: str) -> None:
    assert_parsed_or_positioned(text)


@pytest.mark.slow
@fuzz(300)
@given(math_strings, st.sampled_from(("<", "<=", ">", ">=")), math_strings)
def test_random_inequalities_are_parsed_or_positioned(left: str, op: str, right: str) -> None:
    assert_parsed_or_positioned(f"{left} {op} {right}", relation=True)


@pytest.mark.slow
@fuzz(300)
@given(math_strings)
def test_the_parser_raises_only_its_own_error(text: str) -> None:
    """Below the loader: parse_expression itself reports bad math as MathSyntaxError only
    (a ValueError or a SymPy error escaping would be a hole in the whitelist)."""
    try:
        run_limited(parse_expression, text, TABLE, seconds=SECONDS_PER_INPUT,
                    memory_bytes=MEMORY_PER_INPUT)
    except MathSyntaxError as exc:
        assert 0 <= exc.offset <= len(text)


@pytest.mark.parametrize("text", [
    "(" * (MAX_DEPTH + 1) + "r" + ")" * (MAX_DEPTH + 1),
    "(" * 50_000 + "r" + ")" * 50_000,
    "-" * 5000 + "r",
    "r" + "**r" * 5000,
    "sin(" * 3000 + "r" + ")" * 3000,
    "r" + "+r" * 9000,
    "r" + "*r" * 9000,
    "((((r+1)**100)**100)**100)**100",
    "9**9**9**9",
    "(10**40)**100",
    "2**(10**40)",
    "1e99999999999999999",
    "9" * 100,
    "sqrt(" + "9" * 40 + ")",
    "diff(r, r, 4, 4)",
    "diff(diff(diff(diff(diff(r**9, r, 4), r, 4), r, 4), r, 4), r, 4)",
    "LambertW(r, 7)",
    "__import__('os').system('touch pwned')",
    "r.__class__",
    "().__class__.__bases__[0].__subclasses__()",
    "lambda: 0",
    "exec",
    "r if r else M",
    "[r for r in r]",
    "r\x00",
    "r; M",
    "0/0",
    "r/0",
    "r/(r-r)",
    "log(0)",
    "1/(sin(pi))",
    "M*r" * 3000,
])
def test_named_pathological_math_is_parsed_or_positioned(text: str) -> None:
    assert_parsed_or_positioned(text)


def test_code_in_math_creates_no_file(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.chdir(tmp_path)
    for text in ("__import__('os').system('touch pwned')",
                 "open('pwned', 'w').write('x')",
                 "sympify('__import__(\"os\").system(\"touch pwned\")')"):
        value, problem = parse_bounded(text)
        assert value is None and problem is not None
    assert list(tmp_path.iterdir()) == []


def test_domain_chains_are_fuzzed_too() -> None:
    assert isinstance(parse_inequality("0 < theta < pi", TABLE), sympy.And)


# ---------------------------------------------------------------------------- findings


@pytest.mark.parametrize("line_element", [
    "((r+M)**100 + 1)**100 + dt**2",  # a constant term whose expansion has ~5000 terms
    "((r+M)**100 + 1)**100*dt + dt**2",  # the same as a linear term
])
def test_a_line_element_whose_check_would_expand_enormously_ends_quickly(
    line_element: str,
) -> None:
    """Found by this suite: the quadratic-form check of loader.py expands the
    differential-free part with ``sympy.expand`` (unbounded), and loading runs in the parent
    process without limits, so one such entry hangs the whole check. The entry must instead
    be refused with a positioned diagnostic; the parser now refuses it for its degree."""
    source = SEED.replace(
        "-(1 - 2*M/r)*dt**2 + dr**2/(1 - 2*M/r) + r**2*(dtheta**2 + sin(theta)**2*dphi**2)",
        line_element)
    problem = ""
    try:
        result = run_limited(load_text, source, FILE, Path(FILE), VOCABULARY, seconds=10,
                             memory_bytes=MEMORY_PER_INPUT)
    except BudgetExceeded as exc:
        problem = str(exc)
    assert not problem, f"loading an entry is unbounded: {problem}"
    assert [d.code for d in result.diagnostics] == ["math.syntax"]
    assert "degree" in result.diagnostics[0].message
    assert_loaded_or_explained(result, source)


@pytest.mark.parametrize("text", [
    "((r+M)**100 + 1)**100",
    "(((r+1)**10 + M)**10 + 1)**100",
])
def test_a_claim_whose_normal_form_has_astronomic_degree_is_refused_by_the_parser(
    text: str,
) -> None:
    """Found by this suite: such a claim parses, then equality.decide_equal builds its
    rational-function normal form (a polynomial of degree 10 000 in two variables) inside one
    FLINT call that no alarm can interrupt (measured: 185 s before a 30 s alarm could fire).
    Nested integer powers multiply degrees, so the parser must bound their product as it
    already bounds a single exponent (MAX_EXPONENT)."""
    value, problem = parse_bounded(text)
    assert value is None and problem is not None
    assert problem.code == "math.syntax"


# ---------------------------------------------------------------------------- whole inputs
# Whole entries and catalog folders, generated by tests/_hostile.py (``hostile_entry``,
# ``hostile_catalog``) from a Hypothesis-controlled random stream, so that the runs are
# derandomized here and the nightly-scale run (bench/fuzz_catalog.py) explores the same space
# further. Classes: multi-variable expansion blow-ups, overflowing claims, control characters
# in keys and values, YAML tricks, hostile vocabulary files, links to files and folders.


def _entry_contract(rng) -> None:
    from _hostile import entry_outcome, hostile_entry

    source = hostile_entry(rng)
    label, findings = entry_outcome(source)
    assert findings == [], (label, findings, source[-600:])


def _catalog_contract(rng, tmp_path_factory) -> None:
    from _hostile import catalog_outcome, hostile_catalog

    project = tmp_path_factory.mktemp("catalog")
    hostile_catalog(rng, project)
    label, findings = catalog_outcome(project)
    assert findings == [], (label, findings)


@fuzz(25)
@given(st.randoms(use_true_random=False))
def test_generated_entries_are_loaded_or_explained(rng) -> None:
    _entry_contract(rng)


@fuzz(15)
@given(st.randoms(use_true_random=False))
def test_generated_catalog_folders_are_read_or_explained(tmp_path_factory, rng) -> None:
    _catalog_contract(rng, tmp_path_factory)


@pytest.mark.slow
@fuzz(600)
@given(st.randoms(use_true_random=False))
def test_many_generated_entries_are_loaded_or_explained(rng) -> None:
    _entry_contract(rng)


@pytest.mark.slow
@fuzz(200)
@given(st.randoms(use_true_random=False))
def test_many_generated_catalog_folders_are_read_or_explained(tmp_path_factory, rng) -> None:
    _catalog_contract(rng, tmp_path_factory)


@fuzz(40)
@given(st.randoms(use_true_random=False))
def test_every_accepted_expansion_is_small(rng) -> None:
    """What the parser accepts, ``sympy.expand`` builds in bounded size: the term bound is an
    upper bound of the expansion's real number of terms (checked against SymPy itself on
    the generated expressions that pass)."""
    from _hostile import expansion_term

    from generator.entry.mathparse import MAX_TERMS, term_bound

    names = ["M", *rng.sample("abcdefg", rng.randint(1, 4))]
    text = expansion_term(rng, names).replace("dr", "r").replace("dt", "r").replace(
        "dtheta", "r")
    expr = sympy.sympify(text)  # a test-generated literal, not entry input
    if term_bound(expr) > min(MAX_TERMS, 400):
        return  # refused by the parser (or too big to expand in a quick test)
    expanded = sympy.expand(expr)
    assert term_bound(expr) >= len(sympy.Add.make_args(expanded))


@pytest.mark.slow
@fuzz(4)
@given(st.randoms(use_true_random=False))
def test_generated_expansion_entries_end_in_a_report(tmp_path_factory, rng) -> None:
    """Past loading, the whole check of such an entry ends in a report (verified, refused or
    out of budget) — never an exception or a silent end (runs in a worker, as `check` does)."""
    from _hostile import SEED_ENTRY, _with_expansion

    from generator.run.pipeline import RunOptions, check_files

    project = tmp_path_factory.mktemp("expansion")
    catalog = make_catalog(project)
    path = catalog / "isolated-objects" / "schwarzschild.yaml"
    path.parent.mkdir(exist_ok=True)
    path.write_text(_with_expansion(rng, SEED_ENTRY), encoding="utf-8")
    [report] = check_files([path], catalog, project, RunOptions(seconds_per_entry=4.0))
    assert report.entry is not None or report.diagnostics
    assert all(d.code != "internal.error" for d in report.diagnostics)
