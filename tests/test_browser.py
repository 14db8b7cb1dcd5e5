"""The site in a real browser: headless Debian Chromium driven by Playwright.

Opens the demo site from file:// and from a local http server on 127.0.0.1, searches, filters,
follows a result and checks that the mathematics is rendered as MathML (no raw TeX visible).
Never downloads a browser: it uses /usr/bin/chromium or skips.
"""

from __future__ import annotations

import functools
import threading
from collections.abc import Iterator
from http.server import SimpleHTTPRequestHandler, ThreadingHTTPServer
from pathlib import Path

import pytest
from _site_demo import load_demo

CHROMIUM = Path("/usr/bin/chromium")
CHROMIUM_ARGS = [
    "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
    "--disable-background-networking", "--disable-component-update", "--disable-sync",
]
ROOTS = Path(__file__).parent / "roots"

pytestmark = [
    pytest.mark.browser,
    pytest.mark.slow,
    pytest.mark.skipif(not CHROMIUM.exists(), reason="needs Debian's /usr/bin/chromium"),
]


@pytest.fixture(scope="module")
def site(tmp_path_factory: pytest.TempPathFactory) -> Path:
    return load_demo().build_demo_site(tmp_path_factory.mktemp("browser-site"))


class QuietHandler(SimpleHTTPRequestHandler):
    def log_message(self, format: str, *args: object) -> None:
        pass


@pytest.fixture(scope="module")
def http_root(site: Path) -> Iterator[str]:
    server = ThreadingHTTPServer(("127.0.0.1", 0),
                                 functools.partial(QuietHandler, directory=str(site)))
    thread = threading.Thread(target=server.serve_forever, daemon=True)
    thread.start()
    yield f"http://127.0.0.1:{server.server_port}/"
    server.shutdown()
    server.server_close()


@pytest.fixture(scope="module")
def browser() -> Iterator[object]:
    playwright_api = pytest.importorskip("playwright.sync_api")
    with playwright_api.sync_playwright() as p:
        instance = p.chromium.launch(executable_path=str(CHROMIUM), args=CHROMIUM_ARGS)
        yield instance
        instance.close()


def visible_ids(page: object) -> list[str]:
    return page.eval_on_selector_all(  # type: ignore[attr-defined]
        "li.card", "cards => cards.filter(c => !c.hidden).map(c => c.dataset.id)")


@pytest.mark.parametrize("where", ["file", "http"])
def test_search_finds_the_right_entries_and_keeps_the_query_in_the_url(
    browser: object, site: Path, http_root: str, where: str
) -> None:
    root = site.as_uri() + "/" if where == "file" else http_root
    page = browser.new_page()  # type: ignore[attr-defined]
    errors: list[str] = []
    page.on("pageerror", lambda exc: errors.append(str(exc)))
    page.goto(root + "browse.html")
    assert sorted(visible_ids(page)) == ["demo-harbour-lantern", "demo-tide-cosmos"]
    page.focus("#q")
    page.keyboard.type("keeper")  # an author of the lantern entry
    page.wait_for_function("document.querySelectorAll('li.card:not([hidden])').length === 1")
    assert visible_ids(page) == ["demo-harbour-lantern"]
    assert "q=keeper" in page.url
    assert "1 of 2" in page.inner_text("#finder-status")
    page.fill("#q", "")
    page.select_option("#f-family", "cosmology")
    page.wait_for_function("document.querySelectorAll('li.card:not([hidden])').length === 1")
    assert visible_ids(page) == ["demo-tide-cosmos"]
    assert "family=cosmology" in page.url
    assert errors == []
    page.close()


def test_a_shared_search_url_restores_the_search(browser: object, site: Path) -> None:
    page = browser.new_page()  # type: ignore[attr-defined]
    page.goto(site.as_uri() + "/browse.html#q=pool&dimension=4")
    page.wait_for_function("document.querySelectorAll('li.card:not([hidden])').length === 1")
    assert visible_ids(page) == ["demo-tide-cosmos"]
    assert page.input_value("#q") == "pool"
    page.close()


@pytest.mark.parametrize("where", ["file", "http"])
def test_opening_an_entry_shows_rendered_mathematics(
    browser: object, site: Path, http_root: str, where: str
) -> None:
    root = site.as_uri() + "/" if where == "file" else http_root
    page = browser.new_page()  # type: ignore[attr-defined]
    page.goto(root + "browse.html")
    page.fill("#q", "lantern")
    page.click("li.card:not([hidden]) .card-title a")
    page.wait_for_selector("#line-element math")
    assert page.url.endswith("entries/demo-harbour-lantern/index.html")
    assert page.locator("math").count() > 5
    box = page.locator("#line-element math").first.bounding_box()
    assert box is not None and box["width"] > 200  # laid out as mathematics, not empty
    visible = page.inner_text("body")
    for tex in ("\\frac", "\\left", "\\text", "\\sin", "^{"):
        assert tex not in visible
    statuses = page.evaluate(
        "document.fonts.ready.then(() => [...document.fonts]"
        ".filter(f => f.family.includes('Almanac Math')).map(f => f.status))")
    assert "loaded" in statuses  # the shipped math font, also from file://
    bracket = page.eval_on_selector_all(
        "#line-element mo[stretchy='true']",
        "els => Math.max(...els.map(e => e.getBoundingClientRect().height))")
    digit = page.eval_on_selector("#line-element mn", "e => e.getBoundingClientRect().height")
    assert bracket > 1.5 * digit  # brackets grow around the fraction inside them
    page.close()


def test_copy_button_appears_when_the_clipboard_is_available(
    browser: object, http_root: str
) -> None:
    page = browser.new_page()  # type: ignore[attr-defined]
    page.goto(http_root + "entries/demo-harbour-lantern/index.html")
    assert page.locator("button.copy").first.is_visible()
    page.close()


def test_print_layout_hides_navigation_and_search(browser: object, site: Path) -> None:
    page = browser.new_page()  # type: ignore[attr-defined]
    page.goto(site.as_uri() + "/browse.html")
    assert page.locator("#finder").is_visible()
    page.emulate_media(media="print")
    assert not page.locator("#finder").is_visible()
    assert not page.locator("header nav").is_visible()
    assert page.locator("footer .catalog-version").is_visible()
    page.close()


def test_dark_scheme_changes_the_page_colours(browser: object, site: Path) -> None:
    page = browser.new_page(color_scheme="dark")  # type: ignore[attr-defined]
    page.goto(site.as_uri() + "/index.html")
    dark = page.evaluate("getComputedStyle(document.body).backgroundColor")
    page.emulate_media(color_scheme="light")
    light = page.evaluate("getComputedStyle(document.body).backgroundColor")
    assert dark != light
    page.close()
