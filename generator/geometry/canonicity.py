"""When is a non-zero normal form a proof that two expressions differ?

The normal form of ``algebra`` is zero exactly when the expression is zero *in the field
with its relations*; that direction is always sound. The other direction (non-zero normal form
⇒ a non-zero function) holds when the generators that occur are algebraically independent
apart from the relations the field knows, so that the field really is a field of functions:

* coordinates and parameters (real ones; an integer parameter ranges over a discrete set),
  free functions and their derivatives are independent variables;
* at most one of the constants π and e (each transcendental; whether they are algebraically
  independent of each other is not known);
* square roots whose radicands (rational functions of the variables) are multiplicatively
  independent modulo squares (Kummer theory: then each root doubles the degree, and a non-zero
  element has a non-zero norm, so it vanishes only on a thin set whatever branch is taken);
* sin/cos, sinh/cosh and exp of arguments that are rational functions of the coordinates and
  parameters, linearly independent over Q modulo constants, within the circular group and
  within the exponential group (Ax's theorem makes the exponentials algebraically
  independent then).

Anything else (Abs, logarithms, inverse functions, symbolic or higher roots, related radicands
such as √(r(r−2M)) beside √r) makes the form non-canonical: a non-zero normal form is then
only a hint, and the decision goes by cases or by sampling.
"""

from __future__ import annotations

import sympy
from sympy.core.function import AppliedUndef

from generator.geometry.algebra import Frac, RationalField, generators_of

TRIAL_PRIMES = 10**4  # trial division bound when reading a rational radicand's square class
MAX_FACTOR_DIGITS = 24  # a composite cofactor longer than this is not factored: not canonical


def canonical_reason(field: RationalField, value: Frac,
                     parameters: tuple[sympy.Symbol, ...]) -> str | None:
    """None when a non-zero ``value`` is certainly a non-zero function; else why not."""
    used = sorted(generators_of(field, value))
    specs = [field.specs[k] for k in used]
    variables = set(field.coordinates) | set(parameters)
    constants: set[sympy.Basic] = set()
    circular: list[sympy.Expr] = []
    exponential: list[sympy.Expr] = []
    radicands: list[sympy.Expr] = []
    for spec in specs:
        if spec.kind == "parameter" and spec.key.is_integer:
            return f"the integer parameter {spec.key} ranges over a discrete set"
        if spec.kind in ("coordinate", "parameter", "function"):
            continue
        if spec.kind == "constant":
            constants.add(spec.key)
        elif spec.kind == "trig":
            circular.append(spec.key.args[0])
        elif spec.kind == "hyperbolic":
            exponential.append(spec.key.args[0])
        elif spec.kind == "radical" and spec.degree == 2:
            radicands.append(spec.base)
        elif spec.kind == "other" and isinstance(spec.meaning, sympy.exp):
            exponential.append(spec.meaning.args[0])
        else:
            return f"{spec.meaning} is not an independent generator"
    if constants - {sympy.pi} and constants - {sympy.E}:
        return "the constants " + ", ".join(sorted(map(str, constants))) + " occur together"
    for group, args in (("circular", circular), ("exponential", exponential)):
        if not independent_modulo_constants(sorted(set(args), key=sympy.default_sort_key),
                                            variables):
            return f"the {group} functions have related arguments"
    if not independent_square_classes(radicands):
        return "the square roots have related radicands"
    return None


def independent_modulo_constants(args: list[sympy.Expr], variables: set[sympy.Basic]) -> bool:
    """The rational functions ``args`` and 1 are linearly independent over Q."""
    if not args:
        return True
    if any(not a.free_symbols <= variables or a.atoms(sympy.NumberSymbol, AppliedUndef)
           or not a.is_rational_function(*variables) for a in args):
        return False
    gens = sorted(variables, key=str)
    fractions = [sympy.fraction(sympy.cancel(a)) for a in args]
    common = sympy.Integer(1)
    for _, den in fractions:
        common = sympy.lcm(common, den)
    rows = [sympy.Poly(common, *gens)]
    rows += [sympy.Poly(sympy.cancel(num * common / den), *gens) for num, den in fractions]
    monomials = sorted({m for p in rows for m in p.as_dict()})
    matrix = sympy.Matrix([[p.as_dict().get(m, 0) for m in monomials] for p in rows])
    return matrix.rank() == len(rows)


def independent_square_classes(radicands: list[sympy.Expr]) -> bool:
    """No non-empty product of the radicands is a square (of a rational function)."""
    vectors: list[int] = []
    keys: dict[object, int] = {}
    for radicand in radicands:
        classes = square_class(radicand)
        if classes is None:
            return False
        bits = 0
        for key in classes:
            bits |= 1 << keys.setdefault(key, len(keys))
        vectors.append(bits)
    return _gf2_rank(vectors) == len(vectors)


def square_class(radicand: sympy.Expr) -> set[object] | None:
    """The factors of odd multiplicity of a rational function (its class modulo squares):
    irreducible polynomials, primes, and -1; None where this cannot be worked out."""
    radicand = sympy.sympify(radicand)
    symbols = {a: sympy.Dummy() for a in radicand.atoms(AppliedUndef, sympy.Derivative)}
    radicand = radicand.xreplace(symbols)
    if radicand.atoms(sympy.NumberSymbol) or not radicand.is_rational_function():
        return None
    num, den = sympy.fraction(sympy.cancel(radicand))
    if num == 0:
        return None
    try:
        coefficient, factors = sympy.factor_list(sympy.expand(num * den))
    except (sympy.PolynomialError, NotImplementedError):
        return None
    classes: set[object] = {f for f, e in factors if e % 2}
    if not coefficient.is_Rational:
        return None
    if coefficient < 0:
        classes.add("-1")
    for part in (abs(coefficient.p), coefficient.q):
        primes = _odd_primes(int(part))
        if primes is None:
            return None
        classes |= primes
    return classes


def _odd_primes(n: int) -> set[object] | None:
    """The primes of odd multiplicity in n; None when n has a cofactor too large to factor
    quickly (SymPy's factorint can spend minutes on a 40-digit semiprime, and a claim is
    written by a stranger)."""
    odd: set[object] = set()
    for p in sympy.primerange(2, TRIAL_PRIMES):
        if p * p > n:
            break
        exponent = 0
        while n % p == 0:
            n //= p
            exponent += 1
        if exponent % 2:
            odd.add(("prime", int(p)))
    if n == 1:
        return odd
    if sympy.isprime(n):
        return odd | {("prime", int(n))}
    if len(str(n)) > MAX_FACTOR_DIGITS:
        return None
    found = sympy.factorint(n)
    return odd | {("prime", int(p)) for p, e in found.items() if e % 2}


def _gf2_rank(vectors: list[int]) -> int:
    rank, rows = 0, list(vectors)
    while rows:
        pivot = rows.pop()
        if not pivot:
            continue
        rank += 1
        low = pivot & -pivot
        rows = [r ^ pivot if r & low else r for r in rows]
    return rank
