"""Bracket tables from the jets at one point (``lie_algebra.expand_by_one_jet``): the same
constants as the bracket-by-bracket solve with its symbolic verification, and every bracket
of the table checked here independently by SymPy (commutator minus the stated combination
simplifies to zero).

Sources: a Killing vector is fixed by its value and first derivatives at one point, and the
bracket of two Killing vectors is one (Wald, General Relativity, 1984, appendix C.3, from
memory); de Sitter's algebra is so(4,1) (Hawking & Ellis, The Large Scale Structure of
Space-Time, 1973, §5.2, from memory); the cosmic string's constants ±(1 − 4μ) by hand (common
practice, see tests/test_isometry.py)."""

from __future__ import annotations

from pathlib import Path

import pytest
import sympy

from generator.entry.loader import load_entry
from generator.geometry.exactvalues import coordinate_names
from generator.physics import lie_algebra
from generator.physics.lie_algebra import commutator, expand_by_one_jet, structure
from generator.physics.symmetry_stage import listed_vectors

ROOT = Path(__file__).resolve().parent.parent


def listed_basis(relative: str):
    load = load_entry(ROOT / "catalog" / relative)
    st = load.spacetime
    return st, [xi for _, xi in listed_vectors(load.entry, st, coordinate_names(st))]


def independently_checked(st, basis, table) -> bool:
    """Every stated bracket [X_i, X_j] = Σ c_k X_k, and every bracket left out equal to 0."""
    stated = {(i, j): c for i, j, c in table}
    for i in range(len(basis)):
        for j in range(i + 1, len(basis)):
            lhs = commutator(basis[i], basis[j], st.coordinates)
            c = stated.get((i, j), [0] * len(basis))
            for a in range(len(lhs)):
                rhs = sum(ck * b[a] for ck, b in zip(c, basis, strict=True))
                difference = sympy.expand_trig(sympy.sympify(lhs[a] - rhs).rewrite(sympy.exp))
                if sympy.simplify(difference) != 0:
                    return False
    return True


def pairs_of(basis):
    return [(i, j) for i in range(len(basis)) for j in range(i + 1, len(basis))]


@pytest.mark.parametrize("relative", ["backgrounds/rindler.yaml",
                                      "strings-tubes-and-bubbles/cosmic-string.yaml"])
def test_jets_give_the_same_constants_as_the_verified_solve(relative: str) -> None:
    st, basis = listed_basis(relative)
    squares = lie_algebra.parameter_squares(basis, st)
    by_jets = expand_by_one_jet(pairs_of(basis), basis, st, squares)
    assert by_jets is not None and all(v is not None for v in by_jets.values())
    for i, j in pairs_of(basis):
        solved = lie_algebra.expand_in_basis(commutator(basis[i], basis[j], st.coordinates),
                                             basis, st, squares)
        assert solved is not None
        assert all(sympy.simplify(a - b) == 0 for a, b in zip(by_jets[i, j], solved,
                                                             strict=True)), (i, j)


@pytest.mark.slow
def test_de_sitter_flat_table_holds_bracket_by_bracket() -> None:
    st, basis = listed_basis("backgrounds/de-sitter-flat.yaml")
    table, _ = structure(st, basis, True)
    assert len(table) == 30
    assert independently_checked(st, basis, table)


def test_a_set_that_does_not_close_gets_no_table() -> None:
    # ∂_x and the rotation x∂_y − y∂_x of flat space: their bracket is ∂_y, outside the span.
    st, _ = listed_basis("backgrounds/minkowski-cartesian.yaml")
    _t, x, y, _z = st.coordinates
    translation = [sympy.Integer(0), sympy.Integer(1), sympy.Integer(0), sympy.Integer(0)]
    rotation = [sympy.Integer(0), -y, x, sympy.Integer(0)]
    assert expand_by_one_jet([(0, 1)], [translation, rotation], st) == {(0, 1): None}
    assert structure(st, [translation, rotation], False) == ((), None)


def test_dropping_the_second_derivatives_is_noticed(monkeypatch) -> None:
    """Mutation: the bracket's derivative without the terms X^b ∂_b ∂_c Y^a. The constants
    then come out wrong or not at all, and the independent check above tells."""
    st, basis = listed_basis("backgrounds/rindler.yaml")
    correct, _ = structure(st, basis, True)
    assert independently_checked(st, basis, correct)
    real = lie_algebra._two_jets

    def flat_second(basis, coordinates, at_point):
        jets = real(basis, coordinates, at_point)
        return {k: (sympy.Integer(0) if len(k[2]) == 2 else v) for k, v in jets.items()}

    monkeypatch.setattr(lie_algebra, "_two_jets", flat_second)
    broken = expand_by_one_jet(pairs_of(basis), basis, st,
                               lie_algebra.parameter_squares(basis, st))
    stated = [(i, j, c) for (i, j), c in (broken or {}).items() if c is not None
              and any(v != 0 for v in c)]
    assert broken is None or any(c is None for c in broken.values()) \
        or not independently_checked(st, basis, stated)


@pytest.mark.slow
@pytest.mark.parametrize("relative", ["backgrounds/de-sitter-static.yaml",
                                      "backgrounds/anti-de-sitter-static.yaml",
                                      "euclidean-and-initial-data/euclidean-de-sitter.yaml"])
def test_bases_with_roots_of_the_coordinates_get_their_tables(relative: str) -> None:
    """√(1 − Λr²/3)-type roots are symbols w with w² = P at the point; before, these three
    ten-vector bases got no table at all. Every bracket is checked independently."""
    st, basis = listed_basis(relative)
    table, _ = structure(st, basis, True)
    assert len(table) == 30
    assert independently_checked(st, basis, table)


def test_de_sitter_static_time_translation_scales_a_boost_by_k() -> None:
    """[∂_t, e^{kt}(…)] = k e^{kt}(…) with k = √(Λ/3) (the boost written out in Hawking &
    Ellis 1973 §5.2, from memory; the eigenvalue of tests/test_killing_eigen.py)."""
    st, basis = listed_basis("backgrounds/de-sitter-static.yaml")
    (lam,) = st.parameters
    t = st.coordinates[0]
    time_index = next(i for i, xi in enumerate(basis) if list(xi) == [1, 0, 0, 0])
    boost = next(i for i, xi in enumerate(basis)
                 if any(c.has(sympy.exp(sympy.sqrt(3) * sympy.sqrt(lam) * t / 3)) for c in xi))
    by_jets = expand_by_one_jet([(min(time_index, boost), max(time_index, boost))], basis, st,
                                lie_algebra.parameter_squares(basis, st))
    (constants,) = by_jets.values()
    sign = 1 if time_index < boost else -1
    expected = [sign * sympy.sqrt(lam / 3) if k == boost else 0 for k in range(len(basis))]
    assert all(sympy.simplify(c - e) == 0 for c, e in zip(constants, expected, strict=True))


@pytest.mark.slow
def test_roots_of_numbers_as_tower_symbols_give_the_algebraic_fields_table(monkeypatch) -> None:
    """De Sitter's static chart brings √3 into the jets (√(Λ/3) = s·√3/3). Taken as a tower
    symbol v with v² = 3 (every constant written c₀ + c₁·v), the table must be the one SymPy's
    algebraic number field gives, bracket for bracket; and the tower, not the slower field,
    must be what decides it. Each bracket is also checked independently."""
    st, basis = listed_basis("backgrounds/de-sitter-static.yaml")
    squares = lie_algebra.parameter_squares(basis, st)
    pairs = [(i, j) for i in range(len(basis)) for j in range(i + 1, len(basis))]
    modes_used = []
    reduce = lie_algebra._reduced_jets

    def spying(*args):
        table = reduce(*args)
        modes_used.append((args[-1], table is not None))
        return table

    monkeypatch.setattr(lie_algebra, "_reduced_jets", spying)
    by_tower = expand_by_one_jet(pairs, basis, st, squares)
    assert ("tower", True) in modes_used and "algebraic" not in [m for m, _ in modes_used]
    monkeypatch.setattr(lie_algebra, "NUMBER_ROOTS", ("algebraic",))
    by_field = expand_by_one_jet(pairs, basis, st, squares)
    assert all(v is not None for v in by_tower.values())
    for key in pairs:
        assert all(sympy.simplify(a - b) == 0
                   for a, b in zip(by_tower[key], by_field[key], strict=True)), key
    table = [(i, j, c) for (i, j), c in by_tower.items() if any(x != 0 for x in c)]
    assert independently_checked(st, basis, table)
