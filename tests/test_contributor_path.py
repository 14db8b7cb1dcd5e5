"""Issue 18: the contributors' path, one test (or a few) per item, in the words of the issue.

Demo data are a scenario of our own (the Harbour Point lighthouse society and its dome, as in
DEVELOPERS.md). Published values, with their sources:
- Round 2-sphere of radius ρ: R = 2/ρ², K = R_abcd R^abcd = 4/ρ⁴, ∂_φ a Killing vector
  (common practice; e.g. S. M. Carroll, "Spacetime and Geometry", 2004, §3.6).
- Schwarzschild (K. Schwarzschild 1916): K = 48 M²/r⁶, vacuum, Petrov type D (common practice;
  e.g. C. W. Misner, K. S. Thorne, J. A. Wheeler, "Gravitation", 1973, §31.2).
- Einstein–de Sitter dust, a = t^(2/3): ρ = 1/(6π t²), p = 0, from H² = 8πρ/3 with
  H = 2/(3t) (A. Einstein, W. de Sitter, PNAS 18, 213, 1932; Friedmann equation, common
  practice).
"""

from __future__ import annotations

import contextlib
import io
import json
import re
import shlex
import shutil
import threading
import urllib.error
import urllib.request
from pathlib import Path

import pytest
import yaml

from generator import __version__, cli
from generator.argv import join_dash_values
from generator.entry.content_hash import content_hash
from generator.entry.loader import Vocabulary, load_text
from generator.entry.scaffold import SCAFFOLD_NOTE_MARKER

ROOT = Path(__file__).resolve().parent.parent
GUIDE = (ROOT / "DEVELOPERS.md").read_text(encoding="utf-8")

DOME = """\
id: lighthouse-dome
title: Lighthouse dome
chart: polar angle and longitude
summary: The glass dome of the Harbour Point lighthouse, a round 2-sphere.
coordinates: [theta, phi]
signature: "++"
parameters:
  rho: {assume: positive, meaning: radius of the dome}
domain:
  - 0 < theta < pi
metric:
  line_element: rho**2*(dtheta**2 + sin(theta)**2*dphi**2)
matter:
  kind: unspecified
CLAIMS
references:
  - role: original
    authors: [H. Keeper]
    title: The dome of Harbour Point
    venue: Harbour Point Society Notes 1, 1
    year: 2026
    arxiv: '2612.00001'
curation:
  added: "2026-12-02"
  by: Demo Curator
"""


def dome(claims: str = "claims:\n  ricci_scalar: 2/rho**2\n") -> str:
    return DOME.replace("CLAIMS\n", claims)


@pytest.fixture
def workdir(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> Path:
    """An empty catalog with the real vocabularies; the current folder is its parent."""
    catalog = tmp_path / "catalog"
    catalog.mkdir()
    for name in ("families.yaml", "tags.yaml"):
        shutil.copy(ROOT / "catalog" / name, catalog / name)
    monkeypatch.chdir(tmp_path)
    return tmp_path


def write(workdir: Path, text: str, family: str = "euclidean-and-initial-data",
          stem: str = "lighthouse-dome"
          ) -> str:
    path = workdir / "catalog" / family / f"{stem}.yaml"
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text(text, encoding="utf-8")
    return f"catalog/{family}/{stem}.yaml"


def check(args: list[str], capsys) -> tuple[int, str, str]:
    capsys.readouterr()
    code = cli.main(["check", *args, "--no-cache", "--jobs", "1", "--no-progress"])
    out, err = capsys.readouterr()
    return code, out, err


def check_json(file: str, capsys) -> dict:
    code, out, _ = check([file, "--json"], capsys)
    (entry,) = json.loads(out)["entries"]
    entry["exit"] = code
    return entry


# ---------------------------------------------------------------------------- walkthrough


def guide_blocks(language: str) -> list[str]:
    return re.findall(rf"```{language}\n(.*?)```", GUIDE, flags=re.DOTALL)


def guide_commands() -> list[list[str]]:
    """The `python -m generator ...` commands of DEVELOPERS.md §1, in order, as arguments."""
    section = GUIDE.split("## 1.", 1)[1].split("\n## 2.", 1)[0]
    blocks = re.findall(r"```sh\n(.*?)```", section, flags=re.DOTALL)
    commands = []
    for block in blocks:
        words = shlex.split(block.replace("\\\n", " "))
        assert words[:3] == ["python", "-m", "generator"]
        commands.append(words[3:])
    return commands


@pytest.mark.slow
def test_the_walkthrough_of_developers_md_runs_end_to_end(workdir: Path, capsys) -> None:
    """Scaffold → show computed → claims → check passes, with the guide's own commands."""
    scaffold, show, final = guide_commands()
    assert scaffold[0] == "new" and "--show-computed" in show and final[0] == "check"
    assert cli.main(scaffold) == 0
    path = workdir / "catalog" / "euclidean-and-initial-data" / "lighthouse-dome.yaml"
    assert path.is_file()

    # Step 2: computed values are shown even though TODO markers are left.
    code, out, err = check(show[1:], capsys)
    assert code == 1  # the TODO markers
    shown = yaml.safe_load(out.split("\n", 1)[1])
    assert shown["computed"]["ricci_scalar"] == "2/rho**2"
    assert "entry.todo" in err

    # Steps 3 and 4: the contributor fills in the placeholders and writes the guide's claims.
    claims = next(b for b in guide_blocks("yaml") if b.startswith("claims:"))
    text = fill_in(path.read_text(encoding="utf-8"), claims)
    path.write_text(text, encoding="utf-8")

    # Step 5: the check passes.
    code, out, err = check(final[1:], capsys)
    assert code == 0, err
    assert "1 verified" in err


def fill_in(text: str, claims: str) -> str:
    """What a contributor does after step 2: delete the scaffold's note, replace each TODO
    placeholder, add the claims and a textbook reference (the guide's claim cites one)."""
    lines = text.splitlines()
    start = lines.index(f"# {SCAFFOLD_NOTE_MARKER}")
    del lines[start:start + 4]
    replace = {
        "summary:": 'summary: "The glass dome of the Harbour Point lighthouse."',
        "  kind:": "  kind: unspecified",
        "    authors:": "    authors: [H. Keeper]",
        "    title:": "    title: The dome of Harbour Point",
        "    venue:": "    venue: Harbour Point Society Notes 1, 1",
        "    year:": "    year: 2026",
        "    # TODO: doi": "    arxiv: '2612.00001'",
    }
    out = []
    for line in lines:
        if line.startswith("# claims:") or line.startswith("#   "):
            continue
        if "TODO" in line and line.startswith("# TODO: claims"):
            out.append(claims.rstrip())
            continue
        for prefix, new in replace.items():
            if line.startswith(prefix) and "TODO" in line:
                line = new
        out.append(line)
    text = "\n".join(out) + "\n"
    textbook = ("  - role: textbook\n    authors: [L. Lamp]\n    title: Domes and spheres\n"
                "    venue: Harbour Point Press\n    year: 2026\n    isbn: 978-0-306-40615-7\n")
    return text.replace("curation:\n", textbook + "curation:\n")


# ---------------------------------------------------------------------------- item 1


def test_1_computed_values_come_beside_the_todo_errors(workdir: Path, capsys) -> None:
    """`check FILE --show-computed` after `new` printed `computed: null`."""
    assert cli.main(["new", "--family", "euclidean-and-initial-data", "--id", "lighthouse-dome",
                     "--coordinates", "theta,phi", "--signature", "++",
                     "--parameters", "rho:positive:radius",
                     "--metric", "rho**2*(dtheta**2 + sin(theta)**2*dphi**2)"]) == 0
    code, out, err = check(["catalog/euclidean-and-initial-data/lighthouse-dome.yaml",
                            "--show-computed"], capsys)
    shown = yaml.safe_load(out.split("\n", 1)[1])
    assert shown["computed"] is not None
    assert shown["computed"]["ricci_scalar"] == "2/rho**2"
    assert code == 1 and "[entry.todo]" in err


def test_1_other_errors_still_stop_computing(workdir: Path, capsys) -> None:
    """Only TODO markers are left beside the computation; a broken metric computes nothing."""
    file = write(workdir, dome().replace("dphi**2)", "dphi**2) + dpsi**2"))
    entry = check_json(file, capsys)
    assert entry["computed"] is None and entry["exit"] == 1


# ---------------------------------------------------------------------------- item 3


@pytest.mark.parametrize("argv", [
    ["--signature", "-+++"],
    ["--metric", "-dt**2+dx**2"],
    ["--domain", "-1 < x"],
])
def test_3_values_beginning_with_a_dash_are_values(argv: list[str]) -> None:
    from generator.entry.scaffold import _parser

    parser = _parser()
    args = parser.parse_args(join_dash_values(argv, parser))
    assert argv[1] in (args.signature, args.metric, args.domain[0] if args.domain else None)


def test_3_the_help_example_of_new_works(workdir: Path, capsys) -> None:
    code = cli.main(["new", "--family", "isolated-objects", "--id", "lamp-post",
                     "--coordinates", "t,x", "--signature", "-+", "--metric", "-dt**2+dx**2",
                     "--stdout"])
    out = capsys.readouterr().out
    assert code == 0
    assert 'signature: "-+"' in out and "line_element: -dt**2+dx**2" in out


def test_3_an_option_after_an_option_is_still_an_option() -> None:
    """'--json' is an option of the parser: it is never swallowed as the value of --format."""
    argv = ["check", "--format", "--json"]
    assert join_dash_values(argv, cli.build_parser()) == argv
    assert join_dash_values(["check", "--format", "-x"], cli.build_parser()) == [
        "check", "--format=-x"]


# ---------------------------------------------------------------------------- item 4


def test_4_the_witness_point_is_printed_in_text_and_json(workdir: Path, capsys) -> None:
    """A wrong Ricci scalar (3/ρ² instead of 2/ρ²) differs at an exact point, shown both ways."""
    file = write(workdir, dome("claims:\n  ricci_scalar: 3/rho**2\n"))
    entry = check_json(file, capsys)
    (verdict,) = [v for v in entry["verified"] if v["subject"] == "claims.ricci_scalar"]
    assert verdict["ok"] is False
    assert set(verdict["witness"]) >= {"rho"}
    rho = verdict["witness"]["rho"]
    _, _, err = check([file], capsys)
    assert "differs at" in err and f"rho = {rho}" in err


def test_4_a_right_claim_has_no_witness(workdir: Path, capsys) -> None:
    entry = check_json(write(workdir, dome()), capsys)
    (verdict,) = [v for v in entry["verified"] if v["subject"] == "claims.ricci_scalar"]
    assert verdict["ok"] is True and verdict["witness"] is None


# ---------------------------------------------------------------------------- item 5


LAMP = """\
id: lamp-room
title: Lamp room
chart: inertial
summary: The flat lamp room of the lighthouse (demo).
coordinates: [t, x, y, z]
signature: "SIGN"
metric:
  line_element: -dt**2 + dx**2 + dy**2 + dz**2
matter:
  kind: vacuum
claims:
  ricci_scalar: 0
references:
  - role: original
    authors: [H. Keeper]
    title: The lamp room
    venue: Harbour Point Society Notes 1, 2
    year: 2026
    arxiv: '2612.00002'
curation:
  added: "2026-12-02"
  by: Demo Curator
"""


@pytest.mark.parametrize("declared", ["+---", "+-++"])
def test_5_the_signature_is_compared_per_coordinate(workdir: Path, capsys, declared: str
                                                    ) -> None:
    """Minkowski space is −+++ (common practice): "+---" gave a self-contradicting message
    and "+-++" passed silently."""
    file = write(workdir, LAMP.replace("SIGN", declared), "backgrounds", "lamp-room")
    code, _, err = check([file], capsys)
    assert code == 1 and "[metric.signature]" in err
    message = next(line for line in err.splitlines() if "[metric.signature]" in line)
    assert f"'{declared}'" in message and "'-+++'" in message  # both orders
    assert "coordinate order (t, x, y, z)" in message


def test_5_the_right_signature_passes(workdir: Path, capsys) -> None:
    file = write(workdir, LAMP.replace("SIGN", "-+++"), "backgrounds", "lamp-room")
    code, _, err = check([file], capsys)
    assert code == 0, err


# ---------------------------------------------------------------------------- item 6


def test_6_an_entry_with_no_claims_is_not_verified(workdir: Path, capsys) -> None:
    file = write(workdir, dome(""))
    entry = check_json(file, capsys)
    assert entry["state"] == "nothing-claimed"
    assert any(d["code"] == "entry.nothing-claimed" for d in entry["diagnostics"])
    _, _, err = check([file], capsys)
    assert "0 verified, 1 with nothing claimed" in err


def test_6_a_claim_makes_it_verified(workdir: Path, capsys) -> None:
    entry = check_json(write(workdir, dome()), capsys)
    assert entry["state"] == "verified" and entry["ok"] is True


def test_6_the_scaffold_note_is_a_todo_and_not_in_the_hash(workdir: Path, capsys) -> None:
    cli.main(["new", "--family", "euclidean-and-initial-data", "--id", "lighthouse-dome",
              "--coordinates", "theta,phi",
              "--metric", "rho**2*(dtheta**2 + sin(theta)**2*dphi**2)",
              "--parameters", "rho:positive:radius", "--stdout"])
    text = capsys.readouterr().out
    assert f"# {SCAFFOLD_NOTE_MARKER}" in text
    path = Path("catalog/euclidean-and-initial-data/lighthouse-dome.yaml")
    loaded = load_text(text, str(path), path, Vocabulary())
    assert any(d.code == "entry.todo" and d.line == 2 for d in loaded.diagnostics)
    without = "\n".join(line for line in text.splitlines()[5:]) + "\n"
    stripped = load_text(without, str(path), path, Vocabulary())
    assert loaded.entry is not None and stripped.entry is not None
    assert content_hash(loaded.entry) == content_hash(stripped.entry)


# ---------------------------------------------------------------------------- item 7


DUST = """\
id: harbour-dust
title: Harbour dust
chart: comoving
summary: A dust universe (the Einstein–de Sitter model, for the demo catalog).
coordinates: [t, x, y, z]
signature: "-+++"
domain:
  - t > 0
metric:
  line_element: -dt**2 + t**(4/3)*(dx**2 + dy**2 + dz**2)
matter:
  kind: perfect-fluid
  density: DENSITY
  pressure: 0
  velocity: {t: 1}
claims:
  ricci_scalar: 4/(3*t**2)
references:
  - role: original
    authors: [A. Einstein, W. de Sitter]
    title: On the relation between the expansion and the mean density of the universe
    venue: Proceedings of the National Academy of Sciences 18, 213-214
    year: 1932
    doi: 10.1073/pnas.18.3.213
curation:
  added: "2026-12-02"
  by: Demo Curator
"""


def test_7_a_wrong_density_is_reported_at_its_line_with_the_expected_value(workdir: Path,
                                                                          capsys) -> None:
    text = DUST.replace("DENSITY", "1/(8*pi*t**2)")
    file = write(workdir, text, "universes", "harbour-dust")
    code, _, err = check([file], capsys)
    density_line = text.splitlines().index("  density: 1/(8*pi*t**2)") + 1
    assert code == 1
    assert f"{file}:{density_line}:" in err
    message = next(line for line in err.splitlines() if f":{density_line}:" in line)
    assert "1/(6*pi*t**2)" in message


def test_7_the_right_density_passes_and_show_computed_uses_entry_keys(workdir: Path,
                                                                       capsys) -> None:
    file = write(workdir, DUST.replace("DENSITY", "1/(6*pi*t**2)"), "universes",
                 "harbour-dust")
    code, out, err = check([file, "--show-computed"], capsys)
    assert code == 0, err
    shown = yaml.safe_load(out.split("\n", 1)[1])
    matter = shown["matter"]
    assert matter["kind"] == "perfect-fluid"
    assert matter["density"] == "1/(6*pi*t**2)"
    assert matter["pressure"] == "0"
    assert set(matter["principal_pressures"]) == {"x", "y", "z"}


# ---------------------------------------------------------------------------- item 8


def coordinates_entry(coords: str, metric: str) -> str:
    return dome().replace("coordinates: [theta, phi]", f"coordinates: [{coords}]").replace(
        "rho**2*(dtheta**2 + sin(theta)**2*dphi**2)", metric).replace(
        "  - 0 < theta < pi\n", "").replace("domain:\n", "")


def test_8_lambda_is_reported_once_at_its_declaration(workdir: Path, capsys) -> None:
    text = coordinates_entry("lambda, phi", "rho**2*(dlambda**2 + sin(lambda)**2*dphi**2)")
    file = write(workdir, text)
    _, _, err = check([file], capsys)
    errors = [line for line in err.splitlines() if ": error:" in line]
    assert len(errors) == 1
    assert errors[0].startswith(f"{file}:5:")  # the coordinates line
    assert "lambda_" in err  # a name to use instead


def test_8_a_greek_letter_gets_its_spelled_out_name_and_no_follow_on(workdir: Path,
                                                                      capsys) -> None:
    text = coordinates_entry("θ, phi", "rho**2*(dθ**2 + sin(θ)**2*dphi**2)")
    _, _, err = check([write(workdir, text)], capsys)
    assert "theta for θ" in err
    assert "[entry.signature]" not in err  # no false follow-on error


@pytest.mark.parametrize(("metric", "hint"), [
    ("rho**2*(dtheta**2 + Sin[theta]**2*dphi**2)", "write sin(theta)"),
    ("rho**2*(dtheta**2 + sin(theta)**2 dphi**2)", "insert '*'"),
    ("rho**2*(dtheta**2 + sin²θ*dphi**2)", "sin(theta)**2"),
    ("rho**2*(dtheta**2 + \\\\sin^2\\\\theta*dphi**2)", "TeX"),
])
def test_8_notation_from_elsewhere_gets_a_fix(workdir: Path, capsys, metric: str,
                                              hint: str) -> None:
    text = coordinates_entry("theta, phi", f'"{metric}"')
    _, _, err = check([write(workdir, text)], capsys)
    assert "[math.syntax]" in err and hint in err, err


# ---------------------------------------------------------------------------- item 9


def test_9_a_failing_entry_is_a_page_with_its_diagnostics(tmp_path: Path) -> None:
    from generator.run.serve import make_server

    site = tmp_path / "site"
    site.mkdir()
    (site / "index.html").write_text("home")
    failing = {"lamp-room": ["catalog/x/lamp-room.yaml:6:12: error: <bad> signature"]}
    server = make_server(site, "127.0.0.1", 0, failing.get)
    thread = threading.Thread(target=server.serve_forever, daemon=True)
    thread.start()
    base = f"http://127.0.0.1:{server.server_port}"
    try:
        with pytest.raises(urllib.error.HTTPError) as shown:
            urllib.request.urlopen(f"{base}/entries/lamp-room/")
        body = shown.value.read().decode()
        assert shown.value.code == 404
        assert "lamp-room is not published" in body
        assert "&lt;bad&gt; signature" in body and "<bad>" not in body  # escaped
        with pytest.raises(urllib.error.HTTPError) as plain:
            urllib.request.urlopen(f"{base}/entries/unknown/")
        assert "not published" not in plain.value.read().decode()
        assert urllib.request.urlopen(f"{base}/index.html").read() == b"home"
    finally:
        server.shutdown()
        server.server_close()


def test_9_serve_has_host_and_every_option_has_help() -> None:
    parser = cli.build_parser()
    args = parser.parse_args(["serve", "--host", "0.0.0.0", "--port", "9000"])
    assert (args.host, args.port) == ("0.0.0.0", 9000)
    subcommands = next(a for a in parser._actions if a.dest == "command")
    serve = subcommands.choices["serve"]
    assert all(action.help for action in serve._actions)


def test_9_serve_says_what_it_does_before_the_first_build(tmp_path: Path, monkeypatch,
                                                          capsys) -> None:
    from generator.run import build

    def stop_at_the_build(*args, **kwargs):
        raise KeyboardInterrupt

    monkeypatch.setattr(build, "build_site", stop_at_the_build)
    with pytest.raises(KeyboardInterrupt):
        build.serve_site(tmp_path / "catalog", tmp_path / "site", 8123, "127.0.0.1")
    assert "http://127.0.0.1:8123/" in capsys.readouterr().err


# ---------------------------------------------------------------------------- item 10


def test_10_version(capsys) -> None:
    assert cli.main(["--version"]) == 0
    assert capsys.readouterr().out.strip() == f"almanac {__version__}"


def test_10_list_with_filters(workdir: Path, capsys) -> None:
    write(workdir, dome())
    write(workdir, dome("").replace("lighthouse-dome", "bare-dome"), stem="bare-dome")
    assert cli.main(["list", "--no-cache", "--jobs", "1"]) == 0
    rows = [line.split() for line in capsys.readouterr().out.splitlines()]
    assert [r[:3] for r in rows] == [["bare-dome", "euclidean-and-initial-data", "nothing-claimed"],
                                     ["lighthouse-dome", "euclidean-and-initial-data", "verified"]]
    assert cli.main(["list", "--no-cache", "--status", "verified"]) == 0
    assert capsys.readouterr().out.split()[0] == "lighthouse-dome"
    assert cli.main(["list", "--no-cache", "--family", "universes"]) == 0
    assert capsys.readouterr().out.strip() == "no entries match"


def test_10_check_reads_standard_input(workdir: Path, capsys, monkeypatch) -> None:
    class Stdin:
        buffer = io.BytesIO(dome("claims:\n  ricci_scalar: 3/rho**2\n").encode())

    monkeypatch.setattr("sys.stdin", Stdin)
    capsys.readouterr()
    assert cli.main(["check", "-"]) == 1
    err = capsys.readouterr().err
    assert "<stdin>:" in err and "[claim.ricci_scalar]" in err


SCHWARZSCHILD = ["--coordinates", "t, r, theta, phi", "--parameters", "M:positive",
                 "--metric", "-(1 - 2*M/r)*dt**2 + dr**2/(1 - 2*M/r) + r**2*(dtheta**2 + "
                 "sin(theta)**2*dphi**2)", "--domain", "r > 2*M", "--domain", "0 < theta < pi"]


@pytest.mark.slow
@pytest.mark.parametrize("fmt", ["text", "yaml", "json"])
def test_10_compute_a_bare_metric(capsys, fmt: str) -> None:
    assert cli.main(["compute", *SCHWARZSCHILD, "--format", fmt]) == 0
    out = capsys.readouterr().out
    if fmt == "json":
        summary = json.loads(out)["summary"]
    elif fmt == "yaml":
        summary = yaml.safe_load(out)
    else:
        summary = dict(line.split(": ", 1) for line in out.splitlines() if ": " in line
                       and not line.startswith(" "))
    assert summary["kretschmann"] == "48*M**2/r**6"
    assert summary["petrov_type"] == "D"
    assert "no published value" in out


def test_10_compute_from_a_file_and_its_errors(tmp_path: Path, capsys) -> None:
    metric = tmp_path / "plane.yaml"
    metric.write_text("coordinates: [t, x]\nline_element: -dt**2 + Sin[x]*dx**2\n")
    assert cli.main(["compute", str(metric)]) == 1
    err = capsys.readouterr().err
    assert "<line_element>:1:" in err and "write sin(x)" in err
    metric.write_text("coordinates: [t, x]\nline_element: -dt**2 + dx**2\n")
    assert cli.main(["compute", str(metric), "--format", "yaml"]) == 0
    assert yaml.safe_load(capsys.readouterr().out)["ricci_scalar"] == "0"


def test_10_compute_never_evaluates(tmp_path: Path, capsys) -> None:
    assert cli.main(["compute", "--coordinates", "t,x", "--metric",
                     "__import__('os').system('true')*dt**2"]) == 1
    assert "[math.syntax]" in capsys.readouterr().err


# ---------------------------------------------------------------------------- item 12


def test_12_the_old_energy_condition_key_is_read_with_a_hint(workdir: Path, capsys) -> None:
    """A flat room is vacuum: every energy condition holds trivially (T = 0; common
    practice). The old `null:` key still works for one release, with a warning."""
    text = LAMP.replace("SIGN", "-+++").replace(
        "  ricci_scalar: 0\n", "  ricci_scalar: 0\n  energy_conditions: {null: holds}\n")
    file = write(workdir, text, "backgrounds", "lamp-room")
    _, _, err = check([file], capsys)
    assert "[entry.renamed-key]" in err and "null_condition" in err
    line = next(x for x in err.splitlines() if "[entry.renamed-key]" in x)
    number = text.splitlines().index("  energy_conditions: {null: holds}") + 1
    assert line.startswith(f"{file}:{number}:")
    assert ": warning:" in line


def test_12_the_new_key_is_verified_like_the_old_one(workdir: Path, capsys) -> None:
    """Mutation: a wrong state under the new key is still compared (and fails)."""
    rn = (ROOT / "catalog/isolated-objects/reissner-nordstrom.yaml").read_text()
    assert "null_condition: holds" in rn
    broken = rn.replace("null_condition: holds", "null_condition: violated", 1)
    file = write(workdir, broken, "isolated-objects", "reissner-nordstrom")
    code, _, err = check([file], capsys)
    assert code == 1 and "[claim.energy-condition]" in err


# ---------------------------------------------------------------------------- smaller


def test_smaller_cite_help_names_an_entry_that_exists(capsys) -> None:
    with contextlib.suppress(SystemExit):
        cli.main(["cite", "--help"])
    example = re.search(r"e\.g\. ([a-z0-9-]+)", capsys.readouterr().out).group(1)
    assert list((ROOT / "catalog").glob(f"*/{example}.yaml"))


def test_smaller_journal_has_no_trailing_comma() -> None:
    from generator.site.cite import split_venue

    venue = split_venue("Annali di Matematica Pura ed Applicata, Serie II, 2, 232–255", 1868)
    assert venue.journal == "Annali di Matematica Pura ed Applicata, Serie II"
    assert (venue.volume, venue.pages) == ("2", "232-255")


def test_smaller_claim_source_points_at_the_source_line(workdir: Path, capsys) -> None:
    claims = ("claims:\n  ricci_scalar:\n    value: 2/rho**2\n    source: textbook\n")
    text = dome(claims)
    file = write(workdir, text)
    _, _, err = check([file], capsys)
    line = text.splitlines().index("    source: textbook") + 1
    assert f"{file}:{line}:" in err and "[entry.claim-source]" in err


def test_smaller_help_headers_all_say_almanac(capsys) -> None:
    for command in (["--help"], ["check", "--help"], ["new", "--help"], ["cite", "--help"],
                    ["compute", "--help"], ["list", "--help"], ["serve", "--help"]):
        with contextlib.suppress(SystemExit):
            cli.main(command)
        out = capsys.readouterr().out
        assert out.startswith("usage: almanac"), (command, out[:60])
        assert "python -m generator" not in out.split("\n", 1)[0]


def test_smaller_every_matter_kind_the_tool_can_compute_has_a_label() -> None:
    from generator.entry.schema import MATTER_KINDS
    from generator.site.common import MATTER_LABELS

    assert set(MATTER_KINDS) | {"non-vacuum", "undecided"} <= set(MATTER_LABELS)
