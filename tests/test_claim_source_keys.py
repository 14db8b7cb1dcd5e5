"""A claim's `source` credits exactly one work.

When two references share a role (two original papers, two books), naming the role would
credit the value to both, although only one was seen to print it. A reference may carry a
`key`, and a claim names that key; a role that several references share is refused, with a
hint. The demo entry is the lighthouse dome of the test-suite (our own scenario); the round
sphere's R = 2/ρ² is common practice.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from generator.entry.loader import LoadResult, Vocabulary, load_text
from generator.site.entry_page import COMPUTED_ONLY_WORDS, claim_source

DOME = Path(__file__).parent / "roots" / "demo-catalog" / "catalog" / "riemannian" / \
    "lighthouse-dome.yaml"
SECOND_BOOK = """  - role: textbook
    authors: [C. Lamplighter]
    title: Domes and their light
    venue: Harbour Point Press
    year: 2025
"""


def dome_text(*, source: str = "textbook", keeper_key: str | None = None,
              second_key: str | None = None, second_book: bool = True) -> str:
    text = DOME.read_text(encoding="utf-8").replace("source: textbook", f"source: {source}")
    if keeper_key:
        text = text.replace("  - role: textbook\n", f"  - role: textbook\n    key: {keeper_key}\n")
    if second_book:
        book = SECOND_BOOK.replace("  - role: textbook\n",
                                   f"  - role: textbook\n    key: {second_key}\n") \
            if second_key else SECOND_BOOK
        text = text.replace("curation:", book + "curation:")
    return text


def load(text: str) -> LoadResult:
    path = Path("catalog/riemannian/lighthouse-dome.yaml")
    return load_text(text, str(path), path, Vocabulary(), with_math=False)


def errors(result: LoadResult) -> list[str]:
    return [d.message for d in result.diagnostics if d.severity == "error"]


def test_the_demo_entry_names_its_one_textbook_by_role() -> None:
    result = load(dome_text(second_book=False))
    assert errors(result) == []
    assert result.entry is not None
    assert result.entry.published_source("claims.ricci_scalar") == "textbook"


def test_a_role_two_references_share_is_refused_with_both_works_named() -> None:
    result = load(dome_text())
    (message,) = errors(result)
    assert "claim source 'textbook' names 2 references" in message
    assert "A. Keeper 2026" in message and "C. Lamplighter 2025" in message
    (hint,) = [d.hint for d in result.diagnostics if d.severity == "error"]
    assert "key" in hint


def test_a_key_names_exactly_one_work() -> None:
    result = load(dome_text(source="keeper-2026", keeper_key="keeper-2026"))
    assert errors(result) == []
    entry = result.entry
    assert entry is not None
    assert entry.published_source("claims.ricci_scalar") == "keeper-2026"
    cited = entry.cited_reference("keeper-2026")
    assert cited is not None and cited.authors == ("A. Keeper",)
    # the page credits the keyed book alone, never both books of the role
    assert claim_source("keeper-2026", entry) == {"computed_here": False,
                                                  "label": "Keeper 2026"}


def test_a_shared_role_never_credits_a_value_on_the_page() -> None:
    """Even if a shared role got past the loader, the page would not join two works into one
    attribution: the value shows as the tool's own result."""
    result = load(dome_text())
    assert result.entry is not None
    assert result.entry.cited_reference("textbook") is None
    assert claim_source("textbook", result.entry) == {"computed_here": True,
                                                     "label": COMPUTED_ONLY_WORDS}
    assert result.entry.published_source("claims.ricci_scalar") is None


@pytest.mark.parametrize(("keeper", "second", "expected"), [
    ("claims", None, "reference key 'claims' is also a role name"),
    ("computed-here", None, "reference key 'computed-here' is also a role name"),
    ("dome-books", "dome-books", "reference key 'dome-books' is given to two references"),
])
def test_a_key_that_could_mean_two_things_is_refused(keeper: str, second: str | None,
                                                     expected: str) -> None:
    result = load(dome_text(source="computed-here", keeper_key=keeper, second_key=second))
    assert expected in errors(result)


def test_an_unknown_source_lists_what_may_be_named() -> None:
    result = load(dome_text(source="lamplighter", keeper_key="keeper-2026"))
    (message,) = errors(result)
    assert message == "claim source 'lamplighter' is not the key or role of any reference"
    (hint,) = [d.hint for d in result.diagnostics if d.severity == "error"]
    # keys and unshared roles; 'textbook' is shared by the two books, so it is not offered
    assert hint == "use one of: computed-here, keeper-2026, original"


def test_the_error_points_at_the_source_line() -> None:
    text = dome_text()
    line = next(i for i, row in enumerate(text.splitlines(), 1) if "source: textbook" in row)
    result = load(text)
    (diagnostic,) = [d for d in result.diagnostics if d.severity == "error"]
    assert diagnostic.line == line
