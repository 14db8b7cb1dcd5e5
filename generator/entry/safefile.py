"""Reading one file of the catalog the way every catalog file is read: never through a link,
never more than a size cap, always UTF-8, every problem a positioned diagnostic.

A catalog pull request is written by a stranger, and git stores symbolic links: a link named
``catalog/black-holes/x.yaml`` could point at ``/etc/passwd`` or at a file of the machine
running CI, and a linked folder would bring in files nobody reviewed. Links are therefore
refused, not followed — opened with ``O_NOFOLLOW`` so that a link swapped in after a look is
refused too. The size is enforced on the bytes read, not on what ``stat`` said before.
"""

from __future__ import annotations

import errno
import os
import stat
from pathlib import Path

from generator.errors import Diagnostic

LINK_CODE = "file.link"
# O_NONBLOCK: opening a FIFO planted in the catalog must not wait for a writer.
_NO_FOLLOW = getattr(os, "O_NOFOLLOW", 0) | getattr(os, "O_NONBLOCK", 0)
LINK_HINT = ("catalog files are plain files in the pull request; replace the link by the "
             "file itself (git stores links as links)")


def link_diagnostic(file: str) -> Diagnostic:
    """The refusal of a symbolic link (a file or a folder) found in the catalog."""
    return Diagnostic(file, 1, 1, "error", "is a symbolic link; links are never followed",
                      LINK_CODE, LINK_HINT)


def is_link(path: Path) -> bool:
    """True for a symbolic link (checked without following it)."""
    try:
        return stat.S_ISLNK(os.lstat(path).st_mode)
    except OSError:
        return False


def read_capped_bytes(path: Path, max_bytes: int) -> bytes | None:
    """At most ``max_bytes + 1`` bytes of a regular file, never through a link (None if it is
    a link, not a regular file, or unreadable): for hashing and shipping catalog files, where
    a link to ``/dev/zero`` must not become an endless read."""
    try:
        fd = os.open(path, os.O_RDONLY | _NO_FOLLOW)
    except OSError:
        return None
    try:
        if not stat.S_ISREG(os.fstat(fd).st_mode):
            return None
        chunks, left = [], max_bytes + 1
        while left > 0:
            chunk = os.read(fd, min(left, 1 << 16))
            if not chunk:
                break
            chunks.append(chunk)
            left -= len(chunk)
        return b"".join(chunks)
    except OSError:
        return None
    finally:
        os.close(fd)


def read_catalog_file(path: Path, file: str, max_bytes: int) -> tuple[str, Diagnostic | None]:
    """The text of ``path`` (shown as ``file``), or a diagnostic saying why it cannot be read."""
    try:
        fd = os.open(path, os.O_RDONLY | _NO_FOLLOW)
    except OSError as exc:
        if exc.errno == errno.ELOOP or is_link(path):
            return "", link_diagnostic(file)
        return "", Diagnostic(file, 1, 1, "error", f"cannot read file: {exc.strerror}",
                              "file.unreadable")
    if not stat.S_ISREG(os.fstat(fd).st_mode):  # a folder, a FIFO, a device
        os.close(fd)
        return "", Diagnostic(file, 1, 1, "error", "is not a regular file", "file.unreadable",
                              "catalog files are plain YAML files")
    with os.fdopen(fd, "rb") as handle:
        raw = handle.read(max_bytes + 1)
    if len(raw) > max_bytes:
        return "", Diagnostic(file, 1, 1, "error",
                              f"file is larger than the limit of {max_bytes} bytes", "file.size",
                              "an entry is one spacetime; split notes or shorten expressions")
    try:
        return raw.decode("utf-8"), None
    except UnicodeDecodeError as exc:
        return "", Diagnostic(file, 1, exc.start + 1, "error", "file is not valid UTF-8",
                              "file.encoding", "save the file as UTF-8")
