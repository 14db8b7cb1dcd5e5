"""Hard per-entry limits on time and memory, enforced inside a worker process.

Entries come from strangers, and a valid but pathological metric (nested enormous powers, an
expansion that explodes) can keep SymPy busy for hours or eat all memory. The geometry engine
checks a cooperative budget between components, but one huge simplification can run far past
it, so each entry also runs under a real alarm (``setitimer(ITIMER_REAL)``) and an address-space
cap (``setrlimit(RLIMIT_AS)``). Either one ends the entry with `BudgetExceeded` naming the stage
that was running — read from the interrupted call stack — so the contributor learns *what* was
too expensive, and the rest of the build goes on.

Limits:
- The alarm interrupts Python code only: a single long call inside a C library (a FLINT gcd of
  two huge polynomials) ends when it returns to Python. So a last resort backs the alarm: a
  CPU-time soft limit (``RLIMIT_CPU``) ``hard_grace`` seconds after the alarm, whose SIGXCPU
  ends the whole worker process. The parent then sees a dead worker, not a hung build.
- The alarm repeats every `REPEAT_SECONDS` after the first, so code that swallows the
  exception (``except Exception`` in a library) is interrupted again.
- Signals and resource limits belong to the process and its main thread. Called from another
  thread, `run_limited` runs ``fn`` in a fresh child process whose main thread sets the
  limits (``fn`` and its arguments must then be picklable); a child ended by the backstop
  raises `BudgetExceeded` here. The one exception is a daemonic process (a Dask worker),
  which may not start children: there Dask's ``--memory-limit`` and the engine's cooperative
  time budget are the bounds, as the distributed guide says.
"""

from __future__ import annotations

import multiprocessing
import resource
import signal
import threading
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path
from types import FrameType, TracebackType
from typing import Any, TypeVar

from generator.entry.loader import LoadResult
from generator.errors import BudgetExceeded, Diagnostic, SourcePos
from generator.model import EntryReport

T = TypeVar("T")

REPEAT_SECONDS = 0.5
HARD_GRACE_SECONDS = 60.0
DEFAULT_STAGE = "checking the entry"
BUDGET_CODE = "budget.exceeded"  # the code verify.py uses, so the cache never stores these

# Function names of the pipeline mapped to what a contributor would call that stage. The
# innermost named frame wins: "Riemann tensor" says more than "geometry".
STAGE_NAMES: dict[str, str] = {
    "load_entry": "loading the entry",
    "load_text": "loading the entry",
    "parse_expression": "parsing a math string",
    "parse_inequality": "parsing the domain",
    "build_spacetime": "building the metric",
    "_metric_from_line_element": "reading the line element",
    "_quadratic_form_hessian": "reading the line element",
    "check_signature": "signature check",
    "compute_geometry": "geometry",
    "compute_geometry_with": "geometry",
    "compute_geometry_and_weyl": "geometry",
    "field_setup": "rational-function field",
    "build_field": "rational-function field",
    "sympy_setup": "geometry",
    "inverse_matrix": "inverse metric",
    "christoffel": "Christoffel symbols",
    "christoffel_symbols": "Christoffel symbols",
    "riemann": "Riemann tensor",
    "riemann_lower": "Riemann tensor",
    "ricci_parts": "Ricci tensor",
    "weyl_lower": "Weyl tensor",
    "pair_operator": "curvature invariants",
    "trace_square": "curvature invariants",
    "to_geometry": "display forms",
    "check_scalar_claims": "scalar claims",
    "classify": "classification",
    "classify_matter": "matter content",
    "check_source": "matter content",
    "petrov": "Petrov type",
    "petrov_type": "Petrov type",
    "hawking_ellis": "Hawking–Ellis type",
    "energy_conditions": "energy conditions",
    "killing": "Killing vectors",
    "check_killing_vectors": "Killing vectors",
    "check_related": "chart maps",
    "pull_back": "chart maps",
    "decide_equal": "equality decision",
    "decide_zero": "equality decision",
    "canonical": "equality decision",
    "sample_points": "sampling points",
    # physical data (generator.physics.physical): its helpers are named here so that a budget
    # hit there is not reported under a word their names happen to share ("killing")
    "physical_data": "physical data",
    "find_horizons": "horizons",
    "horizons_of_factor": "horizons",
    "horizon_factors": "horizons",
    "killing_coordinates": "horizons",
    "extremality": "horizons",
    "real_roots": "horizons",
    "_generator": "horizons",
    "_surface_gravity": "surface gravity",
    "_area_element": "horizon area",
    "horizon_area": "horizon area",
    "numeric_area": "horizon area",
    "classify_kinds": "horizons",
    "photon_sphere_and_isco": "photon sphere and ISCO",
    "orbit_radius": "photon sphere and ISCO",
    "ergosurface": "ergosurface",
    "komar_charges": "Komar charges",
    "observer_kinematics": "observers' kinematics",
    "check_physical_claims": "physical claims",
}

# Fallback for names not listed above: a word inside the function name.
_STAGE_WORDS: tuple[tuple[str, str], ...] = (
    ("petrov", "Petrov type"),
    ("killing", "Killing vectors"),
    ("christoffel", "Christoffel symbols"),
    ("riemann", "Riemann tensor"),
    ("weyl", "Weyl tensor"),
    ("ricci", "Ricci tensor"),
    ("energy_condition", "energy conditions"),
    ("hawking_ellis", "Hawking–Ellis type"),
    ("matter", "matter content"),
    ("related", "chart maps"),
    ("sampl", "sampling points"),
    ("classif", "classification"),
)


def stage_of_name(name: str) -> str | None:
    """The stage a function name belongs to, or None if it is not a pipeline function."""
    if name in STAGE_NAMES:
        return STAGE_NAMES[name]
    lowered = name.lower()
    return next((stage for word, stage in _STAGE_WORDS if word in lowered), None)


def describe_stage(frame: FrameType | None) -> str:
    """Name the stage from the innermost frame of a call stack that belongs to a known stage."""
    while frame is not None:
        stage = stage_of_name(frame.f_code.co_name)
        if stage is not None:
            return stage
        frame = frame.f_back
    return DEFAULT_STAGE


def innermost_frame(tb: TracebackType | None) -> FrameType | None:
    """The frame where an exception was raised (its ``f_back`` chain is the whole stack)."""
    if tb is None:
        return None
    while tb.tb_next is not None:
        tb = tb.tb_next
    return tb.tb_frame


def run_limited(
    fn: Callable[..., T],
    *args: Any,
    seconds: float,
    memory_bytes: int,
    stage_of: Callable[[FrameType | None], str] = describe_stage,
    hard_grace: float = HARD_GRACE_SECONDS,
) -> T:
    """Run ``fn(*args)`` under a wall-clock alarm and an address-space cap.

    ``memory_bytes`` is the room ``fn`` gets on top of what the process already uses (the
    worker's own size depends on the libraries it imported, so an absolute cap would be
    fragile); 0 or less means no memory cap, and ``seconds`` <= 0 means no alarm. Raises
    `BudgetExceeded` with the stage taken from ``stage_of``. If ``fn`` is stuck inside one C
    call, the process is ended by SIGXCPU after ``seconds + hard_grace`` CPU seconds.
    """
    if threading.current_thread() is not threading.main_thread():
        if multiprocessing.current_process().daemon:
            # A daemonic process (a Dask worker) may not start children: Dask's own
            # --memory-limit and the engine's cooperative budget bound the work there.
            return fn(*args)
        return run_limited_in_child(fn, *args, seconds=seconds, memory_bytes=memory_bytes,
                                    stage_of=stage_of, hard_grace=hard_grace)
    backstop = seconds + hard_grace if seconds > 0 else 0.0
    with _Alarm(seconds, stage_of), _AddressSpaceCap(memory_bytes), _CpuBackstop(backstop):
        try:
            return fn(*args)
        except MemoryError as exc:
            stage = stage_of(innermost_frame(exc.__traceback__))
            raise BudgetExceeded(stage, f"memory limit of {_mebibytes(memory_bytes)}") from None
        except RecursionError as exc:
            stage = stage_of(innermost_frame(exc.__traceback__))
            raise BudgetExceeded(stage, "expression nested too deeply") from None


def run_limited_in_child(
    fn: Callable[..., T],
    *args: Any,
    seconds: float,
    memory_bytes: int,
    stage_of: Callable[[FrameType | None], str] = describe_stage,
    hard_grace: float = HARD_GRACE_SECONDS,
) -> T:
    """`run_limited` in a spawned child process, whose main thread sets the limits; its result
    or exception comes back here. For callers outside the main thread, and for work whose
    CPU-time backstop must end a child rather than the calling process (``fn`` and its
    arguments must be picklable)."""
    from concurrent.futures import ProcessPoolExecutor
    from concurrent.futures.process import BrokenProcessPool

    context = multiprocessing.get_context("spawn")
    with ProcessPoolExecutor(max_workers=1, mp_context=context) as pool:
        future = pool.submit(_limited_call, fn, args, seconds, memory_bytes, stage_of,
                             hard_grace)
        try:
            return future.result()
        except BrokenProcessPool:
            raise BudgetExceeded(DEFAULT_STAGE, "the child process was ended (CPU-time "
                                 "backstop or out of memory)") from None


def _limited_call(fn: Callable[..., T], args: tuple[Any, ...], seconds: float,
                  memory_bytes: int, stage_of: Callable[[FrameType | None], str],
                  hard_grace: float) -> T:
    return run_limited(fn, *args, seconds=seconds, memory_bytes=memory_bytes,
                       stage_of=stage_of, hard_grace=hard_grace)


def _mebibytes(count: int) -> str:
    return f"{count / 2**20:g} MiB"


@dataclass
class _Alarm:
    """SIGALRM after ``seconds``, then every REPEAT_SECONDS until disarmed."""

    seconds: float
    stage_of: Callable[[FrameType | None], str]
    armed: bool = False
    stage: str = ""  # where the budget first ran out
    previous_handler: Any = None
    previous_timer: tuple[float, float] = (0.0, 0.0)

    def __enter__(self) -> _Alarm:
        if self.seconds <= 0:
            return self
        self.previous_handler = signal.signal(signal.SIGALRM, self._expired)
        self.armed = True
        self.previous_timer = signal.setitimer(signal.ITIMER_REAL, self.seconds, REPEAT_SECONDS)
        return self

    def _expired(self, signum: int, frame: FrameType | None) -> None:
        """Raise in the running code. A repeat names the stage of the first expiry: if that
        first exception was caught on the way out (a stage that records the failure and moves
        on), the budget is still the one that ran out there, wherever the repeat lands."""
        if self.armed:
            self.stage = self.stage or self.stage_of(frame)
            raise BudgetExceeded(self.stage, f"time limit of {self.seconds:g} s")

    def __exit__(self, *exc: object) -> None:
        if self.seconds <= 0:
            return
        self.armed = False
        signal.setitimer(signal.ITIMER_REAL, 0, 0)
        signal.signal(signal.SIGALRM, self.previous_handler)
        if self.previous_timer[0] > 0:  # an outer alarm was running: give it back
            signal.setitimer(signal.ITIMER_REAL, *self.previous_timer)


def _lower_soft_limit(kind: int, cap: int) -> tuple[int, int] | None:
    """Lower the soft limit ``kind`` to ``cap`` (never above the hard limit, never raising it).

    Returns the limits to restore afterwards, or None when nothing changed: both budget caps
    below go through here so they restore exactly what they found.
    """
    soft, hard = resource.getrlimit(kind)
    if hard != resource.RLIM_INFINITY:
        cap = min(cap, hard)
    if soft == resource.RLIM_INFINITY or cap < soft:
        resource.setrlimit(kind, (cap, hard))
        return soft, hard
    return None


@dataclass
class _SoftLimit:
    """A soft resource limit lowered on entry and restored on exit; subclasses say to what."""

    previous: tuple[int, int] | None = field(default=None, init=False)

    kind = resource.RLIMIT_AS

    def cap(self) -> int | None:
        """The new soft limit, or None for no change."""
        raise NotImplementedError

    def __enter__(self) -> _SoftLimit:
        cap = self.cap()
        if cap is not None:
            self.previous = _lower_soft_limit(self.kind, cap)
        return self

    def __exit__(self, *exc: object) -> None:
        if self.previous is not None:
            resource.setrlimit(self.kind, self.previous)


@dataclass
class _AddressSpaceCap(_SoftLimit):
    """Lower the soft RLIMIT_AS to current size + ``extra`` bytes; restore it afterwards."""

    extra: int = 0

    kind = resource.RLIMIT_AS

    def cap(self) -> int | None:
        return address_space_in_use() + self.extra if self.extra > 0 else None


@dataclass
class _CpuBackstop(_SoftLimit):
    """Soft RLIMIT_CPU at (CPU time used so far + ``seconds``); SIGXCPU ends the process.

    Only the soft limit moves (an unprivileged process can raise it back, not the hard one),
    and SIGXCPU keeps its default action: nothing in Python can run while a C call is stuck.
    """

    seconds: float = 0.0

    kind = resource.RLIMIT_CPU

    def cap(self) -> int | None:
        if self.seconds <= 0:
            return None
        usage = resource.getrusage(resource.RUSAGE_SELF)
        return int(usage.ru_utime + usage.ru_stime + self.seconds) + 1


def address_space_in_use() -> int:
    """Virtual memory size of this process in bytes (Linux /proc; 0 where unavailable)."""
    try:
        pages = int(Path("/proc/self/statm").read_text().split()[0])
    except (OSError, ValueError, IndexError):
        return 0
    return pages * resource.getpagesize()


def budget_failure_report(load: LoadResult, exc: BudgetExceeded) -> EntryReport:
    """The report of an entry stopped by `run_limited`: what loading found, plus the stage.

    The build treats it like any failed entry (and never caches it, by its code), so the rest
    of the catalog is still checked and the failure is listed with the others.
    """
    entry = load.entry
    where = entry.pos("metric") if entry is not None else SourcePos(load.file, 1, 1)
    diagnostic = Diagnostic.at(
        where, "error",
        f"computation ran out of its budget in stage '{exc.stage}' ({exc.limit})",
        BUDGET_CODE,
        "simplify the metric (e.g. fewer nested powers or roots), or raise --seconds",
    )
    return EntryReport(entry, load.file, load.spacetime, None, None, (),
                       (*load.diagnostics, diagnostic))
