"""Names of Lie algebras from their structure constants (generator/physics/lie_identify.py).

Each algebra is built from its defining matrix realisation — so(p, q) as the matrices X with
Xᵀ J + J X = 0 for J = diag(1…1, −1…−1), iso(p, q) as the affine matrices [[X, v], [0, 0]], the
Heisenberg algebra as strictly upper triangular 3×3 matrices, sums as block diagonals (common
practice; e.g. Knapp, Lie Groups Beyond an Introduction, 2nd ed. 2002, ch. I, from memory) —
its structure constants computed from matrix commutators, and then scrambled by a random
rational change of basis, so that the name must come from invariants and not from a layout.
Mutants: a changed structure constant must change or withdraw the name.
"""

from __future__ import annotations

import random

import pytest
import sympy

from generator.physics.lie_identify import identify, table_from_brackets


def so_basis(p: int, q: int) -> list[sympy.Matrix]:
    n = p + q
    j = sympy.diag(*([1] * p + [-1] * q))
    out = []
    for a in range(n):
        for b in range(a + 1, n):
            e = sympy.zeros(n, n)
            e[a, b] = 1
            # X = E_ab J-adjusted: X = e J − J eᵀ ... (X^T J + J X = 0 ⇔ J X antisymmetric)
            antisymmetric = e - e.T
            out.append(j * antisymmetric)  # J X' with X' antisymmetric: (JX')ᵀJ + J(JX') = 0
    return out


def iso_basis(p: int, q: int) -> list[sympy.Matrix]:
    n = p + q
    out = []
    for x in so_basis(p, q):
        m = sympy.zeros(n + 1, n + 1)
        m[:n, :n] = x
        out.append(m)
    for a in range(n):
        m = sympy.zeros(n + 1, n + 1)
        m[a, n] = 1
        out.append(m)
    return out


def direct_sum(*bases: list[sympy.Matrix]) -> list[sympy.Matrix]:
    sizes = [b[0].rows for b in bases]
    out = []
    offset = 0
    for basis, size in zip(bases, sizes, strict=True):
        for x in basis:
            m = sympy.zeros(sum(sizes), sum(sizes))
            m[offset:offset + size, offset:offset + size] = x
            out.append(m)
        offset += size
    return out


def abelian_line() -> list[sympy.Matrix]:
    return [sympy.Matrix([[1]])]


def heisenberg() -> list[sympy.Matrix]:
    def unit(a: int, b: int) -> sympy.Matrix:
        m = sympy.zeros(3, 3)
        m[a, b] = 1
        return m
    return [unit(0, 1), unit(1, 2), unit(0, 2)]


def table_of(basis: list[sympy.Matrix], seed: int = 0, scramble: bool = True):
    """Structure constants of the matrix algebra spanned by ``basis`` in a random basis."""
    d = len(basis)
    rng = random.Random(seed)
    if scramble:
        while True:
            change = sympy.Matrix(d, d, lambda i, j: sympy.Rational(rng.randint(-3, 3),
                                                                     rng.randint(1, 2)))
            if change.det() != 0:
                break
        basis = [sum((change[i, k] * basis[k] for k in range(d)), sympy.zeros(*basis[0].shape))
                 for i in range(d)]
    flat = sympy.Matrix([list(x) for x in basis]).T
    table = [[[sympy.Integer(0)] * d for _ in range(d)] for _ in range(d)]
    for i in range(d):
        for j in range(d):
            bracket = basis[i] * basis[j] - basis[j] * basis[i]
            coefficients = flat.solve_least_squares(sympy.Matrix(list(bracket)))
            assert flat * coefficients == sympy.Matrix(list(bracket))
            table[i][j] = list(coefficients)
    return table


CASES = [
    # (algebra, expected name) — the names are facts of the trade (common practice).
    (lambda: so_basis(3, 0), "so(3)"),
    (lambda: so_basis(2, 1), "sl(2,ℝ)"),
    (lambda: direct_sum(so_basis(3, 0), abelian_line()), "so(3) ⊕ ℝ"),
    (lambda: direct_sum(so_basis(2, 1), abelian_line()), "sl(2,ℝ) ⊕ ℝ"),
    (lambda: iso_basis(2, 0), "iso(2)"),
    (lambda: iso_basis(3, 0), "iso(3)"),
    (lambda: iso_basis(2, 1), "iso(2,1)"),
    (lambda: iso_basis(1, 1), "iso(1,1)"),
    (lambda: heisenberg(), "Heisenberg algebra of dimension 3"),
    (lambda: direct_sum(heisenberg(), abelian_line()), "Heisenberg algebra of dimension 3 ⊕ ℝ"),
    # AdS₂ × S² (Bertotti–Robinson) and dS₂ × S² (Nariai): so(2,1) ⊕ so(3) (from memory).
    (lambda: direct_sum(so_basis(2, 1), so_basis(3, 0)), "sl(2,ℝ) ⊕ so(3)"),
    (lambda: direct_sum(so_basis(3, 0), so_basis(3, 0)), "so(4)"),
    (lambda: so_basis(4, 0), "so(4)"),
    (lambda: so_basis(3, 1), "so(3,1)"),
    (lambda: so_basis(2, 2), "so(2,2)"),
]

SLOW_CASES = [
    (lambda: iso_basis(3, 1), "iso(3,1) (Poincaré)"),
    (lambda: so_basis(4, 1), "so(4,1)"),
    (lambda: so_basis(3, 2), "so(3,2)"),
    (lambda: so_basis(5, 0), "so(5)"),
    (lambda: direct_sum(so_basis(4, 0), abelian_line()), "so(4) ⊕ ℝ"),
]


@pytest.mark.parametrize(("build", "expected"), CASES)
def test_named_from_a_scrambled_basis(build, expected) -> None:
    assert identify(table_of(build())).name == expected


@pytest.mark.slow
@pytest.mark.parametrize(("build", "expected"), SLOW_CASES)
def test_named_from_a_scrambled_basis_large(build, expected) -> None:
    assert identify(table_of(build())).name == expected


def test_abelian_and_descriptions() -> None:
    assert identify(table_of([sympy.Matrix([[1, 0], [0, 0]]),
                              sympy.Matrix([[0, 0], [0, 1]])])).name == "abelian ℝ²"
    # The 2-dimensional non-abelian algebra [X, Y] = Y (affine maps of the line): solvable,
    # not one of the named families (common practice).
    affine = [sympy.Matrix([[1, 0], [0, 0]]), sympy.Matrix([[0, 1], [0, 0]])]
    result = identify(table_of(affine))
    assert result.name is None
    assert result.structure.startswith("solvable, 2-dimensional")
    # gl(2,ℝ) = sl(2,ℝ) ⊕ ℝ (the identity is central).
    gl2 = [sympy.Matrix(2, 2, lambda i, j, k=k: 1 if 2 * i + j == k else 0) for k in range(4)]
    assert identify(table_of(gl2)).name == "sl(2,ℝ) ⊕ ℝ"
    # sl(2,ℝ) ⋉ ℝ² (the affine special linear algebra): Levi factor sl(2,ℝ), radical ℝ²,
    # not an iso(p, q) (sl(2,ℝ) preserves no symmetric form on ℝ²): described, not named.
    asl2 = []
    sl2 = [sympy.Matrix([[1, 0], [0, -1]]), sympy.Matrix([[0, 1], [0, 0]]),
           sympy.Matrix([[0, 0], [1, 0]])]
    for x in sl2:
        m = sympy.zeros(3, 3)
        m[:2, :2] = x
        asl2.append(m)
    for a in range(2):
        m = sympy.zeros(3, 3)
        m[a, 2] = 1
        asl2.append(m)
    result = identify(table_of(asl2))
    assert result.name is None
    assert "Levi factor sl(2,ℝ)" in result.structure and "radical of dimension 2" in \
        result.structure


def edited(table, changes):
    """The table with brackets [X_i, X_j] replaced: ``changes`` maps (i, j) to {k: c^k}."""
    out = [[list(row) for row in plane] for plane in table]
    d = len(table)
    for (i, j), values in changes.items():
        out[i][j] = [sympy.Integer(values.get(k, 0)) for k in range(d)]
        out[j][i] = [-v for v in out[i][j]]
    assert _jacobi(out), "a mutant must still be a Lie algebra"
    return out


def scrambled(table, seed: int = 3):
    """The same algebra in a random rational basis (structure constants transformed)."""
    d = len(table)
    rng = random.Random(seed)
    while True:
        change = sympy.Matrix(d, d, lambda i, j: sympy.Rational(rng.randint(-3, 3), 1))
        if change.det() != 0:
            break
    inverse = change.inv()
    out = [[[sympy.Integer(0)] * d for _ in range(d)] for _ in range(d)]
    for a in range(d):
        for b in range(d):
            vector = sympy.zeros(d, 1)
            for i in range(d):
                for j in range(d):
                    if change[a, i] and change[b, j]:
                        vector += change[a, i] * change[b, j] * sympy.Matrix(table[i][j])
            out[a][b] = list(inverse.T * vector)
    return out


def test_mutants_change_or_withdraw_the_name() -> None:
    # so(3) with one bracket's sign flipped is sl(2,R) (Killing form (2, 1)).
    so3 = table_of(so_basis(3, 0), scramble=False)
    flipped = edited(so3, {(0, 1): {k: -v for k, v in enumerate(so3[0][1]) if v}})
    assert identify(scrambled(flipped)).name == "sl(2,ℝ)"
    # iso(3) with [P_a, P_b] = ±M_ab is so(4) or so(3,1) (the inverse of the Inönü–Wigner
    # contraction, common practice): the name iso(3) must go.
    iso3 = table_of(iso_basis(3, 0), scramble=False)
    pairs = {(0, 1): 0, (0, 2): 1, (1, 2): 2}
    for sign in (1, -1):
        deformed = edited(iso3, {(3 + a, 3 + b): {m: sign} for (a, b), m in pairs.items()})
        assert identify(scrambled(deformed)).name in {"so(4)", "so(3,1)"}
    # The Heisenberg algebra with [X, Y] = Z + X is no longer nilpotent: no name.
    h = table_of(heisenberg(), scramble=False)
    tilted = edited(h, {(0, 1): {2: 1, 0: 1}})
    assert identify(scrambled(tilted)).name is None
    # iso(2) with the rotation turned into a boost, [J, P1] = P2, [J, P2] = P1: iso(1,1).
    iso2 = table_of(iso_basis(2, 0), scramble=False)
    boost = edited(iso2, {(0, 1): {2: 1}, (0, 2): {1: 1}})
    assert identify(scrambled(boost)).name == "iso(1,1)"
    # sl(2,R) ⊕ so(3) with the so(3) sign flipped: so(2,2) = sl(2,R) ⊕ sl(2,R).
    br = table_of(direct_sum(so_basis(2, 1), so_basis(3, 0)), scramble=False)
    flipped = edited(br, {(3, 4): {k: -v for k, v in enumerate(br[3][4]) if v}})
    assert identify(scrambled(flipped)).name == "so(2,2)"


def test_an_isomorphic_edit_keeps_the_name() -> None:
    # so(3) ⊕ R with the line acting as the rotation X_3 (T − X_3 is then central): still
    # so(3) ⊕ R — the name follows the algebra, not the table.
    table = table_of(direct_sum(so_basis(3, 0), abelian_line()), scramble=False)
    acting = edited(table, {(3, k): dict(enumerate(table[2][k])) for k in range(3)
                            if any(table[2][k])})
    assert identify(scrambled(acting)).name == "so(3) ⊕ ℝ"


def _jacobi(c) -> bool:
    d = len(c)
    for a in range(d):
        for b in range(d):
            for e in range(d):
                for m in range(d):
                    total = sum(c[a][b][k] * c[k][e][m] + c[b][e][k] * c[k][a][m]
                                + c[e][a][k] * c[k][b][m] for k in range(d))
                    if total != 0:
                        return False
    return True


def test_free_parameters_are_not_named() -> None:
    a = sympy.Symbol("a", positive=True)
    assert table_from_brackets(((0, 1, (sympy.Integer(0), a)),), 2) is None
    assert table_from_brackets(((0, 1, (sympy.Integer(0), sympy.Integer(2))),), 2) is not None
