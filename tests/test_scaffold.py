"""``python -m generator new`` (generator/entry/scaffold.py): scaffolds load, TODOs block ``check``.

The entries scaffolded here are a demo scenario of our own (the invented Harbourtown
"lantern" spacetimes), except the Schwarzschild line element, which is the published metric
(K. Schwarzschild 1916; common practice).
"""

from __future__ import annotations

import io
import json
import shutil
from pathlib import Path

import jsonschema
import pytest
from _git_sandbox import Sandbox, demo_entry

from generator.entry.jsonschema_export import SCHEMA_PATH, editor_view
from generator.entry.loader import TODO_CODE, Vocabulary, find_todos, load_entry, load_text
from generator.entry.scaffold import Draft, ParameterSpec, ReferenceSpec, new_main, render

ROOT = Path(__file__).resolve().parent.parent
SCHWARZSCHILD = "-(1 - 2*M/r)*dt**2 + dr**2/(1 - 2*M/r) + r**2*(dtheta**2 + sin(theta)**2*dphi**2)"
FLAGS = [
    "--id", "lantern-hole",
    "--family", "isolated-objects",
    "--title", "Lantern hole",
    "--coordinates", "t, r, theta, phi",
    "--parameters", "M:positive:mass",
    "--metric", SCHWARZSCHILD,
    "--domain", "r > 2*M",
    "--domain", "0 < theta < pi",
    "--by", "Demo Curator",
]  # fmt: skip


@pytest.fixture
def catalog(tmp_path: Path) -> Path:
    """An empty catalog with the real family and tag vocabularies."""
    folder = tmp_path / "catalog"
    folder.mkdir()
    for name in ("families.yaml", "tags.yaml"):
        shutil.copy(ROOT / "catalog" / name, folder / name)
    return folder


def run(argv: list[str], catalog: Path, answers: list[str] | None = None) -> tuple[int, str]:
    out = io.StringIO()
    replies = iter(answers or [])

    def ask(question: str) -> str:
        out.write(question)
        return next(replies)

    argv = [*argv, "--catalog", str(catalog), "--repo", str(catalog.parent)]
    code = new_main(argv, ask=ask if answers is not None else None, out=out)
    return code, out.getvalue()


def errors(path: Path) -> list[str]:
    """Errors of the loaded file other than TODO markers (which a scaffold has on purpose)."""
    result = load_entry(path, vocabulary=Vocabulary())
    assert result.entry is not None
    return [
        d.format_text() for d in result.diagnostics if d.severity == "error" and d.code != TODO_CODE
    ]


# ---------------------------------------------------------------------------- round trip


def test_scaffold_is_written_in_its_family_folder_and_loads(catalog: Path) -> None:
    code, output = run(FLAGS, catalog)
    path = catalog / "isolated-objects" / "lantern-hole.yaml"
    assert code == 0, output
    assert output.startswith(f"wrote {path} (")
    result = load_entry(path)
    assert result.entry is not None
    assert errors(path) == []
    assert {d.code for d in result.diagnostics if d.severity == "error"} == {TODO_CODE}
    entry = result.entry
    assert entry.coordinates == ("t", "r", "theta", "phi")
    assert entry.signature == "-+++"
    assert [(p.name, p.assume, p.meaning) for p in entry.parameters] == [("M", "positive", "mass")]
    assert entry.line_element is not None and entry.line_element.text == SCHWARZSCHILD
    assert [d.text for d in entry.domain] == ["r > 2*M", "0 < theta < pi"]
    assert entry.curation.by == "Demo Curator"


def test_scaffold_starts_with_the_editor_schema_line_and_validates(catalog: Path) -> None:
    run(FLAGS, catalog)
    text = (catalog / "isolated-objects" / "lantern-hole.yaml").read_text()
    assert text.splitlines()[0] == "# yaml-language-server: $schema=../../schema/entry.schema.json"
    schema = json.loads((ROOT / SCHEMA_PATH).read_text())
    jsonschema.validate(editor_view(text), schema)


def test_every_placeholder_is_a_todo_error_at_its_position(catalog: Path) -> None:
    run(FLAGS, catalog)
    path = catalog / "isolated-objects" / "lantern-hole.yaml"
    text = path.read_text()
    todos = find_todos(str(path), text)
    lines = text.splitlines()
    assert all(lines[d.line - 1][d.column - 1 :].startswith("TODO") for d in todos)
    assert all(d.severity == "error" and d.code == TODO_CODE for d in todos)
    messages = [d.message for d in todos]
    assert "still to fill in: which coordinate chart this is" in messages
    assert any("claims" in m for m in messages)
    assert any("title of the publication" in m for m in messages)
    assert len(todos) == 10  # the note, chart, summary, matter, claims, 5 in the reference


def test_filling_in_the_placeholders_clears_every_todo(catalog: Path) -> None:
    run(FLAGS, catalog)
    path = catalog / "isolated-objects" / "lantern-hole.yaml"
    filled = fill_in(path.read_text())
    assert find_todos(str(path), filled) == []
    result = load_text(filled, str(path), path, Vocabulary())
    assert [d for d in result.diagnostics if d.severity == "error"] == []
    assert result.entry is not None and result.entry.chart == "Harbour coordinates"


def fill_in(text: str) -> str:
    """What a contributor does: replace each placeholder line, uncomment the claims."""
    replacements = {
        'chart: "TODO: which coordinate chart this is"': "chart: Harbour coordinates",
        'summary: "TODO: one line saying what this spacetime is"': "summary: A demo hole.",
        "  kind: unspecified   # TODO: the matter that supports this geometry": "  kind: vacuum",
        "# TODO: claims (what the literature states about this metric; each value is verified)": "",
        "# claims:": "claims:",
        "#   ricci_scalar: 0": "  ricci_scalar: 0",
        "    authors: [TODO author as printed]": "    authors: [A. Lamplighter]",
        '    title: "TODO: title of the publication with this metric"': "    title: A lantern",
        '    venue: "TODO: journal volume, first page (or publisher)"': "    venue: Harbour 1, 1",
        "   # TODO: year of publication": "",
        "    # TODO: doi, arxiv or isbn of the publication": "    arxiv: '2612.00001'",
    }
    lines = []
    note = text.splitlines()[1:5]  # the scaffold's note to its author, deleted when done
    for line in text.splitlines():
        for old, new in replacements.items():
            line = line.replace(old, new)
        if not line.startswith("#   ") and line not in note:
            lines.append(line)
    return "\n".join(lines) + "\n"


def test_stdout_prints_and_writes_nothing(catalog: Path) -> None:
    code, output = run([*FLAGS, "--stdout"], catalog)
    assert code == 0
    assert output.startswith("# yaml-language-server:")
    assert not (catalog / "isolated-objects").exists()


def test_components_and_default_riemannian_signature(catalog: Path) -> None:
    argv = ["--id", "lantern-sheet", "--family", "euclidean-and-initial-data",
            "--coordinates", "x y", "--component", "x x=1", "--component", "y y=exp(2*x)",
            "--stdout"]  # fmt: skip
    code, output = run(argv, catalog)
    assert code == 0, output
    assert 'signature: "++"' in output
    assert "  components:\n    x x: 1\n    y y: exp(2*x)\n" in output


# ---------------------------------------------------------------------------- refusals


def test_refuses_an_id_already_used_in_another_family(catalog: Path) -> None:
    (catalog / "cosmology").mkdir()
    (catalog / "cosmology" / "lantern-hole.yaml").write_text(demo_entry("lantern-hole"))
    code, output = run(FLAGS, catalog)
    assert code == 2
    assert (
        f"error: id 'lantern-hole' is already used by {catalog}/cosmology/lantern-hole.yaml"
        in output
    )
    assert not (catalog / "isolated-objects").exists()


def test_refuses_an_id_that_was_used_by_a_removed_entry(tmp_path: Path) -> None:
    box = Sandbox(tmp_path / "repo")
    for name in ("families.yaml", "tags.yaml"):
        box.write(f"catalog/{name}", (ROOT / "catalog" / name).read_text())
    box.write("catalog/isolated-objects/lantern-hole.yaml", demo_entry("lantern-hole"))
    box.commit("Add")
    (box.root / "catalog/isolated-objects/lantern-hole.yaml").unlink()
    box.commit("Remove")
    code, output = run(FLAGS, box.root / "catalog")
    assert code == 2
    assert "ids are never reused" in output


@pytest.mark.parametrize(
    ("change", "message"),
    [
        (["--family", "planets"], "family 'planets' is not one of: isolated-objects"),
        (["--id", "Lantern_Hole"], "must be lower-case letters, digits and single hyphens"),
        (["--signature=-++"], "has 3 signs for 4 coordinates"),
        (["--matter", "dark"], "matter kind 'dark' is not one of"),
        (["--parameters", "pi:positive:x"], "'pi' cannot be used as a name"),
        (["--metric", "-(1 - 2*M/r)*dt**2 + dr**2 + Q*dphi**2"], "metric: unknown name"),
        (["--domain", "r >> 2*M"], "domain 'r >> 2*M'"),
        (["--component", "t t=-1"], "exactly one of --metric or --component"),
    ],
)
def test_bad_flags_are_refused_with_a_reason(
    catalog: Path, change: list[str], message: str
) -> None:
    code, output = run([*FLAGS, *change], catalog)
    assert code == 2
    assert message in output, output
    assert not (catalog / "isolated-objects").exists()


def test_missing_required_flags_are_listed(catalog: Path) -> None:
    code, output = run(["--title", "x"], catalog)
    assert code == 2
    for flag in ("--id", "--family", "--coordinates", "--metric or --component"):
        assert f"error: give {flag} " in output


def test_render_quotes_what_yaml_would_misread() -> None:
    draft = Draft(
        id="lantern-odd",
        family="waves",
        coordinates=("u", "v"),
        line_element="-du*dv",
        title="Lantern: the #1 wave",
        chart="1916",
        parameters=(ParameterSpec("k", "real", "a, b"),),
        reference=ReferenceSpec(authors=("Lamplighter, A.",), title="yes", year=2026),
    )
    text = render(draft)
    result = load_text(
        text, "catalog/waves/lantern-odd.yaml", Path("catalog/waves/lantern-odd.yaml"), Vocabulary()
    )
    assert result.entry is not None
    assert result.entry.title == "Lantern: the #1 wave"
    assert result.entry.chart == "1916"
    assert result.entry.parameters[0].meaning == "a, b"
    assert result.entry.references[0].authors == ("Lamplighter, A.",)
    assert result.entry.references[0].title == "yes"


# ---------------------------------------------------------------------------- interactive


def test_interactive_asks_for_what_is_missing_and_re_asks_bad_answers(catalog: Path) -> None:
    answers = [
        "Bad Id",  # refused
        "lantern-room",
        "planets",  # refused
        "euclidean-and-initial-data",
        "Lantern room",
        "Harbour coordinates",
        "A demo room.",
        "x, 1y",  # refused: not a name
        "x, y",
        "k:positive:lamp strength",
        "dx**2 + k*exp(2*x)*dz**2",  # refused: dz is not a coordinate differential
        "dx**2 + k*exp(2*x)*dy**2",
        "",  # matter: decide later
    ]
    code, output = run(["--interactive"], catalog, answers)
    assert code == 0, output
    assert output.count("try again") == 4
    path = catalog / "euclidean-and-initial-data" / "lantern-room.yaml"
    assert errors(path) == []
    entry = load_entry(path).entry
    assert entry is not None and entry.chart == "Harbour coordinates"
    assert entry.signature == "++"


def test_interactive_stops_cleanly_when_input_ends(catalog: Path) -> None:
    def ask(question: str) -> str:
        raise EOFError

    out = io.StringIO()
    code = new_main(["--interactive", "--catalog", str(catalog)], ask=ask, out=out)
    assert code == 2
    assert "stopped before all questions were answered" in out.getvalue()


# ---------------------------------------------------------------------------- through check


def check_json(path: Path, monkeypatch, capsys) -> tuple[int, dict]:
    from generator import cli

    monkeypatch.chdir(path.parents[2])
    code = cli.main(["check", str(path.relative_to(path.parents[2])), "--json", "--no-cache"])
    return code, json.loads(capsys.readouterr().out)


def test_check_refuses_the_scaffold_until_the_todos_are_filled(
    catalog: Path, monkeypatch, capsys
) -> None:
    run(FLAGS, catalog)
    path = catalog / "isolated-objects" / "lantern-hole.yaml"
    capsys.readouterr()
    code, report = check_json(path, monkeypatch, capsys)
    assert code == 1
    (entry,) = report["entries"]
    assert entry["ok"] is False
    codes = {d["code"] for d in entry["diagnostics"] if d["severity"] == "error"}
    assert codes == {TODO_CODE}


@pytest.mark.slow
def test_check_accepts_the_scaffold_once_filled_in(catalog: Path, monkeypatch, capsys) -> None:
    run(FLAGS, catalog)
    path = catalog / "isolated-objects" / "lantern-hole.yaml"
    path.write_text(fill_in(path.read_text()))
    capsys.readouterr()
    code, report = check_json(path, monkeypatch, capsys)
    (entry,) = report["entries"]
    errors_left = [d for d in entry["diagnostics"] if d["severity"] == "error"]
    assert (code, entry["ok"], errors_left) == (0, True, [])
