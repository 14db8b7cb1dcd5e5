"""Claims about a quantity that sits at an algebraic root: a horizon or orbit radius with no
closed form, kept as the generator h_root of its (irreducible) polynomial P.

Such a claim is written in the entry's own symbols with the radius coordinate standing for
the root (``surface_gravity: (M - Lambda*r**3/3)/r**2`` at r = r_h), or, for the location
itself, as an expression in the coordinate that vanishes there (the defining relation,
``r**3 - 3*r/Lambda + 6*M/Lambda``; any non-zero multiple of P will do). It is decided
exactly in the extension field Q(parameters)[h]/P:

- rational in h on both sides: equal at the root exactly when P divides the numerator of the
  difference (``RootField.equal_at_root``; P is irreducible, so holding at one root means
  holding at all of them);
- a square root on either side (κ = √κ², an area √(C(h))): the squares are compared exactly
  in the same way, and the sign at the numeric root of the first sample parameters decides
  the branch — that last step is a sampled one, and the verdict says so;
- a relation: P divides the numerator of E(h), and E depends on the coordinate (a constant
  expression is never a relation).
"""

from __future__ import annotations

from dataclasses import dataclass

import mpmath
import sympy

from generator.geometry.algebra import FieldRequest, Frac, NotInField, build_field
from generator.geometry.sampling import entry_points, numeric_value
from generator.model import Spacetime
from generator.physics.rootfield import RootField

DIGITS = 30


@dataclass(frozen=True)
class RootDecision:
    """equal: True / False (decided) or None (not decided here); method as in Decision."""

    equal: bool | None
    method: str
    detail: str


def root_fracs(spacetime: Spacetime, x_index: int, polynomial: sympy.Expr, h: sympy.Symbol,
               expressions: tuple[sympy.Expr, ...]) -> tuple[RootField, list[Frac]]:
    """The metric-free field of the parameters, the coordinates and h (only what the
    expressions hold), with P and the expressions converted. Raises NotInField."""
    request = FieldRequest(spacetime.coordinates, (*spacetime.parameters, h),
                           spacetime.functions, (polynomial, *expressions), 0)
    field, values = build_field(request)
    x = spacetime.coordinates[x_index]
    x_var = field.index.get(x, field.index[h])
    rf = RootField(field, (), h, field.index[h], x_index, x_var, values[0].num)
    return rf, values[1:]


def has_radical(expr: sympy.Expr) -> bool:
    return any(not p.exp.is_Integer for p in expr.atoms(sympy.Pow))


REFINED_DIGITS = 80  # the root is refined to this many digits before a sign is read


def numeric_at_root(expr: sympy.Expr, spacetime: Spacetime, h: sympy.Symbol,
                    root: str, polynomial: sympy.Expr | None = None) -> mpmath.mpc | None:
    """expr at the first sample parameters and the root (refined from its 20-digit value to
    REFINED_DIGITS when the polynomial is given: a long expression in h_root cancels many
    digits, and a sign read at a rough root could be the wrong one)."""
    point = entry_points(spacetime, 1)
    if not point:
        return None
    values = {p: point[0][p] for p in spacetime.parameters if p in point[0]}
    refined = refine_root(polynomial, h, values, root) if polynomial is not None else None
    values[h] = sympy.Rational(refined if refined is not None else root)
    return numeric_value(expr.xreplace(values), REFINED_DIGITS if refined else DIGITS)


def refine_root(polynomial: sympy.Expr, h: sympy.Symbol, values: dict, root: str
                ) -> str | None:
    """The real root of the polynomial (at the sample parameters) nearest ``root``, to
    REFINED_DIGITS digits; None when there is no real root near it."""
    try:
        coeffs = sympy.Poly(polynomial.xreplace(values), h).all_coeffs()
    except sympy.PolynomialError:
        return None
    with mpmath.workdps(REFINED_DIGITS + 20):
        try:
            found = mpmath.polyroots([mpmath.mpf(sympy.Rational(c).p) / sympy.Rational(c).q
                                      for c in coeffs], maxsteps=400, extraprec=400)
        except (mpmath.libmp.NoConvergence, ZeroDivisionError, ValueError):
            return None
        target = mpmath.mpf(root)
        real = [mpmath.re(r) for r in found
                if abs(mpmath.im(r)) < mpmath.mpf(10) ** -REFINED_DIGITS * (1 + abs(r))]
        if not real:
            return None
        best = min(real, key=lambda r: abs(r - target))
        if abs(best - target) > mpmath.mpf(10) ** -12 * (1 + abs(target)):
            return None
        return mpmath.nstr(best, REFINED_DIGITS)


def decide_at_root(claimed: sympy.Expr, computed: sympy.Expr, spacetime: Spacetime,
                   x_index: int, polynomial: sympy.Expr, h: sympy.Symbol,
                   root: str) -> RootDecision:
    """Is the claim (written in the coordinate, which stands for the root) equal to the
    computed value (written in h) at the root?"""
    x = spacetime.coordinates[x_index]
    claim_h = claimed.xreplace({x: h})
    if not has_radical(claim_h) and not has_radical(computed):
        return exact_at_root(claim_h, computed, spacetime, x_index, polynomial, h)
    squares = exact_at_root(claim_h**2, computed**2, spacetime,
                            x_index, polynomial, h, radicals_allowed=False)
    if squares.equal is not True:
        return squares if squares.equal is None else RootDecision(
            False, "exact", "the squares differ at the root (exact, modulo its polynomial)")
    left = numeric_at_root(claim_h, spacetime, h, root, polynomial)
    right = numeric_at_root(computed, spacetime, h, root, polynomial)
    if left is None or right is None or not (mpmath.isfinite(left) and mpmath.isfinite(right)):
        return RootDecision(None, "failed", "the sign at the sample root could not be read")
    tiny = mpmath.mpf(10) ** (10 - DIGITS)
    if abs(left.imag) > tiny * (1 + abs(left)) or abs(right.imag) > tiny * (1 + abs(right)):
        return RootDecision(None, "failed", "not real at the sample root")
    same = (left.real > 0) == (right.real > 0) and abs(left.real) > tiny
    if not same:
        return RootDecision(False, "sampled", "equal squares but opposite signs at the root "
                                              "of the first sample parameters")
    return RootDecision(True, "sampled", "squares equal at the root (exact, modulo its "
                                         "polynomial); sign compared at the root of the first "
                                         "sample parameters")


def exact_at_root(claim_h: sympy.Expr, computed: sympy.Expr, spacetime: Spacetime,
                  x_index: int, polynomial: sympy.Expr, h: sympy.Symbol,
                  radicals_allowed: bool = True) -> RootDecision:
    if not radicals_allowed and (has_radical(claim_h) or has_radical(computed)):
        return RootDecision(None, "failed", "a square root remains after squaring")
    try:
        rf, (left, right) = root_fracs(spacetime, x_index, polynomial, h, (claim_h, computed))
    except (NotInField, ZeroDivisionError, KeyError) as exc:
        return RootDecision(None, "failed", f"outside the exact field ({type(exc).__name__})")
    if rf.vanishes(left.den) or rf.vanishes(right.den):
        return RootDecision(None, "failed", "a denominator vanishes at the root")
    if rf.equal_at_root(left, right):
        return RootDecision(True, "exact", "equal at the root (exact, modulo its polynomial)")
    return RootDecision(False, "exact", "different at the root (exact: the root's polynomial "
                                        "does not divide the difference)")


def relation_at_root(claimed: sympy.Expr, spacetime: Spacetime, x_index: int,
                     polynomial: sympy.Expr, h: sympy.Symbol) -> RootDecision:
    """Does the claimed relation E(x) = 0 hold at the root (P divides E's numerator)?"""
    x = spacetime.coordinates[x_index]
    if not claimed.has(x):
        return RootDecision(False, "exact", f"at a root without closed form the location is "
                                            f"claimed as an expression in {x} that vanishes "
                                            "there (its defining relation)")
    if has_radical(claimed):
        return RootDecision(None, "failed", "a relation with square roots is not read here")
    try:
        rf, (value,) = root_fracs(spacetime, x_index, polynomial, h, (claimed.xreplace({x: h}),))
    except (NotInField, ZeroDivisionError, KeyError) as exc:
        return RootDecision(None, "failed", f"outside the exact field ({type(exc).__name__})")
    if value.is_zero():
        return RootDecision(False, "exact", "the relation is identically zero")
    if rf.vanishes(value.den):
        return RootDecision(None, "failed", "its denominator vanishes at the root")
    if rf.vanishes(value.num):
        return RootDecision(True, "exact", "the root's polynomial divides the claimed relation "
                                           "(exact)")
    return RootDecision(False, "exact", "the claimed relation does not vanish at the root (the "
                                        "root's polynomial does not divide it)")
