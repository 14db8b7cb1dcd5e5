"""Figures kept between builds: a retitled entry keeps its plots, with the new title in their
alt text, and the site is byte for byte the one drawn afresh.

The reference is the build without any shelf (every figure drawn), whose byte-identical output
is the site's promise of determinism (tests/test_render.py); the fixture is the scale-small
catalog (tests/roots/scale-small: invented entries plus textbook Schwarzschild and flat space).
"""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path
from types import SimpleNamespace

import pytest
from _scale_helpers import FIXTURE, catalog_files

from generator.run.build import catalog_meta
from generator.run.cache import SECRET_ENV, ResultCache, figures_key
from generator.run.pipeline import RunOptions, check_files
from generator.site import plots
from generator.site.writer import VIEW_SUFFIX, render_site


@pytest.fixture(autouse=True)
def cache_secret(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setenv(SECRET_ENV, "secret-of-this-machine-32-characters-long")


@pytest.fixture(scope="module")
def reports():
    found = check_files(catalog_files(FIXTURE), FIXTURE, FIXTURE.parent,
                        RunOptions(jobs=1, cache_dir=None), search_duplicates=False)
    published = [r for r in found if r.ok]
    assert all(r.figures_key for r in published)
    assert any(plots.drawn_plots(r) for r in published), "the fixture draws something"
    return found


def _files(folder: Path) -> dict[str, bytes]:
    return {str(p.relative_to(folder)): p.read_bytes()
            for p in sorted(folder.rglob("*")) if p.is_file()}


def retitled(reports, new_title: str):
    """The reports with the first plotted entry retitled (its mathematics unchanged)."""
    index = next(i for i, r in enumerate(reports) if r.ok and plots.drawn_plots(r))
    changed = list(reports)
    report = changed[index]
    changed[index] = replace(report, entry=replace(report.entry, title=new_title),
                             inputs_key=report.inputs_key + "-retitled")
    return changed, changed[index]


def counting_draws(monkeypatch: pytest.MonkeyPatch) -> list[str]:
    drawn: list[str] = []
    real = plots.drawn_plots

    def counted(report):
        drawn.append(report.entry.id)
        return real(report)

    monkeypatch.setattr(plots, "drawn_plots", counted)
    return drawn


def test_a_retitled_entry_keeps_its_figures_and_shows_its_new_title(
        reports, tmp_path, monkeypatch) -> None:
    meta = catalog_meta(FIXTURE, None)
    shelf = ResultCache(tmp_path / "cache", suffix=VIEW_SUFFIX)
    render_site(reports, meta, tmp_path / "first", shelf)
    changed, report = retitled(reports, "A lighthouse renamed")
    drawn = counting_draws(monkeypatch)
    render_site(changed, meta, tmp_path / "kept", shelf)
    assert report.entry.id not in drawn, "the figures of the same mathematics were drawn again"
    render_site(changed, meta, tmp_path / "fresh", None)
    assert report.entry.id in drawn  # the reference draws everything
    kept, fresh = _files(tmp_path / "kept"), _files(tmp_path / "fresh")
    assert kept == fresh
    assert any(b"A lighthouse renamed" in content for name, content in kept.items()
               if report.entry.id in name and name.endswith(".html"))


def test_other_mathematics_is_drawn_again(reports, tmp_path, monkeypatch) -> None:
    meta = catalog_meta(FIXTURE, None)
    shelf = ResultCache(tmp_path / "cache", suffix=VIEW_SUFFIX)
    render_site(reports, meta, tmp_path / "first", shelf)
    changed, report = retitled(reports, "Same title, other key")
    index = changed.index(report)
    changed[index] = replace(report, figures_key=report.figures_key + "-other-metric")
    drawn = counting_draws(monkeypatch)
    render_site(changed, meta, tmp_path / "second", shelf)
    assert drawn == [report.entry.id]


def test_the_figures_kept_are_among_the_keys_a_pruned_cache_keeps(reports, tmp_path) -> None:
    meta = catalog_meta(FIXTURE, None)
    shelf = ResultCache(tmp_path / "cache", suffix=VIEW_SUFFIX)
    used = render_site(reports, meta, tmp_path / "site", shelf)
    for report in (r for r in reports if r.ok):
        key = plots.kept_figures_key(report)
        assert key in used and shelf.get(key, tuple) is not None


def test_the_figures_key_leaves_out_the_title_line_only(tmp_path) -> None:
    source = next(p for p in catalog_files(FIXTURE) if "flat" in p.name).read_text()
    assert "\ntitle: " in "\n" + source

    def key_of(text: str) -> str:
        path = tmp_path / "entry.yaml"
        path.write_text(text)
        return figures_key(SimpleNamespace(file=path, display="entry.yaml", seconds=60.0,
                                           related_files=()))

    base = key_of(source)
    lines = source.splitlines(keepends=True)
    at = next(i for i, line in enumerate(lines) if line.startswith("title: "))
    renamed = "".join([*lines[:at], "title: Something else entirely\n", *lines[at + 1:]])
    assert key_of(renamed) == base
    assert key_of(source + "# a comment elsewhere\n") != base
    assert key_of(source.replace("coordinates:", "coordinates:  ", 1)) != base
