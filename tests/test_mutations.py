"""Verification never lies: corrupted entries must all be rejected by `check`.

A sample of shipped entries (vacuum with Killing vectors and a Petrov type, a chart with a map
to another entry, an electrovacuum and a perfect fluid) is mutated by bench/mutation_score.py:
every scalar claim ×(1+1/7) and +1/x, a sign in the metric, each matter field, each Killing
vector, each chart-map component, the Petrov type and the energy conditions. Each mutant is
checked in-process and must fail; the unmutated control must pass. The whole catalog is scored
by ``python bench/mutation_score.py``.
"""

from __future__ import annotations

import importlib.util
import sys
from pathlib import Path

import pytest

PROJECT = Path(__file__).resolve().parents[1]
CATALOG = PROJECT / "catalog"
SAMPLE = (
    "isolated-objects/schwarzschild.yaml",
    "isolated-objects/schwarzschild-isotropic.yaml",
    "isolated-objects/reissner-nordstrom.yaml",
    "universes/einstein-de-sitter.yaml",
)


def _bench():
    spec = importlib.util.spec_from_file_location("mutation_score",
                                                  PROJECT / "bench" / "mutation_score.py")
    assert spec is not None and spec.loader is not None
    module = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = module  # dataclasses look their module up there
    spec.loader.exec_module(module)
    return module


bench = _bench()


def schwarzschild_data() -> dict:
    import yaml

    return yaml.safe_load((PROJECT / "tests/roots/hostile-valid/isolated-objects/"
                           "schwarzschild.yaml").read_text(encoding="utf-8"))


def test_every_kind_of_mutation_is_generated() -> None:
    changes = [m.change for m in bench.mutants_of("schwarzschild", schwarzschild_data())]
    assert "claims.kretschmann x 8/7" in changes
    assert "claims.ricci_scalar + 1/r" in changes
    assert "claims.ricci_scalar x 8/7" not in changes  # 0 x 8/7 would be no mutation
    assert "metric: sign of the first term" in changes
    assert "claims.killing_vectors.0.t x r" in changes
    assert "claims.petrov_type D -> II" in changes


def test_mutants_leave_the_original_data_alone() -> None:
    data = schwarzschild_data()
    before = repr(data)
    mutants = bench.mutants_of("schwarzschild", data)
    assert repr(data) == before
    assert all(m.data != data for m in mutants)


def test_map_and_matter_mutations_are_generated() -> None:
    data = schwarzschild_data()
    data["related"] = [{"entry": "other", "map": {"t": "t", "r": "r*(1 + M/(2*r))**2"}}]
    data["matter"] = {"kind": "electrovacuum", "potential": {"t": "-Q/r", "r": 0}}
    changes = [m.change for m in bench.mutants_of("schwarzschild", data)]
    assert "related.0.map.r x 8/7" in changes
    assert "matter.potential.t x 8/7" in changes
    assert "matter.potential.r + 1/r" in changes


@pytest.mark.slow
def test_every_mutant_of_the_sample_is_rejected() -> None:
    missing = [name for name in SAMPLE if not (CATALOG / name).is_file()]
    if missing:
        pytest.skip(f"sample entries missing from the catalog: {missing}")
    files = [CATALOG / name for name in SAMPLE]
    outcomes, skipped = bench.run(files, CATALOG, progress=lambda line: None)
    assert skipped == []  # each control verifies, so kills are not caused by the round trip
    kinds = {o.mutant.change.split(" ")[0].split(".")[0].rstrip(":") for o in outcomes}
    assert {"claims", "metric", "matter", "related"} <= kinds
    survivors = [f"{o.mutant.entry}: {o.mutant.change}" for o in outcomes if not o.killed]
    assert survivors == []
