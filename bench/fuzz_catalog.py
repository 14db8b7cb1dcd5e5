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
    parser.add_argument("--seed", type=int, default=20261203)
    parser.add_argument("--out", type=Path, default=ROOT / "bench" / "fuzz-results.json")
    parser.add_argument("--findings", type=Path, default=ROOT / "bench" / "fuzz-findings")
    args = parser.parse_args(argv)
    catalogs = args.entries // 10 if args.catalogs is None else args.catalogs
    rng = random.Random(args.seed)
    summary = {
        "seed": args.seed,
        "entries": run_entries(rng, args.entries, args.findings),
        "catalogs": run_catalogs(rng, catalogs, args.findings),
        "claims": run_claims(rng, args.claims, args.findings),
    }
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


def run_claims(rng: random.Random, count: int, keep: Path) -> dict:
    """Full checks of entries whose claims overflow floating point. The truth is decided by
    SymPy exactly, for the claims that load: a verified claim that differs from the truth, or
    a refused one that equals it, is counted."""
    import sympy

    from generator.entry.catalog import vocabulary
    from generator.entry.loader import load_text
    from generator.run.tasks import check_within_limits

    words = vocabulary(ROOT / "catalog")
    M, r = sympy.symbols("M r", positive=True)
    tally: Counter[str] = Counter()
    seconds: list[float] = []
    findings = 0
    for i in range(count):
        source = _with_overflowing_claim(rng, SEED_ENTRY)
        load = load_text(source, SEED_FILE, Path(SEED_FILE), words)
        claim, value = _the_overflowing_claim(source)
        if not load.ok:
            tally["refused while loading"] += 1
            continue
        start = time.perf_counter()
        report = check_within_limits([load], 60.0)
        seconds.append(time.perf_counter() - start)
        verdicts = [v for v in report.verdicts if v.subject.endswith(claim)]
        accepted = bool(verdicts) and all(v.ok for v in verdicts)
        truth = sympy.simplify(sympy.sympify(value, locals={"M": M, "r": r}) -
                               sympy.sympify(TRUE_VALUES[claim], locals={"M": M, "r": r})) == 0
        tally[f"{'true' if truth else 'false'} claim {'verified' if accepted else 'refused'}"] += 1
        if accepted and not truth:
            findings += 1
            _keep(keep, "claim", i, source, [f"false claim {claim}: {value} was verified"])
        _progress("claims", i + 1, count)
    return {"inputs": count, "findings": findings, "outcomes": dict(tally), **_timing(seconds),
            "values": len(OVERFLOW_VALUES)}


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
