"""Time five published metrics: our geometry engine, our full check, and textbook SymPy.

Run from the repository root:

    python bench/benchmark.py              # cap the textbook reference at 120 s per metric
    python bench/benchmark.py --cap 900    # a longer cap, for a tighter lower bound on ratios

Three measurements per metric, in one run:

* "geometry": what ``generator.geometry.curvature.compute_geometry`` returns (inverse metric,
  Christoffel symbols, Riemann, Ricci, scalar, Einstein, Weyl, the invariants R_abcd R^abcd,
  R_ab R^ab, C_abcd C^abcd in display form), best of several in-process runs;
* "full check": what ``check`` does for the metric's catalog entry — load and validate the
  entry (and the catalog around it, for cross-references), signature, geometry, every claim,
  matter content, Hawking–Ellis type, energy conditions, Petrov type, Killing vectors and chart
  maps — timed in-process in a fresh interpreter (imports excluded), and as a whole process
  (``python -m generator check FILE --no-cache``, interpreter start included); medians of three;
* the textbook reference: the same geometry with the loops of a first course and ``simplify``
  on every component, in a child process stopped at the cap (then shown as "> cap", and the
  ratios are lower bounds).

No numbers are asserted anywhere: this is a measurement, see bench/README.md.
"""

from __future__ import annotations

import argparse
import multiprocessing
import os
import resource
import statistics
import subprocess
import sys
import time
from collections.abc import Callable
from pathlib import Path

import sympy as sp

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT / "tests"))  # the published test metrics live in one place
sys.path.insert(0, str(ROOT))

from _known_metrics import (  # noqa: E402
    flrw_flat,
    kerr,
    kerr_de_sitter,
    kerr_newman,
    schwarzschild,
)

from generator.geometry.curvature import compute_geometry  # noqa: E402
from generator.model import Spacetime  # noqa: E402
from generator.run.pipeline import RunOptions, check_files  # noqa: E402

METRICS: dict[str, Callable[[], Spacetime]] = {
    "Schwarzschild": schwarzschild,
    "Kerr": kerr,
    "Kerr–Newman": kerr_newman,
    "Kerr–de Sitter": kerr_de_sitter,
    "flat FLRW a(t)": flrw_flat,
}
# The catalog entry of each metric, for the full check.
ENTRIES: dict[str, str] = {
    "Schwarzschild": "catalog/isolated-objects/schwarzschild.yaml",
    "Kerr": "catalog/isolated-objects/kerr-boyer-lindquist.yaml",
    "Kerr–Newman": "catalog/isolated-objects/kerr-newman.yaml",
    "Kerr–de Sitter": "catalog/isolated-objects/kerr-de-sitter.yaml",
    "flat FLRW a(t)": "catalog/universes/flrw-flat.yaml",
}
FULL_CHECK_RUNS = 3


# ---------------------------------------------------------------------------- textbook SymPy


def textbook_geometry(st: Spacetime) -> dict[str, object]:
    """The first-course algorithm: every index combination, ``simplify`` on every component."""
    n, x, g = st.dimension, st.coordinates, sp.Matrix(st.metric)
    ginv = sp.simplify(g.inv())
    rng = range(n)
    gamma = [
        [
            [
                sp.simplify(
                    sum(
                        ginv[a, d]
                        * (sp.diff(g[d, c], x[b]) + sp.diff(g[d, b], x[c]) - sp.diff(g[b, c], x[d]))
                        for d in rng
                    )
                    / 2
                )
                for c in rng
            ]
            for b in rng
        ]
        for a in rng
    ]
    riemann = [
        [
            [
                [
                    sp.simplify(
                        sp.diff(gamma[a][d][b], x[c])
                        - sp.diff(gamma[a][c][b], x[d])
                        + sum(
                            gamma[a][c][e] * gamma[e][d][b] - gamma[a][d][e] * gamma[e][c][b]
                            for e in rng
                        )
                    )
                    for d in rng
                ]
                for c in rng
            ]
            for b in rng
        ]
        for a in rng
    ]
    ricci = sp.Matrix(n, n, lambda b, d: sp.simplify(sum(riemann[a][b][a][d] for a in rng)))
    scalar = sp.simplify(sum(ginv[b, d] * ricci[b, d] for b in rng for d in rng))
    einstein = sp.Matrix(n, n, lambda a, b: sp.simplify(ricci[a, b] - scalar * g[a, b] / 2))
    mixed = sp.Matrix(n, n, lambda a, b: sp.simplify(sum(ginv[a, c] * einstein[c, b] for c in rng)))
    lower = {
        (a, b, c, d): sp.simplify(sum(g[a, e] * riemann[e][b][c][d] for e in rng))
        for a in rng
        for b in rng
        for c in rng
        for d in rng
    }
    upper = raise_all(lower, ginv, n)
    kretschmann = sp.simplify(sum(lower[k] * upper[k] for k in lower))
    ricci_up = sp.simplify(ginv * ricci * ginv)
    ricci_squared = sp.simplify(sum(ricci[a, b] * ricci_up[a, b] for a in rng for b in rng))
    weyl = {}
    for (a, b, c, d), value in lower.items():
        weyl[a, b, c, d] = sp.simplify(
            value
            - (
                g[a, c] * ricci[b, d]
                - g[a, d] * ricci[b, c]
                - g[b, c] * ricci[a, d]
                + g[b, d] * ricci[a, c]
            )
            / (n - 2)
            + scalar * (g[a, c] * g[b, d] - g[a, d] * g[b, c]) / ((n - 1) * (n - 2))
        )
    weyl_upper = raise_all(weyl, ginv, n)
    weyl_squared = sp.simplify(sum(weyl[k] * weyl_upper[k] for k in weyl))
    return {
        "R": scalar,
        "K": kretschmann,
        "Ric2": ricci_squared,
        "mixed": mixed,
        "C2": weyl_squared,
    }


def raise_all(lower: dict, ginv: sp.Matrix, n: int) -> dict:
    """X^abcd = g^ae g^bf g^ch g^dk X_efhk, simplified component by component."""
    rng = range(n)
    return {
        (a, b, c, d): sp.simplify(
            sum(
                ginv[a, e] * ginv[b, f] * ginv[c, h] * ginv[d, k] * lower[e, f, h, k]
                for e in rng
                for f in rng
                for h in rng
                for k in rng
            )
        )
        for a in rng
        for b in rng
        for c in rng
        for d in rng
    }


def _textbook_child(name: str) -> None:
    textbook_geometry(METRICS[name]())


def time_textbook(name: str, cap: float) -> tuple[float, bool]:
    """CPU seconds used by the reference in a child process, and whether the cap stopped it
    (then the seconds are a lower bound). The cap is on the child's CPU time, read from
    /proc where available, so a busy shared machine does not shrink it; the wall clock is
    bounded too (ten times the cap)."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    child = multiprocessing.Process(target=_textbook_child, args=(name,), daemon=True)
    child.start()
    started = time.monotonic()
    capped = False
    while child.is_alive():
        child.join(0.5)
        used = _cpu_of(child.pid)
        if (used if used is not None else time.monotonic() - started) >= cap or (
            time.monotonic() - started >= 10 * cap
        ):
            capped = child.is_alive()
            break
    if capped:
        child.terminate()
    child.join()
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    cpu = (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)
    return cpu, capped


def _cpu_of(pid: int | None) -> float | None:
    """User + system CPU seconds of a running process (Linux /proc), None elsewhere."""
    try:
        fields = Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()
    except (OSError, IndexError):
        return None
    ticks = os.sysconf("SC_CLK_TCK")
    return (int(fields[11]) + int(fields[12])) / ticks


# ---------------------------------------------------------------------------- our engine


def time_engine(name: str, repeats: int) -> tuple[float, float, str]:
    """Best CPU and wall seconds of ``repeats`` in-process runs (a fresh Spacetime each)."""
    best_cpu = best_wall = float("inf")
    engine = ""
    for _ in range(repeats):
        st = METRICS[name]()
        wall, cpu = time.perf_counter(), time.process_time()
        geometry = compute_geometry(st)
        best_cpu = min(best_cpu, time.process_time() - cpu)
        best_wall = min(best_wall, time.perf_counter() - wall)
        engine = geometry.engine
    return best_cpu, best_wall, engine


def _full_check_child(entry: str, results: multiprocessing.Queue) -> None:
    """One in-process full check in a fresh interpreter: nothing warmed, imports not timed."""
    started = time.perf_counter()
    reports = check_files([ROOT / entry], ROOT / "catalog", ROOT, RunOptions(jobs=1))
    results.put((time.perf_counter() - started, all(r.ok for r in reports)))


def time_full_check(name: str) -> tuple[float, float]:
    """Median wall seconds of the full check in-process and as a whole process."""
    inside, whole = [], []
    context = multiprocessing.get_context("spawn")
    for _ in range(FULL_CHECK_RUNS):
        results = context.Queue()
        child = context.Process(target=_full_check_child, args=(ENTRIES[name], results))
        child.start()
        seconds, ok = results.get()
        child.join()
        if not ok:
            raise SystemExit(f"{ENTRIES[name]} does not verify; fix it before benchmarking")
        inside.append(seconds)
        started = time.perf_counter()
        subprocess.run([sys.executable, "-m", "generator", "check", ENTRIES[name], "--no-cache"],
                       cwd=ROOT, check=True, capture_output=True)
        whole.append(time.perf_counter() - started)
    return statistics.median(inside), statistics.median(whole)


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument(
        "--cap",
        type=float,
        default=120.0,
        help="CPU seconds allowed to the textbook reference per metric",
    )
    parser.add_argument("--repeats", type=int, default=5, help="engine runs per metric (best)")
    parser.add_argument("--only", nargs="*", default=None, help="metric names to run")
    args = parser.parse_args(argv)
    names = [n for n in METRICS if args.only is None or n in args.only]
    compute_geometry(METRICS["Schwarzschild"]())  # warm imports and SymPy's caches once
    print("geometry: CPU seconds, best of the repeats (wall-clock in brackets); full check: "
          "wall seconds, median of 3")
    print(f"{'metric':<16} {'geometry':>20} {'full check':>11} {'process':>9} "
          f"{'textbook SymPy':>16} {'ratio geom.':>12} {'ratio check':>12}")
    for name in names:
        cpu, wall, _engine = time_engine(name, args.repeats)
        inside, whole = time_full_check(name)
        reference, capped = time_textbook(name, args.cap)
        prefix = "> " if capped else ""
        shown = f"{prefix}{reference:.1f} s"
        print(
            f"{name:<16} {cpu:>7.3f} s ({wall:.3f} s) {inside:>9.2f} s {whole:>7.2f} s "
            f"{shown:>16} {prefix}{reference / cpu:>8.0f}x {prefix}{reference / inside:>8.0f}x",
            flush=True,
        )
    return 0


if __name__ == "__main__":
    sys.exit(main())
