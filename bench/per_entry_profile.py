"""CPU seconds of every catalog entry's full check, split by stage, and each entry's report.

    python bench/per_entry_profile.py --jobs 2 --out per-entry-before --json-dir /tmp/before
    python bench/per_entry_profile.py kerr-newman plebanski-demianski      # chosen entries
    python bench/per_entry_profile.py kerr-newman --profile 30             # cProfile, top 30

Each entry is checked in-process (``check_files`` with ``in_process``: no duplicate search, no
cache) in one of ``--jobs`` forked workers; the CPU seconds of the check (``process_time`` in
the worker, so other sessions' load does not count) and of each stage are measured with timers
wrapped around the stage functions (inclusive times; "other" is the check minus the stages).
Results go to ``bench/<out>.json`` and ``.md``: a table sorted by CPU seconds, the catalog total
and the total per stage. ``--json-dir`` writes each entry's ``check --json`` document (timings
removed) for ``bench/compare_reports.py``. ``--profile N`` runs cProfile over the chosen entries
in this process and prints the N functions with the most cumulative and own time.

A measurement, not a test: nothing is asserted (see bench/README.md).
"""

from __future__ import annotations

import argparse
import cProfile
import functools
import importlib
import json
import multiprocessing
import pstats
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "bench"))

from heavy_entries import WARM_UP, check_one, entry_path, without_timings  # noqa: E402

from generator.site.export import check_document  # noqa: E402

# (module, function name, stage label): the call sites the pipeline looks the stages up in.
STAGES = (
    ("generator.run.tasks", "load_all", "load"),
    ("generator.physics.verify", "check_signature", "signature"),
    ("generator.physics.verify", "compute_geometry_and_weyl", "geometry"),
    ("generator.physics.verify", "check_scalar_claims", "scalar claims"),
    ("generator.physics.classify", "entry_points", "sample points"),
    ("generator.physics.classify", "classify_matter", "matter"),
    ("generator.physics.classify", "stress_energy_physics", "HE type & energy conditions"),
    ("generator.physics.classify", "petrov_type", "Petrov"),
    ("generator.physics.classify", "check_killing_vector", "Killing claims"),
    ("generator.physics.classify", "check_all_related", "chart maps"),
    ("generator.physics.classify", "check_all_limits", "limits"),
    ("generator.physics.classify", "physical_data", "physical data"),
    ("generator.physics.classify", "check_physical_claims", "physical claims"),
    ("generator.physics.classify", "weyl_frame", "Weyl frame"),
    ("generator.physics.classify", "symmetry", "symmetry"),
    ("generator.physics.classify", "geodesic_equations", "geodesics"),
    ("generator.physics.verify", "label_verdicts", "label verdicts"),
)
LABELS = tuple(dict.fromkeys(label for _, _, label in STAGES))
_SPENT: dict[str, float] = {}
_DEPTH = [0]


def _timed(label: str, function):
    """``function`` with its CPU seconds added to ``_SPENT[label]`` (outermost calls only, so
    a stage calling another stage's function is not counted twice)."""
    @functools.wraps(function)
    def wrapper(*args, **kwargs):
        if _DEPTH[0]:
            return function(*args, **kwargs)
        _DEPTH[0] += 1
        started = time.process_time()
        try:
            return function(*args, **kwargs)
        finally:
            _DEPTH[0] -= 1
            _SPENT[label] = _SPENT.get(label, 0.0) + time.process_time() - started
    return wrapper


def install_timers() -> None:
    for module_name, name, label in STAGES:
        module = importlib.import_module(module_name)
        setattr(module, name, _timed(label, getattr(module, name)))


def measure(path: Path, seed: int, seconds: float, json_dir: Path | None) -> dict:
    """One entry's check in this process: CPU seconds in all and per stage."""
    _SPENT.clear()
    _, cpu, reports = check_one(path, seed, seconds)
    if json_dir is not None:
        document = without_timings(check_document(reports))
        (json_dir / (path.stem + ".json")).write_text(
            json.dumps(document, indent=2, sort_keys=True) + "\n", encoding="utf-8")
    stages = {label: round(value, 3) for label, value in _SPENT.items()}
    stages["other"] = round(cpu - sum(_SPENT.values()), 3)
    return {"entry": path.stem, "cpu_s": round(cpu, 3), "ok": all(r.ok for r in reports),
            "stages": stages}


def _worker_measure(job: tuple[Path, int, float, Path | None]) -> dict:
    return measure(*job)


def _warm_up(seed: int) -> None:
    warm = entry_path(WARM_UP)
    if warm is not None:
        check_one(warm, seed)


def write_tables(rows: list[dict], out: str, jobs: int) -> None:
    rows = sorted(rows, key=lambda r: (-r["cpu_s"], r["entry"]))
    total = sum(r["cpu_s"] for r in rows)
    per_stage = {label: round(sum(r["stages"].get(label, 0.0) for r in rows), 2)
                 for label in (*LABELS, "other")}
    stamp = time.strftime("%Y-%m-%d %H:%M UTC", time.gmtime())
    results = {"measured": stamp, "jobs": jobs, "entries": len(rows),
               "total_cpu_s": round(total, 2), "per_stage_cpu_s": per_stage, "rows": rows}
    (ROOT / "bench" / f"{out}.json").write_text(json.dumps(results, indent=2) + "\n",
                                                encoding="utf-8")
    shown = [label for label, value in sorted(per_stage.items(), key=lambda kv: -kv[1])
             if value >= 0.5]
    lines = [f"# CPU seconds per entry and stage ({stamp}, {len(rows)} entries, "
             f"{jobs} worker(s))", "", f"Total: {total:.1f} CPU s.", "",
             "| stage | CPU s | share |", "|---|---|---|"]
    lines += [f"| {label} | {per_stage[label]:.1f} | {100 * per_stage[label] / total:.0f} % |"
              for label in shown] if total else []
    lines += ["", "| entry | CPU s | " + " | ".join(shown) + " | verdict |",
              "|---|---|" + "---|" * len(shown) + "---|"]
    for r in rows:
        cells = " | ".join(f"{r['stages'].get(label, 0.0):.2f}" for label in shown)
        lines.append(f"| {r['entry']} | {r['cpu_s']:.2f} | {cells} | "
                     f"{'ok' if r['ok'] else 'fails'} |")
    (ROOT / "bench" / f"{out}.md").write_text("\n".join(lines) + "\n", encoding="utf-8")


def profile(paths: list[Path], seed: int, seconds: float, top: int) -> None:
    _warm_up(seed)
    profiler = cProfile.Profile()
    profiler.enable()
    for path in paths:
        check_one(path, seed, seconds)
    profiler.disable()
    stats = pstats.Stats(profiler, stream=sys.stdout)
    stats.sort_stats("cumulative").print_stats(top)
    stats.sort_stats("tottime").print_stats(top)


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("entries", nargs="*", help="entry files or ids (default: the catalog)")
    parser.add_argument("--jobs", type=int, default=1)
    parser.add_argument("--seed", type=int, default=1)
    parser.add_argument("--seconds", type=float, default=600.0, help="budget per entry (wall "
                        "seconds; generous, so that the load does not change outcomes)")
    parser.add_argument("--json-dir", type=Path, default=None)
    parser.add_argument("--out", default="per-entry-profile")
    parser.add_argument("--profile", type=int, default=0, metavar="N")
    args = parser.parse_args(argv)
    if args.entries:
        paths = [entry_path(e) for e in args.entries]
        paths = [p for p in paths if p is not None and p.exists()]
    else:
        paths = sorted((ROOT / "catalog").glob("*/*.yaml"))
        paths = [p for p in paths if not p.name.startswith(("families", "tags"))]
    if args.profile:
        profile(paths, args.seed, args.seconds, args.profile)
        return 0
    if args.json_dir is not None:
        args.json_dir.mkdir(parents=True, exist_ok=True)
    install_timers()
    _warm_up(args.seed)
    jobs = [(p, args.seed, args.seconds, args.json_dir) for p in paths]
    rows = []
    context = multiprocessing.get_context("fork")
    with context.Pool(max(1, args.jobs)) as pool:
        for row in pool.imap_unordered(_worker_measure, jobs):
            rows.append(row)
            print(f"{row['entry']:50s} {row['cpu_s']:8.2f} s  "
                  f"{'ok' if row['ok'] else 'FAILS'}", flush=True)
    write_tables(rows, args.out, args.jobs)
    print(f"total {sum(r['cpu_s'] for r in rows):.1f} CPU s over {len(rows)} entries")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
