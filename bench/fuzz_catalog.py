"""Nightly-scale fuzzing of whole entries and catalog folders (see bench/README.md).

The property tests in tests/test_fuzz.py run a few hundred generated inputs; this script runs
the same generators (tests/_hostile.py) from a seeded random stream at nightly scale —
100,000 entries by default — and reports what happened to each: loaded, refused (by code),
or a *finding* (an exception, a budget stop while loading, a diagnostic outside its file, a
printed line that could forge a CI annotation, a link that was followed). A sample of
entries with claims that overflow floating point (exp(1000), (10**40)**8, ...) also gets the
full check, and any false claim that comes out verified is a finding.

    python bench/fuzz_catalog.py                         # 100,000 entries, 10,000 catalogs
    python bench/fuzz_catalog.py --entries 10000 --catalogs 1000 --claims 100 --seed 7

Findings (with the input that caused each) go to ``--findings`` (default
bench/fuzz-findings/); the summary is printed and written to ``--out`` as JSON.
"""

from __future__ import annotations

import argparse
import json
import random
import statistics
import sys
import tempfile
import time
from collections import Counter
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path[:0] = [str(ROOT), str(ROOT / "tests")]

from _hostile import (  # noqa: E402 - the tests folder is put on the path just above
    OVERFLOW_VALUES,
    SEED_ENTRY,
    SEED_FILE,
    _with_overflowing_claim,
    catalog_outcome,
    entry_outcome,
    hostile_catalog,
    hostile_entry,
)

TRUE_VALUES = {"ricci_scalar": "0", "ricci_squared": "0", "kretschmann": "48*M**2/r**6"}


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--entries", type=int, default=100_000)
    parser.add_argument("--catalogs", type=int, default=None, help="default: entries / 10")
    parser.add_argument("--claims", type=int, default=200,
                        help="entries with overflowing claims given the full check")
    parser.add_argument("--claim-seconds", type=float, default=120.0,
                        help="wall-clock limit of one claim's full check (its own process)")
    parser.add_argument("--seed", type=int, default=20261203)
    parser.add_argument("--out", type=Path, default=ROOT / "bench" / "fuzz-results.json")
    parser.add_argument("--findings", type=Path, default=ROOT / "bench" / "fuzz-findings")
    args = parser.parse_args(argv)
    catalogs = args.entries // 10 if args.catalogs is None else args.catalogs
    rng = random.Random(args.seed)
    summary: dict = {"seed": args.seed}
    phases = (("entries", lambda: run_entries(rng, args.entries, args.findings)),
              ("catalogs", lambda: run_catalogs(rng, catalogs, args.findings)),
              ("claims", lambda: run_claims(rng, args.claims, args.findings,
                                            args.claim_seconds)))
    for name, phase in phases:
        summary[name] = phase()
        args.out.write_text(json.dumps(summary, indent=2) + "\n", encoding="utf-8")
    print(json.dumps(summary, indent=2))
    found = sum(part["findings"] for part in summary.values() if isinstance(part, dict))
    return 1 if found else 0


def _keep(folder: Path, kind: str, index: int, text: str, findings: list[str]) -> None:
    folder.mkdir(parents=True, exist_ok=True)
    (folder / f"{kind}-{index}.txt").write_text("\n".join(findings) + "\n----\n" + text,
                                                encoding="utf-8")


def _timing(seconds: list[float]) -> dict[str, float]:
    if not seconds:
        return {}
    ordered = sorted(seconds)
    return {"total_s": round(sum(seconds), 1), "mean_ms": round(statistics.mean(seconds) * 1e3, 1),
            "p99_ms": round(ordered[int(0.99 * (len(ordered) - 1))] * 1e3, 1),
            "max_ms": round(ordered[-1] * 1e3, 1)}


def run_entries(rng: random.Random, count: int, keep: Path) -> dict:
    outcomes: Counter[str] = Counter()
    seconds: list[float] = []
    findings = 0
    for i in range(count):
        source = hostile_entry(rng)
        start = time.perf_counter()
        label, found = entry_outcome(source)
        seconds.append(time.perf_counter() - start)
        outcomes[label.split(":")[0] if label == "loaded" else label] += 1
        if found:
            findings += 1
            _keep(keep, "entry", i, source, found)
        _progress("entries", i + 1, count)
    return {"inputs": count, "findings": findings, "outcomes": dict(outcomes.most_common(25)),
            "distinct_outcomes": len(outcomes), **_timing(seconds)}


def run_catalogs(rng: random.Random, count: int, keep: Path) -> dict:
    outcomes: Counter[str] = Counter()
    seconds: list[float] = []
    findings = links = 0
    for i in range(count):
        with tempfile.TemporaryDirectory(prefix="almanac-fuzz-") as folder:
            project = Path(folder)
            hostile_catalog(rng, project)
            start = time.perf_counter()
            label, found = catalog_outcome(project)
            seconds.append(time.perf_counter() - start)
        links += int(label.split(", ")[1].split()[0]) if ", " in label else 0
        for code in label.partition("codes ")[2].split(","):
            outcomes[code or "(none)"] += 1
        if found:
            findings += 1
            _keep(keep, "catalog", i, label, found)
        _progress("catalogs", i + 1, count)
    return {"inputs": count, "findings": findings, "links_refused": links,
            "error_codes_seen": dict(outcomes.most_common(30)), **_timing(seconds)}


def run_claims(rng: random.Random, count: int, keep: Path, wall_seconds: float) -> dict:
    """Full checks of entries whose claims overflow floating point. The truth is decided by
    SymPy exactly, for the claims that load: a verified claim that differs from the truth, or
    a refused one that equals it, is counted. Each check runs in its own process, ended after
    ``wall_seconds`` (a check still running then is counted, and is a finding: a hang)."""
    import multiprocessing

    import sympy

    M, r = sympy.symbols("M r", positive=True)
    tally: Counter[str] = Counter()
    seconds: list[float] = []
    findings = 0
    context = multiprocessing.get_context("spawn")
    for i in range(count):
        source = _with_overflowing_claim(rng, SEED_ENTRY)
        claim, value = _the_overflowing_claim(source)
        start = time.perf_counter()
        verdict = _check_in_child(context, source, claim, wall_seconds)
        seconds.append(time.perf_counter() - start)
        if verdict in ("refused while loading", "still running", "no verdict"):
            tally[verdict] += 1
            if verdict == "still running":
                findings += 1
                _keep(keep, "claim", i, source, [f"check still running after {wall_seconds} s"])
            _progress("claims", i + 1, count)
            continue
        accepted = verdict == "verified"
        truth = sympy.simplify(sympy.sympify(value, locals={"M": M, "r": r}) -
                               sympy.sympify(TRUE_VALUES[claim], locals={"M": M, "r": r})) == 0
        tally[f"{'true' if truth else 'false'} claim {verdict}"] += 1
        if accepted and not truth:
            findings += 1
            _keep(keep, "claim", i, source, [f"false claim {claim}: {value} was verified"])
        _progress("claims", i + 1, count)
    return {"inputs": count, "findings": findings, "outcomes": dict(tally), **_timing(seconds),
            "wall_limit_s": wall_seconds, "values": len(OVERFLOW_VALUES)}


def _check_in_child(context, source: str, claim: str, wall_seconds: float) -> str:
    receive, send = context.Pipe(duplex=False)
    child = context.Process(target=_claim_verdict, args=(source, claim, send))
    child.start()
    send.close()
    verdict = receive.recv() if receive.poll(wall_seconds) else "still running"
    if child.is_alive():
        child.kill()
    child.join()
    return verdict


def _claim_verdict(source: str, claim: str, send) -> None:
    """In the child: load and check the entry; send 'verified', 'refused', ... back."""
    from generator.entry.catalog import vocabulary
    from generator.entry.loader import load_text
    from generator.run.tasks import check_within_limits

    load = load_text(source, SEED_FILE, Path(SEED_FILE), vocabulary(ROOT / "catalog"))
    if not load.ok:
        send.send("refused while loading")
        return
    report = check_within_limits([load], 30.0)
    verdicts = [v for v in report.verdicts if v.subject.endswith(claim)]
    if not verdicts:
        send.send("no verdict")
    else:
        send.send("verified" if all(v.ok for v in verdicts) else "refused")


def _the_overflowing_claim(source: str) -> tuple[str, str]:
    for line in source.splitlines():
        stripped = line.strip()
        for value in OVERFLOW_VALUES:
            if stripped.endswith(f": {value}"):
                name = stripped.split(":")[0]
                return ("kretschmann" if name == "value" else name), value
    return "kretschmann", TRUE_VALUES["kretschmann"]


def _progress(what: str, done: int, total: int) -> None:
    if done % max(1, total // 20) == 0 or done == total:
        print(f"{what}: {done}/{total}", file=sys.stderr, flush=True)


if __name__ == "__main__":
    raise SystemExit(main())
