"""The LaTeX download compiles with LuaLaTeX as well as pdflatex: a sample of shipped entries
chosen for what used to break (accented names, Greek in headings, long split equations,
abbreviations), each compiled with lualatex and checked for errors and lines off the page.

lualatex ships in Debian's texlive-latex-base (the package .ci/run installs for pdflatex; its
binary comes from texlive-binaries, a dependency), so CI runs this test; elsewhere it is skipped
with its reason when lualatex is missing. "Overfull \\hbox" and its size in points are TeX's
own measure of a line too wide (Knuth, The TeXbook, 1984, ch. 12 — common practice).
"""

from __future__ import annotations

import os
import re
import shutil
import subprocess
from pathlib import Path

import pytest
import sympy

from generator.entry.loader import load_entry
from generator.model import CatalogMeta, EntryReport, Publication
from generator.site.downloads import latex_document

CATALOG = Path(__file__).resolve().parent.parent / "catalog"
LUALATEX = shutil.which("lualatex")
OVERFULL_LIMIT_PT = 50.0
META = CatalogMeta(version="0.0.0-test", generator_version="test", sympy_version=sympy.__version__,
                   families=(), tags=(), contributing_markdown="", publication=Publication())
SAMPLE = ("kerr-de-sitter", "kerr-newman-de-sitter", "reissner-nordstrom", "godel",
          "btz", "lemaitre-tolman-bondi", "alcubierre", "schwarzschild-kruskal-szekeres")


def document(entry_id: str) -> str:
    path = next(CATALOG.glob(f"*/{entry_id}.yaml"))
    loaded = load_entry(path)
    assert loaded.entry is not None and loaded.spacetime is not None, path
    report = EntryReport(loaded.entry, str(path), loaded.spacetime, None, None, (), (),
                         content_hash="0" * 64)
    return latex_document(report, META)


def test_the_sample_holds_what_used_to_break() -> None:
    """Not a compile: the sample must keep accented text and a broken (split) equation, or
    the LuaLaTeX test below would prove less than it says."""
    texts = {entry_id: document(entry_id) for entry_id in SAMPLE}
    assert any(r"\"{o}" in tex for tex in texts.values())  # Nordström, Gödel
    assert any(r"\begin{split}" in tex for tex in texts.values())
    assert all(ord(ch) < 128 for tex in texts.values() for ch in tex)


@pytest.mark.slow
@pytest.mark.skipif(LUALATEX is None,
                    reason="needs lualatex (Debian: texlive-latex-base, as for pdflatex)")
@pytest.mark.parametrize("entry_id", SAMPLE)
def test_latex_download_compiles_with_lualatex(entry_id: str, tmp_path: Path) -> None:
    (tmp_path / "entry.tex").write_text(document(entry_id), encoding="utf-8")
    environment = dict(os.environ, TEXMFVAR=str(tmp_path / "texmf-var"))  # font cache here
    done = subprocess.run(
        [LUALATEX, "-interaction=nonstopmode", "-halt-on-error", "-no-shell-escape",
         "entry.tex"], cwd=tmp_path, capture_output=True, text=True, timeout=120,
        check=False, env=environment)
    log = (tmp_path / "entry.log").read_text(encoding="utf-8", errors="replace") \
        if (tmp_path / "entry.log").exists() else done.stdout
    assert done.returncode == 0, log[-800:]
    assert (tmp_path / "entry.pdf").stat().st_size > 1000
    widths = [float(w) for w in re.findall(r"Overfull \\hbox \(([\d.]+)pt too wide\)", log)]
    assert all(w <= OVERFULL_LIMIT_PT for w in widths), widths
