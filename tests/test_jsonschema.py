"""The generated JSON Schema (generator/entry/jsonschema_export.py, schema/entry.schema.json).

External reference: the `jsonschema` library (Draft 7 validator and meta-schema) decides
validity; we only supply the documents.
"""

from __future__ import annotations

import copy
import json
from pathlib import Path

import jsonschema
import pytest

from generator.entry.jsonschema_export import SCHEMA_PATH, editor_view, render_schema
from generator.entry.schema import ENTRY, walk

ROOT = Path(__file__).resolve().parent.parent
SCHEMA = json.loads((ROOT / SCHEMA_PATH).read_text(encoding="utf-8"))
VALIDATOR = jsonschema.Draft7Validator(SCHEMA)
ENTRY_FILES = sorted((ROOT / "catalog").glob("*/*.yaml"))
SCHEMA_LINE = "# yaml-language-server: $schema=../../schema/entry.schema.json"

# Hand-written for the tests: a demo spacetime of our own (a flat 2D toy, not a curated entry).
MINIMAL = {
    "id": "lantern-flat-plane",
    "title": "Lantern flat plane",
    "chart": "Cartesian coordinates",
    "summary": "A flat two-dimensional demo spacetime.",
    "coordinates": ["t", "x"],
    "signature": "-+",
    "metric": {"line_element": "-dt**2 + dx**2"},
    "matter": {"kind": "vacuum"},
    "claims": {"ricci_scalar": 0, "kretschmann": {"value": "0", "source": "computed-here"}},
    "references": [
        {
            "role": "original",
            "authors": ["A. Lamplighter"],
            "title": "Notes on a flat plane",
            "venue": "Harbourtown Notes 1, 1",
            "year": 2026,
        }
    ],
    "curation": {"added": "2026-12-01", "by": "Demo Curator"},
}


def errors_of(data: object) -> list[str]:
    return sorted(e.message for e in VALIDATOR.iter_errors(data))


def test_committed_schema_is_up_to_date() -> None:
    """Regenerate: python -m generator.entry.jsonschema_export"""
    assert (ROOT / SCHEMA_PATH).read_text(encoding="utf-8") == render_schema(ROOT)


def test_schema_is_a_valid_draft7_schema() -> None:
    jsonschema.Draft7Validator.check_schema(SCHEMA)


def test_every_declared_key_is_in_the_schema_with_its_doc() -> None:
    for path, spec in walk(ENTRY):
        node: dict = SCHEMA
        for part in path.split("."):
            node = _descend(node, part)
        assert node.get("description") == spec.doc, path


def _descend(node: dict, part: str) -> dict:
    """One step of a dotted path from ``schema.walk``: ``key``, ``key[]`` (list items) or
    ``<name>`` (the values of a free-keyed mapping)."""
    if "anyOf" in node:  # long-form claims: the record alternative holds the keys
        node = next(alt for alt in node["anyOf"] if "properties" in alt)
    if part == "<name>":
        return node["additionalProperties"]
    if part.endswith("[]"):
        return node["properties"][part[:-2]]["items"]
    return node["properties"][part]


@pytest.mark.parametrize("path", ENTRY_FILES, ids=lambda p: p.stem)
def test_shipped_entry_validates(path: Path) -> None:
    assert errors_of(editor_view(path.read_text(encoding="utf-8"))) == []


@pytest.mark.parametrize("path", ENTRY_FILES, ids=lambda p: p.stem)
def test_shipped_entry_points_editors_at_the_schema(path: Path) -> None:
    assert path.read_text(encoding="utf-8").splitlines()[0] == SCHEMA_LINE


def test_catalog_is_not_empty() -> None:
    assert len(ENTRY_FILES) >= 3


def test_minimal_demo_entry_validates() -> None:
    assert errors_of(MINIMAL) == []


def mutated(change: str) -> dict:
    data = copy.deepcopy(MINIMAL)
    if change == "extra key":
        data["colour"] = "blue"
    elif change == "typo in nested key":
        data["matter"] = {"knd": "vacuum"}
    elif change == "missing required":
        del data["chart"]
    elif change == "both metric forms":
        data["metric"]["components"] = {"t t": -1, "x x": 1}
    elif change == "no metric form":
        data["metric"] = {}
    elif change == "no original reference":
        data["references"][0]["role"] = "review"
    elif change == "unknown matter kind":
        data["matter"]["kind"] = "dark-magic"
    elif change == "bad id":
        data["id"] = "Lantern_Plane"
    elif change == "bad petrov type":
        data["claims"]["petrov_type"] = "E"
    elif change == "unknown tag":
        data["tags"] = ["not-a-tag-anywhere"]
    elif change == "multi-line title":
        data["title"] = "two\nlines"
    elif change == "year as text":
        data["references"][0]["year"] = "1916"
    elif change == "bad component key":
        data["metric"] = {"components": {"tt": -1}}
    return data


@pytest.mark.parametrize(
    "change",
    [
        "extra key",
        "typo in nested key",
        "missing required",
        "both metric forms",
        "no metric form",
        "no original reference",
        "unknown matter kind",
        "bad id",
        "bad petrov type",
        "unknown tag",
        "multi-line title",
        "year as text",
        "bad component key",
    ],
)
def test_schema_refuses_broken_entries(change: str) -> None:
    assert errors_of(mutated(change)) != []


def test_editor_view_reads_dates_as_text_and_keys_as_strings() -> None:
    data = editor_view("added: 2026-12-01\nnull: holds\nyear: 1963\nok: true\nq: '0'\n")
    assert data == {"added": "2026-12-01", "null": "holds", "year": 1963, "ok": True, "q": "0"}


# ---------------------------------------------------------------------------- standard tools


@pytest.mark.parametrize("path", ENTRY_FILES, ids=lambda p: p.stem)
def test_every_shipped_entry_validates_through_a_standard_yaml_loader(path: Path) -> None:
    """Issue 18: an editor or a CI script reads entries with a standard YAML parser, not with
    the checker. PyYAML's safe loader (YAML 1.1: a bare ``null:`` key is None, a bare
    2026-12-02 a date) feeds the jsonschema library's Draft 7 validator directly."""
    import yaml

    data = yaml.safe_load(path.read_text(encoding="utf-8"))
    assert errors_of(data) == [], path


def test_a_bare_null_key_is_what_standard_yaml_makes_of_the_old_key() -> None:
    """Why the keys were renamed (YAML 1.1 and 1.2 core schema: ``null`` is the null value,
    common practice): the old form fails the schema through a standard loader."""
    import yaml

    old = copy.deepcopy(MINIMAL)
    old["claims"]["energy_conditions"] = yaml.safe_load("{null: holds}")
    assert None in old["claims"]["energy_conditions"]
    assert errors_of(old) != []
    new = copy.deepcopy(MINIMAL)
    new["claims"]["energy_conditions"] = yaml.safe_load("{null_condition: holds}")
    assert errors_of(new) == []


def test_a_bare_date_is_refused_by_the_schema_through_pyyaml() -> None:
    """The shipped entries quote ``curation.added``; unquoted, PyYAML gives a date object."""
    import yaml

    data = copy.deepcopy(MINIMAL)
    data["curation"] = yaml.safe_load("{added: 2026-12-01, by: Demo Curator}")
    assert errors_of(data) != []
    data["curation"] = yaml.safe_load('{added: "2026-12-01", by: Demo Curator}')
    assert errors_of(data) == []
