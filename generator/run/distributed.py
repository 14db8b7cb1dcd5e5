"""Checking entries on the workers of a Dask distributed cluster instead of local processes.

Entries travel to the workers as file *contents*, not paths: the workers need no shared
filesystem, and each worker checks exactly the bytes the client hashed into the cache key, so a
file edited during a build can never be cached under the key of its earlier text. Files that
cannot be shipped (unreadable, or over the loader's size limit) fail while loading anyway, so
they are checked on the client.

Results come back as they complete. Whatever goes wrong on the cluster for one entry (an
exception in the check, a worker process that died, a task the scheduler cancelled) becomes a
failed report for that entry with a positioned ``distributed.worker`` diagnostic; the other
entries carry on. A worker whose generator or library versions differ from the client's
refuses to check, because its results would be cached under keys that name other versions.

Dask is an optional extra (``pip install 'metric-almanac[distributed]'``) imported only here,
only when ``--scheduler`` is given.
"""

from __future__ import annotations

import tempfile
import uuid
from collections.abc import Callable, Iterator
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from generator import __version__
from generator.entry.catalog import display_path, load_all, vocabulary
from generator.entry.loader import LoadResult, Vocabulary, load_entry
from generator.entry.safefile import read_capped_bytes
from generator.entry.yamlcheck import MAX_FILE_BYTES
from generator.errors import AlmanacError, BudgetExceeded, Diagnostic, UsageError
from generator.geometry.curvature import Limits
from generator.model import EntryReport
from generator.physics.verify import check_loaded
from generator.run.limits import budget_failure_report, run_limited
from generator.run.tasks import MEMORY_PER_ENTRY, Task, alarm_seconds, run_task
from generator.versions import library_versions

FAILURE_CODE = "distributed.worker"
CONNECT_TIMEOUT = "10s"
MISSING_EXTRA = ("--scheduler needs the optional 'distributed' extra: "
                 "pip install 'metric-almanac[distributed]'")


@dataclass(frozen=True)
class ShippedFile:
    """One entry file as sent to a worker: its bytes and the names the loader derives from."""

    display: str  # the path shown in diagnostics, as on the client
    family: str  # name of the folder holding the file (the entry's family)
    name: str  # file name; the entry id must equal its stem
    content: bytes


@dataclass(frozen=True)
class ShippedTask:
    """Everything a worker needs to check one entry, with no access to the client's files."""

    entry: ShippedFile
    related: tuple[ShippedFile, ...]  # entries it links to; unreadable ones are left out
    vocabulary: Vocabulary
    seconds: float
    versions: str  # the client's generator and library versions


class VersionMismatch(AlmanacError):
    """Raised on a worker whose installed versions differ from the client's."""


def environment_versions() -> str:
    """What a result depends on besides the entry: the versions the cache key records."""
    return f"metric-almanac={__version__};{library_versions()}"


# ---------------------------------------------------------------------------- on the worker


def check_shipped(shipped: ShippedTask) -> EntryReport:
    """Check one entry from its shipped bytes (runs on a Dask worker)."""
    here = environment_versions()
    if here != shipped.versions:
        raise VersionMismatch(f"this worker has {here} but the client has {shipped.versions}; "
                              "install the same versions on every worker")
    # Dask runs tasks in worker threads of daemonic processes, where neither signals nor child
    # processes are available: `run_limited` then relies on the engine's cooperative budget
    # and `dask worker --memory-limit`. Loading is inside that call too.
    try:
        return run_limited(_load_and_check_shipped, shipped,
                           seconds=alarm_seconds(shipped.seconds), memory_bytes=MEMORY_PER_ENTRY)
    except BudgetExceeded as exc:
        with tempfile.TemporaryDirectory(prefix="almanac-worker-") as folder:
            structure = _load_shipped(shipped.entry, Path(folder), shipped.vocabulary,
                                      with_math=False)
        return budget_failure_report(structure, exc)


def _load_and_check_shipped(shipped: ShippedTask) -> EntryReport:
    """Load (inside the budget: a line element can be built to blow up) and check."""
    with tempfile.TemporaryDirectory(prefix="almanac-worker-") as folder:
        loads = [_load_shipped(item, Path(folder) / str(k), shipped.vocabulary)
                 for k, item in enumerate((shipped.entry, *shipped.related))]
    own, related = loads[0], loads[1:]
    by_id = {r.entry.id: r for r in related if r.entry is not None}
    return check_loaded(own, by_id, Limits(seconds=shipped.seconds))


def _load_shipped(item: ShippedFile, folder: Path, words: Vocabulary,
                  with_math: bool = True) -> LoadResult:
    """Recreate the file under its family folder so the loader sees the same names."""
    path = folder / item.family / item.name
    path.parent.mkdir(parents=True)
    path.write_bytes(item.content)
    return load_entry(path, item.display, words, with_math=with_math)


# ---------------------------------------------------------------------------- on the client


def run_on_scheduler(
    address: str,
    tasks: list[Task],
    pending: list[int],
    on_done: Callable[[EntryReport], None] | None,
) -> Iterator[tuple[int, EntryReport]]:
    """Check ``tasks[i]`` for every i in ``pending`` on the cluster; yield (i, report) as done."""
    client = _connect(address)
    try:
        shipped, local = _ship_all(tasks, pending)
        futures = {_submit(client, tasks[i], item): i for i, item in shipped.items()}
        for i in local:
            yield _finish(i, run_task(tasks[i]), on_done)
        yield from _collect(client, futures, tasks, on_done)
    finally:
        client.close()


def _connect(address: str) -> Any:
    try:
        from distributed import Client
    except ImportError as exc:
        raise UsageError(MISSING_EXTRA) from exc
    try:
        return Client(address, timeout=CONNECT_TIMEOUT, set_as_default=False)
    except (OSError, TimeoutError, ValueError) as exc:
        raise UsageError(f"cannot reach the Dask scheduler at {address}: {exc}") from exc


def _ship_all(tasks: list[Task], pending: list[int]
              ) -> tuple[dict[int, ShippedTask], list[int]]:
    """Shippable tasks by index, and the indices to check on the client instead."""
    words: dict[Path | None, Vocabulary] = {}
    shipped: dict[int, ShippedTask] = {}
    local: list[int] = []
    for i in pending:
        task = tasks[i]
        if task.root not in words:
            words[task.root] = vocabulary(task.root)
        item = ship_task(task, words[task.root])
        if item is None:
            local.append(i)
        else:
            shipped[i] = item
    return shipped, local


def ship_task(task: Task, words: Vocabulary) -> ShippedTask | None:
    """The task with its files' contents, or None if the entry file itself cannot be shipped."""
    entry = _ship_file(task.file, task.display)
    if entry is None:
        return None
    related = (_ship_file(p, display_path(p, task.base)) for p in task.related_files)
    return ShippedTask(entry, tuple(r for r in related if r is not None), words, task.seconds,
                       environment_versions())


def _ship_file(path: Path, display: str) -> ShippedFile | None:
    content = read_capped_bytes(path, MAX_FILE_BYTES)  # no link, no endless read
    if content is None or len(content) > MAX_FILE_BYTES:
        return None
    return ShippedFile(display, path.parent.name, path.name, content)


def _submit(client: Any, task: Task, item: ShippedTask) -> Any:
    # A readable, unique task key: the dashboard then shows which entry each task is.
    key = f"almanac-check-{Path(task.display).stem}-{uuid.uuid4().hex}"
    return client.submit(check_shipped, item, key=key, pure=False)


def _collect(client: Any, futures: dict[Any, int], tasks: list[Task],
             on_done: Callable[[EntryReport], None] | None
             ) -> Iterator[tuple[int, EntryReport]]:
    from distributed import as_completed

    # This client is not the process-wide default (no global state), so name its loop.
    for future in as_completed(list(futures), loop=client.loop):
        i = futures.pop(future)
        report = _outcome(future, tasks[i])
        future.release()
        yield _finish(i, report, on_done)


def _finish(i: int, report: EntryReport, on_done: Callable[[EntryReport], None] | None
            ) -> tuple[int, EntryReport]:
    if on_done is not None:
        on_done(report)
    return i, report


def _outcome(future: Any, task: Task) -> EntryReport:
    """The worker's report, or a failed report saying what went wrong on the cluster."""
    try:
        report = future.result()
    except Exception as exc:  # raised on the worker or by the scheduler; reported, not hidden
        return failure_report(task, describe_failure(exc))
    if not isinstance(report, EntryReport):
        return failure_report(task, f"the worker returned {type(report).__name__}, "
                              "not a report")
    return report


def describe_failure(exc: BaseException) -> str:
    from distributed import KilledWorker
    from distributed.client import FutureCancelledError

    if isinstance(exc, KilledWorker):
        return "the worker process died while checking this entry (also on every retry)"
    if isinstance(exc, FutureCancelledError):
        return "the scheduler cancelled the check (was the cluster shut down?)"
    return f"{type(exc).__name__}: {exc}"


def failure_report(task: Task, what: str) -> EntryReport:
    """A failed report for an entry whose check did not finish on the cluster.

    The entry is loaded on the client (cheap) so the report still names the entry's id.
    """
    own = load_all([task.file], task.root, task.base)[0]
    problem = Diagnostic(task.display, 1, 1, "error", f"checking on the cluster failed: {what}",
                         FAILURE_CODE, "the entry itself may be fine: run the check again, or "
                         "without --scheduler; the worker's log has the details")
    return EntryReport(own.entry, task.display, own.spacetime, None, None, (),
                       (*own.diagnostics, problem), _content_hash(own))


def _content_hash(load: LoadResult) -> str:
    if load.entry is None:
        return ""
    from generator.entry.content_hash import content_hash

    return content_hash(load.entry)
