"""Citations and content hashes (generator/site/cite.py).

External references: BibTeX output is parsed with bibtexparser 2.1.0 (a general-purpose
reader); CSL-JSON output is validated with jsonschema against tests/data/csl-data.schema.json,
a subset of the Citation Style Language input-data schema (csl-data.json), written from memory.
"""

from __future__ import annotations

import json
from dataclasses import replace
from pathlib import Path

import bibtexparser
import jsonschema
import pytest
from _entry_builders import SCHWARZSCHILD_ORIGINAL, math, pos, schwarzschild

from generator.entry.content_hash import content_hash, short_hash
from generator.model import (
    CatalogMeta,
    Claim,
    Claims,
    Entry,
    EntryReport,
    Matter,
    Parameter,
    Publication,
    Reference,
    Revision,
)
from generator.site.cite import (
    FORMATS,
    Venue,
    bibtex_escape,
    bibtex_key,
    cite_entry,
    cite_original,
    split_name,
    split_venue,
)

CSL_SCHEMA = json.loads((Path(__file__).parent / "data" / "csl-data.schema.json").read_text())
BASE_URL = "https://almanac.test/"  # invented for the tests
PUBLISHED = Publication(site_address=BASE_URL)


def standalone_report(entry: Entry, file: str) -> EntryReport:
    """A report with only what a citation reads (no geometry: these tests are about text)."""
    return EntryReport(entry, file, None, None, None, (), (), content_hash(entry))


def meta(**overrides: object) -> CatalogMeta:
    data: dict[str, object] = {
        "version": "0.3.1",
        "generator_version": "0.3.1",
        "sympy_version": "1.14.0",
        "families": (),
        "tags": (),
        "contributing_markdown": "",
        "publication": PUBLISHED,
        "revisions": {
            "schwarzschild-test": (
                Revision("c1" * 20, "2026-11-20", "ab" * 32, "Add entry"),
                Revision("c2" * 20, "2027-01-05", "cd" * 32, "Fix kretschmann"),
            )
        },
    }
    data.update(overrides)
    return CatalogMeta(**data)  # type: ignore[arg-type]


def parse_bibtex(text: str) -> bibtexparser.Library:
    library = bibtexparser.parse_string(text)
    assert library.failed_blocks == []
    return library


# ---------------------------------------------------------------------------- content hash


def test_hash_is_sha256_hex_and_short_form_is_12_digits() -> None:
    full = content_hash(schwarzschild())
    assert len(full) == 64 and int(full, 16) >= 0
    assert short_hash(full) == full[:12]


@pytest.mark.parametrize(
    "layout_change",
    [
        {"title": "A different title", "summary": "Reworded.", "notes": "More prose."},
        {"tags": ("vacuum",)},
        {"file": "catalog/elsewhere/schwarzschild-test.yaml"},
        {"references": ()},
        {"domain": (math("0 < theta < pi", 40), math("r > 2*M", 41))},  # order of a set
        {"domain": (math("r>2*M"), math(" 0 <  theta\n< pi "))},  # whitespace, line folding
        {
            "line_element": math(
                "-(1-2*M/r)*dt**2+dr**2/(1-2*M/r)\n + r**2*(dtheta**2 + sin(theta)**2*dphi**2)"
            )
        },
        {"parameters": (Parameter("M", "positive", "the mass, reworded", pos(99)),)},
    ],
)
def test_hash_ignores_layout_and_prose(layout_change: dict[str, object]) -> None:
    assert content_hash(schwarzschild(**layout_change)) == content_hash(schwarzschild())


def test_hash_ignores_claim_provenance_and_order() -> None:
    base = schwarzschild()
    reordered = Claims(
        scalars=(
            Claim("kretschmann", math("48 * M**2 / r**6"), "original", "eq. (1)", pos(3)),
            Claim("ricci_scalar", math("0"), None, None, pos(4)),
        ),
        petrov_type="D",
    )
    assert content_hash(replace(base, claims=reordered)) == content_hash(base)


def test_hash_ignores_component_key_order_and_pair_order() -> None:
    one = schwarzschild(
        line_element=None,
        components=((("t", "t"), math("-1")), (("t", "phi"), math("a")), (("r", "r"), math("1"))),
    )
    two = schwarzschild(
        line_element=None,
        components=((("r", "r"), math("1")), (("phi", "t"), math(" a ")), (("t", "t"), math("-1"))),
    )
    assert content_hash(one) == content_hash(two)


@pytest.mark.parametrize(
    "math_change",
    [
        {"signature": "+---"},
        {"coordinates": ("t", "r", "phi", "theta")},
        {"domain": (math("r > 3*M"), math("0 < theta < pi"))},
        {"parameters": (Parameter("M", "real", "mass", pos(8)),)},
        {
            "line_element": math(
                "-(1 - 2*M/r)*dt**2 + dr**2/(1 - 2*M/r) + r**2*(dtheta**2 + sin(theta)*dphi**2)"
            )
        },
        {"matter": Matter(kind="lambda-vacuum", cosmological_constant=math("Lambda"))},
        {
            "claims": Claims(
                scalars=(Claim("kretschmann", math("48*M**2/r**5"), None, None, pos(1)),),
                petrov_type="D",
            )
        },
        {"claims": Claims(scalars=(), petrov_type="I")},
    ],
)
def test_hash_changes_with_the_mathematics(math_change: dict[str, object]) -> None:
    assert content_hash(schwarzschild(**math_change)) != content_hash(schwarzschild())


def test_components_and_line_element_are_different_texts() -> None:
    as_components = schwarzschild(line_element=None, components=((("t", "t"), math("-1")),))
    assert content_hash(as_components) != content_hash(schwarzschild())


# ---------------------------------------------------------------------------- entry citations


def test_bibtex_entry_citation_parses_and_carries_version_hash_and_url() -> None:
    entry = schwarzschild()
    report = standalone_report(entry, entry.file)
    library = parse_bibtex(cite_entry(report, meta(), "bibtex"))
    (record,) = library.entries
    fields = {name: field.value for name, field in record.fields_dict.items()}
    assert record.key == "almanac-schwarzschild-test"
    assert record.entry_type == "misc"
    assert fields["title"] == "{Schwarzschild black hole (Schwarzschild coordinates)}"
    assert fields["version"] == "0.3.1"
    assert fields["url"] == "https://almanac.test/entries/schwarzschild-test/"
    assert fields["year"] == "2027"  # latest revision
    assert short_hash(content_hash(entry)) in fields["note"]
    assert "urldate" not in fields  # the reader adds the access date


def test_entry_citation_without_history_has_no_year() -> None:
    entry = schwarzschild()
    text = cite_entry(standalone_report(entry, entry.file), meta(revisions={}), "bibtex")
    (record,) = parse_bibtex(text).entries
    assert "year" not in record.fields_dict


def test_base_url_without_trailing_slash_still_gives_a_clean_url() -> None:
    entry = schwarzschild()
    report = standalone_report(entry, entry.file)
    address = Publication(site_address="https://almanac.test/catalog")
    text = cite_entry(report, meta(publication=address), "text")
    assert "https://almanac.test/catalog/entries/schwarzschild-test/ " in text


def test_bibtex_escapes_every_latex_special() -> None:
    title = r"Flux & 50% of $M_1$ {#2} ~x^2 \o"
    entry = schwarzschild(title=title, id="odd-title")
    library = parse_bibtex(cite_entry(standalone_report(entry, entry.file), meta(), "bibtex"))
    (record,) = library.entries
    expected = (
        r"{Flux \& 50\% of \$M\_1\$ \{\#2\} \textasciitilde{}x\textasciicircum{}2 "
        r"\textbackslash{}o (Schwarzschild coordinates)}"
    )
    assert record.fields_dict["title"].value == expected


def test_bibtex_escape_collapses_newlines() -> None:
    assert bibtex_escape("two\n  lines") == "two lines"


@pytest.mark.parametrize(
    ("parts", "key"),
    [
        (("almanac", "kerr-newman"), "almanac-kerr-newman"),
        (("Schwarzschild", "1916", "Über"), "schwarzschild-1916-uber"),
        (("Gödel", "1949", "{evil},key"), "godel-1949-evil-key"),
        (("%", "@"), "entry"),
    ],
)
def test_bibtex_keys_are_safe_and_deterministic(parts: tuple[str, ...], key: str) -> None:
    assert bibtex_key(*parts) == key


def test_csl_json_entry_citation_validates_against_the_csl_schema() -> None:
    entry = schwarzschild()
    data = json.loads(cite_entry(standalone_report(entry, entry.file), meta(), "csl-json"))
    jsonschema.validate(data, CSL_SCHEMA)
    (item,) = data
    assert item["version"] == "0.3.1"
    assert item["URL"] == "https://almanac.test/entries/schwarzschild-test/"
    assert "accessed" not in item


def test_csl_schema_fixture_rejects_a_malformed_item() -> None:
    """The fixture must be able to fail: an unknown key and a bad type are both refused."""
    with pytest.raises(jsonschema.ValidationError):
        jsonschema.validate([{"id": "x", "type": "web-page"}], CSL_SCHEMA)
    with pytest.raises(jsonschema.ValidationError):
        jsonschema.validate([{"id": "x", "type": "webpage", "hash": "1"}], CSL_SCHEMA)


def test_text_entry_citation_leaves_the_access_date_to_the_reader() -> None:
    entry = schwarzschild()
    text = cite_entry(standalone_report(entry, entry.file), meta(), "text")
    assert text == (
        "Metric Almanac contributors (2027). Schwarzschild black hole (Schwarzschild "
        "coordinates). Metric Almanac, version 0.3.1, entry schwarzschild-test, content hash "
        f"{short_hash(content_hash(entry))}. https://almanac.test/entries/schwarzschild-test/ "
        "(accessed <date>).\n"
    )


@pytest.mark.parametrize("fmt", FORMATS)
def test_entry_citation_is_deterministic(fmt: str) -> None:
    entry = schwarzschild()
    report = standalone_report(entry, entry.file)
    assert cite_entry(report, meta(), fmt) == cite_entry(report, meta(), fmt)


def test_unknown_format_and_unloaded_entry_are_refused() -> None:
    entry = schwarzschild()
    report = standalone_report(entry, entry.file)
    with pytest.raises(ValueError, match="unknown citation format"):
        cite_entry(report, meta(), "ris")
    with pytest.raises(ValueError, match="could not be loaded"):
        cite_entry(replace(report, entry=None), meta(), "text")


# ---------------------------------------------------------------------------- original source

# R. P. Kerr, "Gravitational field of a spinning mass as an example of algebraically special
# metrics", Phys. Rev. Lett. 11, 237 (1963), doi:10.1103/PhysRevLett.11.237 (common practice).
KERR = Reference(
    role="original",
    authors=("R. P. Kerr",),
    title="Gravitational field of a spinning mass as an example of algebraically special metrics",
    venue="Phys. Rev. Lett. 11, 237",
    year=1963,
    doi="10.1103/PhysRevLett.11.237",
    arxiv=None,
    isbn=None,
    locator="eq. (1)",
    unconfirmed=(),
    pos=pos(30),
)


def test_original_bibtex_splits_a_journal_venue() -> None:
    entry = schwarzschild(references=(KERR,))
    (record,) = parse_bibtex(cite_original(entry, "bibtex")).entries
    fields = {name: field.value for name, field in record.fields_dict.items()}
    assert (record.entry_type, record.key) == ("article", "kerr-1963-gravitational")
    assert fields["journal"] == "Phys. Rev. Lett."
    assert (fields["volume"], fields["pages"], fields["year"]) == ("11", "237", "1963")
    assert fields["doi"] == "10.1103/PhysRevLett.11.237"
    assert fields["author"] == "R. P. Kerr"


def test_original_keeps_a_year_as_volume_venue_whole_and_prints_no_confirmation_note() -> None:
    (record,) = parse_bibtex(cite_original(schwarzschild(), "bibtex")).entries
    fields = {name: field.value for name, field in record.fields_dict.items()}
    assert fields["journal"] == "Sitzungsber. Preuss. Akad. Wiss. Berlin 1916, 189"
    assert "volume" not in fields
    assert fields["eprint"] == "physics/9905030"
    assert "note" not in fields  # confirmation state is shown on the page, never in a bibliography


def test_original_book_uses_publisher() -> None:
    # Invented book for the test: only the shape matters here.
    book = replace(KERR, doi=None, isbn="978-0-00-000000-2", venue="Almanac Press, Harbourtown")
    (record,) = parse_bibtex(cite_original(schwarzschild(references=(book,)), "bibtex")).entries
    assert record.entry_type == "book"
    assert record.fields_dict["publisher"].value == "Almanac Press, Harbourtown"
    assert "journal" not in record.fields_dict


def test_original_csl_json_validates_and_splits_names() -> None:
    data = json.loads(cite_original(schwarzschild(references=(KERR,)), "csl-json"))
    jsonschema.validate(data, CSL_SCHEMA)
    (item,) = data
    assert item["author"] == [{"family": "Kerr", "given": "R. P."}]
    assert item["DOI"] == "10.1103/PhysRevLett.11.237"
    assert (item["container-title"], item["volume"], item["page"]) == (
        "Phys. Rev. Lett.",
        "11",
        "237",
    )
    assert item["issued"] == {"date-parts": [[1963]]}


def test_original_text() -> None:
    assert cite_original(schwarzschild(references=(KERR,)), "text") == (
        "R. P. Kerr (1963). Gravitational field of a spinning mass as an example of "
        "algebraically special metrics. Phys. Rev. Lett. 11, 237. "
        "doi:10.1103/PhysRevLett.11.237.\n"
    )


def test_every_original_publication_is_cited_in_the_entry_order() -> None:
    """A metric found in two papers is cited with both (here Schwarzschild 1916 and Kerr 1963
    stand in for any two originals): one BibTeX record, CSL item and text line each, never
    the first paper alone."""
    entry = schwarzschild(references=(SCHWARZSCHILD_ORIGINAL, KERR))
    records = parse_bibtex(cite_original(entry, "bibtex")).entries
    assert [r.key for r in records] == ["schwarzschild-1916-uber", "kerr-1963-gravitational"]
    items = json.loads(cite_original(entry, "csl-json"))
    jsonschema.validate(items, CSL_SCHEMA)
    assert [item["issued"] for item in items] == [{"date-parts": [[1916]]},
                                                  {"date-parts": [[1963]]}]
    lines = cite_original(entry, "text").splitlines()
    assert [line.split(" (")[0] for line in lines] == ["K. Schwarzschild", "R. P. Kerr"]


def test_entry_without_original_reference_is_refused() -> None:
    review = replace(SCHWARZSCHILD_ORIGINAL, role="review")
    with pytest.raises(ValueError, match="no reference with role 'original'"):
        cite_original(schwarzschild(references=(review,)), "text")


@pytest.mark.parametrize(
    ("name", "split"),
    [
        ("R. P. Kerr", ("R. P.", "Kerr")),
        ("Kerr, R. P.", ("R. P.", "Kerr")),
        ("Euclid", ("", "Euclid")),
    ],
)
def test_split_name(name: str, split: tuple[str, str]) -> None:
    assert split_name(name) == split


@pytest.mark.parametrize(
    ("venue", "year", "parts"),
    [
        ("Phys. Rev. Lett. 11, 237", 1963, Venue("Phys. Rev. Lett.", "11", "", "237")),
        (
            "Ann. Phys. (Leipzig) 355, 106-120",
            1916,
            Venue("Ann. Phys. (Leipzig)", "355", "", "106-120"),
        ),
        (
            "Annalen der Physik 355 (9), 106–120",
            1916,
            Venue("Annalen der Physik", "355", "9", "106-120"),
        ),
        ("Rev. Mod. Phys. 21, 447 – 450", 1949, Venue("Rev. Mod. Phys.", "21", "", "447-450")),
        (
            "Sitzungsber. Preuss. Akad. Wiss. 1916, 189",
            1916,
            Venue("Sitzungsber. Preuss. Akad. Wiss. 1916, 189"),
        ),
        ("Lecture notes", 2001, Venue("Lecture notes")),
        ("Cambridge University Press", 2009, Venue("Cambridge University Press")),
    ],
)
def test_split_venue_never_guesses(venue: str, year: int, parts: Venue) -> None:
    assert split_venue(venue, year) == parts


def test_issue_becomes_bibtex_number_and_csl_issue() -> None:
    ref = replace(KERR, venue="Annalen der Physik 355 (9), 106–120", year=1916)
    (record,) = parse_bibtex(cite_original(schwarzschild(references=(ref,)), "bibtex")).entries
    assert record.fields_dict["number"].value == "9"
    assert record.fields_dict["pages"].value == "106--120"
    (item,) = json.loads(cite_original(schwarzschild(references=(ref,)), "csl-json"))
    assert (item["issue"], item["page"]) == ("9", "106-120")
    jsonschema.validate([item], CSL_SCHEMA)


# ---------------------------------------------------------------------------- CITATION.cff

ROOT = Path(__file__).resolve().parent.parent


def _cff() -> dict:
    import yaml

    return yaml.safe_load((ROOT / "CITATION.cff").read_text(encoding="utf-8"))


def test_citation_cff_validates_against_the_cff_schema_subset() -> None:
    """tests/data/citation-cff.schema.json: a subset of the Citation File Format 1.2.0 schema,
    written from memory; it refuses unknown keys like the original."""
    schema = json.loads((ROOT / "tests" / "data" / "citation-cff.schema.json").read_text())
    jsonschema.validate(_cff(), schema)
    with pytest.raises(jsonschema.ValidationError):
        jsonschema.validate({**_cff(), "colour": "blue"}, schema)


def test_citation_cff_agrees_with_pyproject() -> None:
    import tomllib

    project = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))["project"]
    cff = _cff()
    assert str(cff["version"]) == project["version"]
    assert cff["title"].lower().replace(" ", "-") == project["name"]
    assert " ".join(cff["abstract"].split()) == project["description"]
    license = project["license"]
    assert cff["license"] == (license if isinstance(license, str) else license["text"])


def test_citation_cff_names_the_same_title_author_version_and_address_as_entry_citations(
) -> None:
    """The catalog's own citation and every entry's agree: same title, authors and version,
    and an address only where the catalog's settings name one (none today)."""
    from generator.entry.publication import catalog_version, read_publication

    cff = _cff()
    publication = read_publication(ROOT / "catalog")
    assert cff["authors"] == [{"name": publication.authors}]
    assert cff["title"] == publication.title
    assert str(cff["version"]) == catalog_version(ROOT / "catalog", publication, "none")
    assert cff.get("url") == publication.site_address
    assert cff.get("repository-code") == publication.repository


# ---------------------------------------------------------------------------- hash of YAML text


def _hash_of_text(text: str) -> str:
    from generator.entry.loader import Vocabulary, load_text

    path = Path("catalog/demo/lantern.yaml")
    result = load_text(text, str(path), path, Vocabulary())
    assert result.entry is not None, [d.format_text() for d in result.diagnostics]
    return content_hash(result.entry)


def test_hash_of_yaml_ignores_order_comments_quoting_and_flow_style() -> None:
    from _git_sandbox import demo_entry

    original = demo_entry("lantern")
    relaid = (
        original.replace("title: Lantern toy spacetime\n", "")
        .replace("coordinates: [t, x]", "# the chart\ncoordinates:\n  - 't'\n  - \"x\"  # space")
        .replace(
            "  k: {assume: positive, meaning: lamp strength}",
            "  k:\n    meaning: 'lamp strength'\n    assume: \"positive\"",
        )
        .replace(
            "  line_element: -(1 + k*x**2)*dt**2 + dx**2",
            "  line_element: >-\n    -(1 + k*x**2)*dt**2\n    + dx**2",
        )
        + "title: 'Lantern toy spacetime'\n"
    )
    assert relaid != original
    assert _hash_of_text(relaid) == _hash_of_text(original)


@pytest.mark.parametrize(
    ("old", "new"),
    [
        ("-(1 + k*x**2)*dt**2", "-(1 + k*x**3)*dt**2"),
        ("assume: positive", "assume: nonzero"),
        ("  - x > 0", "  - x > 1"),
        ('signature: "-+"', 'signature: "+-"'),
        ("kind: unspecified", "kind: vacuum"),
    ],
)
def test_hash_of_yaml_changes_with_the_mathematics(old: str, new: str) -> None:
    from _git_sandbox import demo_entry

    original = demo_entry("lantern")
    assert old in original
    assert _hash_of_text(original.replace(old, new)) != _hash_of_text(original)


# ---------------------------------------------------------------------------- the cite command

DEMO = Path(__file__).parent / "roots" / "demo-catalog" / "catalog"


@pytest.fixture
def demo(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> Path:
    import shutil

    shutil.copytree(DEMO, tmp_path / "catalog")
    monkeypatch.chdir(tmp_path)
    return tmp_path / "catalog"


def cite_command(args: list[str], capsys: pytest.CaptureFixture[str]) -> tuple[int, str, str]:
    from generator.cli import main

    status = main(["cite", *args, "--no-cache"])
    out, err = capsys.readouterr()
    return status, out, err


def test_without_a_site_address_a_citation_has_no_url_and_says_how_to_set_one(
        demo: Path, capsys: pytest.CaptureFixture[str]) -> None:
    status, out, err = cite_command(["lighthouse-dome", "--format", "text"], capsys)
    assert status == 0, err
    assert "http" not in out and "accessed" not in out
    assert "entry lighthouse-dome" in out and "content hash" in out
    assert "site_address" in err and "publication.yaml" in err
    status, out, _ = cite_command(["lighthouse-dome"], capsys)
    (record,) = parse_bibtex(out).entries
    assert "url" not in record.fields_dict and "urldate" not in out


def test_the_site_address_setting_reaches_every_citation_and_page(
        demo: Path, capsys: pytest.CaptureFixture[str]) -> None:
    """Change the catalog's setting once: the cite command, the entry page's citations and its
    "how to cite" block all follow (the address is invented for the test)."""
    from generator.run.build import build_site
    from generator.run.pipeline import RunOptions

    (demo / "publication.yaml").write_text(
        "site_address: https://lighthouse.example/almanac/\n"
        "repository: https://lighthouse.example/src/almanac\n", encoding="utf-8")
    status, out, err = cite_command(["lighthouse-dome", "--format", "csl-json"], capsys)
    assert status == 0, err
    (item,) = json.loads(out)
    assert item["URL"] == "https://lighthouse.example/almanac/entries/lighthouse-dome/"
    assert "https://lighthouse.example/src/almanac" in item["note"]
    assert "site_address" not in err
    assert build_site(demo, demo.parent / "site", RunOptions(jobs=1)).ok
    html = (demo.parent / "site/entries/lighthouse-dome/index.html").read_text(encoding="utf-8")
    assert html.count("https://lighthouse.example/almanac/entries/lighthouse-dome/") >= 3
    assert "revisions.html?hash=" in html


def test_a_build_for_publishing_refuses_a_catalog_without_an_address(
        demo: Path, capsys: pytest.CaptureFixture[str]) -> None:
    from generator.cli import main

    status = main(["build", "--catalog", "catalog", "--out", "site", "--no-cache",
                   "--require-address"])
    assert status == 2
    assert "names no site address" in capsys.readouterr().err
    assert not (demo.parent / "site").exists()


@pytest.mark.parametrize(("text", "message"), [
    ("site_adress: https://x.example/\n", "unknown key 'site_adress'"),
    ("site_address: javascript:alert(1)\n", "plain http(s) address"),
    ("site_address: 'https://x.example/\" onclick=x'\n", "plain http(s) address"),
    ("title: [a, b]\n", "one line of text"),
    # read like every catalog file (issue 15, item 3): refused where written, never expanded
    ("a: &a [x, x]\nb: &b [*a, *a]\ntitle: *b\n", "publication.yaml:1:4: error: YAML anchors"),
    ("title: !!python/object/apply:os.system [ls]\n", "publication.yaml:1:8: error: YAML tag"),
    ("1: x\n", "publication.yaml:1:1: error: keys must be plain names"),
    ("- a\n", "publication.yaml:1:1: error: expected a mapping"),
    ("title: " + "x" * 300_000 + "\n", "larger than the limit"),
])
def test_publication_settings_are_checked(demo: Path, capsys: pytest.CaptureFixture[str],
                                          text: str, message: str) -> None:
    (demo / "publication.yaml").write_text(text, encoding="utf-8")
    status, _, err = cite_command(["lighthouse-dome"], capsys)
    assert status == 2
    assert message in err


def test_an_entry_that_fails_its_check_is_not_cited_unless_asked(
        demo: Path, capsys: pytest.CaptureFixture[str]) -> None:
    entry = demo / "riemannian" / "lighthouse-dome.yaml"
    entry.write_text(entry.read_text().replace("value: 2/rho**2", "value: 3/rho**2"))
    status, out, err = cite_command(["lighthouse-dome"], capsys)
    assert (status, out) == (1, "")
    assert "fails its checks" in err and "claim.ricci_scalar" in err
    status, out, err = cite_command(["lighthouse-dome", "--original"], capsys)
    assert (status, out) == (1, "")
    status, out, err = cite_command(["lighthouse-dome", "--allow-unverified", "--format", "text"],
                                    capsys)
    assert status == 0
    assert "did not pass the catalog's checks" in out
