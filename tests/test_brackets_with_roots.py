"""Brackets of Killing bases with square roots of the coordinates, computed exactly (issue 17):
each root √P is a symbol w with w² = P, the equations are split in the w's, and the solution
is verified symbolically.

Source: the curved FLRW slices (r, θ, φ) with dr²/(1 − kr²) + r² dΩ² are the 3-spaces of
constant curvature k; their six Killing vectors are three rotations J_i and three
"translations" P_i = √(1 − kr²)(…), with [J_i, J_j] = ε_ijk J_k-type brackets and
[P_i, P_j] proportional to k times a rotation: so(4) for k > 0, e(3) for k = 0, so(3,1) for
k < 0 (Weinberg, Gravitation and Cosmology, 1972, §13.1; from memory). The entry's listed
vectors are used as they stand.
"""

from __future__ import annotations

from pathlib import Path

import sympy as sp

from generator.entry.loader import load_entry
from generator.geometry.exactvalues import coordinate_names
from generator.physics import lie_algebra
from generator.physics.lie_algebra import RadicalSplit, commutator, structure
from generator.physics.symmetry_stage import listed_vectors

ROOT = Path(__file__).resolve().parent.parent


def flrw_curved():
    load = load_entry(ROOT / "catalog" / "universes" / "flrw-curved.yaml")
    st = load.spacetime
    basis = [xi for _, xi in listed_vectors(load.entry, st, coordinate_names(st))]
    return st, basis


def test_the_split_is_exact_on_a_root() -> None:
    r, k = sp.symbols("r k")
    w = sp.Dummy("w")
    split = RadicalSplit({sp.sqrt(1 - k * r**2): w}, ((w, 1 - k * r**2),))
    # (√P)² − P vanishes identically: after the reduction nothing is left.
    assert all(sp.expand(e) == 0 for e in split.split(sp.sqrt(1 - k * r**2) ** 2
                                                      - (1 - k * r**2)))
    # a + b√P with a, b rational functions: both coefficients become equations.
    parts = split.split(3 + r * sp.sqrt(1 - k * r**2))
    assert sorted(map(str, parts)) == ["3", "r"]


def test_flrw_curved_brackets_are_computed_and_close_with_k() -> None:
    st, basis = flrw_curved()
    k = next(p for p in st.parameters if str(p) == "k")
    table, _name = structure(st, basis, True)
    assert table, "a basis with √(1 − kr²) now gets its bracket table"
    brackets = {(i, j): c for i, j, c in table}
    # The three translations (listed 4th to 6th) close on rotations with a factor k.
    for pair in ((3, 4), (3, 5), (4, 5)):
        coefficients = brackets[pair]
        assert all(c == 0 or sp.simplify(c / k).is_number for c in coefficients)
        assert any(c != 0 for c in coefficients[:3]) and all(c == 0 for c in coefficients[3:])
    # Every bracket in the table is the stated combination, checked here independently.
    for (i, j), coefficients in brackets.items():
        lhs = commutator(basis[i], basis[j], st.coordinates)
        for a in range(len(lhs)):
            rhs = sum(c * b[a] for c, b in zip(coefficients, basis, strict=True))
            assert sp.simplify(sp.expand_trig(lhs[a] - rhs)) == 0


def test_a_broken_split_never_yields_wrong_constants(monkeypatch) -> None:
    # A mutation: treating every root as 1 gives equations the true constants do not solve;
    # whatever the solver makes of them must be refused by the symbolic check.
    st, basis = flrw_curved()
    correct, _ = structure(st, basis, True)

    def as_one(self, expr):
        return [sp.together(expr.xreplace(self.replacements).xreplace(
            {w: 1 for w, _ in self.roots}))]

    monkeypatch.setattr(lie_algebra.RadicalSplit, "split", as_one)
    broken, _ = structure(st, basis, True)
    assert broken == () or broken == correct


def test_a_large_basis_with_roots_of_parameters_gets_no_table() -> None:
    # de Sitter's flat slicing lists ∂_t − √(Λ/3) r ∂_r and vectors with e^{−2√(Λ/3) t}: with a
    # translation (cos θ ∂_r − sin θ/r ∂_θ, common practice) the basis has 8 vectors, more
    # than the table is computed for when roots of parameters occur (a bound on the kind of
    # work: SymPy's solver over such constants took minutes on the complete basis).
    load = load_entry(ROOT / "catalog" / "backgrounds" / "de-sitter-flat.yaml")
    st = load.spacetime
    # the first seven listed (the entry now lists all ten; the bound is about the count)
    basis = [xi for _, xi in listed_vectors(load.entry, st, coordinate_names(st))][:7]
    _t, r, theta, _phi = st.coordinates
    translation = [sp.Integer(0), sp.cos(theta), -sp.sin(theta) / r, sp.Integer(0)]
    assert len(basis) == 7 and lie_algebra._constant_roots(basis, st)
    assert structure(st, [*basis, translation], True) == ((), None)
    assert not lie_algebra._constant_roots([translation], st)
