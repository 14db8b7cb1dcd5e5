"""Finding and loading the whole catalog: entry files, vocabularies, cross-entry rules.

Single entries are loaded by `loader`; this module adds what needs the whole catalog: the tag
and family vocabularies, unique ids, and `related` links that must point at existing entries.
"""

from __future__ import annotations

import os
import re
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import yaml

from generator.entry.loader import LoadResult, Vocabulary, load_entry
from generator.entry.safefile import is_link, read_catalog_file
from generator.entry.yamlcheck import (
    MAX_FILE_BYTES,
    node_position,
    plain_events,
    read_nodes,
    scalar_tag,
)
from generator.errors import Diagnostic, SourcePos, UsageError
from generator.model import Family, Tag

ENTRY_SUFFIXES = (".yaml", ".yml")
VOCABULARY_FILES = ("tags.yaml", "families.yaml", "publication.yaml")  # not entries
NAME_LISTS = ("tags.yaml", "families.yaml")  # the vocabularies entries are checked against


def find_catalog_root(start: Path) -> Path | None:
    """The nearest folder at or above ``start`` named catalog that holds tags.yaml."""
    for folder in [start, *start.parents]:
        if folder.name == "catalog" and (folder / "tags.yaml").is_file():
            return folder
        if (folder / "catalog" / "tags.yaml").is_file():
            return folder / "catalog"
    return None


def entry_files(paths: Sequence[Path]) -> list[Path]:
    """Entry files named by the user (files, or folders searched recursively), sorted.

    Inside a folder, symbolic links are never followed: a linked file or folder is listed
    itself (whatever its name), so that loading it reports it (`safefile`) instead of it being
    read — or, for a folder, skipped without a word.
    """
    found: list[Path] = []
    for path in paths:
        if path.is_dir():
            found += _walk_without_links(path)
        elif path.is_file() or is_link(path):
            found.append(path)
        else:
            raise UsageError(f"no such file or folder: {path}")
    return sorted(set(found), key=lambda p: p.as_posix())


def _walk_without_links(folder: Path) -> list[Path]:
    found: list[Path] = []
    for top, folders, files in os.walk(folder, followlinks=False):
        here = Path(top)
        for name in folders:
            if is_link(here / name):
                found.append(here / name)
        for name in files:
            path = here / name
            if is_link(path) or _is_entry_file(path):
                found.append(path)
    return found


def _is_entry_file(path: Path) -> bool:
    return (path.suffix in ENTRY_SUFFIXES and path.is_file() and path.name not in
            VOCABULARY_FILES and path.parent.name != "catalog")


@dataclass(frozen=True)
class VocabularyFile:
    """What one vocabulary file (tags.yaml, families.yaml) holds that is usable, and what is
    wrong with the rest, as positioned diagnostics."""

    entries: dict[str, Any]  # name -> meaning (tags) or {"title", "about"} (families)
    diagnostics: tuple[Diagnostic, ...] = ()


def read_vocabulary_file(path: Path, display: str | None = None) -> VocabularyFile:
    """Read tags.yaml or families.yaml like an entry: no link, size cap, no anchors or
    aliases, no tags (`yamlcheck.read_nodes`); every name a plain string. Never raises for bad
    content: the usable names are kept and the rest is reported where it is written."""
    file = display or path.as_posix()
    if not path.exists() and not is_link(path):
        return VocabularyFile({})
    source, problem = read_catalog_file(path, file, MAX_VOCABULARY_BYTES)
    if problem is not None:
        return VocabularyFile({}, (problem,))
    node, problems = read_nodes(file, source)
    if problems:
        return VocabularyFile({}, tuple(problems))
    if not isinstance(node, yaml.MappingNode):
        return VocabularyFile({}, (Diagnostic.at(
            node_position(file, node), "error", "a vocabulary file is a mapping of names to "
            "their meaning", "vocabulary.type", "write one 'name: meaning' line per name"),))
    families = path.name == "families.yaml"
    entries: dict[str, Any] = {}
    out: list[Diagnostic] = []
    for key, value in node.value:
        if not _is_plain_text(key) or not re.fullmatch(VOCABULARY_NAME, key.value):
            out.append(_vocabulary_error(file, key, "a name must be lowercase letters, digits "
                                         "and single hyphens", "vocabulary.name"))
        elif key.value in entries:
            out.append(_vocabulary_error(file, key, f"'{key.value}' is listed twice",
                                         "vocabulary.duplicate"))
        else:
            meaning = _family_fields(file, value, out) if families else \
                _vocabulary_text(file, value, out)
            if meaning is not None:
                entries[key.value] = meaning
    return VocabularyFile(entries, tuple(out))


MAX_VOCABULARY_BYTES = 256 * 1024
VOCABULARY_NAME = r"[a-z0-9]+(-[a-z0-9]+)*"


def _vocabulary_error(file: str, node: yaml.Node, message: str, code: str) -> Diagnostic:
    return Diagnostic.at(node_position(file, node), "error", message, code,
                         "see the comment at the top of the file for its format")


def _vocabulary_text(file: str, node: yaml.Node, out: list[Diagnostic]) -> str | None:
    if not isinstance(node, yaml.ScalarNode) or not node.value.strip():
        out.append(_vocabulary_error(file, node, "the meaning must be one line of text",
                                     "vocabulary.type"))
        return None
    return node.value


def _family_fields(file: str, node: yaml.Node, out: list[Diagnostic]) -> dict[str, str] | None:
    if not isinstance(node, yaml.MappingNode):
        out.append(_vocabulary_error(file, node, "a family is a mapping with 'title' and "
                                     "'about'", "vocabulary.type"))
        return None
    fields: dict[str, str] = {}
    for key, value in node.value:
        if not _is_plain_text(key) or key.value not in ("title", "about"):
            out.append(_vocabulary_error(file, key, "a family has only 'title' and 'about'",
                                         "vocabulary.key"))
            continue
        text = _vocabulary_text(file, value, out)
        if text is not None:
            fields[key.value] = text
    return fields


def vocabulary_problems(root: Path | None, base: Path) -> dict[str, tuple[Diagnostic, ...]]:
    """Diagnostics of the catalog's vocabulary files, by displayed file (only those with any)."""
    if root is None:
        return {}
    found = {}
    for name in NAME_LISTS:
        display = display_path(root / name, base)
        problems = read_vocabulary_file(root / name, display).diagnostics
        if problems:
            found[display] = problems
    return found


def _read_mapping(path: Path) -> dict[str, object]:
    """A small settings file (e.g. publication.yaml) as {key: text, or a list/dict of texts},
    read like every catalog file: no link, size cap, no anchors, aliases or tags. Problems
    raise UsageError with the file's line and column (the caller cannot go on without it)."""
    if not path.exists() and not is_link(path):
        return {}
    file = path.as_posix()
    source, problem = read_catalog_file(path, file, MAX_VOCABULARY_BYTES)
    problems = [problem] if problem is not None else []
    node = None
    if not problems:
        node, problems = read_nodes(file, source)
    if problems:
        raise UsageError(problems[0].format_text())
    if node is None:
        return {}
    if not isinstance(node, yaml.MappingNode):
        raise UsageError(Diagnostic.at(node_position(file, node), "error", "expected a mapping "
                                       "of keys to values", "settings.type").format_text())
    data: dict[str, object] = {}
    for key, value in node.value:
        if not _is_plain_text(key):
            raise UsageError(Diagnostic.at(node_position(file, key), "error",
                                           "keys must be plain names", "settings.key"
                                           ).format_text())
        data[key.value] = _plain(value)
    return data


def _plain(node: yaml.Node) -> object:
    """Scalars stay text; collections become lists and dicts of text (to be refused by the
    caller where text is expected)."""
    if isinstance(node, yaml.MappingNode):
        return {str(k.value): _plain(v) for k, v in node.value}
    if isinstance(node, yaml.SequenceNode):
        return [_plain(item) for item in node.value]
    return node.value


def read_families(root: Path) -> tuple[Family, ...]:
    data = read_vocabulary_file(root / "families.yaml").entries
    return tuple(Family(name, v.get("title", name), v.get("about", ""))
                 for name, v in data.items())


def read_tags(root: Path) -> tuple[Tag, ...]:
    data = read_vocabulary_file(root / "tags.yaml").entries
    return tuple(Tag(name, meaning) for name, meaning in sorted(data.items()))


def vocabulary(root: Path | None) -> Vocabulary:
    if root is None:
        return Vocabulary()
    return Vocabulary(frozenset(t.name for t in read_tags(root)),
                      frozenset(f.name for f in read_families(root)))


def display_path(path: Path, base: Path) -> str:
    """The path as the contributor would type it (relative to the working folder if inside).

    The last part is never resolved: a symbolic link is shown (and refused) as itself, not as
    the file it points to."""
    absolute = Path(os.path.abspath(path))
    resolved = absolute.parent.resolve() / absolute.name
    for candidate in (resolved, absolute):
        try:
            return candidate.relative_to(base.resolve()).as_posix()
        except ValueError:
            continue
    return path.as_posix()


def load_all(files: Iterable[Path], root: Path | None, base: Path) -> list[LoadResult]:
    vocab = vocabulary(root)
    return [load_entry(p, display_path(p, base), vocab) for p in files]


@dataclass(frozen=True)
class Outline:
    """What the rest of the catalog needs of one entry: its file, id and links.

    ``id`` is None when the entry could not be read far enough to have one.
    """

    file: str
    id: str | None
    id_pos: SourcePos
    links: tuple[tuple[str, SourcePos], ...]  # (id of the related entry, where it is named)
    limit_targets: frozenset[str] = frozenset()  # related ids linked as limits, not charts


def outline_of(load: LoadResult) -> Outline:
    entry = load.entry
    if entry is None:
        return Outline(load.file, None, SourcePos(load.file, 1, 1), ())
    return Outline(load.file, entry.id, entry.pos("id"),
                   tuple((item.entry, item.pos) for item in entry.related),
                   frozenset(item.entry for item in entry.related if item.kind == "limit"))


def outline_all(files: Iterable[Path], root: Path | None, base: Path) -> list[Outline]:
    """Outlines of many entries, read quickly: a one-entry check needs the others' ids only."""
    vocab: Vocabulary | None = None
    found = []
    for path in files:
        display = display_path(path, base)
        outline = peek_outline(path, display)
        if outline is None:  # anything unusual: the loader reads it and says what is wrong
            vocab = vocab or vocabulary(root)
            outline = outline_of(load_entry(path, display, vocab, with_math=False))
        found.append(outline)
    return found


def peek_outline(path: Path, display: str) -> Outline | None:
    """The id and links of a well-formed entry from its YAML events (``plain_events``: the
    same refusals as the loader's reading), without composing or validating the rest — a
    one-entry check reads every other entry this way, so it is kept to one parse; None when
    anything is unusual, so that the full loader, with its diagnostics, decides instead.
    Only the top-level ``id`` and ``related`` values are looked at.
    """
    source, unreadable = read_catalog_file(path, display, MAX_FILE_BYTES)
    if unreadable is not None:
        return None
    events = plain_events(source)
    if events is None or len(events) < 3 or not isinstance(events[2], yaml.MappingStartEvent):
        return None
    top = _mapping_values(events, 2)
    if top is None:
        return None
    identity = top.get("id")
    if identity is None or not _is_plain_text_event(events[identity]):
        return None
    links = []
    limits: set[str] = set()
    if "related" in top:
        start = top["related"]
        if not isinstance(events[start], yaml.SequenceStartEvent):
            return None
        for item in _sequence_items(events, start):
            if not isinstance(events[item], yaml.MappingStartEvent):
                return None
            named = _mapping_values(events, item)
            if named is None or "entry" not in named or not _is_plain_text_event(
                    events[named["entry"]]):
                return None
            links.append((events[named["entry"]].value, node_position(display, events[item])))
            kind = events[named["kind"]] if "kind" in named else None
            if kind is not None and _is_plain_text_event(kind) and kind.value == "limit":
                limits.add(events[named["entry"]].value)
    return Outline(display, events[identity].value, node_position(display, events[identity]),
                   tuple(links), frozenset(limits))


def _subtree_end(events: list[yaml.Event], start: int) -> int:
    """The index just past the node that starts at ``start`` (a scalar or a collection)."""
    if not isinstance(events[start], yaml.CollectionStartEvent):
        return start + 1
    depth, i = 0, start
    while True:
        if isinstance(events[i], yaml.CollectionStartEvent):
            depth += 1
        elif isinstance(events[i], yaml.CollectionEndEvent):
            depth -= 1
            if depth == 0:
                return i + 1
        i += 1


def _sequence_items(events: list[yaml.Event], start: int) -> list[int]:
    """Where each item of the sequence starting at ``start`` begins."""
    items, i = [], start + 1
    while not isinstance(events[i], yaml.SequenceEndEvent):
        items.append(i)
        i = _subtree_end(events, i)
    return items


def _mapping_values(events: list[yaml.Event], start: int) -> dict[str, int] | None:
    """Key text → where its value begins, for the mapping starting at ``start`` (the last of
    repeated keys, as composing then reading would keep); None for a key that is not a scalar
    (unusual: the full loader explains it)."""
    values: dict[str, int] = {}
    i = start + 1
    while not isinstance(events[i], yaml.MappingEndEvent):
        if not isinstance(events[i], yaml.ScalarEvent):
            return None
        values[events[i].value] = i + 1
        i = _subtree_end(events, i + 1)
    return values


def _is_plain_text(node: yaml.Node | None) -> bool:
    return isinstance(node, yaml.ScalarNode) and node.tag == "tag:yaml.org,2002:str"


def _is_plain_text_event(event: yaml.Event) -> bool:
    """The event form of ``_is_plain_text``: a scalar whose node would be a plain string."""
    return isinstance(event, yaml.ScalarEvent) and scalar_tag(event) == "tag:yaml.org,2002:str"


def cross_entry_diagnostics(outlines: Sequence[Outline], known_ids: set[str]
                            ) -> dict[str, list[Diagnostic]]:
    """Ids used by more than one entry (every such file is told, so that a one-entry check of
    the newcomer hears it whatever the file order) and `related` links to unknown entries."""
    out: dict[str, list[Diagnostic]] = {}
    users: dict[str, list[str]] = {}
    for outline in outlines:
        if outline.id is not None:
            users.setdefault(outline.id, []).append(outline.file)
    for outline in outlines:
        others = [f for f in users.get(outline.id or "", []) if f != outline.file]
        if others:
            out.setdefault(outline.file, []).append(Diagnostic.at(
                outline.id_pos, "error", f"id '{outline.id}' is also used by "
                f"{', '.join(others)}", "catalog.duplicate-id",
                "ids are unique and never reused; choose another"))
        for target, where in outline.links:
            if target not in known_ids:
                out.setdefault(outline.file, []).append(Diagnostic.at(
                    where, "error", f"related entry '{target}' does not exist",
                    "catalog.related", "use the id of an entry in the catalog"))
    return out


def chart_groups(links: Iterable[tuple[str, Iterable[str]]]) -> dict[str, str]:
    """Entry id → the first id (in sort order) of the entries joined to it by ``related``
    links, in either direction and through chains; ``links`` holds (entry id, the ids its
    ``related`` names) — from outlines in a check, from reports in the duplicate search.

    Charts of one spacetime are not duplicates of each other: a new Schwarzschild chart that
    maps onto the Schwarzschild entry must not be warned as a twin of the Kruskal–Szekeres
    entry, which maps there too. The links are the declared ones; a link that does not verify
    makes its entry fail anyway.
    """
    parent: dict[str, str] = {}

    def root(entry_id: str) -> str:
        parent.setdefault(entry_id, entry_id)
        while parent[entry_id] != entry_id:
            parent[entry_id] = parent[parent[entry_id]]
            entry_id = parent[entry_id]
        return entry_id

    for entry_id, targets in links:
        for target in targets:
            a, b = root(entry_id), root(target)
            parent[max(a, b)] = min(a, b)
        root(entry_id)
    return {entry_id: root(entry_id) for entry_id in sorted(parent)}


def outline_links(outlines: Iterable[Outline]) -> list[tuple[str, list[str]]]:
    """(id, linked ids) of every outline with an id, for ``chart_groups``."""
    return [(o.id, [target for target, _ in o.links if target not in o.limit_targets])
            for o in outlines if o.id is not None]
