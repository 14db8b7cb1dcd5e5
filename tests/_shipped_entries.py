"""Shipped catalog entries loaded once per test process, and their physical data: shared by
the tests of horizons, roots and cross-sections."""

from __future__ import annotations

from functools import cache
from pathlib import Path

from generator.entry.catalog import vocabulary
from generator.entry.loader import LoadResult, load_entry
from generator.geometry.curvature import compute_geometry
from generator.model import PhysicalData
from generator.physics.physical import physical_data

CATALOG = Path(__file__).resolve().parent.parent / "catalog"


def path_of(entry_id: str) -> Path:
    return next(CATALOG.glob(f"*/{entry_id}.yaml"))


@cache
def loaded(entry_id: str) -> LoadResult:
    path = path_of(entry_id)
    result = load_entry(path, path.name, vocabulary(CATALOG))
    assert result.ok, result.diagnostics
    return result


def data_for(load: LoadResult) -> PhysicalData:
    return physical_data(load.spacetime, compute_geometry(load.spacetime), None)


@cache
def data_of(entry_id: str) -> PhysicalData:
    return data_for(loaded(entry_id))
