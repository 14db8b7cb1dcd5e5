"""Hard per-entry limits (generator/run/limits.py): the alarm, the memory cap and the CPU backstop.

The functions below are named like the pipeline's stages on purpose: `describe_stage` reads
the interrupted call stack, so a busy loop inside a function called ``riemann_lower`` must be
reported as the Riemann-tensor stage. No test asserts how long anything took.
"""

from __future__ import annotations

import contextlib
import operator
import re
import resource
import signal
import subprocess
import sys
import textwrap
import threading
from pathlib import Path

import pytest

from generator.entry.loader import LoadResult
from generator.errors import BudgetExceeded, SourcePos
from generator.run.limits import (
    BUDGET_CODE,
    DEFAULT_STAGE,
    STAGE_NAMES,
    budget_failure_report,
    describe_stage,
    run_limited,
    stage_of_name,
)

MiB = 2**20
ROOTS = Path(__file__).resolve().parent / "roots"


def spin_forever() -> None:
    while True:
        sum(range(1000))


def riemann_lower() -> None:
    spin_forever()


def compute_geometry() -> None:
    riemann_lower()


def decide_equal() -> bytes:
    return bytes(2048 * MiB)


def classify_swallowing_once() -> None:
    """Like a library that catches every exception once, then keeps computing."""
    try:
        spin_forever()
    except Exception:
        swallowed = True
    assert swallowed
    spin_forever()


def petrov_type() -> int:
    return petrov_type()


def record_and_go_on() -> None:
    """Like check_loaded: a stage that runs out is recorded and the check goes on, so the
    repeated alarm lands in code that belongs to no named stage."""
    with contextlib.suppress(BudgetExceeded):
        riemann_forever()
    spin_forever()


def riemann_forever() -> None:
    spin_forever()


# ---------------------------------------------------------------------------- stage names


@pytest.mark.parametrize(("name", "stage"), [
    ("compute_geometry", "geometry"),
    ("christoffel_symbols", "Christoffel symbols"),
    ("christoffel", "Christoffel symbols"),
    ("riemann_lower", "Riemann tensor"),
    ("riemann", "Riemann tensor"),
    ("classify", "classification"),
    ("petrov", "Petrov type"),
    ("decide_equal", "equality decision"),
    ("sample_points", "sampling points"),
    ("weyl_scalars_of_tetrad", "Weyl tensor"),
    ("check_killing_vector_claims", "Killing vectors"),
])
def test_pipeline_function_names_map_to_stage_names(name: str, stage: str) -> None:
    assert stage_of_name(name) == stage


def test_names_outside_the_pipeline_have_no_stage() -> None:
    assert stage_of_name("spin_forever") is None
    assert stage_of_name("<module>") is None


def test_innermost_named_frame_wins() -> None:
    def christoffel_symbols() -> str:
        def helper() -> str:
            return describe_stage(sys._getframe())

        return helper()

    def compute_geometry() -> str:
        return christoffel_symbols()

    assert compute_geometry() == "Christoffel symbols"


def test_stack_without_named_frames_gets_the_default_stage() -> None:
    assert describe_stage(None) == DEFAULT_STAGE


# ---------------------------------------------------------------------------- time limit


def test_time_limit_names_the_interrupted_stage() -> None:
    with pytest.raises(BudgetExceeded) as caught:
        run_limited(compute_geometry, seconds=0.3, memory_bytes=0)
    assert caught.value.stage == "Riemann tensor"
    assert caught.value.limit == "time limit of 0.3 s"


def test_swallowed_alarm_fires_again() -> None:
    with pytest.raises(BudgetExceeded) as caught:
        run_limited(classify_swallowing_once, seconds=0.2, memory_bytes=0)
    assert caught.value.stage == "classification"


def test_a_repeat_alarm_names_the_stage_where_the_budget_first_ran_out() -> None:
    with pytest.raises(BudgetExceeded) as caught:
        run_limited(record_and_go_on, seconds=0.2, memory_bytes=0)
    assert caught.value.stage == "Riemann tensor"


def test_custom_stage_reader_is_used() -> None:
    with pytest.raises(BudgetExceeded) as caught:
        run_limited(spin_forever, seconds=0.2, memory_bytes=0, stage_of=lambda frame: "mine")
    assert caught.value.stage == "mine"


@pytest.mark.timeout(0)  # no outer alarm from pytest-timeout: the timer must end at zero
def test_result_is_returned_and_the_alarm_is_put_back() -> None:
    before_handler = signal.getsignal(signal.SIGALRM)
    assert run_limited(lambda a, b: a + b, 2, 3, seconds=5, memory_bytes=64 * MiB) == 5
    assert signal.getsignal(signal.SIGALRM) is before_handler
    assert signal.getitimer(signal.ITIMER_REAL) == (0.0, 0.0)


def test_an_outer_alarm_survives_an_inner_limit() -> None:
    fired: list[int] = []
    previous = signal.signal(signal.SIGALRM, lambda signum, frame: fired.append(signum))
    try:
        signal.setitimer(signal.ITIMER_REAL, 50.0)
        run_limited(lambda: None, seconds=1, memory_bytes=0)
        remaining, _ = signal.getitimer(signal.ITIMER_REAL)
        assert remaining > 0
        assert signal.getsignal(signal.SIGALRM) is not None
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0)
        signal.signal(signal.SIGALRM, previous)


# ---------------------------------------------------------------------------- memory and depth


def test_memory_limit_names_the_stage_and_restores_the_cap() -> None:
    before = resource.getrlimit(resource.RLIMIT_AS)
    with pytest.raises(BudgetExceeded) as caught:
        run_limited(decide_equal, seconds=0, memory_bytes=256 * MiB)
    assert caught.value.stage == "equality decision"
    assert caught.value.limit == "memory limit of 256 MiB"
    assert resource.getrlimit(resource.RLIMIT_AS) == before
    assert len(bytes(300 * MiB)) == 300 * MiB  # the cap is really gone again


def test_runaway_recursion_becomes_a_budget_failure() -> None:
    with pytest.raises(BudgetExceeded) as caught:
        run_limited(petrov_type, seconds=5, memory_bytes=0)
    assert caught.value.stage == "Petrov type"
    assert "nested too deeply" in caught.value.limit


def test_cpu_backstop_is_removed_afterwards() -> None:
    before = resource.getrlimit(resource.RLIMIT_CPU)
    run_limited(lambda: None, seconds=1, memory_bytes=0, hard_grace=1)
    assert resource.getrlimit(resource.RLIMIT_CPU) == before


def _in_a_thread(fn, *args, **limits) -> list[object]:
    """Call ``run_limited(fn, *args, **limits)`` from a thread that is not the main one (as a
    preview server's rebuild once did); returns [result] or [the exception]."""
    outcome: list[object] = []

    def call() -> None:
        try:
            outcome.append(run_limited(fn, *args, **limits))
        except BaseException as exc:
            outcome.append(exc)

    worker = threading.Thread(target=call)
    worker.start()
    worker.join()
    return outcome


def test_outside_the_main_thread_fn_still_runs() -> None:
    assert _in_a_thread(operator.mul, 6, 7, seconds=5, memory_bytes=64 * MiB) == [42]


def test_outside_the_main_thread_the_limits_still_apply() -> None:
    """A thread cannot take signals; the call goes to a child process whose main thread sets
    the alarm, so an endless loop still ends with the stage named (it used to run unbounded)."""
    [outcome] = _in_a_thread(spin_forever, seconds=0.2, memory_bytes=0, hard_grace=5)
    assert isinstance(outcome, BudgetExceeded)
    assert "time limit" in outcome.limit


# ---------------------------------------------------------------------------- worker processes


def _run_python(code: str) -> subprocess.CompletedProcess[str]:
    root = Path(__file__).resolve().parents[1]
    return subprocess.run([sys.executable, "-c", textwrap.dedent(code)], cwd=root,
                          capture_output=True, text=True, timeout=600)


def test_limits_hold_in_a_worker_process() -> None:
    """The way the pipeline uses it: inside a ProcessPoolExecutor worker."""
    done = _run_python("""
        from concurrent.futures import ProcessPoolExecutor
        from generator.errors import BudgetExceeded
        from generator.run.limits import run_limited

        def riemann_lower():
            while True:
                pass

        def christoffel_symbols():
            return [0] * (512 * 2**20)

        def task(fn):
            try:
                run_limited(fn, seconds=0.5, memory_bytes=128 * 2**20)
            except BudgetExceeded as exc:
                return f"{exc.stage}|{exc.limit}"
            return "finished"

        if __name__ == "__main__":
            with ProcessPoolExecutor(1) as pool:
                print(pool.submit(task, riemann_lower).result())
                print(pool.submit(task, christoffel_symbols).result())
    """)
    assert done.returncode == 0, done.stderr
    assert done.stdout.splitlines() == [
        "Riemann tensor|time limit of 0.5 s",
        "Christoffel symbols|memory limit of 128 MiB",
    ]


def test_a_call_stuck_in_c_code_ends_the_worker_instead_of_hanging() -> None:
    """A huge FLINT power never returns to Python (like a FLINT gcd of two enormous
    polynomials in the engine), so the alarm cannot interrupt it; the CPU backstop ends the
    process (SIGXCPU) rather than letting the build hang."""
    done = _run_python("""
        import flint
        from generator.run.limits import run_limited

        def riemann_lower():
            return flint.fmpz(3) ** (10**9)

        run_limited(riemann_lower, seconds=0.2, memory_bytes=0, hard_grace=1)
        print("returned")
    """)
    assert done.returncode == -signal.SIGXCPU
    assert "returned" not in done.stdout


# ---------------------------------------------------------------------------- reports


def test_budget_failure_report_is_a_positioned_uncached_failure() -> None:
    load = LoadResult("catalog/isolated-objects/x.yaml", None, None, ())
    report = budget_failure_report(load, BudgetExceeded("Riemann tensor", "time limit of 3 s"))
    assert not report.ok
    (diagnostic,) = report.diagnostics
    assert diagnostic.format_text().splitlines()[0] == (
        "catalog/isolated-objects/x.yaml:1:1: error: computation ran out of its budget in stage "
        "'Riemann tensor' (time limit of 3 s) [budget.exceeded]")
    assert diagnostic.code == BUDGET_CODE == "budget.exceeded"  # pipeline never caches these


def test_budget_failure_keeps_the_loaded_entry_and_points_at_its_metric() -> None:
    from tests._entry_builders import schwarzschild

    entry = schwarzschild(positions={"metric": SourcePos("f.yaml", 21, 1)})
    load = LoadResult("f.yaml", entry, None, ())
    report = budget_failure_report(load, BudgetExceeded("geometry", "memory limit of 1 MiB"))
    assert report.entry is entry
    assert (report.diagnostics[0].line, report.diagnostics[0].column) == (21, 1)


# ---------------------------------------------------------------------------- whole pipeline


@pytest.mark.slow
def test_a_pathological_entry_fails_alone_naming_its_stage(tmp_path: Path) -> None:
    """Two entries: valid Schwarzschild and a valid metric whose curvature explodes. With a
    3-second budget the second fails with a budget diagnostic naming a stage; the first still
    verifies and the exit status reports the failure."""
    import json

    from tests._hostile import almanac, make_catalog

    make_catalog(tmp_path, "hostile-valid", "hostile-pathological")
    done = almanac(tmp_path, "check", "catalog", "--seconds", "3", "--json", "--no-cache",
                   "--jobs", "2")
    assert done.returncode == 1, done.stderr
    entries = {e["id"]: e for e in json.loads(done.stdout)["entries"]}
    assert entries["schwarzschild"]["ok"]
    bad = entries["pathological-expansion"]
    assert not bad["ok"]
    (budget,) = [d for d in bad["diagnostics"] if d["code"] == "budget.exceeded"]
    stage = budget["message"].split("'")[1]
    # Either the engine's own 3 s budget, which always names the stage it stopped in, or the
    # hard alarm behind it (3 s * 1.25 + 5 s) when the engine is inside a library call only
    # the alarm can interrupt. The alarm names the innermost named stage of the stack; on a
    # loaded machine it can land between stages (freeing the exploded intermediates after the
    # engine's own stop), where the honest name is the whole entry's check.
    limit = re.search(r"time limit of (3 s exceeded|8\.75 s)", budget["message"])
    assert limit, budget["message"]
    named = KNOWN_STAGES if limit.group(1).startswith("3") else KNOWN_STAGES | {DEFAULT_STAGE}
    assert stage in named, budget["message"]
    assert (budget["file"], budget["line"]) == (
        "catalog/isolated-objects/pathological-expansion.yaml", 15)


# Stage names of the engine's own cooperative budget (generator/geometry/curvature.py) and of
# limits.py.
KNOWN_STAGES = frozenset({"inverse metric", "Christoffel symbols", "Riemann tensor",
                          "Ricci tensor", "invariants", "Weyl tensor", "display forms"}) | \
    frozenset(STAGE_NAMES.values())


@pytest.mark.slow
def test_the_build_reports_the_pathological_entry_and_keeps_the_old_site(tmp_path: Path) -> None:
    from generator.run.build import SITE_MARKER
    from tests._hostile import almanac, make_catalog

    make_catalog(tmp_path, "hostile-valid", "hostile-pathological")
    (tmp_path / "site").mkdir()
    (tmp_path / "site" / "index.html").write_text("previous site")
    (tmp_path / "site" / SITE_MARKER).write_text("")  # a site this tool wrote
    done = almanac(tmp_path, "build", "--seconds", "3", "--no-cache", "--jobs", "2")
    assert done.returncode == 1
    assert "pathological-expansion.yaml:15:3: error: computation ran out of its budget" in \
        done.stderr
    assert "2 entries checked: 1 verified, 1 failed" in done.stderr
    assert (tmp_path / "site" / "index.html").read_text() == "previous site"


def _proposed_run_task_body(load: LoadResult, related: dict, seconds: float,
                            memory_bytes: int):
    """The body proposed for generator.run.pipeline.run_task (kept identical to the report)."""
    from generator.geometry.curvature import Limits
    from generator.physics.verify import check_loaded

    try:
        return run_limited(check_loaded, load, related, Limits(seconds=seconds),
                           seconds=seconds, memory_bytes=memory_bytes,
                           stage_of=describe_stage)
    except BudgetExceeded as exc:
        return budget_failure_report(load, exc)


@pytest.mark.slow
def test_the_proposed_wiring_turns_a_pathological_entry_into_a_report() -> None:
    from generator.entry.catalog import vocabulary
    from generator.entry.loader import load_entry

    root = Path(__file__).resolve().parent / "roots"
    path = root / "hostile-pathological/isolated-objects/pathological-expansion.yaml"
    project = Path(__file__).resolve().parents[1]
    load = load_entry(path, "catalog/isolated-objects/pathological-expansion.yaml",
                      vocabulary(project / "catalog"))
    assert load.ok
    report = _proposed_run_task_body(load, {}, 3.0, 2 << 30)
    assert not report.ok
    (budget,) = [d for d in report.diagnostics if d.code == BUDGET_CODE]
    assert (budget.line, budget.column) == (15, 3)
    assert "time limit of 3 s" in budget.message


# ---------------------------------------------------------------------------- backstop reports
# A red-team pass found a one-entry check ended silently by the CPU-time backstop (SIGXCPU in
# the main process), and a build that re-ran the entry that had killed its worker. The worker
# below ends its own process with SIGXCPU (tests/_backstop_worker.py), so these tests depend
# on state (which entry, what the recorded stack says), never on how long anything takes.


def _backstop_tasks(tmp_path: Path, names: list[str]) -> list:
    from dataclasses import replace

    from generator.run.tasks import Task

    source = (ROOTS / "hostile-valid/isolated-objects/schwarzschild.yaml").read_text()
    stacks = tmp_path / "stacks"
    stacks.mkdir()
    tasks = []
    for i, name in enumerate(names):
        path = tmp_path / "catalog" / "isolated-objects" / f"{name}.yaml"
        path.parent.mkdir(parents=True, exist_ok=True)
        path.write_text(source)
        task = Task(path, f"catalog/isolated-objects/{name}.yaml", None, tmp_path, (), 5.0)
        tasks.append(replace(task, backstop_file=stacks / f"{i}.stack"))
    return tasks


@pytest.mark.parametrize("jobs, names", [
    (1, ["heavy"]),  # a one-entry check: the case that used to end with nothing printed
    (1, ["light-a", "heavy", "light-b"]),
    (2, ["heavy", "light-a", "light-b", "light-c"]),
])
def test_a_backstop_stop_is_reported_with_its_stage_and_not_run_again(
        tmp_path: Path, jobs: int, names: list[str]) -> None:
    from _backstop_worker import calls, logged_worker

    from generator.run.pipeline import Progress, _compute_in_processes

    tasks = _backstop_tasks(tmp_path, names)
    done = dict(_compute_in_processes(tasks, list(range(len(tasks))), jobs, Progress(),
                                      logged_worker))
    assert sorted(done) == list(range(len(tasks)))
    heavy = names.index("heavy")
    [diagnostic] = [d for d in done[heavy].diagnostics if d.code == "budget.exceeded"]
    # at the metric of the entry (its value starts on line 17), naming the stage it was in
    assert (diagnostic.file, diagnostic.line) == (tasks[heavy].display, 17)
    assert "stage 'Riemann tensor'" in diagnostic.message
    assert "worker process was ended" in diagnostic.message
    log = calls(tmp_path / "stacks")
    assert log.count(tasks[heavy].display) == 1, "the entry that hit its budget ran again"
    for i in range(len(names)):
        if i != heavy:
            assert done[i].diagnostics == () and tasks[i].display in log


def test_backstop_stage_reads_the_innermost_named_function(tmp_path: Path) -> None:
    from generator.run.tasks import backstop_stage

    stack = tmp_path / "stack"
    assert backstop_stage(None) is None
    assert backstop_stage(tmp_path / "missing") is None
    stack.write_text("")
    assert backstop_stage(stack) is None  # the backstop never fired
    stack.write_text('Current thread 0x1 (most recent call first):\n'
                     '  File "/x/flint.py", line 3 in gcd\n'
                     '  File "/x/curvature.py", line 9 in christoffel_symbols\n'
                     '  File "/x/loader.py", line 5 in load_entry\n')
    assert backstop_stage(stack) == "Christoffel symbols"
    stack.write_text('  File "/x/a.py", line 1 in helper\n')
    assert backstop_stage(stack) == "checking the entry"


def test_loading_runs_inside_the_entry_budget(tmp_path: Path,
                                              monkeypatch: pytest.MonkeyPatch) -> None:
    """Loading used to run before the limits were set: a line element built to blow up its
    expansion ran for minutes. Here the metric builder never returns; only the alarm set
    around loading can end it, and the report names the loading stage at the metric."""
    from generator.entry import loader
    from generator.run import tasks

    def build_spacetime(entry):  # named like the loader's step, so the stage is named
        spin_forever()

    monkeypatch.setattr(loader, "build_spacetime", build_spacetime)
    monkeypatch.setattr(tasks, "alarm_seconds", lambda seconds: 0.3)
    [task] = _backstop_tasks(tmp_path, ["schwarzschild"])
    report = tasks.load_and_check_within_limits(task)
    [diagnostic] = [d for d in report.diagnostics if d.code == "budget.exceeded"]
    assert "stage 'building the metric'" in diagnostic.message
    assert diagnostic.line == 17
