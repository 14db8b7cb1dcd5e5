"""Every scalar claim of every shipped entry: the claim verifies, and perturbed copies do not.

The geometry of each entry is computed once; each claim is then decided as written (must be
equal) and in three corrupted forms (must be rejected): scaled by 1 + 1/7, shifted by a small
term in the first coordinate, and sign-flipped when nonzero. The full-entry mutation suite
(tests/test_mutations.py, bench/mutation_score.py) also corrupts metrics, matter and maps.
"""

from __future__ import annotations

from pathlib import Path

import pytest
import sympy as sp

from generator.entry.catalog import entry_files, vocabulary
from generator.entry.loader import load_entry, parse_at, symbol_table
from generator.geometry.curvature import compute_geometry
from generator.geometry.equality import decide_equal
from generator.physics.verify import computed_scalar

CATALOG = Path(__file__).resolve().parent.parent / "catalog"
ENTRIES = entry_files([CATALOG])
SIGN = {"ricci_scalar": 1, "kretschmann": 0, "ricci_squared": 0, "weyl_squared": 0}


def mutants(value: sp.Expr, coordinate: sp.Symbol) -> list[tuple[str, sp.Expr]]:
    out = [("scaled by 8/7", value * sp.Rational(8, 7) if value != 0 else sp.Rational(1, 7)),
           ("shifted", value + 1 / (coordinate**2 + 3))]
    if value != 0:
        out.append(("sign flipped", -value))
    return out


@pytest.mark.slow
@pytest.mark.parametrize("path", ENTRIES, ids=[p.stem for p in ENTRIES])
def test_claims_verify_and_their_mutants_are_rejected(path: Path) -> None:
    loaded = load_entry(path, path.name, vocabulary(CATALOG))
    entry, st = loaded.entry, loaded.spacetime
    assert entry is not None and st is not None
    if not entry.claims.scalars:
        pytest.skip("no scalar claims")
    geometry = compute_geometry(st)
    table, _ = symbol_table(entry)
    for claim in entry.claims.scalars:
        computed = computed_scalar(claim.name, geometry) * st.sign ** SIGN[claim.name]
        claimed, problem = parse_at(claim.value, table)
        assert problem is None, problem
        assert decide_equal(claimed, computed, st).equal is True, claim.name
        for how, mutant in mutants(claimed, st.coordinates[0]):
            decision = decide_equal(mutant, computed, st)
            assert decision.equal is False, f"{claim.name} {how} was not rejected"
