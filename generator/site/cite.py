"""Citations: how a reader cites a verified entry, and the entry's content hash.

A citation must pin down *which mathematics* the reader relied on, not just which page: the
entry id is stable but its metric may be corrected later. So every citation carries the catalog
version and the entry's content hash, a sha256 over a canonical JSON form of the entry's
mathematics (``content_hash``). The hash ignores how the YAML is laid out (whitespace, key
order, comments, quoting) but changes whenever a formula, an assumption or a claim changes, so
``python -m generator cite --hash H`` can find the exact revision a paper used.

The access date is left to the user on purpose: output must be deterministic (same catalog,
same bytes), and only the reader knows when they looked.
"""

from __future__ import annotations

import json
import re
import unicodedata
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import TypeVar

from generator.entry.content_hash import short_hash
from generator.model import (
    CatalogMeta,
    Entry,
    EntryReport,
    Reference,
)

FORMATS = ("bibtex", "csl-json", "text")
ACCESS_DATE_PLACEHOLDER = "<date>"

_T = TypeVar("_T")


# ---------------------------------------------------------------------------- escaping

_BIBTEX_SPECIALS = {
    "\\": r"\textbackslash{}",
    "{": r"\{",
    "}": r"\}",
    "&": r"\&",
    "%": r"\%",
    "$": r"\$",
    "#": r"\#",
    "_": r"\_",
    "~": r"\textasciitilde{}",
    "^": r"\textasciicircum{}",
}


def bibtex_escape(text: str) -> str:
    """Escape LaTeX specials so any title or name is a balanced, literal BibTeX value."""
    text = " ".join(text.split())
    return "".join(_BIBTEX_SPECIALS.get(ch, ch) for ch in text)


def bibtex_verbatim(text: str) -> str:
    """For url/doi/eprint fields (read verbatim by biblatex): keep the text, but braces and
    backslashes could unbalance the entry, so they are percent-encoded."""
    text = "".join(text.split())
    return text.replace("\\", "%5C").replace("{", "%7B").replace("}", "%7D")


def bibtex_key(*parts: str) -> str:
    """A key of ASCII letters, digits and hyphens only: safe in every BibTeX dialect."""
    ascii_text = unicodedata.normalize("NFKD", "-".join(parts)).encode("ascii", "ignore")
    key = re.sub(r"[^a-z0-9]+", "-", ascii_text.decode("ascii").lower()).strip("-")
    return key or "entry"


def _bibtex_record(kind: str, key: str, fields: Sequence[tuple[str, str]]) -> str:
    lines = [f"@{kind}{{{key},"]
    lines += [f"  {name} = {{{value}}}," for name, value in fields if value]
    lines.append("}")
    return "\n".join(lines) + "\n"


# ---------------------------------------------------------------------------- citing an entry


@dataclass(frozen=True)
class EntryCitation:
    """What every format of an entry citation says (one place, so formats cannot disagree)."""

    key: str
    title: str
    catalog: str
    authors: str
    version: str
    entry_id: str
    content_hash: str  # short form
    url: str | None  # None when the catalog names no site address
    repository: str | None
    year: str | None  # year of the latest revision, when history is known
    verified: bool = True  # False only when the user chose to cite a failing entry


def entry_url(meta: CatalogMeta, entry_id: str) -> str | None:
    """Permanent address of an entry page, ``<site_address>entries/<id>/``; None without a
    configured site address (a citation never points at an address nobody set)."""
    base = meta.publication.site_address
    if not base:
        return None
    base = base if base.endswith("/") else base + "/"
    return f"{base}entries/{entry_id}/"


def describe_entry(report: EntryReport, meta: CatalogMeta) -> EntryCitation:
    entry = _require_entry(report)
    revisions = meta.revisions.get(entry.id, ())
    year = max((r.date[:4] for r in revisions), default=None)
    return EntryCitation(
        key=bibtex_key("almanac", entry.id),
        title=f"{entry.title} ({entry.chart})",
        catalog=meta.publication.title,
        authors=meta.publication.authors,
        version=meta.version,
        entry_id=entry.id,
        content_hash=short_hash(report.content_hash),
        url=entry_url(meta, entry.id),
        repository=meta.publication.repository,
        year=year,
        verified=report.ok,
    )


def cite_entry(report: EntryReport, meta: CatalogMeta, fmt: str) -> str:
    """Citation of a verified entry in ``fmt``: bibtex | csl-json | text."""
    citation = describe_entry(report, meta)
    return _dispatch(fmt, _entry_bibtex, _entry_csl, _entry_text)(citation)


def _require_entry(report: EntryReport) -> Entry:
    if report.entry is None:
        raise ValueError(f"{report.file}: the entry could not be loaded, so it cannot be cited")
    if not report.content_hash:
        raise ValueError(f"{report.file}: the report carries no content hash")
    return report.entry


def _entry_note(c: EntryCitation) -> str:
    note = f"{c.catalog} entry {c.entry_id}, version {c.version}, content hash {c.content_hash}"
    if c.repository:
        note += f", source {c.repository}"
    if not c.verified:
        note += "; this entry did not pass the catalog's checks"
    return note


def _entry_bibtex(c: EntryCitation) -> str:
    fields = [
        ("author", "{" + bibtex_escape(c.authors) + "}"),
        ("title", "{" + bibtex_escape(c.title) + "}"),
        ("howpublished", bibtex_escape(c.catalog)),
        ("organization", bibtex_escape(c.catalog)),
        ("version", bibtex_escape(c.version)),
        ("year", c.year or ""),
        ("url", bibtex_verbatim(c.url or "")),
        ("note", bibtex_escape(_entry_note(c))),
    ]
    header = (f"% Add urldate = {{YYYY-MM-DD}} with the day you accessed {c.entry_id}.\n"
              if c.url else "")
    return header + _bibtex_record("misc", c.key, fields)


def _entry_csl(c: EntryCitation) -> str:
    item: dict[str, object] = {
        "id": c.key,
        "type": "entry-encyclopedia",
        "title": c.title,
        "author": [{"literal": c.authors}],
        "container-title": c.catalog,
        "publisher": c.catalog,
        "version": c.version,
        "note": _entry_note(c),
    }
    if c.url:
        item["URL"] = c.url
    if c.year:
        item["issued"] = {"date-parts": [[int(c.year)]]}
    return _json([item])


def _entry_text(c: EntryCitation) -> str:
    year = f" ({c.year})" if c.year else ""
    where = f" {c.url} (accessed {ACCESS_DATE_PLACEHOLDER})." if c.url else ""
    source = f" Source: {c.repository}." if c.repository else ""
    caveat = " This entry did not pass the catalog's checks." if not c.verified else ""
    return (
        f"{c.authors}{year}. {c.title}. {c.catalog}, version {c.version}, "
        f"entry {c.entry_id}, content hash {c.content_hash}.{where}{source}{caveat}\n"
    )


def _json(data: object) -> str:
    return json.dumps(data, ensure_ascii=False, indent=2, sort_keys=True) + "\n"


def _dispatch(fmt: str, *writers: Callable[[_T], str]) -> Callable[[_T], str]:
    """Pick the writer for ``fmt`` (writers are given in the order of ``FORMATS``)."""
    if fmt not in FORMATS:
        raise ValueError(f"unknown citation format {fmt!r}; expected one of {', '.join(FORMATS)}")
    return writers[FORMATS.index(fmt)]


# ---------------------------------------------------------------------------- the original source


def original_references(entry: Entry) -> tuple[Reference, ...]:
    """Every publication the entry's metric comes from (role ``original``), in the entry's
    order: a solution found in two papers (Taub 1951 and Newman–Tamburino–Unti 1963) is
    cited with both, never with the first alone."""
    originals = tuple(r for r in entry.references if r.role == "original")
    if not originals:
        raise ValueError(
            f"{entry.file}: entry {entry.id} has no reference with role 'original'")
    return originals


def cite_original(entry: Entry, fmt: str) -> str:
    """Citation of the publications the entry's metric comes from (role ``original``): one
    record (BibTeX), item (CSL-JSON) or line (text) for each."""
    write = _dispatch(fmt, _bibtex_records, _csl_records, _text_records)
    return write(original_references(entry))


def _bibtex_records(references: Sequence[Reference]) -> str:
    return "\n".join(_reference_bibtex(r) for r in references)


def _csl_records(references: Sequence[Reference]) -> str:
    return _json([_reference_csl_item(r) for r in references])


def _text_records(references: Sequence[Reference]) -> str:
    return "".join(_reference_text(r) for r in references)


_VENUE_PATTERN = re.compile(
    r"^(?P<journal>.*?\D)\s+(?P<volume>\d+)(?:\s*\((?P<issue>[^()]+)\))?\s*,\s*"
    r"(?P<pages>[\w.]+(?:\s*[-\u2013]+\s*[\w.]+)?)$"
)


@dataclass(frozen=True)
class Venue:
    """A journal venue split into its parts; empty strings where the text does not say."""

    journal: str
    volume: str = ""
    issue: str = ""
    pages: str = ""  # first-last with a plain hyphen


def split_venue(venue: str, year: int | None = None) -> Venue:
    """``"Phys. Rev. Lett. 11, 237"`` or ``"Ann. Phys. 355 (9), 106–120"`` -> parts, when the
    venue has that shape; otherwise the whole venue is the journal (never guess more than the
    text says). A number equal to the year is a year-as-volume convention
    (``Sitzungsber. ... 1916, 189``) and is kept whole.
    """
    match = _VENUE_PATTERN.match(venue.strip())
    if not match or match["volume"] == str(year):
        pages_only = _PAGES_ONLY.match(venue.strip())
        if pages_only and not re.search(r"\d", pages_only["journal"]):
            return Venue(_journal(pages_only["journal"]), pages=_pages(pages_only["pages"]))
        return Venue(venue.strip())
    return Venue(_journal(match["journal"]), match["volume"], match["issue"] or "",
                 _pages(match["pages"]))


# "Journal name, 189": a journal without a volume number, then the pages.
_PAGES_ONLY = re.compile(r"^(?P<journal>[^,]+(?:,[^,\d]+)*),\s*"
                         r"(?P<pages>\d+(?:\s*[-\u2013]+\s*\d+)?)$")


def _journal(text: str) -> str:
    """The journal without the comma that separated it from the volume ("..., Serie II,")."""
    return text.strip().rstrip(",;").strip()


def _pages(text: str) -> str:
    return re.sub(r"\s*[-\u2013]+\s*", "-", text)


def split_name(author: str) -> tuple[str, str]:
    """``"R. P. Kerr"`` -> ("R. P.", "Kerr"); ``"Kerr, R. P."`` -> ("R. P.", "Kerr")."""
    if "," in author:
        family, given = (part.strip() for part in author.split(",", 1))
        return given, family
    given, _, family = author.strip().rpartition(" ")
    return given, family


def reference_key(reference: Reference) -> str:
    family = split_name(reference.authors[0])[1] if reference.authors else "anonymous"
    words = re.findall(r"[^\W\d_]{4,}", reference.title)
    return bibtex_key(family, str(reference.year), words[0] if words else "")


def _is_book(reference: Reference) -> bool:
    return bool(reference.isbn) and not reference.doi


def _reference_bibtex(r: Reference) -> str:
    venue = Venue(r.venue) if _is_book(r) else split_venue(r.venue, r.year)
    book = _is_book(r)
    fields = [
        ("author", " and ".join(bibtex_escape(a) for a in r.authors)),
        ("title", "{" + bibtex_escape(r.title) + "}"),
        ("publisher" if book else "journal", bibtex_escape(venue.journal)),
        ("volume", venue.volume),
        ("number", bibtex_escape(venue.issue)),
        ("pages", venue.pages.replace("-", "--")),
        ("year", str(r.year)),
        ("doi", bibtex_verbatim(r.doi or "")),
        ("isbn", bibtex_verbatim(r.isbn or "")),
        ("eprint", bibtex_verbatim(r.arxiv or "")),
        ("archiveprefix", "arXiv" if r.arxiv else ""),
    ]
    return _bibtex_record("book" if book else "article", reference_key(r), fields)


def _reference_csl_item(r: Reference) -> dict[str, object]:
    venue = split_venue(r.venue, r.year)
    book = _is_book(r)
    item: dict[str, object] = {
        "id": reference_key(r),
        "type": "book" if book else "article-journal",
        "title": r.title,
        "author": [_csl_name(a) for a in r.authors],
        "issued": {"date-parts": [[r.year]]},
    }
    if book:
        item["publisher"] = r.venue
    else:
        item["container-title"] = venue.journal
        parts = (("volume", venue.volume), ("issue", venue.issue), ("page", venue.pages))
        item.update({k: v for k, v in parts if v})
    optional = {
        "DOI": r.doi,
        "ISBN": r.isbn,
        "URL": _arxiv_url(r.arxiv),
    }
    item.update({k: v for k, v in optional.items() if v})
    return item


def _csl_name(author: str) -> dict[str, str]:
    given, family = split_name(author)
    return {"family": family, "given": given} if given else {"literal": family}


def _arxiv_url(arxiv: str | None) -> str | None:
    return f"https://arxiv.org/abs/{arxiv}" if arxiv else None


def _reference_text(r: Reference) -> str:
    authors = ", ".join(r.authors)
    identifiers = [f"doi:{r.doi}" if r.doi else "", f"arXiv:{r.arxiv}" if r.arxiv else ""]
    identifiers.append(f"ISBN {r.isbn}" if r.isbn else "")
    tail = "".join(f" {i}." for i in identifiers if i)
    return f"{authors} ({r.year}). {r.title}. {r.venue}.{tail}\n"
