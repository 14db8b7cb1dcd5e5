"""``python -m generator new``: start a catalog entry that already passes the schema.

A contributor gives what they know (id, chart, coordinates, metric ...) as flags or answers to
questions; everything else becomes a *TODO marker*. A TODO marker is the word ``TODO`` (upper
case) anywhere in the file — in a placeholder value or in a comment — and the loader turns
each one into an error, so ``check`` refuses the entry until every marker has been replaced.
Placeholders are still valid values, so the file loads and every *other* mistake is reported
at once too (report every problem, then fail once).

The generated file is loaded with the normal loader before it is written: a scaffold that the
tool itself would refuse (bad math in a flag, say) is never written.
"""

from __future__ import annotations

import argparse
import datetime as dt
import json
import re
import subprocess
import sys
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import TextIO

import sympy
import yaml

from generator.argv import join_dash_values
from generator.entry.loader import TODO_CODE
from generator.entry.mathparse import SymbolTable, parse_expression, parse_inequality, valid_name
from generator.entry.schema import ASSUMPTIONS, ID_PATTERN, MATTER_KINDS, SIGNATURE_PATTERN
from generator.errors import Diagnostic, MathSyntaxError

SCHEMA_LINE = "# yaml-language-server: $schema=../../schema/entry.schema.json"
# The scaffold's note to its author is itself a TODO marker, so it cannot reach a commit:
# ``check`` refuses the entry until the note is deleted (comments never enter the content hash).
SCAFFOLD_NOTE_MARKER = "TODO: delete these four lines of notes once the entry is complete"

Ask = Callable[[str], str]


# ---------------------------------------------------------------------------- the draft


@dataclass(frozen=True)
class ParameterSpec:
    name: str
    assume: str = "real"
    meaning: str = ""


@dataclass(frozen=True)
class FunctionSpec:
    name: str
    of: tuple[str, ...]
    assume: str = ""
    meaning: str = ""


@dataclass(frozen=True)
class ReferenceSpec:
    authors: tuple[str, ...] = ()
    title: str = ""
    venue: str = ""
    year: int | None = None
    doi: str = ""
    arxiv: str = ""
    isbn: str = ""


@dataclass(frozen=True)
class Draft:
    """What the contributor told us; empty values become TODO placeholders when rendered."""

    id: str
    family: str
    coordinates: tuple[str, ...]
    line_element: str = ""
    components: tuple[tuple[str, str], ...] = ()  # ("t phi", value)
    signature: str = ""
    title: str = ""
    chart: str = ""
    summary: str = ""
    tags: tuple[str, ...] = ()
    parameters: tuple[ParameterSpec, ...] = ()
    functions: tuple[FunctionSpec, ...] = ()
    domain: tuple[str, ...] = ()
    matter_kind: str = ""
    reference: ReferenceSpec = field(default_factory=ReferenceSpec)
    added: str = ""
    by: str = ""


# Families whose entries are positive definite: the shipped catalog's, and the older folder name
# that research groups' own catalogs (and the demo catalog) still use.
RIEMANNIAN_FAMILIES = ("euclidean-and-initial-data", "riemannian")


def default_signature(family: str, dimension: int) -> str:
    """Lorentzian "-++..." (the catalog convention), or all "+" in a Riemannian family."""
    if family in RIEMANNIAN_FAMILIES:
        return "+" * dimension
    return "-" + "+" * (dimension - 1)


# ---------------------------------------------------------------------------- rendering


def render(draft: Draft) -> str:
    """The entry file's text: known values filled in, TODO markers for the rest."""
    sections = [
        _header(),
        _identity(draft),
        _chart_data(draft),
        _metric_block(draft),
        _matter_block(draft),
        _claims_block(),
        _reference_block(draft.reference),
        _curation_block(draft),
    ]
    return "".join(sections)


def _header() -> str:
    return (
        f"{SCHEMA_LINE}\n"
        f"# {SCAFFOLD_NOTE_MARKER}\n"
        "# Started with `python -m generator new`. The placeholders below carry a to-do marker;\n"
        "# `python -m generator check` reports each marker as an error until you replace the\n"
        "# placeholder with the real value and delete the marker.\n"
    )


def _identity(d: Draft) -> str:
    tags = (
        f"tags: [{', '.join(d.tags)}]\n"
        if d.tags
        else "# tags: [...]   (optional, from catalog/tags.yaml)\n"
    )
    return (
        f"id: {d.id}\n"
        f"title: {_value(d.title or 'TODO: name of the spacetime')}\n"
        f"chart: {_value(d.chart or 'TODO: which coordinate chart this is')}\n"
        f"summary: {_value(d.summary or 'TODO: one line saying what this spacetime is')}\n"
        "# notes: |      (optional Markdown: interpretation, ranges, caveats)\n"
        f"{tags}"
    )


def _chart_data(d: Draft) -> str:
    signature = d.signature or default_signature(d.family, len(d.coordinates))
    lines = [f"coordinates: [{', '.join(d.coordinates)}]", f'signature: "{signature}"']
    if d.parameters:
        lines.append("parameters:")
        lines += [f"  {p.name}: {_parameter(p)}" for p in d.parameters]
    if d.functions:
        lines.append("functions:")
        lines += [f"  {f.name}: {_function(f)}" for f in d.functions]
    if d.domain:
        lines.append("domain:")
        lines += [f"  - {_value(inequality, math=True)}" for inequality in d.domain]
    else:
        lines.append("# domain:        (inequalities where sample points are taken, e.g. r > 2*M)")
    return "\n".join(lines) + "\n"


def _parameter(p: ParameterSpec) -> str:
    meaning = p.meaning or f"TODO: what {p.name} stands for"
    return f"{{assume: {p.assume}, meaning: {_value(meaning, flow=True)}}}"


def _function(f: FunctionSpec) -> str:
    parts = [f"of: [{', '.join(f.of)}]"]
    if f.assume:
        parts.append(f"assume: {f.assume}")
    parts.append(f"meaning: {_value(f.meaning or f'TODO: what {f.name} stands for', flow=True)}")
    return "{" + ", ".join(parts) + "}"


def _metric_block(d: Draft) -> str:
    if d.line_element:
        return f"metric:\n  line_element: {_value(d.line_element, math=True)}\n"
    body = "".join(f"    {key}: {_value(value, math=True)}\n" for key, value in d.components)
    return "metric:\n  components:\n" + body


def _matter_block(d: Draft) -> str:
    if d.matter_kind:
        return f"matter:\n  kind: {d.matter_kind}\n"
    kinds = " | ".join(MATTER_KINDS)
    return (
        f"matter:\n  # kind is one of: {kinds}\n"
        "  kind: unspecified   # TODO: the matter that supports this geometry\n"
    )


def _claims_block() -> str:
    return (
        "# TODO: claims (what the literature states about this metric; each value is verified)\n"
        "# claims:\n"
        "#   ricci_scalar: 0\n"
        "#   kretschmann: {value: ..., source: original, locator: eq. (...)}\n"
        "#   petrov_type: D\n"
    )


def _reference_block(r: ReferenceSpec) -> str:
    authors = ", ".join(_value(a, flow=True) for a in r.authors) or "TODO author as printed"
    lines = [
        "references:",
        "  - role: original",
        f"    authors: [{authors}]",
        f"    title: {_value(r.title or 'TODO: title of the publication with this metric')}",
        f"    venue: {_value(r.venue or 'TODO: journal volume, first page (or publisher)')}",
        f"    year: {r.year}"
        if r.year
        else f"    year: {_this_year()}   # TODO: year of publication",
    ]
    identifiers = [("doi", r.doi), ("arxiv", r.arxiv), ("isbn", r.isbn)]
    lines += [f"    {name}: {_value(value)}" for name, value in identifiers if value]
    if not any(value for _, value in identifiers):
        lines.append("    # TODO: doi, arxiv or isbn of the publication")
    return "\n".join(lines) + "\n"


def _curation_block(d: Draft) -> str:
    by = d.by or "TODO: your name"
    # Quoted: a YAML 1.1 reader (PyYAML, many editors) makes a bare 2026-12-02 a date object.
    return f'curation:\n  added: "{d.added or _today()}"\n  by: {_value(by)}\n'


def _today() -> str:
    return dt.datetime.now(dt.UTC).date().isoformat()


def _this_year() -> int:
    return dt.datetime.now(dt.UTC).year


def _value(text: str, flow: bool = False, math: bool = False) -> str:
    """Plain YAML scalar when it reads back unchanged (or, for math, is an integer, which the
    math grammar reads as the same number), else a double-quoted one."""
    text = " ".join(text.split())
    integer = math and re.fullmatch(r"-?[1-9]\d*|0", text)
    if text and (integer or _reads_back(text, flow)):
        return text
    return json.dumps(text, ensure_ascii=False)


def _reads_back(text: str, flow: bool) -> bool:
    document = f"k: [{text}]" if flow else f"k: {text}"
    try:
        data = yaml.safe_load(document)
    except yaml.YAMLError:
        return False
    return data == {"k": [text] if flow else text}


# ---------------------------------------------------------------------------- early checks


def symbol_table(draft: Draft) -> SymbolTable:
    """Names a math answer may use, so a typo is caught while the contributor is still here."""
    symbols = {name: sympy.Symbol(name, real=True) for name in draft.coordinates}
    symbols.update({p.name: sympy.Symbol(p.name, real=True) for p in draft.parameters})
    functions = {
        f.name: (sympy.Function(f.name), tuple(symbols[c] for c in f.of if c in symbols))
        for f in draft.functions
    }
    differentials = {f"d{c}": sympy.Dummy(f"d{c}") for c in draft.coordinates}
    return SymbolTable(symbols, functions, differentials)


def math_problem(text: str, table: SymbolTable, relation: bool = False) -> str | None:
    """The parser's complaint about one math string (with the offending position), or None."""
    try:
        (parse_inequality if relation else parse_expression)(text, table)
    except MathSyntaxError as exc:
        where = f" at character {exc.offset + 1}"
        return exc.message + where + (f" ({exc.hint})" if exc.hint else "")
    return None


def id_problem(entry_id: str, catalog: Path, repo: Path | None = None) -> str | None:
    """Why ``entry_id`` cannot be used: bad shape, taken by a file, or used in git history."""
    if not re.match(ID_PATTERN, entry_id):
        return f"id {entry_id!r} must be lower-case letters, digits and single hyphens"
    taken = sorted(catalog.rglob(f"{entry_id}.yaml"))
    if taken:
        return f"id {entry_id!r} is already used by {taken[0]}"
    if repo is not None and _ever_in_history(repo, catalog, entry_id):
        return f"id {entry_id!r} belonged to an entry removed since; ids are never reused"
    return None


def _ever_in_history(repo: Path, catalog: Path, entry_id: str) -> bool:
    try:
        done = subprocess.run(
            [
                "git",
                "-C",
                str(repo),
                "log",
                "--all",
                "--format=",
                "--name-only",
                "--",
                str(catalog.resolve()),
            ],
            capture_output=True,
            text=True,
            timeout=60,
            check=False,
        )
    except (OSError, subprocess.TimeoutExpired):
        return False
    return any(Path(name).name == f"{entry_id}.yaml" for name in done.stdout.splitlines())


def families(catalog: Path) -> tuple[str, ...]:
    """Family folder names from catalog/families.yaml (or the existing folders without it)."""
    listing = catalog / "families.yaml"
    if listing.exists():
        from generator.entry.catalog import read_vocabulary_file

        return tuple(read_vocabulary_file(listing).entries)
    return tuple(sorted(p.name for p in catalog.iterdir() if p.is_dir()))


def draft_problems(draft: Draft, catalog: Path) -> list[str]:
    """Everything wrong with the draft before it is rendered, all at once."""
    problems: list[str] = []
    known = families(catalog)
    if draft.family not in known:
        problems.append(f"family {draft.family!r} is not one of: {', '.join(known)}")
    problems += _name_problems(draft)
    if draft.signature and not re.match(SIGNATURE_PATTERN, draft.signature):
        problems.append(f'signature {draft.signature!r} must be + and - signs, e.g. "-+++"')
    if draft.signature and len(draft.signature) != len(draft.coordinates):
        problems.append(
            f"signature {draft.signature!r} has {len(draft.signature)} signs for "
            f"{len(draft.coordinates)} coordinates"
        )
    if bool(draft.line_element) == bool(draft.components):
        problems.append("give the metric as exactly one of --metric or --component")
    if draft.matter_kind and draft.matter_kind not in MATTER_KINDS:
        problems.append(
            f"matter kind {draft.matter_kind!r} is not one of: {', '.join(MATTER_KINDS)}"
        )
    if not problems:
        problems += _math_problems(draft)
    return problems


def _name_problems(draft: Draft) -> list[str]:
    problems = []
    names = (
        list(draft.coordinates)
        + [p.name for p in draft.parameters]
        + [f.name for f in draft.functions]
    )
    for name in names:
        if not valid_name(name):
            problems.append(f"{name!r} cannot be used as a name (reserved or not an identifier)")
    duplicates = sorted({n for n in names if names.count(n) > 1})
    problems += [f"{name!r} is declared more than once" for name in duplicates]
    if len(draft.coordinates) < 2:
        problems.append("give at least two coordinates, in index order")
    for p in draft.parameters:
        if p.assume not in ASSUMPTIONS:
            problems.append(f"parameter {p.name}: assume must be one of {', '.join(ASSUMPTIONS)}")
    for f in draft.functions:
        problems += [
            f"function {f.name}: {c!r} is not a coordinate"
            for c in f.of
            if c not in draft.coordinates
        ]
    return problems


def _math_problems(draft: Draft) -> list[str]:
    table = symbol_table(draft)
    checks = [("metric", draft.line_element, False)] if draft.line_element else []
    checks += [(f"component {key}", value, False) for key, value in draft.components]
    checks += [(f"domain {text!r}", text, True) for text in draft.domain]
    out = []
    for label, text, relation in checks:
        problem = math_problem(text, table, relation)
        if problem:
            out.append(f"{label}: {problem}")
    return out


# ---------------------------------------------------------------------------- writing


@dataclass(frozen=True)
class Scaffolded:
    path: Path
    text: str
    diagnostics: tuple[Diagnostic, ...]  # from the loader, TODO markers included


def scaffold(draft: Draft, catalog: Path) -> Scaffolded:
    """Render the draft and load it with the normal loader (nothing is written here)."""
    from generator.entry.loader import Vocabulary, load_text

    path = catalog / draft.family / f"{draft.id}.yaml"
    text = render(draft)
    loaded = load_text(text, str(path), path, Vocabulary())
    return Scaffolded(path, text, loaded.diagnostics)  # TODO markers included


def blocking(result: Scaffolded) -> list[Diagnostic]:
    """Errors other than TODO markers: the scaffold itself is wrong and is not written."""
    return [d for d in result.diagnostics if d.severity == "error" and d.code != TODO_CODE]


# ---------------------------------------------------------------------------- command line


def new_main(argv: list[str], ask: Ask | None = None, out: TextIO | None = None) -> int:
    """``python -m generator new [flags]``; asks for what is missing when run interactively.

    Exit status: 0 written, 1 the draft would not load (nothing written), 2 bad usage.
    """
    out = out or sys.stdout
    try:
        parser = _parser()
        args = parser.parse_args(join_dash_values(argv, parser))
    except SystemExit as exc:  # argparse has printed the usage error
        return 2 if exc.code else 0
    catalog = Path(args.catalog)
    interactive = args.interactive or (ask is None and not argv and sys.stdin.isatty())
    ask = ask or input
    try:
        draft = _draft_from_args(args)
        if interactive:
            draft = interview(draft, catalog, ask, out)
    except _Abort as exc:
        print(f"error: {exc}", file=out)
        return 2
    problems = _missing(draft) or [
        *filter(None, [id_problem(draft.id, catalog, Path(args.repo))]),
        *draft_problems(draft, catalog),
    ]
    if problems:
        for message in problems:
            print(f"error: {message}", file=out)
        return 2
    return _write(scaffold(draft, catalog), args.stdout, out)


def _missing(draft: Draft) -> list[str]:
    flags = {
        "--id": draft.id,
        "--family": draft.family,
        "--coordinates": draft.coordinates,
        "--metric or --component": draft.line_element or draft.components,
    }
    return [
        f"give {flag} (or answer the questions with --interactive)"
        for flag, value in flags.items()
        if not value
    ]


def _write(result: Scaffolded, to_stdout: bool, out: TextIO) -> int:
    wrong = blocking(result)
    if wrong:
        for d in wrong:
            print(d.format_text(), file=out)
        print(
            f"error: the scaffold would not load; nothing written ({len(wrong)} errors)", file=out
        )
        return 1
    if to_stdout:
        out.write(result.text)
        return 0
    result.path.parent.mkdir(parents=True, exist_ok=True)
    result.path.write_text(result.text, encoding="utf-8")
    todos = [d for d in result.diagnostics if d.code == TODO_CODE]
    print(f"wrote {result.path} ({len(todos)} TODO markers to fill in)", file=out)
    for d in todos:
        print(f"  line {d.line}: {d.message.removeprefix('still to fill in: ')}", file=out)
    print(f"then run: python -m generator check {result.path}", file=out)
    return 0


class _Abort(Exception):
    """Raised for unusable flag values or when the contributor stops the interview."""


def _parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(
        prog="almanac new",
        description="Start a new catalog entry that passes the schema, with TODO markers for "
        "what is still to fill in. Missing answers are asked for with --interactive.",
    )
    p.add_argument("--id", default="", help="entry id, e.g. kerr-kerr-schild")
    p.add_argument("--family", default="", help="family folder, see catalog/families.yaml")
    p.add_argument("--title", default="")
    p.add_argument("--chart", default="", help="coordinate chart, e.g. 'Kerr–Schild coordinates'")
    p.add_argument("--summary", default="")
    p.add_argument("--coordinates", default="", help="in index order: 't, r, theta, phi'")
    p.add_argument("--signature", default="", help='e.g. "-+++" (default from the family)')
    p.add_argument(
        "--parameters",
        action="append",
        default=[],
        help="'NAME:ASSUME:MEANING; ...', e.g. 'M:positive:mass' (repeatable)",
    )
    p.add_argument(
        "--functions",
        action="append",
        default=[],
        help="'NAME(COORDS):ASSUME:MEANING; ...', e.g. 'a(t):positive:scale factor'",
    )
    p.add_argument("--metric", default="", help="line element, e.g. '-dt**2 + dx**2'")
    p.add_argument(
        "--component",
        action="append",
        default=[],
        help="'A B=VALUE' for g_AB, e.g. 't phi=-a*sin(theta)**2' (repeatable)",
    )
    p.add_argument("--domain", action="append", default=[], help="inequality, e.g. 'r > 2*M'")
    p.add_argument("--matter", default="", help=" | ".join(MATTER_KINDS))
    p.add_argument("--tags", default="", help="comma-separated tags from catalog/tags.yaml")
    p.add_argument(
        "--ref-authors", default="", help="authors of the original publication, '; '-separated"
    )
    p.add_argument("--ref-title", default="")
    p.add_argument("--ref-venue", default="", help="e.g. 'Phys. Rev. Lett. 11, 237'")
    p.add_argument("--ref-year", type=int, default=None)
    p.add_argument("--ref-doi", default="")
    p.add_argument("--ref-arxiv", default="")
    p.add_argument("--ref-isbn", default="")
    p.add_argument("--by", default="", help="your name (default: git config user.name)")
    p.add_argument("--catalog", default="catalog")
    p.add_argument("--repo", default=".", help="git repository (to refuse ids used before)")
    p.add_argument("--stdout", action="store_true", help="print the entry instead of writing it")
    p.add_argument("-i", "--interactive", action="store_true", help="ask for missing values")
    return p


def _split(text: str, separator: str = ",") -> tuple[str, ...]:
    return tuple(part.strip() for part in text.split(separator) if part.strip())


def parse_parameters(specs: Sequence[str]) -> tuple[ParameterSpec, ...]:
    out = []
    for spec in (s for text in specs for s in _split(text, ";")):
        name, _, rest = spec.partition(":")
        assume, _, meaning = rest.partition(":")
        out.append(ParameterSpec(name.strip(), assume.strip() or "real", meaning.strip()))
    return tuple(out)


def parse_functions(specs: Sequence[str]) -> tuple[FunctionSpec, ...]:
    out = []
    for spec in (s for text in specs for s in _split(text, ";")):
        match = re.match(r"^\s*(\w+)\s*\(([^)]*)\)\s*(?::([^:]*))?(?::(.*))?$", spec)
        if not match:
            raise _Abort(f"function {spec!r} should look like 'a(t):positive:scale factor'")
        name, of, assume, meaning = match.groups()
        out.append(FunctionSpec(name, _split(of), (assume or "").strip(), (meaning or "").strip()))
    return tuple(out)


def parse_components(
    specs: Sequence[str], coordinates: Sequence[str]
) -> tuple[tuple[str, str], ...]:
    out = []
    for spec in specs:
        key, sep, value = spec.partition("=")
        pair = key.split()
        if not sep or len(pair) != 2 or not value.strip():
            raise _Abort(f"component {spec!r} should look like 't phi=VALUE'")
        out.append((" ".join(pair), value.strip()))
    return tuple(out)


def _draft_from_args(args: argparse.Namespace) -> Draft:
    coordinates = _split(args.coordinates.replace(" ", ",")) if args.coordinates else ()
    reference = ReferenceSpec(
        authors=_split(args.ref_authors, ";"),
        title=args.ref_title,
        venue=args.ref_venue,
        year=args.ref_year,
        doi=args.ref_doi,
        arxiv=args.ref_arxiv,
        isbn=args.ref_isbn,
    )
    return Draft(
        id=args.id,
        family=args.family,
        coordinates=coordinates,
        line_element=args.metric,
        components=parse_components(args.component, coordinates),
        signature=args.signature,
        title=args.title,
        chart=args.chart,
        summary=args.summary,
        tags=_split(args.tags),
        parameters=parse_parameters(args.parameters),
        functions=parse_functions(args.functions),
        domain=tuple(args.domain),
        matter_kind=args.matter,
        reference=reference,
        by=args.by or _git_user(Path(args.repo)),
    )


def _git_user(repo: Path) -> str:
    try:
        done = subprocess.run(
            ["git", "-C", str(repo), "config", "user.name"],
            capture_output=True,
            text=True,
            timeout=10,
            check=False,
        )
    except (OSError, subprocess.TimeoutExpired):
        return ""
    return done.stdout.strip()


# ---------------------------------------------------------------------------- interview


def interview(draft: Draft, catalog: Path, ask: Ask, out: TextIO) -> Draft:
    """Ask for each missing required value, re-asking until the answer is usable."""
    d = draft
    if not d.id:
        d = replace(
            d,
            id=_ask_until(
                ask, out, "Entry id (e.g. kerr-kerr-schild): ", lambda v: id_problem(v, catalog)
            ),
        )
    if not d.family:
        d = replace(d, family=_ask_choice(ask, out, "Family", families(catalog), ", ",
                                          "not a family"))
    for name, question in (
        ("title", "Title: "),
        ("chart", "Chart: "),
        ("summary", "One-line summary: "),
    ):
        if not getattr(d, name):
            d = replace(d, **{name: _ask(ask, question)})
    if not d.coordinates:
        d = replace(d, coordinates=_ask_coordinates(ask, out))
    if not d.parameters:
        d = replace(d, parameters=_ask_parameters(ask, out))
    if not (d.line_element or d.components):
        table = symbol_table(d)
        d = replace(
            d,
            line_element=_ask_until(
                ask, out, "Line element (e.g. -dt**2 + dx**2): ", lambda v: math_problem(v, table)
            ),
        )
    if not d.matter_kind:
        d = replace(d, matter_kind=_ask_choice(ask, out, "Matter", MATTER_KINDS, " | ",
                                               "not a matter kind", later=True))
    return d


def _ask_choice(ask: Ask, out: TextIO, label: str, options: Sequence[str], separator: str,
                complaint: str, later: bool = False) -> str:
    """One of ``options`` (or nothing, when ``later`` allows deciding later)."""
    question = f"{label} ({separator.join(options)}{'; empty: decide later' if later else ''}): "
    return _ask_until(ask, out, question, lambda v: None if v in options else complaint,
                      allow_empty=later)


def _ask(ask: Ask, question: str) -> str:
    try:
        return ask(question).strip()
    except EOFError as exc:
        raise _Abort("stopped before all questions were answered") from exc


def _ask_until(
    ask: Ask,
    out: TextIO,
    question: str,
    problem: Callable[[str], str | None],
    allow_empty: bool = False,
    tries: int = 5,
) -> str:
    for _ in range(tries):
        answer = _ask(ask, question)
        if allow_empty and not answer:
            return ""
        complaint = problem(answer) if answer else "an answer is needed"
        if complaint is None:
            return answer
        print(f"  {complaint}; try again", file=out)
    raise _Abort(f"no usable answer to {question.strip()!r}")


def _ask_coordinates(ask: Ask, out: TextIO) -> tuple[str, ...]:
    def problem(text: str) -> str | None:
        names = _split(text.replace(" ", ","))
        bad = [n for n in names if not valid_name(n)]
        if bad:
            return f"not usable as coordinate names: {', '.join(bad)}"
        return None if len(names) >= 2 else "give at least two coordinates"

    answer = _ask_until(ask, out, "Coordinates in index order (e.g. t, r, theta, phi): ", problem)
    return _split(answer.replace(" ", ","))


def _ask_parameters(ask: Ask, out: TextIO) -> tuple[ParameterSpec, ...]:
    def problem(text: str) -> str | None:
        specs = parse_parameters([text])
        bad = [p.name for p in specs if not valid_name(p.name) or p.assume not in ASSUMPTIONS]
        return f"check {', '.join(bad)} (assume: {', '.join(ASSUMPTIONS)})" if bad else None

    question = "Parameters as NAME:ASSUME:MEANING; ... (e.g. M:positive:mass; empty for none): "
    return parse_parameters([_ask_until(ask, out, question, problem, allow_empty=True)])
