"""The entry format as a JSON Schema, generated from ``generator/entry/schema.py``.

Editors (through the yaml-language-server line at the top of every entry) complete keys, show
each key's one-line doc and flag typos while a contributor types. The schema is generated, never
edited by hand, so it cannot drift from the loader's own declarations; a test regenerates it
and compares it with the committed ``schema/entry.schema.json``.

It checks shape only. Whatever needs the mathematics (the math grammar, signature, claims) is
the job of ``python -m generator check``, which editors cannot run.

Regenerate with ``python -m generator.entry.jsonschema_export`` (writes schema/entry.schema.json).
"""

from __future__ import annotations

import json
import sys
from collections.abc import Sequence
from pathlib import Path

import yaml

from generator.entry.schema import ENTRY, Field

DRAFT = "http://json-schema.org/draft-07/schema#"
SCHEMA_PATH = Path("schema") / "entry.schema.json"
TAGS_PATH = Path("catalog") / "tags.yaml"

# Rules across keys that a per-key declaration cannot express. Both are also enforced by the
# loader; here they let editors flag the mistake early. Keyed by dotted path.
CROSS_KEY_RULES: dict[str, dict[str, object]] = {
    "metric": {
        "oneOf": [{"required": ["line_element"]}, {"required": ["components"]}],
    },
    "references": {
        "contains": {
            "type": "object",
            "required": ["role"],
            "properties": {"role": {"const": "original"}},
        },
    },
}

_SINGLE_LINE = r"^[^\n\r]*\S[^\n\r]*$"


def entry_schema(tags: Sequence[str] = ()) -> dict[str, object]:
    """The whole JSON Schema document for one catalog entry.

    ``tags`` (the vocabulary of catalog/tags.yaml) become an enum, so editors complete them.
    """
    body = field_schema(ENTRY, "")
    if tags:
        tag_items = body["properties"]["tags"]["items"]  # type: ignore[index]
        tag_items["enum"] = list(tags)
    return {
        "$schema": DRAFT,
        "title": "Metric Almanac catalog entry",
        "$comment": "Generated from generator/entry/schema.py by "
        "generator/entry/jsonschema_export.py; do not edit by hand.",
        **body,
    }


def field_schema(spec: Field, path: str) -> dict[str, object]:
    """JSON Schema of one declared key (recursively), with its doc as the description."""
    schema: dict[str, object] = {"description": spec.doc} if spec.doc else {}
    schema.update(_KIND_WRITERS[spec.kind](spec, path))
    schema.update(CROSS_KEY_RULES.get(path, {}))
    return schema


def _child_path(path: str, name: str) -> str:
    return f"{path}.{name}" if path else name


def _string(spec: Field, path: str) -> dict[str, object]:
    return {"type": "string", "minLength": 1}


def _line(spec: Field, path: str) -> dict[str, object]:
    return {"type": "string", "pattern": spec.pattern or _SINGLE_LINE}


def _integer(spec: Field, path: str) -> dict[str, object]:
    return {"type": "integer"}


def _date(spec: Field, path: str) -> dict[str, object]:
    return {"type": "string", "format": "date", "pattern": r"^\d{4}-\d{2}-\d{2}$"}


def _math(spec: Field, path: str) -> dict[str, object]:
    """A math string, or a bare number (YAML reads ``0`` as an integer)."""
    return {"type": ["string", "number"]}


def _choice(spec: Field, path: str) -> dict[str, object]:
    return {"type": "string", "enum": list(spec.choices)}


def _list(spec: Field, path: str) -> dict[str, object]:
    schema: dict[str, object] = {"type": "array"}
    if spec.item is not None:
        schema["items"] = field_schema(spec.item, path + "[]")
    if spec.min_items:
        schema["minItems"] = spec.min_items
    return schema


def _record(spec: Field, path: str) -> dict[str, object]:
    schema: dict[str, object] = {
        "type": "object",
        "properties": {f.name: field_schema(f, _child_path(path, f.name)) for f in spec.fields},
        "additionalProperties": False,
    }
    required = [f.name for f in spec.fields if f.required]
    if required:
        schema["required"] = required
    return schema


def _dict(spec: Field, path: str) -> dict[str, object]:
    schema: dict[str, object] = {"type": "object"}
    if spec.key_pattern:
        schema["propertyNames"] = {"pattern": spec.key_pattern}
    if spec.item is not None:
        schema["additionalProperties"] = field_schema(spec.item, path + ".*")
    return schema


def _claim(spec: Field, path: str) -> dict[str, object]:
    """Short form (the value itself) or long form (value with source and locator)."""
    return {"anyOf": [_math(spec, path), _record(spec, path)]}


def _label_claim(spec: Field, path: str) -> dict[str, object]:
    return {"anyOf": [_choice(spec, path), _record(spec, path)]}


_KIND_WRITERS = {
    "text": _string,
    "markdown": _string,
    "line": _line,
    "integer": _integer,
    "date": _date,
    "math": _math,
    "choice": _choice,
    "list": _list,
    "record": _record,
    "dict": _dict,
    "claim": _claim,
    "label-claim": _label_claim,
}


def render_schema(root: Path) -> str:
    """The schema file's exact text (stable key order, so regenerating is byte-identical)."""
    schema = entry_schema(tag_vocabulary(root / TAGS_PATH))
    return json.dumps(schema, indent=2, ensure_ascii=False) + "\n"


def tag_vocabulary(path: Path) -> tuple[str, ...]:
    """Tag names from catalog/tags.yaml (a mapping tag -> meaning), in file order."""
    from generator.entry.catalog import read_vocabulary_file

    return tuple(read_vocabulary_file(path).entries)


def write_schema(root: Path) -> Path:
    target = root / SCHEMA_PATH
    target.parent.mkdir(parents=True, exist_ok=True)
    target.write_text(render_schema(root), encoding="utf-8")
    return target


def editor_view(source: str) -> object:
    """The YAML data as a JSON Schema validator in an editor sees it.

    Editors read YAML 1.2, where ``2026-12-01`` is a string, not a date; mapping keys are
    always strings. Only plain scalars are typed (int, float, true/false, null).
    """
    return _node_data(yaml.compose(source, Loader=yaml.SafeLoader))


def _node_data(node: yaml.Node | None) -> object:
    if node is None:
        return None
    if isinstance(node, yaml.MappingNode):
        return {str(key.value): _node_data(value) for key, value in node.value}
    if isinstance(node, yaml.SequenceNode):
        return [_node_data(item) for item in node.value]
    return _scalar_data(node)


def _scalar_data(node: yaml.Node) -> object:
    tag = node.tag.rpartition(":")[2]
    if node.style or tag not in _TYPED_SCALARS:
        return node.value
    if tag == "bool":
        return {"true": True, "false": False}.get(node.value.lower(), node.value)
    return _TYPED_SCALARS[tag](node.value)


_TYPED_SCALARS = {
    "int": lambda text: yaml.safe_load(text),
    "float": lambda text: float(text.replace("_", "")),
    "bool": str,
    "null": lambda text: None,
}


def main(argv: list[str] | None = None) -> int:
    """Write (or with ``--check`` compare) ``schema/entry.schema.json`` under the given root.

    Exit status: 0 written or up to date, 1 out of date.
    """
    args = sys.argv[1:] if argv is None else argv
    root = Path(next((a for a in args if not a.startswith("-")), "."))
    if "--check" not in args:
        print(write_schema(root))
        return 0
    target = root / SCHEMA_PATH
    current = target.read_text(encoding="utf-8") if target.exists() else ""
    if current != render_schema(root):
        print(
            f"{target}: out of date with generator/entry/schema.py; "
            "run python -m generator.entry.jsonschema_export (or python -m generator schema)",
            file=sys.stderr,
        )
        return 1
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
