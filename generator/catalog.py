"""Finding and loading the whole catalog: entry files, vocabularies, cross-entry rules.

Single entries are loaded by `loader`; this module adds what needs the whole catalog: the tag
and family vocabularies, unique ids, and `related` links that must point at existing entries.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from pathlib import Path

import yaml

from .errors import Diagnostic, UsageError
from .loader import LoadResult, Vocabulary, load_entry
from .model import Family, Tag

ENTRY_SUFFIXES = (".yaml", ".yml")
VOCABULARY_FILES = ("tags.yaml", "families.yaml")


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


def load_all(files: Iterable[Path], root: Path | None, base: Path, with_math: bool = True
             ) -> list[LoadResult]:
    vocab = vocabulary(root)
    return [load_entry(p, display_path(p, base), vocab, with_math) for p in files]


def cross_entry_diagnostics(loads: Sequence[LoadResult], known_ids: set[str]
                            ) -> dict[str, list[Diagnostic]]:
    """Duplicate ids among the loaded entries and `related` links to unknown entries."""
    out: dict[str, list[Diagnostic]] = {}
    first: dict[str, str] = {}
    for load in loads:
        entry = load.entry
        if entry is None:
            continue
        if entry.id in first:
            out.setdefault(load.file, []).append(Diagnostic.at(
                entry.pos("id"), "error", f"id '{entry.id}' is already used by {first[entry.id]}",
                "catalog.duplicate-id", "ids are unique and never reused; choose another"))
        first.setdefault(entry.id, load.file)
        for item in entry.related:
            if item.entry not in known_ids:
                out.setdefault(load.file, []).append(Diagnostic.at(
                    item.pos, "error", f"related entry '{item.entry}' does not exist",
                    "catalog.related", "use the id of an entry in the catalog"))
    return out
