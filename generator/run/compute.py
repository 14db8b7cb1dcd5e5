"""``compute``: what the tool computes for a bare metric, without writing an entry.

"What are the invariants, matter content and Petrov type of this line element?" The metric
(coordinates, line element, parameters, signature, domain) comes from the command line or a
small file; it is turned into an entry draft by the scaffold, read by the normal loader (the
whitelisted math parser: nothing is evaluated) and checked by the same engine under the same
per-entry budget as ``check``. Nothing is claimed, so nothing is verified: the output is the
tool's own result, and says so.
"""

from __future__ import annotations

import json
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import yaml

from generator.entry.loader import Vocabulary, load_text
from generator.entry.scaffold import Draft, ReferenceSpec, parse_parameters, render
from generator.entry.yamlcheck import validate
from generator.errors import Diagnostic, UsageError
from generator.model import EntryReport
from generator.run.tasks import check_within_limits
from generator.site.export import computed_json, matter_as_entry_keys

MAX_INPUT_BYTES = 64 * 1024  # a metric file is a few lines; refuse anything much larger
NOTE = "computed by the tool from the metric alone: no published value was compared"
# Diagnostics about the draft's own placeholders, not about the metric the user gave.
_PLACEHOLDER_CODES = ("entry.todo", "entry.reference", "entry.nothing-claimed")
_KEYS = ("coordinates", "line_element", "parameters", "signature", "domain")


@dataclass(frozen=True)
class BareMetric:
    """What ``compute`` was given."""

    coordinates: tuple[str, ...]
    line_element: str
    parameters: tuple[str, ...] = ()  # 'NAME:ASSUME' specs, as for ``new --parameters``
    signature: str = ""
    domain: tuple[str, ...] = ()


def read_metric_file(path: Path) -> BareMetric:
    """A small YAML file with the keys coordinates, line_element and optionally parameters
    (name: assumption), signature, domain; read with the same safe YAML reader as entries."""
    try:
        raw = path.read_bytes()
    except OSError as exc:
        raise UsageError(f"{path}: cannot read: {exc.strerror}") from exc
    if len(raw) > MAX_INPUT_BYTES:
        raise UsageError(f"{path}: {len(raw)} bytes (limit {MAX_INPUT_BYTES})")
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise UsageError(f"{path}: not UTF-8") from exc
    return parse_metric_text(text, str(path))


def parse_metric_text(text: str, name: str) -> BareMetric:
    from generator.entry.schema import Field

    spec = Field("metric-file", "", "record", fields=(
        Field("coordinates", "", "list", required=True, item=Field("c", "", "line")),
        Field("line_element", "", "math", required=True),
        Field("parameters", "", "dict", key_pattern=r"^[A-Za-z][A-Za-z0-9_]*$",
              item=Field("assume", "", "line")),
        Field("signature", "", "line"),
        Field("domain", "", "list", item=Field("d", "", "math")),
    ))
    checked = validate(name, text, spec)
    errors = [d for d in checked.diagnostics if d.severity == "error"]
    if errors or not checked.data:
        raise UsageError("\n".join(d.format_text() for d in errors) or f"{name}: empty")
    data = checked.data
    return BareMetric(
        coordinates=tuple(data["coordinates"]),
        line_element=_text(data["line_element"]),
        parameters=tuple(f"{k}:{v}" for k, v in data.get("parameters", {}).items()),
        signature=data.get("signature", ""),
        domain=tuple(_text(d) for d in data.get("domain", ())),
    )


def _text(value: Any) -> str:
    return getattr(value, "text", str(value))


def draft_of(metric: BareMetric) -> Draft:
    """An entry draft with every prose field filled, so only the metric can be wrong."""
    riemannian = bool(metric.signature) and "-" not in metric.signature
    return Draft(
        id="bare-metric",
        family="riemannian" if riemannian else "compute",
        coordinates=metric.coordinates,
        line_element=metric.line_element,
        signature=metric.signature,
        title="Bare metric",
        chart="as given",
        summary="A metric given to the compute command.",
        parameters=parse_parameters(metric.parameters),
        domain=metric.domain,
        matter_kind="unspecified",
        reference=ReferenceSpec(("none",), "none", "none", 2000),
        added="2000-01-01",
        by="compute",
    )


def compute_metric(metric: BareMetric, seconds: float) -> tuple[EntryReport, list[Diagnostic]]:
    """The report of the metric under the per-entry budget, and the diagnostics that concern
    what the user gave (placeholders of the draft are left out)."""
    draft = draft_of(metric)
    path = Path(draft.family) / f"{draft.id}.yaml"
    text = render(draft)
    load = load_text(text, "<metric>", path, Vocabulary())
    report = check_within_limits([load], seconds)
    shown = [_relabelled(d, text) for d in report.diagnostics
             if d.code not in _PLACEHOLDER_CODES]
    return report, shown


def _relabelled(diagnostic: Diagnostic, text: str) -> Diagnostic:
    """A diagnostic placed in the generated draft, re-addressed to what the user gave:
    ``<line_element>:1:COLUMN`` with the column counted in the value as typed."""
    from dataclasses import replace

    lines = text.splitlines()
    line = lines[diagnostic.line - 1] if 0 < diagnostic.line <= len(lines) else ""
    key, colon, _ = line.strip().partition(":")
    if line.lstrip().startswith("- "):
        key, colon = "domain", ""
        value_start = line.index("- ") + 2
    else:
        value_start = line.index(":") + 2 if colon else 0
    if value_start < len(line) and line[value_start] == '"':
        value_start += 1
    where = key if key in _KEYS else "metric"
    return replace(diagnostic, file=f"<{where}>", line=1,
                   column=max(1, diagnostic.column - value_start))


def summary(report: EntryReport) -> dict[str, Any] | None:
    """The answers people ask for first, named like an entry's keys."""
    spacetime, geometry, classification = report.spacetime, report.geometry, \
        report.classification
    if spacetime is None or geometry is None:
        return None
    full = computed_json(spacetime, geometry, classification)
    out: dict[str, Any] = {"note": NOTE}
    for key in ("dimension", "signature", "ricci_scalar", "kretschmann", "ricci_squared",
                "weyl_squared", "petrov_type", "hawking_ellis_type", "einstein_mixed"):
        out[key] = full.get(key)
    out["matter"] = matter_as_entry_keys(spacetime, classification)
    conditions = full.get("energy_conditions") or {}
    out["energy_conditions"] = {name: value["status"] for name, value in conditions.items()}
    return out


def render_output(report: EntryReport, fmt: str) -> str:
    data = summary(report)
    if fmt == "json":
        full = None
        if report.spacetime is not None and report.geometry is not None:
            full = computed_json(report.spacetime, report.geometry, report.classification)
        return json.dumps({"summary": data, "computed": full}, indent=2)
    if fmt == "yaml":
        return f"# {NOTE}\n" + yaml.safe_dump(data, sort_keys=False, allow_unicode=True,
                                              width=100)
    if data is None:
        return "nothing computed"
    lines = []
    for key, value in data.items():
        if isinstance(value, dict) and value:
            lines.append(f"{key}:")
            lines += [f"  {k}: {v}" for k, v in value.items()]
        else:
            lines.append(f"{key}: {'{}' if value == {} else value}")
    return "\n".join(lines)
