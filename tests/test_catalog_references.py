"""Every shipped reference says where its bibliographic fields were confirmed, or says which
of them were not.

Source of the rule: the project's bibliography policy (issue 16, "every reference either has
no `unconfirmed` field or names what is unconfirmed, and confirmation sources are present").
It is a rule of this catalog, not a published value. A reference that names no confirmation
source and marks only some fields unconfirmed presents the rest as confirmed with nothing
behind them; the page and the BibTeX export would then overstate it.
"""

from __future__ import annotations

from pathlib import Path

import pytest
import yaml

from generator.entry.schema import REFERENCE_FIELDS

CATALOG = Path(__file__).resolve().parent.parent / "catalog"
# The fields a reference always carries (schema: required) and which a source has to back.
RECALLED = ("title", "venue", "year")


def reference_problems(reference: dict) -> list[str]:
    """What is wrong with one reference's confirmation state (empty when nothing is)."""
    problems = []
    unconfirmed = reference.get("unconfirmed")
    confirmed = reference.get("confirmed")
    if unconfirmed is not None:
        if not unconfirmed:
            problems.append("empty unconfirmed list (drop it, or name the fields)")
        for field in unconfirmed:
            if field not in REFERENCE_FIELDS:
                problems.append(f"unconfirmed names an unknown field {field!r}")
            elif field not in reference:
                problems.append(f"unconfirmed names {field!r}, which the reference lacks")
        if len(set(unconfirmed)) != len(unconfirmed):
            problems.append("unconfirmed names a field twice")
    if confirmed is not None and not str(confirmed).strip():
        problems.append("empty confirmation source")
    if confirmed is None:
        unmarked = [f for f in RECALLED if f in reference and f not in (unconfirmed or ())]
        if unmarked:
            problems.append(f"no confirmation source, yet {', '.join(unmarked)} not marked "
                            "unconfirmed")
    return problems


def shipped_references() -> list[tuple[str, int, dict]]:
    found = []
    for path in sorted(CATALOG.glob("*/*.yaml")):
        data = yaml.safe_load(path.read_text(encoding="utf-8"))
        if not isinstance(data, dict):
            continue
        for index, reference in enumerate(data.get("references") or ()):
            found.append((f"{path.parent.name}/{path.name}", index, reference))
    return found


def test_the_catalog_has_references_to_check() -> None:
    # Guards against the glob silently finding nothing (then the test below would pass).
    assert len(shipped_references()) > 300


def test_every_shipped_reference_names_its_source_or_its_unconfirmed_fields() -> None:
    bad = [f"{where} reference {index}: {problem}"
           for where, index, reference in shipped_references()
           for problem in reference_problems(reference)]
    assert bad == []


BASE = {"role": "original", "authors": ["A. Author"], "title": "A title",
        "venue": "A journal 1, 1", "year": 1950}


@pytest.mark.parametrize(("reference", "expected"), [
    # Mutations of a sound reference; each must be reported (the rule can fail).
    ({**BASE, "unconfirmed": ["venue"]}, "no confirmation source, yet title, year"),
    ({**BASE}, "no confirmation source, yet title, venue, year"),
    ({**BASE, "confirmed": "  "}, "empty confirmation source"),
    ({**BASE, "confirmed": "x", "unconfirmed": []}, "empty unconfirmed list"),
    ({**BASE, "confirmed": "x", "unconfirmed": ["doi"]}, "which the reference lacks"),
    ({**BASE, "confirmed": "x", "unconfirmed": ["volume"]}, "unknown field"),
    ({**BASE, "confirmed": "x", "unconfirmed": ["venue", "venue"]}, "twice"),
])
def test_a_reference_that_overstates_is_reported(reference: dict, expected: str) -> None:
    assert any(expected in problem for problem in reference_problems(reference))


@pytest.mark.parametrize("reference", [
    {**BASE, "confirmed": "https://example.org/record"},
    {**BASE, "confirmed": "https://example.org/record", "unconfirmed": ["venue"]},
    {**BASE, "unconfirmed": ["title", "venue", "year"]},
])
def test_an_honest_reference_passes(reference: dict) -> None:
    assert reference_problems(reference) == []


# ---------------------------------------------------------------------------- one work, one record

# What describes the publication itself; `locator` (where in it) and `key`, `role`,
# `confirmed` belong to the citing entry.
DESCRIBING = ("authors", "title", "venue", "year", "doi", "arxiv", "isbn")


def identifiers(reference: dict) -> list[tuple[str, str]]:
    return [(name, str(reference[name]).lower()) for name in ("doi", "arxiv", "isbn")
            if reference.get(name)]


def record_of(reference: dict) -> tuple:
    """The publication as a reference describes it, and which of those details it marks
    unconfirmed (a detail one entry confirms and another doubts is one of the two wrong)."""
    unconfirmed = sorted(f for f in reference.get("unconfirmed") or () if f in DESCRIBING)
    return (*(str(reference.get(name)) for name in DESCRIBING), tuple(unconfirmed))


def disagreeing_records(references: list[tuple[str, int, dict]]) -> list[str]:
    """Publications (same DOI, arXiv id or ISBN) that two entries describe differently."""
    by_identifier: dict[tuple[str, str], dict[tuple, str]] = {}
    for where, _, reference in references:
        for identifier in identifiers(reference):
            by_identifier.setdefault(identifier, {}).setdefault(record_of(reference), where)
    return [f"{name} {value}: {', '.join(sorted(records.values()))}"
            for (name, value), records in sorted(by_identifier.items()) if len(records) > 1]


def test_a_publication_cited_by_several_entries_is_described_alike() -> None:
    """A reader who meets the same paper on two pages sees the same authors, title, venue and
    year, and the same confirmation state, so a misprint fixed in one place is fixed
    everywhere (a rule of this catalog)."""
    assert disagreeing_records(shipped_references()) == []


def test_two_descriptions_of_one_publication_are_caught() -> None:
    paper = {"role": "original", "authors": ["A. Keeper"], "title": "Lantern light",
             "venue": "Harbour Club Notes 1, 1", "year": 2026, "doi": "10.9999/demo.1"}
    other_page = dict(paper, venue="Harbour Club Notes 1, 1–9")
    doubted = dict(paper, unconfirmed=["venue"])
    located = dict(paper, locator="eq. (2)", role="claims", key="keeper-2026")
    assert disagreeing_records([("a.yaml", 0, paper), ("b.yaml", 0, other_page)]) == [
        "doi 10.9999/demo.1: a.yaml, b.yaml"]
    assert disagreeing_records([("a.yaml", 0, paper), ("c.yaml", 0, doubted)]) != []
    assert disagreeing_records([("a.yaml", 0, paper), ("d.yaml", 0, located)]) == []
