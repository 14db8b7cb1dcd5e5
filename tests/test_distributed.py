"""Checking on a Dask cluster gives what local processes give, and a worker failure stays local.

The cluster is a real ``distributed.LocalCluster`` (two worker processes, one thread each, on
127.0.0.1); the catalog is ``tests/roots/scale-small``. Making a worker fail needs the function
the workers run to fail: the tests replace ``generator.run.distributed.check_shipped`` with a
closure, which Dask pickles by value and runs on the worker.
"""

from __future__ import annotations

import os
import re
import sys
from dataclasses import replace
from pathlib import Path

import pytest
from _scale_helpers import ENTRY_COUNT, FAILING, catalog_files, comparable, copy_catalog

from generator.errors import UsageError
from generator.run import distributed as on_cluster
from generator.run.cache import SECRET_ENV
from generator.run.pipeline import RunOptions, check_files
from generator.run.tasks import Task, run_task

dask = pytest.importorskip("dask")
dask_distributed = pytest.importorskip("distributed")


@pytest.fixture(scope="module")
def cluster():
    # No retries: a task whose worker dies fails at once (the crash test needs only one death).
    with dask.config.set({"distributed.scheduler.allowed-failures": 0}), \
            dask_distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                          host="127.0.0.1", dashboard_address=None) as local:
        yield local


@pytest.fixture(scope="module")
def root(tmp_path_factory: pytest.TempPathFactory) -> Path:
    return copy_catalog(tmp_path_factory.mktemp("cluster"))


@pytest.fixture(scope="module")
def local_reports(root: Path):
    return check_files(catalog_files(root), root, root.parent, RunOptions(jobs=2))


def on_the_cluster(root: Path, cluster, seen: list[str] | None = None, cache: Path | None = None):
    options = RunOptions(scheduler=cluster.scheduler_address, cache_dir=cache)

    def progress(report) -> None:
        if seen is not None:
            seen.append(report.file)

    return check_files(catalog_files(root), root, root.parent, options, progress)


def failing_for(stem: str, how: str):
    """A replacement worker function that fails for one entry and checks the others normally."""

    def check(shipped):
        if Path(shipped.entry.name).stem == stem:
            if how == "die":
                os._exit(3)
            raise RuntimeError(f"simulated failure on {stem}")
        from generator.run.distributed import check_shipped

        return check_shipped(shipped)

    return check


def without_cluster_failures(report):
    kept = tuple(d for d in report.diagnostics if d.code != on_cluster.FAILURE_CODE)
    return replace(report, diagnostics=kept)


# ---------------------------------------------------------------------------- same results


@pytest.mark.slow
def test_the_cluster_gives_the_same_reports_as_local_processes(root, cluster, local_reports):
    seen: list[str] = []
    remote = on_the_cluster(root, cluster, seen)
    assert [comparable(r) for r in remote] == [comparable(r) for r in local_reports]
    assert {r.file for r in remote if not r.ok} == FAILING
    assert sorted(seen) == sorted(r.file for r in remote) and len(seen) == ENTRY_COUNT


# ---------------------------------------------------------------------------- failures


@pytest.mark.slow
def test_an_error_on_a_worker_fails_that_entry_only(root, cluster, local_reports, monkeypatch):
    monkeypatch.setattr(on_cluster, "check_shipped", failing_for("point-mass", "raise"))
    remote = {r.file: r for r in on_the_cluster(root, cluster)}
    failed = remote.pop("catalog/black-holes/point-mass.yaml")
    (problem,) = [d for d in failed.diagnostics if d.severity == "error"]
    assert (problem.file, problem.line, problem.column, problem.code) == (
        "catalog/black-holes/point-mass.yaml", 1, 1, "distributed.worker")
    assert problem.message == ("checking on the cluster failed: RuntimeError: simulated "
                               "failure on point-mass")
    assert failed.entry is not None and failed.entry.id == "point-mass"
    others = [r for r in local_reports if r.file in remote]
    assert [comparable(remote[r.file]) for r in others] == [comparable(r) for r in others]


@pytest.mark.slow
def test_a_worker_process_that_dies_fails_that_entry_only(root, cluster, monkeypatch):
    files = catalog_files(root)
    tasks = [Task(f, f"catalog/{f.relative_to(root).as_posix()}", root, root.parent, (), 60.0)
             for f in files]
    dying = next(i for i, t in enumerate(tasks) if t.file.stem == "flat-spherical")
    monkeypatch.setattr(on_cluster, "check_shipped", failing_for("flat-spherical", "die"))
    results = dict(on_cluster.run_on_scheduler(cluster.scheduler_address, tasks, [dying], None))
    (problem,) = [d for d in results[dying].diagnostics if d.severity == "error"]
    assert problem.code == "distributed.worker"
    assert "worker process died" in problem.message
    monkeypatch.undo()
    with dask_distributed.Client(cluster.scheduler_address) as client:
        client.wait_for_workers(2, timeout=120)
    again = dict(on_cluster.run_on_scheduler(cluster.scheduler_address, tasks, [dying], None))
    assert again[dying].ok, "the cluster did not recover from the lost worker"


@pytest.mark.slow
def test_failures_on_the_cluster_are_not_cached(root, cluster, monkeypatch, tmp_path):
    monkeypatch.setenv(SECRET_ENV, "cluster-test-secret-of-at-least-32-characters")
    monkeypatch.setattr(on_cluster, "check_shipped", failing_for("flat-spherical", "raise"))
    on_the_cluster(root, cluster, cache=tmp_path / "cache")
    monkeypatch.setattr(on_cluster, "check_shipped", failing_for("no-such-entry", "raise"))
    reports = on_the_cluster(root, cluster, cache=tmp_path / "cache")
    flat = next(r for r in reports if r.file.endswith("flat-spherical.yaml"))
    assert flat.ok


# ---------------------------------------------------------------------------- without a cluster


def test_a_worker_with_other_versions_refuses_to_check(root):
    task = Task(root / "maximally-symmetric" / "flat-spherical.yaml",
                "catalog/maximally-symmetric/flat-spherical.yaml", root, root.parent, (), 60.0)
    shipped = on_cluster.ship_task(task, on_cluster.vocabulary(root))
    elsewhere = replace(shipped, versions="metric-almanac=0.0.1;sympy=1.0")
    with pytest.raises(on_cluster.VersionMismatch, match="install the same versions"):
        on_cluster.check_shipped(elsewhere)


def test_shipped_contents_are_checked_exactly_like_the_files(root):
    """The worker sees bytes in a scratch folder; names and diagnostics must not change."""
    for name in ("point-mass-unparsable", "point-mass-misclaimed"):
        path = root / "black-holes" / f"{name}.yaml"
        task = Task(path, f"catalog/black-holes/{name}.yaml", root, root.parent, (), 60.0)
        shipped = on_cluster.ship_task(task, on_cluster.vocabulary(root))
        assert comparable(on_cluster.check_shipped(shipped)) == comparable(run_task(task))


def test_an_unreadable_entry_is_checked_on_the_client(tmp_path):
    missing = tmp_path / "catalog" / "black-holes" / "gone.yaml"
    task = Task(missing, "catalog/black-holes/gone.yaml", None, tmp_path, (), 60.0)
    assert on_cluster.ship_task(task, on_cluster.vocabulary(None)) is None


def test_an_unreachable_scheduler_is_a_usage_error(monkeypatch):
    monkeypatch.setattr(on_cluster, "CONNECT_TIMEOUT", "1s")
    with pytest.raises(UsageError, match=re.escape("cannot reach the Dask scheduler at tcp://127.0.0.1:9")):
        list(on_cluster.run_on_scheduler("tcp://127.0.0.1:9", [], [], None))


def test_a_missing_extra_is_explained(monkeypatch):
    monkeypatch.setitem(sys.modules, "distributed", None)
    with pytest.raises(UsageError, match=r"pip install 'metric-almanac\[distributed\]'"):
        list(on_cluster.run_on_scheduler("tcp://127.0.0.1:8786", [], [], None))
