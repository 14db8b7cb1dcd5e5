"""Conservative proofs that an expression is nonnegative (or positive) on an entry's domain.

Used for energy conditions, where "holds" must mean *proved*, and by the equality decision to
settle the sign of an ``Abs`` argument or a radicand's factor before splitting into cases. The
method is deliberately simple and sound: every domain bound ``x > e`` is replaced by ``x = e +
s`` with a fresh positive slack ``s`` (so every point of the domain is reached; for a positive
x bounded only through its square, ``x² > e`` gives ``x = √(e + s)``), sin of an angle in (0,
π) by a positive symbol, free functions by symbols with their declared sign and their
derivatives by real symbols. The result must then be a quotient of products of factors that
SymPy's assumption system sees as nonnegative (sums of positive terms, even powers, ...).
Square roots whose radicand is proved positive become positive symbols; a factor u − v with u,
v ≥ 0 made of such roots is then proved through u² − v² = (u − v)(u + v) ≥ 0, where the squares
turn the roots back into their radicands (at most SQUARINGS times in a row). Anything else is
"not proved" — never "false". """

from __future__ import annotations

import functools
from collections.abc import Callable

import sympy

from generator.geometry.polycancel import cancelled_fraction
from generator.geometry.sampling import linear_bound
from generator.model import Spacetime

SIZE_LIMIT = 600  # operations; bigger expressions are not attempted ("not proved")
CANCEL_LIMIT = 250  # operations; larger quotients are not cancelled or factored
RADICAND_LIMIT = 150  # operations in a square root's argument that is examined
SQUARINGS = 2  # u − v ≥ 0 ⇐ u² − v² ≥ 0, applied at most this many times in a row

Roots = dict[sympy.Symbol, sympy.Expr]  # hidden root symbol -> its square


def _assumed_bound(x: sympy.Symbol) -> tuple[str, sympy.Expr, bool] | None:
    """The bound a symbol's own assumption gives (M positive: M > 0)."""
    if x.is_positive:
        return "lower", sympy.Integer(0), True
    if x.is_negative:
        return "upper", sympy.Integer(0), True
    return None


def _slack(name: str, strict: bool) -> sympy.Symbol:
    return sympy.Dummy(f"s_{name}", positive=True) if strict else \
        sympy.Dummy(f"s_{name}", nonnegative=True)


def _is_angle_interval(x: sympy.Symbol, bounds: list[tuple[str, sympy.Expr, bool]]) -> bool:
    lowers = {b for side, b, _ in bounds if side == "lower"}
    uppers = {b for side, b, _ in bounds if side == "upper"}
    return sympy.Integer(0) in lowers and sympy.pi in uppers


def domain_substitution(spacetime: Spacetime) -> list[dict[sympy.Basic, sympy.Expr]]:
    """Substitutions (applied in order) that parametrise a superset-free cover of the domain."""
    steps: list[dict[sympy.Basic, sympy.Expr]] = []
    symbols = list(spacetime.coordinates) + list(spacetime.parameters)
    used: set[sympy.Basic] = set()
    replaced: set[sympy.Basic] = set()
    # bounds that mention other symbols first: x > 2*v is used before v > 0 replaces v
    visits = [(x, True) for x in symbols] + [(x, False) for x in symbols]
    for x, relative in visits:
        if x in replaced:
            continue
        candidates = _usable_bounds(spacetime.domain, linear_bound, x, used, replaced)
        found = [(rel, b) for rel, b in candidates if bool(b[1].free_symbols) == relative]
        assumed = _assumed_bound(x)
        if assumed is not None:  # kept with a domain bound on the other side (never alone)
            candidates.append((sympy.true, assumed))
        if not found:
            squares = [(rel, b) for rel, b in _usable_bounds(
                spacetime.domain, square_lower_bound, x, used, replaced)
                if bool(b[1].free_symbols) == relative]
            if squares:  # x² > b with x > 0: x = √(b + s)
                relation, (_, bound, strict) = squares[0]
                used.add(relation)
                replaced.add(x)
                steps.append({x: sympy.sqrt(bound + _slack(f"{x}_squared", strict))})
            continue
        bounds = [b for _, b in found]
        if _is_angle_interval(x, bounds):
            steps.append({sympy.sin(x): sympy.Dummy(f"sin_{x}", positive=True),
                          sympy.cos(x): sympy.Dummy(f"cos_{x}", real=True)})
            continue
        interval = _open_interval(candidates)
        if interval is not None:
            (low_relation, low), (high_relation, high) = interval
            used.update(r for r in (low_relation, high_relation) if r is not sympy.true)
            replaced.add(x)
            t = sympy.Dummy(f"t_{x}", positive=True)
            steps.append({x: (low + high * t) / (1 + t)})
            continue
        relation, (side, bound, strict) = found[0]
        used.add(relation)
        replaced.add(x)
        slack = _slack(str(x), strict)
        steps.append({x: bound + slack if side == "lower" else bound - slack})
    steps.append(_function_substitution(spacetime))
    return steps


Bound = tuple[str, sympy.Expr, bool]  # side, bound, strict


def _usable_bounds(domain: tuple[sympy.Basic, ...],
                   reader: Callable[[sympy.Basic, sympy.Symbol], Bound | None],
                   x: sympy.Symbol, used: set[sympy.Basic], replaced: set[sympy.Basic]
                   ) -> list[tuple[sympy.Basic, Bound]]:
    """(relation, bound) for the relations not used yet that ``reader`` reads as a bound on
    x in symbols not replaced yet."""
    return [(rel, b) for rel in domain if rel not in used
            and (b := reader(rel, x)) is not None and not b[1].free_symbols & replaced]


@functools.lru_cache(maxsize=2048)
def square_lower_bound(relation: sympy.Basic, x: sympy.Symbol) -> Bound | None:
    """A lower bound on x² from a relation in which a positive x occurs only squared
    (``3*r**2 < Rt**2 - A**2`` bounds Rt² below by A² + 3r²), read as a bound on a stand-in
    for x² by ``linear_bound``. For x > 0 every point with x² ≥ b is x = √(b + s), s ≥ 0,
    so the substitution reaches the whole domain; upper bounds are not used (x = √(b − s)
    would need b − s ≥ 0, which nothing proves). Remembered (a pure function of the
    relation and x; the stand-in for x² never appears in the bound): every proof of an
    entry reads the same domain again, and expanding its relations was half the prover's
    time on a seven-parameter domain."""
    if not x.is_positive or not isinstance(relation, sympy.core.relational.Relational):
        return None
    square = sympy.Dummy(f"{x}_squared", positive=True)
    sides = [sympy.expand(side).subs(x**2, square) for side in (relation.lhs, relation.rhs)]
    if any(side.has(x) for side in sides):
        return None
    bound = linear_bound(sympy.core.relational.Relational(*sides, relation.rel_op), square)
    return bound if bound is not None and bound[0] == "lower" else None


def _open_interval(candidates: list[tuple[sympy.Basic, Bound]]
                   ) -> tuple[tuple[sympy.Basic, sympy.Expr], ...] | None:
    """A strict lower and a strict upper bound of one variable, if the domain gives both.

    Then x = (low + high·t)/(1 + t) with t > 0 runs over exactly low < x < high: a bound on
    each side is kept (x > 0 as well as x < R), where one slack variable would keep one only.
    (With low ≥ high the interval is empty and the substitution only adds points: still sound.)
    Non-strict bounds are left to the one-sided substitution, which reaches the end points.
    """
    lows = [(rel, bound) for rel, (side, bound, strict) in candidates if side == "lower" and strict]
    highs = [(rel, bound) for rel, (side, bound, strict) in candidates
             if side == "upper" and strict]
    return (lows[0], highs[0]) if lows and highs else None


def _function_substitution(spacetime: Spacetime) -> dict[sympy.Basic, sympy.Expr]:
    table: dict[sympy.Basic, sympy.Expr] = {}
    for f in spacetime.functions:
        assumptions = {"positive": True} if f.is_positive else \
            {"nonnegative": True} if f.is_nonnegative else {"real": True}
        table[f] = sympy.Dummy(str(f.func), **assumptions)
    return table


def substitute_domain(expr: sympy.Expr, spacetime: Spacetime) -> tuple[sympy.Expr, Roots]:
    """``expr`` over the parametrised domain, with known-positive roots hidden (and what each
    hidden root squares to)."""
    derivatives = {d: sympy.Dummy(f"d_{i}", real=True)
                   for i, d in enumerate(sorted(expr.atoms(sympy.Derivative), key=str))}
    expr = expr.xreplace(derivatives)
    facts = [difference for relation in spacetime.domain
             if (difference := _positive_side(relation)) is not None]
    for step in domain_substitution(spacetime):
        expr = expr.xreplace(step)
        facts = [fact.xreplace(step) for fact in facts]
    return _hide_known_roots(expr, facts)


def _positive_side(relation: sympy.Basic) -> sympy.Expr | None:
    """``rhs − lhs`` of ``lhs < rhs`` (positive on the domain); None for other relations."""
    if not isinstance(relation, sympy.core.relational.Relational):
        return None
    if relation.rel_op in ("<", "<="):
        return relation.rhs - relation.lhs
    if relation.rel_op in (">", ">="):
        return relation.lhs - relation.rhs
    return None


def _hide_known_roots(expr: sympy.Expr, facts: list[sympy.Expr]) -> tuple[sympy.Expr, Roots]:
    """Write every half-integer power X**(k/2) as X**((k-1)/2) * root(X), with one nonnegative
    symbol root(X) per radicand X known to be nonnegative.

    A radicand is known nonnegative when SymPy's assumptions say so, when it is one of the
    domain's inequalities (``Q**2 < M**2`` makes ``M**2 − Q**2`` positive), or when this
    prover shows it (without squaring). One symbol per radicand lets X**(5/2) and X**(7/2)
    cancel against each other. Forgetting what the root was only enlarges the set of values,
    so proofs stay sound; what each root squares to is kept for the squaring rule.
    """
    table: dict[sympy.Basic, sympy.Expr] = {}
    roots: Roots = {}
    by_radicand: dict[sympy.Expr, sympy.Symbol] = {}
    expanded_facts = [sympy.expand(f) for f in facts]
    for power in sorted(expr.atoms(sympy.Pow), key=sympy.default_sort_key):
        base, exponent = power.as_base_exp()
        if not (exponent.is_Rational and exponent.q == 2):
            continue
        if sympy.count_ops(base) > RADICAND_LIMIT:
            continue
        if base not in by_radicand:
            radicand = sympy.expand(base)
            if (radicand.is_positive or any(radicand == f for f in expanded_facts)
                    or _sign_ok(radicand, True, {}, SQUARINGS)):
                by_radicand[base] = sympy.Dummy("root", positive=True)
            elif radicand.is_nonnegative and exponent > 0:
                by_radicand[base] = sympy.Dummy("root", nonnegative=True)
            else:
                continue
            roots[by_radicand[base]] = base
        table[power] = base ** ((exponent.p - 1) // 2) * by_radicand[base]
    return (expr.xreplace(table) if table else expr), roots


def _restore_squares(expr: sympy.Expr, roots: Roots) -> sympy.Expr:
    """root**k → (its square)**(k // 2) * root**(k % 2) for every hidden root."""
    if not roots:
        return expr
    return expr.replace(
        lambda e: e.is_Pow and e.base in roots and e.exp.is_Integer and e.exp >= 2,
        lambda e: roots[e.base] ** (int(e.exp) // 2) * e.base ** (int(e.exp) % 2))


def _by_squares(factor: sympy.Expr, strict: bool, roots: Roots, depth: int) -> bool:
    """u − v ≥ 0 (> 0) from u, v ≥ 0 and u² − v² ≥ 0 (> 0), since u² − v² = (u − v)(u + v)
    (if u + v = 0 then u = v = 0). The way differences of square roots are compared; only for
    sums holding a hidden root, at most SQUARINGS levels deep."""
    if depth >= SQUARINGS or not factor.is_Add or not factor.free_symbols & set(roots):
        return False
    plus = [t for t in factor.args if t.is_nonnegative]
    minus = [-t for t in factor.args if t.is_nonnegative is not True]
    if not plus or not minus or not all(t.is_nonnegative for t in minus):
        return False
    u, v = sympy.Add(*plus), sympy.Add(*minus)
    squared = _restore_squares(sympy.expand(u**2 - v**2), roots)
    return _sign_ok(squared, strict, roots, depth + 1)


def _factor_sign_ok(factor: sympy.Expr, strict: bool, roots: Roots, depth: int) -> bool:
    base, exponent = factor.as_base_exp()
    if exponent.is_Integer and exponent % 2 == 0 and base.is_real:
        return not strict or base.is_nonzero is True
    for candidate in (factor, sympy.expand(factor)):
        if (candidate.is_positive if strict else candidate.is_nonnegative) is True:
            return True
    return _by_squares(factor, strict, roots, depth)


Sign = tuple[int, bool]  # (+1 or -1, strict): > 0, ≥ 0, < 0 or ≤ 0


def _factor_sign(factor: sympy.Expr, roots: Roots, depth: int) -> Sign | None:
    """The proved sign of one factor, trying positive and negative, strict first."""
    for strict in (True, False):
        for sign, candidate in ((1, factor), (-1, -factor)):
            if _factor_sign_ok(candidate, strict, roots, depth):
                return sign, strict
    return None


def _product_sign(expr: sympy.Expr, roots: Roots, depth: int) -> Sign | None:
    """The proved sign of a product: each factor's sign, multiplied (two negative factors,
    in the numerator and the denominator say, make a positive quotient)."""
    for sign, strict, known in ((1, True, expr.is_positive), (1, False, expr.is_nonnegative),
                                (-1, True, expr.is_negative), (-1, False, expr.is_nonpositive)):
        if known:
            return sign, strict
    if sympy.count_ops(expr) > CANCEL_LIMIT:
        return None
    total, all_strict = 1, True
    for factor in sympy.Mul.make_args(sympy.factor(expr)):
        found = _factor_sign(factor, roots, depth)
        if found is None:
            return None
        total, all_strict = total * found[0], all_strict and found[1]
    return total, all_strict


def _sign_ok(expr: sympy.Expr, strict: bool, roots: Roots, depth: int) -> bool:
    """``expr`` ≥ 0 (> 0) over the substituted domain: a quotient of products of factors of
    proved sign, with a nonzero denominator and an even number of negative factors."""
    found = _quotient_sign(expr, roots, depth)
    return found is not None and found[0] > 0 and (found[1] or not strict)


def _quotient_sign(expr: sympy.Expr, roots: Roots, depth: int) -> Sign | None:
    """The proved sign of a quotient of products of factors of proved sign, with a
    denominator proved nonzero; (1, False) for a numerator that cancels to zero (≥ 0 and
    ≤ 0 both hold)."""
    if sympy.count_ops(expr) > 2 * SIZE_LIMIT:
        return None
    together = sympy.together(expr)
    if sympy.count_ops(together) <= CANCEL_LIMIT:
        numerator, denominator = cancelled_fraction(together)
    else:
        numerator, denominator = sympy.fraction(together)
    if numerator == 0:
        return 1, False
    top = _product_sign(numerator, roots, depth)
    if top is None:
        return None
    bottom = _product_sign(denominator, roots, depth)
    if bottom is None or not bottom[1]:
        return None
    return top[0] * bottom[0], top[1]


def proved_sign(expr: sympy.Expr, spacetime: Spacetime, strict: bool = False) -> int | None:
    """+1 when ``expr`` ≥ 0 (> 0 when ``strict``) is proved on the whole domain, −1 when
    ``−expr`` ≥ 0 (> 0) is, else None — from one substitution and one factoring (``proves_sign``
    asks for the +1 alone): every step of the prover treats −expr as expr
    with the opposite sign (the factors are the same up to the unit −1), so asking for both
    signs need not do the work twice. (Where an expression sits exactly at a size limit,
    −expr counts one operation more; either answer is a proof.)"""
    expr = sympy.sympify(expr)
    if expr == 0:
        return None if strict else 1
    if sympy.count_ops(expr) > SIZE_LIMIT:
        return None
    try:
        substituted, roots = substitute_domain(expr, spacetime)
        found = _quotient_sign(substituted, roots, 0)
    except (sympy.PolynomialError, TypeError, ValueError, NotImplementedError):
        return None
    if found is None or (strict and not found[1]):
        return None
    return found[0]


def proves_sign(expr: sympy.Expr, spacetime: Spacetime, strict: bool = False) -> bool:
    """True only if ``expr`` ≥ 0 (> 0 when ``strict``) is proved on the whole domain."""
    return proved_sign(expr, spacetime, strict) == 1
