"""``check -``: one entry read from standard input (an editor or a script pipes it in).

The text is bounded like an entry file (256 KiB, UTF-8) and read by the normal loader. It is
checked alone: the file name that an entry's id must match is taken from the id itself, and the
tags of the catalog in the current folder (if any) are known; links to other entries are not
followed (check the file in place for that).
"""

from __future__ import annotations

import re
from pathlib import Path

from generator.entry.catalog import find_catalog_root, vocabulary
from generator.entry.loader import Vocabulary, load_text
from generator.errors import Diagnostic
from generator.model import EntryReport
from generator.run.tasks import check_within_limits

NAME = "<stdin>"
_ID = re.compile(r"^id:\s*[\"']?([a-z0-9]+(?:-[a-z0-9]+)*)[\"']?\s*(?:#.*)?$", re.MULTILINE)


def check_text(raw: bytes, limit: int, seconds: float) -> EntryReport:
    if len(raw) > limit:
        return _refused(f"standard input is over {limit} bytes", "file.size",
                        "an entry is one spacetime; split notes or shorten expressions")
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError:
        return _refused("standard input is not UTF-8", "file.encoding", "send UTF-8 text")
    found = _ID.search(text)
    stem = found.group(1) if found else "stdin"
    root = find_catalog_root(Path.cwd())
    tags = vocabulary(root).tags if root is not None else frozenset()
    load = load_text(text, NAME, Path("stdin") / f"{stem}.yaml", Vocabulary(tags=tags))
    return check_within_limits([load], seconds)


def _refused(message: str, code: str, hint: str) -> EntryReport:
    return EntryReport(None, NAME, None, None, None, (),
                       (Diagnostic(NAME, 1, 1, "error", message, code, hint),))
