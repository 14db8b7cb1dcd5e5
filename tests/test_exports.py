"""Downloads that work: every shipped entry's LaTeX compiles with pdflatex, and its SymPy
script, run as a program, rebuilds exactly the metric the entry declares.

The downloads are made from the loaded entries (they need no curvature), so these tests do not
wait for a full build. TeX comes from Debian (texlive-latex-base, installed by .ci/run); the
compile test is skipped where no pdflatex is installed. pdflatex's "Overfull \\hbox" warning and
its size in points are TeX's own measure of a line too wide for the page (Knuth, The TeXbook,
1984, ch. 12, common practice).
"""

from __future__ import annotations

import ast
import json
import re
import shutil
import subprocess
import sys
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import pytest
import sympy
from sympy.core.function import AppliedUndef

from generator.entry.loader import load_entry
from generator.model import CatalogMeta, EntryReport, Publication
from generator.site.downloads import latex_document, sympy_script
from generator.site.latex_export import expression_rows, latex_text

ROOT = Path(__file__).resolve().parent.parent
ENTRY_FILES = sorted(p for p in (ROOT / "catalog").glob("*/*.yaml")
                     if p.name not in ("families.yaml", "tags.yaml"))
META = CatalogMeta(version="0.0.0-test", generator_version="test", sympy_version=sympy.__version__,
                   families=(), tags=(), contributing_markdown="", publication=Publication())
PDFLATEX = shutil.which("pdflatex")
OVERFULL_LIMIT_PT = 50.0  # one unbreakable term may poke into the margin, never off the page


def report_of(path: Path) -> EntryReport:
    loaded = load_entry(path)
    assert loaded.entry is not None and loaded.spacetime is not None, path
    return EntryReport(loaded.entry, str(path), loaded.spacetime, None, None, (), (),
                       content_hash="0" * 64)


@pytest.fixture(scope="module")
def reports() -> list[EntryReport]:
    return [report_of(path) for path in ENTRY_FILES]


# ---------------------------------------------------------------------------- LaTeX


def test_unicode_text_becomes_latex_commands() -> None:
    assert latex_text("Reissner–Nordström") == r'Reissner--Nordstr\"{o}m'
    assert latex_text("Λ-vacuum, r ≤ 2M, x₀²") == (
        r"$\Lambda$-vacuum, r $\le$ 2M, x$_{0}$$^{2}$")
    assert latex_text("50% & $5 #1_a") == r"50\% \& \$5 \#1\_a"
    assert latex_text("Bañados, Gödel, Lemaître") == r"Ba\~{n}ados, G\"{o}del, Lema\^{\i}tre"
    assert latex_text("\u4e2d") == "?"  # no mapping: a visible mark, never a TeX error


def test_long_sums_are_broken_between_terms_and_keep_their_value() -> None:
    r, a, M, theta = sympy.symbols("r a M theta", positive=True)
    expr = sum(sympy.Rational(k, k + 1) * M**k * r ** (8 - k) * sympy.cos(theta) ** k
               for k in range(1, 9))
    rows = expression_rows(expr, (r, theta), width=30)
    assert len(rows) > 2
    assert all(row.startswith(("+ ", "- ")) for row in rows[1:])
    assert "".join(rows).count(r"\cos") == 8  # every term once
    fraction = expression_rows(expr / (r**2 + a**2), (r, theta), width=30)
    assert fraction[0].startswith(r"\frac{M \cos {\theta}}{2520 \left(r^{2} + a^{2}\right)}\Bigl[")
    assert fraction[-1].endswith(r"\Bigr]") and len(fraction) > 2


def _compile(tex: str, folder: Path) -> tuple[int, str]:
    folder.mkdir(parents=True)
    (folder / "entry.tex").write_text(tex, encoding="utf-8")
    done = subprocess.run(
        [PDFLATEX, "-interaction=nonstopmode", "-halt-on-error", "-no-shell-escape", "entry.tex"],
        cwd=folder, capture_output=True, text=True, timeout=60, check=False)
    log = (folder / "entry.log").read_text(encoding="utf-8", errors="replace") \
        if (folder / "entry.log").exists() else done.stdout
    return done.returncode, log


@pytest.mark.slow
@pytest.mark.skipif(PDFLATEX is None, reason="needs pdflatex (Debian: texlive-latex-base)")
def test_every_latex_download_compiles_without_lines_off_the_page(
    reports: list[EntryReport], tmp_path: Path
) -> None:
    documents = {r.entry.id: latex_document(r, META) for r in reports if r.entry is not None}
    with ThreadPoolExecutor(max_workers=2) as pool:
        outcomes = dict(zip(documents, pool.map(
            lambda item: _compile(item[1], tmp_path / item[0]), documents.items()), strict=True))
    failed = {k: log[-800:] for k, (code, log) in outcomes.items() if code != 0}
    assert failed == {}
    too_wide = {k: widths for k, (_, log) in outcomes.items()
                if (widths := [float(w) for w in re.findall(
                    r"Overfull \\hbox \(([\d.]+)pt too wide\)", log)
                    if float(w) > OVERFULL_LIMIT_PT])}
    assert too_wide == {}


def test_latex_download_lists_the_abbreviations_it_uses(reports: list[EntryReport]) -> None:
    kerr = next(r for r in reports if r.entry is not None and r.entry.id ==
                "kerr-boyer-lindquist")
    tex = latex_document(kerr, META)
    assert r"\Sigma = " in tex and r"\Delta = " in tex
    assert r"\frac{\Sigma}{\Delta}" in tex  # g_rr, as textbooks write it
    assert all(ord(ch) < 128 for ch in tex)  # nothing left for pdflatex to choke on


# ---------------------------------------------------------------------------- SymPy script


DRIVER = """
import json, runpy, sys
import sympy
out = {}
for path in sys.argv[1:]:
    namespace = runpy.run_path(path, run_name="download")  # as a program would, minus printing
    metric = namespace["metric"]
    facts = {str(f.func): [f.is_real, f.is_positive, f.is_negative, f.is_nonzero]
             for f in metric.atoms(sympy.core.function.AppliedUndef)}
    out[path] = [sympy.srepr(metric), facts]
print(json.dumps(out))
"""


@pytest.mark.slow
def test_every_sympy_script_rebuilds_exactly_the_declared_metric(
    reports: list[EntryReport], tmp_path: Path
) -> None:
    """All downloads run in one fresh interpreter (one SymPy import), each as its own module."""
    paths = {}
    for report in reports:
        assert report.entry is not None
        script = sympy_script(report, META)
        ast.parse(script)
        paths[report.entry.id] = tmp_path / f"{report.entry.id.replace('-', '_')}.py"
        paths[report.entry.id].write_text(script, encoding="utf-8")
    done = subprocess.run([sys.executable, "-c", DRIVER, *map(str, paths.values())],
                          capture_output=True, text=True, timeout=300, check=False)
    assert done.returncode == 0, done.stderr[-1500:]
    printed = json.loads(done.stdout.strip().splitlines()[-1])
    mismatched = []
    for report in reports:
        assert report.entry is not None and report.spacetime is not None
        text, facts = printed[str(paths[report.entry.id])]
        rebuilt = sympy.sympify(text)  # our own srepr output, not contributor text
        declared = report.spacetime.metric
        # srepr drops a function's assumptions, so they are compared as printed by the child
        # and the functions are then compared by name
        declared_facts = {str(f.func): [f.is_real, f.is_positive, f.is_negative, f.is_nonzero]
                          for f in declared.atoms(AppliedUndef)}
        declared = declared.replace(lambda e: isinstance(e, AppliedUndef),
                                    lambda e: sympy.Function(e.func.__name__)(*e.args))
        if facts != declared_facts:
            mismatched.append(f"{report.entry.id}: function assumptions")
            continue
        if rebuilt.shape != declared.shape or any(
                sympy.cancel(rebuilt[k] - declared[k]) != 0 for k in range(len(declared))):
            mismatched.append(report.entry.id)
    assert mismatched == []
