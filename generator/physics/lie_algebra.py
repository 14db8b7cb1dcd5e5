"""Structure constants of a verified Killing basis, and the algebra's name where it is plain.

[X_i, X_j]^a = X_i^b ∂_b X_j^a − X_j^b ∂_b X_i^a is written as Σ_k c_ij^k X_k: the c's are
solved for at sample values of the coordinates (parameters stay symbols, so constants such as
Gödel's scale survive), and the identity is then verified symbolically with the project's zero
test. Only a recognition that follows from invariant data is named: abelian, so(3), sl(2,ℝ)
(via the Killing form's signature, Cartan's criterion), and their sums with a centre ℝ.
"""

from __future__ import annotations

import time
from collections.abc import Sequence
from dataclasses import dataclass

import sympy

from generator.geometry.exactvalues import vanishes
from generator.geometry.sampling import CIRCULAR, entry_points, through_sin_cos
from generator.model import Spacetime

MAX_BASIS = 10
SECONDS = 20.0  # CPU budget of the bracket table
MAX_NAMED = 7  # the names below need the Killing form's eigenvalues: small algebras only
Structure = tuple[tuple[int, int, tuple[sympy.Expr, ...]], ...]


def commutator(x: Sequence[sympy.Expr], y: Sequence[sympy.Expr],
               coordinates: Sequence[sympy.Symbol]) -> list[sympy.Expr]:
    n = len(coordinates)
    return [sympy.together(sum(x[b] * sympy.diff(y[a], coordinates[b])
                               - y[b] * sympy.diff(x[a], coordinates[b]) for b in range(n)))
            for a in range(n)]


def _coordinate_values(spacetime: Spacetime, count: int, angles: Sequence[sympy.Symbol]
                       ) -> list[dict]:
    """Sample points with the parameters left out (the constants may depend on them); every
    coordinate inside a circular function gets a rational point of the unit circle, so that
    sin² + cos² = 1 holds in the numbers the solver sees."""
    parameters = set(spacetime.parameters)
    out = []
    for k, point in enumerate(entry_points(spacetime, count)):
        values = {key: v for key, v in point.items() if key not in parameters}
        for j, x in enumerate(angles):
            if sympy.sin(x) not in values:
                q = sympy.Rational(2 + k + j, 7 + 3 * k)
                values[sympy.sin(x)] = 2 * q / (1 + q**2)
                values[sympy.cos(x)] = (1 - q**2) / (1 + q**2)
                values[x] = 2 * sympy.atan(q)
        out.append(values)
    return out


def _angles(exprs: Sequence[sympy.Expr], spacetime: Spacetime) -> list[sympy.Symbol]:
    found = set()
    for e in exprs:
        for f in e.atoms(*CIRCULAR):
            found |= f.free_symbols & set(spacetime.coordinates)
    return sorted(found, key=str)


@dataclass(frozen=True)
class GenericCircular:
    """Circular functions of arguments other than a whole multiple of one coordinate (such as
    cos((1 − 4μ)φ) for a conical deficit), each argument's sin and cos replaced by a pair of
    symbols. Substituting the angle's sample value into such a function leaves a transcendental
    function of the parameters, on which the linear solve crawls (minutes for one bracket of
    the cosmic string); as functions of the coordinates these pairs are independent of the
    other atoms, so each gets its own rational point of the unit circle instead. The solution
    is still verified symbolically, so a bad choice can only withdraw a bracket."""

    replacements: dict[sympy.Expr, sympy.Expr]
    pairs: tuple[tuple[sympy.Symbol, sympy.Symbol], ...]


def _generic_circular(exprs: Sequence[sympy.Expr], spacetime: Spacetime) -> GenericCircular:
    coordinates = set(spacetime.coordinates)
    arguments = set()
    for e in exprs:
        for f in e.atoms(*CIRCULAR):
            argument = f.args[0]
            coeff, unit = argument.as_coeff_Mul()
            plain = unit in coordinates and coeff.is_Integer
            if not plain and argument.free_symbols & coordinates:
                arguments.add(argument)
    replacements: dict[sympy.Expr, sympy.Expr] = {}
    pairs = []
    for k, argument in enumerate(sorted(arguments, key=sympy.default_sort_key)):
        s, c = sympy.Dummy(f"sin{k}"), sympy.Dummy(f"cos{k}")
        pairs.append((s, c))
        replacements.update({sympy.sin(argument): s, sympy.cos(argument): c,
                             sympy.tan(argument): s / c, sympy.cot(argument): c / s,
                             sympy.sec(argument): 1 / c, sympy.csc(argument): 1 / s})
    return GenericCircular(replacements, tuple(pairs))


def _unit_circle_values(generic: GenericCircular, point: int) -> dict[sympy.Symbol, sympy.Expr]:
    values = {}
    for j, (s, c) in enumerate(generic.pairs):
        q = sympy.Rational(3 + point + 2 * j, 11 + 5 * point)
        values[s], values[c] = 2 * q / (1 + q**2), (1 - q**2) / (1 + q**2)
    return values


def expand_in_basis(target: Sequence[sympy.Expr], basis: Sequence[Sequence[sympy.Expr]],
                    spacetime: Spacetime) -> tuple[sympy.Expr, ...] | None:
    """Constants c_k with target = Σ c_k basis_k, verified; None when there are none."""
    if all(t == 0 for t in target):
        return tuple(sympy.Integer(0) for _ in basis)
    unknowns = sympy.symbols(f"c0:{len(basis)}")
    equations = []
    everything = [*target, *(v for b in basis for v in b)]
    angles = _angles(everything, spacetime)
    generic = _generic_circular(everything, spacetime)
    for k, values in enumerate(_coordinate_values(spacetime, 4, angles)):
        values = {**values, **_unit_circle_values(generic, k)}
        for a in range(len(target)):
            combination = sum(c * b[a] for c, b in zip(unknowns, basis, strict=True))
            difference = through_sin_cos(combination - target[a], tuple(angles))
            # In lowest terms: a coefficient that is zero only after cancelling (such as
            # −16μ² + (4μ − 1)(4μ + 1) + 1) made SymPy's linear solver divide by zero.
            equation = sympy.cancel(difference.xreplace(generic.replacements).xreplace(values))
            if equation != 0:
                equations.append(equation)
    solutions = sympy.linsolve(equations, unknowns)
    if not solutions:
        return None
    solution = next(iter(solutions))
    if any(s.free_symbols & set(unknowns) for s in solution):
        return None
    coefficients = tuple(sympy.cancel(s) for s in solution)
    if coefficients and any(c.free_symbols & set(spacetime.coordinates) for c in coefficients):
        return None
    for a in range(len(target)):
        residual = target[a] - sum(c * b[a] for c, b in zip(coefficients, basis, strict=True))
        if vanishes(residual, spacetime).equal is not True:
            return None
    return coefficients


def structure(spacetime: Spacetime, basis: Sequence[Sequence[sympy.Expr]], complete: bool,
              seconds: float = SECONDS) -> tuple[Structure, str | None]:
    """The nonzero brackets [X_i, X_j] = c^k X_k (i < j) of a basis that closes, and a name
    for the algebra when the basis is complete and the algebra is one of the plain cases.
    Nothing (no brackets, no name) when the CPU budget ``seconds`` runs out: vectors found by
    the search can make the symbolic expansions slow, and a partial table is not shown."""
    if not basis or len(basis) > MAX_BASIS:
        return (), None
    deadline = time.process_time() + seconds
    out = []
    for i in range(len(basis)):
        for j in range(i + 1, len(basis)):
            if time.process_time() > deadline:
                return (), None
            bracket = commutator(basis[i], basis[j], spacetime.coordinates)
            coefficients = expand_in_basis(bracket, basis, spacetime)
            if coefficients is None:
                return (), None  # the listed vectors do not close into an algebra
            if any(c != 0 for c in coefficients):
                out.append((i, j, coefficients))
    return tuple(out), (recognise(tuple(out), len(basis)) if complete else None)


def recognise(brackets: Structure, d: int) -> str | None:
    if not brackets:
        return f"abelian ℝ^{d}" if d > 1 else "ℝ"
    c = [[[sympy.Integer(0)] * d for _ in range(d)] for _ in range(d)]
    for i, j, coefficients in brackets:
        for k, value in enumerate(coefficients):
            c[i][j][k], c[j][i][k] = value, -value
    ad = [sympy.Matrix(d, d, lambda k, j, i=i: c[i][j][k]) for i in range(d)]
    killing = sympy.Matrix(d, d, lambda i, j: (ad[i] * ad[j]).trace())
    centre = sympy.Matrix(d * d, d, lambda r, i: c[i][r // d][r % d]).nullspace()
    derived = sympy.Matrix([[v for v in coefficients] for _, _, coefficients in brackets]).rank()
    if killing.free_symbols or d > MAX_NAMED:
        return None
    eigen = [e for e, m in killing.eigenvals().items() for _ in range(m)]
    negative = sum(1 for e in eigen if e < 0)
    positive = sum(1 for e in eigen if e > 0)
    centre_dimension = len(centre)
    if derived + centre_dimension != d or negative + positive != derived:
        return None  # not a semisimple part plus a centre: left unnamed
    if derived == 3:
        name = "so(3)" if negative == 3 else "sl(2,ℝ)" if positive == 2 else None
    elif derived == 6 and negative == 6:
        name = "so(4)"
    else:
        name = None
    if name is None or centre_dimension == 0:
        return name
    return f"{name} ⊕ ℝ" + (f"^{centre_dimension}" if centre_dimension > 1 else "")
