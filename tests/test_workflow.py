"""The pull-request workflow and the pre-commit hooks call commands that really exist.

A workflow that names a misspelt option fails only on GitHub, after a contributor has pushed;
these tests parse every ``python -m generator ...`` command in both files with the CLI's own
argument parser, so a renamed option breaks here first.
"""

from __future__ import annotations

import re
import shlex
from pathlib import Path

import pytest
import yaml

from generator import cli
from generator.entry import jsonschema_export

ROOT = Path(__file__).resolve().parent.parent
WORKFLOW = yaml.safe_load((ROOT / ".github" / "workflows" / "catalog.yml").read_text())
PRE_COMMIT = yaml.safe_load((ROOT / ".pre-commit-config.yaml").read_text())
HOOKS = {hook["id"]: hook for repo in PRE_COMMIT["repos"] for hook in repo["hooks"]}


def steps(job: str) -> list[dict]:
    return WORKFLOW["jobs"][job]["steps"]


def runs(job: str) -> list[str]:
    return [" ".join(step["run"].split()) for step in steps(job) if "run" in step]


def generator_commands(lines: list[str]) -> list[list[str]]:
    """Arguments after ``python -m generator`` in each line, with ${{ }} expressions filled."""
    out = []
    for line in lines:
        line = re.sub(r"\$\{\{[^}]*\}\}", "main", line)
        words = shlex.split(line)
        if words[:3] == ["python", "-m", "generator"]:
            out.append(words[3:])
    return out


def test_workflow_runs_on_pull_requests_and_pushes_to_main() -> None:
    triggers = WORKFLOW[True]  # YAML 1.1 reads the key `on` as true
    assert "pull_request" in triggers
    assert triggers["push"]["branches"] == ["main"]


def test_every_generator_command_in_the_workflow_parses() -> None:
    commands = generator_commands(runs("catalog"))
    assert [c[0] for c in commands] == ["schema", "check", "check", "build"]
    for args in commands:
        cli.build_parser().parse_args(args)  # raises SystemExit on an unknown option


def test_changed_entries_are_verified_from_scratch_against_the_base_branch() -> None:
    (step,) = [s for s in steps("catalog") if "--changed-since" in s.get("run", "")]
    assert step["if"] == "github.event_name == 'pull_request'"
    assert '--changed-since "origin/${{ github.base_ref }}"' in step["run"]
    assert "--no-cache" in step["run"]


def test_history_is_fetched_for_changed_entries_and_revisions() -> None:
    checkout = next(s for s in steps("catalog") if s.get("uses", "").startswith("actions/checkout"))
    assert checkout["with"]["fetch-depth"] == 0


def test_cache_folder_is_the_cli_default() -> None:
    cache = next(s for s in steps("catalog") if s.get("uses", "").startswith("actions/cache"))
    assert Path(cache["with"]["path"]) == cli.DEFAULT_CACHE


def test_the_built_site_is_uploaded() -> None:
    build = next(c for c in generator_commands(runs("catalog")) if c[0] == "build")
    out = build[build.index("--out") + 1]
    upload = next(
        s for s in steps("catalog") if s.get("uses", "").startswith("actions/upload-artifact")
    )
    assert upload["with"]["path"].rstrip("/") == out


def test_the_test_job_runs_everything_including_slow_tests() -> None:
    assert "python -m pytest -q" in runs("tests")
    assert not any("not slow" in line for line in runs("tests"))


def test_pre_commit_runs_the_same_checks_locally() -> None:
    assert PRE_COMMIT["repos"][0]["repo"] == "local"
    check = HOOKS["almanac-check"]
    assert check["entry"] == "python -m generator check" and check["pass_filenames"] is True
    cli.build_parser().parse_args(["check", "catalog/isolated-objects/schwarzschild.yaml"])
    workflow_lines = runs("catalog")
    assert any(HOOKS["almanac-schema"]["entry"] in line for line in workflow_lines)


@pytest.mark.parametrize(
    ("path", "selected"),
    [
        ("catalog/isolated-objects/schwarzschild.yaml", True),
        ("catalog/tags.yaml", False),
        ("catalog/families.yaml", False),
        ("catalog/black-holes/notes.md", False),
        ("docs/catalog/black-holes/x.yaml", False),
    ],
)
def test_pre_commit_check_selects_entry_files_only(path: str, selected: bool) -> None:
    assert bool(re.search(HOOKS["almanac-check"]["files"], path)) is selected


def test_schema_check_passes_here_and_fails_on_a_stale_copy(tmp_path: Path) -> None:
    assert jsonschema_export.main(["--check", str(ROOT)]) == 0
    (tmp_path / "schema").mkdir()
    (tmp_path / "schema" / "entry.schema.json").write_text("{}\n")
    assert jsonschema_export.main(["--check", str(tmp_path)]) == 1


def test_every_hook_and_workflow_module_command_names_a_real_module() -> None:
    """``python -m X`` in the workflow and the hooks must name an importable module (the
    schema step once named a module that a restructuring had moved)."""
    import importlib.util

    lines = runs("catalog") + [hook["entry"] for hook in HOOKS.values()]
    modules = {words[2] for line in lines for words in [shlex.split(line)]
               if words[:2] == ["python", "-m"]}
    assert "generator" in modules
    assert all(importlib.util.find_spec(m) is not None for m in modules), modules


def test_hook_commands_parse_with_the_cli() -> None:
    for hook in HOOKS.values():
        words = shlex.split(hook["entry"])
        if words[:3] == ["python", "-m", "generator"]:
            extra = (["catalog/isolated-objects/schwarzschild.yaml"] if hook["pass_filenames"]
                     else [])
            cli.build_parser().parse_args(words[3:] + extra)


def test_the_schema_step_passes_here() -> None:
    (schema,) = [c for c in generator_commands(runs("catalog")) if c[0] == "schema"]
    assert cli.main([*schema, "--root", str(ROOT)]) == 0


def pull_request_command() -> list[str]:
    """The workflow's changed-entries step, with the base branch of a local sandbox."""
    (step,) = [s for s in steps("catalog") if "--changed-since" in s.get("run", "")]
    line = " ".join(step["run"].split()).replace('"origin/${{ github.base_ref }}"', "main")
    return shlex.split(line)[3:]


@pytest.mark.slow
def test_the_pull_request_step_warns_about_a_renamed_copy(tmp_path: Path, monkeypatch,
                                                         capsys) -> None:
    """Issue 18: a copy of schwarzschild.yaml with M renamed to m and a new id passed CI
    silently. The workflow's own pull-request command must warn, on the copy's id line.

    Schwarzschild 1916 in Schwarzschild and isotropic coordinates (the shipped entries; the
    same spacetime, common practice): the copy must be named as a probable duplicate."""
    from _git_sandbox import Sandbox

    box = Sandbox(tmp_path / "repo")
    for name in ("families.yaml", "tags.yaml"):
        box.write(f"catalog/{name}", (ROOT / "catalog" / name).read_text())
    original = (ROOT / "catalog/isolated-objects/schwarzschild.yaml").read_text()
    box.write("catalog/isolated-objects/schwarzschild.yaml", original)
    box.write("catalog/universes/einstein-de-sitter.yaml",
              (ROOT / "catalog/universes/einstein-de-sitter.yaml").read_text())
    # Schwarzschild names Minkowski space as its M → 0 limit: the link must resolve.
    box.write("catalog/backgrounds/minkowski-spherical.yaml",
              (ROOT / "catalog/backgrounds/minkowski-spherical.yaml").read_text())
    box.commit("catalog")
    box.git("checkout", "-q", "-b", "contribution")
    copy = re.sub(r"\bM\b", "m", original).replace("id: schwarzschild\n", "id: lamp-hole\n")
    box.write("catalog/isolated-objects/lamp-hole.yaml", copy)
    box.commit("a new black hole")
    monkeypatch.chdir(box.root)
    capsys.readouterr()
    code = cli.main([*pull_request_command(), "--no-progress", "--jobs", "1"])
    out = capsys.readouterr().out
    assert code == 0, out
    warnings = [line for line in out.splitlines() if line.startswith("::warning")]
    assert len(warnings) == 1, out
    assert "file=catalog/isolated-objects/lamp-hole.yaml,line=2" in warnings[0]
    assert "schwarzschild" in warnings[0] and "entry.duplicate" in warnings[0]


def test_the_cache_ci_restores_can_verify() -> None:
    """Cache files are signed; CI used to set no secret, so a restored cache never verified.
    The key comes from a repository secret, and the run says so when it is missing."""
    from generator.run.cache import SECRET_ENV

    assert WORKFLOW["env"][SECRET_ENV] == "${{ secrets.ALMANAC_CACHE_SECRET }}"
    assert any(SECRET_ENV in step.get("run", "") and "::notice" in step["run"]
               for step in steps("catalog"))
