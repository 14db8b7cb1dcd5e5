"""Mutation score of `check`: corrupt every shipped entry in many ways; every mutant must fail.

Verification that accepts a wrong claim is worse than none, so each entry of the catalog is
mutated — each scalar claim scaled by 8/7 and shifted by a 1/x term, a sign in the metric, each
matter field, each Killing vector, each chart-map component, the Petrov type, the energy
conditions — and the mutated YAML is checked through the in-process API
(`generator.physics.verify.check_loaded`). A mutant that still passes is a *survivor*: a hole in the
verification, printed with what was changed.

The unmutated entry is first written back through the same YAML round trip and must pass (the
control), so a kill is never caused by the round trip itself. Mutants that leave the metric
alone reuse the control's geometry, which keeps the run short.

    python bench/mutation_score.py [catalog/isolated-objects/schwarzschild.yaml ...] [--json]

With ``--code`` it mutates the verification code instead of the entries: every comparison
of the equality decision (``generator/geometry/equality.py``, ``canonicity.py``,
``tracked.py``, ``decisions.py``) is flipped, every ``and``/``or`` swapped, every ``not``
dropped and every returned True/False inverted, one at a time, in a copy of the project; the
soundness and equality tests then run against the copy. A mutant the tests do not notice is a
survivor: a comparison whose breaking no test would see.

    python bench/mutation_score.py --code [--limit N] [--json]
"""

from __future__ import annotations

import argparse
import ast
import copy
import json
import os
import random
import shutil
import subprocess
import sys
import tempfile
from collections.abc import Callable, Iterator
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import yaml

PROJECT = Path(__file__).resolve().parents[1]
if str(PROJECT) not in sys.path:
    sys.path.insert(0, str(PROJECT))

from generator.entry.catalog import entry_files, load_all, vocabulary  # noqa: E402
from generator.entry.loader import LoadResult, load_entry  # noqa: E402
from generator.geometry.curvature import Limits, compute_geometry_and_weyl  # noqa: E402
from generator.model import EntryReport  # noqa: E402
from generator.physics import verify  # noqa: E402

SCALARS = ("ricci_scalar", "kretschmann", "ricci_squared", "weyl_squared")
OTHER_PETROV = {"I": "II", "II": "D", "D": "II", "III": "N", "N": "III", "O": "N"}
OTHER_CONDITION = {"holds": "violated", "violated": "holds", "undecided": "holds"}
MATTER_FIELDS = ("cosmological_constant", "density", "pressure")
MATTER_MAPS = ("potential", "velocity", "null_direction", "principal_pressures")
SECONDS = 600.0

Data = dict[str, Any]


@dataclass(frozen=True)
class Mutant:
    entry: str
    change: str  # what was changed, e.g. "claims.kretschmann x 8/7"
    data: Data
    touches_metric: bool = False


@dataclass(frozen=True)
class Outcome:
    mutant: Mutant
    killed: bool
    reason: str  # first error diagnostic, or "" for a survivor


# ---------------------------------------------------------------------------- mutations


def scaled(value: Any) -> str:
    return f"({value})*8/7"


def shifted(value: Any, coordinate: str) -> str:
    return f"({value}) + 1/{coordinate}"


def spatial_coordinate(data: Data) -> str:
    """A coordinate for 1/x-like terms: the second one (r, x, ...) is rarely a time."""
    coordinates = data["coordinates"]
    return coordinates[1] if len(coordinates) > 1 else coordinates[0]


def _claim_value(claim: Any) -> Any:
    return claim["value"] if isinstance(claim, dict) else claim


def _set_claim(data: Data, name: str, value: str) -> None:
    claim = data["claims"][name]
    if isinstance(claim, dict):
        claim["value"] = value
    else:
        data["claims"][name] = value


def mutants_of(entry_id: str, data: Data) -> list[Mutant]:
    """Every mutation of one entry's plain YAML data."""
    makers: list[Callable[[Data], Iterator[tuple[str, Data, bool]]]] = [
        _scalar_mutants, _metric_mutants, _matter_mutants, _killing_mutants, _map_mutants,
        _label_mutants,
    ]
    out = []
    for make in makers:
        for change, mutated, touches_metric in make(data):
            out.append(Mutant(entry_id, change, mutated, touches_metric))
    return out


def _copy_with(data: Data, edit: Callable[[Data], None]) -> Data:
    mutated = copy.deepcopy(data)
    edit(mutated)
    return mutated


def _scalar_mutants(data: Data) -> Iterator[tuple[str, Data, bool]]:
    x = spatial_coordinate(data)
    for name in SCALARS:
        if name not in data.get("claims", {}):
            continue
        value = _claim_value(data["claims"][name])
        if str(value).strip() not in ("0", "0.0"):  # 0 * 8/7 = 0 would be no mutation
            yield (f"claims.{name} x 8/7",
                   _copy_with(data, lambda d, n=name, v=value: _set_claim(d, n, scaled(v))),
                   False)
        yield (f"claims.{name} + 1/{x}",
               _copy_with(data, lambda d, n=name, v=value: _set_claim(d, n, shifted(v, x))),
               False)


def _metric_mutants(data: Data) -> Iterator[tuple[str, Data, bool]]:
    metric = data["metric"]
    if "line_element" in metric:
        text = str(metric["line_element"]).strip()
        flipped = text[1:] if text.startswith("-") else "-" + text
        yield ("metric: sign of the first term",
               _copy_with(data, lambda d: d["metric"].__setitem__("line_element", flipped)),
               True)
        return
    for key, value in metric.get("components", {}).items():
        a, b = key.split()
        kind = "diagonal" if a == b else "off-diagonal"
        yield (f"metric: sign of {kind} component '{key}'",
               _copy_with(data, lambda d, k=key, v=value:
                          d["metric"]["components"].__setitem__(k, f"-({v})")),
               True)


def _matter_mutants(data: Data) -> Iterator[tuple[str, Data, bool]]:
    matter = data.get("matter", {})
    x = spatial_coordinate(data)
    for name in MATTER_FIELDS:
        if name in matter and str(matter[name]).strip() != "0":
            yield (f"matter.{name} x 8/7",
                   _copy_with(data, lambda d, n=name: d["matter"].__setitem__(
                       n, scaled(d["matter"][n]))), False)
    for name in MATTER_MAPS:
        for key, value in (matter.get(name) or {}).items():
            if str(value).strip() == "0":
                yield (f"matter.{name}.{key} + 1/{x}",
                       _copy_with(data, lambda d, n=name, k=key, v=value:
                                  d["matter"][n].__setitem__(k, shifted(v, x))), False)
            else:
                yield (f"matter.{name}.{key} x 8/7",
                       _copy_with(data, lambda d, n=name, k=key, v=value:
                                  d["matter"][n].__setitem__(k, scaled(v))), False)


def _killing_mutants(data: Data) -> Iterator[tuple[str, Data, bool]]:
    x = spatial_coordinate(data)
    for i, vector in enumerate(data.get("claims", {}).get("killing_vectors", []) or []):
        first = next(iter(vector))
        yield (f"claims.killing_vectors.{i}.{first} x {x}",
               _copy_with(data, lambda d, i=i, k=first: d["claims"]["killing_vectors"][i]
                          .__setitem__(k, f"({d['claims']['killing_vectors'][i][k]})*{x}")),
               False)


def _map_mutants(data: Data) -> Iterator[tuple[str, Data, bool]]:
    for i, item in enumerate(data.get("related", []) or []):
        for key, value in (item.get("map") or {}).items():
            yield (f"related.{i}.map.{key} x 8/7",
                   _copy_with(data, lambda d, i=i, k=key, v=value:
                              d["related"][i]["map"].__setitem__(k, scaled(v))), False)


def _label_mutants(data: Data) -> Iterator[tuple[str, Data, bool]]:
    claims = data.get("claims", {})
    if "petrov_type" in claims:
        claim = claims["petrov_type"]
        value = claim["value"] if isinstance(claim, dict) else claim
        other = OTHER_PETROV[str(value)]
        yield (f"claims.petrov_type {value} -> {other}",
               _copy_with(data, lambda d: _set_claim(d, "petrov_type", other)), False)
    for name, state in (claims.get("energy_conditions") or {}).items():
        other = OTHER_CONDITION[state]
        yield (f"claims.energy_conditions.{name} {state} -> {other}",
               _copy_with(data, lambda d, n=name, o=other:
                          d["claims"]["energy_conditions"].__setitem__(n, o)), False)


# ---------------------------------------------------------------------------- checking


class GeometryMemo:
    """compute_geometry_and_weyl, remembered per metric: claim mutants reuse the control's
    curvature."""

    def __init__(self) -> None:
        self.results: dict[Any, Any] = {}

    def __call__(self, spacetime: Any, limits: Limits | None = None) -> Any:
        key = (spacetime.metric, spacetime.coordinates, spacetime.sign)
        if key not in self.results:
            self.results[key] = compute_geometry_and_weyl(spacetime, limits)
        return self.results[key]


def dump(data: Data) -> str:
    return yaml.safe_dump(data, sort_keys=False, allow_unicode=True, width=10**6)


def check_data(data: Data, family: str, folder: Path, related: dict[str, LoadResult],
               catalog: Path) -> EntryReport:
    """Write ``data`` as catalog/<family>/<id>.yaml under ``folder`` and check it in-process."""
    path = folder / "catalog" / family / f"{data['id']}.yaml"
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text(dump(data), encoding="utf-8")
    load = load_entry(path, f"catalog/{family}/{path.name}", vocabulary(catalog))
    return verify.check_loaded(load, related, Limits(seconds=SECONDS))


def first_error(report: EntryReport) -> str:
    errors = [d for d in report.diagnostics if d.severity == "error"]
    return f"[{errors[0].code}] {errors[0].message}" if errors else ""


def run(files: list[Path], catalog: Path, progress: Callable[[str], None] = print
        ) -> tuple[list[Outcome], list[str]]:
    """Mutate and check every entry file; returns the outcomes and the entries skipped."""
    every = load_all(entry_files([catalog]), catalog.resolve(), PROJECT)
    by_id = {load.entry.id: load for load in every if load.entry is not None}
    memo = GeometryMemo()
    original = verify.compute_geometry_and_weyl
    verify.compute_geometry_and_weyl = memo
    outcomes: list[Outcome] = []
    skipped: list[str] = []
    try:
        with tempfile.TemporaryDirectory(prefix="mutants-") as tmp:
            for file in files:
                outcomes += _mutate_one(file, Path(tmp), by_id, catalog, skipped, progress)
    finally:
        verify.compute_geometry_and_weyl = original
    return outcomes, skipped


def _mutate_one(file: Path, folder: Path, by_id: dict[str, LoadResult], catalog: Path,
                skipped: list[str], progress: Callable[[str], None]) -> list[Outcome]:
    data = yaml.safe_load(file.read_text(encoding="utf-8"))
    family = file.parent.name
    control = check_data(data, family, folder, by_id, catalog)
    if not control.ok:
        skipped.append(f"{data['id']}: does not verify unmutated ({first_error(control)})")
        progress(skipped[-1])
        return []
    outcomes = []
    for mutant in mutants_of(data["id"], data):
        report = check_data(mutant.data, family, folder, by_id, catalog)
        outcome = Outcome(mutant, not report.ok, first_error(report))
        outcomes.append(outcome)
        progress(f"{'killed  ' if outcome.killed else 'SURVIVED'} {mutant.entry}: "
                 f"{mutant.change}  {outcome.reason[:100]}")
    return outcomes


# ---------------------------------------------------------------------------- code mutants

CODE_FILES = ("generator/geometry/equality.py", "generator/geometry/canonicity.py",
              "generator/geometry/tracked.py", "generator/geometry/decisions.py")
CODE_TESTS = ("tests/test_soundness.py", "tests/test_canonicity.py", "tests/test_equality.py")
QUICK_TESTS = ("tests/test_soundness.py", "tests/test_canonicity.py")  # --quick
FLIPS = {ast.Lt: ast.GtE, ast.GtE: ast.Lt, ast.Gt: ast.LtE, ast.LtE: ast.Gt,
         ast.Eq: ast.NotEq, ast.NotEq: ast.Eq, ast.Is: ast.IsNot, ast.IsNot: ast.Is,
         ast.In: ast.NotIn, ast.NotIn: ast.In}
MUTANT_SECONDS = 600


@dataclass(frozen=True)
class CodeMutant:
    file: str
    line: int
    change: str
    source: str  # the whole mutated file


def code_mutants(relative: str) -> list[CodeMutant]:
    """One mutant per comparison operator, boolean operator, ``not`` and returned bool."""
    text = (PROJECT / relative).read_text(encoding="utf-8")
    count = sum(1 for _ in _sites(ast.parse(text)))
    out = []
    for k in range(count):
        tree = ast.parse(text)
        node, change = _mutate_site(tree, k)
        out.append(CodeMutant(relative, getattr(node, "lineno", 0), change,
                              ast.unparse(tree)))
    return out


def _sites(tree: ast.AST) -> Iterator[tuple[ast.AST, int]]:
    for node in ast.walk(tree):
        if isinstance(node, ast.Compare):
            for i, op in enumerate(node.ops):
                if type(op) in FLIPS:
                    yield node, i
        elif _is_site(node):
            yield node, 0


def _is_site(node: ast.AST) -> bool:
    if isinstance(node, ast.BoolOp):
        return True
    if isinstance(node, ast.UnaryOp):
        return isinstance(node.op, ast.Not)
    return isinstance(node, ast.Return) and isinstance(node.value, ast.Constant) \
        and isinstance(node.value.value, bool)


def _mutate_site(tree: ast.AST, k: int) -> tuple[ast.AST, str]:
    node, i = next(site for j, site in enumerate(_sites(tree)) if j == k)
    if isinstance(node, ast.Compare):
        old = type(node.ops[i])
        node.ops[i] = FLIPS[old]()
        return node, f"{old.__name__} -> {FLIPS[old].__name__}"
    if isinstance(node, ast.BoolOp):
        old = type(node.op)
        node.op = ast.Or() if old is ast.And else ast.And()
        return node, f"{old.__name__} -> {type(node.op).__name__}"
    if isinstance(node, ast.UnaryOp):
        node.op = ast.UAdd()  # `not x` -> `+x` is not valid for every x: use a bool()
        node.__class__ = ast.Call
        node.func, node.args, node.keywords = ast.Name("bool", ast.Load()), [node.operand], []
        return node, "not x -> x"
    assert isinstance(node, ast.Return)
    node.value.value = not node.value.value
    return node, f"return {not node.value.value} -> return {node.value.value}"


def run_code_mutant(mutant: CodeMutant, examples: int, tests: tuple[str, ...] = CODE_TESTS
                    ) -> tuple[bool, str]:
    """(killed, how): the tests run on a copy of the project holding the mutant."""
    with tempfile.TemporaryDirectory(prefix="almanac-mutant-") as folder:
        root = Path(folder)
        for part in ("generator", "tests", "catalog"):
            shutil.copytree(PROJECT / part, root / part)
        (root / mutant.file).write_text(mutant.source, encoding="utf-8")
        env = dict(os.environ, PYTHONPATH=str(root), ALMANAC_EXAMPLES=str(examples))
        command = [sys.executable, "-m", "pytest", "-q", "-x", "-m", "not slow",
                   "-p", "no:cacheprovider", *tests]
        try:
            done = subprocess.run(command, cwd=root, env=env, capture_output=True, text=True,
                                  timeout=MUTANT_SECONDS)
        except subprocess.TimeoutExpired:
            return True, "timed out"
        if done.returncode == 0:
            return False, "tests passed"
        lines = [x for x in done.stdout.splitlines() if x.startswith("FAILED")]
        return True, (lines[0] if lines else f"exit {done.returncode}")[:120]


def code_main(args: argparse.Namespace) -> int:
    mutants = [m for f in CODE_FILES for m in code_mutants(f)]
    if args.limit:
        mutants = random.Random(args.seed).sample(mutants, min(args.limit, len(mutants)))
    results = []
    for n, mutant in enumerate(mutants, 1):
        killed, how = run_code_mutant(mutant, args.examples,
                                      QUICK_TESTS if args.quick else CODE_TESTS)
        results.append((mutant, killed, how))
        print(f"[{n}/{len(mutants)}] {'killed' if killed else 'SURVIVED'} "
              f"{mutant.file}:{mutant.line} {mutant.change}  {how}", file=sys.stderr)
    killed = sum(k for _, k, _ in results)
    if args.json:
        print(json.dumps({"killed": killed, "total": len(results), "survivors": [
            f"{m.file}:{m.line} {m.change}" for m, k, _ in results if not k]}, indent=2))
    print(f"code mutation score: {killed}/{len(results)} mutants killed", file=sys.stderr)
    return 0 if killed == len(results) else 1


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("files", nargs="*", type=Path, help="entry files (default: all)")
    parser.add_argument("--catalog", type=Path, default=PROJECT / "catalog")
    parser.add_argument("--json", action="store_true", help="print outcomes as JSON")
    parser.add_argument("--code", action="store_true",
                        help="mutate the equality/verification code, not the entries")
    parser.add_argument("--limit", type=int, default=0,
                        help="--code: a random sample of this many mutants (0: all)")
    parser.add_argument("--seed", type=int, default=1, help="--code: seed of that sample")
    parser.add_argument("--quick", action="store_true",
                        help="--code: run the soundness tests only against each mutant")
    parser.add_argument("--examples", type=int, default=4,
                        help="--code: property-test examples per test and mutant")
    args = parser.parse_args(argv)
    if args.code:
        return code_main(args)
    files = args.files or entry_files([args.catalog])
    outcomes, skipped = run(files, args.catalog, progress=lambda s: print(s, file=sys.stderr))
    killed = sum(o.killed for o in outcomes)
    if args.json:
        print(json.dumps({"killed": killed, "total": len(outcomes), "skipped": skipped,
                          "survivors": [f"{o.mutant.entry}: {o.mutant.change}"
                                        for o in outcomes if not o.killed]}, indent=2))
    print(f"mutation score: {killed}/{len(outcomes)} mutants killed "
          f"({len(skipped)} entries skipped)", file=sys.stderr)
    return 0 if killed == len(outcomes) else 1


if __name__ == "__main__":
    raise SystemExit(main())
