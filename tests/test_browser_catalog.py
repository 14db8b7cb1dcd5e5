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

import itertools
import re
import subprocess
import sys
import unicodedata
from collections.abc import Iterator
from html.parser import HTMLParser
from pathlib import Path
from typing import Any

import pytest
import yaml

from generator.site.search import fold, with_aliases

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
    short = query == "AdS"  # the short form also matches a title such as AdS₅ × S⁵ by prefix
    # A title with the short form ("AdS soliton") is a title match for the long form too.
    titled = ids_where(finder, lambda c: "anti de sitter" in with_aliases(fold(c["title"])) or (
        short and any(word.startswith("ads") for word in fold(c["title"]).split())))
    assert len(titled) >= 3
    assert set(found[:len(titled)]) == titled  # title matches rank first
    assert not {"de-sitter-flat", "de-sitter-global", "de-sitter-static"} & set(found)


@pytest.mark.parametrize("query", ["RN", "Reissner–Nordström", "Reissner-Nordstrom",
                                   "nordstrom"])
def test_rn_and_its_long_form_agree(finder: Any, query: str) -> None:
    found = results(finder, query)
    titled = ids_where(finder, lambda c: "reissner nordstrom" in fold(c["title"]))
    assert {"reissner-nordstrom", "reissner-nordstrom-de-sitter"} <= titled
    assert set(found[:len(titled)]) == titled  # title matches rank first
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
    assert set(found) >= ids_where(finder, lambda c: "schwarzschild" in c["id"])
    assert set(found) <= _mentions(r"schwarz\w*")  # every result has a word starting so


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


# ---------------------------------------------------------------------------- layout


def site_pages(site: Path) -> list[str]:
    """Every page of the site, relative to its root (entry pages, lists, tags, families …)."""
    return sorted(str(p.relative_to(site)) for p in site.rglob("*.html"))


def test_every_page_kind_is_among_the_pages_checked(catalog_site: Path) -> None:
    pages = site_pages(catalog_site)
    kinds = {"index.html", "browse.html", "catalog.html", "contributing.html",
             "conventions.html", "revisions.html"}
    assert kinds <= set(pages)
    assert any(p.startswith("entries/") for p in pages)
    assert any(p.startswith("families/") for p in pages)
    assert any(p.startswith("tags/") for p in pages)


_TEXT_OUTSIDE_CODE = """() => {
  const walker = document.createTreeWalker(document.body, NodeFilter.SHOW_TEXT);
  const parts = [];
  while (walker.nextNode()) {
    const node = walker.currentNode;
    if (!node.parentElement.closest('code, pre, script, style')) { parts.push(node.data); }
  }
  return parts.join(' ');
}"""


def test_no_page_scrolls_sideways_on_a_phone_and_none_shows_program_syntax(
    browser: Any, catalog_site: Path
) -> None:
    page = browser.new_page(viewport={"width": 400, "height": 800})
    wide: dict[str, int] = {}
    program: dict[str, list[str]] = {}
    for path in site_pages(catalog_site):
        page.goto(catalog_site.as_uri() + "/" + path)
        width = page.evaluate("document.documentElement.scrollWidth")
        if width > 400:
            wide[path] = width
        text = page.evaluate(_TEXT_OUTSIDE_CODE)
        found = [m for m in ("**", "sqrt(") if m in text]
        if found:
            program[path] = found
    page.close()
    assert wide == {}
    assert program == {}


def test_phone_width_also_holds_at_360_px_for_the_widest_entries(
    browser: Any, catalog_site: Path
) -> None:
    page = browser.new_page(viewport={"width": 360, "height": 800})
    for entry in ("kerr-de-sitter", "alcubierre", "kerr-newman", "lemaitre-tolman-bondi"):
        page.goto(f"{catalog_site.as_uri()}/entries/{entry}/index.html")
        assert page.evaluate("document.documentElement.scrollWidth") <= 360, entry
    page.close()


def test_long_formulas_scroll_inside_their_own_box(browser: Any, catalog_site: Path) -> None:
    page = browser.new_page(viewport={"width": 400, "height": 800})
    page.goto(catalog_site.as_uri() + "/entries/kerr-de-sitter/index.html")
    box = page.eval_on_selector(
        "#line-element .display-math",
        "e => [e.scrollWidth, e.clientWidth, getComputedStyle(e).overflowX]")
    assert box[1] <= 400 and box[2] == "auto"
    page.close()


def test_printing_opens_closed_blocks(browser: Any, catalog_site: Path) -> None:
    page = browser.new_page()
    page.goto(catalog_site.as_uri() + "/entries/schwarzschild/index.html")
    assert page.evaluate("[...document.querySelectorAll('details')].some(d => !d.open)")
    page.emulate_media(media="print")
    page.evaluate("window.dispatchEvent(new Event('beforeprint'))")
    assert page.evaluate("[...document.querySelectorAll('details')].every(d => d.open)")
    page.evaluate("window.dispatchEvent(new Event('afterprint'))")
    assert page.evaluate("[...document.querySelectorAll('details')].some(d => !d.open)")
    page.close()


class _Headings(HTMLParser):
    def __init__(self) -> None:
        super().__init__()
        self.levels: list[int] = []

    def handle_starttag(self, tag: str, attrs: list[tuple[str, str | None]]) -> None:
        if len(tag) == 2 and tag[0] == "h" and tag[1] in "123456":
            self.levels.append(int(tag[1]))


def heading_levels(html: str) -> list[int]:
    parser = _Headings()
    parser.feed(html)
    return parser.levels


def test_heading_levels_never_skip(catalog_site: Path) -> None:
    """Assistive technology reads headings as an outline: h1, then h2, never h1 → h3."""
    skips = {}
    for path in site_pages(catalog_site):
        levels = heading_levels((catalog_site / path).read_text(encoding="utf-8"))
        bad = [(a, b) for a, b in itertools.pairwise(levels) if b > a + 1]
        if bad or (levels and levels[0] != 1):
            skips[path] = bad or levels[:1]
    assert skips == {}
