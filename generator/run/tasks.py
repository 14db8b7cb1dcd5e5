"""One unit of checking work (an entry file and the files it links to) and how a worker runs it
within its budget; shared by the local process pool and the Dask workers.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

from generator.entry.catalog import load_all
from generator.entry.loader import LoadResult
from generator.errors import BudgetExceeded, Diagnostic
from generator.geometry.curvature import Limits
from generator.geometry.decisions import set_run_seed
from generator.model import EntryReport
from generator.physics.verify import check_loaded
from generator.run.limits import budget_failure_report, run_limited

MEMORY_PER_ENTRY = 2 * 1024**3  # bytes an entry may add to its worker


@dataclass(frozen=True)
class Task:
    """One entry to check, with the files of the entries it links to."""

    file: Path
    display: str
    root: Path | None
    base: Path
    related_files: tuple[Path, ...]
    seconds: float
    seed: int | None = None  # sampling seed of the run (not part of the cache key)


def run_task(task: Task) -> EntryReport:
    """Check one entry (runs inside a worker process) under a hard time and memory limit."""
    set_run_seed(task.seed)
    try:
        loads = load_all([task.file, *task.related_files], task.root, task.base)
        return check_within_limits(loads, task.seconds)
    except Exception as exc:  # a bug must fail this entry loudly, not the whole build
        return internal_failure_report(task.display, exc)


def check_within_limits(loads: list[LoadResult], seconds: float) -> EntryReport:
    """Check ``loads[0]`` (the rest are the entries it links to) under the entry's budget:
    the engine's cooperative time limit, and a hard alarm and memory cap with some slack on
    top so that the engine's own, more precise message wins when it can."""
    own, related = loads[0], loads[1:]
    by_id = {r.entry.id: r for r in related if r.entry is not None}
    try:
        return run_limited(check_loaded, own, by_id, Limits(seconds=seconds),
                           seconds=seconds * 1.25 + 5, memory_bytes=MEMORY_PER_ENTRY)
    except BudgetExceeded as exc:
        return budget_failure_report(own, exc)


def internal_failure_report(file: str, exc: BaseException) -> EntryReport:
    """An entry whose check crashed: say so plainly (it is our bug, not the contributor's)."""
    diagnostic = Diagnostic(file, 1, 1, "error",
                            f"internal error while checking this entry: {type(exc).__name__}: "
                            f"{str(exc)[:300]}", "internal.error",
                            "this is a bug in the generator, not in the entry; please report it")
    return EntryReport(None, file, None, None, None, (), (diagnostic,))
