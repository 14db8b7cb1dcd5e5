"""Whole-catalog figures: a cold check, a warm check, and a warm rebuild with one entry changed.

    python bench/catalog_benchmark.py                 # check only (cold, warm, one changed)
    python bench/catalog_benchmark.py --build         # also the site build, cold and warm
    python bench/catalog_benchmark.py --jobs 2 --changed kerr-newman

The catalog is copied to a scratch folder (the edit never touches the repository), then:

* **cold check**: ``check <copy> --cache-dir <empty> --seed 1`` — every entry computed from
  scratch, as with ``--no-cache`` (the results are also written to the empty cache);
* **warm check**: the same command again — every entry from the cache;
* **one changed, check**: the title of one entry (``--changed``) edited, the same command
  again: that entry is checked, the rest come from the cache;
* with ``--build``: ``build`` cold into the scratch folder, then again after editing the
  entry once more (the warm rebuild a contributor waits for).

For each run: wall seconds, CPU seconds of the command and all its workers (getrusage of the
children), the number of entries and entries per wall second, and the 1-minute load average
before and after (the development machine is shared: compare CPU seconds across runs, and
read wall seconds with the load beside them). Results go to ``bench/catalog-results.json``
and ``bench/catalog-results.md``. A measurement, not a test: nothing is asserted.
"""

from __future__ import annotations

import argparse
import json
import os
import resource
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
SECRET = "catalog-benchmark-secret-0123456789abcdef"


def run(command: list[str]) -> dict:
    """Wall and CPU seconds and the load average around one command of the tool."""
    env = {**os.environ, "ALMANAC_CACHE_SECRET": SECRET}
    load_before = os.getloadavg()[0]
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    started = time.perf_counter()
    done = subprocess.run([sys.executable, "-m", "generator", *command], cwd=ROOT, env=env,
                          capture_output=True, text=True, check=False)
    wall = time.perf_counter() - started
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    cpu = (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)
    return {"wall_s": round(wall, 2), "cpu_s": round(cpu, 2),
            "load_before": round(load_before, 2), "load_after": round(os.getloadavg()[0], 2),
            "exit": done.returncode, "stderr_tail": done.stderr[-400:],
            "files_with_errors": sorted({line.split(":", 1)[0] for line in
                                         (done.stdout + done.stderr).splitlines()
                                         if ": error:" in line})}


def retitle(path: Path, mark: str) -> None:
    """Change the entry's title (a change every report depends on, none of its maths)."""
    lines = path.read_text(encoding="utf-8").splitlines(keepends=True)
    for i, line in enumerate(lines):
        if line.startswith("title: "):
            lines[i] = line.rstrip("\n") + f" {mark}\n"
            break
    path.write_text("".join(lines), encoding="utf-8")


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--jobs", type=int, default=2)
    parser.add_argument("--changed", default="kerr-newman", help="id of the entry to edit")
    parser.add_argument("--build", action="store_true", help="also time the site build")
    parser.add_argument("--out", default="catalog-results")
    args = parser.parse_args(argv)
    with tempfile.TemporaryDirectory(prefix="almanac-catalog-bench-") as scratch:
        catalog = Path(scratch) / "catalog"
        shutil.copytree(ROOT / "catalog", catalog)
        cache, site = Path(scratch) / "cache", Path(scratch) / "site"
        entries = len([p for p in catalog.glob("*/*.yaml")])
        changed = next(catalog.glob(f"*/{args.changed}.yaml"))
        check = ["check", str(catalog), "--cache-dir", str(cache), "--jobs", str(args.jobs),
                 "--seed", "1", "--no-progress"]
        rows: dict[str, dict] = {}
        rows["cold check"] = run(check)
        rows["warm check"] = run(check)
        retitle(changed, "(edited)")
        rows["one changed, check"] = run(check)
        if args.build:
            build = ["build", "--catalog", str(catalog), "--out", str(site), "--cache-dir",
                     str(cache), "--jobs", str(args.jobs)]
            rows["build (cache from the checks)"] = run(build)
            retitle(changed, "(edited again)")
            rows["one changed, build"] = run(build)
    for name, row in rows.items():
        row["entries_per_s"] = round(entries / row["wall_s"], 2) if row["wall_s"] else None
        print(f"{name:32s} wall {row['wall_s']:8.2f} s  cpu {row['cpu_s']:8.2f} s  "
              f"load {row['load_before']:5.2f}→{row['load_after']:5.2f}  exit {row['exit']}",
              flush=True)
    stamp = time.strftime("%Y-%m-%d %H:%M UTC", time.gmtime())
    results = {"measured": stamp, "cores": os.cpu_count(), "jobs": args.jobs,
               "entries": entries, "changed_entry": args.changed, "runs": rows}
    (ROOT / "bench" / f"{args.out}.json").write_text(json.dumps(results, indent=2) + "\n",
                                                      encoding="utf-8")
    lines = [f"# Whole catalog ({stamp}, {entries} entries, {os.cpu_count()} cores, "
             f"--jobs {args.jobs})", "",
             "| run | wall s | CPU s | entries/s | load before → after | exit |",
             "|---|---|---|---|---|---|"]
    lines += [f"| {name} | {r['wall_s']} | {r['cpu_s']} | {r['entries_per_s']} | "
              f"{r['load_before']} → {r['load_after']} | {r['exit']} |"
              for name, r in rows.items()]
    (ROOT / "bench" / f"{args.out}.md").write_text("\n".join(lines) + "\n", encoding="utf-8")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
