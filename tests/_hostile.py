"""Shared helpers of the robustness tests: tiny catalogs built from tests/roots/hostile-*/.

Each fixture folder holds family folders of entries; `make_catalog` copies the chosen ones into
a temporary project together with the real vocabularies (catalog/tags.yaml, families.yaml), so
the entries are checked against the same tags and families as the shipped catalog.
"""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
from pathlib import Path

PROJECT = Path(__file__).resolve().parents[1]
ROOTS = PROJECT / "tests" / "roots"


def make_catalog(project: Path, *roots: str) -> Path:
    """A project folder with catalog/ made of the named fixture roots; returns catalog/."""
    catalog = project / "catalog"
    catalog.mkdir(parents=True, exist_ok=True)
    for name in ("tags.yaml", "families.yaml"):
        shutil.copy(PROJECT / "catalog" / name, catalog / name)
    for root in roots:
        for family in sorted(p for p in (ROOTS / root).iterdir() if p.is_dir()):
            shutil.copytree(family, catalog / family.name, dirs_exist_ok=True)
    return catalog


def almanac(cwd: Path, *args: str, env: dict[str, str] | None = None,
            timeout: float = 1200) -> subprocess.CompletedProcess[str]:
    """Run ``python -m generator ARGS`` in ``cwd`` (the project folder of a fixture catalog)."""
    environment = dict(os.environ)
    environment["PYTHONPATH"] = str(PROJECT)
    environment.update(env or {})
    return subprocess.run([sys.executable, "-m", "generator", *args], cwd=cwd, env=environment,
                          capture_output=True, text=True, timeout=timeout)
