"""When a non-zero normal form proves a difference, and the digit-loss count of the sampling
fallback.

Facts used (common practice): square roots of rational functions generate a field of degree
2^k exactly when no non-empty product of the radicands is a square (Kummer theory);
exponentials of arguments that are linearly independent over Q modulo constants are
algebraically independent (J. Ax, "On Schanuel's conjectures", Ann. of Math. 93 (1971) 252,
from memory); cosh(x)² − sinh(x)² = 1, and log(1 + ε) ≈ ε.
"""

from __future__ import annotations

import mpmath
import sympy as sp
from _known_metrics import M, r

from generator.geometry.canonicity import (
    _odd_primes,
    independent_modulo_constants,
    independent_square_classes,
    square_class,
)
from generator.geometry.tracked import INFINITE_LOSS, Program, tracked_value

VARIABLES = {r, M}


def test_related_radicands_are_not_independent() -> None:
    assert independent_square_classes([r, r - 2 * M])
    assert not independent_square_classes([r, r - 2 * M, r * (r - 2 * M)])
    assert not independent_square_classes([(r - 2 * M) ** 2])  # a square: sqrt is ±(r − 2M)
    assert not independent_square_classes([2, 8])  # sqrt(8) = 2 sqrt(2)
    assert independent_square_classes([2, 3, -1])
    assert not independent_square_classes([-r, r, -1])


def test_square_classes_of_large_constants() -> None:
    # two primes just above the trial-division bound: factored in full, not given up
    assert square_class(1000003 * 1000033 * r) == {r, ("prime", 1000003), ("prime", 1000033)}
    big = sp.nextprime(10**20) * sp.nextprime(10**21)  # 42 digits: not factored, not canonical
    assert _odd_primes(int(big)) is None
    assert _odd_primes(12) == {("prime", 3)}


def test_exponential_arguments_must_be_independent_over_q() -> None:
    assert independent_modulo_constants([r, M], VARIABLES)
    assert not independent_modulo_constants([r / 2, r], VARIABLES)  # exp(r) = exp(r/2)²
    assert not independent_modulo_constants([r + 1, r], VARIABLES)  # differ by a constant
    assert independent_modulo_constants([r, r**2, 1 / r], VARIABLES)
    assert not independent_modulo_constants([sp.pi * r], VARIABLES)  # constants inside: no


def test_digit_loss_is_counted() -> None:
    x = sp.Integer(40000)
    _, lost = tracked_value(sp.cosh(x) ** 2 - sp.sinh(x) ** 2, {})
    assert lost == INFINITE_LOSS or lost > 30000  # all digits lost: never trusted
    with mpmath.workdps(50):
        near_one = tracked_value(sp.log(1 + sp.Rational(1, 10**30)), {})
    assert 29 <= near_one[1] <= 31
    assert tracked_value(sp.exp(sp.Integer(1000)), {})[1] >= 3  # exp magnifies by |x|
    assert tracked_value(r * M + 1, {r: (3, 0.0), M: (4, 0.0)}) == (13, 0.0)


def test_compiled_program_agrees_with_the_tree() -> None:
    expr = sp.sqrt(r) * sp.exp(M / r) - sp.log(r + M) ** 2
    program = Program([expr], {r, M})

    with mpmath.workdps(40):
        point = {r: mpmath.mpc(3), M: mpmath.mpc(sp.Rational(1, 7).p) / 7}
        (compiled, lost), = program.run(point)
        tree, tree_lost = tracked_value(expr, {k: (v, 0.0) for k, v in point.items()})
        assert abs(compiled - tree) < mpmath.mpf(10) ** -35 and lost == tree_lost
