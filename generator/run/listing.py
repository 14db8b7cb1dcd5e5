"""``list``: the catalog's entries with id, family and status, filterable.

The status is the one ``check`` gives (verified, nothing-claimed, failed), so ``list`` checks
the entries; with the result cache of an earlier check or build this costs only reading it.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

from generator.entry.catalog import entry_files
from generator.model import EntryReport
from generator.physics.verify import entry_state
from generator.run.pipeline import RunOptions, check_files

STATES = ("verified", "nothing-claimed", "failed")


@dataclass(frozen=True)
class Listed:
    id: str
    family: str
    status: str
    title: str
    file: str


@dataclass(frozen=True)
class Filters:
    family: str | None = None
    tag: str | None = None
    status: str | None = None
    text: str | None = None  # case-insensitive, in id or title

    def keep(self, report: EntryReport, row: Listed) -> bool:
        tags = report.entry.tags if report.entry is not None else ()
        words = f"{row.id} {row.title}".lower()
        return ((self.family is None or row.family == self.family)
                and (self.tag is None or self.tag in tags)
                and (self.status is None or row.status == self.status)
                and (self.text is None or self.text.lower() in words))


def list_entries(catalog: Path, options: RunOptions, filters: Filters,
                 on_done: Callable[[EntryReport], None] | None = None) -> list[Listed]:
    """Rows in catalog order (family folder, then file name)."""
    files = entry_files([catalog])
    reports = check_files(files, catalog, Path.cwd(), options, on_done,
                          search_duplicates=False)
    rows = []
    for report in reports:
        entry = report.entry
        row = Listed(entry.id if entry else Path(report.file).stem,
                     entry.family if entry else Path(report.file).parent.name,
                     entry_state(report), entry.title if entry else "", report.file)
        if filters.keep(report, row):
            rows.append(row)
    return rows


def format_rows(rows: list[Listed]) -> str:
    """A plain table: id, family, status, title (columns padded, no colour)."""
    if not rows:
        return "no entries match"
    width_id = max(len(r.id) for r in rows)
    width_family = max(len(r.family) for r in rows)
    width_status = max(len(r.status) for r in rows)
    return "\n".join(f"{r.id:<{width_id}}  {r.family:<{width_family}}  "
                     f"{r.status:<{width_status}}  {r.title}" for r in rows)
