"""Shipped catalog entries loaded once per test process, and their physical data: shared by
the tests of horizons, roots and cross-sections."""

from __future__ import annotations

from functools import cache
from pathlib import Path

import sympy

from generator.entry.catalog import vocabulary
from generator.entry.loader import LoadResult, load_entry, load_text
from generator.geometry.curvature import compute_geometry
from generator.geometry.equality import decide_equal
from generator.model import Horizon, PhysicalData, Spacetime
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


def equal(a: sympy.Expr, b: sympy.Expr, spacetime: Spacetime) -> bool:
    return decide_equal(a, b, spacetime).equal is True


def the(entry_id: str, kind: str) -> Horizon:
    found = [h for h in data_of(entry_id).horizons if h.kind == kind]
    assert len(found) == 1, [h.kind for h in data_of(entry_id).horizons]
    return found[0]


def with_claims(entry_id: str, claims: str) -> LoadResult:
    """The shipped entry with ``claims`` (one-line YAML claims at claim indentation) added,
    replacing a shipped claim of the same name."""
    path = path_of(entry_id)
    names = {line.split(":")[0] for line in claims.splitlines()}
    text = "\n".join(line for line in path.read_text(encoding="utf-8").splitlines()
                     if line.split(":")[0] not in names) + "\n"
    text = text.replace("claims:\n", "claims:\n" + claims, 1)
    result = load_text(text, path.name, path, vocabulary(CATALOG), True)
    assert result.entry is not None, result.diagnostics
    return result
