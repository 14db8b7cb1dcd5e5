"""The finder's index (generator/site/search.py): folding, aliases of the trade, whole-word
matching and field ranking, checked with lunr's own Python search on invented demo cards (our
own scenario: lighthouses and tides). The browser tests run the shipped JavaScript side.

Sources: the spelling of Reissner–Nordström and the short forms AdS, RN, FLRW are common
practice; lunr's query syntax (``word*`` for a prefix) is from the lunr documentation.
"""

from __future__ import annotations

import json

from lunr.index import Index

from generator.site.search import build_index, fold, search_document, search_script, with_aliases


def card(id_: str, title: str, chart: str = "a chart", tags: tuple[str, ...] = (),
         authors: tuple[str, ...] = (), summary: str = "", notes: str = "") -> dict:
    return {"id": id_, "title": title, "chart": chart, "tags": list(tags),
            "authors": list(authors), "summary": summary, "notes_text": notes}


CARDS = [
    card("lantern", "Harbour lantern", notes="An uncharged lamp in anti-de Sitter fog."),
    card("charged-buoy", "Charged buoy", tags=("charged",), authors=("A. Keeper",)),
    card("tide", "Tide cosmos", chart="Harbour chart", summary="The lantern seen from the sea"),
    card("fog", "Anti-de Sitter fog bank", authors=("B. Nordström",)),
]


def refs(query: str) -> list[str]:
    index = Index.load(build_index(CARDS))
    return [r["ref"] for r in index.search(query)]


def test_fold_drops_accents_spells_greek_and_separates_words() -> None:
    assert fold("Reissner–Nordström") == "reissner nordstrom"
    assert fold("Λ-vacuum") == "lambda vacuum"
    assert fold("Petrov type D, 5D") == "petrov type d 5d"
    assert fold("$a*M$ and r²") == "a m and r2"


def test_aliases_of_the_trade_are_added_to_the_field_with_the_long_form() -> None:
    assert with_aliases("anti de sitter space").endswith(" ads")
    assert "reissner nordstrom" in with_aliases("the rn black hole")
    assert with_aliases("de sitter space") == "de sitter space"  # not anti-de Sitter
    assert "ads" in search_document(CARDS[3])["title"].split()
    assert "ads" not in search_document(CARDS[3])["notes"].split()


def test_words_match_whole_words_never_inside_other_words() -> None:
    assert refs("charged") == ["charged-buoy"]  # "uncharged" in the lantern's notes is not it


def test_prefixes_match_the_start_of_a_word() -> None:
    assert set(refs("lant*")) == {"lantern", "tide"}


def test_a_title_match_ranks_above_chart_summary_and_notes_matches() -> None:
    assert refs("harbour") == ["lantern", "tide"]  # title, then chart
    assert refs("lantern")[0] == "lantern"  # title before the tide's summary
    assert refs("ads")[0] == "fog"  # alias in the title before the lantern's notes


def test_authors_are_searched_by_surname_without_accents() -> None:
    assert refs("nordstrom") == ["fog"]
    assert refs("keeper") == ["charged-buoy"]


def test_index_is_deterministic_and_cannot_close_its_script() -> None:
    hostile = [*CARDS, card("x", "</script><script>alert(1)</script>")]
    first, second = search_script(hostile), search_script(list(reversed(hostile)))
    assert first == second
    assert "</script" not in first.lower() and "<" not in first
    data = json.loads(first.removeprefix("window.ALMANAC_SEARCH = ").rstrip(";\n"))
    assert data["index"]["version"].startswith("2.3")


def test_an_empty_catalog_gets_an_empty_index_not_an_error() -> None:
    assert build_index([]) is None
    assert '"index":null' in search_script([])
