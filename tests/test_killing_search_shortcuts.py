"""The Killing search's faster linear algebra gives the same numbers as the direct way.

Three shortcuts (bench/per_entry_profile.py measured the search at over half of the catalog's
CPU time) must change nothing: the pivot columns read by one scan of a reduced row echelon
form are those of the whole form read row by row; the independent monomials found on a prefix
of the columns are the leading ones of the whole matrix (a column of a matrix is a pivot
exactly when it is independent of the columns before it: common practice, e.g. Strang,
Introduction to Linear Algebra, 5th ed. 2016, §3.3); and the rows of Killing's equation built
for all indices at once equal the rows written out one component at a time,
(L_ξ g)_ab = ξ^c ∂_c g_ab + g_cb ∂_a ξ^c + g_ac ∂_b ξ^c (common practice, e.g. Carroll,
Spacetime and Geometry, 2004, eq. 3.174 with ∇ → ∂ for the Lie derivative). Each comparison
is also made against a deliberately broken version, so the test can fail.
"""

from __future__ import annotations

import random

import flint
import numpy as np
import pytest
import sympy
from classify_cases import make_entry, prepared

from generator.physics import killing_search
from generator.physics.killing_search import (
    WORK_BOUND,
    PointValues,
    Work,
    killing_rows,
    nmod_matrix,
    pivot_columns,
)

P = 2147483629  # a prime below 2³¹, as the search uses


def full_pivots(reduced: flint.nmod_mat, rank: int) -> list[int]:
    """The first non-zero entry of each non-zero row, reading the whole matrix."""
    rows = reduced.tolist()[:rank]
    return [next(j for j, v in enumerate(row) if int(v) != 0) for row in rows]


def dependent_matrix(rng: random.Random, rows: int, columns: int) -> np.ndarray:
    """Random columns, every third one a combination of two earlier ones (so that the pivots
    skip columns)."""
    data = np.array([[rng.randrange(P) for _ in range(columns)] for _ in range(rows)],
                    dtype=np.int64)
    for j in range(2, columns, 3):
        data[:, j] = (data[:, j - 1] * 5 + data[:, j - 2] * 7) % P
    return data


def test_pivot_scan_matches_reading_the_whole_form() -> None:
    rng = random.Random(7)
    for rows, columns in ((12, 9), (9, 12), (30, 30)):
        reduced, rank = nmod_matrix(dependent_matrix(rng, rows, columns), P).rref()
        expected = full_pivots(reduced, rank)
        assert pivot_columns(reduced, rank) == expected
        assert len(expected) < columns  # the dependent columns are skipped


def test_pivot_scan_would_notice_a_shifted_pivot() -> None:
    rng = random.Random(8)
    reduced, rank = nmod_matrix(dependent_matrix(rng, 12, 9), P).rref()
    expected = full_pivots(reduced, rank)
    assert [j + 1 for j in expected] != pivot_columns(reduced, rank)


def test_integer_route_builds_the_same_matrix() -> None:
    data = dependent_matrix(random.Random(9), 5, 4)
    direct = flint.nmod_mat(5, 4, data.ravel().tolist(), P)
    assert nmod_matrix(data, P) == direct
    assert nmod_matrix((data + 1) % P, P) != direct


@pytest.fixture(scope="module")
def sphere_values() -> tuple[PointValues, np.ndarray]:
    """Values at random points for flat space in spherical coordinates, and exponents of
    monomials in r and cos θ with repeats of the same function (dependent columns)."""
    entry = make_entry("t r theta phi", "-dt**2 + dr**2 + r**2*(dtheta**2 + "
                       "sin(theta)**2*dphi**2)", {}, ("r > 0", "0 < theta < pi"))
    st = prepared(entry)[1]
    r, theta = st.coordinates[1], st.coordinates[2]
    atoms = [r, sympy.cos(theta), r**2]  # r² repeats r·r: columns become dependent
    values = PointValues(st, atoms, [])
    exponents = np.array(killing_search.monomials(
        [killing_search.Atom(a, -1, 2, False) for a in atoms], 3, 1), dtype=np.int64)
    return values, exponents


def test_prefix_of_columns_gives_the_leading_independent_monomials(sphere_values) -> None:
    values, exponents = sphere_values
    whole = killing_search._independent_monomials(values, exponents, Work(WORK_BOUND))
    assert len(whole) < len(exponents)  # some monomials were dependent
    for wanted in (3, 10, len(whole), len(whole) + 5):
        found = killing_search._independent_monomials(values, exponents, Work(WORK_BOUND),
                                                       wanted)
        assert np.array_equal(found[:wanted], whole[:wanted])
    # a wrong prefix (the columns from the second on) would not agree
    shifted = killing_search._independent_monomials(values, exponents[1:], Work(WORK_BOUND))
    assert not np.array_equal(shifted[:10], whole[:10])


def rows_one_by_one(values: PointValues, point: int, exponents: np.ndarray) -> np.ndarray:
    """The rows of Killing's equation component by component (the formula in the docstring)."""
    n, p = values.n, values.p
    m, dm = values.monomial_jets(point, exponents)
    g = values.metric[point]
    rows = []
    for a in range(n):
        for b in range(a, n):
            blocks = [(m * int(g[a, b, 1 + c]) % p + dm[:, a] * int(g[c, b, 0]) % p
                       + dm[:, b] * int(g[a, c, 0]) % p) % p for c in range(n)]
            rows.append(np.concatenate(blocks))
    return np.array(rows, dtype=np.int64)


def test_rows_at_once_equal_rows_one_by_one(sphere_values) -> None:
    values, exponents = sphere_values
    values.grow(4, Work(WORK_BOUND))
    for point in range(4):
        direct = rows_one_by_one(values, point, exponents)
        assert np.array_equal(killing_rows(values, point, exponents), direct)
    broken = direct.copy()
    broken[0, 0] = (broken[0, 0] + 1) % values.p
    assert not np.array_equal(killing_rows(values, 3, exponents), broken)


def test_monomial_values_match_powers_of_the_atoms(sphere_values) -> None:
    values, exponents = sphere_values
    values.grow(1, Work(WORK_BOUND))
    atoms, p = values.atoms[0], values.p
    m, _ = values.monomial_jets(0, exponents)
    for k, row in enumerate(exponents):
        expected = 1
        for j, e in enumerate(row):
            expected = expected * pow(int(atoms[j, 0]), int(e), p) % p
        assert int(m[k]) == expected
