"""Finding and loading the whole catalog: entry files, vocabularies, cross-entry rules.

Single entries are loaded by `loader`; this module adds what needs the whole catalog: the tag
and family vocabularies, unique ids, and `related` links that must point at existing entries.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from pathlib import Path

import yaml

from generator.entry.loader import LoadResult, Vocabulary, load_entry
from generator.entry.yamlcheck import MAX_FILE_BYTES, node_position, read_nodes
from generator.errors import Diagnostic, SourcePos, UsageError
from generator.model import Family, Tag

ENTRY_SUFFIXES = (".yaml", ".yml")
VOCABULARY_FILES = ("tags.yaml", "families.yaml", "publication.yaml")


def find_catalog_root(start: Path) -> Path | None:
    """The nearest folder at or above ``start`` named catalog that holds tags.yaml."""
    for folder in [start, *start.parents]:
        if folder.name == "catalog" and (folder / "tags.yaml").is_file():
            return folder
        if (folder / "catalog" / "tags.yaml").is_file():
            return folder / "catalog"
    return None


def entry_files(paths: Sequence[Path]) -> list[Path]:
    """Entry files named by the user (files, or folders searched recursively), sorted."""
    found: list[Path] = []
    for path in paths:
        if path.is_dir():
            found += [p for p in sorted(path.rglob("*")) if _is_entry_file(p)]
        elif path.is_file():
            found.append(path)
        else:
            raise UsageError(f"no such file or folder: {path}")
    return sorted(set(found), key=lambda p: p.as_posix())


def _is_entry_file(path: Path) -> bool:
    return (path.suffix in ENTRY_SUFFIXES and path.is_file() and path.name not in
            VOCABULARY_FILES and path.parent.name != "catalog")


def read_families(root: Path) -> tuple[Family, ...]:
    data = _read_mapping(root / "families.yaml")
    return tuple(Family(name, str(v.get("title", name)), str(v.get("about", "")))
                 for name, v in data.items() if isinstance(v, dict))


def read_tags(root: Path) -> tuple[Tag, ...]:
    data = _read_mapping(root / "tags.yaml")
    return tuple(Tag(str(name), str(meaning)) for name, meaning in sorted(data.items()))


def _read_mapping(path: Path) -> dict:
    if not path.is_file():
        return {}
    try:
        data = yaml.safe_load(path.read_text(encoding="utf-8"))
    except yaml.YAMLError as exc:
        raise UsageError(f"{path}: invalid YAML: {exc}") from exc
    return data if isinstance(data, dict) else {}


def vocabulary(root: Path | None) -> Vocabulary:
    if root is None:
        return Vocabulary()
    return Vocabulary(frozenset(t.name for t in read_tags(root)),
                      frozenset(f.name for f in read_families(root)))


def display_path(path: Path, base: Path) -> str:
    """The path as the contributor would type it (relative to the working folder if inside)."""
    try:
        return path.resolve().relative_to(base.resolve()).as_posix()
    except ValueError:
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


def outline_of(load: LoadResult) -> Outline:
    entry = load.entry
    if entry is None:
        return Outline(load.file, None, SourcePos(load.file, 1, 1), ())
    return Outline(load.file, entry.id, entry.pos("id"),
                   tuple((item.entry, item.pos) for item in entry.related))


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
    """The id and links of a well-formed entry from its YAML node tree (``read_nodes``: the
    same safe reading as the loader's), without validating the rest — a few times quicker
    than the structure load; None when anything is unusual, so that the full loader,
    with its diagnostics, decides instead. Only the top-level ``id`` and ``related`` nodes
    are visited.
    """
    try:
        raw = path.read_bytes()
        if len(raw) > MAX_FILE_BYTES:
            return None
        node, problems = read_nodes(display, raw.decode("utf-8"))
    except (OSError, UnicodeDecodeError):
        return None
    if problems or not isinstance(node, yaml.MappingNode):
        return None
    top = {key.value: value for key, value in node.value if isinstance(key, yaml.ScalarNode)}
    identity = top.get("id")
    if not _is_plain_text(identity):
        return None
    links = []
    related = top.get("related")
    if related is not None:
        if not isinstance(related, yaml.SequenceNode):
            return None
        for item in related.value:
            if not isinstance(item, yaml.MappingNode):
                return None
            named = {k.value: v for k, v in item.value if isinstance(k, yaml.ScalarNode)}
            if not _is_plain_text(named.get("entry")):
                return None
            links.append((named["entry"].value, node_position(display, item)))
    return Outline(display, identity.value, node_position(display, identity), tuple(links))


def _is_plain_text(node: yaml.Node | None) -> bool:
    return isinstance(node, yaml.ScalarNode) and node.tag == "tag:yaml.org,2002:str"


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
    return [(o.id, [target for target, _ in o.links]) for o in outlines if o.id is not None]
