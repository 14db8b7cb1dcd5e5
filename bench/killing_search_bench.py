"""Run the search for missing Killing vectors on chosen catalog entries, one at a time, and
print what it found and what it cost (CPU seconds and the search's work counters).

Run from the repository root:

    python bench/killing_search_bench.py                    # the entries in WARNED
    python bench/killing_search_bench.py btz de-sitter-static --json /tmp/out.json

Only the search is measured: the entry is loaded, its listed Killing vectors are verified
symbolically and the isometry dimension is computed first (not timed). A measurement, not a
test: nothing is asserted (see bench/README.md).
"""

from __future__ import annotations

import argparse
import json
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from generator.entry.loader import load_entry  # noqa: E402
from generator.geometry.exactvalues import coordinate_names  # noqa: E402
from generator.physics import killing_search  # noqa: E402
from generator.physics.isometry import isometry_dimension  # noqa: E402
from generator.physics.symmetry_stage import listed_vectors  # noqa: E402

# Entries whose listed Killing vectors fall short of the isometry dimension (ids).
WARNED = ("de-sitter-static", "de-sitter-global", "de-sitter-open", "de-sitter-flat",
          "anti-de-sitter-static", "anti-de-sitter-global", "anti-de-sitter-open",
          "anti-de-sitter-poincare", "milne", "btz", "schwarzschild-tangherlini-5d",
          "bell-szekeres", "ozsvath-schucking", "round-3-sphere", "minkowski-spherical")


def entry_path(name: str) -> Path | None:
    given = Path(name)
    if given.suffix == ".yaml":
        return given
    found = sorted((ROOT / "catalog").glob(f"*/{name}.yaml"))
    return found[0] if found else None


def measure(path: Path) -> dict[str, object]:
    load = load_entry(path)
    entry, spacetime = load.entry, load.spacetime
    if entry is None or spacetime is None:
        return {"entry": str(path), "error": "does not load"}
    names = coordinate_names(spacetime)
    listed = [xi for _, xi in listed_vectors(entry, spacetime, names)
              if killing_search.is_killing(xi, spacetime)]
    computed, _ = isometry_dimension(spacetime)
    row: dict[str, object] = {"entry": path.stem, "dimension": computed.dimension,
                              "listed": len(listed)}
    if computed.dimension is None or len(listed) >= computed.dimension:
        return row | {"searched": False}
    cpu = time.process_time()
    result = killing_search.search_killing_vectors(spacetime, listed, computed.dimension)
    row |= {"searched": True, "found": len(result.found), "complete": result.complete,
            "cpu_seconds": round(time.process_time() - cpu, 2), "summary": result.summary,
            "work": dict(getattr(result, "work", {}) or {}),
            "vectors": [[str(c) for c in xi] for xi in result.found]}
    return row


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("entries", nargs="*", default=list(WARNED))
    parser.add_argument("--json", type=Path)
    parser.add_argument("--search-module", type=Path,
                        help="another version of killing_search.py to measure (before/after)")
    args = parser.parse_args()
    if args.search_module:
        global killing_search
        import importlib.util
        spec = importlib.util.spec_from_file_location("other_search", args.search_module)
        killing_search = importlib.util.module_from_spec(spec)
        sys.modules["other_search"] = killing_search
        spec.loader.exec_module(killing_search)
    rows = []
    for name in args.entries:
        path = entry_path(name)
        if path is None:
            print(f"{name}: no such entry")
            continue
        row = measure(path)
        rows.append(row)
        if row.get("searched"):
            print(f"{row['entry']}: dim {row['dimension']}, listed {row['listed']}, found "
                  f"{row['found']}, complete {row['complete']}, CPU {row['cpu_seconds']} s, "
                  f"work {row['work']}", flush=True)
        else:
            print(f"{row['entry']}: not searched ({row})", flush=True)
    if args.json:
        args.json.write_text(json.dumps(rows, indent=1, ensure_ascii=False) + "\n")


if __name__ == "__main__":
    main()
