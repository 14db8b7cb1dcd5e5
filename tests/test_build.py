"""The top-down build: a failed entry never replaces a good site.

Uses the demo catalog (a lighthouse dome, our own scenario) so the build is quick.
"""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest

from generator.run.build import build_site
from generator.run.pipeline import RunOptions

DEMO = Path(__file__).parent / "roots" / "demo-catalog" / "catalog"
OPTIONS = RunOptions(jobs=1)


@pytest.fixture
def project(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> Path:
    shutil.copytree(DEMO, tmp_path / "catalog")
    monkeypatch.chdir(tmp_path)
    return tmp_path


def snapshot(folder: Path) -> dict[str, bytes]:
    return {p.relative_to(folder).as_posix(): p.read_bytes()
            for p in sorted(folder.rglob("*")) if p.is_file()}


def break_the_demo(project: Path) -> None:
    entry = project / "catalog" / "riemannian" / "lighthouse-dome.yaml"
    entry.write_text(entry.read_text().replace("kretschmann: 4/rho**4", "kretschmann: 3/rho**4"))


def test_build_writes_the_site(project: Path) -> None:
    result = build_site(project / "catalog", project / "site", OPTIONS)
    assert result.ok and result.refused == ()
    assert (project / "site" / "index.html").is_file()
    pages = [p for p in (project / "site").rglob("*.html") if "lighthouse-dome" in p.as_posix()]
    assert pages, "the verified entry has a page"
    assert not list(project.glob(".site.*")), "no staging folder is left behind"


def test_failed_entry_leaves_previous_site_untouched(project: Path) -> None:
    assert build_site(project / "catalog", project / "site", OPTIONS).ok
    before = snapshot(project / "site")
    break_the_demo(project)
    result = build_site(project / "catalog", project / "site", OPTIONS)
    assert not result.ok
    assert result.refused == ("catalog/riemannian/lighthouse-dome.yaml",)
    assert snapshot(project / "site") == before


def test_publish_verified_only_drops_the_failed_entry(project: Path) -> None:
    break_the_demo(project)
    result = build_site(project / "catalog", project / "site", OPTIONS, publish_verified_only=True)
    assert not result.ok
    assert (project / "site" / "index.html").is_file()
    pages = [p for p in (project / "site").rglob("*") if "lighthouse-dome" in p.as_posix()]
    assert pages == []


def test_rebuild_is_byte_identical(project: Path) -> None:
    assert build_site(project / "catalog", project / "site", OPTIONS).ok
    first = snapshot(project / "site")
    assert build_site(project / "catalog", project / "site", OPTIONS).ok
    assert snapshot(project / "site") == first


def add_a_second_entry(project: Path) -> str:
    source = project / "catalog" / "riemannian" / "lighthouse-dome.yaml"
    copy = source.with_name("lighthouse-dome-annex.yaml")
    copy.write_text(source.read_text().replace("id: lighthouse-dome\n",
                                               "id: lighthouse-dome-annex\n"))
    return "lighthouse-dome-annex"


def test_entry_views_are_kept_and_remade_only_for_what_changed(project: Path,
                                                              monkeypatch: pytest.MonkeyPatch
                                                              ) -> None:
    """With a cache folder, a rebuild takes each entry's rendered view from the cache unless
    something it is made from changed; the site stays byte-identical to a build without any
    cache."""
    from generator.run.cache import SECRET_ENV
    from generator.site import writer as render

    monkeypatch.setenv(SECRET_ENV, "build-test-secret-of-at-least-32-characters")
    annex = add_a_second_entry(project)
    made: list[str] = []
    real = render.entry_view

    def counting_view(report, meta, *surroundings):
        made.append(report.entry.id)
        return real(report, meta, *surroundings)

    monkeypatch.setattr(render, "entry_view", counting_view)
    cached = RunOptions(jobs=1, cache_dir=project / "cache")
    assert build_site(project / "catalog", project / "site", cached).ok
    assert sorted(made) == ["lighthouse-dome", annex]
    first = snapshot(project / "site")

    made.clear()
    assert build_site(project / "catalog", project / "site", cached).ok
    assert made == []
    assert snapshot(project / "site") == first

    entry = project / "catalog" / "riemannian" / f"{annex}.yaml"
    text = entry.read_text()
    title = next(line for line in text.splitlines() if line.startswith("title:"))
    entry.write_text(text.replace(title, title + " (annex)"))
    assert build_site(project / "catalog", project / "site", cached).ok
    assert made == [annex]

    assert build_site(project / "catalog", project / "fresh", OPTIONS).ok
    assert snapshot(project / "site") == snapshot(project / "fresh")


def test_the_view_key_names_everything_a_view_is_made_from(project: Path) -> None:
    from dataclasses import replace

    from generator.errors import Diagnostic
    from generator.model import Family, Publication, Revision
    from generator.run.build import catalog_meta
    from generator.run.pipeline import check_files
    from generator.site.atlas import MAPS_HERE, ChartLink
    from generator.site.common import Surroundings
    from generator.site.writer import view_key

    [report] = check_files([project / "catalog" / "riemannian" / "lighthouse-dome.yaml"],
                           project / "catalog", project, OPTIONS)
    meta = catalog_meta(project / "catalog")
    key = view_key(report, meta)
    assert key is not None and key == view_key(report, meta, Surroundings())
    revision = Revision("0" * 40, "2026-12-01", "f" * 64, "first", "id: x\n")
    note = Diagnostic(report.file, 1, 1, "note", "a duplicate spacetime?", "entry.duplicate")
    chart = ChartLink("another-entry", "its chart", MAPS_HERE, (), (("u", "t"),), "exact")
    changed = [
        view_key(replace(report, inputs_key="another"), meta),
        view_key(replace(report, diagnostics=(*report.diagnostics, note)), meta),
        view_key(report, replace(meta, version="9.9.9")),
        view_key(report, replace(meta, publication=Publication(
            site_address="https://elsewhere.example/"))),
        view_key(report, replace(meta, families=(*meta.families, Family("x", "X", "")))),
        view_key(report, replace(meta, revisions={"lighthouse-dome": (revision,)})),
        view_key(report, meta, Surroundings(published_links=("another-entry",))),
        view_key(report, meta, Surroundings(charts=(chart,))),
    ]
    assert key not in changed and len(set(changed)) == len(changed)
    assert view_key(replace(report, inputs_key=""), meta) is None


def test_a_pruned_cache_keeps_exactly_what_the_last_build_used(project: Path,
                                                               monkeypatch: pytest.MonkeyPatch
                                                               ) -> None:
    from generator.run.cache import SECRET_ENV
    from generator.site import writer as render

    monkeypatch.setenv(SECRET_ENV, "build-test-secret-of-at-least-32-characters")
    cache = project / "cache"
    cached = RunOptions(jobs=1, cache_dir=cache)

    def kept(suffix: str) -> set[str]:
        return {p.name for p in cache.glob(f"??/*{suffix}")}

    # one entry: its report, its card, its view, and (also .view files) the search script and
    # the entry's figures
    files_per_build = {".bin": 1, ".card": 1, ".view": 3}
    assert build_site(project / "catalog", project / "site", cached).ok
    before = {suffix: kept(suffix) for suffix in (".bin", ".card", ".view")}
    assert {s: len(names) for s, names in before.items()} == files_per_build
    (cache / "notes.txt").write_text("not a cache file of ours")
    entry = project / "catalog" / "riemannian" / "lighthouse-dome.yaml"
    entry.write_text(entry.read_text().replace("title: Lighthouse dome", "title: Lighthouse"))

    assert build_site(project / "catalog", project / "site", cached, prune_cache=True).ok
    for suffix, old in before.items():
        now = kept(suffix)
        # the edited entry's new files only (its title is in the search script too); its
        # figures, drawn from the same mathematics, are the ones kept before
        assert len(now) == files_per_build[suffix], suffix
        assert len(now & old) == (1 if suffix == ".view" else 0), suffix
    assert (cache / "notes.txt").is_file()

    made: list[str] = []
    real = render.entry_view
    monkeypatch.setattr(render, "entry_view",
                        lambda report, meta, ids=frozenset(): made.append(report.entry.id)
                        or real(report, meta, ids))
    assert build_site(project / "catalog", project / "site", cached, prune_cache=True).ok
    assert made == [] and {s: len(kept(s)) for s in before} == files_per_build


def test_a_rebuild_keeps_the_search_script_until_a_card_changes(
        project: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    """The lunr index is rebuilt only when what it indexes changes; the script written from
    the cache is the very script a fresh build writes (common practice: a cache must not
    change the output)."""
    from generator.run.cache import SECRET_ENV
    from generator.site import writer as render

    monkeypatch.setenv(SECRET_ENV, "build-test-secret-of-at-least-32-characters")
    cached = RunOptions(jobs=1, cache_dir=project / "cache")
    script = project / "site" / "assets" / "search-lunr.js"
    made: list[int] = []
    real = render.search_script
    monkeypatch.setattr(render, "search_script", lambda cards: made.append(len(cards))
                        or real(cards))
    assert build_site(project / "catalog", project / "site", cached).ok
    first = script.read_bytes()
    assert build_site(project / "catalog", project / "site", cached).ok
    assert len(made) == 1 and script.read_bytes() == first
    entry = project / "catalog" / "riemannian" / "lighthouse-dome.yaml"
    entry.write_text(entry.read_text().replace("title: Lighthouse dome", "title: Lantern"))
    assert build_site(project / "catalog", project / "site", cached).ok
    second = script.read_bytes()
    assert len(made) == 2 and second != first
    assert build_site(project / "catalog", project / "site", cached).ok
    assert len(made) == 2 and script.read_bytes() == second
    assert build_site(project / "catalog", project / "site", RunOptions(jobs=1)).ok
    assert len(made) == 3 and script.read_bytes() == second


def test_the_command_line_prunes_on_request(project: Path, monkeypatch: pytest.MonkeyPatch,
                                            capsys: pytest.CaptureFixture[str]) -> None:
    from generator.cli import main
    from generator.run.cache import SECRET_ENV

    monkeypatch.setenv(SECRET_ENV, "build-test-secret-of-at-least-32-characters")
    stale = project / "cache" / "ab" / ("ab" + "0" * 62 + ".view")
    stale.parent.mkdir(parents=True)
    stale.write_bytes(b"left by an older build")
    assert main(["build", "--jobs", "1", "--cache-dir", "cache", "--prune-cache"]) == 0
    assert not stale.exists()
    assert "cache pruned: 1 unused files removed" in capsys.readouterr().err
