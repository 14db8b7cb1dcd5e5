"""Running many entries: parallel equals serial, progress sees everything, failures stay local.

The slow tests run the real engine over the fixture catalog ``tests/roots/scale-small`` (see
its README: two of its six entries fail on purpose); the quick ones use a fake check stage.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import pytest
from _scale_helpers import (
    ENTRY_COUNT,
    FAILING,
    catalog_files,
    comparable,
    copy_catalog,
    install_counting_engine,
)

from generator.model import EntryReport
from generator.run import pipeline, tasks
from generator.run.cache import SECRET_ENV
from generator.run.pipeline import RunOptions, check_files


@dataclass(frozen=True)
class Run:
    reports: list[EntryReport]
    progress: list[str]  # files in the order the progress callback saw them
    running: list[list[str]]  # what the run said it was checking, each time that changed


def checked(root: Path, options: RunOptions) -> Run:
    seen: list[str] = []
    running: list[list[str]] = []
    reports = check_files(catalog_files(root), root, root.parent, options,
                          lambda report: seen.append(report.file), running.append)
    return Run(reports, seen, running)


@pytest.fixture(scope="module")
def serial_and_parallel(tmp_path_factory: pytest.TempPathFactory) -> tuple[Run, Run]:
    root = copy_catalog(tmp_path_factory.mktemp("pipeline"))
    return (checked(root, RunOptions(jobs=1, cache_dir=None)),
            checked(root, RunOptions(jobs=2, cache_dir=None)))


@pytest.mark.slow
def test_parallel_and_serial_runs_give_identical_reports(serial_and_parallel):
    serial, parallel = serial_and_parallel
    assert [comparable(r) for r in parallel.reports] == [comparable(r) for r in serial.reports]


@pytest.mark.slow
def test_reports_come_back_in_catalog_order_whatever_finishes_first(serial_and_parallel):
    for run in serial_and_parallel:
        files = [r.file for r in run.reports]
        assert files == sorted(files) and len(files) == ENTRY_COUNT


@pytest.mark.slow
def test_the_progress_callback_sees_every_entry_once(serial_and_parallel):
    for run in serial_and_parallel:
        assert sorted(run.progress) == sorted(r.file for r in run.reports)


@pytest.mark.slow
def test_the_running_entries_are_named_while_they_run(serial_and_parallel):
    serial, parallel = serial_and_parallel
    ids = {Path(r.file).stem for r in serial.reports}
    # One worker: one name at a time, in catalog order, starting with the first entry. A
    # quick entry can start and finish between two looks, so a name may be skipped.
    order = [Path(r.file).stem for r in serial.reports]
    assert all(len(names) == 1 for names in serial.running)
    positions = [order.index(names[0]) for names in serial.running]
    assert positions[0] == 0 and positions == sorted(set(positions))
    assert all(1 <= len(names) <= 2 for names in parallel.running)  # two worker processes
    # The pool starts tasks in order: the first two are named first. A quick entry can start
    # and finish between two looks, so later names are a subset of the entries, not all.
    assert parallel.running[0] == [Path(r.file).stem for r in parallel.reports[:2]]
    assert set().union(*parallel.running) <= ids


def test_failing_entries_do_not_stop_the_others(serial_and_parallel):
    for run in serial_and_parallel:
        failed = {r.file for r in run.reports if not r.ok}
        assert failed == FAILING
        by_file = {r.file: r for r in run.reports}
        for report in run.reports:
            if report.file not in FAILING:
                assert report.geometry is not None, f"{report.file} was not computed"
        codes = {(d.line, d.column, d.code) for d in
                 by_file["catalog/black-holes/point-mass-unparsable.yaml"].diagnostics}
        assert (14, 29, "math.syntax") in codes
        misclaimed = by_file["catalog/black-holes/point-mass-misclaimed.yaml"]
        assert [d.code for d in misclaimed.diagnostics if d.severity == "error"] == [
            "claim.kretschmann"]


@pytest.mark.slow
def test_the_linked_entry_is_checked_against_the_entry_it_links_to(serial_and_parallel):
    """The related-chart check needs a second file; in worker processes too."""
    for run in serial_and_parallel:
        rain = next(r for r in run.reports if r.entry and r.entry.id == "point-mass-rain")
        related = rain.classification.related_checked
        assert [v.ok for v in related] == [True], related


# ---------------------------------------------------------------------------- quick, fake engine


def test_progress_also_reports_entries_taken_from_the_cache(tmp_path, monkeypatch):
    monkeypatch.setenv(SECRET_ENV, "pipeline-test-secret-of-32-characters")
    root = copy_catalog(tmp_path)
    calls = install_counting_engine(monkeypatch)
    options = RunOptions(jobs=1, cache_dir=tmp_path / "cache")
    checked(root, options)
    again = checked(root, options)
    assert len(calls) == ENTRY_COUNT
    assert sorted(again.progress) == sorted(r.file for r in again.reports)
    assert len(again.progress) == ENTRY_COUNT


def test_an_entry_that_fails_to_load_still_gets_its_report(tmp_path, monkeypatch):
    root = copy_catalog(tmp_path)
    install_counting_engine(monkeypatch)
    run = checked(root, RunOptions(jobs=1))
    unparsable = next(r for r in run.reports if r.file.endswith("point-mass-unparsable.yaml"))
    assert not unparsable.ok
    assert sum(r.ok for r in run.reports) == ENTRY_COUNT - 1


def test_an_unexpected_error_in_one_entry_does_not_end_the_run(tmp_path, monkeypatch):
    root = copy_catalog(tmp_path)
    real = install_counting_engine(monkeypatch)
    fake = tasks.check_loaded

    def crashes_on_one(load, related, limits=None):
        if load.file.endswith("point-mass.yaml"):
            raise ZeroDivisionError("engine bug")
        return fake(load, related, limits)

    monkeypatch.setattr(tasks, "check_loaded", crashes_on_one)
    run = checked(root, RunOptions(jobs=1))
    assert len(run.reports) == ENTRY_COUNT
    assert len(real) == ENTRY_COUNT - 1
    crashed = next(r for r in run.reports if r.file.endswith("/point-mass.yaml"))
    assert not crashed.ok


@pytest.mark.slow
def test_a_pull_request_check_loads_only_possible_twins_and_reuses_their_ranks(tmp_path,
                                                                               monkeypatch):
    """The duplicate search of a one-entry check reads small cards for the whole catalog and
    whole reports only of entries whose card matches; the functional ranks it computes are
    kept on the cards, so the next check computes only the new entry's own."""
    from generator.physics import twins
    from generator.run.cache import ResultCache

    monkeypatch.setenv(SECRET_ENV, "pipeline-test-secret-of-32-characters")
    root = copy_catalog(tmp_path)
    options = RunOptions(jobs=1, cache_dir=tmp_path / "cache")
    checked(root, options)  # the last full build, as CI keeps it
    copy = root / "black-holes" / "point-mass-copy.yaml"
    source = (root / "black-holes" / "point-mass.yaml").read_text()
    copy.write_text(source.replace("id: point-mass\n", "id: point-mass-copy\n"))

    loaded: list[str] = []
    original_get = ResultCache.get

    def recording_get(self, key, kind=EntryReport):
        found = original_get(self, key, kind)
        if kind is EntryReport and found is not None and found.entry is not None:
            loaded.append(found.entry.id)
        return found

    ranks: list[str] = []
    original_rank = twins.functional_rank

    def counting_rank(inv, spacetime):
        ranks.append(str(spacetime.metric[0, 0]))
        return original_rank(inv, spacetime)

    monkeypatch.setattr(ResultCache, "get", recording_get)
    monkeypatch.setattr(twins, "functional_rank", counting_rank)
    # A real run searches in a child process (its backstop must not end `check`); kept in
    # this process here so that the counting spy sees the ranks computed.
    monkeypatch.setattr(pipeline, "run_limited_in_child", pipeline.run_limited)
    (first,) = check_files([copy], root, root.parent, options)
    warnings = [d.message for d in first.diagnostics if d.code == "entry.duplicate"]
    assert any("same spacetime as entry 'point-mass'" in w for w in warnings), warnings
    assert "flat-spherical" not in loaded and "dust-universe" not in loaded
    assert "point-mass" in loaded
    first_ranks = len(ranks)
    assert first_ranks >= 2  # the copy and at least its twin

    copy.write_text(copy.read_text() + "\n")  # edited again: recomputed, twins searched again
    ranks.clear()
    (again,) = check_files([copy], root, root.parent, options)
    assert [d.message for d in again.diagnostics if d.code == "entry.duplicate"] == warnings
    assert len(ranks) == 1  # only the edited entry's own rank


def test_a_one_entry_check_of_a_newcomer_hears_that_its_id_is_taken(tmp_path, monkeypatch):
    """The newcomer sorts before the entry whose id it reuses; it must still be told."""
    root = copy_catalog(tmp_path)
    install_counting_engine(monkeypatch)
    newcomer = root / "aaa" / "point-mass.yaml"
    newcomer.parent.mkdir()
    newcomer.write_text((root / "black-holes" / "point-mass.yaml").read_text())
    [report] = check_files([newcomer], root, root.parent, RunOptions(jobs=1))
    taken = [d for d in report.diagnostics if d.code == "catalog.duplicate-id"]
    assert len(taken) == 1 and "catalog/black-holes/point-mass.yaml" in taken[0].message
    assert not report.ok


def test_a_one_entry_check_reports_a_link_to_a_missing_entry(tmp_path, monkeypatch):
    root = copy_catalog(tmp_path)
    install_counting_engine(monkeypatch)
    linking = next(p for p in catalog_files(root) if "related:" in p.read_text())
    target = linking.read_text().split("related:")[1].split("entry:")[1].split()[0]
    linking.write_text(linking.read_text().replace(f"entry: {target}", "entry: nowhere-else"))
    [report] = check_files([linking], root, root.parent, RunOptions(jobs=1))
    assert [d.message for d in report.diagnostics if d.code == "catalog.related"] == [
        "related entry 'nowhere-else' does not exist"]


@pytest.mark.parametrize("candidates, isolated", [(1, True), (0, False)])
def test_the_duplicate_search_runs_in_a_child_when_it_has_work(monkeypatch, candidates,
                                                               isolated):
    """The search runs in the calling process's main thread; stuck in one C call, its CPU-time
    backstop would end `check` itself with nothing printed. With candidates to compare it runs
    in a child process instead; with none, nothing is spawned."""
    from types import SimpleNamespace

    calls: list[str] = []

    def spy(name):
        def limited(fn, *args, **limits):
            calls.append(name)
            return SimpleNamespace(ranks={}, found={})
        return limited

    monkeypatch.setattr(pipeline, "run_limited_in_child", spy("child"))
    monkeypatch.setattr(pipeline, "run_limited", spy("here"))
    new = EntryReport(None, "catalog/a/new.yaml", None, None, None, (), ())
    others = [EntryReport(None, f"catalog/a/{i}.yaml", None, None, None, (), ())
              for i in range(candidates)]
    assert pipeline.twin_warnings([new], [new, *others]) == {}
    assert calls == (["child"] if isolated else ["here"])
