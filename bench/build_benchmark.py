"""Time and memory of the README's build of the shipped catalog, cold and warm.

    python bench/build_benchmark.py            # from the repository root

Runs ``python -m generator build`` twice into a scratch folder: with an empty cache (cold: every
entry checked, every page rendered) and again (warm: every entry from the cache). For each run
it prints the wall-clock seconds, the CPU seconds of the build and all its workers (getrusage
of the children) and the peak of the summed resident memory of the whole process tree (the
build process plus its workers at once, sampled every 0.2 s; what a machine must have). A
measurement, not a test: nothing is asserted, see bench/README.md.
"""

from __future__ import annotations

import argparse
import os
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

from scale_benchmark import TreeSampler  # noqa: E402

SECRET = "build-benchmark-secret-0123456789abcdef"  # at least 32 characters


def timed_build(catalog: Path, out: Path, cache: Path, jobs: int) -> tuple[float, float, float]:
    """Wall seconds, CPU seconds and peak tree memory (MiB) of one build."""
    command = [sys.executable, "-m", "generator", "build", "--catalog", str(catalog),
               "--out", str(out), "--cache-dir", str(cache), "--jobs", str(jobs)]
    env = {**os.environ, "ALMANAC_CACHE_SECRET": SECRET}
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    started = time.perf_counter()
    process = subprocess.Popen(command, cwd=HERE.parent, env=env, stdout=subprocess.DEVNULL,
                               stderr=subprocess.PIPE, text=True)
    sampler = TreeSampler(process.pid, interval=0.2)
    _, err = process.communicate()
    seconds = time.perf_counter() - started
    peak_kb = sampler.stop()
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    if process.returncode != 0:
        raise SystemExit(f"the build failed:\n{err}")
    cpu = (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)
    return seconds, cpu, peak_kb / 1024


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--catalog", type=Path, default=HERE.parent / "catalog")
    parser.add_argument("--jobs", type=int, default=0, help="worker processes (0 = all cores)")
    args = parser.parse_args(argv)
    with tempfile.TemporaryDirectory(prefix="almanac-build-bench-") as scratch:
        out, cache = Path(scratch) / "site", Path(scratch) / "cache"
        print(f"{'run':<6} {'wall s':>8} {'CPU s':>8} {'peak MiB (whole tree)':>22}")
        for run in ("cold", "warm"):
            seconds, cpu, peak = timed_build(args.catalog, out, cache, args.jobs)
            print(f"{run:<6} {seconds:>8.1f} {cpu:>8.1f} {peak:>22.0f}", flush=True)
    return 0


if __name__ == "__main__":
    sys.exit(main())
