"""A stand-in for ``tasks.run_task`` that runs in spawned worker processes (so it lives in a
module they can import): it logs each call, and for an entry whose file name says "heavy" it
ends its own process with SIGXCPU from inside a function named like a pipeline stage — what
the CPU-time backstop does to an entry stuck in one long C call, without waiting for it.
"""

from __future__ import annotations

import os
import signal
from pathlib import Path

from generator.model import EntryReport
from generator.run.tasks import Task, record_backstop


def logged_worker(task: Task) -> EntryReport:
    assert task.backstop_file is not None
    log = task.backstop_file.parent / "calls.log"
    with log.open("a", encoding="utf-8") as handle:
        handle.write(task.display + "\n")
    with record_backstop(task.backstop_file):
        if "heavy" in task.display:
            riemann_lower()
    return EntryReport(None, task.display, None, None, None, (), ())


def riemann_lower() -> None:
    """Named like the engine's Riemann step, so the recorded stack names that stage."""
    os.kill(os.getpid(), signal.SIGXCPU)
    signal.pause()  # never reached: SIGXCPU ends the process


def calls(folder: Path) -> list[str]:
    log = folder / "calls.log"
    return log.read_text(encoding="utf-8").splitlines() if log.exists() else []
