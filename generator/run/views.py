"""Entry views made in worker processes: the render stage's share of a cold build.

Making an entry's view (plots, typeset tensors, downloads) is pure and takes about a second
per entry, almost all of it in one process's interpreter; with the checks cached it is
nearly all of a build. Spread over the cores it takes half the time on two. Few views (a
rebuild after one change) are made in forked copies of the build's process instead: starting
fresh workers that import matplotlib and SymPy would cost more than it saves.
"""

from __future__ import annotations

import multiprocessing
import os
from collections.abc import Sequence
from concurrent.futures import ProcessPoolExecutor
from concurrent.futures.process import BrokenProcessPool
from typing import Any

from generator.model import CatalogMeta, EntryReport
from generator.run.safepickle import register_canonical_reducers
from generator.site.common import Surroundings
from generator.site.entry_page import EntryView, entry_view
from generator.site.plots import keep_figures_on
from generator.site.writer import ViewMaker, views_made_here

# Below this many views, workers' start-up (imports: about 2 s each) outweighs the sharing.
MIN_VIEWS_FOR_WORKERS = 8

_meta: list[CatalogMeta] = []  # the catalog-wide data, sent once to each worker


def views_in_processes(jobs: int, figures: Any = None) -> ViewMaker:
    """A view maker that uses up to ``jobs`` worker processes (0: all cores); ``figures``:
    the shelf fresh workers keep figures on (``plots.keep_figures_on``; forked copies have
    the build's own)."""
    def make(wanted: Sequence[tuple[EntryReport, Surroundings]],
             meta: CatalogMeta) -> list[EntryView]:
        workers = min(jobs or os.cpu_count() or 1, len(wanted))
        if workers < 2:
            return views_made_here(wanted, meta)
        if len(wanted) < MIN_VIEWS_FOR_WORKERS:
            return _views_in_forks(wanted, meta, workers)
        register_canonical_reducers()  # reports go to the workers as pickles: keep them fast
        return _pooled(wanted, meta, _view, wanted, max_workers=workers,
                       mp_context=multiprocessing.get_context("spawn"),
                       initializer=_receive_meta, initargs=(meta, figures))
    return make


def _pooled(wanted: Sequence[tuple[EntryReport, Surroundings]], meta: CatalogMeta,
            work, items, **pool_options) -> list[EntryView]:
    """``work`` mapped over ``items`` by a process pool. A worker ended from outside (out of
    memory, killed) breaks the pool: the views are then made here, as a build did before
    views had workers, rather than end the build with the pool's error."""
    try:
        with ProcessPoolExecutor(**pool_options) as pool:
            return list(pool.map(work, items))
    except BrokenProcessPool:
        return views_made_here(wanted, meta)


def _views_in_forks(wanted: Sequence[tuple[EntryReport, Surroundings]], meta: CatalogMeta,
                    workers: int) -> list[EntryView]:
    """A few views (a rebuild after one change makes the changed entry's and those of the
    entries joined to it) in forked copies of this process: they start in milliseconds with
    everything imported and the reports already in memory, where a fresh interpreter spends
    two seconds on imports. Only the finished views travel back. Where fork is not offered
    (or a copy ends from outside) the views are made here."""
    if "fork" not in multiprocessing.get_all_start_methods():
        return views_made_here(wanted, meta)
    _meta[:], _forked_jobs[:] = [meta], list(wanted)
    try:
        return _pooled(wanted, meta, _forked_view, range(len(wanted)), max_workers=workers,
                       mp_context=multiprocessing.get_context("fork"))
    finally:
        _meta.clear()
        _forked_jobs.clear()


_forked_jobs: list[tuple[EntryReport, Surroundings]] = []  # a forked copy's share, by index


def _forked_view(index: int) -> EntryView:
    report, around = _forked_jobs[index]
    return entry_view(report, _meta[0], around)


def _receive_meta(meta: CatalogMeta, figures: Any = None) -> None:
    _meta[:] = [meta]
    keep_figures_on(figures)


def _view(job: tuple[EntryReport, Surroundings]) -> EntryView:
    report, around = job
    return entry_view(report, _meta[0], around)
