"""Write a synthetic catalog of a few hundred entries for the scale benchmark.

Each entry is a variant of a template in ``bench/templates/catalog`` (published solutions:
Minkowski, Schwarzschild in two charts, Reissner–Nordström, static de Sitter, Einstein–de
Sitter): its parameters are renamed and some coordinates rescaled, x = c·X with c rational.
Why the claims stay correct without recomputing them: scalar invariants only see the
substitution x → c·X; lower-index components (the metric, the potential) pick up one factor c
per index and upper-index ones (velocity, null direction, Killing vectors) one factor 1/c.
Types (Petrov, Hawking–Ellis) do not change. The benchmark's own cold
build then verifies every variant with the engine; a variant that fails is reported there.

    python bench/synthetic.py OUT --count 400

writes OUT/catalog/<family>/<template>-v<k>.yaml plus the tag and family vocabularies.
Variant k uses template k mod (number of templates), so any first N entries mix the templates
evenly.
"""

from __future__ import annotations

import argparse
import shutil
import sys
from collections.abc import Mapping
from dataclasses import dataclass
from fractions import Fraction
from pathlib import Path
from typing import Any

import sympy
import yaml

from generator.entry.catalog import entry_files, vocabulary
from generator.entry.loader import LoadResult, load_entry, symbol_table
from generator.entry.mathparse import SymbolTable, parse_expression, parse_inequality

TEMPLATES = Path(__file__).parent / "templates" / "catalog"
SCALES = (Fraction(2), Fraction(3, 2), Fraction(1, 2), Fraction(5, 3), Fraction(7, 4),
          Fraction(2, 5), Fraction(3))
# Angles stay as they are: the engine's energy-condition proofs expect sin(theta), not
# sin(7*theta/4), and would report "undecided" for a correct claim.
ANGLES = frozenset({"theta", "phi", "chi", "psi"})
SCALAR_CLAIMS = ("ricci_scalar", "kretschmann", "ricci_squared", "weyl_squared")
# Energy-condition claims are left out: the engine still evaluates the conditions, but its
# positivity proofs do not always go through in rescaled coordinates (seen for
# Reissner–Nordström with r -> 3/2 r: "undecided" for conditions that hold).
COPIED_CLAIMS = ("petrov_type", "hawking_ellis_type")


@dataclass(frozen=True)
class Template:
    path: Path
    raw: dict[str, Any]  # the YAML as written
    load: LoadResult  # the same entry through the project's loader


@dataclass(frozen=True)
class Change:
    """One variant's substitution: new parameter names and coordinate scale factors."""

    table: SymbolTable
    replace: dict[sympy.Basic, sympy.Basic]  # old symbol -> expression in the new symbols
    scale: dict[str, sympy.Rational]  # coordinate name -> c in x = c*X
    names: dict[str, str]  # old parameter name -> new one

    def expr(self, text: Any) -> sympy.Expr:
        return parse_expression(str(text), self.table).xreplace(self.replace)

    def text(self, value: Any) -> str:
        return sympy.sstr(self.expr(value))

    def lower(self, components: Mapping[str, Any]) -> dict[str, str]:
        return {x: sympy.sstr(self.expr(v) * self.scale.get(x, 1)) for x, v in components.items()}

    def upper(self, components: Mapping[str, Any]) -> dict[str, str]:
        return {x: sympy.sstr(self.expr(v) / self.scale.get(x, 1)) for x, v in components.items()}


def read_templates(folder: Path = TEMPLATES) -> list[Template]:
    words = vocabulary(folder)
    out = []
    for path in entry_files([folder]):
        load = load_entry(path, str(path), words)
        if not load.ok or load.spacetime is None or load.spacetime.sign != 1:
            raise SystemExit(f"template {path} does not load cleanly: {load.diagnostics}")
        out.append(Template(path, yaml.safe_load(path.read_text(encoding="utf-8")), load))
    return out


def change_for(template: Template, k: int) -> Change:
    """Variant k: parameters get suffix _v<k>; up to two coordinates are rescaled."""
    entry, spacetime = template.load.entry, template.load.spacetime
    table, symbols = symbol_table(entry)
    in_functions = {str(a) for f in spacetime.functions for a in f.args}
    free = [c for c in entry.coordinates if c not in in_functions and c not in ANGLES]
    chosen = [free[(k + j) % len(free)] for j in range(min(2, len(free)))] if free else []
    scale = {c: sympy.Rational(str(SCALES[(k + 3 * j) % len(SCALES)]))
             for j, c in enumerate(dict.fromkeys(chosen))}
    names = {p.name: f"{p.name}_v{k}" for p in entry.parameters}
    replace: dict[sympy.Basic, sympy.Basic] = {
        symbols[c]: factor * symbols[c] for c, factor in scale.items()}
    for old, new in names.items():
        replace[symbols[old]] = sympy.Symbol(new, **symbols[old].assumptions0)
    return Change(table, replace, scale, names)


def variant(template: Template, k: int) -> dict[str, Any]:
    raw, change = template.raw, change_for(template, k)
    entry_id = f"{raw['id']}-v{k:03d}"
    data: dict[str, Any] = {"id": entry_id, "title": raw["title"]}
    data["chart"] = f"{raw['chart']}, rescaled ({describe(change)})"
    data["summary"] = f"{raw['summary']} Synthetic benchmark variant {k}."
    data["notes"] = ("Generated by bench/synthetic.py for the scale benchmark: the template "
                     f"entry '{raw['id']}' with renamed parameters and rescaled coordinates. "
                     "Not a catalog entry.")
    for key in ("tags", "coordinates", "signature"):
        data[key] = raw[key]
    if raw.get("parameters"):
        data["parameters"] = {change.names[n]: spec for n, spec in raw["parameters"].items()}
    if raw.get("functions"):
        data["functions"] = raw["functions"]
    if raw.get("domain"):
        data["domain"] = [part for text in raw["domain"] for part in domain_parts(change, text)]
    data["metric"] = {"components": metric_components(template, change)}
    data["matter"] = matter(raw["matter"], change)
    data["claims"] = claims(raw["claims"], change)
    data["references"] = raw["references"]
    data["curation"] = {"added": raw["curation"]["added"], "by": "bench/synthetic.py"}
    return data


def describe(change: Change) -> str:
    parts = [f"{x} → {c}·{x}" for x, c in change.scale.items()]
    return "; ".join(parts) or "parameters renamed"


def domain_parts(change: Change, text: str) -> list[str]:
    relation = parse_inequality(text, change.table).xreplace(change.replace)
    pieces = relation.args if isinstance(relation, sympy.And) else (relation,)
    return [sympy.sstr(p) for p in pieces]


def metric_components(template: Template, change: Change) -> dict[str, str]:
    coordinates = template.load.entry.coordinates
    metric = template.load.spacetime.metric
    out = {}
    for a, x in enumerate(coordinates):
        for b in range(a, len(coordinates)):
            value = metric[a, b].xreplace(change.replace)
            value *= change.scale.get(x, 1) * change.scale.get(coordinates[b], 1)
            if value != 0:
                out[f"{x} {coordinates[b]}"] = sympy.sstr(value)
    return out


def matter(raw: dict[str, Any], change: Change) -> dict[str, Any]:
    out: dict[str, Any] = {"kind": raw["kind"]}
    for key in ("cosmological_constant", "density", "pressure"):
        if key in raw:
            out[key] = change.text(raw[key])
    if "potential" in raw:
        out["potential"] = change.lower(raw["potential"])
    for key in ("velocity", "null_direction"):
        if key in raw:
            out[key] = change.upper(raw[key])
    if "principal_pressures" in raw:
        out["principal_pressures"] = {x: change.text(v)
                                      for x, v in raw["principal_pressures"].items()}
    return out


def claims(raw: dict[str, Any], change: Change) -> dict[str, Any]:
    out: dict[str, Any] = {}
    for name in SCALAR_CLAIMS:
        if name in raw:
            value = raw[name]["value"] if isinstance(raw[name], dict) else raw[name]
            out[name] = change.text(value)
    for name in COPIED_CLAIMS:
        if name in raw:
            out[name] = raw[name]
    if "killing_vectors" in raw:
        out["killing_vectors"] = [change.upper(v) for v in raw["killing_vectors"]]
    return out


def write_catalog(out: Path, count: int, templates: list[Template]) -> list[Path]:
    """Write ``count`` variants under ``out/catalog``; returns the files in variant order."""
    root = out / "catalog"
    if root.exists():
        shutil.rmtree(root)
    root.mkdir(parents=True)
    for name in ("tags.yaml", "families.yaml"):
        shutil.copy(TEMPLATES / name, root / name)
    files = []
    for k in range(count):
        template = templates[k % len(templates)]
        data = variant(template, k)
        path = root / template.path.parent.name / f"{data['id']}.yaml"
        path.parent.mkdir(exist_ok=True)
        path.write_text(yaml.safe_dump(data, sort_keys=False, allow_unicode=True, width=100),
                        encoding="utf-8")
        files.append(path)
    return files


def load_problems(files: list[Path], root: Path) -> list[str]:
    """Loader diagnostics of the written files (the engine checks them in the benchmark)."""
    words = vocabulary(root)
    return [d.format_text() for f in files for d in load_entry(f, str(f), words).diagnostics]


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("out", type=Path, help="folder to write OUT/catalog into")
    parser.add_argument("--count", type=int, default=400)
    args = parser.parse_args(argv)
    files = write_catalog(args.out, args.count, read_templates())
    problems = load_problems(files, args.out / "catalog")
    for problem in problems:
        print(problem, file=sys.stderr)
    print(f"wrote {len(files)} entries to {args.out / 'catalog'}", file=sys.stderr)
    return 1 if problems else 0


if __name__ == "__main__":
    raise SystemExit(main())
