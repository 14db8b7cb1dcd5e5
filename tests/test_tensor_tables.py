"""Curvature component tables on entry pages, checked on the shipped Schwarzschild entry.

Schwarzschild in Schwarzschild coordinates has nine nonzero Christoffel symbols Γ^a_bc with
b ≤ c (Γ^t_tr, Γ^r_tt, Γ^r_rr, Γ^r_θθ, Γ^r_φφ, Γ^θ_rθ, Γ^θ_φφ, Γ^φ_rφ, Γ^φ_θφ; Carroll,
Spacetime and Geometry, 2004, eq. 5.53, from memory) and is Ricci-flat, so its Weyl tensor is
its Riemann tensor (common practice).
"""

from __future__ import annotations

import xml.etree.ElementTree as ET
from pathlib import Path

import pytest

from generator.entry.loader import load_entry
from generator.geometry.curvature import compute_geometry
from generator.model import EntryReport
from generator.site import tensor_tables

ROOT = Path(__file__).resolve().parent.parent


@pytest.fixture(scope="module")
def schwarzschild() -> EntryReport:
    loaded = load_entry(ROOT / "catalog" / "isolated-objects" / "schwarzschild.yaml")
    assert loaded.entry is not None and loaded.spacetime is not None
    return EntryReport(loaded.entry, loaded.file, loaded.spacetime,
                       compute_geometry(loaded.spacetime), None, (), ())


def test_tables_list_every_nonzero_component_typeset(schwarzschild: EntryReport) -> None:
    tables = {t["key"]: t for t in tensor_tables.tensor_tables(schwarzschild)}
    assert tables["christoffel"]["count"] == 9
    assert len(tables["christoffel"]["rows"]) == 9
    for row in tables["christoffel"]["rows"] + tables["riemann"]["rows"]:
        assert ET.fromstring(str(row)).tag.endswith("math")
    assert tables["ricci"]["count"] == 0 and tables["einstein"]["count"] == 0
    assert tables["weyl"]["same_as_riemann"]


def test_an_oversized_table_is_refused_openly(schwarzschild: EntryReport,
                                              monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(tensor_tables, "MAX_TABLE_LATEX", 50)
    tables = {t["key"]: t for t in tensor_tables.tensor_tables(schwarzschild)}
    assert tables["christoffel"]["too_large"] and tables["christoffel"]["rows"] == []
    assert tables["christoffel"]["count"] == 9  # the page still says how many there are
