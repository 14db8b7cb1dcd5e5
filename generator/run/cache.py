"""A content-addressed cache of computed entry reports.

The key is a hash of everything the result depends on: the exact bytes of the entry and of the
entries it links to (exact bytes rather than a canonical form, because diagnostics carry line
and column numbers), the budget, the generator's version and source code, and the versions of
the libraries that compute. Reports are stored as pickles signed with HMAC-SHA256; a file
whose signature does not verify (corrupt, truncated, written by another machine or version,
or planted) is ignored and recomputed, never unpickled. The signing secret lives outside the
cache folder: the ALMANAC_CACHE_SECRET environment variable (set it in CI to keep a cache
between runs) or a per-user key file created on first use.

Signed is not enough to trust a pickle (a key can leak; a key file could once be left empty),
so files are read back with `safepickle.safe_loads`, which builds only the project's own data
classes and the SymPy objects inside them and refuses anything that could run code.
"""

from __future__ import annotations

import hashlib
import hmac
import os
import re
import secrets
import tempfile
from pathlib import Path
from typing import Any

from generator.entry.safefile import read_capped_bytes
from generator.entry.yamlcheck import MAX_FILE_BYTES
from generator.errors import UsageError
from generator.model import EntryReport
from generator.run.safepickle import canonical_dumps, safe_loads
from generator.versions import generator_fingerprint, library_versions

FORMAT = b"almanac-cache-1\n"
REPORT_SUFFIX = ".bin"
SECRET_ENV = "ALMANAC_CACHE_SECRET"


def cache_key(task: Any) -> str:
    """Hash of a pipeline task's inputs (entry bytes, related entries, budget, versions)."""
    return task_keys(task)[0]


def figures_key(task: Any) -> str:
    """Hash of what an entry's figures are drawn from (see ``task_keys``)."""
    return task_keys(task)[1]


def task_keys(task: Any) -> tuple[str, str]:
    """The report's key (``cache_key``) and the figures' key, from one reading of each file.

    The figures' key is that of the entry's own file only, with its top-level ``title:``
    line left out. The figures read the report's metric, parameters, invariants, horizons
    and ergosurface, all computed from the entry's own file (a linked entry changes only the
    link's verdict), and name the title only in their alt text, which the site writes in
    afresh. A title spread over several lines keeps its other lines in the hash: a retitling
    then redraws, which is only slower."""
    versions = (f"{generator_fingerprint()}|{library_versions()}|{task.seconds}|"
                f"{task.display}").encode()
    report, figures = hashlib.sha256(versions), hashlib.sha256(b"figures|" + versions)
    for path in (task.file, *task.related_files):
        report.update(b"\0" + str(Path(path).name).encode() + b"\0")
        # Capped and never through a link: a link to /dev/zero must not be read forever.
        content = read_capped_bytes(Path(path), MAX_FILE_BYTES)
        report.update(b"<unreadable>" if content is None else content)
        if path == task.file:
            figures.update(b"<unreadable>" if content is None else
                           re.sub(rb"^title:[^\n]*\n", b"", content, count=1,
                                  flags=re.MULTILINE))
    return report.hexdigest(), figures.hexdigest()


MIN_SECRET_CHARS = 32  # a secret shorter than this (an empty one above all) is refused
KEY_FILE_ENV = "XDG_CONFIG_HOME"


def cache_secret() -> bytes:
    """The key that signs cache files: ALMANAC_CACHE_SECRET, else this user's key file.

    Never empty or short: HMAC with an empty key is a signature anyone can compute. A short
    secret from the environment is refused (a usage error, so it is noticed); a short or empty
    key file (left by a run killed before it wrote the key, in older versions) is replaced by
    a new key — the cache signed by it becomes useless, which costs one recomputation.
    """
    from_env = os.environ.get(SECRET_ENV)
    if from_env is not None and from_env != "":
        if len(from_env) < MIN_SECRET_CHARS:
            raise UsageError(f"{SECRET_ENV} is {len(from_env)} characters long; a cache "
                             f"secret has at least {MIN_SECRET_CHARS} (e.g. the output of "
                             "`python -c 'import secrets; print(secrets.token_hex(32))'`)")
        return from_env.encode()
    home = Path(os.environ.get(KEY_FILE_ENV) or Path.home() / ".config")
    return _key_file_secret(home / "metric-almanac" / "cache-key")


_secret = cache_secret  # the older name


def _key_file_secret(key_file: Path) -> bytes:
    """Read the per-user key, creating it atomically the first time.

    The key is written to a private temporary file first and then linked into place, so no
    reader ever sees a half-written key; of two first runs at once, one links and the other
    finds the file and reads it.
    """
    found = _read_key(key_file)
    if found is not None:
        return found
    key_file.parent.mkdir(parents=True, exist_ok=True, mode=0o700)
    fd, tmp = tempfile.mkstemp(dir=key_file.parent, prefix=".cache-key-")
    try:
        with os.fdopen(fd, "wb") as handle:  # mkstemp creates it readable by us only
            handle.write(secrets.token_hex(32).encode())
            handle.flush()
            os.fsync(handle.fileno())
        try:
            os.link(tmp, key_file)
        except FileExistsError:
            if _read_key(key_file) is None:  # there, but empty or short: replace it
                os.replace(tmp, key_file)
    finally:
        Path(tmp).unlink(missing_ok=True)
    found = _read_key(key_file)
    if found is None:
        raise UsageError(f"cannot create a usable cache key in {key_file}; use --no-cache or "
                         f"set {SECRET_ENV}")
    return found


def _read_key(key_file: Path) -> bytes | None:
    """The key in the file if it is long enough; never through a link."""
    try:
        fd = os.open(key_file, os.O_RDONLY | getattr(os, "O_NOFOLLOW", 0))
    except OSError:
        return None
    with os.fdopen(fd, "rb") as handle:
        key = handle.read(4096).strip()
    return key if len(key) >= MIN_SECRET_CHARS else None


class ResultCache:
    """A folder of signed result files named by their key."""

    def __init__(self, folder: Path, suffix: str = REPORT_SUFFIX) -> None:
        """``suffix`` tells kinds of files apart under one key: reports are ``.bin``; a small
        object kept beside a report (the duplicate search's card) has its own suffix."""
        self.folder = folder
        self.suffix = suffix
        self.secret = cache_secret()

    def _path(self, key: str) -> Path:
        return self.folder / key[:2] / f"{key}{self.suffix}"

    def holds(self, key: str) -> bool:
        """Whether a file is stored under ``key`` (not whether it verifies: ``get`` says)."""
        return self._path(key).is_file()

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
            found = safe_loads(payload)
        except Exception:  # signed by us but unreadable (e.g. a class moved): recompute
            return None
        return found if isinstance(found, kind) else None

    def put(self, key: str, value: object) -> None:
        """Write atomically, so an interrupted build never leaves a half-written file."""
        payload = canonical_dumps(value)
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
