"""What git knows about the catalog: revisions of an entry, and entries changed on a branch.

A *revision* of an entry is a commit after which its mathematics (the content hash of
``content_hash.content_hash``) differs from before. Commits that only reword notes or re-indent the
YAML are not revisions: a citation made before them still names the same mathematics.

Everything here runs ``git`` as a subprocess with a fixed argument list (no shell), reads the
files at each commit with ``git show`` and parses them with the normal loader, so a historic
version is judged by the same rules as a current one. Outside a git checkout (a release
tarball) there is simply no history.
"""

from __future__ import annotations

import hashlib
import hmac
import json
import os
import re
import subprocess
import tempfile
from collections.abc import Callable, Iterable
from dataclasses import dataclass
from pathlib import Path
from typing import TextIO

from generator import __version__
from generator.entry.content_hash import HASH_SCHEME, content_hash, short_hash
from generator.errors import UsageError
from generator.model import Revision

GIT_TIMEOUT_SECONDS = 60
MIN_HASH_PREFIX = 6

# (display file name, source text) -> full content hash, or None if the text does not load.
Hasher = Callable[[str, str], str | None]


class GitError(Exception):
    """Raised by ``_git`` when git fails; callers turn it into 'no history' or a usage error."""


def _git(repo: Path, *args: str) -> str:
    command = ["git", "-C", str(repo), "-c", "core.quotepath=off", *args]
    try:
        done = subprocess.run(
            command, capture_output=True, text=True, timeout=GIT_TIMEOUT_SECONDS, check=False
        )
    except (OSError, subprocess.TimeoutExpired) as exc:
        raise GitError(f"cannot run git: {exc}") from exc
    if done.returncode != 0:
        raise GitError(done.stderr.strip() or f"git {args[0]} failed")
    return done.stdout


def repo_root(repo: Path) -> Path | None:
    """Top folder of the git work tree containing ``repo``, or None outside git."""
    try:
        return Path(_git(repo, "rev-parse", "--show-toplevel").strip())
    except GitError:
        return None


def loader_hasher(file: str, source: str) -> str | None:
    """Content hash of a historic version, parsed by the normal loader (None if it fails)."""
    from generator.entry.loader import Vocabulary, load_text

    result = load_text(source, file, Path(file), Vocabulary())
    return content_hash(result.entry) if result.entry is not None else None


# ---------------------------------------------------------------------------- revisions


@dataclass(frozen=True)
class _Commit:
    commit: str
    date: str
    subject: str
    path: str  # the entry's path (relative to the repository) at this commit
    blob: str  # git object id of the file's content after this commit ("" if deleted)


_LOG_FORMAT = "--format=%x1e%H%x1f%as%x1f%s"
_DELETED = re.compile(r"^0+$")


def _parse_log(out: str, fallback_path: str) -> list[_Commit]:
    """Records of ``git log --raw --no-abbrev`` with ``_LOG_FORMAT``, oldest first."""
    commits = []
    for record in out.split("\x1e")[1:]:
        header, _, raw = record.partition("\n")
        commit, date, subject = header.split("\x1f", 2)
        path, blob = fallback_path, ""
        for line in raw.splitlines():
            if line.startswith(":"):
                fields, _, names = line.partition("\t")
                new_blob = fields.split()[3]
                path = names.split("\t")[-1]
                blob = "" if _DELETED.match(new_blob) else new_blob
        commits.append(_Commit(commit, date, subject, path, blob))
    return commits[::-1]


def _commits_touching(root: Path, relative: str) -> list[_Commit]:
    """Commits that changed the file, oldest first, following renames between families."""
    out = _git(root, "log", "--follow", "--raw", "--no-abbrev", _LOG_FORMAT, "--", relative)
    return _parse_log(out, relative)


class BlobHashes:
    """Content hash per git blob: a blob's text never changes, so it is hashed only once.

    With ``file`` (e.g. inside the computation cache folder) and ``secret`` the table is kept
    between runs, keyed also by the hash scheme and the generator version (a new loader may
    read a file differently). The file is signed with ``secret`` (HMAC-SHA256, the cache's
    key) and every row is checked for shape when read: a planted or damaged table — a forged
    revision hash, a value shaped like a path, a number — is ignored whole and recomputed.
    Without a secret nothing is read or kept. Passed explicitly; no module-level cache.
    """

    def __init__(self, hasher: Hasher = loader_hasher, file: Path | None = None,
                 secret: bytes | None = None) -> None:
        self.hasher = hasher
        self.file = file if secret else None
        self.secret = secret or b""
        self.known: dict[str, str | None] = self._read()
        self.changed = False

    def _read(self) -> dict[str, str | None]:
        if self.file is None or not self.file.is_file() or self.file.is_symlink():
            return {}
        try:
            with self.file.open("rb") as handle:
                data = json.loads(handle.read(MAX_HASH_TABLE_BYTES + 1).decode("utf-8"))
        except (OSError, ValueError):
            return {}  # a damaged cache is only a slower run
        if not isinstance(data, dict) or not isinstance(data.get("table"), dict):
            return {}
        table = data["table"]
        if not hmac.compare_digest(str(data.get("signature", "")), self._sign(table)):
            return {}
        return table if all(_valid_row(k, v) for k, v in table.items()) else {}

    def _sign(self, table: dict) -> str:
        text = json.dumps(table, sort_keys=True, separators=(",", ":"))
        return hmac.new(self.secret, text.encode("utf-8"), hashlib.sha256).hexdigest()

    def hash_of(self, root: Path, commit: _Commit, blobs: dict[str, str] | None = None
                ) -> str | None:
        """``blobs``: texts already read (``read_blobs``), so git is not asked once per blob."""
        if not commit.blob:
            return None
        key = f"{HASH_SCHEME}:{__version__}:{commit.blob}"
        if key not in self.known:
            source = _blob_text(root, commit.blob, blobs)
            self.known[key] = self.hasher(commit.path, source)
            self.changed = True
        return self.known[key]

    def save(self) -> None:
        if self.file is None or not self.changed:
            return
        self.file.parent.mkdir(parents=True, exist_ok=True)
        text = json.dumps({"signature": self._sign(self.known), "table": self.known},
                          sort_keys=True, indent=0)
        fd, temporary = tempfile.mkstemp(dir=self.file.parent, prefix=".content-hashes-")
        with os.fdopen(fd, "w", encoding="utf-8") as handle:
            handle.write(text)
        os.replace(temporary, self.file)


MAX_HASH_TABLE_BYTES = 64 * 1024 * 1024
_HASH = re.compile(r"[0-9a-f]{64}")
_BLOB_KEY = re.compile(r"[\w.:-]{1,200}:[0-9a-f]{40,64}")


def _valid_row(key: object, value: object) -> bool:
    """A row as `hash_of` writes it: scheme:version:blob id -> 64 hex digits or null."""
    return (isinstance(key, str) and _BLOB_KEY.fullmatch(key) is not None and
            (value is None or (isinstance(value, str) and _HASH.fullmatch(value) is not None)))


def revisions(
    repo: Path,
    entry_path: Path,
    hasher: Hasher = loader_hasher,
    hashes: BlobHashes | None = None,
) -> tuple[Revision, ...]:
    """Commits that changed the entry's mathematics, oldest first.

    A commit whose version does not load is skipped (it could not have been published); the
    next loadable version is compared with the last loadable one.
    """
    root = repo_root(repo)
    if root is None:
        return ()
    commits = _entry_commits(root, entry_path)
    return tuple(_mathematical_changes(root, commits, hashes or BlobHashes(hasher)))


def _entry_commits(root: Path, entry_path: Path) -> list[_Commit]:
    """The entry's commits, oldest first; none when git cannot tell."""
    try:
        return _commits_touching(root, _relative_to(entry_path, root))
    except GitError:
        return []


def _mathematical_changes(
    root: Path, commits: list[_Commit], hashes: BlobHashes, blobs: dict[str, str] | None = None
) -> Iterable[Revision]:
    previous: str | None = None
    for c in commits:
        digest = hashes.hash_of(root, c, blobs)
        if digest is not None and digest != previous:
            yield Revision(commit=c.commit, date=c.date, content_hash=digest, summary=c.subject,
                           source=_blob_text(root, c.blob, blobs))
            previous = digest


def _blob_text(root: Path, blob: str, blobs: dict[str, str] | None) -> str:
    if blobs is not None and blob in blobs:
        return blobs[blob]
    return _git(root, "cat-file", "blob", blob)


_BLOB_ID = re.compile(r"[0-9a-f]{40,64}")


def read_blobs(root: Path, ids: Iterable[str]) -> dict[str, str]:
    """The texts of many blobs from one ``git cat-file --batch``: a warm build started 535 git
    processes (one per blob read, one root lookup per entry; 5.7 s of a 17 s rebuild), now
    163 (one ``log --follow`` per entry stays). A blob git cannot give, or one that is not
    UTF-8, is left out (the caller then asks for it alone, as before)."""
    wanted = sorted({b for b in ids if _BLOB_ID.fullmatch(b)})
    if not wanted:
        return {}
    command = ["git", "-C", str(root), "cat-file", "--batch"]
    try:
        done = subprocess.run(command, input="\n".join(wanted).encode() + b"\n",
                              capture_output=True, timeout=GIT_TIMEOUT_SECONDS, check=False)
    except (OSError, subprocess.TimeoutExpired):
        return {}
    if done.returncode != 0:
        return {}
    return _parse_batch(done.stdout)


def _parse_batch(out: bytes) -> dict[str, str]:
    """``<id> blob <size>\\n<content>\\n`` records; a missing object is ``<id> missing``."""
    found: dict[str, str] = {}
    at = 0
    while at < len(out):
        end = out.find(b"\n", at)
        if end < 0:
            break
        header = out[at:end].decode("ascii", "replace").split()
        at = end + 1
        if len(header) != 3 or header[1] != "blob" or not header[2].isdigit():
            continue  # "missing" or another kind of object: no content follows
        size = int(header[2])
        content = out[at:at + size]
        at += size + 1
        try:
            text = content.decode("utf-8")
        except UnicodeDecodeError:
            continue
        # as `_git` reads text (universal newlines), so a revision's source is the same
        found[header[0]] = text.replace("\r\n", "\n").replace("\r", "\n")
    return found


def _relative_to(path: Path, root: Path) -> str:
    absolute = path if path.is_absolute() else Path.cwd() / path
    try:
        return absolute.resolve().relative_to(root.resolve()).as_posix()
    except ValueError as exc:
        raise UsageError(f"{path} is not inside the git repository {root}") from exc


def catalog_revisions(
    repo: Path,
    catalog: Path,
    hasher: Hasher = loader_hasher,
    cache_file: Path | None = None,
    secret: bytes | None = None,
) -> dict[str, tuple[Revision, ...]]:
    """Revisions of every entry under ``catalog``, keyed by entry id (for ``CatalogMeta``).

    ``cache_file`` (suggested: ``.almanac-cache/content-hashes.json``) keeps blob hashes
    between builds, so a rebuild only hashes file versions it has not seen; it is signed with
    ``secret`` (without one it is neither read nor written).
    """
    hashes = BlobHashes(hasher, cache_file, secret)
    root = repo_root(repo)
    if root is None:
        return {path.stem: () for path in entry_files(catalog)}
    history = {path.stem: _entry_commits(root, path) for path in entry_files(catalog)}
    # Every blob's text is needed at most once: unknown ones for their hash and those that
    # start a revision for its source. All of them in one batch (the set is a superset).
    blobs = read_blobs(root, (c.blob for commits in history.values() for c in commits
                              if c.blob))
    found = {stem: tuple(_mathematical_changes(root, commits, hashes, blobs))
             for stem, commits in history.items()}
    hashes.save()
    return found


def entry_files(catalog: Path) -> list[Path]:
    """Entry files: ``catalog/<family>/<id>.yaml`` (not catalog-level files like tags.yaml)."""
    return sorted(p for p in catalog.glob("*/*.yaml")
                  if not p.is_symlink() and not p.parent.is_symlink())


# ---------------------------------------------------------------------------- changed entries


def changed_entries(repo: Path, ref: str, catalog: Path) -> list[Path]:
    """Entry files added or modified since the branch left ``ref``, plus uncommitted ones.

    ``ref...HEAD`` (three dots) compares with the merge base, so entries changed on ``ref``
    after the branch point are not included: a pull request is checked for what it changes.
    Deleted files are left out (nothing to check). Paths are returned under ``catalog`` as the
    caller gave it, sorted.
    """
    root = repo_root(repo)
    if root is None:
        raise UsageError(f"{repo} is not inside a git repository; --changed-since needs git")
    inside = _relative_to(catalog, root)
    try:
        names = _git(root, "diff", "--name-only", "-z", "--diff-filter=ACMR", f"{ref}...HEAD")
    except GitError as exc:
        raise UsageError(f"cannot compare with {ref!r}: {exc}") from exc
    names += _git(root, "diff", "--name-only", "-z", "--diff-filter=ACMR", "HEAD")
    names += _git(root, "ls-files", "-z", "--others", "--exclude-standard")
    found = {name for name in names.split("\0") if _is_entry_path(name, inside)}
    return [catalog / Path(name).relative_to(inside) for name in sorted(found)]


def _is_entry_path(name: str, catalog: str) -> bool:
    """``<catalog>/<family>/<id>.yaml`` exactly (``catalog`` relative to the repository)."""
    path = Path(name)
    return path.suffix == ".yaml" and path.parent.parent == Path(catalog)


# ---------------------------------------------------------------------------- hash look-up


@dataclass(frozen=True)
class HashMatch:
    """Where a cited content hash comes from: one revision of one entry."""

    entry_id: str
    path: str  # path of the entry file at that revision, relative to the repository
    revision: Revision
    source: str  # the entry file exactly as it was at that revision


def lookup_hash(
    repo: Path, catalog: Path, prefix: str, hasher: Hasher = loader_hasher
) -> list[HashMatch]:
    """Every revision of every entry ever under ``catalog`` whose content hash starts with
    ``prefix`` (entries since deleted or renamed included: citations outlive files)."""
    prefix = prefix.strip().lower()
    if len(prefix) < MIN_HASH_PREFIX or any(ch not in "0123456789abcdef" for ch in prefix):
        raise UsageError(f"a content hash is at least {MIN_HASH_PREFIX} hex digits, got {prefix!r}")
    root = repo_root(repo)
    if root is None:
        raise UsageError(f"{repo} is not inside a git repository; looking up a hash needs git")
    inside = _relative_to(catalog, root)
    hashes = BlobHashes(hasher)
    matches: list[HashMatch] = []
    for path in _paths_ever_in(root, inside):
        for c in _commits_touching_exact(root, path):
            matches.extend(_match_at(root, c, prefix, hashes))
    return _first_of_each_revision(matches)


def _paths_ever_in(root: Path, catalog: str) -> list[str]:
    out = _git(root, "log", "--all", "--format=", "--name-only", "--", catalog)
    return sorted({n for n in out.splitlines() if n and _is_entry_path(n, catalog)})


def _commits_touching_exact(root: Path, path: str) -> list[_Commit]:
    out = _git(root, "log", "--all", "--raw", "--no-abbrev", _LOG_FORMAT, "--", path)
    return _parse_log(out, path)


def _match_at(root: Path, c: _Commit, prefix: str, hashes: BlobHashes) -> list[HashMatch]:
    digest = hashes.hash_of(root, c)
    if digest is None or not digest.startswith(prefix):
        return []
    revision = Revision(commit=c.commit, date=c.date, content_hash=digest, summary=c.subject)
    source = _git(root, "cat-file", "blob", c.blob)
    return [HashMatch(Path(c.path).stem, c.path, revision, source)]


def _first_of_each_revision(matches: list[HashMatch]) -> list[HashMatch]:
    """Keep, per (entry, hash), the earliest commit: where that mathematics first appeared.

    ``matches`` arrive oldest first per file; the sort is stable, so that order is kept.
    """
    seen: set[tuple[str, str]] = set()
    out = []
    for m in sorted(matches, key=lambda m: m.entry_id):
        key = (m.entry_id, m.revision.content_hash)
        if key not in seen:
            seen.add(key)
            out.append(m)
    return out


def lookup_main(repo: Path, catalog: Path, prefix: str, out: TextIO, err: TextIO) -> int:
    """``cite --hash H``: print which entry and commit a hash belongs to, and that content.

    Exit status 0 when found, 2 for a malformed hash, no git, or no match.
    """
    try:
        matches = lookup_hash(repo, catalog, prefix)
    except UsageError as exc:
        print(f"error: {exc}", file=err)
        return 2
    if not matches:
        print(f"error: no revision of any entry has a content hash starting {prefix}", file=err)
        return 2
    for m in matches:
        out.write(describe_match(m))
    return 0


def describe_match(m: HashMatch) -> str:
    r = m.revision
    return (
        f"entry {m.entry_id} ({m.path})\n"
        f"content hash {short_hash(r.content_hash)} (full {r.content_hash})\n"
        f"first seen in commit {r.commit} on {r.date}: {r.summary}\n"
        f"--- {m.path} at {r.commit[:12]} ---\n"
        f"{m.source}" + ("" if m.source.endswith("\n") else "\n")
    )
