"""Shared pieces of the pipeline, cache and cluster tests: the fixture catalog and comparisons.

The fixture catalog is ``tests/roots/scale-small`` (see its README for what each entry is for).
"""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest
import sympy

from generator.entry.catalog import entry_files
from generator.entry.loader import LoadResult
from generator.model import EntryReport, Verdict
from generator.run import pipeline, tasks

FIXTURE = Path(__file__).parent / "roots" / "scale-small" / "catalog"
ENTRY_COUNT = 6
FAILING = {"catalog/black-holes/point-mass-misclaimed.yaml",
           "catalog/black-holes/point-mass-unparsable.yaml"}


def copy_catalog(tmp_path: Path) -> Path:
    """A private copy of the fixture catalog (tests edit files); returns its root."""
    root = tmp_path / "catalog"
    shutil.copytree(FIXTURE, root)
    return root


def catalog_files(root: Path) -> list[Path]:
    return entry_files([root])


def _expr(value: sympy.Basic | None) -> str | None:
    """Structural form: two runs of the same engine must agree exactly, not just simplify equal."""
    return None if value is None else sympy.srepr(value)


def comparable(report: EntryReport) -> tuple:
    """Everything a reader sees of a report, without the wall-clock fields."""
    geometry = report.geometry
    scalars = None
    if geometry is not None:
        scalars = (geometry.engine, _expr(geometry.ricci_scalar), _expr(geometry.kretschmann),
                   _expr(geometry.ricci_squared), _expr(geometry.weyl_squared),
                   _expr(geometry.einstein_mixed))
    physics = None
    if report.classification is not None:
        c = report.classification
        physics = (c.matter_kind, c.petrov_type, c.hawking_ellis_type,
                   _expr(c.cosmological_constant), c.energy_conditions)
    return (report.file, report.ok, report.entry.id if report.entry else None,
            report.diagnostics, report.verdicts, report.content_hash, scalars, physics)


def install_counting_engine(monkeypatch: pytest.MonkeyPatch,
                            budget_failure_for: str | None = None) -> list[str]:
    """Replace the check stage with a fast fake that records which files it was asked about.

    The run is switched to checking in this process (``pipeline.runs_in_this_process``), so
    that the fake is the one called. ``budget_failure_for`` names a
    file (its stem) whose fake report says the entry ran out of its budget.
    """
    calls: list[str] = []

    def fake_check(load: LoadResult, related: object, limits: object = None) -> EntryReport:
        calls.append(load.file)
        diagnostics = load.diagnostics
        if budget_failure_for and Path(load.file).stem == budget_failure_for:
            from generator.errors import Diagnostic

            diagnostics += (Diagnostic(load.file, 13, 3, "error", "computation ran out of "
                                       "its budget", "budget.exceeded"),)
        verdict = Verdict("claims.kretschmann", True, "exact", f"fake check of {load.file}")
        return EntryReport(load.entry, load.file, load.spacetime, None, None, (verdict,),
                           diagnostics, "fake-hash", 0.0)

    monkeypatch.setattr(tasks, "check_loaded", fake_check)
    monkeypatch.setattr(pipeline, "runs_in_this_process", lambda options: True)
    return calls
