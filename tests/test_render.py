"""The site: structure of every page kind, escaping of hostile text, determinism, downloads.

Built from the hand-made demo catalog in tests/roots/site-demo (invented data), so these tests
do not depend on the geometry engine.
"""

from __future__ import annotations

import ast
import json
import subprocess
import sys
from html.parser import HTMLParser
from pathlib import Path
from urllib.parse import unquote, urlsplit

import pytest
import sympy
from _site_demo import load_demo

ROOTS = Path(__file__).parent / "roots"


demo = load_demo()


class Page(HTMLParser):
    """Elements of one page as (tag, attrs, text inside), plus the visible text."""

    def __init__(self, html: str) -> None:
        super().__init__(convert_charrefs=True)
        self.elements: list[tuple[str, dict[str, str]]] = []
        self.text_parts: list[str] = []
        self.script_text: list[str] = []
        self._in_script = False
        self.feed(html)

    def handle_starttag(self, tag: str, attrs: list[tuple[str, str | None]]) -> None:
        self.elements.append((tag, {k: v or "" for k, v in attrs}))
        self._in_script = tag == "script"

    def handle_endtag(self, tag: str) -> None:
        if tag == "script":
            self._in_script = False

    def handle_data(self, data: str) -> None:
        (self.script_text if self._in_script else self.text_parts).append(data)

    @property
    def text(self) -> str:
        return " ".join(self.text_parts)

    def find(self, tag: str, **attrs: str) -> list[dict[str, str]]:
        return [a for t, a in self.elements if t == tag
                and all(a.get(k.rstrip("_")) == v for k, v in attrs.items())]


@pytest.fixture(scope="module")
def site(tmp_path_factory: pytest.TempPathFactory) -> Path:
    return demo.build_demo_site(tmp_path_factory.mktemp("site"))


def page(site: Path, path: str) -> Page:
    return Page((site / path).read_text(encoding="utf-8"))


def html_files(site: Path) -> list[Path]:
    return sorted(site.rglob("*.html"))


def test_every_page_kind_is_written(site: Path) -> None:
    for path in ["index.html", "browse.html", "conventions.html", "contributing.html",
                 "catalog.html", "catalog.json", "tags/index.html", "tags/charged.html",
                 "families/index.html", "families/black-holes.html",
                 "entries/demo-harbour-lantern/index.html", "assets/search-index.js",
                 "assets/almanac.css", "assets/finder.js"]:
        assert (site / path).is_file(), path


def test_refused_entries_are_not_published(site: Path) -> None:
    assert not (site / "entries" / "demo-broken-buoy").exists()
    assert "demo-broken-buoy" not in (site / "browse.html").read_text(encoding="utf-8")
    assert "demo-broken-buoy" not in (site / "catalog.json").read_text(encoding="utf-8")


def test_every_page_shows_the_catalog_version_and_the_caution(site: Path) -> None:
    for path in html_files(site):
        parsed = Page(path.read_text(encoding="utf-8"))
        assert "0.0.1-demo" in parsed.text, path
        assert "check it against the original literature" in parsed.text, path
        assert parsed.find("main") and parsed.find("footer") and parsed.find("nav"), path
        assert parsed.find("html", lang="en"), path


def test_every_local_link_and_image_resolves(site: Path) -> None:
    for path in html_files(site):
        parsed = Page(path.read_text(encoding="utf-8"))
        for tag, attrs in parsed.elements:
            target = attrs.get("href") or (attrs.get("src") if tag in ("img", "script") else "")
            if not target or target.startswith(("#", "https://")):
                continue
            local = urlsplit(target).path
            assert (path.parent / unquote(local)).resolve().is_file(), f"{path}: {target}"


def test_home_page_states_conventions_and_counts(site: Path) -> None:
    home = page(site, "index.html")
    assert "−+++" in home.text
    assert "G = c = 1" in home.text
    assert home.find("math")  # Riemann convention and field equations typeset
    rows = [t for t in home.text.split() if t]
    assert "electrovacuum" in rows and "perfect" in rows


def test_entry_page_typesets_the_line_element_as_mathml(site: Path) -> None:
    html = (site / "entries/demo-harbour-lantern/index.html").read_text(encoding="utf-8")
    parsed = Page(html)
    assert parsed.find("math", display="block")
    assert parsed.find("mi", mathvariant="normal")  # upright d
    assert "\\frac" not in parsed.text and "\\left" not in parsed.text


def test_entry_page_sections(site: Path) -> None:
    parsed = page(site, "entries/demo-harbour-lantern/index.html")
    ids = {a.get("id") for _, a in parsed.elements}
    for section in ["line-element", "chart", "invariants", "matter", "symmetry", "literature",
                    "check-log", "house-rules", "cite", "history", "downloads"]:
        assert section in ids, section
    assert "computed by this tool; no published value to compare" in parsed.text
    assert "unconfirmed" in parsed.text
    assert "c0ffee" * 10 + "abcd" in parsed.text  # content hash
    assert "1.14.0" in parsed.text or sympy.__version__ in parsed.text
    assert "Demo: first version of the lantern." in parsed.text
    assert "@misc{almanac-demo-harbour-lantern" in parsed.text
    assert "@article{" in parsed.text  # original paper
    links = {a["href"] for a in parsed.find("a") if a.get("href", "").startswith("https://")}
    assert links == {"https://doi.org/10.9999/demo.lantern", "https://arxiv.org/abs/2601.00001"}
    assert len(parsed.find("img")) == 2 and all(i["alt"] for i in parsed.find("img"))


def test_check_log_lists_every_verdict_with_its_method(site: Path) -> None:
    parsed = page(site, "entries/demo-harbour-lantern/index.html")
    for subject in ["claims.ricci_scalar", "claims.kretschmann", "claims.petrov_type",
                    "matter.kind"]:
        assert subject in parsed.text
    assert "sampled at random points (not proved)" in parsed.text
    assert "exact (normal form)" in parsed.text
    # the demo rests on a sampled verdict: the page says so at the top and in the log
    assert "decided by sampling only" in parsed.text and "Not fully proved" in parsed.text


def test_other_charts_link_only_to_published_entries(site: Path) -> None:
    parsed = page(site, "entries/demo-harbour-lantern/index.html")
    hrefs = [a.get("href", "") for a in parsed.find("a")]
    assert "../demo-tide-cosmos/index.html" in hrefs
    assert not any("demo-broken-buoy" in h for h in hrefs)
    assert "demo-broken-buoy (not published)" in " ".join(parsed.text.split())


def test_flipped_signature_is_stated(site: Path) -> None:
    parsed = page(site, "entries/demo-tide-cosmos/index.html")
    assert "+---" in parsed.text
    assert "flipped the sign of the metric" in parsed.text
    lantern = page(site, "entries/demo-harbour-lantern/index.html")
    assert "no conversion needed" in lantern.text


def test_search_index_is_an_embedded_script_with_published_entries(site: Path) -> None:
    script = (site / "assets/search-index.js").read_text(encoding="utf-8")
    prefix = "window.ALMANAC_INDEX = "
    assert script.startswith(prefix) and script.rstrip().endswith(";")
    rows = json.loads(script[len(prefix):].rstrip().rstrip(";"))
    assert [row["id"] for row in rows] == ["demo-harbour-lantern", "demo-tide-cosmos"]
    assert rows[0]["authors"] == ["A. Keeper", "B. Tide"]
    browse = page(site, "browse.html")
    assert [s["src"] for s in browse.find("script")] == [
        "assets/print.js", "assets/search-index.js", "assets/vendor/lunr/lunr-2.3.9.min.js",
        "assets/search-lunr.js", "assets/finder.js"]
    licence = (site / "assets/vendor/lunr/LICENSE").read_text(encoding="utf-8")
    assert "Permission is hereby granted" in licence  # the vendored library keeps its licence
    lunr_index = (site / "assets/search-lunr.js").read_text(encoding="utf-8")
    assert lunr_index.startswith("window.ALMANAC_SEARCH = ")
    assert '"demo-harbour-lantern"' in lunr_index
    assert browse.find("label", **{"for": "q"}) and browse.find("input", id="q")
    assert len(browse.find("li", class_="card")) == 2


def test_a_map_written_by_one_entry_shows_on_both_pages(site: Path) -> None:
    """The lantern maps onto the tide cosmos (a verified map of the demo) and onto a refused
    entry. The lantern's page lists its own maps; the tide's page lists the lantern's map as
    one given by another entry, linked; nobody links to the refused entry."""
    lantern = page(site, "entries/demo-harbour-lantern/index.html")
    tide = page(site, "entries/demo-tide-cosmos/index.html")
    assert "Maps given here" in lantern.text and "Maps given by other entries" not in lantern.text
    assert "Maps given by other entries" in tide.text and "Maps given here" not in tide.text
    assert tide.find("a", href="../demo-harbour-lantern/index.html")
    assert tide.find("a", href="#other-charts")  # in the page's table of contents
    assert not any("demo-broken-buoy" in a.get("href", "") for a in tide.find("a"))
    for name, expected in (("demo-harbour-lantern", "demo-tide-cosmos"),
                           ("demo-tide-cosmos", "demo-harbour-lantern")):
        data = json.loads((site / f"entries/{name}/entry.json").read_text("utf-8"))
        assert data["same_spacetime"] == [{"entry": expected, "route": []}]


def test_entry_json_download_has_computed_data(site: Path) -> None:
    data = json.loads((site / "entries/demo-harbour-lantern/entry.json").read_text("utf-8"))
    computed = data["computed"]
    assert computed["dimension"] == 4
    assert computed["metric"]["t t"]
    r, m, q = sympy.symbols("r m q")
    kretschmann = sympy.sympify(computed["kretschmann"], locals={"r": r, "m": m, "q": q})
    # Reissner–Nordström Kretschmann scalar with M -> m, Q -> q (from memory; e.g. Henry,
    # Astrophys. J. 535, 350 (2000)): 8(6M^2 r^2 - 12 M Q^2 r + 7 Q^4)/r^8.
    assert sympy.simplify(kretschmann - 8 * (6*m**2*r**2 - 12*m*q**2*r + 7*q**4) / r**8) == 0
    assert data["verdicts"][0]["subject"] == "claims.ricci_scalar"
    whole = json.loads((site / "catalog.json").read_text("utf-8"))
    assert [e["id"] for e in whole["entries"]] == ["demo-harbour-lantern",
                                                           "demo-tide-cosmos"]


def test_sympy_script_download_rebuilds_the_metric(site: Path) -> None:
    """Run the downloaded script in a fresh interpreter and compare with the demo metric."""
    script = site / "entries/demo-harbour-lantern/demo-harbour-lantern.py"
    check = (
        "\nf = 1 - 2*m/r + q**2/r**2\n"
        "expected = sympy.diag(-f, 1/f, r**2, r**2*sin(theta)**2)\n"
        "print(sympy.simplify(metric - expected) == sympy.zeros(4, 4), coordinates)\n"
    )
    run = subprocess.run([sys.executable, "-c", script.read_text("utf-8") + check],
                         capture_output=True, text=True, check=True, timeout=120)
    assert run.stdout.splitlines()[-1] == "True (t, r, theta, phi)"


def test_latex_download_is_a_document_with_the_line_element(site: Path) -> None:
    tex = (site / "entries/demo-harbour-lantern/demo-harbour-lantern.tex").read_text("utf-8")
    assert tex.startswith("\\documentclass{article}")
    assert "\\mathrm{d}s^{2} &= -\\left(1 - \\frac{2 m}{r}" in tex  # broken over two rows
    assert "g_{tt} = -\\left(1 - \\frac{2 m}{r} + \\frac{q^{2}}{r^{2}}\\right)" in tex
    assert tex.rstrip().endswith("\\end{document}")


def test_contributing_page_is_rendered_markdown(site: Path) -> None:
    parsed = page(site, "contributing.html")
    assert parsed.find("h1") and parsed.find("code")


def test_schema_is_published_when_the_repo_has_it(site: Path) -> None:
    from generator.site.common import SCHEMA_FILE

    assert (site / "schema/entry.schema.json").is_file() == SCHEMA_FILE.is_file()


def test_building_twice_gives_identical_bytes(site: Path, tmp_path: Path) -> None:
    again = demo.build_demo_site(tmp_path / "again")
    first = {p.relative_to(site): p.read_bytes() for p in sorted(site.rglob("*")) if p.is_file()}
    second = {p.relative_to(again): p.read_bytes() for p in sorted(again.rglob("*"))
              if p.is_file()}
    assert first.keys() == second.keys()
    differing = [str(k) for k in first if first[k] != second[k]]
    assert differing == []


# ---------------------------------------------------------------------------- hostile text


@pytest.fixture(scope="module")
def hostile_site(tmp_path_factory: pytest.TempPathFactory) -> Path:
    return demo.build_demo_site(tmp_path_factory.mktemp("hostile"), demo.hostile_reports())


def test_hostile_text_never_becomes_markup(hostile_site: Path) -> None:
    for path in html_files(hostile_site):
        html = path.read_text(encoding="utf-8")
        parsed = Page(html)
        assert "<script>alert" not in html, path
        for tag, attrs in parsed.elements:
            assert tag != "iframe", path
            if tag == "img":
                assert attrs.get("src", "").endswith(".svg"), (path, attrs)
            for name, value in attrs.items():
                assert not name.startswith("on"), (path, tag, name)
                assert not value.strip().lower().startswith("javascript:"), (path, tag, value)
        scripts = [a.get("src", "") for t, a in parsed.elements if t == "script"]
        assert all(s.startswith(("assets/", "../assets/", "../../assets/")) for s in scripts)


def test_template_syntax_in_entries_is_shown_literally(hostile_site: Path) -> None:
    parsed = page(hostile_site, "entries/demo-harbour-lantern/index.html")
    assert "{{ 7*7 }}" in parsed.text
    assert "49" not in parsed.text.replace("0.0.1-demo", "")
    assert "<script>alert('x')</script>" in parsed.text  # shown as text, inert


def test_hostile_identifiers_get_no_links(hostile_site: Path) -> None:
    parsed = page(hostile_site, "entries/demo-harbour-lantern/index.html")
    hrefs = [a.get("href", "") for a in parsed.find("a")]
    assert not any("javascript" in h for h in hrefs)
    assert "javascript:alert(4)" in parsed.text  # the DOI is shown, as text only


def test_hostile_search_index_cannot_close_its_script(hostile_site: Path) -> None:
    script = (hostile_site / "assets/search-index.js").read_text(encoding="utf-8")
    assert "<" not in script and ">" not in script


def test_hostile_sympy_script_keeps_text_in_string_literals(hostile_site: Path) -> None:
    script = (hostile_site / "entries/demo-harbour-lantern/demo-harbour-lantern.py")
    code = script.read_text("utf-8")
    compile(code, str(script), "exec")
    title_line = next(line for line in code.splitlines() if line.startswith("TITLE = "))
    assert ast.literal_eval(title_line.removeprefix("TITLE = ")).startswith("Lantern <script>")


def test_an_entry_without_content_hash_still_renders_and_says_why(tmp_path: Path) -> None:
    from dataclasses import replace

    report = replace(demo.lantern_report(), content_hash="")
    site = demo.build_demo_site(tmp_path / "out", [report])
    parsed = page(site, "entries/demo-harbour-lantern/index.html")
    assert "no citation available" in parsed.text


def test_unsafe_page_names_are_refused(tmp_path: Path) -> None:
    from dataclasses import replace

    from generator.site.common import RenderError
    from generator.site.writer import render_site

    report = demo.lantern_report()
    evil = replace(report, entry=replace(report.entry, id="../../escape"))
    with pytest.raises(RenderError, match="cannot become a page name"):
        render_site([evil], demo.demo_meta(), tmp_path / "out")
    assert not (tmp_path / "escape").exists()


def test_a_cited_hash_leads_to_its_entry_and_revision_text(site: Path) -> None:
    lookup = page(site, "revisions.html")
    rows = lookup.find("tr", **{"data-hash": "ab" * 32})
    assert len(rows) == 1
    links = [a["href"] for a in lookup.find("a")]
    assert "entries/demo-harbour-lantern/index.html" in links
    source = "entries/demo-harbour-lantern/revisions/" + "ab" * 6 + ".yaml"
    assert source in links
    assert (site / source).read_text(encoding="utf-8").startswith("id: demo-harbour-lantern")
    entry = page(site, "entries/demo-harbour-lantern/index.html")
    assert "../../revisions.html?hash=" + "ab" * 6 in [a["href"] for a in entry.find("a")]


def invariant_blocks(html: str) -> dict[str, str]:
    """The HTML of each invariant's block on an entry page, by its heading's label."""
    blocks = html.split('<div class="invariant" id="invariant-')[1:]
    return {b.split('"', 1)[0]: b.split("</div>", 1)[0] for b in blocks}


def test_a_value_nobody_published_never_wears_the_agreement_badge(site: Path) -> None:
    """The demo's Kretschmann claim is `computed-here`: the tool agreed with itself, which is
    shown as "computed only" in words, never as agreement with a source; its Ricci scalar
    names the original paper and agrees with it."""
    html = (site / "entries/demo-harbour-lantern/index.html").read_text(encoding="utf-8")
    blocks = invariant_blocks(html)
    kretschmann = Page(blocks["kretschmann"])
    assert "state-computed-only" in blocks["kretschmann"]
    assert "state-agrees" not in blocks["kretschmann"]
    assert "computed only" in kretschmann.text
    assert "no published value to compare" in kretschmann.text
    assert "state-agrees" in blocks["ricci_scalar"] and "From Keeper & Tide 2026, eq. (2)" in \
        Page(blocks["ricci_scalar"]).text


def test_catalog_pages_count_agreement_with_the_literature_apart(site: Path) -> None:
    """The home page counts values that agree with a cited publication (the lantern's Ricci
    scalar only); an entry with none is labelled "computed only" on its card and page and can
    be chosen with the search's filter."""
    home = page(site, "index.html").text
    assert "1 checked values agree with a cited publication — the value itself, or a property" in \
        " ".join(home.replace("\n", " ").split())
    browse = (site / "browse.html").read_text(encoding="utf-8")
    assert 'id="f-evidence"' in browse and 'value="computed-only"' in browse
    index = (site / "assets" / "search-index.js").read_text(encoding="utf-8")
    assert '"evidence":"literature","family":"black-holes"' in index
    assert '"evidence":"computed-only"' in index
    lantern = page(site, "entries/demo-harbour-lantern/index.html").text
    assert "compared with the literature" in lantern
    tide = page(site, "entries/demo-tide-cosmos/index.html").text
    assert "computed only" in tide and "compared with the literature" not in tide


def test_symmetry_computed_comes_first_among_the_classifications(site: Path) -> None:
    # Issue 17: the computed symmetry block precedes invariants, matter and Petrov type.
    parsed = page(site, "entries/demo-harbour-lantern/index.html")
    ids = [a.get("id") for _, a in parsed.elements if a.get("id")]
    assert ids.index("isometry") < ids.index("invariants") < ids.index("symmetry")
    assert "Local isometry algebra" in parsed.text
    assert "Independent invariants" in parsed.text


def test_search_can_filter_by_isometry_dimension(site: Path) -> None:
    # Issue 17: the computed isometry dimension is in the index and a filter of the finder.
    browse = (site / "browse.html").read_text(encoding="utf-8")
    assert 'id="f-isometry"' in browse and 'value="4"' in browse
    index = (site / "assets" / "search-index.js").read_text(encoding="utf-8")
    assert '"isometry":"4"' in index and '"isometry":""' in index
    finder = next(site.rglob("finder.js")).read_text(encoding="utf-8")
    assert "chosen.isometry" in finder


def test_an_entry_with_two_original_papers_cites_and_qualifies_both(tmp_path: Path) -> None:
    """Both original publications get a BibTeX record and their own confirmation line; the
    demo's second original (an invented harbour-club note) has nothing confirmed."""
    from dataclasses import replace

    report = demo.lantern_report()
    assert report.entry is not None
    first = report.entry.references[0]
    second = replace(first, authors=("C. Lamplighter",), title="A second lantern note",
                     year=2025, doi=None, arxiv=None, unconfirmed=("title", "venue", "year"))
    entry = replace(report.entry, references=(first, second))
    site = demo.build_demo_site(tmp_path / "out", [replace(report, entry=entry)])
    parsed = page(site, "entries/demo-harbour-lantern/index.html")
    text = " ".join(parsed.text.split())
    assert "The original publications (BibTeX, one record each)" in text
    assert "Original publication (Keeper & Tide 2026)" in text
    assert "Original publication (Lamplighter 2025) details not confirmed" in text
    bibtex = (site / "entries/demo-harbour-lantern/index.html").read_text(encoding="utf-8")
    assert bibtex.count("@article{keeper") == 1 and bibtex.count("@article{lamplighter") == 1
