"""Hostile entries: nothing written in an entry may run code, hang the build, corrupt the site
or attack a reader's browser.

Loader-level tests feed YAML tricks (code-running tags, alias bombs, traversal ids, NUL bytes,
huge files) and assert a positioned refusal. Site-level tests build a catalog holding
tests/roots/hostile-content (payloads in every free-text field), parse every produced page
and assert that no injected element or attribute exists and that the payloads show as text;
the browser test opens every page in headless Chromium and asserts that no script ran.
"""

from __future__ import annotations

import json
import os
import re
import subprocess
import sys
import xml.etree.ElementTree as ET
from html.parser import HTMLParser
from pathlib import Path

import pytest

from generator.entry.catalog import vocabulary
from generator.entry.loader import LoadResult, load_entry, load_text
from generator.errors import BudgetExceeded
from generator.run.limits import run_limited
from tests._hostile import PROJECT, ROOTS, almanac, make_catalog

VOCABULARY = vocabulary(PROJECT / "catalog")
VALID = (ROOTS / "hostile-valid/isolated-objects/schwarzschild.yaml").read_text(encoding="utf-8")
HOSTILE = ROOTS / "hostile-content/isolated-objects/hostile-content.yaml"
FILE = "catalog/isolated-objects/schwarzschild.yaml"


def load(source: str) -> LoadResult:
    """Load under a hard limit, so a bomb fails the test instead of hanging it."""
    return run_limited(load_text, source, FILE, Path(FILE), VOCABULARY, seconds=30,
                       memory_bytes=1 << 30)


def codes_at(result: LoadResult) -> list[tuple[str, int, int]]:
    return [(d.code, d.line, d.column) for d in result.diagnostics if d.severity == "error"]


# ---------------------------------------------------------------------------- YAML tricks

CODE_TAGS = [
    ("title: !!python/object/apply:os.system ['touch PWNED']", 3, 8),
    ("title: !!python/object/new:subprocess.Popen [['touch', 'PWNED']]", 3, 8),
    ("title: !!python/name:os.system", 3, 8),
    ("title: !!python/module:os", 3, 8),
    ("title: !!binary aGVsbG8=", 3, 8),
    ("title: !<tag:yaml.org,2002:python/object/apply:os.system> ['touch PWNED']", 3, 8),
    ("title: !custom something", 3, 8),
    ("title: !!set {a, b}", 3, 8),
]


@pytest.mark.parametrize(("line", "row", "column"), CODE_TAGS)
def test_code_running_yaml_tags_are_refused_and_run_nothing(
    line: str, row: int, column: int, tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    monkeypatch.chdir(tmp_path)
    source = VALID.replace("title: Schwarzschild black hole", line)
    result = load(source)
    assert result.entry is None
    assert codes_at(result) == [("yaml.tag", row, column)]
    assert list(tmp_path.iterdir()) == []


def test_a_tag_on_the_whole_document_is_refused(tmp_path: Path,
                                                 monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.chdir(tmp_path)
    result = load("--- !!python/object/apply:os.system\nargs: ['touch PWNED']\n")
    assert [c for c, _, _ in codes_at(result)] == ["yaml.tag"]
    assert list(tmp_path.iterdir()) == []


def test_a_tag_directive_cannot_smuggle_a_python_tag(tmp_path: Path,
                                                      monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.chdir(tmp_path)
    source = "%TAG !p! tag:yaml.org,2002:python/\n---\n" + VALID.replace(
        "title: Schwarzschild black hole", "title: !p!object/apply:os.system ['touch PWNED']")
    result = load(source)
    assert [c for c, _, _ in codes_at(result)] == ["yaml.tag"]
    assert list(tmp_path.iterdir()) == []


BILLION_LAUGHS = """\
a: &a ["lol","lol","lol","lol","lol","lol","lol","lol","lol"]
b: &b [*a,*a,*a,*a,*a,*a,*a,*a,*a]
c: &c [*b,*b,*b,*b,*b,*b,*b,*b,*b]
d: &d [*c,*c,*c,*c,*c,*c,*c,*c,*c]
e: &e [*d,*d,*d,*d,*d,*d,*d,*d,*d]
f: &f [*e,*e,*e,*e,*e,*e,*e,*e,*e]
g: &g [*f,*f,*f,*f,*f,*f,*f,*f,*f]
h: &h [*g,*g,*g,*g,*g,*g,*g,*g,*g]
i: &i [*h,*h,*h,*h,*h,*h,*h,*h,*h]
"""


def test_billion_laughs_is_refused_at_its_first_anchor() -> None:
    result = load(BILLION_LAUGHS)
    assert result.entry is None
    assert codes_at(result)[0] == ("yaml.anchor", 1, 4)
    assert {c for c, _, _ in codes_at(result)} == {"yaml.anchor", "yaml.alias"}


def test_merge_keys_through_aliases_are_refused() -> None:
    source = VALID.replace("parameters:\n  M: {assume: positive, meaning: mass}",
                           "parameters:\n  M: &m {assume: positive, meaning: mass}\n"
                           "  Q: {<<: *m}")
    result = load(source)
    assert [c for c, _, _ in codes_at(result)] == ["yaml.anchor", "yaml.alias"]


@pytest.mark.parametrize("bad_id", ["../../etc/passwd", "..", "/etc/passwd", "a/b",
                                    "schwarzschild\\..\\x", "%2e%2e%2fetc"])
def test_path_traversal_ids_are_refused_at_the_id(bad_id: str) -> None:
    source = VALID.replace("id: schwarzschild", f"id: '{bad_id}'")
    result = load(source)
    assert ("entry.format", 2, 5) in codes_at(result)


def test_path_traversal_in_related_entries_is_refused() -> None:
    source = VALID + "related:\n  - entry: ../../etc/passwd\n    map: {t: t}\n"
    result = load(source)
    assert not result.ok
    assert any(d.code == "entry.format" and d.line == 42 for d in result.diagnostics), \
        [d.format_text() for d in result.diagnostics]


def test_a_nul_byte_is_a_positioned_yaml_error() -> None:
    """Found by this suite: PyYAML's ReaderError (a character YAML forbids) carries a
    character index, not a mark, and yamlcheck.read_nodes reports it at 1:1."""
    source = VALID.replace("title: Schwarzschild black hole", "title: Schwarz\x00schild")
    result = load(source)
    assert codes_at(result) == [("yaml.syntax", 3, 15)]


def test_a_control_byte_after_accented_letters_is_placed_by_character() -> None:
    """The fast C parser counts bytes in its error positions; the column shown must count
    characters (here four two-byte letters before the BEL byte)."""
    source = VALID.replace("title: Schwarzschild black hole", "title: Schwärzéçhïld\x07x")
    result = load(source)
    assert codes_at(result) == [("yaml.syntax", 3, 21)]


def test_a_huge_file_is_refused_before_parsing(tmp_path: Path) -> None:
    path = tmp_path / "isolated-objects" / "schwarzschild.yaml"
    path.parent.mkdir()
    path.write_text(VALID.replace("notes: |\n", "notes: |\n" + "  padding text\n" * 40_000))
    result = load_entry(path, FILE, VOCABULARY)
    assert [(d.code, d.line, d.column) for d in result.diagnostics] == [("file.size", 1, 1)]


def test_a_gigantic_math_string_is_refused_with_its_position() -> None:
    source = VALID.replace("  line_element: -(1 - 2*M/r)*dt**2",
                           "  line_element: " + "r+" * 15_000 + "-(1 - 2*M/r)*dt**2")
    result = load(source)
    assert codes_at(result) == [("math.syntax", 17, 17 + 20_000)]  # where the limit is passed


def test_bytes_that_are_not_utf8_are_refused(tmp_path: Path) -> None:
    path = tmp_path / "isolated-objects" / "schwarzschild.yaml"
    path.parent.mkdir()
    path.write_bytes(VALID.encode().replace(b"Test Curator", b"Test \xff\xfe Curator"))
    result = load_entry(path, FILE, VOCABULARY)
    assert [d.code for d in result.diagnostics] == ["file.encoding"]


def test_hostile_tags_are_refused_by_the_vocabulary() -> None:
    source = VALID.replace("tags: [vacuum,", "tags: ['<script>alert(1)</script>', vacuum,")
    result = load(source)
    assert codes_at(result) == [("entry.format", 8, 8)]


def test_hostile_text_is_loaded_verbatim_for_the_renderer_to_escape() -> None:
    """The loader neither runs nor alters text: escaping is the renderer's job (tested below)."""
    result = load_entry(HOSTILE, "catalog/isolated-objects/hostile-content.yaml", VOCABULARY)
    assert result.ok, [d.format_text() for d in result.diagnostics]
    entry = result.entry
    assert entry is not None
    assert "<script>window.__pwned=1</script> {{ 7*7 }}" in entry.title
    assert entry.references[0].doi == '10.1234/"><svg/onload=window.__pwned=20>'
    assert entry.curation.by.startswith("<script>alert(21)</script>")


def test_the_billion_laughs_bomb_loads_in_bounded_time_even_at_full_size() -> None:
    bomb = BILLION_LAUGHS + "".join(f"x{k}: &x{k} [" + ",".join([f"*{'i' if k == 0 else f'x{k-1}'}"]
                                                                 * 9) + "]\n" for k in range(5))
    try:
        result = load(bomb)
    except BudgetExceeded as exc:  # pragma: no cover - reported as a failure below
        pytest.fail(f"alias bomb was expanded: {exc}")
    assert result.entry is None


# ---------------------------------------------------------------------------- the built site


@pytest.fixture(scope="module")
def hostile_site(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """Build a catalog of valid Schwarzschild plus the hostile-content entry (once)."""
    project = tmp_path_factory.mktemp("hostile-site")
    make_catalog(project, "hostile-valid", "hostile-content")
    done = almanac(project, "build", "--no-cache", "--jobs", "2")
    if done.returncode != 0:
        pytest.fail(f"the hostile catalog did not build:\n{done.stderr[-3000:]}")
    return project


class _Page(HTMLParser):
    """Every element with its attributes, and the page's text, as a browser would parse it."""

    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.elements: list[tuple[str, list[tuple[str, str | None]]]] = []
        self.text: list[str] = []
        self.script_text: list[str] = []
        self._in_script = False

    def handle_starttag(self, tag: str, attrs: list[tuple[str, str | None]]) -> None:
        self.elements.append((tag, attrs))
        self._in_script = tag in ("script", "style")

    def handle_startendtag(self, tag: str, attrs: list[tuple[str, str | None]]) -> None:
        self.elements.append((tag, attrs))

    def handle_endtag(self, tag: str) -> None:
        self._in_script = False

    def handle_data(self, data: str) -> None:
        (self.script_text if self._in_script else self.text).append(data)


def parse_page(path: Path) -> _Page:
    page = _Page()
    page.feed(path.read_text(encoding="utf-8"))
    page.close()
    return page


FORBIDDEN_ELEMENTS = {"iframe", "object", "embed", "base", "frame", "frameset", "applet"}
URL_ATTRIBUTES = {"href", "src", "action", "formaction", "xlink:href", "data", "poster",
                  "background", "srcset"}
BAD_SCHEMES = re.compile(r"^\s*(javascript|vbscript|data:text/html|data:image/svg)", re.I)
PAYLOAD_MARKERS = ("__pwned", "alert(")


def html_pages(site: Path) -> list[Path]:
    return sorted(site.rglob("*.html"))


@pytest.mark.slow
def test_no_page_carries_an_injected_element_or_attribute(hostile_site: Path) -> None:
    problems: list[str] = []
    pages = html_pages(hostile_site / "site")
    assert len(pages) > 3
    for path in pages:
        page = parse_page(path)
        where = path.relative_to(hostile_site).as_posix()
        for tag, attrs in page.elements:
            names = {name for name, _ in attrs}
            if tag in FORBIDDEN_ELEMENTS:
                problems.append(f"{where}: <{tag}>")
            if tag == "meta" and any(n == "http-equiv" for n in names):
                problems.append(f"{where}: <meta http-equiv>")
            if tag == "script" and "src" in names:
                src = dict(attrs)["src"] or ""
                if "://" in src or src.startswith("//"):
                    problems.append(f"{where}: remote script {src}")
            for name, value in attrs:
                if name.startswith("on"):
                    problems.append(f"{where}: <{tag} {name}=...>")
                if name in URL_ATTRIBUTES and value and BAD_SCHEMES.match(value):
                    problems.append(f"{where}: <{tag} {name}={value[:40]}>")
        for script in page.script_text:
            if any(marker in script for marker in PAYLOAD_MARKERS):
                problems.append(f"{where}: payload inside a script or style element")
    assert problems == []


@pytest.mark.slow
def test_payloads_show_as_inert_text_on_the_entry_page(hostile_site: Path) -> None:
    page = parse_page(hostile_site / "site/entries/hostile-content/index.html")
    text = " ".join(" ".join(page.text).split())
    for shown in ("<script>window.__pwned=1</script>", "{{ 7*7 }}",
                  "{% if true %}ran{% endif %}", "<img src=x onerror=\"window.__pwned=2\">",
                  "&lt;script&gt;alert(9)&lt;/script&gt;", "<script>alert(21)</script>",
                  '10.1234/"><svg/onload=window.__pwned=20>'):
        assert shown in text, shown
    assert "Schwarzschild 49" not in text


@pytest.mark.slow
def test_markdown_notes_keep_formatting_and_lose_active_content(hostile_site: Path) -> None:
    page = parse_page(hostile_site / "site/entries/hostile-content/index.html")
    tags = [tag for tag, _ in page.elements]
    assert "strong" in tags  # ordinary Markdown survives sanitising
    benign = [t for t, _ in parse_page(
        hostile_site / "site/entries/schwarzschild/index.html").elements]
    for active in ("form", "style", "button", "iframe", "meta", "base", "script", "img"):
        assert tags.count(active) == benign.count(active), active  # none came from the notes
    hrefs = [dict(attrs).get("href") or "" for tag, attrs in page.elements if tag == "a"]
    assert not [h for h in hrefs if BAD_SCHEMES.match(h)]
    assert not [tag for tag, attrs in page.elements if tag in ("details", "math", "svg")
                and any(n.startswith("on") for n, _ in attrs)]


@pytest.mark.slow
def test_machine_readable_files_carry_the_payloads_as_plain_strings(hostile_site: Path) -> None:
    site = hostile_site / "site"
    data = json.loads((site / "entries/hostile-content/entry.json").read_text(encoding="utf-8"))
    assert "<script>window.__pwned=1</script>" in json.dumps(data, ensure_ascii=False)
    for script in site.rglob("*.js"):
        source = script.read_text(encoding="utf-8")
        assert "</script" not in source.lower(), script
        assert "<script>window.__pwned" not in source, script


@pytest.mark.slow
def test_svg_files_hold_no_script(hostile_site: Path) -> None:
    """An SVG opened directly runs its scripts, so generated plots must carry none."""
    for svg in (hostile_site / "site").rglob("*.svg"):
        root = ET.parse(svg).getroot()
        for element in root.iter():
            assert not element.tag.endswith("script"), svg
            assert not [n for n in element.attrib if n.lower().startswith("on")], svg


@pytest.mark.slow
def test_no_payload_created_a_file_during_the_build(hostile_site: Path) -> None:
    created = [p for p in hostile_site.rglob("PWNED*")]
    assert created == []


@pytest.mark.slow
def test_the_downloadable_python_script_runs_no_payload(hostile_site: Path,
                                                        tmp_path: Path) -> None:
    script = hostile_site / "site/entries/hostile-content/hostile-content.py"
    done = subprocess.run([sys.executable, str(script)], cwd=tmp_path, capture_output=True,
                          text=True, timeout=300)
    assert done.returncode == 0, done.stderr
    assert list(tmp_path.iterdir()) == []
    namespace: dict[str, object] = {}
    exec(compile(script.read_text(encoding="utf-8"), str(script), "exec"), namespace)
    assert "touch PWNED-PY" in str(namespace["TITLE"])


@pytest.mark.slow
def test_the_downloadable_latex_has_no_live_command_from_the_entry(hostile_site: Path) -> None:
    tex = (hostile_site / "site/entries/hostile-content/hostile-content.tex").read_text(
        encoding="utf-8")
    for command in ("\\input{", "\\write18", "\\immediate"):
        assert command not in tex
    assert "\\textbackslash{}write18" in tex


# ---------------------------------------------------------------------------- in a browser

CHROMIUM = Path("/usr/bin/chromium")
CHROMIUM_ARGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic",
                 "--no-first-run", "--disable-background-networking",
                 "--disable-component-update", "--disable-sync"]


def browser_findings(pages: list[Path]) -> dict[str, list[str]]:
    """Open each file in headless Chromium; report dialogs, page errors, remote requests and
    pages where ``window.__pwned`` got set (every payload sets it or calls alert)."""
    sync_api = pytest.importorskip("playwright.sync_api")
    if not CHROMIUM.exists():
        pytest.skip("Chromium is not installed at /usr/bin/chromium")
    found: dict[str, list[str]] = {"dialogs": [], "errors": [], "remote": [], "pwned": []}
    with sync_api.sync_playwright() as playwright:
        browser = playwright.chromium.launch(executable_path=str(CHROMIUM), args=CHROMIUM_ARGS)
        try:
            page = browser.new_page()
            page.on("dialog", lambda d: (found["dialogs"].append(d.message), d.dismiss()))
            page.on("pageerror", lambda e: found["errors"].append(str(e)))
            page.on("request", lambda r: None if r.url.startswith(("file:", "data:", "about:"))
                    else found["remote"].append(r.url))
            for path in pages:
                page.goto(path.as_uri(), wait_until="load")
                page.mouse.move(5, 5)
                page.mouse.move(400, 300)
                if page.evaluate("() => window.__pwned !== undefined"):
                    found["pwned"].append(path.name)
        finally:
            browser.close()
    return found


@pytest.mark.slow
@pytest.mark.browser
def test_the_browser_check_sees_a_script_that_runs(tmp_path: Path) -> None:
    """Control: the same harness catches a page whose script does run."""
    page = tmp_path / "control.html"
    page.write_text("<!doctype html><title>c</title><script>window.__pwned = 1; "
                    "alert('ran')</script>", encoding="utf-8")
    found = browser_findings([page])
    assert found["pwned"] == ["control.html"]
    assert found["dialogs"] == ["ran"]


@pytest.mark.slow
@pytest.mark.browser
def test_no_script_from_an_entry_runs_in_a_browser(hostile_site: Path) -> None:
    site = hostile_site / "site"
    found = browser_findings(html_pages(site) + sorted(site.rglob("*.svg")))
    assert found == {"dialogs": [], "errors": [], "remote": [], "pwned": []}


def test_no_payload_file_in_the_working_folder() -> None:
    """The fixture's file-creating payloads name PWNED-*; none may exist in the project."""
    assert not list(Path(os.getcwd()).glob("PWNED*"))
    assert not list(PROJECT.glob("PWNED*"))


# ---------------------------------------------------------------------------- red-team classes
# Each class below was found by a red-team pass (a stranger's pull request may hold any file
# under catalog/); the tests try variants of each, not only the reproduction.

EXTRA = "".join(f"  {name}: {{assume: positive, meaning: extra}}\n" for name in "abcdefg")
BIG_SUM = "(M+a+b+c+d+e+f+g)"


def with_extra_parameters(line_element_tail: str) -> str:
    source = VALID.replace("  M: {assume: positive, meaning: mass}\n",
                           "  M: {assume: positive, meaning: mass}\n" + EXTRA)
    return source.replace("sin(theta)**2*dphi**2)",
                          f"sin(theta)**2*dphi**2) + {line_element_tail}")


@pytest.mark.parametrize("tail", [
    f"{BIG_SUM}**40*dr**2",  # the reproduction: degree 40, but 62,891,504 terms
    f"dr**2/{BIG_SUM}**40",  # in a denominator
    f"sin({BIG_SUM}**40)*dr**2",  # inside a function
    f"sqrt({BIG_SUM}**40)*dr**2",  # under a root
    "(M+a+b+c)**12*(d+e+f+g)**12*dr**2",  # a product of two moderate expansions
    f"(({BIG_SUM}**4)**4)*dr**2",  # nested powers, each small
    f"{BIG_SUM}**20*dr**2 + {BIG_SUM}**21*dr**2",  # a sum of two large ones
])
def test_expansion_blow_ups_are_refused_by_their_number_of_terms(tail: str) -> None:
    result = load(with_extra_parameters(tail))
    errors = [d for d in result.diagnostics if d.severity == "error"]
    assert [(d.code, d.line) for d in errors] == [("math.syntax", 24)]
    assert "terms (limit" in errors[0].message


def test_a_modest_multivariable_expansion_still_loads() -> None:
    result = load(with_extra_parameters("(M+a+b)**3*dr**2/r**6"))
    assert not [d for d in result.diagnostics if d.code == "math.syntax"]


@pytest.mark.parametrize("text", ["(a+b+c)**4", "(a+b)**3*(c+d)**2", "(a+b+c+d)**3 + a",
                                  "((a+b)**2+c)**3", "(a+b)**7"])
def test_the_term_bound_is_never_below_what_expand_builds(text: str) -> None:
    """Multinomial theorem (common practice): a sum of t terms to the n has C(n+t-1, t-1)
    monomials — an upper bound once terms combine. Compared with SymPy's own expansion."""
    import sympy

    from generator.entry.mathparse import term_bound

    expr = sympy.sympify(text)  # a test-owned literal, not entry input
    assert term_bound(expr) >= len(sympy.Add.make_args(sympy.expand(expr)))
    assert term_bound(sympy.sympify("(a+b+c)**4")) == 15  # C(6, 2)


# -- vocabulary files (tags.yaml, families.yaml) read like entries


def vocabulary_problems_of(tmp_path: Path, name: str, text: str | bytes) -> list[tuple]:
    from generator.entry.catalog import read_vocabulary_file

    path = tmp_path / name
    if isinstance(text, bytes):
        path.write_bytes(text)
    else:
        path.write_text(text, encoding="utf-8")
    found = run_limited(read_vocabulary_file, path, name, seconds=30, memory_bytes=1 << 30)
    return [(d.code, d.line, d.column) for d in found.diagnostics]


VOCABULARY_BOMB = BILLION_LAUGHS.replace("id: schwarzschild\n", "")


@pytest.mark.parametrize("name", ["tags.yaml", "families.yaml"])
@pytest.mark.parametrize("text, expected", [
    (VOCABULARY_BOMB, ("yaml.anchor", 1, 4)),  # billion laughs: refused at its first anchor
    ("vacuum: &v text\nstatic: *v\n", ("yaml.anchor", 1, 9)),
    ("vacuum: !!python/object/apply:os.system [ls]\n", ("yaml.tag", 1, 9)),
    ("1: a number as a name\n", ("vocabulary.name", 1, 1)),
    ("? [a, b]\n: a list as a name\n", ("vocabulary.name", 1, 3)),
    ("Vacuum: capitals\n", ("vocabulary.name", 1, 1)),
    ("- a list\n- not a mapping\n", ("vocabulary.type", 1, 1)),
    ("a: ok\nb: " + "[" * 25 + "x" + "]" * 25 + "\n", ("yaml.depth", 2, 23)),
])
def test_hostile_vocabulary_files_are_refused_at_their_position(tmp_path, name, text,
                                                                expected) -> None:
    assert expected in vocabulary_problems_of(tmp_path, name, text)


@pytest.mark.parametrize("name", ["tags.yaml", "families.yaml"])
def test_vocabulary_files_are_capped_in_size_and_encoding(tmp_path, name) -> None:
    from generator.entry.catalog import MAX_VOCABULARY_BYTES

    big = "a: " + "x" * MAX_VOCABULARY_BYTES + "\n"
    assert vocabulary_problems_of(tmp_path, name, big) == [("file.size", 1, 1)]
    assert vocabulary_problems_of(tmp_path, name, b"a: \xff\n") == [("file.encoding", 1, 4)]


def test_family_records_are_checked_field_by_field(tmp_path) -> None:
    found = vocabulary_problems_of(tmp_path, "families.yaml",
                                   "waves:\n  title: Waves\n  about: [not, text]\n"
                                   "stars: just a line\nisolated-objects:\n  script: x\n")
    assert found == [("vocabulary.type", 3, 10), ("vocabulary.type", 4, 8),
                     ("vocabulary.key", 6, 3)]


def test_read_tags_never_raises_on_hostile_keys(tmp_path: Path) -> None:
    """A non-string tag key raised TypeError in read_tags (sorting ints with strings), which
    ended the preview server's watcher; the usable tags are kept, the rest reported."""
    from generator.entry.catalog import read_tags

    (tmp_path / "tags.yaml").write_text("vacuum: ok\n1: int\nnull: none\n2.5: float\n")
    assert [t.name for t in read_tags(tmp_path)] == ["vacuum"]


def fake_checks(monkeypatch: pytest.MonkeyPatch) -> None:
    from _scale_helpers import install_counting_engine

    install_counting_engine(monkeypatch)


def test_a_bad_tags_file_is_reported_at_its_own_line_not_at_an_entry(
        tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    """`check` reported a broken tags.yaml as an internal error at the entry's 1:1."""
    from generator.run.pipeline import RunOptions, check_files

    fake_checks(monkeypatch)
    catalog = make_catalog(tmp_path, "hostile-valid")
    with (catalog / "tags.yaml").open("a", encoding="utf-8") as handle:
        handle.write("7: a number\n")
    lines = (catalog / "tags.yaml").read_text().count("\n")
    entry = catalog / "isolated-objects" / "schwarzschild.yaml"
    reports = check_files([entry], catalog, tmp_path, RunOptions(jobs=1))
    by_file = {r.file: r for r in reports}
    [problem] = by_file["catalog/tags.yaml"].diagnostics
    assert (problem.code, problem.line, problem.column) == ("vocabulary.name", lines, 1)
    assert by_file["catalog/isolated-objects/schwarzschild.yaml"].ok


# -- symbolic links under catalog/


@pytest.mark.parametrize("link, target", [
    ("isolated-objects/evil.yaml", "/etc/passwd"),  # the reproduction
    ("isolated-objects/twin.yaml", "schwarzschild.yaml"),  # a link to another entry
    ("isolated-objects/gone.yaml", "/nonexistent/file.yaml"),  # dangling
    ("linked-family", "/etc"),  # a linked folder, once skipped without a word
    ("isolated-objects/sub", "."),  # a loop
    ("isolated-objects/readme.txt", "/etc/hostname"),  # not even named like an entry
    ("isolated-objects/zero.yaml", "/dev/zero"),  # endless: hashing it once never ended
])
def test_links_in_the_catalog_are_refused_at_their_place(tmp_path, monkeypatch, link,
                                                         target) -> None:
    from generator.entry.catalog import entry_files
    from generator.run.pipeline import RunOptions, check_files

    fake_checks(monkeypatch)
    catalog = make_catalog(tmp_path, "hostile-valid")
    os.symlink(target, catalog / link)
    reports = run_limited(check_files, entry_files([catalog]), catalog, tmp_path,
                          RunOptions(jobs=1), seconds=60, memory_bytes=1 << 30)
    by_file = {r.file: r for r in reports}
    refused = by_file[f"catalog/{link}"]
    assert [(d.code, d.line, d.column) for d in refused.diagnostics] == [("file.link", 1, 1)]
    assert by_file["catalog/isolated-objects/schwarzschild.yaml"].ok


@pytest.mark.parametrize("name", ["tags.yaml", "families.yaml"])
def test_a_linked_vocabulary_file_is_refused(tmp_path: Path, name: str) -> None:
    from generator.entry.catalog import read_vocabulary_file

    catalog = make_catalog(tmp_path)
    (catalog / name).unlink()
    os.symlink(PROJECT / "catalog" / name, catalog / name)
    found = read_vocabulary_file(catalog / name, f"catalog/{name}")
    assert found.entries == {}
    assert [d.code for d in found.diagnostics] == ["file.link"]


def test_the_loader_refuses_a_link_even_when_named_directly(tmp_path: Path) -> None:
    path = tmp_path / "isolated-objects" / "schwarzschild.yaml"
    path.parent.mkdir()
    os.symlink(ROOTS / "hostile-valid/isolated-objects/schwarzschild.yaml", path)
    result = load_entry(path, FILE, VOCABULARY)
    assert [d.code for d in result.diagnostics] == ["file.link"]


def test_a_fifo_in_the_catalog_does_not_hang_loading(tmp_path: Path) -> None:
    path = tmp_path / "isolated-objects" / "schwarzschild.yaml"
    path.parent.mkdir()
    os.mkfifo(path)
    result = run_limited(load_entry, path, FILE, VOCABULARY, seconds=30, memory_bytes=0)
    assert [d.code for d in result.diagnostics] == ["file.unreadable"]


# -- the output folder of a build


@pytest.mark.parametrize("out", ["catalog", ".", "..", "catalog/isolated-objects", "catalog/site",
                                 "not-ours", "a-file"])
def test_build_refuses_an_output_folder_it_would_destroy(tmp_path, monkeypatch, out) -> None:
    """`build --out catalog` deleted every entry, `--out .` the whole checkout with .git."""
    from generator.errors import UsageError
    from generator.run.build import build_site
    from generator.run.pipeline import RunOptions

    fake_checks(monkeypatch)
    project = tmp_path / "project"
    make_catalog(project, "hostile-valid")
    (project / ".git").mkdir()
    (project / "not-ours").mkdir()
    (project / "not-ours" / "thesis.tex").write_text("years of work")
    (project / "a-file").write_text("data")
    monkeypatch.chdir(project)
    before = sorted(p.relative_to(tmp_path) for p in tmp_path.rglob("*"))
    with pytest.raises(UsageError):
        build_site(Path("catalog"), Path(out), RunOptions(jobs=1))
    assert sorted(p.relative_to(tmp_path) for p in tmp_path.rglob("*")) == before


@pytest.mark.parametrize("out", ["site", "empty", "deep/new/site", "own-site"])
def test_a_new_an_empty_or_its_own_folder_is_accepted(tmp_path, monkeypatch, out) -> None:
    from generator.run.build import SITE_MARKER, check_output_folder

    project = tmp_path / "project"
    make_catalog(project, "hostile-valid")
    (project / "empty").mkdir()
    (project / "own-site").mkdir()
    (project / "own-site" / "index.html").write_text("an earlier build")
    (project / "own-site" / SITE_MARKER).write_text("")
    monkeypatch.chdir(project)
    check_output_folder(Path(out), Path("catalog"), project)  # raises if refused


@pytest.mark.slow
def test_a_built_site_carries_the_marker_and_can_be_rebuilt(tmp_path: Path) -> None:
    from generator.run.build import SITE_MARKER

    make_catalog(tmp_path, "hostile-valid")
    for _ in range(2):
        done = almanac(tmp_path, "build", "--no-cache", "--jobs", "1")
        assert done.returncode == 0, done.stderr[-2000:]
        assert (tmp_path / "site" / SITE_MARKER).is_file()
    done = almanac(tmp_path, "build", "--no-cache", "--out", ".")
    assert done.returncode == 2 and "contains the catalog" in done.stderr
    assert (tmp_path / "catalog" / "tags.yaml").is_file()


# -- control characters in diagnostics


PAYLOADS = ["x\n::error file=a.yaml,line=1::forged", "x\r::warning::forged",
            "x\x85::error::nel", "x\u2028::error::ls", "x\x1b[2J\x1b]0;title\x07",
            "x\x00nul", "x%0A::error::pre-escaped", "x\t::notice::tab"]


@pytest.mark.parametrize("payload", PAYLOADS)
@pytest.mark.parametrize("field", ["file", "message", "hint", "code"])
def test_no_diagnostic_output_can_forge_a_workflow_command(payload: str, field: str) -> None:
    """A YAML key holding a line break and `::error` printed forged annotation lines in the
    plain-text output CI shows. Every format must keep one diagnostic on its own line(s)."""
    import json

    from generator.errors import Diagnostic
    from generator.model import EntryReport
    from generator.site.export import check_document

    parts = {"file": "catalog/x.yaml", "message": "unknown key", "hint": "a hint",
             "code": "entry.unknown-key"}
    parts[field] = payload
    d = Diagnostic(parts["file"], 3, 1, "error", parts["message"], parts["code"],
                   parts["hint"])
    text_lines = d.format_text().split("\n")
    assert len(text_lines) == 2 and text_lines[1].startswith("    hint: ")
    github = d.format_github()
    assert "\n" not in github and "\r" not in github
    assert github.startswith("::error file=")  # one command; the rest is its text
    document = json.dumps(check_document([EntryReport(None, d.file, None, None, None, (),
                                                      (d,))]), indent=2)
    for output in (*text_lines, github, *document.splitlines()):
        assert not re.search("[\x00-\x1f\x7f-\x9f\u2028\u2029]", output.replace("\t", "")), \
            output
        assert not output.lstrip().startswith("::") or output is github


def test_a_hostile_key_in_an_entry_prints_no_forged_line(tmp_path: Path) -> None:
    """End to end, as CI runs it: every line starting with :: is one of our diagnostics."""
    catalog = make_catalog(tmp_path, "hostile-valid")
    entry = catalog / "isolated-objects" / "schwarzschild.yaml"
    entry.write_text(entry.read_text() + '"x\\n::error file=README.md,line=1::forged": 1\n')
    for fmt in ("text", "github"):
        done = almanac(tmp_path, "check", "catalog", "--format", fmt, "--no-cache",
                       "--jobs", "1", timeout=600)
        lines = (done.stdout + done.stderr).splitlines()
        commands = [line for line in lines if line.startswith("::")]
        assert all(line.startswith("::error file=catalog/isolated-objects/") for line in commands)
        assert len(commands) == (1 if fmt == "github" else 0)
        assert done.returncode == 1
