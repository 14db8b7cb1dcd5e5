"""Classify & verify (3/4): Petrov type of the Weyl tensor (4D Lorentzian only).

The decision works on the Weyl tensor as an operator on bivectors, W^[ab]_[cd] = C^ab_cd,
restricted to self-dual bivectors by P = ½(1 − i*). That restriction is the complex symmetric
3×3 "Weyl matrix" Q whose Segre type is the Petrov type (Stephani et al. 2003, §4.2, from
memory); no tetrad and hence no square roots of metric components are needed. With
t2 = tr Q² and t3 = tr Q³ (proportional to the invariants I and J of the Newman–Penrose scalars):

* O: C = 0;   algebraically special ⇔ t2³ = 6 t3²  (⇔ I³ = 27 J²);   otherwise I;
* special with t2 = 0 (so Q nilpotent): N if Q² = 0, else III;
* special with t2 ≠ 0: eigenvalues λ, λ, −2λ with λ = −t3/t2; D if (Q − λ)(Q + 2λ) = 0,
  i.e. t2² Q² − t2 t3 Q − 2 t3² P = 0, else II.

The duality operator carries σ = √(−det g); numbers are kept as pairs (x, y) meaning x + iσy
with x, y free of σ, so each zero test is on expressions with σ² = −det g only. Every test goes
through ``equality.decide_zero``; an undecided test makes the type "undecided" with the reason.

The Newman–Penrose scalars Ψ0..Ψ4 are computed for display in the null tetrad
l, n = (e0 ± e1)/√2, m = (e2 + i e3)/√2 of the Gram–Schmidt frame of the chart.
"""

from __future__ import annotations

import itertools
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field

import sympy

from generator.geometry.algebra import (
    FieldRequest,
    Frac,
    NotInField,
    RationalField,
    build_field,
    pairs,
)
from generator.geometry.curvature import WeylOperator, independent_index
from generator.geometry.equality import canonical_all, nonzero_in_field
from generator.geometry.exactvalues import Point, sign_at, vanishes
from generator.model import Geometry, Index, Spacetime

PAIRS = pairs(4)  # the engine's order of index pairs: its Weyl operator uses it too
PSI_SIZE_LIMIT = 400  # operations in the Weyl components or the frame; beyond: Ψ's not shown


@dataclass(frozen=True)
class PetrovResult:
    type: str | None  # I | II | III | D | N | O | undecided | None (not 4D Lorentzian)
    reason: str
    weyl_scalars: dict[str, sympy.Expr] | None = None
    tests: tuple[str, ...] = field(default=())  # what was decided, in order


Complex = tuple[sympy.Matrix, sympy.Matrix]  # x + iσy, entrywise


class Undecided(Exception):
    """A zero test could not be decided."""


# ---------------------------------------------------------------------------- tensors


def weyl_component(weyl: dict[Index, sympy.Expr]) -> Callable[[int, int, int, int], sympy.Expr]:
    """C_abcd from the independent components (pair antisymmetry and pair exchange)."""

    def get(a: int, b: int, c: int, d: int) -> sympy.Expr:
        found = independent_index(a, b, c, d)
        if found is None:
            return sympy.Integer(0)
        return found[0] * weyl.get(found[1], sympy.Integer(0))

    return get


def bivector_metric(ginv: sympy.Matrix) -> sympy.Matrix:
    """G^[ab][ef] = g^ae g^bf − g^af g^be on ordered pairs."""
    return sympy.Matrix(6, 6, lambda A, E: ginv[PAIRS[A][0], PAIRS[E][0]] * ginv[PAIRS[A][1],
                        PAIRS[E][1]] - ginv[PAIRS[A][0], PAIRS[E][1]] * ginv[PAIRS[A][1],
                        PAIRS[E][0]])


def levi_civita_pairs() -> sympy.Matrix:
    return sympy.Matrix(6, 6, lambda E, B: sympy.LeviCivita(*PAIRS[E], *PAIRS[B]))


def tidy(m: sympy.Matrix) -> sympy.Matrix:
    return m.applyfunc(lambda e: sympy.cancel(sympy.together(e)))


def operators(geometry: Geometry) -> tuple[sympy.Matrix, sympy.Matrix, sympy.Expr]:
    """W (Weyl on bivectors), S̃ (duality without σ) and σ² = −det g."""
    assert geometry.weyl is not None
    C = weyl_component(geometry.weyl)
    lower = sympy.Matrix(6, 6, lambda E, B: C(*PAIRS[E], *PAIRS[B]))
    G2 = bivector_metric(geometry.inverse_metric)
    W = tidy(G2 * lower)
    dual = tidy(G2 * levi_civita_pairs())
    return W, dual, -geometry.metric.det()


def multiply(x: Complex, y: Complex, sigma2: sympy.Expr) -> Complex:
    (a, b), (c, d) = x, y
    return tidy(a * c - sigma2 * (b * d)), tidy(a * d + b * c)


def trace(x: Complex) -> tuple[sympy.Expr, sympy.Expr]:
    return sympy.cancel(x[0].trace()), sympy.cancel(x[1].trace())


def scalar_times(s: tuple[sympy.Expr, sympy.Expr], x: Complex, sigma2: sympy.Expr) -> Complex:
    return multiply((sympy.eye(6) * s[0], sympy.eye(6) * s[1]), x, sigma2)


def number_product(s: tuple[sympy.Expr, sympy.Expr], t: tuple[sympy.Expr, sympy.Expr],
                   sigma2: sympy.Expr) -> tuple[sympy.Expr, sympy.Expr]:
    return (sympy.cancel(s[0] * t[0] - sigma2 * s[1] * t[1]),
            sympy.cancel(s[0] * t[1] + s[1] * t[0]))


# ---------------------------------------------------------------------------- zero tests


def is_zero(values: Sequence[sympy.Expr], spacetime: Spacetime, what: str) -> bool:
    """Every value vanishes (True), one does not (False); raise Undecided otherwise."""
    undecided = False
    for value in values:
        decision = vanishes(value, spacetime)
        if decision.equal is False:
            return False
        if decision.equal is None:
            undecided = True
    if undecided:
        raise Undecided(f"could not decide whether {what} vanishes")
    return True


def entries(x: Complex) -> list[sympy.Expr]:
    return list(x[0]) + list(x[1])


# ---------------------------------------------------------------------------- exact field path


Grid = list[list[Frac]]


class FieldAlgebra:
    """Real 6×6 matrices over the flint rational-function field of ``algebra``.

    Every entry stays a reduced fraction, so a zero normal form is an exact zero. The Weyl
    operator and the duality are sparse for the usual charts, so products skip zero entries.
    """

    def __init__(self, field: RationalField, spacetime: Spacetime) -> None:
        self.f = field
        self.spacetime = spacetime

    def matmul(self, x: Sequence[Sequence[Frac]], y: Sequence[Sequence[Frac]]) -> Grid:
        f, size = self.f, len(x)
        rows = [[(k, v) for k, v in enumerate(row) if not v.is_zero()] for row in x]
        return [[f.sum_of_products([(v, y[k][j]) for k, v in rows[i]]) for j in range(size)]
                for i in range(size)]

    def trace_of_product(self, x: Sequence[Sequence[Frac]], y: Sequence[Sequence[Frac]]
                         ) -> Frac:
        """tr(XY) = Σ X_ij Y_ji without forming XY."""
        size = len(x)
        return self.f.sum_of_products([(x[i][j], y[j][i]) for i in range(size)
                                       for j in range(size)])

    def number(self, s: tuple[Frac, Frac], t: tuple[Frac, Frac], sigma2: Frac
               ) -> tuple[Frac, Frac]:
        """(s₀ + iσs₁)(t₀ + iσt₁) with σ² = sigma2."""
        f = self.f
        return (f.sub(f.mul(s[0], t[0]), f.mul(sigma2, f.mul(s[1], t[1]))),
                f.add(f.mul(s[0], t[1]), f.mul(s[1], t[0])))

    def quotient(self, s: tuple[Frac, Frac], t: tuple[Frac, Frac], sigma2: Frac
                 ) -> tuple[Frac, Frac]:
        """(s₀ + iσs₁)/(t₀ + iσt₁) = ((s₀t₀ + σ²s₁t₁) + iσ(s₁t₀ − s₀t₁))/(t₀² + σ²t₁²).

        The norm t₀² + σ²t₁² vanishes only with t: σ² = −det g is positive on a Lorentzian
        domain, so the two squares cannot cancel (a zero norm raises ZeroDivisionError)."""
        f = self.f
        norm = f.add(f.mul(t[0], t[0]), f.mul(sigma2, f.mul(t[1], t[1])))
        real = f.add(f.mul(s[0], t[0]), f.mul(sigma2, f.mul(s[1], t[1])))
        imaginary = f.sub(f.mul(s[1], t[0]), f.mul(s[0], t[1]))
        inverse = f.inv(norm)
        return f.mul(real, inverse), f.mul(imaginary, inverse)

    def combination(self, terms: Sequence[tuple[Frac, Sequence[Sequence[Frac]]]]) -> Grid:
        """Σ c_k X_k entrywise, for scalar coefficients c_k."""
        f, size = self.f, len(terms[0][1])
        return [[f.sum_of_products([(c, x[i][j]) for c, x in terms]) for j in range(size)]
                for i in range(size)]

    def is_zero(self, values: Sequence[Frac], what: str) -> bool:
        """Zero normal forms are exact zeros; a non-zero one is confirmed by decide_zero."""
        candidates = sorted((v for v in values if not v.is_zero()), key=lambda v: v.size())
        if not candidates:
            return True
        undecided = False
        for value in candidates[:3]:
            if nonzero_in_field(self.f, value, self.spacetime):
                return False
            decision = vanishes(self.f.to_sympy(value), self.spacetime)
            if decision.equal is False:
                return False
            undecided = undecided or decision.equal is None
        if undecided:
            raise Undecided(f"could not decide whether {what} vanishes")
        return is_zero([self.f.to_sympy(v) for v in candidates[3:]], self.spacetime, what)


def field_operators(geometry: Geometry, spacetime: Spacetime) -> WeylOperator:
    """The Weyl operator from the display forms, for a geometry that did not come with one
    (the SymPy engine's, or one built by hand); raises NotInField when it does not fit."""
    assert geometry.weyl is not None
    C = weyl_component(geometry.weyl)
    lower = [C(*PAIRS[E], *PAIRS[B]) for E in range(6) for B in range(6)]
    g2 = list(bivector_metric(geometry.inverse_metric))
    weyl = list(geometry.weyl.values())
    request = FieldRequest(spacetime.coordinates, spacetime.parameters, spacetime.functions,
                           (*lower, *g2, *geometry.metric, *weyl), 0)
    field, values = build_field(request)

    def grid(flat: Sequence[Frac], size: int) -> tuple[tuple[Frac, ...], ...]:
        return tuple(tuple(flat[size * i: size * i + size]) for i in range(size))

    G2 = grid(values[36:72], 6)
    operator = FieldAlgebra(field, spacetime).matmul(G2, grid(values[:36], 6))
    return WeylOperator(field, tuple(values[88:]), tuple(map(tuple, operator)), G2,
                        grid(values[72:88], 4))


def determinant(field: RationalField, m: Sequence[Sequence[Frac]]) -> Frac:
    """Laplace expansion (the metric is at most 4×4 here)."""
    if len(m) == 1:
        return m[0][0]
    terms = []
    for j, entry in enumerate(m[0]):
        if entry.is_zero():
            continue
        minor = [[*row[:j], *row[j + 1:]] for row in m[1:]]
        term = field.mul(entry, determinant(field, minor))
        terms.append(term if j % 2 == 0 else field.neg(term))
    return field.sum(terms)


@dataclass(frozen=True)
class OperatorPowers:
    """What the Petrov test and the Weyl frame both build from the Weyl operator W: the
    duality S̃, σ² = −det g, W², S̃W, and tr Q², tr Q³ as x + iσy."""

    dual: Grid
    sigma2: Frac
    square: Grid
    dual_times: Grid
    t2: tuple[Frac, Frac]
    t3: tuple[Frac, Frac]


# The last operator's powers: the Weyl-frame stage asks for the same traces right after the
# Petrov test of the same entry (an entry's whole Weyl operator is kept alive until the next).
_LAST_POWERS: list[tuple[WeylOperator, OperatorPowers]] = []


def operator_powers(ops: WeylOperator, spacetime: Spacetime) -> OperatorPowers:
    """The products and traces of ``ops``, computed once per operator object."""
    for known, powers in list(_LAST_POWERS):
        if known is ops:
            return powers
    algebra, f = FieldAlgebra(ops.field, spacetime), ops.field
    W = ops.operator
    levi = [[f.const(int(sympy.LeviCivita(*PAIRS[E], *PAIRS[B]))) for B in range(6)]
            for E in range(6)]
    dual = algebra.matmul(ops.bivector, levi)
    sigma2 = f.neg(determinant(f, ops.metric))
    W2, dual_W = algebra.matmul(W, W), algebra.matmul(dual, W)
    half, minus_half = sympy.Rational(1, 2), sympy.Rational(-1, 2)
    t2 = (f.scale(algebra.trace_of_product(W, W), half),
          f.scale(algebra.trace_of_product(dual_W, W), minus_half))
    t3 = (f.scale(algebra.trace_of_product(W2, W), half),
          f.scale(algebra.trace_of_product(dual_W, W2), minus_half))
    powers = OperatorPowers(dual, sigma2, W2, dual_W, t2, t3)
    _LAST_POWERS[:] = [(ops, powers)]
    return powers


def type_d_residue(algebra: FieldAlgebra, ops: WeylOperator, powers: OperatorPowers,
                   mu: tuple[Frac, Frac]) -> Grid:
    """M_i − S̃ M_r for M = W² − μW − 2μ²I = M_r + iσM_i: zero exactly when
    (Q − λ)(Q + 2λ) = 0 on self-dual bivectors, λ = −μ (see ``decide_type_in_field``).

    This is t2²W² − t2t3W − 2t3²I divided by t2² (t2 ≠ 0 here): μ is a small fraction — for
    type D it is proportional to Ψ2 — while t2² carries its fourth power, and every entry of
    the combination is multiplied by these coefficients."""
    f = algebra.f
    mu_squared = algebra.number(mu, mu, powers.sigma2)
    identity = [[f.one() if i == j else f.zero() for j in range(6)] for i in range(6)]
    return algebra.combination([
        (f.neg(mu[1]), ops.operator), (f.scale(mu_squared[1], -2), identity),
        (f.neg(f.one()), algebra.matmul(powers.dual, powers.square)),
        (mu[0], powers.dual_times), (f.scale(mu_squared[0], 2), powers.dual)])


def decide_type_in_field(ops: WeylOperator, spacetime: Spacetime) -> tuple[str, list[str]]:
    """`decide_type` in exact field arithmetic, with real matrices only.

    The self-dual projector P = ½(1 − i*) commutes with W and P² = P, so Q = PW gives
    Q² = PW², tr Qᵏ = ½ tr Wᵏ − ½ iσ tr(S̃Wᵏ), and for complex scalars s, u, v the matrix
    P(sW² − uW − 2vI) vanishes exactly when its σ-part does: M_i = S̃ M_r for
    M = M_r + iσ M_i (its σ-free part then vanishes too, because (σS̃)² = ** = −1). So the
    criteria of ``decide_type`` need W², S̃W and S̃W² and no complex 6×6 product.
    """
    algebra, f = FieldAlgebra(ops.field, spacetime), ops.field
    if algebra.is_zero(ops.weyl, "the Weyl tensor"):
        return "O", ["C_abcd = 0"]
    tests = ["C_abcd ≠ 0"]
    powers = operator_powers(ops, spacetime)
    sigma2, W2, t2, t3 = powers.sigma2, powers.square, powers.t2, powers.t3
    t2_cubed = algebra.number(algebra.number(t2, t2, sigma2), t2, sigma2)
    t3_squared = algebra.number(t3, t3, sigma2)
    special = [f.sub(t2_cubed[k], f.scale(t3_squared[k], 6)) for k in range(2)]
    if not algebra.is_zero(special, "I³ − 27J²"):
        return "I", [*tests, "I³ ≠ 27 J²"]
    tests.append("I³ = 27 J²")
    if algebra.is_zero(list(t2), "I"):
        tests.append("I = J = 0")
        if algebra.is_zero([v for row in W2 for v in row], "Q²"):  # Q² = PW² = 0 ⇔ W² = 0
            return "N", [*tests, "Q² = 0"]
        return "III", [*tests, "Q² ≠ 0, Q³ = 0"]
    tests.append("I ≠ 0")
    mu = algebra.quotient(t3, t2, sigma2)  # μ = t3/t2 = −λ; t2 ≠ 0 was just decided
    residue = type_d_residue(algebra, ops, powers, mu)
    if algebra.is_zero([x for row in residue for x in row], "(Q − λ)(Q + 2λ)"):
        return "D", [*tests, "(Q − λ)(Q + 2λ) = 0"]
    return "II", [*tests, "(Q − λ)(Q + 2λ) ≠ 0"]


# ---------------------------------------------------------------------------- the type


def petrov_type(geometry: Geometry, spacetime: Spacetime, points: Sequence[Point] = (),
                operator: WeylOperator | None = None) -> PetrovResult:
    """``operator``: the engine's exact Weyl operator when it has one (quicker)."""
    if geometry.dimension != 4 or not spacetime.lorentzian or geometry.weyl is None:
        return PetrovResult(None, "the Petrov type is defined for 4-dimensional Lorentzian "
                            "metrics only")
    try:
        try:
            kind, tests = decide_type_in_field(operator or field_operators(geometry, spacetime),
                                               spacetime)
        except (NotInField, ZeroDivisionError):
            kind, tests = decide_type(geometry, spacetime)
    except Undecided as exc:
        return PetrovResult("undecided", str(exc), weyl_scalars(geometry, spacetime, points))
    return PetrovResult(kind, "; ".join(tests), weyl_scalars(geometry, spacetime, points),
                        tuple(tests))


def decide_type(geometry: Geometry, spacetime: Spacetime) -> tuple[str, list[str]]:
    assert geometry.weyl is not None
    tests: list[str] = []
    if is_zero(list(geometry.weyl.values()), spacetime, "the Weyl tensor"):
        return "O", ["C_abcd = 0"]
    tests.append("C_abcd ≠ 0")
    W, dual, sigma2 = operators(geometry)
    half = sympy.Rational(1, 2)
    Q: Complex = (W * half, -(dual * W) * half)
    P: Complex = (sympy.eye(6) * half, -dual * half)
    Q2 = multiply(Q, Q, sigma2)
    t2 = trace(Q2)
    t3 = trace(multiply(Q2, Q, sigma2))
    t2_cubed = number_product(number_product(t2, t2, sigma2), t2, sigma2)
    t3_squared = number_product(t3, t3, sigma2)
    special = [t2_cubed[0] - 6 * t3_squared[0], t2_cubed[1] - 6 * t3_squared[1]]
    if not is_zero(special, spacetime, "I³ − 27J²"):
        return "I", [*tests, "I³ ≠ 27 J²"]
    tests.append("I³ = 27 J²")
    if is_zero(list(t2), spacetime, "I"):
        tests.append("I = J = 0")
        if is_zero(entries(Q2), spacetime, "Q²"):
            return "N", [*tests, "Q² = 0"]
        return "III", [*tests, "Q² ≠ 0, Q³ = 0"]
    tests.append("I ≠ 0")
    t2_squared = number_product(t2, t2, sigma2)
    t2_t3 = number_product(t2, t3, sigma2)
    a = scalar_times(t2_squared, Q2, sigma2)
    b = scalar_times(t2_t3, Q, sigma2)
    c = scalar_times(t3_squared, P, sigma2)
    minimal = (tidy(a[0] - b[0] - 2 * c[0]), tidy(a[1] - b[1] - 2 * c[1]))
    if is_zero(entries(minimal), spacetime, "(Q − λ)(Q + 2λ)"):
        return "D", [*tests, "(Q − λ)(Q + 2λ) = 0"]
    return "II", [*tests, "(Q − λ)(Q + 2λ) ≠ 0"]


# ---------------------------------------------------------------------------- Ψ0..Ψ4


def diagonal_frame_signs(metric: sympy.Matrix, spacetime: Spacetime, points: Sequence[Point]
                         ) -> list[int] | None:
    """Sign of each g_aa over the sample points (None if one changes sign or is undecided)."""
    signs = []
    for a in range(metric.rows):
        found = {sign_at(metric[a, a], p, spacetime) for p in points} - {None}
        if len(found) != 1 or 0 in found:
            return None
        signs.append(found.pop())
    return signs if signs.count(-1) == 1 else None


def weyl_scalars(geometry: Geometry, spacetime: Spacetime, points: Sequence[Point]
                 ) -> dict[str, sympy.Expr] | None:
    """Ψ0..Ψ4 in the tool's tetrad, for diagonal metrics.

    The frame is e_a = ∂_a/√|g_aa| (time first, then the spatial coordinates in order). The
    contraction is done with symbols n_a standing for 1/√|g_aa| and the coefficient of each
    monomial in them summed exactly; only then are the roots put in, so no expression with
    square roots is ever expanded. Elsewhere the Ψ's are not shown (the type does not need them).
    """
    if geometry.weyl is None or not points or not geometry.metric.is_diagonal():
        return None
    signs = diagonal_frame_signs(geometry.metric, spacetime, points)
    if signs is None:
        return None
    time = signs.index(-1)
    order = [time, *(a for a in range(4) if a != time)]
    scale = [sympy.Dummy(f"n{a}", positive=True) for a in range(4)]
    unit = [sympy.Matrix([scale[a] if b == a else 0 for b in range(4)]) for a in order]
    r2 = sympy.sqrt(2)
    ell, nn = (unit[0] + unit[1]) / r2, (unit[0] - unit[1]) / r2
    m, mb = (unit[2] + sympy.I * unit[3]) / r2, (unit[2] - sympy.I * unit[3]) / r2
    C = weyl_component(geometry.weyl)
    nonzero = [(k, C(*k)) for k in itertools.product(range(4), repeat=4) if C(*k) != 0]
    roots = {scale[a]: 1 / sympy.sqrt(signs[a] * geometry.metric[a, a]) for a in range(4)}

    def grouped(a: sympy.Matrix, b: sympy.Matrix, c: sympy.Matrix, d: sympy.Matrix
                ) -> dict[sympy.Expr, sympy.Expr]:
        groups: dict[sympy.Expr, list[sympy.Expr]] = {}
        for (i, j, k, q), v in nonzero:
            weight = sympy.expand(a[i] * b[j] * c[k] * d[q])
            if weight == 0:
                continue
            for coefficient, monomial in (t.as_independent(*scale) for t in
                                          sympy.Add.make_args(weight)):
                groups.setdefault(monomial, []).append(coefficient * v)
        return {monomial: sympy.Add(*terms) for monomial, terms in groups.items()}

    frames = {"Psi0": (ell, m, ell, m), "Psi1": (ell, nn, ell, m), "Psi2": (ell, m, mb, nn),
              "Psi3": (ell, nn, mb, nn), "Psi4": (nn, mb, nn, mb)}
    groups = {name: grouped(*vectors) for name, vectors in frames.items()}
    # The five contractions meet the same sums again (Ψ0 and Ψ4, Ψ1 and Ψ3 share most of
    # their groups): the distinct sums are reduced and factored together, in one field
    sums = sorted({v for g in groups.values() for v in g.values()}, key=sympy.default_sort_key)
    reduced = dict(zip(sums, canonical_all(sums, spacetime), strict=True))
    totals = {name: sympy.Add(*(reduced[v] * monomial.xreplace(roots)
                                for monomial, v in g.items()))
              for name, g in groups.items()}
    small = [name for name, total in totals.items()
             if sympy.count_ops(total) < PSI_SIZE_LIMIT]
    factored = canonical_all([totals[name] for name in small], spacetime)
    totals.update(zip(small, factored, strict=True))
    return totals


def invariants(psi: dict[str, sympy.Expr]) -> tuple[sympy.Expr, sympy.Expr]:
    """I = Ψ0Ψ4 − 4Ψ1Ψ3 + 3Ψ2², J = det[[Ψ4,Ψ3,Ψ2],[Ψ3,Ψ2,Ψ1],[Ψ2,Ψ1,Ψ0]]."""
    p0, p1, p2, p3, p4 = (psi[f"Psi{k}"] for k in range(5))
    invariant_i = p0 * p4 - 4 * p1 * p3 + 3 * p2**2
    invariant_j = sympy.Matrix([[p4, p3, p2], [p3, p2, p1], [p2, p1, p0]]).det()
    return invariant_i, invariant_j
