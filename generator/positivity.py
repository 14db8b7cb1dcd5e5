"""Conservative proofs that an expression is nonnegative (or positive) on an entry's domain.

Used for energy conditions, where "holds" must mean *proved*. The method is deliberately
simple and sound: every domain bound ``x > e`` is replaced by ``x = e + s`` with a fresh
positive slack ``s`` (so every point of the domain is reached), sin of an angle in (0, π) by a
positive symbol, free functions by symbols with their declared sign and their derivatives by
real symbols. The result must then be a quotient of products of factors that SymPy's
assumption system sees as nonnegative (sums of positive terms, even powers, ...). Anything
else is "not proved" — never "false".
"""

from __future__ import annotations

import sympy

from .model import Spacetime

SIZE_LIMIT = 600  # operations; bigger expressions are not attempted ("not proved")
CANCEL_LIMIT = 250  # operations; larger quotients are not cancelled or factored
RADICAND_LIMIT = 150  # operations in a square root's argument that is examined


def _bound(relation: sympy.Basic, x: sympy.Symbol) -> tuple[str, sympy.Expr, bool] | None:
    """('lower'|'upper', bound, strict) if ``relation`` bounds ``x`` by an x-free expression."""
    if not isinstance(relation, sympy.core.relational.Relational):
        return None
    lhs, rhs, op = relation.lhs, relation.rhs, relation.rel_op
    if lhs == x and not rhs.has(x):
        side = "lower" if op in (">", ">=") else "upper" if op in ("<", "<=") else None
        return (side, rhs, op in ("<", ">")) if side else None
    if rhs == x and not lhs.has(x):
        side = "upper" if op in (">", ">=") else "lower" if op in ("<", "<=") else None
        return (side, lhs, op in ("<", ">")) if side else None
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
        found = [(rel, b) for rel in spacetime.domain if rel not in used
                 and (b := _bound(rel, x)) is not None and not b[1].free_symbols & replaced
                 and bool(b[1].free_symbols) == relative]
        if not found:
            continue
        bounds = [b for _, b in found]
        if _is_angle_interval(x, bounds):
            steps.append({sympy.sin(x): sympy.Dummy(f"sin_{x}", positive=True),
                          sympy.cos(x): sympy.Dummy(f"cos_{x}", real=True)})
            continue
        relation, (side, bound, strict) = found[0]
        used.add(relation)
        replaced.add(x)
        slack = _slack(str(x), strict)
        steps.append({x: bound + slack if side == "lower" else bound - slack})
    steps.append(_function_substitution(spacetime))
    return steps


def _function_substitution(spacetime: Spacetime) -> dict[sympy.Basic, sympy.Expr]:
    table: dict[sympy.Basic, sympy.Expr] = {}
    for f in spacetime.functions:
        assumptions = {"positive": True} if f.is_positive else \
            {"nonnegative": True} if f.is_nonnegative else {"real": True}
        table[f] = sympy.Dummy(str(f.func), **assumptions)
    return table


def apply_substitution(expr: sympy.Expr, spacetime: Spacetime) -> sympy.Expr:
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


def _hide_known_roots(expr: sympy.Expr, facts: list[sympy.Expr]) -> sympy.Expr:
    """Replace square roots of radicands known to be nonnegative by nonnegative symbols.

    A radicand is known nonnegative when SymPy's assumptions say so or when it is one of the
    domain's inequalities (``Q**2 < M**2`` makes ``M**2 − Q**2`` positive). Forgetting what the
    root was only enlarges the set of values, so proofs stay sound.
    """
    table = {}
    expanded_facts = [sympy.expand(f) for f in facts]
    for power in expr.atoms(sympy.Pow):
        base, exponent = power.as_base_exp()
        if not (exponent.is_Rational and exponent.q == 2):
            continue
        if sympy.count_ops(base) > RADICAND_LIMIT:
            continue
        radicand = sympy.expand(base)
        if radicand.is_positive or any(radicand == f for f in expanded_facts):
            table[power] = sympy.Dummy("root", positive=True)
        elif radicand.is_nonnegative and exponent > 0:
            table[power] = sympy.Dummy("root", nonnegative=True)
    return expr.xreplace(table) if table else expr


def _factor_sign_ok(factor: sympy.Expr, strict: bool) -> bool:
    base, exponent = factor.as_base_exp()
    if exponent.is_Integer and exponent % 2 == 0 and base.is_real:
        return not strict or base.is_nonzero is True
    for candidate in (factor, sympy.expand(factor)):
        if (candidate.is_positive if strict else candidate.is_nonnegative) is True:
            return True
    return False


def _product_sign_ok(expr: sympy.Expr, strict: bool) -> bool:
    if (expr.is_positive if strict else expr.is_nonnegative) is True:
        return True
    if sympy.count_ops(expr) > CANCEL_LIMIT:
        return False
    factored = sympy.factor(expr)
    factors = sympy.Mul.make_args(factored)
    return all(_factor_sign_ok(f, strict) for f in factors)


def proves_sign(expr: sympy.Expr, spacetime: Spacetime, strict: bool = False) -> bool:
    """True only if ``expr`` ≥ 0 (> 0 when ``strict``) is proved on the whole domain."""
    expr = sympy.sympify(expr)
    if expr == 0:
        return not strict
    if sympy.count_ops(expr) > SIZE_LIMIT:
        return False
    try:
        substituted = apply_substitution(expr, spacetime)
        if sympy.count_ops(substituted) > 2 * SIZE_LIMIT:
            return False
        together = sympy.together(substituted)
        if sympy.count_ops(together) <= CANCEL_LIMIT:
            together = sympy.cancel(together)
        numerator, denominator = sympy.fraction(together)
        if numerator == 0:
            return not strict
        return _product_sign_ok(numerator, strict) and _product_sign_ok(denominator, True)
    except (sympy.PolynomialError, TypeError, ValueError, NotImplementedError):
        return False
