"""Structure constants of a verified Killing basis, and the algebra's name where it is plain.

[X_i, X_j]^a = X_i^b ∂_b X_j^a − X_j^b ∂_b X_i^a is written as Σ_k c_ij^k X_k: the c's are
solved for at sample values of the coordinates (parameters stay symbols, so constants such as
Gödel's scale survive), and the identity is then verified symbolically with the project's zero
test. Square roots of expressions in the coordinates (√(1 − Λr²/3) in de Sitter's static
chart) are handled exactly: each root √P becomes a symbol w with w² = P, every equation is
reduced to degree ≤ 1 in each w and split into the coefficients of the products of the w's
(``RadicalSplit``); a solution of the split equations solves the original ones, and the
result is verified symbolically like any other. The algebra is named by ``lie_identify``
from invariant data only (derived algebra, centre, radical, the Killing form's signature,
the form an abelian ideal's representation preserves); where no name is certain, what is
known is said in words.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import sympy
from sympy.polys.constructor import construct_domain
from sympy.polys.matrices import DomainMatrix
from sympy.polys.polyerrors import BasePolynomialError

from generator.geometry.exactvalues import vanishes
from generator.geometry.sampling import CIRCULAR, entry_points, through_sin_cos
from generator.model import Spacetime
from generator.physics.lie_identify import (
    Identification,
    identify,
    power,
    table_from_brackets,
)

MAX_BASIS = 10
MAX_BASIS_WITH_ROOTS = 7  # roots (√Λ, √(ℓ² − r²)) make SymPy's linear solver work over an
# expression domain: a complete de Sitter basis in the flat slicing took minutes and one in the
# static chart crashed the process (a floating-point exception in its heuristic gcd), so such
# bases get a table only up to this size (a bound on the kind of work)
MAX_OPS = 6000  # operations in the basis's components: beyond, no table (a work bound, not a
# time budget, so that the page is the same on every machine)
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


@dataclass(frozen=True)
class GenericExponentials:
    """Exponentials of the coordinates as symbols: e^{2Ht} at a rational sample time is a
    transcendental number, and SymPy's linear solver then works over an expression domain
    (minutes for de Sitter's flat slicing). Arguments that are rational multiples of one
    another share a symbol E (e^{−2Ht} = E^{−2} when e^{Ht} = E), and E takes a rational
    value of its own at each point: as functions of the coordinates the exponentials are
    algebraically independent of the polynomial and circular atoms, so an identity in the
    coordinates holds for every E. The constants found are verified symbolically."""

    replacements: dict[sympy.Expr, sympy.Expr]
    symbols: tuple[sympy.Symbol, ...]


HYPERBOLIC_FUNCTIONS = (sympy.sinh, sympy.cosh, sympy.tanh, sympy.coth, sympy.sech, sympy.csch)


def _generic_exponentials(exprs: Sequence[sympy.Expr], spacetime: Spacetime
                          ) -> GenericExponentials:
    coordinates = set(spacetime.coordinates)
    kinds = (sympy.exp, *HYPERBOLIC_FUNCTIONS)
    arguments = sorted({f.args[0] for e in exprs for f in sympy.sympify(e).atoms(*kinds)
                        if f.args[0].free_symbols & coordinates}, key=sympy.default_sort_key)
    units: list[sympy.Expr] = []  # one base argument per group of commensurable arguments
    replacements: dict[sympy.Expr, sympy.Expr] = {}
    symbols: list[sympy.Symbol] = []
    for argument in arguments:
        for unit, symbol in zip(units, symbols, strict=True):
            ratio = sympy.cancel(argument / unit)
            if ratio.is_Rational and ratio.q == 1:
                replacements[sympy.exp(argument)] = symbol ** int(ratio)
                break
        else:
            unit = _smallest_unit(argument, arguments)
            symbol = sympy.Dummy(f"E{len(symbols)}", positive=True)
            units.append(unit)
            symbols.append(symbol)
            ratio = sympy.cancel(argument / unit)
            replacements[sympy.exp(argument)] = symbol ** int(ratio)
    for argument in arguments:  # sinh, cosh, tanh through the same symbols
        x = replacements[sympy.exp(argument)]
        replacements[sympy.sinh(argument)] = (x - 1 / x) / 2
        replacements[sympy.cosh(argument)] = (x + 1 / x) / 2
        replacements[sympy.tanh(argument)] = (x - 1 / x) / (x + 1 / x)
        replacements[sympy.coth(argument)] = (x + 1 / x) / (x - 1 / x)
        replacements[sympy.sech(argument)] = 2 / (x + 1 / x)
        replacements[sympy.csch(argument)] = 2 / (x - 1 / x)
    return GenericExponentials(replacements, tuple(symbols))


def _smallest_unit(argument: sympy.Expr, arguments: Sequence[sympy.Expr]) -> sympy.Expr:
    """The argument divided by the lcm of the denominators of its rational ratios to the
    others, so that every commensurable argument is a whole multiple of the unit."""
    denominator = 1
    for other in arguments:
        ratio = sympy.cancel(other / argument)
        if ratio.is_Rational:
            denominator = sympy.ilcm(denominator, ratio.q)
    return argument / denominator


def _exponential_values(generic: GenericExponentials, point: int
                        ) -> dict[sympy.Symbol, sympy.Expr]:
    return {symbol: sympy.Rational(5 + 2 * point + 3 * j, 3 + point + j)
            for j, symbol in enumerate(generic.symbols)}


@dataclass(frozen=True)
class RadicalSplit:
    """Each square root √P of an expression in the coordinates (any odd power P^(k/2)) as a
    symbol w with the relation w² = P. An equation E = 0 is made polynomial in the w's (its
    numerator), reduced with w² = P to degree ≤ 1 in each, and split into the coefficients of
    the products of distinct w's: each coefficient = 0 implies E = 0, so any solution of the
    split system is one of the original (the converse needs the roots to be independent, which
    only matters for finding a solution — the verification that follows decides)."""

    replacements: dict[sympy.Expr, sympy.Expr]
    roots: tuple[tuple[sympy.Symbol, sympy.Expr], ...]  # (w, P)

    def split(self, expr: sympy.Expr) -> list[sympy.Expr]:
        if not self.roots:
            return [expr]
        numerator = sympy.fraction(sympy.together(expr.xreplace(self.replacements)))[0]
        symbols = [w for w, _ in self.roots]
        poly = sympy.Poly(sympy.expand(numerator), *symbols)
        parts: dict[tuple[int, ...], sympy.Expr] = {}
        for exponents, coefficient in poly.terms():
            reduced = tuple(e % 2 for e in exponents)
            factor = sympy.Mul(*(radicand ** (e // 2) for (_, radicand), e
                                 in zip(self.roots, exponents, strict=True)))
            parts[reduced] = parts.get(reduced, sympy.Integer(0)) + coefficient * factor
        return list(parts.values())


def _radical_split(exprs: Sequence[sympy.Expr], spacetime: Spacetime) -> RadicalSplit:
    coordinates = set(spacetime.coordinates)
    bases = set()
    for e in exprs:
        for p in sympy.sympify(e).atoms(sympy.Pow):
            if (p.exp.is_Rational and p.exp.q == 2 and p.base.free_symbols & coordinates):
                bases.add(p.base)
    roots = tuple((sympy.Dummy(f"w{k}"), base)
                  for k, base in enumerate(sorted(bases, key=sympy.default_sort_key)))
    replacements: dict[sympy.Expr, sympy.Expr] = {}
    for e in exprs:
        for p in sympy.sympify(e).atoms(sympy.Pow):
            if p.exp.is_Rational and p.exp.q == 2 and p.base in bases:
                w = next(w for w, base in roots if base == p.base)
                replacements[p] = w ** int(p.exp.p)
    return RadicalSplit(replacements, roots)


@dataclass(frozen=True)
class ParameterSquares:
    """Parameters under square roots written as squares of new positive symbols: with
    Λ = 3s², √Λ·√3/3 is s and e^{−2√3√Λ t/3} is e^{−2st}, so the bracket equations of de
    Sitter's charts have rational coefficients in s instead of algebraic constants (on which
    SymPy's linear solver crawled or crashed). Exact: a positive parameter p equals c·s² for
    s = √(p/c) > 0 (a negative one −c·s²); the constants found are written back through
    s = √(±p/c) and verified in the entry's own terms."""

    substitution: tuple[tuple[sympy.Symbol, sympy.Expr], ...]  # (p, ±c·s²)
    inverse: tuple[tuple[sympy.Symbol, sympy.Expr], ...]  # (s, √(±p/c))

    def forward(self, expr: sympy.Expr) -> sympy.Expr:
        return sympy.sympify(expr).xreplace(dict(self.substitution))

    def back(self, expr: sympy.Expr) -> sympy.Expr:
        return sympy.cancel(sympy.sympify(expr).xreplace(dict(self.inverse)))


def parameter_squares(basis: Sequence[Sequence[sympy.Expr]], spacetime: Spacetime
                      ) -> ParameterSquares | None:
    """The substitution for every parameter of known sign under a square root in the basis;
    the factor c is the number whose root the substitution removes (3 for √3·√Λ), chosen
    from the numeric roots present so that fewest remain. None when no parameter qualifies."""
    coordinates = set(spacetime.coordinates)
    rooted: set[sympy.Symbol] = set()
    numbers: set[sympy.Expr] = set()
    components = [sympy.sympify(c) for xi in basis for c in xi]
    for c in components:
        for p in c.atoms(sympy.Pow):
            if p.exp.is_Rational and p.exp.q == 2:
                if p.base.is_Rational and p.base > 0:
                    numbers.add(p.base)
                elif not p.base.free_symbols & coordinates:
                    rooted |= p.base.free_symbols
    chosen = [p for p in spacetime.parameters if p in rooted
              and (p.is_positive or p.is_negative)]
    if not chosen:
        return None
    best: ParameterSquares | None = None
    best_left = None
    for factor in [sympy.Integer(1), *sorted(numbers, key=sympy.default_sort_key)]:
        squares = _squares_with(chosen, factor)
        left = sum(len([p for p in squares.forward(c).atoms(sympy.Pow)
                        if p.exp.is_Rational and not p.exp.is_Integer
                        and not p.base.free_symbols & coordinates]) for c in components)
        if best_left is None or left < best_left:
            best, best_left = squares, left
    return best


def _squares_with(parameters: Sequence[sympy.Symbol], factor: sympy.Expr) -> ParameterSquares:
    substitution, inverse = [], []
    for k, p in enumerate(parameters):
        s = sympy.Dummy(f"s{k}", positive=True)
        sign = 1 if p.is_positive else -1
        substitution.append((p, sign * factor * s**2))
        inverse.append((s, sympy.sqrt(sign * p / factor)))
    return ParameterSquares(tuple(substitution), tuple(inverse))


def expand_in_basis(target: Sequence[sympy.Expr], basis: Sequence[Sequence[sympy.Expr]],
                    spacetime: Spacetime, squares: ParameterSquares | None = None
                    ) -> tuple[sympy.Expr, ...] | None:
    """Constants c_k with target = Σ c_k basis_k, verified; None when there are none.
    ``squares``: the equations are solved with the parameters under roots written as squares
    (``ParameterSquares``); the constants are mapped back and verified in the entry's terms."""
    if all(t == 0 for t in target):
        return tuple(sympy.Integer(0) for _ in basis)
    original_target, original_basis = target, basis
    if squares is not None:
        target = [squares.forward(t) for t in target]
        basis = [[squares.forward(v) for v in b] for b in basis]
    unknowns = sympy.symbols(f"c0:{len(basis)}")
    equations = []
    everything = [*target, *(v for b in basis for v in b)]
    angles = _angles(everything, spacetime)
    generic = _generic_circular(everything, spacetime)
    exponentials = _generic_exponentials(everything, spacetime)
    radicals = _radical_split(everything, spacetime)
    differences = []
    for a in range(len(target)):
        combination = sum(c * b[a] for c, b in zip(unknowns, basis, strict=True))
        difference = through_sin_cos(combination - target[a], tuple(angles))
        difference = difference.xreplace(generic.replacements)
        differences += radicals.split(difference.xreplace(exponentials.replacements))
    for k, values in enumerate(_coordinate_values(spacetime, 4, angles)):
        values = {**values, **_unit_circle_values(generic, k),
                  **_exponential_values(exponentials, k)}
        for difference in differences:
            # In lowest terms: a coefficient that is zero only after cancelling (such as
            # −16μ² + (4μ − 1)(4μ + 1) + 1) made SymPy's linear solver divide by zero.
            equation = sympy.cancel(difference.xreplace(values))
            if equation != 0:
                equations.append(equation)
    if _higher_numeric_roots(equations):
        raise TableRefused("numbers such as 2^(2/3) in the equations")
    solutions = sympy.linsolve(equations, unknowns)
    if not solutions:
        return None
    solution = next(iter(solutions))
    if any(s.free_symbols & set(unknowns) for s in solution):
        return None
    coefficients = tuple(sympy.cancel(s) for s in solution)
    if squares is not None:
        coefficients = tuple(squares.back(c) for c in coefficients)
    if coefficients and any(c.free_symbols & set(spacetime.coordinates) for c in coefficients):
        return None
    target, basis = original_target, original_basis
    for a in range(len(target)):
        residual = target[a] - sum(c * b[a] for c, b in zip(coefficients, basis, strict=True))
        if vanishes(residual, spacetime).equal is not True:
            return None
    return coefficients


class TableRefused(ArithmeticError):
    """The bracket equations left the kind of field SymPy's linear solver handles quickly."""


def _higher_numeric_roots(equations: Sequence[sympy.Expr]) -> bool:
    """A cube or higher root of a number in the equations (2^(2/3) from a coordinate root at a
    sample point): SymPy's linear solver then builds a primitive element of the number field
    and factors over it, which took minutes for a flat dust universe. Square roots stay (√3
    from de Sitter's √(Λ/3) is common and quick)."""
    return any(p.base.is_number and p.exp.is_Rational and p.exp.q > 2
               for e in equations for p in e.atoms(sympy.Pow))


def structure(spacetime: Spacetime, basis: Sequence[Sequence[sympy.Expr]], complete: bool
              ) -> tuple[Structure, str | None]:
    """The nonzero brackets [X_i, X_j] = c^k X_k (i < j) of a basis that closes, and a name
    for the algebra when the basis is complete and the name is certain (``lie_identify``).
    Nothing (no brackets, no name) for a basis larger than MAX_BASIS vectors or MAX_OPS
    operations: vectors found by the search can make the symbolic expansions slow."""
    if not basis or len(basis) > MAX_BASIS:
        return (), None
    if sum(sympy.count_ops(c) for xi in basis for c in xi) > MAX_OPS:
        return (), None
    if _constant_components(basis, spacetime):
        # [X, Y]^a = X^b ∂_b Y^a − Y^b ∂_b X^a: every derivative is zero, so is every bracket
        return (), (recognise((), len(basis)) if complete else None)
    squares = parameter_squares(basis, spacetime)
    seen = basis if squares is None else [[squares.forward(c) for c in xi] for xi in basis]
    pairs = [(i, j) for i in range(len(basis)) for j in range(i + 1, len(basis))]
    by_jets = expand_by_one_jet(pairs, basis, spacetime, squares)
    # what the jets leave open is solved and verified bracket by bracket, within bounds
    left_open = by_jets is None or any(v is None for v in by_jets.values())
    if left_open and (_roots_of_both_kinds(seen, spacetime) or (
            len(seen) > MAX_BASIS_WITH_ROOTS and (_constant_roots(seen, spacetime)
                                                  or _coordinate_roots(seen, spacetime)))):
        return (), None
    out = []
    for i, j in pairs:
        coefficients = by_jets[i, j] if by_jets is not None else None
        if coefficients is None:
            bracket = commutator(basis[i], basis[j], spacetime.coordinates)
            try:
                coefficients = expand_in_basis(bracket, basis, spacetime, squares)
            except TableRefused:
                return (), None  # a bound on the kind of work, as for MAX_BASIS_WITH_ROOTS
        if coefficients is None:
            return (), None  # the listed vectors do not close into an algebra
        if any(c != 0 for c in coefficients):
            out.append((i, j, coefficients))
    return tuple(out), (recognise(tuple(out), len(basis)) if complete else None)


def _constant_components(basis: Sequence[Sequence[sympy.Expr]], spacetime: Spacetime) -> bool:
    """Every component free of the coordinates (∂_t, ∂_φ, a·∂_t + ∂_φ, …): such fields
    commute, which no jet needs to show."""
    coordinates = set(spacetime.coordinates)
    return all(not sympy.sympify(c).free_symbols & coordinates for xi in basis for c in xi)


def expand_by_one_jet(pairs: Sequence[tuple[int, int]], basis: Sequence[Sequence[sympy.Expr]],
                      spacetime: Spacetime, squares: ParameterSquares | None = None
                      ) -> dict[tuple[int, int], tuple[sympy.Expr, ...] | None] | None:
    """The constants of the brackets [X_i, X_j] (i, j in ``pairs``) of a basis of verified
    Killing vectors, all at once, from jets at one point; None where this way does not apply
    and None for a bracket it leaves open (the caller then solves and verifies that bracket
    with ``expand_in_basis``).

    Why it is exact: a Killing vector is fixed on a connected domain by its value and first
    derivatives at one point (it solves a linear transport equation along every curve), the
    bracket of two Killing vectors is one, and so is Σ c_k X_k for constants c_k. So
    [X_i, X_j] = Σ c_k X_k everywhere as soon as both sides have the same 1-jet at one regular
    point of the domain, and the constants are the unique solution of those n + n² linear
    equations (the basis's 1-jets are independent). The bracket's 1-jet comes from the basis's
    2-jets. At the point, circular functions of the angles take rational values (a rational
    point of the unit circle: an actual point); exponentials and hyperbolic functions of the
    coordinates stay symbols E (``GenericExponentials``), the sine and cosine of any other
    argument become 2u/(1 + u²), (1 − u²)/(1 + u²) in a symbol u, and a bare angle is
    2·atan(q), kept as a symbol of SymPy's: an equation that holds identically in these
    symbols holds at the point's actual values, and constants that depend on them are
    refused. A square root √P of the coordinates is a symbol w with w² = P at the point
    (``_RootTower``: each equation split into the coefficients of the products of the w's).
    One elimination over the field of the parameters and these symbols serves every
    bracket."""
    if squares is not None:
        basis = [[squares.forward(c) for c in xi] for xi in basis]
    n, d = spacetime.dimension, len(basis)
    everything = [c for xi in basis for c in xi]
    roots = _square_roots_of_coordinates(everything, spacetime)
    if roots is None:
        return None  # a cube or higher root of the coordinates
    angles = _angles(everything, spacetime)
    generic = _generic_circular(everything, spacetime)
    exponentials = _generic_exponentials(everything, spacetime)
    point = _coordinate_values(spacetime, 1, angles)[0]
    circle: dict[sympy.Symbol, sympy.Expr] = {}
    halves = [sympy.Dummy(f"u{k}") for k in range(len(generic.pairs))]
    for (s, c), u in zip(generic.pairs, halves, strict=True):
        circle[s], circle[c] = 2 * u / (1 + u**2), (1 - u**2) / (1 + u**2)
    constants = set(spacetime.parameters) | {s for s, _ in (squares.inverse if squares else ())}
    allowed = constants | set(exponentials.symbols) | set(halves) | {w for w, _ in roots}

    def at_point(expr: sympy.Expr) -> sympy.Expr | None:
        return _at_point(_with_root_symbols(expr, roots), tuple(angles),
                         (generic.replacements, exponentials.replacements, point, circle),
                         allowed)

    jets = _two_jets(basis, spacetime.coordinates, at_point)
    radicands = [at_point(radicand) for _, radicand in roots]
    if jets is None or any(r is None or r.free_symbols & {w for w, _ in roots}
                           for r in radicands):
        return None
    table = None
    for numbers in NUMBER_ROOTS:
        table = _reduced_jets(jets, radicands, [w for w, _ in roots], pairs, n, d, numbers)
        if table is not None:
            break
    if table is None:
        return None
    out: dict[tuple[int, int], tuple[sympy.Expr, ...] | None] = {}
    for index, key in enumerate(pairs):
        column = table[:, d + index]
        if any(v != 0 for v in column[d:]):
            out[key] = None  # the bracket's 1-jet is outside the basis's span
            continue
        found = tuple(sympy.cancel(v) for v in column[:d])
        if any(c.free_symbols - constants or c.has(sympy.atan) for c in found):
            # constants depending on the point's symbols (or on its angles 2·atan(q)) are
            # no constants
            out[key] = None
            continue
        if squares is not None:
            found = tuple(squares.back(c) for c in found)
        out[key] = found
    return out


def _reduced_jets(jets: dict[tuple, sympy.Expr], radicands: Sequence[sympy.Expr],
                  symbols: Sequence[sympy.Symbol], pairs: Sequence[tuple[int, int]], n: int,
                  d: int, numbers: str) -> sympy.Matrix | None:
    """The reduced echelon form of [basis 1-jets | bracket 1-jets] (rows split in the root
    symbols), or None unless the basis's d columns are its first pivots. ``numbers`` says
    where square roots of numbers go (``NUMBER_ROOTS``)."""
    keys, flat = list(jets), list(jets.values())
    number_roots: list[tuple[sympy.Symbol, sympy.Expr]] = []
    try:
        if numbers == "tower":
            number_roots = _square_roots_of_numbers(flat)
            if len(number_roots) > MAX_NUMBER_ROOTS:
                return None  # 2^m unknowns per constant: the algebraic field's way instead
            flat = [v.xreplace({root: w for w, root in number_roots}) for v in flat]
        domain, elements = _domain_of(
            [*flat, *radicands, *(root**2 for _, root in number_roots)],
            numbers == "algebraic")
    except (ValueError, TypeError, NotImplementedError, BasePolynomialError, ZeroDivisionError):
        return None
    if domain.is_EX or getattr(domain, "is_EXRAW", False):
        return None
    if not domain.is_FractionField:  # plain numbers: a field of one unused symbol
        ground, domain = domain, domain.frac_field(sympy.Dummy("unused"))
        elements = [domain.convert_from(e, ground) for e in elements]
    value, common = _over_common_denominator(
        dict(zip(keys, elements[: len(flat)], strict=True)), domain)
    zero = domain.field.ring.zero

    def bracket_jet(i: int, j: int) -> list:
        entries = [sum((value[i, b, ()] * value[j, a, (b,)] - value[j, b, ()] * value[i, a, (b,)]
                        for b in range(n)), zero) for a in range(n)]
        for a in range(n):
            for c in range(n):
                entries.append(sum((value[i, b, (c,)] * value[j, a, (b,)]
                                    + value[i, b, ()] * value[j, a, _pair(b, c)]
                                    - value[j, b, (c,)] * value[i, a, (b,)]
                                    - value[j, b, ()] * value[i, a, _pair(b, c)]
                                    for b in range(n)), zero))
        return entries

    def basis_jet(i: int) -> list:
        # times the common denominator once more: the bracket's jets carry it squared
        return [value[i, a, ()] * common for a in range(n)] + [
            value[i, a, (c,)] * common for a in range(n) for c in range(n)]

    # constants c = Σ_S c_S·Π_{v∈S} v over the subsets S of the number roots: unknowns of their
    # own, as the tower's split equations hold no v (√(Λ/3) = s·v/3 with v² = 3)
    multipliers = _products_of_roots(domain, number_roots)
    basis_columns = [[entry * factor for entry in basis_jet(i)]
                     for factor, _ in multipliers for i in range(d)]
    columns = basis_columns + [bracket_jet(i, j) for i, j in pairs]
    rows = [[column[r] for column in columns] for r in range(n + n * n)]
    roots = [*symbols, *(v for v, _ in number_roots)]
    if roots:
        rows = _RootTower(domain, roots, elements[len(flat):]).split_rows(rows)
        if rows is None:
            return None
    one = domain.field.ring.one
    rows = [[domain.field.raw_new(entry, one) for entry in row] for row in rows]
    reduced, pivots = DomainMatrix(rows, (len(rows), len(columns)), domain).rref()
    unknowns = len(basis_columns)
    if tuple(pivots[:unknowns]) != tuple(range(unknowns)):
        return None  # the basis's 1-jets are not independent at the point
    return _constants_and_residuals(reduced.to_Matrix(), multipliers, d, unknowns)


MAX_NUMBER_ROOTS = 3  # distinct square roots of numbers the tower takes in one table


def _products_of_roots(domain, number_roots: Sequence[tuple[sympy.Symbol, sympy.Expr]]
                       ) -> list[tuple[object, sympy.Expr]]:
    """(Π v as a polynomial, Π √k as a number) for every subset of the number roots, the
    empty product first."""
    out = [(domain.field.ring.one, sympy.Integer(1))]
    for v, root in number_roots:
        symbol = domain.from_sympy(v).numer
        out += [(factor * symbol, value * root) for factor, value in out]
    return out


def _constants_and_residuals(reduced: sympy.Matrix, multipliers: Sequence[tuple], d: int,
                             unknowns: int) -> sympy.Matrix:
    """The reduced matrix in the shape ``expand_by_one_jet`` reads, column d + k for the k-th
    bracket: its d constants (Σ_S c_S·Π√k), then the rows that must vanish."""
    brackets = reduced.cols - unknowns
    out = sympy.zeros(d + reduced.rows - unknowns, d + brackets)
    for k in range(brackets):
        column = reduced[:, unknowns + k]
        for i in range(d):
            out[i, d + k] = sum((column[m * d + i] * value
                                 for m, (_, value) in enumerate(multipliers)), sympy.Integer(0))
        for r in range(unknowns, reduced.rows):
            out[d + r - unknowns, d + k] = column[r]
    return out


NUMBER_ROOTS = ("field", "tower", "algebraic")
"""Where the jets' square roots of numbers (√3 from √(Λ/3)) go, tried in this order: SymPy's
own choice of field (quick; it gives up on most roots), symbols v of the root tower with
v² = 3 (plain rational arithmetic), SymPy's algebraic number field (a hundred times slower,
but it also finds constants that hold a root, which the tower's split equations cannot)."""


def _number_roots(values: Sequence[sympy.Expr]) -> list[sympy.Pow]:
    """The powers of rational numbers to a half-integer exponent in ``values`` (√3, 3^(3/2)),
    sorted; NotImplementedError when there are none (nothing to try again with) or a cube or
    higher root occurs (neither the tower nor the algebraic field takes those)."""
    found = sorted({a for v in values for a in v.atoms(sympy.Pow)
                    if a.base.is_Rational and a.exp.is_Rational and not a.exp.is_Integer},
                   key=sympy.default_sort_key)
    if not found:
        raise NotImplementedError("no roots of numbers: nothing to try again with")
    if any(a.exp.q != 2 for a in found):
        raise NotImplementedError("a cube or higher root of a number")
    return found


def _square_roots_of_numbers(values: Sequence[sympy.Expr]
                             ) -> list[tuple[sympy.Symbol, sympy.Expr]]:
    """(v, √k) for each square root of a rational number in ``values``, for the tower (which
    needs the plain √k: a power SymPy left as 3^(3/2) is refused)."""
    found = _number_roots(values)
    if any(a.exp != sympy.S.Half for a in found):
        raise NotImplementedError("a power of a root that SymPy left unsplit")
    return [(sympy.Dummy(f"v{k}"), a) for k, a in enumerate(found)]


def _over_common_denominator(values: dict, domain) -> tuple[dict, object]:
    """The numerators of ``values`` over one common denominator D, and D: the brackets' jets
    are then sums of products of polynomials (SymPy's fraction field cancels a gcd after every
    product, most of the time of a ten-vector table). Both sides of [X_i, X_j] = c^k X_k
    scaled by D² leave the constants as they are."""
    ring = domain.field.ring
    common = ring.one
    for denominator in {v.denom for v in values.values()}:
        common = common.lcm(denominator)
    return {key: v.numer * common.exquo(v.denom) for key, v in values.items()}, common


class _RootTower:
    """Arithmetic modulo w_i² = P_i for the root symbols w_i (``expand_by_one_jet``): a row of
    polynomials is reduced to degree ≤ 1 in each w (P_i = a_i/b_i brings b_i into a factor
    by which the whole row is multiplied, which leaves its equation as it is) and split into
    the coefficients of the products of distinct w's. Equal coefficients imply equal
    elements at the point's actual roots, whatever relations the roots may have besides (the
    converse, needed only to find a solution, fails only when they do, and then the pivots
    come out wrong and the caller's way is taken)."""

    def __init__(self, domain, symbols: Sequence[sympy.Symbol], radicands: Sequence) -> None:
        self.ring = domain.field.ring
        names = list(domain.symbols)
        self.positions = [names.index(w) for w in symbols]
        self.numerators = [r.numer for r in radicands]
        self.denominators = [r.denom for r in radicands]

    def _free_of_roots(self, polynomial) -> bool:
        return all(polynomial.degree(i) <= 0 for i in self.positions)

    def split_row(self, row: list) -> list[list]:
        halves = [max((m[p] // 2 for entry in row for m in entry.monoms()), default=0)
                  for p in self.positions]
        powers: dict[tuple[int, int], object] = {}

        def factor_for(exponents: list[int]):
            factor = self.ring.one
            for k, (position, top) in enumerate(zip(self.positions, halves, strict=True)):
                half = exponents[position] // 2
                key = (k, half)
                if key not in powers:
                    powers[key] = (self.numerators[k] ** half
                                   * self.denominators[k] ** (top - half))
                factor = factor * powers[key]
            return factor

        split = []
        for entry in row:
            parts: dict[tuple[int, ...], object] = {}
            for monomial, coefficient in entry.terms():
                exponents = list(monomial)
                factor = factor_for(exponents)
                pattern = tuple(exponents[p] % 2 for p in self.positions)
                for p in self.positions:
                    exponents[p] = 0
                term = self.ring({tuple(exponents): coefficient}) * factor
                parts[pattern] = parts.get(pattern, self.ring.zero) + term
            split.append(parts)
        patterns = sorted({key for parts in split for key in parts})
        return [[parts.get(key, self.ring.zero) for parts in split] for key in patterns]

    def split_rows(self, rows: list[list]) -> list[list] | None:
        """None when a root stands in a radicand (not reduced here)."""
        if not all(self._free_of_roots(p) for p in (*self.numerators, *self.denominators)):
            return None
        return [split for row in rows for split in self.split_row(row)]


def _square_roots_of_coordinates(exprs: Sequence[sympy.Expr], spacetime: Spacetime
                                 ) -> list[tuple[sympy.Symbol, sympy.Expr]] | None:
    """(w, P) for each square root √P of an expression in the coordinates (any odd power
    P^(k/2)), as the bracket-by-bracket way names them (``_radical_split``); None when a cube
    or higher root of the coordinates occurs."""
    coordinates = set(spacetime.coordinates)
    if any(atom.exp.is_Rational and atom.exp.q > 2 and atom.base.free_symbols & coordinates
           for e in exprs for atom in sympy.sympify(e).atoms(sympy.Pow)):
        return None
    return list(_radical_split(exprs, spacetime).roots)


def _with_root_symbols(expr: sympy.Expr, roots: Sequence[tuple[sympy.Symbol, sympy.Expr]]
                       ) -> sympy.Expr:
    """P^(k/2) written as P^⌊k/2⌋ · w^(k mod 2) for each root (w, P): the roots stand in
    numerators only, to the first power."""
    if not roots:
        return expr
    symbol_of = {radicand: w for w, radicand in roots}

    def rooted(e: sympy.Expr) -> bool:
        return (e.is_Pow and e.base in symbol_of and e.exp.is_Rational and e.exp.q == 2)

    return expr.replace(rooted, lambda e: e.base ** (e.exp.p // 2)
                        * symbol_of[e.base] ** (e.exp.p % 2))


def _domain_of(values: Sequence[sympy.Expr], algebraic: bool):
    """A field holding ``values`` and its elements: SymPy's choice, or with ``algebraic`` the
    square roots of numbers (√3 from √(Λ/3)) in an algebraic field of coefficients, so that
    √3·√3 is 3 (as a generator of its own it is not; slower: gcds over the number field)."""
    if not algebraic:
        return construct_domain(list(values), field=True)
    numbers = _number_roots(values)
    symbols = sorted(set().union(*(v.free_symbols for v in values)), key=str)
    roots = sorted({sympy.sqrt(a.base) for a in numbers}, key=sympy.default_sort_key)
    domain = sympy.QQ.algebraic_field(*roots).frac_field(*symbols)
    return domain, [domain.from_sympy(v) for v in values]


def _pair(b: int, c: int) -> tuple[int, int]:
    return (min(b, c), max(b, c))


def _two_jets(basis: Sequence[Sequence[sympy.Expr]], coordinates: Sequence[sympy.Symbol],
              at_point) -> dict[tuple, sympy.Expr] | None:
    """(vector, component, derivative indices) → the value at the point of that derivative
    (indices () for the value, (b,) and (b, c) with b ≤ c); None if the point is singular."""
    out: dict[tuple, sympy.Expr] = {}
    n = len(coordinates)
    for i, xi in enumerate(basis):
        for a, component in enumerate(xi):
            first = [sympy.diff(component, x) for x in coordinates]
            wanted = {(): component, **{(b,): first[b] for b in range(n)},
                      **{(b, c): sympy.diff(first[b], coordinates[c])
                         for b in range(n) for c in range(b, n)}}
            for key, expr in wanted.items():
                evaluated = at_point(expr)
                if evaluated is None:
                    return None
                out[i, a, key] = evaluated
    return out


def _at_point(expr: sympy.Expr, angles: tuple[sympy.Symbol, ...], replacements: Sequence[dict],
              allowed: set) -> sympy.Expr | None:
    """``expr`` at the point, with the replacements applied in order (see ``
    expand_by_one_jet``); None where the point is singular or a coordinate is left."""
    value = through_sin_cos(sympy.sympify(expr), angles)
    for table in replacements:
        value = value.xreplace(table)
    if value.has(sympy.zoo, sympy.nan, sympy.oo) or value.free_symbols - allowed:
        return None
    return value


def _constant_roots(basis: Sequence[Sequence[sympy.Expr]], spacetime: Spacetime) -> bool:
    """A root of a parameter or a number in a component (√Λ, √3)."""
    coordinates = set(spacetime.coordinates)
    return any(p.exp.is_Rational and not p.exp.is_Integer and not p.base.free_symbols & coordinates
               for xi in basis for c in xi for p in sympy.sympify(c).atoms(sympy.Pow))


def _coordinate_roots(basis: Sequence[Sequence[sympy.Expr]], spacetime: Spacetime) -> bool:
    """A root of an expression in the coordinates in a component (√(1 − kr²))."""
    coordinates = set(spacetime.coordinates)
    return any(p.exp.is_Rational and not p.exp.is_Integer and p.base.free_symbols & coordinates
               for xi in basis for c in xi for p in sympy.sympify(c).atoms(sympy.Pow))


def _roots_of_both_kinds(basis: Sequence[Sequence[sympy.Expr]], spacetime: Spacetime) -> bool:
    """A root of the coordinates together with a root of a parameter or a number (de Sitter's
    static chart: √(1 − Λr²/3) and √3·√Λ): the split equations then keep algebraic constants,
    and SymPy's linear solver over such an expression domain has crashed the process (a
    floating-point exception in its heuristic gcd), so no table is attempted — a bound on the
    kind of work, the same on every machine, and said so on the page."""
    coordinates = set(spacetime.coordinates)
    of_coordinates = of_constants = False
    for xi in basis:
        for c in xi:
            for p in sympy.sympify(c).atoms(sympy.Pow):
                if p.exp.is_Rational and not p.exp.is_Integer:
                    if p.base.free_symbols & coordinates:
                        of_coordinates = True
                    else:
                        of_constants = True
    return of_coordinates and of_constants


def recognise(brackets: Structure, d: int) -> str | None:
    """The algebra's name when the structure constants make it certain (``lie_identify``)."""
    return identification(brackets, d).name


def identification(brackets: Structure, d: int) -> Identification:
    """Name (or None) and what is known of the algebra; a table whose constants keep free
    parameters is not identified."""
    if not brackets:
        return Identification("ℝ" if d == 1 else f"abelian {power('ℝ', d)}",
                              f"abelian, {d}-dimensional")
    table = table_from_brackets(brackets, d)
    if table is None:
        return Identification(None, f"{d}-dimensional; the structure constants depend on the "
                              "parameters, so the algebra is not identified")
    return identify(table)
