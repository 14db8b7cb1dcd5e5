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



def listed_basis(relative: str):
    load = load_entry(ROOT / "catalog" / relative)
    st = load.spacetime
    return st, [xi for _, xi in listed_vectors(load.entry, st, coordinate_names(st))]


def test_parameter_squares_are_exact_and_go_back() -> None:
    # Λ > 0 written as 3s²: √3·√Λ/3 becomes s, and s goes back to √(Λ/3); a negative
    # parameter is written as −c·s² (plain algebra, common practice).
    st, basis = listed_basis("backgrounds/de-sitter-flat.yaml")
    squares = lie_algebra.parameter_squares(basis, st)
    assert squares is not None
    (lam,) = st.parameters
    ((p, square),) = squares.substitution
    ((s, root),) = squares.inverse
    assert p == lam and square == 3 * s**2 and root == sp.sqrt(lam / 3)
    h = sp.sqrt(3) * sp.sqrt(lam) / 3
    assert squares.forward(h) == s
    assert squares.forward(sp.exp(-2 * h * st.coordinates[0])) == sp.exp(-2 * s * st.coordinates[0])
    assert sp.simplify(squares.back(squares.forward(h)) - h) == 0
    negative = sp.Symbol("k", negative=True)
    (pair,) = lie_algebra._squares_with([negative], sp.Integer(1)).substitution
    assert pair[1].could_extract_minus_sign()


def test_de_sitter_complete_bases_get_tables_through_parameter_squares() -> None:
    # de Sitter's isometry algebra is so(4,1) (Hawking & Ellis, The Large Scale Structure of
    # Space-Time, 1973, §5.2; from memory). The global chart's ten listed vectors hold √Λ:
    # with Λ = 3s² the bracket equations are rational in s, and the name is certain.
    st, basis = listed_basis("backgrounds/de-sitter-global.yaml")
    table, name = structure(st, basis, True)
    assert name == "so(4,1)" and len(table) > 0
    # the open slicing α² sinh²(t/α) dH₃²: its vectors hold coth(t/α), through E = e^{t/α}
    st, basis = listed_basis("backgrounds/de-sitter-open.yaml")
    assert structure(st, basis, True)[1] == "so(4,1)"
    # the flat slicing's constants keep √Λ (its vectors are scaled by H), so every bracket is
    # computed and verified, but the algebra is not named from a parameter-dependent table
    st, basis = listed_basis("backgrounds/de-sitter-flat.yaml")
    table, _ = structure(st, basis, True)
    assert len(table) == 30 and any(c.free_symbols for _, _, cs in table for c in cs)


def test_a_large_basis_with_roots_of_the_coordinates_gets_no_table_bracket_by_bracket(
        monkeypatch) -> None:
    # anti-de Sitter's static chart lists ten vectors with √(ℓ² + r²)-type roots of the
    # coordinates: more than the bracket-by-bracket split is attempted for (a bound on the
    # kind of work). The jets at one point now give its table (tests/test_brackets_by_jets.py);
    # without them the bound still holds.
    st, basis = listed_basis("backgrounds/anti-de-sitter-static.yaml")
    assert len(basis) == 10 and lie_algebra._coordinate_roots(basis, st)
    monkeypatch.setattr(lie_algebra, "expand_by_one_jet", lambda *args, **kwargs: None)
    assert structure(st, basis, True) == ((), None)


def test_commensurable_exponentials_share_one_symbol() -> None:
    # e^{2Ht} = (e^{Ht})², e^{−Ht} = (e^{Ht})^{−1}, sinh x = (e^x − e^{−x})/2 (common practice).
    st, _ = listed_basis("backgrounds/de-sitter-flat.yaml")
    t, r = st.coordinates[:2]
    h = sp.Symbol("H", positive=True)
    found = lie_algebra._generic_exponentials(
        [sp.exp(2 * h * t), sp.exp(-h * t), sp.sinh(r), r], st)
    assert len(found.symbols) == 2
    e_t = found.replacements[sp.exp(-h * t)] ** -1
    assert found.replacements[sp.exp(2 * h * t)] == e_t**2
    e_r = found.replacements[sp.exp(r)]
    assert sp.simplify(found.replacements[sp.sinh(r)] - (e_r - 1 / e_r) / 2) == 0


def test_rindler_table_names_the_poincare_algebra() -> None:
    # Rindler's chart covers part of Minkowski space: the Poincaré algebra iso(3,1)
    # (Rindler 1966; common practice). Its vectors hold e^{±t}: solved with E = e^t.
    st, basis = listed_basis("backgrounds/rindler.yaml")
    table, name = structure(st, basis, True)
    assert name == "iso(3,1) (Poincaré)" and len(table) == 24
