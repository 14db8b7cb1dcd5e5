"""One unit of checking work (an entry file and the files it links to) and how a worker runs it
within its budget; shared by the local process pool and the Dask workers.

Loading runs inside the same budget as computing: reading a line element can expand a product
(``sympy.expand``), and an entry written to blow that up must be stopped like any other
expensive step, with the stage named.
"""

from __future__ import annotations

import faulthandler
import re
import signal
from collections.abc import Iterator
from contextlib import contextmanager
from dataclasses import dataclass, replace
from pathlib import Path

from generator.entry.catalog import load_all
from generator.entry.loader import LoadResult, load_entry
from generator.errors import BudgetExceeded, Diagnostic
from generator.geometry.curvature import Limits
from generator.geometry.decisions import set_run_seed
from generator.model import EntryReport
from generator.physics.twins import literal_key
from generator.physics.verify import check_loaded
from generator.run.limits import (
    DEFAULT_STAGE,
    HARD_GRACE_SECONDS,
    budget_failure_report,
    run_limited,
    stage_of_name,
)
from generator.run.safepickle import register_canonical_reducers

MEMORY_PER_ENTRY = 2 * 1024**3  # bytes an entry may add to its worker


@dataclass(frozen=True)
class Task:
    """One entry to check, with the files of the entries it links to.

    ``backstop_file``: where the worker writes its call stack if the CPU-time backstop ends it
    (`record_backstop`), so that the parent can name the stage and not run the entry again.
    """

    file: Path
    display: str
    root: Path | None
    base: Path
    related_files: tuple[Path, ...]
    seconds: float
    backstop_file: Path | None = None
    seed: int | None = None  # sampling seed of the run (not part of the cache key)


def alarm_seconds(seconds: float) -> float:
    """The hard alarm: the engine's cooperative limit plus slack, so that the engine's own,
    more precise message wins when it can."""
    return seconds * 1.25 + 5


def run_task(task: Task) -> EntryReport:
    """Load and check one entry (runs inside a worker process) under a hard time and memory
    limit covering both."""
    register_canonical_reducers()  # the report goes back to the parent as a pickle
    set_run_seed(task.seed)
    with record_backstop(task.backstop_file):
        try:
            return with_literal_key(load_and_check_within_limits(task))
        except Exception as exc:  # a bug must fail this entry loudly, not the whole build
            return internal_failure_report(task.display, exc)


def with_literal_key(report: EntryReport) -> EntryReport:
    """The report with its metric's literal key (see ``twins.literal_key``), computed here in
    the worker, once, rather than by every later check that reads the report back."""
    if report.spacetime is None or report.entry is None:
        return report
    return replace(report, literal_key=literal_key(report.spacetime))


def load_and_check_within_limits(task: Task) -> EntryReport:
    loaded: list[LoadResult] = []
    try:
        return run_limited(_load_and_check, task, loaded, seconds=alarm_seconds(task.seconds),
                           memory_bytes=MEMORY_PER_ENTRY)
    except BudgetExceeded as exc:
        return budget_failure_report(loaded[0] if loaded else structure_of(task), exc)


def _load_and_check(task: Task, loaded: list[LoadResult]) -> EntryReport:
    loads = load_all([task.file, *task.related_files], task.root, task.base)
    loaded.append(loads[0])
    own, related = loads[0], loads[1:]
    by_id = {r.entry.id: r for r in related if r.entry is not None}
    return check_loaded(own, by_id, Limits(seconds=task.seconds))


def structure_of(task: Task) -> LoadResult:
    """The entry read without its mathematics (bounded: a capped YAML file, nothing expanded):
    enough to place a diagnostic at its metric when the full load ran out of budget."""
    try:
        return load_entry(task.file, task.display, with_math=False)
    except Exception:  # placing a message must never fail the report
        return LoadResult(task.display, None, None)


def check_within_limits(loads: list[LoadResult], seconds: float) -> EntryReport:
    """Check ``loads[0]`` (the rest are the entries it links to, already loaded) under the
    entry's budget: the engine's cooperative time limit, and a hard alarm and memory cap."""
    own, related = loads[0], loads[1:]
    by_id = {r.entry.id: r for r in related if r.entry is not None}
    try:
        return run_limited(check_loaded, own, by_id, Limits(seconds=seconds),
                           seconds=alarm_seconds(seconds), memory_bytes=MEMORY_PER_ENTRY)
    except BudgetExceeded as exc:
        return budget_failure_report(own, exc)


# ---------------------------------------------------------------------------- the backstop


@contextmanager
def record_backstop(path: Path | None) -> Iterator[None]:
    """While checking, let SIGXCPU (the CPU-time backstop of `run_limited`) write the call
    stack to ``path`` before it ends the process.

    The backstop fires when one C call has run far past the alarm; no Python code can run then,
    but `faulthandler` writes from C, and then passes the signal on (the process still ends).
    The parent reads the file: the stage comes from the function names, and a non-empty file
    says this entry is the one that ended its worker.
    """
    if path is None or not hasattr(signal, "SIGXCPU"):
        yield
        return
    with open(path, "w", encoding="utf-8") as handle:
        faulthandler.register(signal.SIGXCPU, file=handle, all_threads=True, chain=True)
        try:
            yield
        finally:
            faulthandler.unregister(signal.SIGXCPU)


_FRAME = re.compile(r'File ".*", line \d+ in (\w+)')


def backstop_stage(path: Path | None) -> str | None:
    """The stage a worker was in when the backstop ended it, read from ``record_backstop``'s
    file: the innermost function with a stage name; None if the backstop did not fire."""
    if path is None:
        return None
    try:
        text = path.read_text(encoding="utf-8", errors="replace")[:200_000]
    except OSError:
        return None
    if not text.strip():
        return None
    names = _FRAME.findall(text)
    return next((stage for stage in map(stage_of_name, names) if stage), DEFAULT_STAGE)


def backstop_report(task: Task, stage: str) -> EntryReport:
    """The report of an entry whose worker the CPU-time backstop ended, placed at its metric."""
    limit = (f"CPU time of {alarm_seconds(task.seconds):g} s plus {HARD_GRACE_SECONDS:g} s of "
             "grace; the worker process was ended")
    return budget_failure_report(structure_of(task), BudgetExceeded(stage, limit))


def internal_failure_report(file: str, exc: BaseException) -> EntryReport:
    """An entry whose check crashed: say so plainly (it is our bug, not the contributor's)."""
    diagnostic = Diagnostic(file, 1, 1, "error",
                            f"internal error while checking this entry: {type(exc).__name__}: "
                            f"{str(exc)[:300]}", "internal.error",
                            "this is a bug in the generator, not in the entry; please report it")
    return EntryReport(None, file, None, None, None, (), (diagnostic,))
