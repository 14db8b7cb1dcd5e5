"""A found Killing vector in the form a reader expects: divided by its content, with a positive
leading coefficient and rotation rates written the way round they tend to 1.

A Killing vector times a non-zero constant is again one, so the scale the linear solver hands
back is arbitrary, and it shows: the conical-deficit string's translations came out as
(4μ − 1)/(4μ) cos(φ(4μ − 1)) ∂_r − sin(φ(4μ − 1))/(4μ r) ∂_φ. Here every term of every
component is split into a parameter coefficient (a rational function of the entry's
parameters and their radicals) and the rest; the vector is divided by the content — the gcd
of the coefficients' numerators over the lcm of their denominators, integer content included —
so the coefficients become coprime polynomials with integer coefficients. The sign is chosen
so that the first term's coefficient is positive for small parameters (the sign of its
lowest-degree term: (1 − 4μ), not (4μ − 1)), and a rate k in cos(kx), sin(kx) is written
with that same sign convention (cos((1 − 4μ)φ), the identity sin(−a) = −sin a applied
exactly). The result, (1 − 4μ) cos((1 − 4μ)φ) ∂_r − sin((1 − 4μ)φ)/r ∂_φ, is the translation
of the flat chart φ′ = (1 − 4μ)φ up to its constant factor.

Only exact identities and multiplication by a constant are used; the caller verifies the
normalised vector by Killing's equation in exactly the form returned, so a slip here can
cost a vector, never publish a wrong one.
"""

from __future__ import annotations

from collections.abc import Sequence

import sympy

TRIG = (sympy.sin, sympy.cos)


def normalised(components: Sequence[sympy.Expr], coordinates: Sequence[sympy.Symbol]
               ) -> list[sympy.Expr]:
    """The vector divided by its content, sign fixed, rates written with the small-parameter
    sign (module docstring); the zero vector is returned unchanged."""
    coordinate_set = set(coordinates)
    split = [_grouped(_rates_positive(c, coordinate_set), coordinate_set) if c != 0 else []
             for c in components]
    coefficients = [coefficient for terms in split for coefficient, _ in terms]
    if not coefficients:
        return list(components)
    content = _content(coefficients)
    if content == 0:
        return list(components)
    first = sympy.cancel(coefficients[0] / content)
    if _small_parameter_sign(first) < 0:
        content = -content
    out = []
    for terms in split:
        value = sympy.Add(*(sympy.cancel(coefficient / content) * rest
                            for coefficient, rest in terms))
        out.append(_tidy(value))
    return out


def _grouped(component: sympy.Expr, coordinates: set) -> list[tuple[sympy.Expr, sympy.Expr]]:
    """(parameter coefficient, function of the coordinates) pairs, one per distinct function:
    (1 − 16μ²) z sin(kφ) is one term with coefficient 1 − 16μ², not two. Expanded without
    entering function arguments, so that a rate's sign stays as written."""
    out: dict[sympy.Expr, sympy.Expr] = {}
    for term in sympy.Add.make_args(sympy.expand(component, deep=False)):
        coefficient, rest = _split(term, coordinates)
        out[rest] = out.get(rest, sympy.Integer(0)) + coefficient
    return [(sympy.factor(c), rest) for rest, c in out.items() if sympy.expand(c) != 0]


def _split(term: sympy.Expr, coordinates: set) -> tuple[sympy.Expr, sympy.Expr]:
    """(parameter coefficient, the rest) of one product term."""
    coefficient, rest = [], []
    for factor in sympy.Mul.make_args(term):
        (rest if factor.free_symbols & coordinates or factor.atoms(sympy.Function)
         else coefficient).append(factor)
    return sympy.Mul(*coefficient), sympy.Mul(*rest)


def _content(coefficients: Sequence[sympy.Expr]) -> sympy.Expr:
    """gcd of the numerators over lcm of the denominators, the rational content included."""
    fractions = [sympy.fraction(sympy.cancel(sympy.together(c))) for c in coefficients]
    numerators = [num for num, _ in fractions]
    denominators = [den for _, den in fractions]
    numerator = sympy.gcd_list(numerators) if len(numerators) > 1 else numerators[0]
    denominator = sympy.lcm_list(denominators) if len(denominators) > 1 else denominators[0]
    numerator = numerator * _rational_content(numerators) / _rational_content([numerator])
    return sympy.cancel(numerator / denominator)


def _rational_content(polynomials: Sequence[sympy.Expr]) -> sympy.Rational:
    """The positive rational gcd of all numeric coefficients (1 for no numbers)."""
    numbers: list[sympy.Rational] = []
    for p in polynomials:
        for term in sympy.Add.make_args(sympy.expand(p, deep=False)):
            number, _ = term.as_coeff_Mul()
            if number.is_Rational and number != 0:
                numbers.append(abs(number))
    if not numbers:
        return sympy.Integer(1)
    out = numbers[0]
    for q in numbers[1:]:
        out = sympy.Rational(sympy.igcd(out.p, q.p), sympy.ilcm(out.q, q.q))
    return out


def _small_parameter_sign(coefficient: sympy.Expr) -> int:
    """Sign of the lowest-degree term of the coefficient's numerator (ties: the canonical
    order of terms), over the sign of its denominator's lowest term."""
    num, den = sympy.fraction(sympy.cancel(sympy.together(coefficient)))
    return _lowest_term_sign(num) * _lowest_term_sign(den)


def _lowest_term_sign(polynomial: sympy.Expr) -> int:
    terms = sympy.Add.make_args(sympy.expand(polynomial, deep=False))
    lowest = min(terms, key=lambda t: (_degree(t), sympy.default_sort_key(t)))
    number, _ = lowest.as_coeff_Mul()
    return -1 if number.is_number and number < 0 else 1


def _degree(term: sympy.Expr) -> int:
    try:
        return int(sympy.Poly(term, *sorted(term.free_symbols, key=str)).total_degree()) \
            if term.free_symbols else 0
    except (sympy.PolynomialError, ValueError):
        return 0


def _rates_positive(expr: sympy.Expr, coordinates: set) -> sympy.Expr:
    """cos(kx) → cos(−k x), sin(kx) → −sin(−k x) where the rate k is negative for small
    parameters (exact identities; the argument is built so SymPy keeps its sign)."""
    swaps = {}
    for atom in expr.atoms(*TRIG):
        argument = atom.args[0]
        variables = argument.free_symbols & coordinates
        if len(variables) != 1:
            continue
        x = next(iter(variables))
        rate, rest = argument.as_independent(x, as_Add=False)
        if rest != x or rate.is_number or _small_parameter_sign(rate) > 0:
            continue
        flipped = sympy.Mul(x, sympy.expand(-rate), evaluate=False)
        swaps[atom] = (sympy.cos(flipped) if atom.func is sympy.cos
                       else -sympy.sin(flipped))
    return expr.xreplace(swaps) if swaps else expr


def _tidy(expr: sympy.Expr) -> sympy.Expr:
    """Common factors pulled out (as ``killing_search.tidy``), nothing else."""
    try:
        return sympy.factor_terms(sympy.together(expr))
    except (sympy.PolynomialError, TypeError, ValueError):
        return expr
