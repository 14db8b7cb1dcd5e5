"""Compare two folders of ``check --json`` documents entry by entry (timings already removed).

    python bench/compare_reports.py /tmp/before /tmp/after

The folders are written by ``bench/per_entry_profile.py --json-dir`` (or
``bench/heavy_entries.py --json-dir``) from two versions of the code. A speed-up must leave
every report identical: this prints each entry whose document differs, with the paths of the
first differing values, and each entry present on one side only. Exit status 1 if anything
differs. A measurement aid, not a test.
"""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path

MAX_PATHS = 8  # differing paths shown per entry


def differences(before: object, after: object, path: str = "") -> list[str]:
    """The paths (``a.b[3].c``) where two JSON values differ."""
    if isinstance(before, dict) and isinstance(after, dict):
        out = []
        for key in sorted(set(before) | set(after)):
            where = f"{path}.{key}" if path else str(key)
            if key not in before or key not in after:
                out.append(where + (" (only after)" if key not in before else " (only before)"))
            else:
                out += differences(before[key], after[key], where)
        return out
    if isinstance(before, list) and isinstance(after, list):
        if len(before) != len(after):
            return [f"{path} (length {len(before)} → {len(after)})"]
        out = []
        for i, (x, y) in enumerate(zip(before, after, strict=True)):
            out += differences(x, y, f"{path}[{i}]")
        return out
    return [] if before == after else [path or "(root)"]


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("before", type=Path)
    parser.add_argument("after", type=Path)
    args = parser.parse_args(argv)
    names_before = {p.name for p in args.before.glob("*.json")}
    names_after = {p.name for p in args.after.glob("*.json")}
    changed = 0
    for name in sorted(names_before ^ names_after):
        print(f"{name}: only {'before' if name in names_before else 'after'}")
        changed += 1
    same = 0
    for name in sorted(names_before & names_after):
        before = json.loads((args.before / name).read_text(encoding="utf-8"))
        after = json.loads((args.after / name).read_text(encoding="utf-8"))
        paths = differences(before, after)
        if paths:
            changed += 1
            shown = ", ".join(paths[:MAX_PATHS]) + (" …" if len(paths) > MAX_PATHS else "")
            print(f"{name}: {len(paths)} value(s) differ: {shown}")
        else:
            same += 1
    print(f"{same} identical, {changed} different or missing")
    return 1 if changed else 0


if __name__ == "__main__":
    sys.exit(main())
