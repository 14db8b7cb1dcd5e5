"""Interrupted builds and untrusted cache files.

A build killed at any moment (SIGKILL: no clean-up code runs) must leave the previous site/
complete and the result cache consistent; the next build finishes the job and removes the
leftovers. A cache file that is truncated, altered, signed by someone else or a planted pickle
must be ignored and recomputed — never unpickled.
"""

from __future__ import annotations

import contextlib
import hashlib
import json
import os
import pickle
import re
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

from generator.model import EntryReport
from generator.run import cache as cache_module
from generator.run.build import recover_interrupted_swap
from generator.run.cache import FORMAT, ResultCache
from tests._hostile import PROJECT, almanac, make_catalog

SECRET = {"ALMANAC_CACHE_SECRET": "secret-of-the-interrupted-build-tests"}


def tree_digest(folder: Path) -> dict[str, str]:
    """Every file under ``folder`` with the SHA-256 of its bytes."""
    return {p.relative_to(folder).as_posix(): hashlib.sha256(p.read_bytes()).hexdigest()
            for p in sorted(folder.rglob("*")) if p.is_file()}


def leftovers(project: Path) -> list[str]:
    return sorted(p.name for p in project.iterdir() if p.name.startswith(".site."))


def start_build(project: Path, progress: Path) -> subprocess.Popen[str]:
    """Start a build whose progress bar (naming the entry being checked) goes to ``progress``."""
    env = dict(os.environ, PYTHONPATH=str(PROJECT), **SECRET)
    with progress.open("w", encoding="utf-8") as stderr:
        return subprocess.Popen([sys.executable, "-m", "generator", "build", "--jobs", "2",
                                 "--progress"],
                                cwd=project, env=env, stdout=subprocess.DEVNULL,
                                stderr=stderr, text=True, start_new_session=True)


def kill_build(build: subprocess.Popen[str]) -> None:
    """SIGKILL the build and its worker processes (its own process group)."""
    with contextlib.suppress(ProcessLookupError):
        os.killpg(build.pid, signal.SIGKILL)
    build.wait(timeout=60)


def wait_for(condition, build: subprocess.Popen[str], limit: float = 600) -> bool:
    """Poll until ``condition()`` or the build ends; True if the condition was seen."""
    deadline = time.monotonic() + limit
    while time.monotonic() < deadline and build.poll() is None:
        if condition():
            return True
        time.sleep(0.02)
    return condition()


@pytest.fixture(scope="module")
def built(tmp_path_factory: pytest.TempPathFactory) -> tuple[Path, dict[str, str]]:
    """A project with a complete site (the 'previous' site) and its digest."""
    project = tmp_path_factory.mktemp("interrupted")
    make_catalog(project, "hostile-valid")
    done = almanac(project, "build", "--jobs", "2", env=SECRET)
    assert done.returncode == 0, done.stderr[-2000:]
    return project, tree_digest(project / "site")


def _change_the_catalog(project: Path, marker: str) -> None:
    entry = project / "catalog/isolated-objects/schwarzschild.yaml"
    text = entry.read_text(encoding="utf-8")
    entry.write_text(re.sub(r"Test fixture[^:]*:", f"Test fixture ({marker}):", text, count=1),
                     encoding="utf-8")


def _staging_folder_exists(project: Path) -> bool:
    return any(p.name.startswith(".site.building-") for p in project.iterdir())


@pytest.mark.slow
@pytest.mark.parametrize("moment", ["while the entry is checked", "during rendering"])
def test_a_killed_build_leaves_the_previous_site_complete(
    built: tuple[Path, dict[str, str]], moment: str, tmp_path: Path
) -> None:
    """The kill is tied to what the build is doing, not to a clock: a build that has become
    quicker must still be caught half-way (the progress bar names the entry being checked;
    rendering happens in a staging folder)."""
    project, _ = built
    previous = tree_digest(project / "site")
    _change_the_catalog(project, moment)
    progress = tmp_path / "progress.txt"
    build = start_build(project, progress)
    if moment == "during rendering":
        seen = wait_for(lambda: _staging_folder_exists(project), build)
    else:
        seen = wait_for(lambda: "checking schwarzschild" in progress.read_text("utf-8"), build)
    kill_build(build)
    assert seen and build.returncode == -signal.SIGKILL, \
        f"the build ended before the moment '{moment}' was observed"
    assert tree_digest(project / "site") == previous


@pytest.mark.slow
def test_a_build_killed_at_its_start_leaves_the_previous_site_complete(
    built: tuple[Path, dict[str, str]], tmp_path: Path
) -> None:
    """Killed half a second in (while Python imports the generator, on any machine we know).
    Should a machine ever finish the whole build by then, the site must be the new one,
    complete — never a mixture."""
    project, _ = built
    previous = tree_digest(project / "site")
    _change_the_catalog(project, "at its start")
    build = start_build(project, tmp_path / "progress.txt")
    wait_for(lambda: False, build, limit=0.5)
    finished = build.poll() == 0
    kill_build(build)
    after = tree_digest(project / "site")
    if finished:
        assert after.keys() == previous.keys() and after != previous
    else:
        assert after == previous


@pytest.mark.slow
def test_the_next_build_completes_and_clears_leftovers(
    built: tuple[Path, dict[str, str]]
) -> None:
    project, previous = built
    _change_the_catalog(project, "final")
    done = almanac(project, "build", "--jobs", "2", env=SECRET)
    assert done.returncode == 0, done.stderr[-2000:]
    assert leftovers(project) == []
    after = tree_digest(project / "site")
    assert after.keys() == previous.keys()
    assert after != previous  # the edit reached the site
    page = (project / "site/entries/schwarzschild/index.html").read_text(encoding="utf-8")
    assert "Test fixture (final):" in page


@pytest.mark.slow
def test_the_cache_left_by_killed_builds_gives_the_uncached_answer(
    built: tuple[Path, dict[str, str]]
) -> None:
    project, _ = built
    cached = almanac(project, "check", "catalog", "--json", "--jobs", "1", env=SECRET)
    fresh = almanac(project, "check", "catalog", "--json", "--jobs", "1", "--no-cache",
                    env=SECRET)
    assert cached.returncode == fresh.returncode == 0, cached.stderr + fresh.stderr
    assert _without_timings(cached.stdout) == _without_timings(fresh.stdout)


def _without_timings(document: str) -> object:
    data = json.loads(document)
    for entry in data["entries"]:
        entry.pop("seconds", None)
    return data


# ---------------------------------------------------------------------------- half-swapped site


def _site(folder: Path, text: str) -> None:
    (folder / "entries").mkdir(parents=True)
    (folder / "index.html").write_text(text)
    (folder / "entries" / "a.html").write_text(text + " entry")


def test_a_half_swapped_site_is_put_back(tmp_path: Path) -> None:
    """Killed between the two renames: only .site.previous exists (plus a staging folder)."""
    out, old = tmp_path / "site", tmp_path / ".site.previous"
    _site(old, "previous")
    _site(tmp_path / ".site.building-abc123", "half written")
    recover_interrupted_swap(out, old)
    assert tree_digest(out) == {"entries/a.html": hashlib.sha256(b"previous entry").hexdigest(),
                                "index.html": hashlib.sha256(b"previous").hexdigest()}
    assert leftovers(tmp_path) == []


def test_a_complete_site_is_not_replaced_by_a_stale_previous_one(tmp_path: Path) -> None:
    out, old = tmp_path / "site", tmp_path / ".site.previous"
    _site(out, "current")
    _site(old, "stale")
    recover_interrupted_swap(out, old)
    assert (out / "index.html").read_text() == "current"


@pytest.mark.slow
def test_a_build_after_a_half_swap_recovers_then_writes_the_new_site(
    built: tuple[Path, dict[str, str]]
) -> None:
    project, _ = built
    site, old = project / "site", project / ".site.previous"
    site.rename(old)
    (project / ".site.building-killed").mkdir()
    done = almanac(project, "build", "--jobs", "2", env=SECRET)
    assert done.returncode == 0, done.stderr[-2000:]
    assert (site / "index.html").is_file()
    assert leftovers(project) == []


# ---------------------------------------------------------------------------- cache files


class _Planted:
    """Unpickling this runs code: it would create the file named in ``path``."""

    def __init__(self, path: str) -> None:
        self.path = path

    def __reduce__(self) -> tuple[object, tuple[str, str]]:
        return (Path.write_text, (Path(self.path), "pwned"))


def _report() -> EntryReport:
    return EntryReport(None, "catalog/isolated-objects/x.yaml", None, None, None, (), ())


@pytest.fixture
def cache(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> ResultCache:
    monkeypatch.setenv(cache_module.SECRET_ENV, SECRET["ALMANAC_CACHE_SECRET"])
    return ResultCache(tmp_path / "cache")


@pytest.fixture
def no_unpickling(monkeypatch: pytest.MonkeyPatch) -> list[bytes]:
    """Record every unpickling the cache performs (there must be none for bad files)."""
    calls: list[bytes] = []
    real = cache_module.safe_loads

    def spy(data: bytes, *args: object, **kwargs: object) -> object:
        calls.append(data)
        return real(data, *args, **kwargs)

    monkeypatch.setattr(cache_module, "safe_loads", spy)
    return calls


def test_the_unpickling_spy_sees_a_good_file_read(cache: ResultCache,
                                                   no_unpickling: list[bytes]) -> None:
    """Control for the tests below: a good file *is* unpickled through the spied function, so
    an empty record there means the bad file was refused before unpickling."""
    cache.put(KEY, _report())
    assert cache.get(KEY) == _report()
    assert len(no_unpickling) == 1


KEY = "ab" + "0" * 62


def test_a_good_cache_file_round_trips(cache: ResultCache) -> None:
    cache.put(KEY, _report())
    assert cache.get(KEY) == _report()


@pytest.mark.parametrize("damage", ["truncated", "flipped byte", "empty", "header only",
                                    "other format version"])
def test_a_damaged_cache_file_is_ignored_unread(
    cache: ResultCache, no_unpickling: list[bytes], damage: str
) -> None:
    cache.put(KEY, _report())
    path = cache._path(KEY)
    blob = bytearray(path.read_bytes())
    if damage == "truncated":
        blob = blob[: len(blob) // 2]
    elif damage == "flipped byte":
        blob[-5] ^= 0x01
    elif damage == "empty":
        blob = bytearray()
    elif damage == "header only":
        blob = bytearray(FORMAT)
    else:
        blob = bytearray(b"almanac-cache-0\n") + blob[len(FORMAT):]
    path.write_bytes(bytes(blob))
    assert cache.get(KEY) is None
    assert no_unpickling == []


def test_a_file_signed_with_another_secret_is_ignored_unread(
    cache: ResultCache, no_unpickling: list[bytes], monkeypatch: pytest.MonkeyPatch
) -> None:
    monkeypatch.setenv(cache_module.SECRET_ENV, "someone else's secret, at least 32 characters")
    ResultCache(cache.folder).put(KEY, _report())
    assert cache.get(KEY) is None
    assert no_unpickling == []


def test_a_planted_pickle_bomb_never_runs(
    cache: ResultCache, no_unpickling: list[bytes], tmp_path: Path
) -> None:
    target = tmp_path / "PWNED-CACHE"
    payload = pickle.dumps(_Planted(str(target)))
    path = cache._path(KEY)
    path.parent.mkdir(parents=True, exist_ok=True)
    for signature in (b"\0" * 32, hashlib.sha256(KEY.encode() + payload).digest()):
        path.write_bytes(FORMAT + signature + payload)
        assert cache.get(KEY) is None
    assert no_unpickling == []
    assert not target.exists()


def test_a_signed_file_for_another_key_is_not_accepted(cache: ResultCache,
                                                       no_unpickling: list[bytes]) -> None:
    """Copying a valid file under another key's name must not serve the wrong result."""
    cache.put(KEY, _report())
    other = "cd" + "1" * 62
    cache._path(other).parent.mkdir(parents=True, exist_ok=True)
    cache._path(other).write_bytes(cache._path(KEY).read_bytes())
    assert cache.get(other) is None
    assert no_unpickling == []


@pytest.mark.slow
def test_corrupting_every_cache_file_only_costs_a_recomputation(
    built: tuple[Path, dict[str, str]], monkeypatch: pytest.MonkeyPatch
) -> None:
    project, _ = built
    first = almanac(project, "check", "catalog", "--json", "--jobs", "1", env=SECRET)
    files = sorted((project / ".almanac-cache").rglob("*.bin"))
    assert files
    for path in files:
        blob = bytearray(path.read_bytes())
        blob[len(blob) // 2] ^= 0xFF
        path.write_bytes(bytes(blob))
    second = almanac(project, "check", "catalog", "--json", "--jobs", "1", env=SECRET)
    assert second.returncode == first.returncode == 0, second.stderr
    assert _without_timings(second.stdout) == _without_timings(first.stdout)
    monkeypatch.setenv(cache_module.SECRET_ENV, SECRET["ALMANAC_CACHE_SECRET"])
    rewritten = ResultCache(project / ".almanac-cache")
    # the current entry's file was recomputed and signed again (files of earlier catalog
    # versions stay damaged until a build needs them, and are then ignored the same way)
    assert any(rewritten.get(p.stem) is not None for p in files)
