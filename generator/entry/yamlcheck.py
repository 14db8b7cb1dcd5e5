"""Safe YAML reading and validation against the declared entry format.

The YAML is parsed into nodes only (no object construction, so no tag can run code), anchors,
aliases and custom tags are refused (no "billion laughs"), and each node is checked against
`schema.Field` declarations. The result is plain data — strings, ints, lists, dicts and
`MathText` — plus a map from dotted key paths to file positions for later diagnostics.
"""

from __future__ import annotations

import datetime as dt
import re
from dataclasses import dataclass, field
from typing import Any

import yaml

from generator.entry.schema import Field
from generator.errors import Diagnostic, SourcePos
from generator.model import MathText

MAX_FILE_BYTES = 256 * 1024
MAX_NESTING = 20
STANDARD_TAGS = frozenset(
    "tag:yaml.org,2002:" + name
    for name in ("str", "int", "float", "bool", "null", "map", "seq", "timestamp")
)

# A plain (unquoted) scalar that standard YAML resolves to another type: `arxiv: 0706.4324`
# is the float 706.4324 to every other YAML reader (and to editors checking the JSON Schema).
READ_AS_OTHER = {
    "tag:yaml.org,2002:int": "a number",
    "tag:yaml.org,2002:float": "a number",
    "tag:yaml.org,2002:bool": "true/false",
    "tag:yaml.org,2002:null": "an empty value",
    "tag:yaml.org,2002:timestamp": "a date",
}


@dataclass
class Validated:
    """What validation produced: plain data, positions by dotted path, and diagnostics.

    ``positions[path]`` is where the value starts; ``positions[path + ":key"]`` where its key is.
    """

    data: dict[str, Any] = field(default_factory=dict)
    positions: dict[str, SourcePos] = field(default_factory=dict)
    diagnostics: list[Diagnostic] = field(default_factory=list)


def node_position(file: str, node: yaml.Node | yaml.Event) -> SourcePos:
    """Where a node (or the event that starts it) begins, 1-based (YAML marks count from 0)."""
    return SourcePos(file, node.start_mark.line + 1, node.start_mark.column + 1)


class _Checker:
    def __init__(self, file: str, source: str) -> None:
        self.file = file
        self.source = source
        self.line_starts = _line_starts(source)  # once per file: every math string needs it
        self.out = Validated()

    # -- helpers
    def pos(self, node: yaml.Node) -> SourcePos:
        return node_position(self.file, node)

    def error(self, node: yaml.Node, message: str, code: str, hint: str = "") -> None:
        self.out.diagnostics.append(Diagnostic.at(self.pos(node), "error", message, code, hint))

    def warn(self, node: yaml.Node, message: str, code: str, hint: str = "") -> None:
        self.out.diagnostics.append(Diagnostic.at(self.pos(node), "warning", message, code,
                                                  hint))

    # -- dispatch
    def check(self, node: yaml.Node, spec: Field, path: str) -> Any:
        self.out.positions[path] = self.pos(node)
        handler = getattr(self, "_" + spec.kind.replace("-", "_"))
        return handler(node, spec, path)

    def _scalar(self, node: yaml.Node, spec: Field, path: str) -> str | None:
        if not isinstance(node, yaml.ScalarNode):
            self.error(node, f"'{path}' must be a single value, not a "
                       f"{_shape(node)}", "entry.type", f"{spec.doc}".strip())
            return None
        return node.value

    def _text(self, node: yaml.Node, spec: Field, path: str) -> str | None:
        value = self._scalar(node, spec, path)
        if value is None:
            return None
        if node.tag not in ("tag:yaml.org,2002:str",) and not node.style and value == "":
            self.error(node, f"'{path}' is empty", "entry.empty", spec.doc)
            return None
        if not value.strip():
            self.error(node, f"'{path}' is empty", "entry.empty", spec.doc)
            return None
        if not node.style and node.tag in READ_AS_OTHER:
            self.error(node, f"'{path}' reads as {READ_AS_OTHER[node.tag]} in standard YAML "
                       f"tools, not as the text {value!r}", "entry.type",
                       f"quote it: {path.rpartition('.')[2]}: '{value}'")
            return None
        if spec.pattern and not re.match(spec.pattern, value):
            self.error(node, f"'{path}' has an invalid value {value!r}", "entry.format",
                       _greek_hint(value) or _pattern_hint(spec))
            return None
        return value

    def _line(self, node: yaml.Node, spec: Field, path: str) -> str | None:
        value = self._text(node, spec, path)
        if value is not None and "\n" in value.strip():
            self.error(node, f"'{path}' must be a single line", "entry.format",
                       "use a plain or quoted scalar without line breaks")
            return None
        return value.strip() if value is not None else None

    def _markdown(self, node: yaml.Node, spec: Field, path: str) -> str | None:
        return self._text(node, spec, path)

    def _integer(self, node: yaml.Node, spec: Field, path: str) -> int | None:
        value = self._scalar(node, spec, path)
        if value is None:
            return None
        if not re.fullmatch(r"\d{1,6}", value.strip()):
            self.error(node, f"'{path}' must be a whole number, got {value!r}", "entry.type")
            return None
        return int(value)

    def _date(self, node: yaml.Node, spec: Field, path: str) -> str | None:
        value = self._scalar(node, spec, path)
        if value is None:
            return None
        try:
            return dt.date.fromisoformat(value.strip()).isoformat()
        except ValueError:
            self.error(node, f"'{path}' must be a date YYYY-MM-DD, got {value!r}", "entry.type")
            return None

    def _choice(self, node: yaml.Node, spec: Field, path: str) -> str | None:
        value = self._scalar(node, spec, path)
        if value is None:
            return None
        if value not in spec.choices:
            self.error(node, f"'{path}' must be one of {', '.join(spec.choices)}; got {value!r}",
                       "entry.choice", _close_match(value, spec.choices))
            return None
        return value

    def _math(self, node: yaml.Node, spec: Field, path: str) -> MathText | None:
        value = self._scalar(node, spec, path)
        if value is None:
            return None
        if node.tag == "tag:yaml.org,2002:bool" or node.tag == "tag:yaml.org,2002:null":
            self.error(node, f"'{path}' must be a math expression, got {value!r}", "entry.type",
                       "quote it if you meant a name, e.g. \"y\"")
            return None
        if not value.strip():
            self.error(node, f"'{path}' is empty", "entry.empty", "write an expression, e.g. 0")
            return None
        offsets = _character_positions(self.source, self.line_starts, node, value)
        return MathText(value, self.pos(node), offsets)

    def _list(self, node: yaml.Node, spec: Field, path: str) -> list[Any] | None:
        if not isinstance(node, yaml.SequenceNode):
            self.error(node, f"'{path}' must be a list, not a {_shape(node)}", "entry.type",
                       "write items as '- item' lines or [a, b]")
            return None
        if len(node.value) < spec.min_items:
            self.error(node, f"'{path}' needs at least {spec.min_items} item(s)", "entry.empty")
        assert spec.item is not None
        items = [self.check(child, spec.item, f"{path}.{i}") for i, child in enumerate(node.value)]
        return [item for item in items if item is not None]

    def _pairs(self, node: yaml.Node, path: str) -> list[tuple[yaml.Node, yaml.Node]] | None:
        if not isinstance(node, yaml.MappingNode):
            self.error(node, f"'{path}' must be a mapping of keys to values, not a "
                       f"{_shape(node)}", "entry.type")
            return None
        seen: dict[str, yaml.Node] = {}
        pairs = []
        for key, value in node.value:
            if not isinstance(key, yaml.ScalarNode):
                self.error(key, "keys must be plain names", "entry.type")
                continue
            if key.value in seen:
                line = seen[key.value].start_mark.line + 1
                self.error(key, f"key '{key.value}' appears twice (first on line {line})",
                           "entry.duplicate-key", "keep one of them")
                continue
            seen[key.value] = key
            pairs.append((key, value))
        return pairs

    def _record(self, node: yaml.Node, spec: Field, path: str) -> dict[str, Any] | None:
        pairs = self._pairs(node, path or "entry")
        if pairs is None:
            return None
        result: dict[str, Any] = {}
        prefix = f"{path}." if path else ""
        for key, value in pairs:
            child = spec.field(key.value)
            if child is None and spec.renamed(key.value) is not None:
                child = spec.renamed(key.value)
                assert child is not None
                self.warn(key, f"'{prefix}{key.value}' is now '{prefix}{child.name}'",
                          "entry.renamed-key",
                          f"rename the key to {child.name}: standard YAML tools read "
                          f"'{key.value}:' differently; the old name is read until the next "
                          f"release")
                if any(k.value == child.name for k, _ in pairs):
                    continue  # both names given: the new one wins
                key = _renamed_key(key, child.name)
            if child is None:
                known = [f.name for f in spec.fields]
                self.error(key, f"unknown key '{prefix}{key.value}'", "entry.unknown-key",
                           _close_match(key.value, known) or
                           f"allowed here: {', '.join(known)}")
                continue
            self.out.positions[f"{prefix}{key.value}:key"] = self.pos(key)
            checked = self.check(value, child, f"{prefix}{key.value}")
            if checked is not None:
                result[key.value] = checked
        for child in spec.fields:
            if child.required and child.name not in result and not self._reported(
                prefix + child.name, pairs
            ):
                self.error(node, f"missing required key '{prefix}{child.name}'",
                           "entry.missing-key", f"add '{child.name}:' — {child.doc}")
        return result

    def _reported(self, path: str, pairs: list[tuple[yaml.Node, yaml.Node]]) -> bool:
        """True when the key is present (its bad value was already reported)."""
        name = path.rpartition(".")[2]
        return any(key.value == name for key, _ in pairs)

    def _dict(self, node: yaml.Node, spec: Field, path: str) -> dict[str, Any] | None:
        pairs = self._pairs(node, path)
        if pairs is None:
            return None
        assert spec.item is not None
        result: dict[str, Any] = {}
        for key, value in pairs:
            if spec.key_pattern and not re.match(spec.key_pattern, key.value):
                self.error(key, f"'{key.value}' is not a valid key under '{path}'",
                           "entry.format", _pattern_hint(Field("", "", "line",
                                                               pattern=spec.key_pattern)))
                continue
            self.out.positions[f"{path}.{key.value}:key"] = self.pos(key)
            checked = self.check(value, spec.item, f"{path}.{key.value}")
            if checked is not None:
                result[key.value] = checked
        return result

    def _claim(self, node: yaml.Node, spec: Field, path: str) -> dict[str, Any] | None:
        if isinstance(node, yaml.MappingNode):
            return self._record(node, spec, path)
        value = self._math(node, spec, path)
        return None if value is None else {"value": value}

    def _label_claim(self, node: yaml.Node, spec: Field, path: str) -> dict[str, Any] | None:
        if isinstance(node, yaml.MappingNode):
            return self._record(node, spec, path)
        value = self._choice(node, spec, path)
        return None if value is None else {"value": value}


def _shape(node: yaml.Node) -> str:
    if isinstance(node, yaml.MappingNode):
        return "mapping"
    if isinstance(node, yaml.SequenceNode):
        return "list"
    return "single value"


def _renamed_key(key: yaml.Node, name: str) -> yaml.ScalarNode:
    """The key node under its new name, at the old one's position."""
    return yaml.ScalarNode("tag:yaml.org,2002:str", name, key.start_mark, key.end_mark)


def _greek_hint(value: str) -> str:
    """'write theta for θ' when a name is a Greek letter (names are written out in ASCII)."""
    from generator.entry.mathparse import spelled_out

    words = [(char, spelled_out(char)) for char in value if not char.isascii()]
    if words and all(word for _, word in words):
        fixed = "".join(spelled_out(c) or c for c in value)
        return f"write Greek letters out in names: {fixed} for {value}"
    return ""


def _pattern_hint(spec: Field) -> str:
    hints = {
        r"^[a-z0-9]+(-[a-z0-9]+)*$": "use lowercase letters, digits and single hyphens",
        r"^[A-Za-z][A-Za-z0-9_]*$": "use a letter followed by letters, digits or _",
        r"^10\.\d{4,9}/\S+$": "a DOI looks like 10.1103/PhysRevLett.11.237 (no URL prefix)",
        r"^[+-]{2,11}$": 'write one sign per coordinate, e.g. "-+++" (quoted)',
    }
    if spec.pattern in hints:
        return hints[spec.pattern]
    if spec.pattern and "arXiv" in spec.doc:
        return "an arXiv id looks like 1104.0001 or gr-qc/0506126 (no URL prefix)"
    if spec.pattern and "ISBN" in spec.doc:
        return "an ISBN has 10 or 13 digits, e.g. 978-0-521-46702-5"
    return f"expected to match {spec.pattern}"


def _close_match(value: str, options: list[str] | tuple[str, ...]) -> str:
    import difflib

    match = difflib.get_close_matches(value, list(options), n=1)
    return f"did you mean '{match[0]}'?" if match else ""


def _character_positions(
    source: str, line_starts: list[int], node: yaml.ScalarNode, value: str
) -> tuple[tuple[int, int], ...]:
    """Map each character of a scalar's value to its (line, column) in the source.

    Folding and quoting change white space but keep every other character in order, so each
    non-space character is matched to its next occurrence in the raw text of the node.
    """
    start, end = node.start_mark.index, node.end_mark.index
    raw = source[start:end]
    out: list[tuple[int, int]] = []
    cursor = 0
    last = start
    for char in value:
        if not char.isspace():
            found = raw.find(char, cursor)
            if found >= 0:
                last = start + found
                cursor = found + 1
        out.append(_line_column(line_starts, last))
    return tuple(out)


_YAML_LINE_BREAK = re.compile(r"\r\n|[\r\n\x85\u2028\u2029]")


def _line_starts(source: str) -> list[int]:
    """Where lines start, with YAML's own line breaks (so positions agree with its marks)."""
    return [0, *(match.end() for match in _YAML_LINE_BREAK.finditer(source))]


def _line_column(line_starts: list[int], index: int) -> tuple[int, int]:
    import bisect

    line = bisect.bisect_right(line_starts, index) - 1
    return line + 1, index - line_starts[line] + 1


def read_nodes(file: str, source: str) -> tuple[yaml.Node | None, list[Diagnostic]]:
    """Parse YAML to a node tree, refusing anchors, aliases, custom tags and deep nesting.

    libyaml (PyYAML's C parser) reads a well-formed file about ten times faster than the
    pure-Python parser, and its marks count characters as ours do. Its error positions count
    bytes, though, and its messages differ; so a file it rejects is read again by the
    pure-Python parser, whose diagnostics are the ones we show (bad input is the rare case).
    """
    fast = getattr(yaml, "CSafeLoader", None)
    if fast is not None:
        try:
            return _read_nodes_with(file, source, fast)
        except yaml.YAMLError:
            pass
    try:
        return _read_nodes_with(file, source, yaml.SafeLoader)
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark or exc.context_mark
        line, column = (mark.line + 1, mark.column + 1) if mark else (1, 1)
        message = f"invalid YAML: {exc.problem or exc.context}"
        return None, [Diagnostic(file, line, column, "error", message, "yaml.syntax",
                                 "check indentation, colons and quotes around this point")]
    except yaml.YAMLError as exc:  # e.g. a character YAML forbids (NUL, control bytes)
        where = _line_column(_line_starts(source), getattr(exc, "position", 0))
        reason = getattr(exc, "reason", None) or str(exc)
        return None, [Diagnostic(file, *where, "error", f"invalid YAML: {reason}", "yaml.syntax",
                                 "remove the character; entries are plain UTF-8 text")]


def _read_nodes_with(file: str, source: str, loader: type
                     ) -> tuple[yaml.Node | None, list[Diagnostic]]:
    """One reading with the given loader; YAML syntax errors propagate to the caller."""
    diagnostics: list[Diagnostic] = []
    depth = 0
    for event in yaml.parse(source, Loader=loader):
        problem = _refuse_event(event)
        if problem:
            diagnostics.append(_event_diagnostic(file, event, *problem))
        if isinstance(event, yaml.CollectionStartEvent):
            depth += 1
            if depth > MAX_NESTING:
                diagnostics.append(_event_diagnostic(
                    file, event, f"nesting deeper than {MAX_NESTING} levels", "yaml.depth"))
                break
        elif isinstance(event, yaml.CollectionEndEvent):
            depth -= 1
    if diagnostics:
        return None, diagnostics
    documents = list(yaml.compose_all(source, Loader=loader))
    if len(documents) != 1 or documents[0] is None:
        return None, [Diagnostic(file, 1, 1, "error", "expected exactly one YAML document",
                                 "yaml.document", "an entry file holds one mapping")]
    return documents[0], []


def plain_events(source: str) -> list[yaml.Event] | None:
    """The YAML events of a well-formed file with nothing ``read_nodes`` refuses (anchors,
    aliases, custom tags, nesting deeper than MAX_NESTING, other than one document), else
    None. For readers that want a few top-level values: composing the whole node tree costs
    more than parsing, and such a reader looks at a handful of events. None also where
    libyaml is missing or rejects the file: the full reader then decides and explains."""
    fast = getattr(yaml, "CSafeLoader", None)
    if fast is None:
        return None
    events: list[yaml.Event] = []
    depth = documents = 0
    try:
        for event in yaml.parse(source, Loader=fast):
            kind = type(event)  # libyaml makes exactly these classes; scalars first (most)
            if kind is yaml.ScalarEvent or kind in _STARTS:
                if event.anchor or (event.tag and event.tag not in _ALLOWED_TAGS):
                    return None  # what ``_refuse_event`` refuses, checked inline
                if kind is not yaml.ScalarEvent:
                    depth += 1
                    if depth > MAX_NESTING:
                        return None
            elif kind in _ENDS:
                depth -= 1
            elif kind is yaml.DocumentStartEvent:
                documents += 1
            elif kind is yaml.AliasEvent or kind not in _OTHERS:
                return None
            events.append(event)
    except yaml.YAMLError:
        return None
    return events if documents == 1 else None


_STARTS = frozenset({yaml.MappingStartEvent, yaml.SequenceStartEvent})
_ENDS = frozenset({yaml.MappingEndEvent, yaml.SequenceEndEvent})
_OTHERS = frozenset({yaml.StreamStartEvent, yaml.StreamEndEvent, yaml.DocumentEndEvent})
_ALLOWED_TAGS = STANDARD_TAGS | {"!"}


_RESOLVER = yaml.resolver.Resolver()


def scalar_tag(event: yaml.ScalarEvent) -> str:
    """The tag the composer would give this scalar's node (explicit, else resolved from its
    plain or quoted text, as ``yaml.compose`` does)."""
    if event.tag is None or event.tag == "!":
        return _RESOLVER.resolve(yaml.ScalarNode, event.value, event.implicit)
    return event.tag


def _refuse_event(event: yaml.Event) -> tuple[str, str, str] | None:
    if isinstance(event, yaml.AliasEvent):
        return ("YAML aliases (*name) are not allowed", "yaml.alias",
                "write the value out in full")
    anchor = getattr(event, "anchor", None)
    if anchor:
        return ("YAML anchors (&name) are not allowed", "yaml.anchor",
                "write the value out in full")
    tag = getattr(event, "tag", None)
    if tag and tag not in STANDARD_TAGS and tag != "!":
        return (f"YAML tag {tag!r} is not allowed", "yaml.tag", "remove the tag")
    return None


def _event_diagnostic(file: str, event: yaml.Event, message: str, code: str,
                      hint: str = "") -> Diagnostic:
    mark = event.start_mark
    return Diagnostic(file, mark.line + 1, mark.column + 1, "error", message, code, hint)


def validate(file: str, source: str, spec: Field) -> Validated:
    """Read and check one entry file; never raises for bad input."""
    node, diagnostics = read_nodes(file, source)
    if node is None:
        return Validated(diagnostics=diagnostics)
    checker = _Checker(file, source)
    if not isinstance(node, yaml.MappingNode):
        checker.error(node, "an entry must be a YAML mapping of keys to values", "entry.type",
                      "start with 'id: your-entry-id'")
        return checker.out
    checker.out.data = checker.check(node, spec, "") or {}
    return checker.out
