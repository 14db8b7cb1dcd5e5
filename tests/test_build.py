"""The top-down build: a failed entry never replaces a good site.

Uses the demo catalog (a lighthouse dome, our own scenario) so the build is quick.
"""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest

from generator.build import build_site
from generator.pipeline import RunOptions

DEMO = Path(__file__).parent / "roots" / "demo-catalog" / "catalog"
OPTIONS = RunOptions(jobs=1)


@pytest.fixture
def project(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> Path:
    shutil.copytree(DEMO, tmp_path / "catalog")
    monkeypatch.chdir(tmp_path)
    return tmp_path


def snapshot(folder: Path) -> dict[str, bytes]:
    return {p.relative_to(folder).as_posix(): p.read_bytes()
            for p in sorted(folder.rglob("*")) if p.is_file()}


def break_the_demo(project: Path) -> None:
    entry = project / "catalog" / "riemannian" / "lighthouse-dome.yaml"
    entry.write_text(entry.read_text().replace("kretschmann: 4/rho**4", "kretschmann: 3/rho**4"))


def test_build_writes_the_site(project: Path) -> None:
    result = build_site(project / "catalog", project / "site", OPTIONS)
    assert result.ok and result.refused == ()
    assert (project / "site" / "index.html").is_file()
    pages = [p for p in (project / "site").rglob("*.html") if "lighthouse-dome" in p.as_posix()]
    assert pages, "the verified entry has a page"
    assert not list(project.glob(".site.*")), "no staging folder is left behind"


def test_failed_entry_leaves_previous_site_untouched(project: Path) -> None:
    assert build_site(project / "catalog", project / "site", OPTIONS).ok
    before = snapshot(project / "site")
    break_the_demo(project)
    result = build_site(project / "catalog", project / "site", OPTIONS)
    assert not result.ok
    assert result.refused == ("catalog/riemannian/lighthouse-dome.yaml",)
    assert snapshot(project / "site") == before


def test_publish_verified_only_drops_the_failed_entry(project: Path) -> None:
    break_the_demo(project)
    result = build_site(project / "catalog", project / "site", OPTIONS, publish_verified_only=True)
    assert not result.ok
    assert (project / "site" / "index.html").is_file()
    pages = [p for p in (project / "site").rglob("*") if "lighthouse-dome" in p.as_posix()]
    assert pages == []


def test_rebuild_is_byte_identical(project: Path) -> None:
    assert build_site(project / "catalog", project / "site", OPTIONS).ok
    first = snapshot(project / "site")
    assert build_site(project / "catalog", project / "site", OPTIONS).ok
    assert snapshot(project / "site") == first
