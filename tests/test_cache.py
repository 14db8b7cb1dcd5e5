"""The result cache: skip unchanged entries, recompute changed ones, never trust a foreign file.

The check stage is replaced by a fake that records each call (``install_counting_engine``),
so "not recomputed" is observed directly, without timing. The tampering tests plant a pickle
whose unpickling would create a file; the file must never appear.
"""

from __future__ import annotations

import hashlib
import hmac
import pickle
from pathlib import Path

import pytest
from _pickle_helpers import Reduces
from _scale_helpers import (
    ENTRY_COUNT,
    catalog_files,
    comparable,
    copy_catalog,
    install_counting_engine,
)

from generator.run.cache import FORMAT, SECRET_ENV, ResultCache
from generator.run.pipeline import RunOptions, check_files


class CreatesFileWhenUnpickled:
    """A pickle payload with a visible side effect: unpickling it touches ``path``."""

    def __init__(self, path: Path) -> None:
        self.path = path

    def __reduce__(self) -> tuple:
        return (Path.touch, (self.path,))


@pytest.fixture(autouse=True)
def cache_secret(monkeypatch: pytest.MonkeyPatch) -> str:
    """A fixed secret, so the tests never create a key file in the user's home."""
    monkeypatch.setenv(SECRET_ENV, "secret-of-this-machine-32-characters-long")
    return "secret-of-this-machine-32-characters-long"


def run(root: Path, cache: Path, files: list[Path] | None = None, seconds: float = 300.0):
    options = RunOptions(jobs=1, cache_dir=cache, seconds_per_entry=seconds)
    return check_files(files or catalog_files(root), root, root.parent, options)


def cache_files(cache: Path) -> list[Path]:
    return sorted(p for p in cache.rglob("*.bin"))


def signed(secret: str, key: str, payload: bytes) -> bytes:
    """A cache file in the documented layout: format line, HMAC-SHA256(key + payload), payload."""
    signature = hmac.new(secret.encode(), key.encode() + payload, hashlib.sha256).digest()
    return FORMAT + signature + payload


# ---------------------------------------------------------------------------- reuse


def test_unchanged_entries_are_never_recomputed(tmp_path, monkeypatch):
    root, cache = copy_catalog(tmp_path), tmp_path / "cache"
    calls = install_counting_engine(monkeypatch)
    first = run(root, cache)
    assert len(calls) == ENTRY_COUNT
    second = run(root, cache)
    assert len(calls) == ENTRY_COUNT, "a second run over unchanged files computed again"
    assert [comparable(r) for r in second] == [comparable(r) for r in first]


def test_a_changed_entry_is_recomputed_and_only_it(tmp_path, monkeypatch):
    root, cache = copy_catalog(tmp_path), tmp_path / "cache"
    calls = install_counting_engine(monkeypatch)
    run(root, cache)
    flat = root / "maximally-symmetric" / "flat-spherical.yaml"
    flat.write_text(flat.read_text().replace("Flat spacetime", "Empty flat spacetime"))
    calls.clear()
    reports = run(root, cache)
    assert calls == ["catalog/maximally-symmetric/flat-spherical.yaml"]
    assert "Empty flat spacetime" in reports[-1].entry.summary


def test_changing_a_linked_entry_recomputes_the_entries_that_link_to_it(tmp_path, monkeypatch):
    root, cache = copy_catalog(tmp_path), tmp_path / "cache"
    calls = install_counting_engine(monkeypatch)
    run(root, cache)
    target = root / "black-holes" / "point-mass.yaml"
    target.write_text(target.read_text().replace("outside a mass M", "outside a mass M."))
    calls.clear()
    run(root, cache)
    assert sorted(calls) == ["catalog/black-holes/point-mass-rain.yaml",
                             "catalog/black-holes/point-mass.yaml"]


def test_a_different_budget_is_a_different_result(tmp_path, monkeypatch):
    root, cache = copy_catalog(tmp_path), tmp_path / "cache"
    files = [root / "maximally-symmetric" / "flat-spherical.yaml"]
    calls = install_counting_engine(monkeypatch)
    run(root, cache, files, seconds=300.0)
    run(root, cache, files, seconds=300.0)
    assert len(calls) == 1
    run(root, cache, files, seconds=30.0)
    assert len(calls) == 2


def test_budget_failures_are_not_cached(tmp_path, monkeypatch):
    root, cache = copy_catalog(tmp_path), tmp_path / "cache"
    calls = install_counting_engine(monkeypatch, budget_failure_for="point-mass")
    run(root, cache)
    calls.clear()
    run(root, cache)
    assert calls == ["catalog/black-holes/point-mass.yaml"]
    assert len(cache_files(cache)) == ENTRY_COUNT - 1


# ---------------------------------------------------------------------------- damaged files


def one_cached_entry(tmp_path: Path, monkeypatch: pytest.MonkeyPatch
                     ) -> tuple[Path, Path, list[Path], list[str], Path]:
    """Check one entry into a fresh cache; return root, cache, files, calls and its cache file."""
    root, cache = copy_catalog(tmp_path), tmp_path / "cache"
    files = [root / "maximally-symmetric" / "flat-spherical.yaml"]
    calls = install_counting_engine(monkeypatch)
    run(root, cache, files)
    (cached,) = cache_files(cache)
    return root, cache, files, calls, cached


@pytest.mark.parametrize("damage", ["truncated", "flipped-byte", "empty", "header-only"])
def test_damaged_cache_files_are_recomputed(tmp_path, monkeypatch, damage):
    root, cache, files, calls, cached = one_cached_entry(tmp_path, monkeypatch)
    blob = cached.read_bytes()
    damaged = {
        "truncated": blob[: len(blob) // 2],
        "flipped-byte": blob[:-10] + bytes([blob[-10] ^ 0x01]) + blob[-9:],
        "empty": b"",
        "header-only": FORMAT,
    }[damage]
    cached.write_bytes(damaged)
    assert ResultCache(cache).get(cached.stem) is None
    (report,) = run(root, cache, files)
    assert len(calls) == 2
    assert report.ok
    assert ResultCache(cache).get(cached.stem) is not None, "the damaged file was not replaced"


def test_the_planted_payload_really_has_a_side_effect(tmp_path):
    """Control: the payload touches its file when unpickled by plain pickle, so the tests
    below pass only because the cache refuses it."""
    payload = pickle.dumps(CreatesFileWhenUnpickled(tmp_path / "plain"))
    pickle.loads(payload)
    assert (tmp_path / "plain").exists()


def test_even_a_correctly_signed_planted_pickle_runs_nothing(tmp_path, cache_secret):
    """A leaked key (or one left empty by an older version) must not be enough to run code:
    the cache's unpickler builds only the project's data classes and SymPy objects."""
    cache = ResultCache(tmp_path / "cache")
    key = "ab" + "0" * 62
    marker = tmp_path / "through-the-cache"
    cache._path(key).parent.mkdir(parents=True)
    cache._path(key).write_bytes(signed(cache_secret, key,
                                        pickle.dumps(CreatesFileWhenUnpickled(marker))))
    assert cache.get(key) is None
    assert not marker.exists()


@pytest.mark.parametrize("forgery", ["unsigned", "wrong-signature", "other-secret",
                                     "signed-for-another-key"])
def test_forged_cache_files_are_never_unpickled(tmp_path, monkeypatch, cache_secret, forgery):
    root, cache, files, calls, cached = one_cached_entry(tmp_path, monkeypatch)
    key = cached.stem
    marker = tmp_path / "planted-pickle-ran"
    payload = pickle.dumps(CreatesFileWhenUnpickled(marker), protocol=pickle.HIGHEST_PROTOCOL)
    cached.write_bytes({
        "unsigned": payload,
        "wrong-signature": FORMAT + bytes(32) + payload,
        "other-secret": signed("secret-of-another-machine-32-characters-long", key, payload),
        "signed-for-another-key": signed(cache_secret, "f" * 64, payload),
    }[forgery])
    assert ResultCache(cache).get(key) is None
    (report,) = run(root, cache, files)
    assert not marker.exists(), "the cache unpickled a file it did not sign"
    assert len(calls) == 2
    assert report.ok and report.entry.id == "flat-spherical"
    assert ResultCache(cache).get(key) is not None


def test_a_cache_written_under_another_secret_is_ignored(tmp_path, monkeypatch):
    root, cache = copy_catalog(tmp_path), tmp_path / "cache"
    files = [root / "maximally-symmetric" / "flat-spherical.yaml"]
    calls = install_counting_engine(monkeypatch)
    monkeypatch.setenv(SECRET_ENV, "secret-of-another-machine-32-characters-long")
    run(root, cache, files)
    monkeypatch.setenv(SECRET_ENV, "secret-of-this-machine-32-characters-long")
    run(root, cache, files)
    assert len(calls) == 2
    run(root, cache, files)
    assert len(calls) == 2, "the file rewritten under this machine's secret was not reused"


# ---------------------------------------------------------------------------- the key
# A red-team pass forged the cache with an empty key: the key file was created and then
# written in two steps (a kill in between left it empty), and HMAC(b"") signed a pickle that
# was then executed.


@pytest.mark.parametrize("secret", ["x", "short-secret", "a" * 31])
def test_a_short_secret_in_the_environment_is_refused(monkeypatch, tmp_path, secret) -> None:
    from generator.errors import UsageError

    monkeypatch.setenv(SECRET_ENV, secret)
    with pytest.raises(UsageError, match="at least 32"):
        ResultCache(tmp_path / "cache")


@pytest.mark.parametrize("left", [b"", b"\n", b"abc", b"0" * 31])
def test_an_empty_or_short_key_file_is_replaced_by_a_real_key(monkeypatch, tmp_path,
                                                               left) -> None:
    from generator.run.cache import MIN_SECRET_CHARS, cache_secret

    monkeypatch.delenv(SECRET_ENV)
    monkeypatch.setenv("XDG_CONFIG_HOME", str(tmp_path))
    key_file = tmp_path / "metric-almanac" / "cache-key"
    key_file.parent.mkdir()
    key_file.write_bytes(left)
    key = cache_secret()
    assert len(key) >= MIN_SECRET_CHARS and key_file.read_bytes() == key
    assert cache_secret() == key  # kept, not made again


def test_an_empty_secret_in_the_environment_falls_back_to_the_key_file(monkeypatch,
                                                                      tmp_path) -> None:
    """An unset CI secret arrives as an empty variable: it must not become the key."""
    from generator.run.cache import cache_secret

    monkeypatch.setenv(SECRET_ENV, "")
    monkeypatch.setenv("XDG_CONFIG_HOME", str(tmp_path))
    assert cache_secret() == (tmp_path / "metric-almanac" / "cache-key").read_bytes() != b""


def _first_key(config: str) -> bytes:
    import os

    from generator.run.cache import cache_secret

    os.environ.pop(SECRET_ENV, None)
    os.environ["XDG_CONFIG_HOME"] = config
    return cache_secret()


def test_first_runs_at_the_same_time_agree_on_one_key(tmp_path) -> None:
    """The key is linked into place whole, so of several first runs one writes it and the
    others read that same key (never an empty or half-written file)."""
    import multiprocessing
    from concurrent.futures import ProcessPoolExecutor

    with ProcessPoolExecutor(4, mp_context=multiprocessing.get_context("spawn")) as pool:
        keys = list(pool.map(_first_key, [str(tmp_path)] * 8))
    assert len(set(keys)) == 1 and len(keys[0]) >= 32
    assert keys[0] == (tmp_path / "metric-almanac" / "cache-key").read_bytes()
    assert [p.name for p in (tmp_path / "metric-almanac").iterdir()] == ["cache-key"]


def test_a_linked_key_file_is_not_read(monkeypatch, tmp_path) -> None:
    from generator.run.cache import cache_secret

    monkeypatch.delenv(SECRET_ENV)
    monkeypatch.setenv("XDG_CONFIG_HOME", str(tmp_path))
    planted = tmp_path / "planted"
    planted.write_bytes(b"k" * 64)
    (tmp_path / "metric-almanac").mkdir()
    (tmp_path / "metric-almanac" / "cache-key").symlink_to(planted)
    assert cache_secret() != b"k" * 64


# ---------------------------------------------------------------------------- safe unpickling


def _payloads(marker: Path) -> dict[str, bytes]:
    import os
    import subprocess

    import sympy

    code = f"__import__('pathlib').Path({str(marker)!r}).touch()"
    return {
        "os.system": pickle.dumps(Reduces(os.system, f"touch {marker}")),
        "Path.touch": pickle.dumps(Reduces(Path.touch, marker)),
        "eval": pickle.dumps(Reduces(eval, code)),
        "sympify": pickle.dumps(Reduces(sympy.sympify, code)),
        "parse_expr": pickle.dumps(Reduces(sympy.parsing.sympy_parser.parse_expr, code)),
        "sin(text)": pickle.dumps(Reduces(sympy.sin, code)),
        "Tuple(text)": pickle.dumps(Reduces(sympy.Tuple, code)),
        "Matrix(text)": pickle.dumps(Reduces(sympy.Matrix, [[code]])),
        "Popen": pickle.dumps(Reduces(subprocess.Popen, ["touch", str(marker)])),
        "protocol 0": pickle.dumps(Reduces(os.system, f"touch {marker}"), protocol=0),
        "a project function": pickle.dumps(Reduces(__import__(
            "generator.entry.catalog", fromlist=["x"]).entry_files, [marker])),
    }


@pytest.mark.parametrize("name", list(_payloads(Path("x"))))
def test_signed_code_running_pickles_are_refused(tmp_path, name) -> None:
    from generator.run.safepickle import safe_loads

    marker = tmp_path / "ran"
    payload = _payloads(marker)[name]
    with pytest.raises(pickle.UnpicklingError):
        safe_loads(payload)
    assert not marker.exists()


def test_real_reports_round_trip_through_the_safe_unpickler() -> None:
    """Control: what the cache stores (a report with SymPy expressions, free functions,
    matrices, Floats) reads back equal, so the refusals above are not a blanket refusal."""
    import sympy

    from generator.entry.catalog import vocabulary
    from generator.entry.loader import load_entry
    from generator.run.safepickle import safe_loads

    project = Path(__file__).resolve().parents[1]
    words = vocabulary(project / "catalog")
    loaded = [load_entry(path, path.name, words)
              for path in sorted((project / "catalog").glob("*/*.yaml"))]
    assert any(load.entry and load.entry.functions for load in loaded)
    for load in loaded:
        blob = pickle.dumps(load, protocol=pickle.HIGHEST_PROTOCOL)
        # compared with plain pickle: SymPy itself does not round-trip every expression to an
        # equal one (janis-newman-winicour's (1 - b/r)**gamma), and that is not ours to judge
        assert safe_loads(blob) == pickle.loads(blob)
    r, v = sympy.symbols("r v", positive=True)
    odd = (sympy.Function("m")(v) * sympy.Float("1.5") + sympy.Dummy("d"),
           sympy.ImmutableMatrix([[r, 1], [2, sympy.pi]]), frozenset({1}), complex(1, 2))
    assert safe_loads(pickle.dumps(odd, protocol=pickle.HIGHEST_PROTOCOL)) == odd
