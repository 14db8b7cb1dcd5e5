"""Which blocks of the Killing-vector search can still hold a vector not yet known: the
eigenvalues of ad(∂_x) on the Killing algebra, for the coordinates x the metric does not
depend on.

Why: for such an x, ∂_x is a Killing vector and [∂_x, Y] = ∂_x Y for every vector field Y.
A Killing vector of the search's class e^{kx} (``killing_search``) is therefore an eigenvector
of ad(∂_x) with eigenvalue k, one of the class {cos kx, sin kx} lies in the kernel of
ad(∂_x)² + k², and one of the class {1, x, x²} in the kernel of ad(∂_x)³. With several such
coordinates the operators commute and a block's vectors lie in the intersection of these
kernels (the block's joint generalised eigenspace). When that space lies inside the span of
the vectors already known, the block cannot give a new vector and need not be solved: BTZ's
two Killing vectors outside ∂_t and ∂_φ have eigenvalues built from r₊ and r₋, which are no
candidate rate, and the translations of a locally flat wall have only the eigenvalue 0.

The algebra is taken at one point of the metric's field modulo a prime, as the isometry stage
computes it (``isometry``: the 1-jet data a Killing vector is fixed by, the kernel of the
integrability conditions, with the Taylor coefficients of every vector of the kernel). There
ad(∂_x) is a d × d matrix. This only ever skips blocks; every vector the search keeps is still
solved for and verified symbolically. Nothing is skipped unless the kernel at the point has
exactly the computed dimension and is mapped into itself by every ad(∂_x); a rate that is an
eigenvalue identically stays one at the point, so an unlucky point or prime can only keep a
block that could have been skipped.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import flint
import numpy as np
import sympy
from sympy.polys.polyerrors import BasePolynomialError

from generator.physics.isometry import (
    KillingConditions,
    SolvedConditions,
    matrix_rank,
    null_space,
)


@dataclass(frozen=True)
class AdjointAction:
    """The Killing algebra at one point modulo ``p``: ``kernel`` a basis of its 1-jet data
    (ζ_b = g_bc ξ^c at the point, then ½(∂_a ζ_b − ∂_b ζ_a) for a < b), ``metric`` g_ab there,
    ``matrices`` the matrix of ad(∂_x) in that basis for each coordinate index x given, and
    ``rate_squares`` k² at the point for each candidate rate (None where it is not a rational
    function of the parameters)."""

    p: int
    n: int
    metric: tuple[tuple[int, ...], ...]
    kernel: tuple[tuple[int, ...], ...]
    matrices: tuple[tuple[int, tuple[tuple[int, ...], ...]], ...]
    rate_squares: tuple[int | None, ...]


def _antisymmetric_pairs(n: int) -> list[tuple[int, int]]:
    return [(a, b) for a in range(n) for b in range(a + 1, n)]


def adjoint_action(solved: SolvedConditions, dimension: int, coordinates: Sequence[int],
                   rate_squares: Sequence[int | None]) -> AdjointAction | None:
    """The action of ad(∂_x) for each coordinate index in ``coordinates``, or None when the
    kernel at the point is not the algebra of ``dimension`` or is not mapped into itself."""
    solver = solved.solver
    n, p = solver.n, solver.p
    kernel = solved.kernel()
    if len(kernel) != dimension or not solved.ranks:
        return None  # not the algebra (or no second-order coefficients to differentiate)
    metric = tuple(tuple(int(solver.g[a][b][0]) % p for b in range(n)) for a in range(n))
    basis = flint.nmod_mat(len(kernel[0]), dimension,
                           [kernel[j][i] for i in range(len(kernel[0]))
                            for j in range(dimension)], p)
    xi = solver.xi()
    matrices = []
    for var in coordinates:
        image = _derivative_map(solver, xi, metric, var)
        action = _in_basis(basis, image * basis, dimension)
        if action is None:
            return None
        matrices.append((var, action))
    return AdjointAction(p, n, metric, tuple(tuple(v) for v in kernel), tuple(matrices),
                         tuple(rate_squares))


def _derivative_map(solver: KillingConditions, xi: np.ndarray,
                    metric: tuple[tuple[int, ...], ...], var: int) -> flint.nmod_mat:
    """The matrix taking the 1-jet data of a Killing vector Y to that of ∂_var Y, built from
    the Taylor coefficients of Y up to degree two (``KillingConditions.xi``)."""
    n, p = solver.n, solver.p
    index = solver.space.index
    units = [index[tuple(1 if v == a else 0 for v in range(n))] for a in range(n)]
    derivative = [solver.diff_forms(xi[c], var) for c in range(n)]  # ∂_var ξ^c, as forms
    # ζ'_b = g_bc ∂_var ξ^c: its value and its first derivatives at the point, as forms
    value = [sum(metric[b][c] * derivative[c][0] for c in range(n)) % p for b in range(n)]
    slope = [[sum(metric[b][c] * derivative[c][units[a]] for c in range(n)) % p
              for b in range(n)] for a in range(n)]
    half = pow(2, -1, p)
    rows = value + [((slope[a][b] - slope[b][a]) * half) % p
                    for a, b in _antisymmetric_pairs(n)]
    size = solver.params
    return flint.nmod_mat(size, size, [int(v) for row in rows for v in row], p)


def _in_basis(basis: flint.nmod_mat, images: flint.nmod_mat, d: int
              ) -> tuple[tuple[int, ...], ...] | None:
    """The d × d matrix A with basis · A = images, or None when some image leaves the span."""
    p = basis.modulus()
    transposed = basis.transpose()
    reduced, rank = transposed.rref()
    if rank != d:
        return None
    pivots = []
    for i in range(rank):
        pivots.append(next(j for j in range(reduced.ncols()) if int(reduced[i, j])))
    square = flint.nmod_mat([[int(basis[r, j]) for j in range(d)] for r in pivots], p)
    picked = flint.nmod_mat([[int(images[r, j]) for j in range(d)] for r in pivots], p)
    action = square.solve(picked)
    if basis * action != images:
        return None
    return tuple(tuple(int(action[i, j]) for j in range(d)) for i in range(d))


def parameters_of_jet(action: AdjointAction, signature: Sequence[int]) -> list[int]:
    """The 1-jet data of a vector from its values and first derivatives at the point
    (``signature``: for each component ξ^a its value, then ∂_1 ξ^a … ∂_n ξ^a)."""
    n, p, g = action.n, action.p, action.metric
    value = [signature[a * (n + 1)] for a in range(n)]
    slope = [[signature[c * (n + 1) + 1 + a] for c in range(n)] for a in range(n)]  # ∂_a ξ^c
    zeta = [sum(g[b][c] * value[c] for c in range(n)) % p for b in range(n)]
    dzeta = [[sum(g[b][c] * slope[a][c] for c in range(n)) % p for b in range(n)]
             for a in range(n)]
    half = pow(2, -1, p)
    return zeta + [((dzeta[a][b] - dzeta[b][a]) * half) % p
                   for a, b in _antisymmetric_pairs(n)]


def class_polynomial(kind: str, rate_squares: Sequence[int | None]) -> tuple[int, ...] | None:
    """Coefficients (constant first) of the polynomial in ad(∂_x) that a class's vectors are
    killed by, before the power that makes it generalised: λ for {1, x, x²}, λ² + k² for
    {cos kx, sin kx}, λ² − k² for e^{±kx} (the sign of k is not used). None: no condition."""
    if kind.startswith("poly"):
        return (0, 1)
    index = int(kind[-1])
    k2 = rate_squares[index] if index < len(rate_squares) else None
    if k2 is None:
        return None
    return (k2, 0, 1) if kind.startswith("trig") else (-k2, 0, 1)


def may_hold_new(action: AdjointAction, kinds: Sequence[tuple[int, str]],
                 known: Sequence[Sequence[int]]) -> bool:
    """Whether the block whose class for coordinate index x is ``kind`` (pairs (x, kind)) can
    hold a Killing vector outside the span of ``known`` (signatures at the action's point)."""
    p, d = action.p, len(action.kernel)
    matrices = dict(action.matrices)
    conditions: list[list[int]] = []
    for var, kind in kinds:
        coefficients = class_polynomial(kind, action.rate_squares)
        if coefficients is None or var not in matrices:
            continue
        operator = flint.nmod_mat([list(r) for r in matrices[var]], p)
        base = _polynomial_at(coefficients, operator, d, p)
        power = base
        for _ in range(d - 1):  # the d-th power: its kernel is the generalised eigenspace
            power = power * base
        conditions += [[int(power[i, j]) for j in range(d)] for i in range(d)]
    if not conditions:
        return True
    space = null_space(conditions, d, p)  # the joint generalised eigenspace, in the basis
    if not space:
        return False
    full = [[sum(c * action.kernel[j][i] for j, c in enumerate(v)) % p
             for i in range(len(action.kernel[0]))] for v in space]
    spanned = [parameters_of_jet(action, s) for s in known]
    inside = len(full) + matrix_rank(spanned, p) - matrix_rank(full + spanned, p)
    return inside < len(full)


def _polynomial_at(coefficients: Sequence[int], operator: flint.nmod_mat, d: int, p: int
                   ) -> flint.nmod_mat:
    identity = flint.nmod_mat([[int(i == j) for j in range(d)] for i in range(d)], p)
    total = identity * 0
    power = identity
    for c in coefficients:
        if c % p:
            total = total + power * (c % p)
        power = power * operator
    return total


def rate_squares_at(rates: Sequence[sympy.Expr], parameters: dict[sympy.Symbol, int], p: int
                    ) -> tuple[int | None, ...]:
    """k² modulo p at the point's parameter values, for each rate k whose square is a rational
    function of the parameters (None for the others)."""
    out: list[int | None] = []
    for k in rates:
        square = sympy.cancel(sympy.sympify(k) ** 2)
        out.append(_rational_at(square, parameters, p))
    return tuple(out)


def _rational_at(expr: sympy.Expr, values: dict[sympy.Symbol, int], p: int) -> int | None:
    if not expr.free_symbols <= set(values):
        return None
    numerator, denominator = sympy.fraction(sympy.together(expr))
    symbols = sorted(values, key=str)
    try:
        top = sympy.Poly(numerator, *symbols, domain="QQ") if symbols else None
        bottom = sympy.Poly(denominator, *symbols, domain="QQ") if symbols else None
    except BasePolynomialError:
        return None  # not a rational function of the parameters with rational coefficients
    if top is None:
        if not (numerator.is_Rational and denominator.is_Rational):
            return None
        top_value, bottom_value = _mod(numerator, p), _mod(denominator, p)
    else:
        top_value, bottom_value = _poly_at(top, symbols, values, p), _poly_at(bottom, symbols,
                                                                              values, p)
    if top_value is None or not bottom_value:
        return None
    return top_value * pow(bottom_value, -1, p) % p


def _poly_at(poly: sympy.Poly, symbols, values, p: int) -> int | None:
    total = 0
    for exponents, coefficient in poly.terms():
        c = _mod(coefficient, p)
        if c is None:
            return None
        term = c
        for x, e in zip(symbols, exponents, strict=True):
            term = term * pow(values[x], int(e), p) % p
        total = (total + term) % p
    return total


def _mod(q, p: int) -> int | None:
    q = sympy.Rational(q)
    if q.q % p == 0:
        return None
    return int(q.p) * pow(int(q.q), -1, p) % p
