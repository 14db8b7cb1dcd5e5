"""Running load → compute → classify & verify over many entries.

Entries are independent, so they run in separate processes (all cores by default), each with
its own time budget; a content-addressed cache skips entries whose inputs have not changed.
Workers receive file paths, not objects, and reload what they need: loading is cheap and this
keeps what crosses process boundaries small and plain.
"""

from __future__ import annotations

import multiprocessing
import os
import tempfile
import threading
from collections.abc import Callable, Sequence
from concurrent.futures import FIRST_COMPLETED, Future, ProcessPoolExecutor, wait
from concurrent.futures.process import BrokenProcessPool
from dataclasses import dataclass, replace
from pathlib import Path

from generator.entry.catalog import (
    Outline,
    chart_groups,
    cross_entry_diagnostics,
    display_path,
    entry_files,
    outline_all,
    outline_links,
    vocabulary_problems,
)
from generator.errors import BudgetExceeded, Diagnostic
from generator.model import EntryReport
from generator.physics.twins import TwinCard, twin_card, worth_comparing
from generator.run.cache import ResultCache, cache_key, task_keys
from generator.run.limits import (
    DEFAULT_STAGE,
    budget_failure_report,
    run_limited,
    run_limited_in_child,
)
from generator.run.tasks import (
    MEMORY_PER_ENTRY,
    Task,
    backstop_report,
    backstop_stage,
    internal_failure_report,
    run_task,
    structure_of,
)

# The duplicate search compares invariants numerically and costs seconds per pair, so it runs
# for a pull request's few entries, not for a whole-catalog build, and under a time limit.
TWIN_SEARCH_MAX_ENTRIES = 8
TWIN_SEARCH_SECONDS = 120.0
TWIN_CARD_SUFFIX = ".card"  # the small file kept beside each cached report


@dataclass(frozen=True)
class RunOptions:
    """How to run the checks: parallelism, budget and cache."""

    jobs: int = 0  # 0 = all cores
    seconds_per_entry: float = 300.0
    cache_dir: Path | None = None
    scheduler: str | None = None  # address of a Dask distributed scheduler
    seed: int | None = None  # the sampling fallback's seed (None: drawn by each worker)
    refuse_sampled: bool = False  # a verdict reached by sampling only is a failure
    in_process: bool = False  # check in this process (tests with a fake engine); see below


def check_files(
    selected: Sequence[Path],
    root: Path | None,
    base: Path,
    options: RunOptions,
    on_done: Callable[[EntryReport], None] | None = None,
    on_running: Callable[[list[str]], None] | None = None,
    changed_only: bool = False,
    search_duplicates: bool = True,
) -> list[EntryReport]:
    """Check the selected entry files; the rest of the catalog is loaded for cross-references.

    The duplicate search runs for a few selected entries (a pull request's), or for any
    number when ``changed_only`` says they are the entries a change touched (CI's
    ``--changed-since``).

    ``on_done`` sees every report as it comes (cached ones too); ``on_running`` the ids of the
    entries being checked, each time a check ends (local runs; the pool takes tasks in order,
    so these are the first unfinished ones — an entry that starts and ends between two looks
    may go unnamed)."""
    catalog_files = entry_files([root]) if root is not None else []
    # Absolute, but links not resolved: a link is checked (and refused) as itself.
    every = {_absolute(p) for p in catalog_files} | {_absolute(p) for p in selected}
    # Workers load what they check; here only ids and links matter.
    outlines = outline_all(sorted(every), root, base)
    by_file = {outline.file: outline for outline in outlines}
    by_id = {outline.id: outline for outline in outlines if outline.id is not None}
    chosen = [by_file[display_path(p, base)] for p in selected]
    cross = cross_entry_diagnostics(outlines, set(by_id))
    tasks = [_task(outline, by_id, root, base, options) for outline in chosen]
    reports = _run(tasks, options, Progress(on_done, on_running))
    twins: dict[str, list[Diagnostic]] = {}
    if search_duplicates and (changed_only or len(reports) <= TWIN_SEARCH_MAX_ENTRIES):
        groups = chart_groups(outline_links(outlines))
        others = _twin_candidates(reports, outlines, set(chosen), by_id, root, base, options,
                                  groups)
        twins = twin_warnings(reports, [*reports, *others.reports], others.ranks,
                              others.keep_ranks, groups)
    elif search_duplicates:
        twins = literal_twin_warnings(reports, chart_groups(outline_links(outlines)))
    return [*vocabulary_reports(root, base),
            *(_with_extra(report, cross.get(report.file, []) + twins.get(report.file, [])
                          + (sampled_refusals(report) if options.refuse_sampled else []))
              for report in reports)]


def vocabulary_reports(root: Path | None, base: Path) -> list[EntryReport]:
    """A failed report for each vocabulary file (tags.yaml, families.yaml) with problems, so
    that they are told at their own lines, in every output format, and fail the run. Entries
    are checked against the names that could be read."""
    return [EntryReport(None, file, None, None, None, (), diagnostics)
            for file, diagnostics in vocabulary_problems(root, base).items()]


def _absolute(path: Path) -> Path:
    absolute = Path(os.path.abspath(path))
    return absolute.parent.resolve() / absolute.name


def sampled_refusals(report: EntryReport) -> list[Diagnostic]:
    """An error for each passing verdict that only sampling reached (``--refuse-sampled``):
    for CI that wants every published statement proved."""
    if report.entry is None:
        return []
    return [Diagnostic.at(report.entry.pos(v.subject), "error",
                          f"{v.subject} was decided by sampling only, and sampled verdicts are "
                          f"refused in this run", "verdict.sampled",
                          "write the claim in a form the exact test decides (a rational "
                          "function, square roots of independent radicands), or run without "
                          "--refuse-sampled")
            for v in report.verdicts if v.ok and v.method == "sampled"]


@dataclass
class _Candidates:
    """Cached reports of unselected entries that might be twins of a selected one."""

    reports: list[EntryReport]
    ranks: dict[str, int]  # functional ranks already known, by entry id
    cards: dict[str, tuple[str, TwinCard]]  # entry id -> (report key, card)
    card_shelf: ResultCache | None

    def keep_ranks(self, ranks: dict[str, int]) -> None:
        """Remember ranks computed by this search on the entries' cards."""
        if self.card_shelf is None:
            return
        for entry_id, rank in ranks.items():
            if entry_id in self.cards:
                key, card = self.cards[entry_id]
                self.card_shelf.put(key, replace(card, rank=rank))


def _twin_candidates(new: list[EntryReport], outlines: list[Outline], selected: set[Outline],
                     by_id: dict[str, Outline], root: Path | None, base: Path,
                     options: RunOptions, groups: dict[str, str]) -> _Candidates:
    """With the cache, only entries already in it take part (a one-entry check stays quick,
    and CI's whole-catalog step has just filled it), and only those whose card shows they
    could be a twin have their whole report loaded. Without the cache (``--no-cache``: from
    scratch), the other entries are computed here and compared by their cards the same way."""
    found = _Candidates([], {}, {}, None)
    if options.cache_dir is None:
        return _computed_candidates(new, outlines, selected, by_id, root, base, options, groups)
    cache = ResultCache(options.cache_dir)
    found.card_shelf = cards = card_shelf(options.cache_dir)
    new_cards = [card for card in (twin_card(r) for r in new) if card is not None]
    for outline in outlines:
        if outline in selected or not new_cards:
            continue
        key = cache_key(_task(outline, by_id, root, base, options))
        card = _card(cache, cards, key)
        if card is None or not any(worth_comparing(mine, card, groups) for mine in new_cards):
            continue
        report = cache.get(key)
        if report is not None:
            found.reports.append(report)
            found.cards[card.id] = (key, card)
            if card.rank is not None:
                found.ranks[card.id] = card.rank
    return found


def _computed_candidates(new: list[EntryReport], outlines: list[Outline],
                         selected: set[Outline], by_id: dict[str, Outline], root: Path | None,
                         base: Path, options: RunOptions,
                         groups: dict[str, str]) -> _Candidates:
    """The duplicate search's candidates computed from scratch: every other entry is checked
    (in parallel, each under its own budget), then kept only if its card could match."""
    found = _Candidates([], {}, {}, None)
    new_cards = [card for card in (twin_card(r) for r in new) if card is not None]
    if not any(card.exact is not None for card in new_cards):
        return found  # nothing to compare: spare the whole-catalog computation
    others = [_task(o, by_id, root, base, options) for o in outlines if o not in selected]
    for report in _run(others, options, Progress()):
        card = twin_card(report)
        if card is not None and any(worth_comparing(mine, card, groups) for mine in new_cards):
            found.reports.append(report)
    return found


def card_shelf(cache_dir: Path) -> ResultCache:
    """Where the duplicate search's cards live: beside the reports, under the same keys."""
    return ResultCache(cache_dir, suffix=TWIN_CARD_SUFFIX)


def _card(cache: ResultCache, cards: ResultCache, key: str) -> TwinCard | None:
    """The entry's card, made from its cached report (and kept) the first time it is asked."""
    card = cards.get(key, TwinCard)
    if card is None:
        report = cache.get(key)
        card = twin_card(report) if report is not None else None
        if card is not None:
            cards.put(key, card)
    return card


def _twin_search_stopped(report: EntryReport) -> Diagnostic:
    assert report.entry is not None
    return Diagnostic.at(report.entry.pos("id"), "note",
                         f"the search for duplicate spacetimes stopped after "
                         f"{TWIN_SEARCH_SECONDS:g} s without a result", "entry.duplicate",
                         "compare with similar entries by hand")


def twin_warnings(new: list[EntryReport], catalog: list[EntryReport],
                  known_ranks: dict[str, int] | None = None,
                  keep_ranks: Callable[[dict[str, int]], None] | None = None,
                  groups: dict[str, str] | None = None,
                  ) -> dict[str, list[Diagnostic]]:
    """Warnings for entries whose spacetime is probably already in the catalog (never for
    charts joined to it by ``related`` links, directly or through chains: ``groups``)."""
    from generator.physics.twins import literal_twins, search_twins, twin_diagnostics

    verified = [r for r in new if r.ok]
    others = [r for r in catalog if r.ok and all(r is not v for v in verified)]
    literal = literal_twins(verified, [r for r in catalog if r.ok], groups)
    # With candidates to compare, the search runs in a child process: its CPU-time backstop
    # must end that child, never `check` itself (which would end with nothing printed).
    limited = run_limited_in_child if verified and others else run_limited
    try:
        search = limited(search_twins, verified, [r for r in catalog if r.ok],
                         known_ranks or {}, groups, seconds=TWIN_SEARCH_SECONDS,
                         memory_bytes=MEMORY_PER_ENTRY)
    except BudgetExceeded:
        return {r.file: [*twin_diagnostics(r, literal.get(r.entry.id, [])),  # type: ignore
                         _twin_search_stopped(r)] for r in verified}
    if keep_ranks is not None:
        keep_ranks(search.ranks)
    found = {name: literal.get(name, []) + [pair for pair in pairs
                                            if pair[0] not in dict(literal.get(name, []))]
             for name, pairs in {**{n: [] for n in literal}, **search.found}.items()}
    return {r.file: twin_diagnostics(r, found[r.entry.id]) for r in verified
            if r.entry is not None and found.get(r.entry.id)}


def literal_twin_warnings(reports: list[EntryReport],
                          groups: dict[str, str]) -> dict[str, list[Diagnostic]]:
    """Only the exact, cheap part of the duplicate search, for runs too large for the
    numerical part (a whole catalog): a metric entered twice under other names is still
    told, so two pull requests adding the same solution cannot both land."""
    from generator.physics.twins import literal_twins, twin_diagnostics

    verified = [r for r in reports if r.ok]
    found = literal_twins(verified, verified, groups)
    return {r.file: twin_diagnostics(r, found[r.entry.id]) for r in verified
            if r.entry is not None and r.entry.id in found}


def _task(outline: Outline, by_id: dict[str, Outline], root: Path | None, base: Path,
          options: RunOptions) -> Task:
    related = [_on_disk(by_id[target].file, base) for target, _ in outline.links
               if target in by_id]
    return Task(_on_disk(outline.file, base), outline.file, root, base, tuple(related),
                options.seconds_per_entry, seed=options.seed)


def _on_disk(file: str, base: Path) -> Path:
    return Path(file) if Path(file).is_absolute() else base / file


def _with_extra(report: EntryReport, extra: list[Diagnostic]) -> EntryReport:
    if not extra:
        return report
    return replace(report, diagnostics=report.diagnostics + tuple(extra))


@dataclass(frozen=True)
class Progress:
    """The callbacks of a run, both optional: each finished report, and what runs now."""

    done: Callable[[EntryReport], None] | None = None
    running: Callable[[list[str]], None] | None = None

    def finished(self, report: EntryReport) -> None:
        if self.done is not None:
            self.done(report)

    def now_running(self, tasks: Sequence[Task]) -> None:
        if self.running is not None:
            self.running([Path(task.display).stem for task in tasks])


def _run(tasks: list[Task], options: RunOptions, progress: Progress) -> list[EntryReport]:
    cache = ResultCache(options.cache_dir) if options.cache_dir else None
    cards = card_shelf(options.cache_dir) if options.cache_dir else None
    both = [task_keys(task) for task in tasks]  # each file read once for both keys
    keys, drawn = [key for key, _ in both], [key for _, key in both]
    results: dict[int, EntryReport] = {}
    if cache is not None and _overlaps_reading(options):
        # Entries with no cache file start computing in the workers while this process reads
        # the others (the unpickling of every cached report is the bulk of a warm check); an
        # entry whose file turns out unreadable or forged is computed in a second round.
        missing = [i for i, key in enumerate(keys) if not cache.holds(key)]
        wanted = [(i, keys[i]) for i in range(len(tasks)) if i not in set(missing)]
        if _forks_for(missing, options):
            hits: list[tuple[int, EntryReport | None]] = []
            _store(tasks, missing, keys, drawn, options, progress, cache, cards, results,
                   meanwhile=lambda: hits.extend((i, cache.get(key)) for i, key in wanted))
        else:
            hits = _read_while(lambda: _store(tasks, missing, keys, drawn, options, progress,
                                              cache, cards, results), cache, wanted)
        pending = []
        for i, hit in hits:
            if hit is None:
                pending.append(i)
            else:
                results[i] = replace(hit, inputs_key=keys[i], figures_key=drawn[i])
                progress.finished(hit)
    else:
        pending = []
        for i, key in enumerate(keys):
            hit = cache.get(key) if cache else None
            if hit is not None:
                results[i] = replace(hit, inputs_key=key, figures_key=drawn[i])
                progress.finished(hit)
            else:
                pending.append(i)
    _store(tasks, pending, keys, drawn, options, progress, cache, cards, results)
    return [results[i] for i in range(len(tasks))]


def _store(tasks: list[Task], pending: list[int], keys: list[str], drawn: list[str],
           options: RunOptions, progress: Progress, cache: ResultCache | None,
           cards: ResultCache | None, results: dict[int, EntryReport],
           meanwhile: Callable[[], None] | None = None) -> None:
    """Compute the pending tasks into ``results`` and keep what may be cached (``meanwhile``:
    see ``_compute_in_processes``)."""
    for i, report in _compute(tasks, pending, options, progress, meanwhile):
        results[i] = report = replace(report, inputs_key=keys[i], figures_key=drawn[i])
        if cache and cards and _cacheable(report):
            cache.put(keys[i], report)
            card = twin_card(report)
            if card is not None:
                cards.put(keys[i], card)


# Below this many entries to compute, the workers are forked copies of this process.
FEW_TO_COMPUTE = 8


def _forks_for(pending: list[int], options: RunOptions) -> bool:
    """Whether the few entries a warm run computes (an edited one and those linked to it) go
    to forked copies of this process: a fresh interpreter spends a second and a half on its
    imports, longer than a small check, while a copy starts with everything imported. The
    copies are made before this process reads the cached reports (it reads them on its main
    thread while they work, no helper thread), and only while no other thread runs: a copy
    never inherits a lock held by another thread. A long run keeps fresh interpreters (see
    ``_spawn``)."""
    return (0 < len(pending) < FEW_TO_COMPUTE and options.scheduler is None
            and not runs_in_this_process(options)
            and "fork" in multiprocessing.get_all_start_methods()
            and threading.active_count() == 1)


def _overlaps_reading(options: RunOptions) -> bool:
    """Reading the cache overlaps computing only when workers compute (a local pool or a
    cluster); in this process the two would only take turns."""
    return not runs_in_this_process(options)


def _read_while(work: Callable[[], None], cache: ResultCache, wanted: list[tuple[int, str]]
                ) -> list[tuple[int, EntryReport | None]]:
    """Read the cached reports ``wanted`` (index, key) in a helper thread while ``work``
    runs here (it mostly waits on worker processes, so the reading gets the interpreter);
    returns what was read, None where a file did not verify. The work stays in this thread:
    signals (the in-process budget's alarm) reach only the main thread."""
    hits: list[tuple[int, EntryReport | None]] = []
    failure: list[BaseException] = []

    def read() -> None:
        try:
            hits.extend((i, cache.get(key)) for i, key in wanted)
        except BaseException as exc:  # handed to the caller's thread
            failure.append(exc)

    reader = threading.Thread(target=read, name="almanac-cache-reader", daemon=True)
    reader.start()
    try:
        work()
    finally:
        reader.join()
    if failure:
        raise failure[0]
    return hits


def _cacheable(report: EntryReport) -> bool:
    """Budget, cluster and internal failures depend on the run, not the entry: never cache."""
    transient = ("budget.exceeded", "distributed.worker", "internal.error")
    return not any(d.code in transient for d in report.diagnostics)


def runs_in_this_process(options: RunOptions) -> bool:
    """Whether checks run in the calling process: only when asked (tests with a fake engine).

    Otherwise even a one-entry check runs in a worker process: the CPU-time backstop that ends
    an entry stuck in one C call ends the whole process, and in the main process that would be
    the end of ``check`` itself, with nothing printed."""
    return options.in_process


def _compute(tasks: list[Task], pending: list[int], options: RunOptions, progress: Progress,
             meanwhile: Callable[[], None] | None = None):
    if options.scheduler:
        from generator.run.distributed import run_on_scheduler

        yield from run_on_scheduler(options.scheduler, tasks, pending, progress.done)
        return
    if runs_in_this_process(options):
        for i in pending:
            progress.now_running([tasks[i]])
            report = run_task(tasks[i])
            progress.finished(report)
            yield i, report
        return
    if not pending:
        return
    jobs = min(options.jobs or os.cpu_count() or 1, len(pending))
    with tempfile.TemporaryDirectory(prefix="almanac-backstop-") as folder:
        recorded = [replace(task, backstop_file=Path(folder) / f"{i}.stack")
                    for i, task in enumerate(tasks)]
        if meanwhile is not None:  # only ``_run``'s forked path passes it (``_forks_for``)
            yield from _compute_in_processes(recorded, pending, jobs, progress,
                                             context=multiprocessing.get_context("fork"),
                                             meanwhile=meanwhile)
        else:
            yield from _compute_in_processes(recorded, pending, jobs, progress)


def _compute_in_processes(tasks: list[Task], pending: list[int], jobs: int,
                          progress: Progress,
                          worker: Callable[[Task], EntryReport] = run_task,
                          context: multiprocessing.context.BaseContext | None = None,
                          meanwhile: Callable[[], None] | None = None):
    """Run tasks on a process pool; if a worker is killed (e.g. at the CPU-time backstop) the
    pool breaks. The entry whose worker the backstop ended (its ``backstop_file`` holds a
    call stack) is reported with its stage and not run again; the other unfinished tasks are
    re-run one per fresh process so that only the entry that kills its worker fails. The pool
    takes tasks in submission order, so the first ``jobs`` unfinished ones are those being
    checked. ``worker`` is `run_task` (another module-level function in tests).
    ``context``: how workers start (fresh interpreters unless told); ``meanwhile`` runs here
    once every task is handed out (with a fork context, after the copies are made)."""
    unfinished = list(pending)
    # No max_tasks_per_child: on Python 3.11 it can deadlock the pool when a worker retires.
    with ProcessPoolExecutor(max_workers=jobs, mp_context=context or _spawn()) as pool:
        futures: dict[Future, int] = {pool.submit(worker, tasks[i]): i for i in pending}
        if meanwhile is not None:
            meanwhile()
        remaining = set(futures)
        while remaining:
            progress.now_running([tasks[i] for i in unfinished[:jobs]])
            done, remaining = wait(remaining, return_when=FIRST_COMPLETED)
            broken = [f for f in done if isinstance(f.exception(), BrokenProcessPool)]
            if broken:
                break
            for future in sorted(done, key=lambda f: futures[f]):
                report = _result(future, tasks[futures[future]])
                unfinished.remove(futures[future])
                progress.finished(report)
                yield futures[future], report
    for i in unfinished:
        stage = backstop_stage(tasks[i].backstop_file)
        if stage is not None:  # this entry ended its worker: it is not run a second time
            report = backstop_report(tasks[i], stage)
        else:
            progress.now_running([tasks[i]])
            report = _run_alone(tasks[i], worker)
        progress.finished(report)
        yield i, report


def _result(future: Future, task: Task) -> EntryReport:
    try:
        return future.result()
    except Exception as exc:
        return internal_failure_report(task.display, exc)


def _run_alone(task: Task, worker: Callable[[Task], EntryReport] = run_task) -> EntryReport:
    """One task in its own worker process: if that process dies, only this entry fails."""
    with ProcessPoolExecutor(max_workers=1, mp_context=_spawn()) as pool:
        future = pool.submit(worker, task)
        try:
            return future.result()
        except BrokenProcessPool:
            stage = backstop_stage(task.backstop_file)
            return backstop_report(task, stage) if stage else worker_killed_report(task)
        except Exception as exc:
            return internal_failure_report(task.display, exc)


def worker_killed_report(task: Task) -> EntryReport:
    """A worker that ended without the backstop's record (killed from outside, or out of
    memory below Python): still a positioned message, naming what is known."""
    return budget_failure_report(structure_of(task), BudgetExceeded(
        DEFAULT_STAGE, "the worker process ended before finishing (killed or out of memory)"))


def _spawn() -> multiprocessing.context.BaseContext:
    """Fresh interpreters for workers: no inherited locks or library state from the parent."""
    return multiprocessing.get_context("spawn")
