"""Reading the cache while the workers compute gives the same run as reading it first.

With workers (a local pool or a cluster), the entries that have no cache file are computed
in a helper thread while the cached reports are read (`pipeline._read_while`); a file that
does not verify is computed in a second round. These tests run that path with the fake
engine of `_scale_helpers` (switched on with ``_overlaps_reading``) and ask what the ordinary
path promises: unchanged entries are never recomputed, a changed entry (and only it) is, a
damaged file is recomputed and replaced, and the reports come back in the entries' order
equal to those of the sequential path. No timing is measured or asserted.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from _scale_helpers import (
    ENTRY_COUNT,
    catalog_files,
    comparable,
    copy_catalog,
    install_counting_engine,
)

from generator.run import pipeline
from generator.run.cache import SECRET_ENV, ResultCache
from generator.run.pipeline import RunOptions, check_files


@pytest.fixture(autouse=True)
def cache_secret(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setenv(SECRET_ENV, "secret-of-this-machine-32-characters-long")


def run(root: Path, cache: Path, overlap: bool, monkeypatch: pytest.MonkeyPatch):
    monkeypatch.setattr(pipeline, "_overlaps_reading", lambda options: overlap)
    options = RunOptions(jobs=1, cache_dir=cache)
    return check_files(catalog_files(root), root, root.parent, options)


def test_a_warm_run_reads_everything_and_computes_nothing(tmp_path, monkeypatch) -> None:
    root, cache = copy_catalog(tmp_path), tmp_path / "cache"
    calls = install_counting_engine(monkeypatch)
    first = run(root, cache, True, monkeypatch)
    assert len(calls) == ENTRY_COUNT
    second = run(root, cache, True, monkeypatch)
    assert len(calls) == ENTRY_COUNT, "a second run over unchanged files computed again"
    assert [comparable(r) for r in second] == [comparable(r) for r in first]


def test_one_changed_entry_is_computed_beside_the_reading(tmp_path, monkeypatch) -> None:
    root, cache = copy_catalog(tmp_path), tmp_path / "cache"
    calls = install_counting_engine(monkeypatch)
    run(root, cache, False, monkeypatch)
    flat = root / "maximally-symmetric" / "flat-spherical.yaml"
    flat.write_text(flat.read_text().replace("Flat spacetime", "Empty flat spacetime"))
    calls.clear()
    overlapped = run(root, cache, True, monkeypatch)
    assert calls == ["catalog/maximally-symmetric/flat-spherical.yaml"]
    sequential = run(root, cache, False, monkeypatch)
    assert calls == ["catalog/maximally-symmetric/flat-spherical.yaml"]  # now cached
    assert [comparable(r) for r in overlapped] == [comparable(r) for r in sequential]
    assert [r.file for r in overlapped] == [r.file for r in sequential]


def test_a_damaged_file_is_computed_in_the_second_round(tmp_path, monkeypatch) -> None:
    root, cache = copy_catalog(tmp_path), tmp_path / "cache"
    calls = install_counting_engine(monkeypatch)
    first = run(root, cache, False, monkeypatch)
    damaged = sorted(cache.rglob("*.bin"))[0]
    damaged.write_bytes(damaged.read_bytes()[:-10])
    assert ResultCache(cache).get(damaged.stem) is None
    calls.clear()
    reports = run(root, cache, True, monkeypatch)
    assert len(calls) == 1, "the damaged entry must be computed again, and only it"
    assert [comparable(r) for r in reports] == [comparable(r) for r in first]
    assert ResultCache(cache).get(damaged.stem) is not None, "the damaged file was not replaced"


def test_a_failure_of_the_computation_reaches_the_caller(tmp_path, monkeypatch) -> None:
    root, cache = copy_catalog(tmp_path), tmp_path / "cache"
    install_counting_engine(monkeypatch)

    def broken(*args, **kwargs):
        raise RuntimeError("the pool broke")
        yield  # a generator, like _compute

    monkeypatch.setattr(pipeline, "_compute", broken)
    with pytest.raises(RuntimeError, match="the pool broke"):
        run(root, cache, True, monkeypatch)


FORKED_RUN = """
import os, sys, threading
sys.path.insert(0, {tests!r})
from pathlib import Path
from _scale_helpers import catalog_files
from generator.model import EntryReport, Verdict
from generator.run import pipeline, tasks
from generator.run.pipeline import RunOptions, check_files

def fake_check(load, related, limits=None):
    verdict = Verdict("claims.kretschmann", True, "exact", f"fake check in {{os.getpid()}}")
    return EntryReport(load.entry, load.file, load.spacetime, None, None, (verdict,),
                       load.diagnostics, "fake-hash", 0.0)

tasks.check_loaded = fake_check  # only a forked copy of this process inherits the fake
pipeline._overlaps_reading = lambda options: True
root = Path({root!r})
options = RunOptions(jobs=2, cache_dir=Path({cache!r}))
print("forks", pipeline._forks_for([0], options))
release = threading.Event()
other = threading.Thread(target=release.wait)
other.start()
print("forks beside a thread", pipeline._forks_for([0], options))
release.set()
other.join()
for report in check_files(catalog_files(root), root, root.parent, options):
    print("report", report.file, report.verdicts[0].detail if report.verdicts else "")
print("parent", os.getpid())
"""


@pytest.mark.skipif("fork" not in __import__("multiprocessing").get_all_start_methods(),
                    reason="no fork on this platform")
def test_a_few_changed_entries_go_to_forked_copies(tmp_path, monkeypatch) -> None:
    """A warm run with one changed entry computes it in a forked copy of the process (no
    fresh interpreter's imports), reading the cached reports meanwhile, and never forks
    while another thread runs (a copy would inherit a lock held forever). Run in a fresh
    interpreter: a test process may hold other tests' threads, and then rightly never
    forks."""
    import subprocess
    import sys

    root, cache = copy_catalog(tmp_path), tmp_path / "cache"
    calls = install_counting_engine(monkeypatch)
    first = run(root, cache, False, monkeypatch)  # every entry cached, by the in-process fake
    flat = root / "maximally-symmetric" / "flat-spherical.yaml"
    flat.write_text(flat.read_text().replace("Flat spacetime", "Empty flat spacetime"))
    calls.clear()
    script = FORKED_RUN.format(tests=str(Path(__file__).parent), root=str(root),
                               cache=str(cache))
    done = subprocess.run([sys.executable, "-c", script], capture_output=True, text=True,
                          timeout=600, check=False)
    assert done.returncode == 0, done.stderr[-2000:]
    lines = done.stdout.splitlines()
    assert "forks True" in lines and "forks beside a thread False" in lines
    parent = next(line.split()[1] for line in lines if line.startswith("parent "))
    details = dict(line.split(" ", 2)[1:] for line in lines if line.startswith("report "))
    changed = next(d for f, d in details.items() if f.endswith("flat-spherical.yaml"))
    assert changed.startswith("fake check in ") and changed != f"fake check in {parent}"
    others = {f: d for f, d in details.items() if not f.endswith("flat-spherical.yaml")}
    assert others == {r.file: r.verdicts[0].detail for r in first if r.verdicts
                      and not r.file.endswith("flat-spherical.yaml")}, "read from the cache"
    assert calls == []
