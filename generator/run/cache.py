"""A content-addressed cache of computed entry reports.

The key is a hash of everything the result depends on: the exact bytes of the entry and of the
entries it links to (exact bytes rather than a canonical form, because diagnostics carry line
and column numbers), the budget, the generator's version and source code, and the versions of
the libraries that compute. Reports are stored as pickles signed with HMAC-SHA256; a file
whose signature does not verify (corrupt, truncated, written by another machine or version,
or planted) is ignored and recomputed, never unpickled. The signing secret lives outside the
cache folder: the ALMANAC_CACHE_SECRET environment variable (set it in CI to keep a cache
between runs) or a per-user key file created on first use.
"""

from __future__ import annotations

import hashlib
import hmac
import os
import pickle
import secrets
import tempfile
from pathlib import Path
from typing import Any

from generator.model import EntryReport
from generator.versions import generator_fingerprint, library_versions

FORMAT = b"almanac-cache-1\n"
REPORT_SUFFIX = ".bin"
SECRET_ENV = "ALMANAC_CACHE_SECRET"


def cache_key(task: Any) -> str:
    """Hash of a pipeline task's inputs (entry bytes, related entries, budget, versions)."""
    digest = hashlib.sha256()
    digest.update(f"{generator_fingerprint()}|{library_versions()}|{task.seconds}|"
                  f"{task.display}".encode())
    for path in (task.file, *task.related_files):
        digest.update(b"\0" + str(Path(path).name).encode() + b"\0")
        try:
            digest.update(Path(path).read_bytes())
        except OSError:
            digest.update(b"<unreadable>")
    return digest.hexdigest()


def _secret() -> bytes:
    from_env = os.environ.get(SECRET_ENV)
    if from_env:
        return from_env.encode()
    home = Path(os.environ.get("XDG_CONFIG_HOME", Path.home() / ".config"))
    key_file = home / "metric-almanac" / "cache-key"
    try:
        return key_file.read_bytes()
    except OSError:
        key_file.parent.mkdir(parents=True, exist_ok=True)
        key = secrets.token_hex(32).encode()
        fd = os.open(key_file, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o600)
        with os.fdopen(fd, "wb") as handle:
            handle.write(key)
        return key


class ResultCache:
    """A folder of signed result files named by their key."""

    def __init__(self, folder: Path, suffix: str = REPORT_SUFFIX) -> None:
        """``suffix`` tells kinds of files apart under one key: reports are ``.bin``; a small
        object kept beside a report (the duplicate search's card) has its own suffix."""
        self.folder = folder
        self.suffix = suffix
        self.secret = _secret()

    def _path(self, key: str) -> Path:
        return self.folder / key[:2] / f"{key}{self.suffix}"

    def get(self, key: str, kind: type = EntryReport) -> Any:
        """The object stored under ``key`` if its signature verifies and it is a ``kind``."""
        try:
            blob = self._path(key).read_bytes()
        except OSError:
            return None
        if not blob.startswith(FORMAT) or len(blob) < len(FORMAT) + 32:
            return None
        signature, payload = blob[len(FORMAT):len(FORMAT) + 32], blob[len(FORMAT) + 32:]
        expected = hmac.new(self.secret, key.encode() + payload, hashlib.sha256).digest()
        if not hmac.compare_digest(signature, expected):
            return None
        try:
            found = pickle.loads(payload)
        except Exception:  # signed by us but unreadable (e.g. a class moved): recompute
            return None
        return found if isinstance(found, kind) else None

    def put(self, key: str, value: object) -> None:
        """Write atomically, so an interrupted build never leaves a half-written file."""
        payload = pickle.dumps(value, protocol=pickle.HIGHEST_PROTOCOL)
        signature = hmac.new(self.secret, key.encode() + payload, hashlib.sha256).digest()
        path = self._path(key)
        path.parent.mkdir(parents=True, exist_ok=True)
        fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=".tmp-")
        try:
            with os.fdopen(fd, "wb") as handle:
                handle.write(FORMAT + signature + payload)
            os.replace(tmp, path)
        except BaseException:
            Path(tmp).unlink(missing_ok=True)
            raise


def prune(folder: Path, keep: dict[str, set[str]]) -> int:
    """Delete the cache files of the kinds in ``keep`` (suffix → keys still in use) whose key
    is not in use; returns how many went. Files of other kinds are left alone.

    A cache kept between CI runs otherwise grows by a generation of reports and views with
    every change to the generator; after a full build, what it did not use is what no later
    run of this catalog will ask for.
    """
    removed = 0
    for suffix, keys in keep.items():
        for path in sorted(folder.glob(f"??/*{suffix}")):
            if path.name[: -len(suffix)] not in keys:
                path.unlink(missing_ok=True)
                removed += 1
    return removed
