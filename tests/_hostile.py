"""Shared helpers of the robustness tests: tiny catalogs built from tests/roots/hostile-*/.

Each fixture folder holds family folders of entries; `make_catalog` copies the chosen ones into
a temporary project together with the real vocabularies (catalog/tags.yaml, families.yaml), so
the entries are checked against the same tags and families as the shipped catalog.
"""

from __future__ import annotations

import os
import re
import shutil
import subprocess
import sys
from pathlib import Path

PROJECT = Path(__file__).resolve().parents[1]
ROOTS = PROJECT / "tests" / "roots"


def make_catalog(project: Path, *roots: str) -> Path:
    """A project folder with catalog/ made of the named fixture roots; returns catalog/."""
    catalog = project / "catalog"
    catalog.mkdir(parents=True, exist_ok=True)
    for name in ("tags.yaml", "families.yaml"):
        shutil.copy(PROJECT / "catalog" / name, catalog / name)
    for root in roots:
        for family in sorted(p for p in (ROOTS / root).iterdir() if p.is_dir()):
            shutil.copytree(family, catalog / family.name, dirs_exist_ok=True)
    return catalog


def almanac(cwd: Path, *args: str, env: dict[str, str] | None = None,
            timeout: float = 1200) -> subprocess.CompletedProcess[str]:
    """Run ``python -m generator ARGS`` in ``cwd`` (the project folder of a fixture catalog)."""
    environment = dict(os.environ)
    environment["PYTHONPATH"] = str(PROJECT)
    environment.update(env or {})
    return subprocess.run([sys.executable, "-m", "generator", *args], cwd=cwd, env=environment,
                          capture_output=True, text=True, timeout=timeout)


# ---------------------------------------------------------------------------- generated inputs
# Whole entries and whole catalog folders for the property tests (tests/test_fuzz.py, driven
# by Hypothesis through ``st.randoms()``) and for the nightly-scale run (bench/fuzz_catalog.py,
# driven by a seeded ``random.Random``). One generator serves both, so the bench explores the
# same space as CI, only further. Each input class is one a red-team pass found a defect in.

SEED_ENTRY = (ROOTS / "hostile-valid" / "isolated-objects" / "schwarzschild.yaml").read_text(
    encoding="utf-8")
SEED_FILE = "catalog/isolated-objects/schwarzschild.yaml"
SEED_LINE_ELEMENT = ("-(1 - 2*M/r)*dt**2 + dr**2/(1 - 2*M/r) + "
                     "r**2*(dtheta**2 + sin(theta)**2*dphi**2)")
EXTRA_NAMES = ("a", "b", "c", "d", "e", "f", "g", "h", "k", "q", "s", "w")

# Text an attacker puts in keys and values: line breaks and workflow commands (a forged CI
# annotation), terminal escapes, Unicode separators, template and markup syntax.
CONTROL_PAYLOADS = ("\n::error file=README.md,line=1::forged", "\r::warning::x", "\x85::error::x",
                    "\u2028::notice::x", "\x1b[2J", "\x07", "%0A::error::x", "{{ 7*7 }}",
                    "<script>x</script>", "\t")


def _sum_of(rng, names: list[str]) -> str:
    return "(" + "+".join(rng.sample(names, rng.randint(2, len(names)))) + ")"


def expansion_term(rng, names: list[str]) -> str:
    """A term a line element could hold whose expansion may have vastly many terms: powers of
    sums of several parameters, nested, multiplied, in denominators, roots and functions."""
    power = f"{_sum_of(rng, names)}**{rng.randint(2, 60)}"
    if rng.random() < 0.3:
        power = f"({power})**{rng.randint(2, 6)}"
    if rng.random() < 0.3:
        power = f"{power}*{_sum_of(rng, names)}**{rng.randint(2, 30)}"
    shape = rng.choice(("{p}*dr**2", "dr**2/{p}", "sin({p})*dr**2", "sqrt({p})*dr**2",
                        "({p} + 1)*dt*dr", "dtheta**2*exp(-{p})"))
    return shape.format(p=power)


OVERFLOW_VALUES = (
    "exp(1000)", "-exp(1000)", "exp(-1000)", "exp(10**5)", "sqrt(2)*(10**40)**8",
    "((1+sqrt(2))**100)**100", "(10**40)**8 - (10**40)**8 + 1", "1/(10**40)**8",
    "exp(1000) - exp(1000)", "exp(exp(7))", "48*M**2/r**6 + exp(-1000)",
    "48*M**2/r**6*exp(1000)/exp(1000)", "sinh(1000)", "cosh(1000)/sinh(1000) - 1",
    "10**(-300)*r", "E**(10**3)", "(1+1/10**40)**(10**40)",
)


def hostile_entry(rng) -> str:
    """A whole entry: the seed with one or more hostile changes of the classes above."""
    source = SEED_ENTRY
    for _ in range(rng.randint(1, 3)):
        source = rng.choice((_with_expansion, _with_overflowing_claim, _with_control_text,
                             _with_extra_key))(rng, source)
    return source


def _with_expansion(rng, source: str) -> str:
    count = rng.randint(1, len(EXTRA_NAMES))
    extra = list(EXTRA_NAMES[:count])
    declared = "".join(f"  {n}: {{assume: positive, meaning: extra}}\n" for n in extra)
    source = source.replace("  M: {assume: positive, meaning: mass}\n",
                            "  M: {assume: positive, meaning: mass}\n" + declared, 1)
    term = expansion_term(rng, ["M", *extra])
    return source.replace(SEED_LINE_ELEMENT, f"{SEED_LINE_ELEMENT} + {term}", 1)


def _with_overflowing_claim(rng, source: str) -> str:
    claim = rng.choice(("ricci_scalar", "ricci_squared", "kretschmann"))
    value = rng.choice(OVERFLOW_VALUES)
    lines = [line for line in source.splitlines(keepends=True)
             if not line.startswith(f"  {claim}:") or claim == "kretschmann"]
    text = "".join(lines)
    if claim == "kretschmann":
        return text.replace("    value: 48*M**2/r**6", f"    value: {value}", 1)
    return text.replace("claims:\n", f"claims:\n  {claim}: {value}\n", 1)


def _with_control_text(rng, source: str) -> str:
    payload = rng.choice(CONTROL_PAYLOADS)
    where = rng.choice(("key", "title", "tag", "parameter"))
    quoted = '"' + payload.encode("unicode_escape").decode("ascii").replace('"', '\\"') + '"'
    if where == "key":
        return source + f'"x{quoted[1:-1]}": 1\n'
    if where == "title":
        return source.replace("title: Schwarzschild black hole", f"title: {quoted}", 1)
    if where == "tag":
        return source.replace("tags: [vacuum,", f"tags: [{quoted}, vacuum,", 1)
    return source.replace("  M: {assume", f"  {quoted}: {{assume: positive, meaning: x}}\n"
                          "  M: {assume", 1)


def _with_extra_key(rng, source: str) -> str:
    return source + rng.choice(("anchor: &a [1]\nalias: *a\n", "x: !!python/name:os.system\n",
                                "deep: " + "[" * 40 + "]" * 40 + "\n", "? [a]\n: b\n"))


VOCABULARY_CHOICES = ("valid", "bomb", "anchor", "tagged", "numeric-key", "list", "deep",
                      "huge", "binary", "link", "missing", "folder", "family-fields")


def hostile_vocabulary(rng, path: Path, kind: str) -> None:
    """Write tags.yaml or families.yaml (``path``) of the given kind."""
    real = (PROJECT / "catalog" / path.name).read_text(encoding="utf-8")
    laughs = "a: &a [x, x, x, x, x, x, x, x, x]\n" + "".join(
        f"{b}: &{b} [{', '.join([f'*{p}'] * 9)}]\n"
        for p, b in zip("abcdefgh", "bcdefghi", strict=True))
    text = {
        "valid": real,
        "bomb": laughs,
        "anchor": real + "extra: &x text\nmore: *x\n",
        "tagged": real + "evil: !!python/object/apply:os.system [ls]\n",
        "numeric-key": real + f"{rng.randint(0, 99)}: a number\nnull: nothing\n",
        "list": "- a\n- b\n",
        "deep": "x: " + "[" * 30 + "]" * 30 + "\n",
        "huge": "x: " + "y" * 300_000 + "\n",
        "family-fields": real + "odd:\n  title: [x]\n  script: y\n",
    }.get(kind)
    if kind == "binary":
        path.write_bytes(bytes(rng.randrange(256) for _ in range(200)))
    elif kind == "link":
        os.symlink(rng.choice(("/etc/passwd", str(PROJECT / "catalog" / path.name),
                               "/nonexistent")), path)
    elif kind == "folder":
        path.mkdir()
    elif text is not None:
        path.write_text(text, encoding="utf-8")


LINK_TARGETS = ("/etc/passwd", "/etc", "/nonexistent/x.yaml", ".", "..", "schwarzschild.yaml")


def hostile_catalog(rng, project: Path) -> Path:
    """A catalog folder under ``project``: hostile or valid vocabularies, one to four entries
    (hostile or not), links to files and folders inside and outside, stray files. Returns it."""
    catalog = project / "catalog"
    family = catalog / "isolated-objects"
    family.mkdir(parents=True)
    for name in ("tags.yaml", "families.yaml"):
        kind = "valid" if rng.random() < 0.5 else rng.choice(VOCABULARY_CHOICES)
        hostile_vocabulary(rng, catalog / name, kind)
    (family / "schwarzschild.yaml").write_text(
        hostile_entry(rng) if rng.random() < 0.5 else SEED_ENTRY, encoding="utf-8")
    for i in range(rng.randint(0, 3)):
        extra = hostile_entry(rng).replace("id: schwarzschild", f"id: extra-{i}", 1)
        (family / f"extra-{i}.yaml").write_text(extra, encoding="utf-8")
    for i in range(rng.randint(0, 3)):
        where = rng.choice((family, catalog, catalog / "other-family"))
        where.mkdir(exist_ok=True)
        name = rng.choice((f"link-{i}.yaml", f"linked-folder-{i}", f"notes-{i}.txt"))
        os.symlink(rng.choice(LINK_TARGETS), where / name)
    if rng.random() < 0.2:
        (family / "stray\nname.yaml").write_text(SEED_ENTRY, encoding="utf-8")
    return catalog


# ---------------------------------------------------------------------------- the contract
# What every generated input must end in: loaded, or refused with positioned diagnostics that
# print one line each (plus a hint line) — never an exception, never a budget stop while
# loading (the loader's own bounds must refuse first), never a followed link.

_RAW_CONTROL = re.compile("[\x00-\x08\x0b-\x1f\x7f-\x9f\u2028\u2029]")
LOAD_SECONDS = 20.0
LOAD_MEMORY = 1 << 30


def diagnostic_findings(diagnostic, source: str | None) -> list[str]:
    """Problems with one diagnostic: position outside its file, or output that could forge
    lines (a raw line break or control character in the printed text)."""
    found = []
    text = diagnostic.format_text()
    lines = text.split("\n")
    if len(lines) > 2 or (len(lines) == 2 and not lines[1].startswith("    hint: ")):
        found.append(f"multi-line output: {text!r:.200}")
    if any(_RAW_CONTROL.search(line) for line in lines) or "\n" in diagnostic.format_github():
        found.append(f"raw control character in output: {text!r:.200}")
    if diagnostic.line < 1 or diagnostic.column < 1:
        found.append(f"position before the file: {text!r:.200}")
    if source is not None:
        file_lines = re.split(r"\r\n|[\r\n\x85\u2028\u2029]", source)
        if diagnostic.line > len(file_lines) or diagnostic.column > len(
                file_lines[diagnostic.line - 1]) + 1:
            found.append(f"position past the file: {text!r:.200}")
    return found


def entry_outcome(source: str, file: str = SEED_FILE) -> tuple[str, list[str]]:
    """(outcome label, findings) of loading one generated entry under a hard limit."""
    from generator.entry.catalog import vocabulary
    from generator.entry.loader import load_text
    from generator.errors import BudgetExceeded
    from generator.run.limits import run_limited

    try:
        result = run_limited(load_text, source, file, Path(file),
                             vocabulary(PROJECT / "catalog"), seconds=LOAD_SECONDS,
                             memory_bytes=LOAD_MEMORY)
    except BudgetExceeded as exc:
        return "budget", [f"loading ran out of its budget: {exc}"]
    except Exception as exc:
        return "exception", [f"{type(exc).__name__}: {exc}"[:300]]
    findings = [f for d in result.diagnostics for f in diagnostic_findings(d, source)]
    errors = sorted({d.code for d in result.diagnostics if d.severity == "error"})
    return ("loaded" if not errors else "refused:" + ",".join(errors)), findings


def catalog_outcome(project: Path) -> tuple[str, list[str]]:
    """(outcome label, findings) of reading a generated catalog folder the way `check` does
    before computing: list its files, outline them, read its vocabularies, load every entry.
    Every link must be refused as a link."""
    from generator.errors import BudgetExceeded
    from generator.run.limits import run_limited

    try:
        return run_limited(_read_catalog, project, seconds=LOAD_SECONDS * 4,
                           memory_bytes=LOAD_MEMORY)
    except BudgetExceeded as exc:
        return "budget", [f"reading the catalog ran out of its budget: {exc}"]
    except Exception as exc:
        return "exception", [f"{type(exc).__name__}: {exc}"[:300]]


def _read_catalog(project: Path) -> tuple[str, list[str]]:
    from generator.entry.catalog import (
        display_path,
        entry_files,
        outline_all,
        vocabulary,
        vocabulary_problems,
    )
    from generator.entry.loader import load_entry
    from generator.entry.safefile import is_link

    catalog = project / "catalog"
    files = entry_files([catalog])
    outline_all(files, catalog, project)
    findings: list[str] = []
    diagnostics = [d for found in vocabulary_problems(catalog, project).values() for d in found]
    words = vocabulary(catalog)
    links = 0
    for path in files:
        result = load_entry(path, display_path(path, project), words)
        diagnostics += result.diagnostics
        if is_link(path):
            links += 1
            if [d.code for d in result.diagnostics] != ["file.link"]:
                findings.append(f"a link was not refused as a link: {path.name!r}")
    for d in diagnostics:
        findings += diagnostic_findings(d, None)
        if not d.file.startswith("catalog/"):
            findings.append(f"diagnostic outside the catalog: {d.file!r}")
    codes = sorted({d.code for d in diagnostics if d.severity == "error"})
    return f"{len(files)} files, {links} links, codes " + ",".join(codes), findings
