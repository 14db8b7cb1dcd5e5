"""Exact shortcuts for the heaviest checks of a declared structure, in the rational-function
field of ``geometry.algebra`` instead of SymPy trees.

The checks of a Maxwell source (F_ab from the potential, ∇_a F^ab, T_ab and the field
equations) and of a rank-2 Killing tensor (∇_(a K_bc)) were written with SymPy matrices: every
product and derivative grew a SymPy tree, and every component then went through a separate
zero test that rebuilt a field from that tree. Here the metric, the declared data and the
curvature the check compares with are read into ONE field, every intermediate quantity is a
reduced fraction of polynomials, and a component is zero exactly when its normal form is.

Only "everything vanishes" is decided here: a zero normal form is a proof (the field's
arithmetic is a homomorphism onto functions), the same proof ``equality.decide_zero`` gives
first. Anything else — a non-zero component, an expression outside the field, a budget
reached — returns None and the caller runs its SymPy path, which names the failing
components, finds witness points and splits cases exactly as before. So the verdicts and
messages of a failing check are unchanged, and a passing check is decided by the same kind of
proof, only once per field instead of once per component.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import sympy

from generator.errors import BudgetExceeded
from generator.geometry import decisions
from generator.geometry.algebra import FieldRequest, Frac, NotInField, build_field
from generator.geometry.curvature import (
    Budget,
    DegenerateMetric,
    FieldArithmetic,
    Limits,
    christoffel_symbols,
    inverse_matrix,
)
from generator.model import Spacetime


@dataclass(frozen=True)
class FieldForms:
    """The metric and some further expressions as elements of one field."""

    ar: FieldArithmetic
    metric: list[list[Frac]]
    extras: list[Frac]


def field_forms(spacetime: Spacetime, extras: Sequence[sympy.Expr], depth: int = 2
                ) -> FieldForms | None:
    """One field holding the metric components and ``extras`` (closed under ``depth``
    derivatives); None when something does not fit the field (the caller's SymPy path runs)."""
    if any(sympy.sympify(e).has(sympy.Subs) for e in extras):
        return None
    n = spacetime.dimension
    entries = tuple(spacetime.metric[a, b] for a in range(n) for b in range(n))
    request = FieldRequest(spacetime.coordinates, spacetime.parameters, spacetime.functions,
                           entries + tuple(sympy.sympify(e) for e in extras), depth)
    try:
        field, values = build_field(request)
    except (NotInField, ZeroDivisionError):
        return None
    metric = [values[a * n:(a + 1) * n] for a in range(n)]
    return FieldForms(FieldArithmetic(field), metric, values[n * n:])


def all_vanish(values: Sequence[Frac]) -> bool:
    """True when every value's normal form is zero; each such zero is an exact decision and is
    recorded as one in the active decision log (as ``equality.decide_zero`` records it)."""
    if not all(v.is_zero() for v in values):
        return False
    decisions.record("exact")
    return True


def _dot(ar: FieldArithmetic, xs: Sequence[Frac], ys: Sequence[Frac]) -> Frac:
    return ar.sum([ar.product(x, y) for x, y in zip(xs, ys, strict=True)])


# ---------------------------------------------------------------------------- Maxwell


@dataclass(frozen=True)
class MaxwellResult:
    """A Maxwell source that satisfies all its equations, with T_ab in display form."""

    stress: sympy.Matrix


def exact_electrovacuum(spacetime: Spacetime, einstein: sympy.Matrix,
                        potential: Sequence[sympy.Expr], cosmological_constant: sympy.Expr | None
                        ) -> MaxwellResult | None:
    """Maxwell's equations ∇_a F^ab = 0 and G_ab + Λ g_ab = 8π T_ab with
    T_ab = (F_ac F_b^c − ¼ g_ab F_cd F^cd)/4π (Gaussian units, as ``matter.maxwell_stress``),
    all decided in one field. The result when every component vanishes, None otherwise."""
    n = spacetime.dimension
    lam = cosmological_constant if cosmological_constant is not None else sympy.Integer(0)
    upper = [(a, b) for a in range(n) for b in range(a, n)]
    forms = field_forms(spacetime, [*potential, *(einstein[a, b] for a, b in upper), lam])
    if forms is None:
        return None
    ar, g = forms.ar, forms.metric
    A, G, Lam = forms.extras[:n], forms.extras[n:-1], forms.extras[-1]
    try:
        ginv = inverse_matrix(ar, g, Budget.start(Limits()))
        return _maxwell(ar, g, ginv, A, dict(zip(upper, G, strict=True)), Lam, n)
    except (BudgetExceeded, DegenerateMetric, NotInField, ZeroDivisionError):
        return None


def _maxwell(ar: FieldArithmetic, g: list[list[Frac]], ginv: list[list[Frac]], A: list[Frac],
             G: dict[tuple[int, int], Frac], Lam: Frac, n: int) -> MaxwellResult | None:
    f = ar.field
    F = [[f.sub(f.diff(A[b], a), f.diff(A[a], b)) for b in range(n)] for a in range(n)]
    # F_a^c = F_ad g^dc and F^ab = g^ac F_c^b
    mixed = [[_dot(ar, F[a], [ginv[d][c] for d in range(n)]) for c in range(n)]
             for a in range(n)]
    up = [[_dot(ar, ginv[a], [mixed[c][b] for c in range(n)]) for b in range(n)]
          for a in range(n)]
    # Γ^a_ac = ½ g^ad ∂_c g_ad (equal to ∂_c(det g)/(2 det g), the SymPy path's form)
    half = sympy.Rational(1, 2)
    trace_gamma = [ar.scale(ar.sum([ar.product(ginv[a][d], f.diff(g[a][d], c))
                                    for a in range(n) for d in range(n)]), half)
                   for c in range(n)]
    divergence = [ar.sum([f.diff(up[a][b], a) for a in range(n)]
                         + [ar.product(trace_gamma[a], up[a][b]) for a in range(n)])
                  for b in range(n)]
    if not all_vanish(divergence):
        return None
    invariant = ar.sum([ar.product(F[c][d], up[c][d]) for c in range(n) for d in range(n)])
    quarter = ar.scale(invariant, sympy.Rational(-1, 4))
    # 4π T_ab = F_ac F_b^c − ¼ g_ab F_cd F^cd
    four_pi_t = {(a, b): ar.sum([_dot(ar, F[a], mixed[b]), ar.product(g[a][b], quarter)])
                 for a, b in G}
    residual = [ar.sum([G[a, b], ar.product(Lam, g[a][b]), ar.scale(four_pi_t[a, b], -2)])
                for a, b in G]
    if not all_vanish(residual):
        return None
    shown = {key: ar.display(value) for key, value in four_pi_t.items()}
    stress = sympy.Matrix(n, n, lambda a, b: shown[min(a, b), max(a, b)] / (4 * sympy.pi))
    return MaxwellResult(stress)


# ---------------------------------------------------------------------------- Killing tensors


def killing_tensor_vanishes(spacetime: Spacetime, components: Sequence[Sequence[sympy.Expr]]
                            ) -> bool:
    """True when ∇_a K_bc + ∇_b K_ca + ∇_c K_ab = 0 for every a ≤ b ≤ c, decided in one field
    (∇_a K_bc = ∂_a K_bc − Γ^d_ab K_dc − Γ^d_ac K_bd). False means only "not shown here"."""
    n = spacetime.dimension
    flat = [components[a][b] for a in range(n) for b in range(n)]
    forms = field_forms(spacetime, flat, depth=1)
    if forms is None:
        return False
    ar, g = forms.ar, forms.metric
    k = [forms.extras[a * n:(a + 1) * n] for a in range(n)]
    try:
        budget = Budget.start(Limits())
        ginv = inverse_matrix(ar, g, budget)
        _, gamma = christoffel_symbols(ar, g, ginv, budget)
        return _killing_residual_vanishes(ar, gamma, k, n)
    except (BudgetExceeded, DegenerateMetric, NotInField, ZeroDivisionError):
        return False


def _killing_residual_vanishes(ar: FieldArithmetic, gamma: list, k: list[list[Frac]], n: int
                               ) -> bool:
    f = ar.field

    def nabla(a: int, b: int, c: int) -> list[Frac]:
        terms = [f.diff(k[b][c], a)]
        for d in range(n):
            terms.append(ar.scale(ar.product(gamma[d][a][b], k[d][c]), -1))
            terms.append(ar.scale(ar.product(gamma[d][a][c], k[b][d]), -1))
        return terms

    residual = [ar.sum(nabla(a, b, c) + nabla(b, c, a) + nabla(c, a, b))
                for a in range(n) for b in range(a, n) for c in range(b, n)]
    return all_vanish(residual)
