"""Views made in worker processes give the very site made in one process.

The reference is the one-process build itself (byte-identical files are the site's promise of
determinism, tests/test_render.py); the fixture is the scale-small catalog
(tests/roots/scale-small, invented entries plus textbook Schwarzschild and flat space).
"""

from __future__ import annotations

from pathlib import Path

import pytest
from _scale_helpers import FAILING, FIXTURE, catalog_files

from generator.run import views
from generator.run.build import catalog_meta
from generator.run.pipeline import RunOptions, check_files
from generator.site.writer import render_site, views_made_here


@pytest.fixture(scope="module")
def fixture_reports():
    reports = check_files(catalog_files(FIXTURE), FIXTURE, FIXTURE.parent,
                          RunOptions(jobs=1, cache_dir=None), search_duplicates=False)
    published = [r for r in reports if r.ok]
    assert len(published) == len(reports) - len(FAILING) >= 3
    return reports


def _files(folder: Path) -> dict[str, bytes]:
    return {str(p.relative_to(folder)): p.read_bytes()
            for p in sorted(folder.rglob("*")) if p.is_file()}


def test_worker_views_give_byte_identical_pages(fixture_reports, tmp_path, monkeypatch) -> None:
    monkeypatch.setattr(views, "MIN_VIEWS_FOR_WORKERS", 1)
    made: list[int] = []

    def counted(wanted, meta):
        made.append(len(wanted))
        return views.views_in_processes(2)(wanted, meta)

    meta = catalog_meta(FIXTURE, None)
    render_site(fixture_reports, meta, tmp_path / "here", None, views_made_here)
    render_site(fixture_reports, meta, tmp_path / "workers", None, counted)
    assert made and made[0] >= 3
    here, workers = _files(tmp_path / "here"), _files(tmp_path / "workers")
    assert len(here) > 20
    assert here == workers


def test_few_views_are_made_in_forked_copies_not_fresh_workers(fixture_reports, monkeypatch
                                                               ) -> None:
    """Below the threshold no fresh interpreter is spawned (a rebuild after one change stays
    quick): the views are made in forked copies of this process, and equal those made here."""
    import multiprocessing

    contexts: list[str] = []
    real_pool = views.ProcessPoolExecutor

    def watched_pool(*args, **kwargs):
        contexts.append(kwargs["mp_context"].get_start_method())
        return real_pool(*args, **kwargs)

    monkeypatch.setattr(views, "ProcessPoolExecutor", watched_pool)
    published = [r for r in fixture_reports if r.ok][:2]
    from generator.site.entry_page import NOWHERE

    meta = catalog_meta(FIXTURE, None)
    made = views.views_in_processes(2)([(r, NOWHERE) for r in published], meta)
    assert made == views_made_here([(r, NOWHERE) for r in published], meta)
    if "fork" in multiprocessing.get_all_start_methods():
        assert contexts == ["fork"]
    assert "spawn" not in contexts


def test_forked_views_give_byte_identical_pages(fixture_reports, tmp_path, monkeypatch) -> None:
    monkeypatch.setattr(views, "MIN_VIEWS_FOR_WORKERS", 10**6)  # every view in a forked copy
    forked: list[int] = []
    real = views._views_in_forks

    def counted(wanted, meta, workers):
        forked.append(len(wanted))
        return real(wanted, meta, workers)

    monkeypatch.setattr(views, "_views_in_forks", counted)
    meta = catalog_meta(FIXTURE, None)
    render_site(fixture_reports, meta, tmp_path / "here", None, views_made_here)
    render_site(fixture_reports, meta, tmp_path / "forks", None, views.views_in_processes(2))
    assert forked and forked[0] >= 3
    assert _files(tmp_path / "here") == _files(tmp_path / "forks")


def test_a_broken_pool_leaves_the_views_to_this_process(fixture_reports, monkeypatch) -> None:
    """A worker killed from outside breaks the pool; the views are then made here (the build
    goes on as it did before views had workers), not lost with the pool's error."""
    from concurrent.futures.process import BrokenProcessPool

    from generator.site.entry_page import NOWHERE

    class BrokenPool:
        def __init__(self, *args, **kwargs) -> None:
            pass

        def __enter__(self):
            return self

        def __exit__(self, *exc) -> None:
            return None

        def map(self, *args, **kwargs):
            raise BrokenProcessPool("a worker ended abruptly")

    monkeypatch.setattr(views, "ProcessPoolExecutor", BrokenPool)
    monkeypatch.setattr(views, "MIN_VIEWS_FOR_WORKERS", 1)
    published = [r for r in fixture_reports if r.ok]
    meta = catalog_meta(FIXTURE, None)
    made = views.views_in_processes(2)([(r, NOWHERE) for r in published], meta)
    assert [v.card for v in made] == [v.card for v in views_made_here(
        [(r, NOWHERE) for r in published], meta)]
