"""Issue 18, item 11: a package others can install.

A research group keeping its own catalog in its own repository installs Metric Almanac from a
wheel (not editable) and checks and builds their catalog with it; pre-commit installs the
package the same way for the hook in .pre-commit-hooks.yaml. Test (as the issue asks): build
a wheel, install it in a fresh virtual environment, build a site from a catalog folder outside
the repository. The dependencies are borrowed from the project's environment through a path
file (so the test needs no network for them); the package itself comes only from the wheel.
"""

from __future__ import annotations

import os
import re
import shlex
import shutil
import subprocess
import sys
import sysconfig
from pathlib import Path

import pytest
import yaml

ROOT = Path(__file__).resolve().parent.parent
HOOKS = yaml.safe_load((ROOT / ".pre-commit-hooks.yaml").read_text())
PYPROJECT = (ROOT / "pyproject.toml").read_text()


def test_every_subpackage_of_the_generator_is_packaged() -> None:
    """``packages = ["generator"]`` alone left the stages out of a non-editable install."""
    import tomllib

    packages = set(tomllib.loads(PYPROJECT)["tool"]["setuptools"]["packages"])
    code = {".".join(p.relative_to(ROOT).parent.parts) for p in (ROOT / "generator").rglob(
        "__init__.py")}
    assert code <= packages


def test_data_folders_are_mapped_into_the_package() -> None:
    import tomllib

    setup = tomllib.loads(PYPROJECT)["tool"]["setuptools"]
    assert setup["package-dir"]["generator.site_templates"] == "site_templates"
    assert setup["package-dir"]["generator.schema_files"] == "schema"
    assert "static/*" in setup["package-data"]["generator.site_templates"]


def test_the_shared_hook_runs_the_installed_command() -> None:
    (hook,) = HOOKS
    assert hook["language"] == "python"  # pre-commit installs the package itself
    assert shlex.split(hook["entry"])[0] == "almanac"
    from generator import cli

    cli.build_parser().parse_args([*shlex.split(hook["entry"])[1:], "x.yaml"])


@pytest.fixture(scope="module")
def installed(tmp_path_factory) -> Path:
    """A fresh venv with the wheel installed (non-editable); returns its bin folder."""
    work = tmp_path_factory.mktemp("wheel")
    dist = work / "dist"
    subprocess.run([sys.executable, "-m", "pip", "wheel", "--no-deps", "-q", "-w", str(dist),
                    str(ROOT)], check=True, cwd=work)
    (wheel,) = dist.glob("metric_almanac-*.whl")
    venv = work / "fresh"
    subprocess.run([sys.executable, "-m", "venv", "--without-pip", str(venv)], check=True)
    python = venv / "bin" / "python"
    subprocess.run([sys.executable, "-m", "pip", "--python", str(python), "install",
                    "--no-deps", "-q", str(wheel)], check=True)
    purelib = subprocess.run([str(python), "-c", "import sysconfig;"
                              "print(sysconfig.get_paths()['purelib'])"], check=True,
                             capture_output=True, text=True).stdout.strip()
    # Dependencies only: a plain path line does not run the project's editable-install hook.
    Path(purelib, "project-dependencies.pth").write_text(sysconfig.get_paths()["purelib"] + "\n")
    return venv / "bin"


def group_catalog(folder: Path) -> Path:
    """A research group's catalog outside the repository: the shipped Riemannian entries
    (round spheres, hyperbolic spaces, Eguchi–Hanson; published solutions)."""
    catalog = folder / "catalog"
    (catalog / "euclidean-and-initial-data").mkdir(parents=True)
    for name in ("tags.yaml", "families.yaml"):
        shutil.copy(ROOT / "catalog" / name, catalog / name)
    for entry in ("round-2-sphere.yaml", "hyperbolic-plane.yaml"):
        family = "euclidean-and-initial-data"
        shutil.copy(ROOT / "catalog" / family / entry, catalog / family / entry)
    return catalog


def run_installed(bin_dir: Path, args: list[str], cwd: Path) -> subprocess.CompletedProcess:
    env = {**os.environ, "PATH": f"{bin_dir}{os.pathsep}{os.environ.get('PATH', '')}"}
    env.pop("PYTHONPATH", None)
    return subprocess.run(args, cwd=cwd, env=env, capture_output=True, text=True, timeout=900)


@pytest.mark.slow
def test_the_wheel_builds_a_site_from_a_catalog_outside_the_repository(installed: Path,
                                                                      tmp_path: Path) -> None:
    group_catalog(tmp_path)
    where = run_installed(installed, ["python", "-c",
                                      "import generator; print(generator.__file__)"], tmp_path)
    assert str(installed.parent) in where.stdout  # the wheel's copy, not the repository's
    done = run_installed(installed, ["almanac", "build", "--catalog", "catalog", "--out",
                                     "site", "--no-progress", "--jobs", "1"], tmp_path)
    assert done.returncode == 0, done.stderr
    site = tmp_path / "site"
    assert (site / "index.html").is_file()
    assert (site / "entries" / "round-2-sphere" / "index.html").is_file()
    assert (site / "assets").is_dir() or any(site.rglob("*.css"))
    assert (site / "schema" / "entry.schema.json").is_file()


@pytest.mark.slow
def test_the_shared_hook_checks_a_group_catalog_with_the_wheel(installed: Path,
                                                               tmp_path: Path) -> None:
    group_catalog(tmp_path)
    (hook,) = HOOKS
    entry = "catalog/euclidean-and-initial-data/round-2-sphere.yaml"
    assert re.search(hook["files"], entry)
    done = run_installed(installed, [*shlex.split(hook["entry"]), entry, "--no-progress",
                                     "--jobs", "1"], tmp_path)
    assert done.returncode == 0, done.stderr
    assert "1 verified" in done.stderr
