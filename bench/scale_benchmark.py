"""How `check` scales with the size of the catalog: cold, warm and one-entry-changed builds.

    python bench/scale_benchmark.py --sizes 25,50,100,200,400 --work /tmp/almanac-scale

For each size N it copies the first N entries of a synthetic catalog (bench/synthetic.py) into
a catalog of their own and times `python -m generator check` there three times: with an empty
cache (cold), again (warm: everything cached), and after editing one entry (one changed). A
least-squares line t = a + b·N per series gives the fixed cost a (interpreter start, imports,
vocabularies) and the per-entry cost b; linear growth means b measured on the small sizes
predicts the large ones. Peak memory comes from getrusage in a wrapper process around the build
(RUSAGE_SELF: the main process; RUSAGE_CHILDREN: the largest single worker process) and from
sampling the resident memory of the whole process tree (main process plus all workers at once,
which is what a machine must have). Results are appended to a JSON file as they come, so an
interrupted run keeps what it measured.
"""

from __future__ import annotations

import argparse
import json
import os
import resource
import shutil
import subprocess
import sys
import threading
import time
from dataclasses import asdict, dataclass
from pathlib import Path

HERE = Path(__file__).resolve().parent
PROJECT = HERE.parent
SECRET = "scale-benchmark-secret"
PAGE_KB = os.sysconf("SC_PAGE_SIZE") // 1024


@dataclass(frozen=True)
class Measurement:
    size: int
    kind: str  # cold | warm | one-changed
    seconds: float  # wall clock, interpreter start included
    cpu_seconds: float  # user + system time of the build process and all its workers
    verified: int
    failed: int
    main_peak_mb: float  # RUSAGE_SELF maxrss of the build process
    worker_peak_mb: float  # RUSAGE_CHILDREN maxrss: the largest single worker
    tree_peak_mb: float  # sampled peak of the summed RSS of the whole process tree


# ---------------------------------------------------------------------------- the wrapper process


def probe(arguments: list[str]) -> int:
    """Run the CLI in this process, then print its rusage peaks as one JSON line on stderr."""
    from generator.cli import main

    status = main(arguments)
    own = resource.getrusage(resource.RUSAGE_SELF)
    children = resource.getrusage(resource.RUSAGE_CHILDREN)
    cpu = own.ru_utime + own.ru_stime + children.ru_utime + children.ru_stime
    peaks = {"self_kb": own.ru_maxrss, "children_kb": children.ru_maxrss, "cpu": cpu}
    print("PEAKS " + json.dumps(peaks), file=sys.stderr)
    return status


# ---------------------------------------------------------------------------- memory of a tree


def _tree_rss_kb(root: int) -> int:
    """Summed resident memory of ``root`` and all its descendants (Linux /proc)."""
    parents: dict[int, int] = {}
    rss: dict[int, int] = {}
    for entry in os.listdir("/proc"):
        if not entry.isdigit():
            continue
        try:
            fields = Path(f"/proc/{entry}/stat").read_text().rsplit(")", 1)[1].split()
            statm = Path(f"/proc/{entry}/statm").read_text().split()
        except OSError:
            continue
        parents[int(entry)] = int(fields[1])
        rss[int(entry)] = int(statm[1]) * PAGE_KB
    tree, frontier = {root}, [root]
    while frontier:
        pid = frontier.pop()
        children = [p for p, parent in parents.items() if parent == pid and p not in tree]
        tree.update(children)
        frontier += children
    return sum(rss.get(p, 0) for p in tree)


class TreeSampler:
    """Samples the process tree's summed RSS every ``interval`` seconds in a thread."""

    def __init__(self, pid: int, interval: float = 0.5) -> None:
        self.pid, self.interval, self.peak_kb = pid, interval, 0
        self._stop = threading.Event()
        self._thread = threading.Thread(target=self._run, daemon=True)
        self._thread.start()

    def _run(self) -> None:
        while not self._stop.is_set():
            self.peak_kb = max(self.peak_kb, _tree_rss_kb(self.pid))
            self._stop.wait(self.interval)

    def stop(self) -> int:
        self._stop.set()
        self._thread.join()
        return self.peak_kb


# ---------------------------------------------------------------------------- one timed build


def timed_check(folder: Path, size: int, kind: str, jobs: int) -> Measurement:
    command = [sys.executable, str(Path(__file__).resolve()), "--probe", "--", "check",
               "catalog", "--json", "--cache-dir", "cache", "--jobs", str(jobs)]
    env = {**os.environ, "ALMANAC_CACHE_SECRET": SECRET}
    started = time.perf_counter()
    process = subprocess.Popen(command, cwd=folder, env=env, stdout=subprocess.PIPE,
                               stderr=subprocess.PIPE, text=True)
    sampler = TreeSampler(process.pid)
    out, err = process.communicate()
    seconds = time.perf_counter() - started
    tree_kb = sampler.stop()
    peaks = json.loads(next(line for line in err.splitlines() if line.startswith("PEAKS "))[6:])
    entries = json.loads(out)["entries"]
    verified = sum(e["ok"] for e in entries)
    return Measurement(size, kind, round(seconds, 2), round(peaks["cpu"], 2), verified,
                       len(entries) - verified, round(peaks["self_kb"] / 1024, 1),
                       round(peaks["children_kb"] / 1024, 1), round(tree_kb / 1024, 1))


def catalog_of(source: Path, files: list[Path], folder: Path) -> None:
    """A catalog holding exactly ``files`` (copied), with the vocabularies."""
    if folder.exists():
        shutil.rmtree(folder)
    root = folder / "catalog"
    root.mkdir(parents=True)
    for name in ("tags.yaml", "families.yaml"):
        shutil.copy(source / name, root / name)
    for path in files:
        target = root / path.relative_to(source)
        target.parent.mkdir(exist_ok=True)
        shutil.copy(path, target)


def change_one_entry(folder: Path, first: Path, source: Path) -> None:
    """Edit the summary of one entry: new bytes, so exactly that entry must be recomputed."""
    path = folder / "catalog" / first.relative_to(source)
    text = path.read_text(encoding="utf-8")
    path.write_text(text.replace("summary: ", "summary: Edited. ", 1), encoding="utf-8")


def measure_size(source: Path, files: list[Path], size: int, work: Path, jobs: int
                 ) -> list[Measurement]:
    folder = work / f"n{size:04d}"
    catalog_of(source, files[:size], folder)
    results = [timed_check(folder, size, "cold", jobs), timed_check(folder, size, "warm", jobs)]
    change_one_entry(folder, files[0], source)
    results.append(timed_check(folder, size, "one-changed", jobs))
    return results


# ---------------------------------------------------------------------------- the summary


def fit_line(points: list[tuple[int, float]]) -> tuple[float, float, float]:
    """Least squares t = a + b·N; returns (a, b, r²)."""
    n = len(points)
    mean_x = sum(x for x, _ in points) / n
    mean_y = sum(y for _, y in points) / n
    sxx = sum((x - mean_x) ** 2 for x, _ in points)
    sxy = sum((x - mean_x) * (y - mean_y) for x, y in points)
    b = sxy / sxx if sxx else 0.0
    a = mean_y - b * mean_x
    total = sum((y - mean_y) ** 2 for _, y in points)
    residual = sum((y - a - b * x) ** 2 for x, y in points)
    return a, b, (1 - residual / total) if total else 1.0


def summary(measurements: list[Measurement]) -> str:
    sizes = sorted({m.size for m in measurements})
    by = {(m.size, m.kind): m for m in measurements}
    kinds = ("cold", "warm", "one-changed")
    lines = ["| entries | cold CPU s (wall) | warm CPU s (wall) | one changed CPU s (wall) "
             "| cold CPU s/entry | verified |", "| ---: | ---: | ---: | ---: | ---: | ---: |"]
    for n in sizes:
        cells = [f"{by[(n, k)].cpu_seconds:.1f} ({by[(n, k)].seconds:.0f})" if (n, k) in by
                 else "–" for k in kinds]
        cold = by.get((n, "cold"))
        per = f"{cold.cpu_seconds / n:.2f}" if cold else "–"
        verified = f"{cold.verified}/{n}" if cold else "–"
        lines.append(f"| {n} | {' | '.join(cells)} | {per} | {verified} |")
    lines.append("")
    for kind in kinds:
        for label, field in (("CPU", "cpu_seconds"), ("wall", "seconds")):
            points = [(m.size, getattr(m, field)) for m in measurements if m.kind == kind]
            if len(points) >= 2:
                a, b, r2 = fit_line(points)
                lines.append(f"- {kind}, {label}: t ≈ {a:.1f} s + {b:.3f} s × N "
                             f"(r² = {r2:.3f})")
    worst = max(measurements, key=lambda m: m.tree_peak_mb)
    lines.append(f"- peak memory ({worst.kind}, N = {worst.size}): main process "
                 f"{worst.main_peak_mb} MB, largest worker {worst.worker_peak_mb} MB, "
                 f"whole process tree {worst.tree_peak_mb} MB")
    return "\n".join(lines)


def main(argv: list[str] | None = None) -> int:
    argv = list(sys.argv[1:] if argv is None else argv)
    if argv[:2] == ["--probe", "--"]:
        return probe(argv[2:])
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--sizes", default="25,50,100,200,400")
    parser.add_argument("--jobs", type=int, default=0, help="worker processes (0 = all cores)")
    parser.add_argument("--work", type=Path, default=Path("/tmp/almanac-scale"))
    parser.add_argument("--results", type=Path, default=HERE / "scale-results.json")
    args = parser.parse_args(argv)
    sizes = sorted(int(s) for s in args.sizes.split(","))
    sys.path.insert(0, str(HERE))
    from synthetic import read_templates, write_catalog

    files = write_catalog(args.work / "source", max(sizes), read_templates())
    source = args.work / "source" / "catalog"
    measurements: list[Measurement] = []
    for size in sizes:
        for m in measure_size(source, files, size, args.work, args.jobs):
            measurements.append(m)
            print(json.dumps(asdict(m)), flush=True)
            args.results.write_text(json.dumps([asdict(x) for x in measurements], indent=1))
    print(summary(measurements))
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
