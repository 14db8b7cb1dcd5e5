"""The shipped catalog's site in a real browser (Debian's Chromium through Playwright).

Search: every query of the trade a reader types is answered from the data (Petrov type,
dimension, matter, tags of each card, read from the page itself), so the expectations follow
the catalog as it grows. Facts used as fixed points — Kerr and Schwarzschild are Petrov type D,
Reissner–Nordström and Kerr–Newman are charged black holes, Schwarzschild is not — are common
practice (e.g. Griffiths & Podolský, Exact Space-Times, 2009, ch. 8, 9 and 11).

Layout: no page kind scrolls sideways at 400 px; page text outside code shows no program
syntax.
"""

from __future__ import annotations

import re
import subprocess
import sys
import unicodedata
from collections.abc import Iterator
from pathlib import Path
from typing import Any

import pytest
import yaml

from generator.site.search import fold

ROOT = Path(__file__).resolve().parent.parent
CHROMIUM = Path("/usr/bin/chromium")
CHROMIUM_ARGS = ["--headless", "--no-sandbox", "--disable-gpu", "--no-first-run",
                 "--disable-background-networking", "--disable-component-update"]

pytestmark = [
    pytest.mark.browser,
    pytest.mark.slow,
    pytest.mark.skipif(not CHROMIUM.exists(), reason="needs Debian's /usr/bin/chromium"),
]


@pytest.fixture(scope="module")
def catalog_site(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """The shipped catalog built once (the project's result cache keeps rebuilds quick)."""
    out = tmp_path_factory.mktemp("catalog-site") / "site"
    done = subprocess.run(
        [sys.executable, "-m", "generator", "build", "--out", str(out), "--no-progress",
         "--cache-dir", str(ROOT / ".almanac-cache")],
        cwd=ROOT, capture_output=True, text=True, timeout=1800, check=False)
    assert done.returncode == 0, done.stdout[-2000:] + done.stderr[-2000:]
    return out


@pytest.fixture(scope="module")
def browser() -> Iterator[Any]:
    playwright_api = pytest.importorskip("playwright.sync_api")
    with playwright_api.sync_playwright() as p:
        instance = p.chromium.launch(executable_path=str(CHROMIUM), args=CHROMIUM_ARGS)
        yield instance
        instance.close()


@pytest.fixture(scope="module")
def finder(browser: Any, catalog_site: Path) -> Iterator[Any]:
    page = browser.new_page()
    errors: list[str] = []
    page.on("pageerror", lambda exc: errors.append(str(exc)))
    page.goto(catalog_site.as_uri() + "/browse.html")
    yield page
    assert errors == []
    page.close()


def results(page: Any, query: str) -> list[str]:
    page.fill("#q", query)
    return page.eval_on_selector_all(
        "li.card", "cards => cards.filter(c => !c.hidden).map(c => c.dataset.id)")


def cards(page: Any) -> list[dict[str, Any]]:
    return page.evaluate("window.ALMANAC_INDEX")


def ids_where(page: Any, keep: Any) -> set[str]:
    return {c["id"] for c in cards(page) if keep(c)}


# ---------------------------------------------------------------------------- search


@pytest.mark.parametrize("query", ["petrov D", "Petrov type D", "type D", "Petrov D"])
def test_petrov_phrases_filter_by_the_computed_type(finder: Any, query: str) -> None:
    found = set(results(finder, query))
    assert found == ids_where(finder, lambda c: c["petrov"] == "D")
    assert {"kerr-boyer-lindquist", "schwarzschild"} <= found
    assert "Petrov type D" in finder.inner_text("#finder-understood")


@pytest.mark.parametrize("query", ["5", "5D", "dimension 5", "5-dimensional"])
def test_dimension_phrases_filter_by_dimension(finder: Any, query: str) -> None:
    found = set(results(finder, query))
    assert found == ids_where(finder, lambda c: c["dimension"] == 5)
    assert "schwarzschild-tangherlini-5d" in found


@pytest.mark.parametrize("query, kind", [("vacuum", "vacuum"), ("Λ-vacuum", "lambda-vacuum"),
                                         ("lambda vacuum", "lambda-vacuum"),
                                         ("electrovacuum", "electrovacuum")])
def test_matter_phrases_filter_by_the_computed_matter(finder: Any, query: str, kind: str) -> None:
    assert set(results(finder, query)) == ids_where(finder, lambda c: c["matter"] == kind)


@pytest.mark.parametrize("query, tag", [("charged", "charged"), ("rotating", "rotating")])
def test_property_words_filter_by_tag(finder: Any, query: str, tag: str) -> None:
    assert set(results(finder, query)) == ids_where(finder, lambda c: tag in c["tags"])


def test_charged_black_holes_exclude_uncharged_ones(finder: Any) -> None:
    found = set(results(finder, "black hole charged"))
    assert {"reissner-nordstrom", "kerr-newman"} <= found
    assert "schwarzschild" not in found and "kerr-boyer-lindquist" not in found
    assert found <= ids_where(finder, lambda c: "charged" in c["tags"])


@pytest.mark.parametrize("query", ["AdS", "anti-de Sitter", "Anti-de Sitter"])
def test_ads_and_anti_de_sitter_find_the_same_charts_first(finder: Any, query: str) -> None:
    found = results(finder, query)
    titled = ids_where(finder, lambda c: "anti de sitter" in fold(c["title"]))
    assert len(titled) >= 3
    assert set(found[:len(titled)]) == titled  # title matches rank first
    assert not {"de-sitter-flat", "de-sitter-global", "de-sitter-static"} & set(found)


@pytest.mark.parametrize("query", ["RN", "Reissner–Nordström", "Reissner-Nordstrom",
                                   "nordstrom"])
def test_rn_and_its_long_form_agree(finder: Any, query: str) -> None:
    found = results(finder, query)
    assert set(found[:2]) == {"reissner-nordstrom", "reissner-nordstrom-de-sitter"}
    assert "schwarzschild" not in found


def _mentions(word: str) -> set[str]:
    """Entries whose title, chart, summary, notes, tags or author surnames contain the word
    whole."""
    out = set()
    for path in (ROOT / "catalog").glob("*/*.yaml"):
        data = yaml.safe_load(path.read_text(encoding="utf-8"))
        if not isinstance(data, dict) or "id" not in data:
            continue
        text = " ".join(str(data.get(k, "")) for k in ("title", "chart", "summary", "notes"))
        text += " " + " ".join(data.get("tags", []))
        text += " " + " ".join(a.split()[-1] for ref in data.get("references", [])
                               for a in ref.get("authors", []))
        if re.search(rf"\b{word}\b", fold(unicodedata.normalize("NFC", text))):
            out.add(data["id"])
    return out


@pytest.mark.parametrize("surname", ["Penrose", "Hawking", "Griffiths", "Kerr"])
def test_surnames_find_exactly_the_entries_that_name_them(finder: Any, surname: str) -> None:
    assert set(results(finder, surname)) == _mentions(surname.lower())


def test_words_never_match_inside_other_words(finder: Any) -> None:
    """"charge" finds words that start with it, never "uncharged" (the Kerr notes say the
    rotating black hole is the end state of uncharged collapse)."""
    found = set(results(finder, "charge"))
    assert found
    assert found <= _mentions(r"charg\w*")
    assert "kerr-boyer-lindquist" not in found


def test_prefixes_match_the_start_of_words(finder: Any) -> None:
    found = results(finder, "schwarz")
    assert found[0].startswith("schwarzschild")
    assert set(found) >= ids_where(finder, lambda c: "schwarzschild" in c["id"])


def test_the_page_folds_queries_as_the_index_was_folded(finder: Any) -> None:
    for text in ("Reissner–Nordström", "Λ-vacuum", "Petrov type D", "Gödel", "Bañados 5D"):
        assert finder.evaluate("t => window.almanacFinder.fold(t)", text) == fold(text)


def test_a_search_url_restores_the_query_and_its_reading(browser: Any, catalog_site: Path
                                                         ) -> None:
    page = browser.new_page()
    page.goto(catalog_site.as_uri() + "/browse.html#q=type%20D%20charged")
    page.wait_for_function("document.getElementById('finder-understood').textContent !== ''")
    visible = page.eval_on_selector_all(
        "li.card", "cards => cards.filter(c => !c.hidden).map(c => c.dataset.id)")
    assert "reissner-nordstrom" in visible and "kerr-boyer-lindquist" not in visible
    page.close()
