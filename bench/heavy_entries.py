"""Time the full check of chosen entries in-process, one entry at a time, and keep the reports.

Run from the repository root:

    python bench/heavy_entries.py                       # the heavy families (see HEAVY)
    python bench/heavy_entries.py catalog/isolated-objects/kerr-newman.yaml --repeats 3
    python bench/heavy_entries.py --json-dir /tmp/reports catalog/isolated-objects/*.yaml

Each entry is checked by ``check_files`` in this process (``in_process``: no worker pool, no
duplicate search, no cache), after one untimed warm-up check of a tiny entry so that imports
and one-time set-up are not counted. Wall and CPU seconds are printed per entry (the best of
``--repeats`` runs) with the load average, and written to ``bench/heavy-results.json`` and
``bench/heavy-results.md``. ``--json-dir`` also writes each entry's ``check --json`` document
(timings removed) so two versions of the engine can be compared verdict by verdict.

A measurement, not a test: nothing is asserted (see bench/README.md).
"""

from __future__ import annotations

import argparse
import json
import os
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from generator.run.pipeline import RunOptions, check_files  # noqa: E402
from generator.site.export import check_document  # noqa: E402

# Entry ids (found in whichever family folder holds them).
HEAVY = ("kerr-newman", "kerr-newman-kerr-schild", "kerr-newman-anti-de-sitter",
         "kerr-newman-de-sitter", "plebanski-demianski", "myers-perry-5d")
WARM_UP = "de-sitter-static"
TIMING_KEYS = ("seconds", "timings", "stage_seconds")


def entry_path(name: str) -> Path | None:
    """A file path as given, or the catalog file of an entry id."""
    given = Path(name)
    if given.suffix == ".yaml":
        return given if given.is_absolute() else Path.cwd() / given
    found = sorted((ROOT / "catalog").glob(f"*/{name}.yaml"))
    return found[0] if found else None


def check_one(path: Path, seed: int, seconds: float = 300.0) -> tuple[float, float, list]:
    """Wall and CPU seconds of one in-process full check, and its reports."""
    options = RunOptions(jobs=1, in_process=True, seed=seed, seconds_per_entry=seconds)
    wall, cpu = time.perf_counter(), time.process_time()
    reports = check_files([path], ROOT / "catalog", ROOT, options, search_duplicates=False)
    return time.perf_counter() - wall, time.process_time() - cpu, reports


def without_timings(value: object) -> object:
    """The report with every timing field dropped (they differ from run to run)."""
    if isinstance(value, dict):
        return {k: without_timings(v) for k, v in value.items() if k not in TIMING_KEYS}
    if isinstance(value, list):
        return [without_timings(v) for v in value]
    return value


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("entries", nargs="*", help="entry files or ids (default: the heavy "
                        "families)")
    parser.add_argument("--repeats", type=int, default=1)
    parser.add_argument("--seed", type=int, default=1)
    parser.add_argument("--json-dir", type=Path, default=None)
    parser.add_argument("--seconds", type=float, default=300.0, help="budget per entry (wall "
                        "seconds; raise it on a loaded machine)")
    parser.add_argument("--out", default="heavy-results", help="name of the results files in "
                        "bench/ (.json and .md)")
    args = parser.parse_args(argv)
    found = [entry_path(e) for e in (args.entries or HEAVY)]
    entries = [p.relative_to(ROOT) if p.is_relative_to(ROOT) else p for p in found
               if p is not None and p.exists()]
    warm_up = entry_path(WARM_UP)
    if warm_up is not None:
        check_one(warm_up, args.seed)
    rows = []
    for entry in entries:
        path = ROOT / entry
        best = None
        for _ in range(args.repeats):
            load = os.getloadavg()[0]
            wall, cpu, reports = check_one(path, args.seed, args.seconds)
            if best is None or wall < best[0]:
                best = (wall, cpu, load, reports)
        wall, cpu, load, reports = best
        ok = all(r.ok for r in reports)
        rows.append({"entry": str(entry), "wall_s": round(wall, 3), "cpu_s": round(cpu, 3),
                     "load_1min": round(load, 2), "ok": ok})
        print(f"{entry!s:60s} wall {wall:7.2f} s  cpu {cpu:7.2f} s  load {load:5.2f}  "
              f"{'ok' if ok else 'FAILS'}", flush=True)
        if args.json_dir is not None:
            args.json_dir.mkdir(parents=True, exist_ok=True)
            document = without_timings(check_document(reports))
            (args.json_dir / (path.stem + ".json")).write_text(
                json.dumps(document, indent=2, sort_keys=True) + "\n", encoding="utf-8")
    stamp = time.strftime("%Y-%m-%d %H:%M UTC", time.gmtime())
    results = {"measured": stamp, "cores": os.cpu_count(), "repeats": args.repeats,
               "entries": rows}
    (ROOT / "bench" / f"{args.out}.json").write_text(json.dumps(results, indent=2) + "\n",
                                                      encoding="utf-8")
    lines = [f"# In-process full checks ({stamp}, {os.cpu_count()} cores, best of "
             f"{args.repeats})", "", "| entry | wall s | CPU s | load (1 min) | verdict |",
             "|---|---|---|---|---|"]
    lines += [f"| {r['entry']} | {r['wall_s']} | {r['cpu_s']} | {r['load_1min']} | "
              f"{'ok' if r['ok'] else 'fails'} |" for r in rows]
    (ROOT / "bench" / f"{args.out}.md").write_text("\n".join(lines) + "\n", encoding="utf-8")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
