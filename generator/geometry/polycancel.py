"""Cancelling a quotient of polynomials with flint's gcd instead of SymPy's.

``sympy.cancel`` spends most of its time in SymPy's own multivariate gcd, written in Python:
Kerr–Newman's energy-condition proofs called it on quotients of a dozen operations at about
18 ms each. Here SymPy only splits the expression into polynomials over the generators it
would use itself (symbols, and any other atom such as π or a root, taken as an independent
variable), and flint finds and divides out their gcd.

Cancelling by a common polynomial factor is an identity of polynomials in independent
variables, so it stays one whatever relations hold between the generators (a root and its
radicand): the quotient returned equals the one given wherever its own denominator is not zero,
as with ``sympy.cancel``. When there is nothing to cancel, the quotient comes back as it was
written (products kept, not expanded), which is cheaper and easier to read for a sign proof.
"""

from __future__ import annotations

import flint
import sympy
from sympy.polys.polyerrors import PolificationFailed, PolynomialError
from sympy.polys.polyutils import parallel_dict_from_expr

Monomials = dict[tuple[int, ...], sympy.Expr]


def cancelled_fraction(expr: sympy.Expr) -> tuple[sympy.Expr, sympy.Expr]:
    """Numerator and denominator of ``expr`` put over one denominator, with their gcd
    divided out. Falls back to ``sympy.cancel`` for what is not a quotient of polynomials
    with rational coefficients (floats, non-commuting symbols)."""
    numerator, denominator = sympy.fraction(sympy.together(expr))
    if numerator.is_number or denominator.is_number:
        return numerator, denominator  # a constant has no factor in common with anything
    split = _rational_monomials(numerator, denominator)
    if split is None:
        return sympy.fraction(sympy.cancel(sympy.together(expr)))
    (top, bottom), gens = split
    context = flint.fmpq_mpoly_ctx.get([f"x{i}" for i in range(len(gens))], "lex")
    top_poly, bottom_poly = _poly(context, top), _poly(context, bottom)
    common = top_poly.gcd(bottom_poly)
    if common.is_constant():
        return numerator, denominator
    return _expr(top_poly / common, gens), _expr(bottom_poly / common, gens)


def _rational_monomials(*exprs: sympy.Expr) -> tuple[list[Monomials], tuple] | None:
    try:
        dicts, gens = parallel_dict_from_expr(list(exprs))
    except (PolificationFailed, PolynomialError):
        return None
    if not gens or any(not c.is_Rational for d in dicts for c in d.values()):
        return None
    return dicts, gens


def _poly(context: flint.fmpq_mpoly_ctx, monomials: Monomials) -> flint.fmpq_mpoly:
    return context.from_dict({m: flint.fmpq(int(c.p), int(c.q)) for m, c in monomials.items()})


def _expr(poly: flint.fmpq_mpoly, gens: tuple) -> sympy.Expr:
    terms = []
    for monomial, coefficient in poly.terms():
        powers = [g**int(e) for g, e in zip(gens, monomial, strict=True) if e]
        terms.append(sympy.Mul(sympy.Rational(int(coefficient.p), int(coefficient.q)), *powers))
    return sympy.Add(*terms)
