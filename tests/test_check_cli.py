"""`check` end to end: exit status, compiler-style text, and the JSON contract.

The contract is the one in the shared entry-format document: one JSON document with an entry
per file, `computed` holding expressions that SymPy's `parse_expr` reads back.
"""

from __future__ import annotations

import json
import shutil
import subprocess
import sys
from pathlib import Path

import pytest
import sympy
from sympy.parsing.sympy_parser import parse_expr

from generator.cli import main, wants_progress

DEMO = Path(__file__).parent / "roots" / "demo-catalog" / "catalog"
CONTRACT_KEYS = {"dimension", "signature", "ricci_scalar", "kretschmann", "ricci_squared",
                 "weyl_squared", "einstein_mixed", "matter_kind", "cosmological_constant",
                 "petrov_type"}


@pytest.fixture
def catalog(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> Path:
    shutil.copytree(DEMO, tmp_path / "catalog")
    monkeypatch.chdir(tmp_path)
    return tmp_path / "catalog"


def run(args: list[str], capsys: pytest.CaptureFixture[str]) -> tuple[int, str, str]:
    status = main([*args, "--no-cache", "--jobs", "1"]) if args[0] == "check" else main(args)
    out, err = capsys.readouterr()
    return status, out, err


def test_verified_entry_exits_zero(catalog: Path, capsys: pytest.CaptureFixture[str]) -> None:
    status, _, err = run(["check", "catalog/riemannian/lighthouse-dome.yaml"], capsys)
    assert status == 0, err
    assert "1 entries checked: 1 verified, 0 failed" in err


def test_progress_bar_names_the_entry_being_checked(catalog: Path,
                                                   capsys: pytest.CaptureFixture[str]) -> None:
    status, _, err = run(["check", "catalog/riemannian/lighthouse-dome.yaml", "--progress"],
                         capsys)
    assert status == 0, err
    assert "checking lighthouse-dome" in err
    assert "1/1" in err


def test_no_progress_bar_by_default_in_a_pipe_or_when_refused(
        catalog: Path, capsys: pytest.CaptureFixture[str]) -> None:
    for refusal in ([], ["--no-progress"]):
        status, _, err = run(["check", "catalog/riemannian/lighthouse-dome.yaml", *refusal],
                             capsys)
        assert status == 0, err
        assert "checking lighthouse-dome" not in err and "1/1" not in err


class _Stream:
    def __init__(self, terminal: bool) -> None:
        self.terminal = terminal

    def isatty(self) -> bool:
        return self.terminal


def test_progress_bar_defaults_to_on_for_a_terminal_only() -> None:
    assert wants_progress(None, _Stream(True))
    assert not wants_progress(None, _Stream(False))
    assert not wants_progress(None, object())  # a stream that cannot tell
    assert wants_progress(True, _Stream(False))
    assert not wants_progress(False, _Stream(True))


@pytest.mark.slow
def test_build_progress_bar_follows_the_checks(catalog: Path,
                                               capsys: pytest.CaptureFixture[str]) -> None:
    status, _, err = run(["build", "--catalog", "catalog", "--out", "site", "--progress",
                          "--no-cache", "--jobs", "1"], capsys)
    assert status == 0, err
    assert "checking lighthouse-dome" in err


def test_json_contract(catalog: Path, capsys: pytest.CaptureFixture[str]) -> None:
    status, out, _ = run(["check", "catalog/", "--json"], capsys)
    document = json.loads(out)
    (entry,) = document["entries"]
    assert status == 0
    assert entry["id"] == "lighthouse-dome" and entry["ok"] is True
    assert entry["file"] == "catalog/riemannian/lighthouse-dome.yaml"
    # The round sphere's isometry algebra so(3) has dimension 3 (common practice); the demo
    # lists only ∂_φ, which is a warning, not an error.
    assert [(d["severity"], d["code"]) for d in entry["diagnostics"]] == [
        ("warning", "symmetry.incomplete")]
    assert "(2 missing)" in entry["diagnostics"][0]["message"]
    computed = entry["computed"]
    assert computed["isometry"]["dimension"] == 3
    assert computed["isometry"]["orbit_dimension"] == 2
    # The tool's search finds the two rotations the demo leaves out; with them the basis is
    # complete and its brackets are those of so(3) (common practice).
    assert computed["isometry"]["complete"] is True
    assert computed["isometry"]["basis_found_by_tool"] == [False, True, True]
    assert computed["isometry"]["algebra"] == "so(3)"
    # What is known of the algebra, in words: so(3) is semisimple with a negative definite
    # Killing form (Cartan's criterion, common practice).
    assert computed["isometry"]["algebra_structure"] == (
        "semisimple, 3-dimensional, Killing form of signature (0, 3)")
    assert computed["weyl_frame"] is None and computed["weyl_invariants"] is None
    assert computed.keys() >= CONTRACT_KEYS
    assert computed["dimension"] == 2 and computed["signature"] == "++"
    assert computed["weyl_squared"] is None  # below four dimensions: null, never zero
    assert computed["petrov_type"] is None
    rho = sympy.Symbol("rho")
    # Round sphere of radius rho: R = 2/rho**2 (common practice).
    assert sympy.simplify(parse_expr(computed["ricci_scalar"]) - 2 / rho**2) == 0
    assert sympy.simplify(parse_expr(computed["kretschmann"]) - 4 / rho**4) == 0
    methods = {v["subject"]: v["method"] for v in entry["verified"]}
    assert methods["claims.ricci_scalar"] in ("exact", "sampled")


def test_wrong_claim_fails_with_position(catalog: Path, capsys: pytest.CaptureFixture[str]
                                         ) -> None:
    path = catalog / "riemannian" / "lighthouse-dome.yaml"
    path.write_text(path.read_text().replace("kretschmann: 4/rho**4", "kretschmann: 5/rho**4"))
    status, _, err = run(["check", str(path.relative_to(catalog.parent))], capsys)
    assert status == 1
    first = err.splitlines()[0]
    assert first.startswith("catalog/riemannian/lighthouse-dome.yaml:26:16: error: claimed "
                            "kretschmann does not match the computed value")
    assert first.endswith("[claim.kretschmann]")
    assert err.splitlines()[1].startswith("    hint: computed: 4/rho**4")


def test_github_format(catalog: Path, capsys: pytest.CaptureFixture[str]) -> None:
    path = catalog / "riemannian" / "lighthouse-dome.yaml"
    path.write_text(path.read_text().replace("kretschmann: 4/rho**4", "kretschmann: 5/rho**4"))
    status, out, _ = run(["check", "catalog", "--format", "github"], capsys)
    assert status == 1
    assert out.startswith("::error file=catalog/riemannian/lighthouse-dome.yaml,line=26,col=16,"
                          "title=claim.kretschmann::claimed kretschmann does not match")


def test_show_computed_prints_yaml(catalog: Path, capsys: pytest.CaptureFixture[str]) -> None:
    import yaml

    status, out, _ = run(["check", "catalog", "--show-computed"], capsys)
    assert status == 0
    shown = yaml.safe_load(out)
    assert shown["id"] == "lighthouse-dome"
    assert shown["computed"]["dimension"] == 2


def test_bad_usage_and_unreadable_input(catalog: Path, capsys: pytest.CaptureFixture[str]
                                        ) -> None:
    assert run(["check", "no-such-folder"], capsys)[0] == 2
    assert run(["frobnicate"], capsys)[0] == 2
    (catalog / "riemannian" / "garbage.yaml").write_bytes(b"\xff\xfe not utf-8")
    status, _, err = run(["check", "catalog/riemannian/garbage.yaml"], capsys)
    assert status == 2
    assert "catalog/riemannian/garbage.yaml:1:1: error: file is not valid UTF-8" in err


def test_broken_yaml_never_shows_a_traceback(catalog: Path) -> None:
    (catalog / "riemannian" / "broken.yaml").write_text("id: [unclosed\n  title: {{\n")
    result = subprocess.run([sys.executable, "-m", "generator", "check", "catalog", "--no-cache",
                             "--jobs", "1"], capture_output=True, text=True, cwd=catalog.parent)
    assert result.returncode == 1
    assert "Traceback" not in result.stderr
    assert "catalog/riemannian/broken.yaml:" in result.stderr
    assert "error: invalid YAML" in result.stderr


def test_every_verified_item_says_whether_a_publication_backs_it(
        catalog: Path, capsys: pytest.CaptureFixture[str]) -> None:
    """Three verdicts, never two: the dome's Ricci scalar names its textbook ("agrees"), its
    Kretschmann scalar is written in the short form without a source and its Killing vector is
    a structural fact ("computed-only": the tool agreed with itself); a wrong value with a
    source is "disagrees" and fails the entry."""
    status, out, err = run(["check", "catalog/riemannian/lighthouse-dome.yaml", "--json"], capsys)
    assert status == 0, err
    (report,) = json.loads(out)["entries"]
    statuses = {v["subject"]: (v["status"], v["source"]) for v in report["verified"]}
    assert statuses["claims.ricci_scalar"] == ("agrees", "textbook")
    assert statuses["claims.kretschmann"] == ("computed-only", None)
    assert all(v["status"] in {"agrees", "computed-only", "disagrees"}
               for v in report["verified"])
    assert all(v["status"] == "computed-only"
               for v in report["computed"]["killing_vectors_checked"])

    entry = catalog / "riemannian" / "lighthouse-dome.yaml"
    entry.write_text(entry.read_text().replace("value: 2/rho**2", "value: 3/rho**2"))
    status, out, _ = run(["check", "catalog/riemannian/lighthouse-dome.yaml", "--json"], capsys)
    assert status == 1
    (report,) = json.loads(out)["entries"]
    wrong = next(v for v in report["verified"] if v["subject"] == "claims.ricci_scalar")
    assert (wrong["status"], wrong["ok"]) == ("disagrees", False)


def test_a_computed_here_claim_is_never_counted_as_agreement(
        catalog: Path, capsys: pytest.CaptureFixture[str]) -> None:
    entry = catalog / "riemannian" / "lighthouse-dome.yaml"
    entry.write_text(entry.read_text().replace("source: textbook", "source: computed-here"))
    status, out, err = run(["check", "catalog/riemannian/lighthouse-dome.yaml", "--json"], capsys)
    assert status == 0, err
    (report,) = json.loads(out)["entries"]
    assert {v["status"] for v in report["verified"]} == {"computed-only"}


def test_a_two_dimensional_metric_has_no_matter_kind(catalog: Path,
                                                    capsys: pytest.CaptureFixture[str]) -> None:
    """G_ab vanishes identically in two dimensions (common practice), so the dome is neither
    vacuum nor "non-vacuum": its matter kind is null, with the reason beside it."""
    status, out, err = run(["check", "catalog/riemannian/lighthouse-dome.yaml", "--json"], capsys)
    assert status == 0, err
    computed = json.loads(out)["entries"][0]["computed"]
    assert computed["matter_kind"] is None
    assert "empty below three dimensions" in computed["not_applicable"]["matter_kind"]
