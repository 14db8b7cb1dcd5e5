"""Loading untrusted entries: every mistake is a positioned diagnostic with a hint.

The fixture catalog tests/roots/demo-catalog is a demo set in our own scenario (a lighthouse
dome modelled as a round sphere).
"""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest

from generator.entry.catalog import (
    cross_entry_diagnostics,
    outline_all,
    outline_of,
    peek_outline,
    vocabulary,
)
from generator.entry.loader import LoadResult, isbn_checksum_ok, load_entry
from generator.errors import SourcePos

DEMO = Path(__file__).parent / "roots" / "demo-catalog" / "catalog"
DEMO_ENTRY = DEMO / "riemannian" / "lighthouse-dome.yaml"


@pytest.fixture
def catalog(tmp_path: Path) -> Path:
    target = tmp_path / "catalog"
    shutil.copytree(DEMO, target)
    return target


def write_variant(catalog: Path, replace: dict[str, str], name: str = "lighthouse-dome") -> Path:
    text = DEMO_ENTRY.read_text(encoding="utf-8")
    for old, new in replace.items():
        assert old in text, old
        text = text.replace(old, new)
    path = catalog / "riemannian" / f"{name}.yaml"
    path.write_text(text, encoding="utf-8")
    return path


def load(path: Path) -> LoadResult:
    return load_entry(path, path.name, vocabulary(path.parent.parent))


def errors(result: LoadResult) -> list[tuple[int, int, str, str]]:
    return [(d.line, d.column, d.code, d.message) for d in result.diagnostics
            if d.severity == "error"]


def test_demo_entry_loads_cleanly(catalog: Path) -> None:
    result = load(catalog / "riemannian" / "lighthouse-dome.yaml")
    assert errors(result) == []
    assert result.spacetime is not None
    assert result.spacetime.dimension == 2
    assert [c.name for c in result.entry.claims.scalars] == ["ricci_scalar", "kretschmann"]


def test_missing_required_key(catalog: Path) -> None:
    path = write_variant(catalog, {"chart: polar angle and longitude\n": ""})
    assert errors(load(path)) == [(4, 1, "entry.missing-key", "missing required key 'chart'")]


def test_unknown_key_is_refused_with_a_suggestion(catalog: Path) -> None:
    path = write_variant(catalog, {"summary:": "sumary:"})
    result = load(path)
    found = [d for d in result.diagnostics if d.code == "entry.unknown-key"]
    assert [(d.line, d.column, d.message) for d in found] == [(7, 1, "unknown key 'sumary'")]
    assert "did you mean 'summary'" in found[0].hint


def test_id_must_equal_file_name(catalog: Path) -> None:
    path = write_variant(catalog, {}, name="other-name")
    assert errors(load(path)) == [(4, 5, "entry.id-mismatch",
                                   "id 'lighthouse-dome' differs from the file name "
                                   "'other-name.yaml'")]


def test_duplicate_ids_across_the_catalog(catalog: Path) -> None:
    twin = catalog / "stars" / "lighthouse-dome.yaml"
    twin.parent.mkdir()
    shutil.copy(DEMO_ENTRY, twin)
    loads = [load_entry(path, str(path), vocabulary(catalog)) for path in (DEMO_ENTRY, twin)]
    problems = cross_entry_diagnostics([outline_of(x) for x in loads], {"lighthouse-dome"})
    # Both files are told, each naming the other, so a one-entry check of either hears it.
    for mine, other in ((loads[0], loads[1]), (loads[1], loads[0])):
        assert [d.code for d in problems[mine.file]] == ["catalog.duplicate-id"]
        assert other.file in problems[mine.file][0].message


@pytest.mark.parametrize(
    ("field", "value", "code"),
    [
        ("    year: 2026\n    isbn: 978-0-306-40615-7", "    year: 2026\n    doi: doi:10.1/x\n"
         "    isbn: 978-0-306-40615-7", "entry.format"),
        ("    year: 2026\n    isbn: 978-0-306-40615-7",
         "    year: 2026\n    arxiv: arXiv:1234.5678\n    isbn: 978-0-306-40615-7",
         "entry.format"),
        ("    isbn: 978-0-306-40615-7", "    isbn: 978-0-306-40615-8", "entry.format"),
    ],
)
def test_malformed_identifiers(catalog: Path, field: str, value: str, code: str) -> None:
    result = load(write_variant(catalog, {field: value}))
    assert [c for _, _, c, _ in errors(result)] == [code]


def test_isbn_checksums() -> None:
    # Check digits computed by hand with the ISO 2108 weights (common practice).
    assert isbn_checksum_ok("0-306-40615-2")
    assert isbn_checksum_ok("978-0-306-40615-7")
    assert not isbn_checksum_ok("978-0-306-40615-8")


def test_unknown_symbol_points_at_the_character(catalog: Path) -> None:
    path = write_variant(catalog, {"line_element: rho**2*(dtheta**2": "line_element: "
                                   "rho**2*(dtheta**2 + x"})
    assert errors(load(path)) == [(18, 37, "math.syntax", "unknown name 'x'")]


def test_position_inside_a_folded_block(catalog: Path) -> None:
    path = write_variant(catalog, {
        "line_element: rho**2*(dtheta**2 + sin(theta)**2*dphi**2)":
        "line_element: >-\n    rho**2*dtheta**2\n    + rho**2*sinn(theta)**2*dphi**2"})
    assert errors(load(path)) == [(20, 14, "math.syntax", "unknown name 'sinn'")]


@pytest.mark.parametrize(
    ("claim", "message"),
    [
        ("rho.__class__", "unexpected character '.'"),
        ("__import__", "'__import__' is not allowed in math"),
        ("lambda: 1", "'lambda' is not allowed in math"),
        ("9**9**9", "exponent 387420489 is too large (limit 100)"),
        ("cosh(rho)(1)", "unexpected '(' after a complete expression"),
        ("eval(rho)", "'eval' is not allowed in math"),
        ("rhoo", "unknown name 'rhoo'"),
    ],
)
def test_hostile_math_is_refused(catalog: Path, claim: str, message: str) -> None:
    path = write_variant(catalog, {"kretschmann: 4/rho**4": f"kretschmann: \"{claim}\""})
    result = load(path)
    # Claims are parsed when verified; the loader parses the metric and domain. Parse here the
    # way verify does, through the entry's own symbol table.
    from generator.entry.loader import parse_at, symbol_table

    table, _ = symbol_table(result.entry)
    claim_text = next(c.value for c in result.entry.claims.scalars if c.name == "kretschmann")
    value, problem = parse_at(claim_text, table)
    assert value is None
    assert problem is not None and problem.message == message
    assert problem.line == 26


def test_yaml_tags_cannot_run_code(catalog: Path, tmp_path: Path) -> None:
    marker = tmp_path / "pwned"
    path = write_variant(catalog, {"title: Lighthouse dome": "title: !!python/object/apply:os"
                                   f".system [\"touch {marker}\"]"})
    result = load(path)
    assert not marker.exists()
    assert [(c, m) for _, _, c, m in errors(result)] == [
        ("yaml.tag", "YAML tag 'tag:yaml.org,2002:python/object/apply:os.system' is not "
         "allowed")]


def test_anchors_and_aliases_are_refused(catalog: Path) -> None:
    path = write_variant(catalog, {"tags: [riemannian, test-case]":
                                   "tags: &t [riemannian, test-case]\nalso: *t"})
    codes = [c for _, _, c, _ in errors(load(path))]
    assert codes == ["yaml.anchor", "yaml.alias"]


def test_invalid_yaml_is_positioned(catalog: Path) -> None:
    path = write_variant(catalog, {"signature: \"++\"": "signature: \"++"})
    (line, _column, code, _message), = errors(load(path))
    assert code == "yaml.syntax" and line >= 12


def test_duplicate_key(catalog: Path) -> None:
    path = write_variant(catalog, {"summary:": "title: Again\nsummary:"})
    assert ("entry.duplicate-key") in [c for _, _, c, _ in errors(load(path))]


def test_wrong_types_and_choices(catalog: Path) -> None:
    path = write_variant(catalog, {"kind: unspecified": "kind: vacum",
                                   "year: 2026\n    isbn": "year: soon\n    isbn"})
    found = errors(load(path))
    assert (20, 9, "entry.choice", "'matter.kind' must be one of vacuum, lambda-vacuum, "
            "electrovacuum, perfect-fluid, null-dust, anisotropic-fluid, scalar-field, "
            "nonlinear-electrodynamics, dilaton-maxwell, unspecified; got 'vacum'") in found
    assert any(code == "entry.type" and "year" in message for _, _, code, message in found)


@pytest.mark.parametrize(("line", "reads_as"), [
    ("    isbn: 978-0-306-40615-7\n  - role: textbook\n    arxiv: 0706.4324", "a number"),
    ("    isbn: 978-0-306-40615-7\n  - role: textbook\n    locator: 12", "a number"),
    ("    isbn: 978-0-306-40615-7\n  - role: textbook\n    locator: yes", "true/false"),
])
def test_a_plain_value_other_yaml_tools_read_as_another_type_is_refused(
        catalog: Path, line: str, reads_as: str) -> None:
    """`arxiv: 0706.4324` is the float 706.4324 to every standard YAML reader (and to the
    JSON Schema an editor checks), so the file must quote it; quoted, it is accepted."""
    path = write_variant(catalog, {"    isbn: 978-0-306-40615-7\n  - role: textbook": line})
    found = [m for _, _, code, m in errors(load(path)) if code == "entry.type"]
    assert len(found) == 1 and f"reads as {reads_as} in standard YAML tools" in found[0]
    key, _, value = line.rpartition("\n")[2].strip().partition(": ")
    quoted = write_variant(catalog, {"    isbn: 978-0-306-40615-7\n  - role: textbook":
                                     line.replace(f"{key}: {value}", f"{key}: '{value}'")})
    assert errors(load(quoted)) == []


def test_unknown_tag_and_family(catalog: Path) -> None:
    path = write_variant(catalog, {"tags: [riemannian, test-case]": "tags: [riemannian, "
                                   "sparkly]"})
    assert errors(load(path)) == [(10, 20, "entry.tag", "unknown tag 'sparkly'")]


@pytest.mark.parametrize(("form", "reason"), [
    ("rho**2*(dtheta**2 + dphi)", "linear in dphi"),
    ("rho**2*(dtheta**2 + dphi**2) + rho", "a term without differentials"),
    ("rho**2*dtheta**2 + dtheta*dphi**2", "degree three or more"),
    ("rho**2*dtheta**2 + sin(dphi)**2", "inside a function"),
    ("rho**2*dtheta**2 + dphi**2/dtheta", "inside a function, a root or a denominator"),
])
def test_line_element_must_be_quadratic(catalog: Path, form: str, reason: str) -> None:
    path = write_variant(catalog, {"line_element: rho**2*(dtheta**2 + sin(theta)**2*dphi**2)":
                                   f"line_element: {form}"})
    (line, _column, code, message), = errors(load(path))
    assert (line, code) == (18, "metric.line-element")
    assert reason in message


def test_line_element_cross_terms_are_halved(catalog: Path) -> None:
    # ds² = g_ab dx^a dx^b counts each off-diagonal term twice (common practice).
    path = write_variant(catalog, {"line_element: rho**2*(dtheta**2 + sin(theta)**2*dphi**2)":
                                   "line_element: rho**2*dtheta**2 + 6*dtheta*dphi + dphi**2"})
    metric = load(path).spacetime.metric
    assert metric[0, 1] == metric[1, 0] == 3
    assert metric[1, 1] == 1


def test_both_metric_forms_is_an_error(catalog: Path) -> None:
    path = write_variant(catalog, {"metric:\n": "metric:\n  components: {theta theta: 1}\n"})
    assert [c for _, _, c, _ in errors(load(path))] == ["entry.metric"]


def test_unreadable_and_binary_files(tmp_path: Path) -> None:
    missing = load_entry(tmp_path / "nothing.yaml")
    assert [d.code for d in missing.diagnostics] == ["file.unreadable"]
    binary = tmp_path / "binary.yaml"
    binary.write_bytes(b"id: x\n\xff\xfe")
    assert [d.code for d in load_entry(binary).diagnostics] == ["file.encoding"]


SHIPPED = Path(__file__).resolve().parent.parent / "catalog"


def test_the_quick_outline_of_every_shipped_entry_equals_the_loaders() -> None:
    """A one-entry check reads the other entries' ids and links from libyaml's node tree only;
    positions included, that must be exactly what the validating loader reads."""
    words = vocabulary(SHIPPED)
    files = sorted(p for p in SHIPPED.rglob("*.yaml") if p.parent != SHIPPED)
    assert len(files) > 50
    for path in files:
        quick = peek_outline(path, path.name)
        assert quick == outline_of(load_entry(path, path.name, words, with_math=False))
    assert any(peek_outline(p, p.name).links for p in files)  # links were compared too


@pytest.mark.parametrize("text", [
    "- a list\n",                                     # not a mapping
    "id: 12\n",                                       # id not text
    "id: [a, b]\n",
    "id: x\nrelated: x\n",                            # related not a list
    "id: x\nrelated:\n  - y\n",                       # a link that is not a mapping
    "id: x\nrelated:\n  - map: {}\n",                 # a link without its entry
    "id: x\n  bad: indentation\n",                    # not YAML
    "id: &a x\nrelated:\n  - entry: *a\n",           # an anchor and an alias
    "id: !custom x\n",                                # a tag of no standard
    "id: x\n" + "n: " + "[" * 30 + "]" * 30 + "\n",    # nested beyond the limit
    "id: x\n---\nid: y\n",                           # two documents
    "? [a, b]\n: 1\nid: x\n",                         # a key that is not a scalar
    "id: x\nrelated:\n  - entry: 3\n",               # a link's entry not text
])
def test_anything_unusual_is_left_to_the_full_loader(tmp_path: Path, text: str) -> None:
    path = tmp_path / "x.yaml"
    path.write_text(text)
    assert peek_outline(path, "x.yaml") is None
    [outline] = outline_all([path], None, tmp_path)  # the loader's reading, with its errors
    assert outline == outline_of(load_entry(path, "x.yaml", with_math=False))


@pytest.mark.parametrize("text", [
    "id: '12'\n",                                     # quoted: text, as the loader reads it
    "id: first\nid: second\n",                        # the last of repeated keys
    "id: x\nrelated:\n  - {entry: y, kind: limit, limit: {a: 0}}\n  - entry: z\n",
    "id: x\nnotes: |\n  related: not a key\nrelated: []\n",
])
def test_quick_outline_reads_what_composing_reads(tmp_path: Path, text: str) -> None:
    """The quick outline walks libyaml's events instead of its node tree: ids, links, limit
    kinds and positions as the node tree gives them (``read_nodes`` then reading the nodes)."""
    from generator.entry.yamlcheck import read_nodes

    path = tmp_path / "x.yaml"
    path.write_text(text)
    quick = peek_outline(path, "x.yaml")
    node, problems = read_nodes("x.yaml", text)
    assert quick is not None and not problems
    top = {k.value: v for k, v in node.value}
    assert quick.id == top["id"].value
    assert quick.id_pos == SourcePos("x.yaml", top["id"].start_mark.line + 1,
                                  top["id"].start_mark.column + 1)
    items = top["related"].value if "related" in top else []
    assert [e for e, _ in quick.links] == [dict((k.value, v) for k, v in i.value)["entry"].value
                                           for i in items]
    assert [p.line for _, p in quick.links] == [i.start_mark.line + 1 for i in items]
    assert quick.limit_targets == frozenset(
        dict((k.value, v) for k, v in i.value)["entry"].value for i in items
        if dict((k.value, v.value) for k, v in i.value).get("kind") == "limit")
