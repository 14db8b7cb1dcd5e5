"""The signature check: exact inertia of a rational symmetric matrix.

Reference: the signs of the eigenvalues from mpmath's symmetric eigensolver at 50 digits (a
general-purpose numerical library), and Sylvester's law of inertia (common practice).
"""

from __future__ import annotations

import random
from fractions import Fraction

import mpmath
import pytest
import sympy

from generator.physics.verify import _inertia, exact_inertia


def reference_signs(matrix: list[list[Fraction]]) -> list[str] | None:
    """Eigenvalue signs from mpmath (None when an eigenvalue is too close to zero to say)."""
    with mpmath.workdps(50):
        values = mpmath.eigsy(mpmath.matrix([[mpmath.mpf(x.numerator) / x.denominator
                                              for x in row] for row in matrix]))[0]
        if any(abs(v) < mpmath.mpf(10) ** -30 for v in values):
            return None
        return sorted("-" if v < 0 else "+" for v in values)


def random_symmetric(rng: random.Random, n: int) -> list[list[Fraction]]:
    a = [[Fraction(0)] * n for _ in range(n)]
    for i in range(n):
        for j in range(i, n):
            zero = rng.random() < (0.6 if i == j else 0.2)  # many zero diagonals on purpose
            value = Fraction(0) if zero else Fraction(rng.randint(-9, 9), rng.randint(1, 5))
            a[i][j] = a[j][i] = value
    return a


@pytest.mark.parametrize("seed", range(40))
def test_exact_inertia_agrees_with_a_numerical_eigensolver(seed: int) -> None:
    rng = random.Random(seed)
    matrix = random_symmetric(rng, rng.choice((2, 3, 4, 5)))
    expected = reference_signs(matrix)
    if expected is None:  # singular: a zero eigenvalue must be reported
        assert "0" in exact_inertia(matrix)
    else:
        assert sorted(exact_inertia(matrix)) == expected


def test_null_coordinates_and_a_degenerate_form() -> None:
    # ds² = -2 du dv: one negative and one positive direction (common practice).
    assert sorted(exact_inertia([[Fraction(0), Fraction(-1)], [Fraction(-1), Fraction(0)]])) \
        == ["+", "-"]
    assert "0" in exact_inertia([[Fraction(1), Fraction(1)], [Fraction(1), Fraction(1)]])


def test_inertia_at_a_point_uses_the_exact_route_and_the_numeric_one() -> None:
    r, x = sympy.symbols("r x", positive=True)
    eddington = sympy.ImmutableMatrix([[-(1 - 2 / r), 1], [1, 0]])
    assert sorted(_inertia(eddington, {r: sympy.Rational(1, 3)})) == ["+", "-"]
    irrational = sympy.ImmutableMatrix([[-sympy.sqrt(x), 0], [0, sympy.exp(x)]])
    assert sorted(_inertia(irrational, {x: sympy.Integer(2)})) == ["+", "-"]
    assert _inertia(sympy.ImmutableMatrix([[x, x], [x, x]]), {x: sympy.Integer(3)}) is None
