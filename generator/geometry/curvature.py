"""Stage "compute geometry": curvature of a spacetime in exact arithmetic.

The main path works in the rational-function field of ``algebra`` (python-flint polynomials with
gcd-reduced fractions), which is several hundred times faster than simplifying SymPy trees and
decides zero components exactly. Metrics that do not fit the field (floating-point numbers,
free functions of non-coordinates, ...) go through the same formulas in SymPy arithmetic, with
``cancel`` while summing; ``Geometry.engine`` records which path ran.

Conventions (catalog-wide): R^a_bcd = d_c G^a_db - d_d G^a_cb + G^a_ce G^e_db - G^a_de G^e_cb,
R_bd = R^a_bad. With Gamma_abc = g_ad G^d_bc this is
R_abcd = d_c Gamma_abd - d_d Gamma_abc + Gamma_fad G^f_bc - Gamma_fac G^f_bd,
which needs no lowering of the Riemann tensor.
"""

from __future__ import annotations

import time
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any, Protocol

import sympy

from generator.errors import AlmanacError, BudgetExceeded
from generator.geometry.algebra import (
    FieldRequest,
    Frac,
    NotInField,
    RationalField,
    build_field,
    pairs,
)
from generator.model import Geometry, Index, Spacetime


class DegenerateMetric(AlmanacError):
    """Raised by ``compute_geometry`` when the metric has no inverse (bad input, not a bug)."""


@dataclass(frozen=True)
class Limits:
    """Per-entry budget; exceeding it raises errors.BudgetExceeded(stage, limit)."""

    seconds: float = 120.0
    max_terms: int = 200_000  # size bound on any intermediate numerator


@dataclass(frozen=True)
class WeylOperator:
    """The Weyl tensor as the exact engine holds it, handed on to the Petrov test.

    ``operator`` is W^P_Q = G^PR C_RQ over the index pairs of ``algebra.pairs`` (the Weyl
    tensor acting on bivectors), ``bivector`` the pair metric G^PQ, all reduced fractions in
    ``field``. The engine forms W anyway for C_abcd C^abcd; passing it on spares converting
    the display forms back into a field. Not part of ``Geometry``: flint values are neither
    cached nor shown.
    """

    field: RationalField
    weyl: tuple[Frac, ...]  # the independent C_abcd (for the C = 0 test)
    operator: tuple[tuple[Frac, ...], ...]
    bivector: tuple[tuple[Frac, ...], ...]
    metric: tuple[tuple[Frac, ...], ...]


class Arithmetic(Protocol):
    """The operations the curvature formulas need; one implementation per engine."""

    def zero(self) -> Any: ...
    def one(self) -> Any: ...
    def sum(self, terms: list[Any]) -> Any: ...
    def product(self, x: Any, y: Any) -> Any: ...
    def scale(self, x: Any, q: sympy.Rational) -> Any: ...
    def inv(self, x: Any) -> Any: ...
    def diff(self, x: Any, i: int) -> Any: ...
    def is_zero(self, x: Any) -> bool: ...
    def size(self, x: Any) -> int: ...
    def display(self, x: Any) -> sympy.Expr: ...


class FieldArithmetic:
    """Arithmetic in the flint rational-function field."""

    def __init__(self, field: RationalField) -> None:
        self.field = field
        self.shown: dict[int, sympy.Expr] = {}

    def zero(self) -> Frac:
        return self.field.zero()

    def one(self) -> Frac:
        return self.field.one()

    def sum(self, terms: list[Frac]) -> Frac:
        return self.field.sum(terms)

    def product(self, x: Frac, y: Frac) -> Frac:
        """Unnormalised product: ``sum`` normalises once for all its terms."""
        if x.is_zero() or y.is_zero():
            return self.field.zero()
        return Frac(x.num * y.num, x.den * y.den)

    def scale(self, x: Frac, q: sympy.Rational) -> Frac:
        return self.field.scale(x, q)

    def inv(self, x: Frac) -> Frac:
        return self.field.inv(x)

    def diff(self, x: Frac, i: int) -> Frac:
        return self.field.diff(x, i)

    def is_zero(self, x: Frac) -> bool:
        return x.is_zero()

    def size(self, x: Frac) -> int:
        return x.size()

    def display(self, x: Frac) -> sympy.Expr:
        """Memoised: many components repeat (symmetric slots, Weyl = Riemann in vacuum)."""
        if x.is_zero():
            return sympy.Integer(0)
        # Keyed by identity: repeated components are the same objects (symmetric slots, Weyl
        # = Riemann when Ricci-flat); the Tensors holding them outlive this conversion.
        key = id(x)
        if key not in self.shown:
            self.shown[key] = self.field.display(x)
        return self.shown[key]


class SympyArithmetic:
    """Careful SymPy arithmetic (cancel while summing) for metrics outside the field."""

    def __init__(self, spacetime: Spacetime, zero_test: Callable[[sympy.Expr], bool]) -> None:
        self.coordinates = spacetime.coordinates
        self.zero_test = zero_test
        self.zero_cache: dict[sympy.Expr, bool] = {}

    def zero(self) -> sympy.Expr:
        return sympy.Integer(0)

    def one(self) -> sympy.Expr:
        return sympy.Integer(1)

    def sum(self, terms: list[sympy.Expr]) -> sympy.Expr:
        return sympy.cancel(sympy.together(sympy.Add(*terms)))

    def product(self, x: sympy.Expr, y: sympy.Expr) -> sympy.Expr:
        return x * y

    def scale(self, x: sympy.Expr, q: sympy.Rational) -> sympy.Expr:
        return x * q

    def inv(self, x: sympy.Expr) -> sympy.Expr:
        return sympy.cancel(1 / x)

    def diff(self, x: sympy.Expr, i: int) -> sympy.Expr:
        return sympy.cancel(sympy.diff(x, self.coordinates[i]))

    def is_zero(self, x: sympy.Expr) -> bool:
        """``cancel`` is canonical for rational functions of symbols and free functions; with
        other functions in play (sin, sqrt, ...) a non-zero form may still vanish, so ask the
        project's zero test (cached: the same component is asked about repeatedly)."""
        if x == 0:
            return True
        if _is_rational_function(x):
            return False
        if x not in self.zero_cache:
            self.zero_cache[x] = self.zero_test(x)
        return self.zero_cache[x]

    def size(self, x: sympy.Expr) -> int:
        return sympy.count_ops(x)

    def display(self, x: sympy.Expr) -> sympy.Expr:
        return sympy.factor(x)


def _is_rational_function(x: sympy.Expr) -> bool:
    """Built from symbols, numbers, free functions and derivatives with integer powers only."""
    for node in sympy.preorder_traversal(x):
        if isinstance(node, sympy.Pow) and not node.exp.is_Integer:
            return False
        if isinstance(node, sympy.Function) and not isinstance(
            node, sympy.core.function.AppliedUndef
        ):
            return False
        if node.is_Float or (node.is_number and not node.is_Rational and not node.is_Atom):
            return False
    return True


# ====================================================================== budget


@dataclass(frozen=True)
class Budget:
    """Deadline and size cap for one entry, checked between components."""

    deadline: float
    limits: Limits

    @classmethod
    def start(cls, limits: Limits) -> Budget:
        return cls(time.monotonic() + limits.seconds, limits)

    def check(self, stage: str, arithmetic: Arithmetic, values: list[Any] = ()) -> None:
        if time.monotonic() > self.deadline:
            raise BudgetExceeded(stage, f"time limit of {self.limits.seconds:g} s exceeded")
        for v in values:
            if arithmetic.size(v) > self.limits.max_terms:
                raise BudgetExceeded(
                    stage, f"an intermediate expression exceeded {self.limits.max_terms} terms"
                )


# ====================================================================== entry point


def compute_geometry(spacetime: Spacetime, limits: Limits | None = None) -> Geometry:
    """Curvature of ``spacetime``: exact rational-function engine, SymPy when it cannot."""
    return compute_geometry_with(spacetime, limits, engine="auto")


def compute_geometry_with(spacetime: Spacetime, limits: Limits | None, engine: str) -> Geometry:
    """``engine``: "auto" (field, SymPy as fallback), "rational-function" or "sympy"; the
    forced engines exist so tests and the benchmark can compare the two paths."""
    return compute_geometry_and_weyl(spacetime, limits, engine)[0]


def compute_geometry_and_weyl(
    spacetime: Spacetime, limits: Limits | None, engine: str = "auto"
) -> tuple[Geometry, WeylOperator | None]:
    """The geometry, and the Weyl operator in exact form when the field engine ran in four
    dimensions (None otherwise: the Petrov test then converts the display forms itself)."""
    started = time.monotonic()
    budget = Budget.start(limits or Limits())
    if engine != "sympy":
        try:
            arithmetic, metric = field_setup(spacetime, 2, budget.deadline)
            tensors = curvature(arithmetic, metric, budget)
            used = "rational-function"
        except NotInField:
            if engine == "rational-function":
                raise
            engine = "sympy"
    if engine == "sympy":
        arithmetic, metric = sympy_setup(spacetime)
        tensors = curvature(arithmetic, metric, budget)
        used = "sympy"
    budget.check("display forms", arithmetic)
    geometry = to_geometry(spacetime, tensors, arithmetic, used, time.monotonic() - started)
    return geometry, weyl_operator(arithmetic, tensors, metric)


def weyl_operator(ar: Arithmetic, t: Tensors, g: list[list[Any]]) -> WeylOperator | None:
    if not isinstance(ar, FieldArithmetic) or t.weyl is None or t.weyl_operator is None:
        return None
    if len(g) != 4:
        return None

    def rows(m: list[list[Frac]]) -> tuple[tuple[Frac, ...], ...]:
        return tuple(tuple(row) for row in m)

    return WeylOperator(ar.field, tuple(t.weyl.values()), rows(t.weyl_operator),
                        rows(t.bivector), rows(g))


def field_setup(
    spacetime: Spacetime, derivative_depth: int, deadline: float | None = None
) -> tuple[FieldArithmetic, list]:
    """Build the field of the metric components, closed under ``derivative_depth`` derivatives
    (2 for curvature; callers that differentiate curvature again ask for more)."""
    n = spacetime.dimension
    entries = tuple(spacetime.metric[a, b] for a in range(n) for b in range(n))
    request = FieldRequest(
        spacetime.coordinates,
        spacetime.parameters,
        spacetime.functions,
        entries,
        derivative_depth,
        deadline,
    )
    field, values = build_field(request)
    return FieldArithmetic(field), [values[a * n : (a + 1) * n] for a in range(n)]


def sympy_setup(spacetime: Spacetime) -> tuple[SympyArithmetic, list]:
    from generator.geometry.equality import (
        sampled_zero,  # equality builds on this module's field; import late
    )

    def zero_test(expr: sympy.Expr) -> bool:
        return sampled_zero(expr, spacetime)

    n = spacetime.dimension
    metric = [[sympy.cancel(spacetime.metric[a, b]) for b in range(n)] for a in range(n)]
    return SympyArithmetic(spacetime, zero_test), metric


# ====================================================================== the formulas


@dataclass(frozen=True)
class Tensors:
    """Engine-level results (Frac or SymPy values), before conversion to display forms."""

    inverse: list[list[Any]]
    christoffel: dict[Index, Any]
    riemann: dict[Index, Any]
    ricci: list[list[Any]]
    ricci_scalar: Any
    einstein: list[list[Any]]
    einstein_mixed: list[list[Any]]
    weyl: dict[Index, Any] | None
    kretschmann: Any
    ricci_squared: Any
    weyl_squared: Any
    weyl_operator: list[list[Any]] | None  # C on index pairs, raised by the pair metric
    bivector: list[list[Any]]  # the pair metric G^PQ


def curvature(ar: Arithmetic, g: list[list[Any]], budget: Budget) -> Tensors:
    """All curvature quantities, stage by stage, checking the budget between components."""
    n = len(g)
    ginv = inverse_matrix(ar, g, budget)
    first, second = christoffel_symbols(ar, g, ginv, budget)
    riemann = riemann_lower(ar, first, second, n, budget)
    ricci, mixed, scalar = ricci_parts(ar, riemann, ginv, n, budget)
    half_r = ar.scale(scalar, sympy.Rational(1, 2))
    einstein = _einstein(ar, ricci, g, half_r, n)
    einstein_mixed = _einstein_mixed(ar, mixed, half_r, n)
    budget.check("invariants", ar)
    ricci_squared = ar.sum(
        [ar.product(mixed[a][b], mixed[b][a]) for a in range(n) for b in range(n)]
    )
    bivector = bivector_inverse(ar, ginv, n)
    riemann_operator = pair_operator(ar, riemann, bivector, n)
    kretschmann = trace_square(ar, riemann_operator)
    budget.check("invariants", ar, [kretschmann, ricci_squared])
    weyl = weyl_squared = weyl_on_pairs = None
    if n >= 4 and all(ar.is_zero(ricci[a][b]) for a in range(n) for b in range(n)):
        # Ricci-flat: C_abcd = R_abcd
        weyl, weyl_squared, weyl_on_pairs = dict(riemann), kretschmann, riemann_operator
    elif n >= 4:
        weyl = weyl_lower(ar, riemann, ricci, scalar, g, n, budget)
        weyl_on_pairs = pair_operator(ar, weyl, bivector, n)
        weyl_squared = trace_square(ar, weyl_on_pairs)
        budget.check("Weyl tensor", ar, [weyl_squared])
    christoffel = {
        (a, b, c): second[a][b][c]
        for a in range(n)
        for b in range(n)
        for c in range(b, n)
        if not ar.is_zero(second[a][b][c])
    }
    return Tensors(
        ginv,
        christoffel,
        riemann,
        ricci,
        scalar,
        einstein,
        einstein_mixed,
        weyl,
        kretschmann,
        ricci_squared,
        weyl_squared,
        weyl_on_pairs,
        bivector,
    )


def _einstein(ar: Arithmetic, ricci: list, g: list, half_r: Any, n: int) -> list[list[Any]]:
    minus_half_r = ar.scale(half_r, -1)
    return [
        [ar.sum([ricci[a][b], ar.product(minus_half_r, g[a][b])]) for b in range(n)]
        for a in range(n)
    ]


def _einstein_mixed(ar: Arithmetic, mixed: list, half_r: Any, n: int) -> list[list[Any]]:
    minus_half_r = ar.scale(half_r, -1)
    return [
        [ar.sum([mixed[a][b], minus_half_r]) if a == b else mixed[a][b] for b in range(n)]
        for a in range(n)
    ]


def inverse_matrix(ar: Arithmetic, g: list[list[Any]], budget: Budget) -> list[list[Any]]:
    """Gauss-Jordan over the field (metrics are sparse, so this stays small)."""
    n = len(g)
    rows = [list(g[a]) + [ar.one() if a == b else ar.zero() for b in range(n)] for a in range(n)]
    for col in range(n):
        pivot = next((r for r in range(col, n) if not ar.is_zero(rows[r][col])), None)
        if pivot is None:
            raise DegenerateMetric("the metric is degenerate (its determinant is zero)")
        rows[col], rows[pivot] = rows[pivot], rows[col]
        inv_p = ar.inv(rows[col][col])
        rows[col] = [ar.sum([ar.product(inv_p, x)]) for x in rows[col]]
        for r in range(n):
            if r != col and not ar.is_zero(rows[r][col]):
                factor = ar.scale(rows[r][col], -1)
                rows[r] = [
                    ar.sum([x, ar.product(factor, y)])
                    for x, y in zip(rows[r], rows[col], strict=True)
                ]
        budget.check("inverse metric", ar, rows[col])
    return [row[n:] for row in rows]


def christoffel_symbols(
    ar: Arithmetic, g: list[list[Any]], ginv: list[list[Any]], budget: Budget
) -> tuple[list, list]:
    """First kind Gamma_abc = (d_b g_ac + d_c g_ab - d_a g_bc)/2 and second kind G^a_bc."""
    n = len(g)
    dg = [[[ar.diff(g[a][b], c) for b in range(n)] for a in range(n)] for c in range(n)]
    half = sympy.Rational(1, 2)
    first = [[[None] * n for _ in range(n)] for _ in range(n)]
    for a in range(n):
        for b in range(n):
            for c in range(b, n):
                value = ar.scale(
                    ar.sum([dg[b][a][c], dg[c][a][b], ar.scale(dg[a][b][c], -1)]),
                    half,
                )
                first[a][b][c] = first[a][c][b] = value
    budget.check("Christoffel symbols", ar)
    second = [[[None] * n for _ in range(n)] for _ in range(n)]
    for a in range(n):
        for b in range(n):
            for c in range(b, n):
                value = ar.sum([ar.product(ginv[a][d], first[d][b][c]) for d in range(n)])
                second[a][b][c] = second[a][c][b] = value
        budget.check(
            "Christoffel symbols", ar, [second[a][b][c] for b in range(n) for c in range(n)]
        )
    return first, second


def riemann_lower(ar: Arithmetic, first: list, second: list, n: int, budget: Budget) -> dict:
    """Independent R_abcd (a<b, c<d, (a,b)<=(c,d)); zero ones are dropped."""
    cache: dict[tuple[int, int, int, int], Any] = {}

    def d_first(c: int, a: int, b: int, d: int) -> Any:
        key = (c, a, min(b, d), max(b, d))
        if key not in cache:
            cache[key] = ar.diff(first[a][b][d], c)
        return cache[key]

    riemann = {}
    slots = pairs(n)
    for i, (a, b) in enumerate(slots):
        for c, d in slots[i:]:
            terms = [d_first(c, a, b, d), ar.scale(d_first(d, a, b, c), -1)]
            for f in range(n):
                terms.append(ar.product(first[f][a][d], second[f][b][c]))
                terms.append(ar.scale(ar.product(first[f][a][c], second[f][b][d]), -1))
            value = ar.sum(terms)
            budget.check("Riemann tensor", ar, [value])
            if not ar.is_zero(value):
                riemann[(a, b, c, d)] = value
    return riemann


def independent_index(a: int, b: int, c: int, d: int) -> tuple[int, Index] | None:
    """(sign, key) with T_abcd = sign * T_key for a tensor with Riemann's pair symmetries,
    key in the stored order a<b, c<d, (a,b)<=(c,d); None when the component vanishes."""
    if a == b or c == d:
        return None
    sign = 1
    if a > b:
        a, b, sign = b, a, -sign
    if c > d:
        c, d, sign = d, c, -sign
    if (a, b) > (c, d):
        a, b, c, d = c, d, a, b
    return sign, (a, b, c, d)


def component(ar: Arithmetic, table: dict, a: int, b: int, c: int, d: int) -> Any:
    """R_abcd from the independent components, by the pair symmetries."""
    found = independent_index(a, b, c, d)
    value = None if found is None else table.get(found[1])
    if value is None:
        return ar.zero()
    return value if found[0] == 1 else ar.scale(value, -1)


def ricci_parts(ar: Arithmetic, riemann: dict, ginv: list, n: int, budget: Budget) -> tuple:
    """R_bd = g^ac R_cbad, the mixed R^a_b and the scalar."""
    ricci = [[None] * n for _ in range(n)]
    for b in range(n):
        for d in range(b, n):
            terms = [
                ar.product(ginv[a][c], component(ar, riemann, c, b, a, d))
                for a in range(n)
                for c in range(n)
                if not ar.is_zero(ginv[a][c])
            ]
            ricci[b][d] = ricci[d][b] = ar.sum(terms)
        budget.check("Ricci tensor", ar, ricci[b])
    mixed = [
        [ar.sum([ar.product(ginv[a][c], ricci[c][b]) for c in range(n)]) for b in range(n)]
        for a in range(n)
    ]
    scalar = ar.sum([mixed[a][a] for a in range(n)])
    return ricci, mixed, scalar


def bivector_inverse(ar: Arithmetic, ginv: list, n: int) -> list[list[Any]]:
    """G^{PQ} = g^ac g^bd - g^ad g^bc over index pairs P=(a,b), Q=(c,d) with a<b, c<d."""
    slots = pairs(n)
    return [
        [
            ar.sum(
                [
                    ar.product(ginv[a][c], ginv[b][d]),
                    ar.scale(ar.product(ginv[a][d], ginv[b][c]), -1),
                ]
            )
            for c, d in slots
        ]
        for a, b in slots
    ]


def pair_operator(ar: Arithmetic, table: dict, bivector: list, n: int) -> list[list[Any]]:
    """M^P_Q = G^PR X_RQ: the tensor X_abcd as an operator on bivectors (index pairs)."""
    slots = pairs(n)
    x = [[component(ar, table, a, b, c, d) for c, d in slots] for a, b in slots]
    size = len(slots)
    return [
        [
            ar.sum(
                [
                    ar.product(bivector[p][r], x[r][q])
                    for r in range(size)
                    if not ar.is_zero(bivector[p][r]) and not ar.is_zero(x[r][q])
                ]
            )
            for q in range(size)
        ]
        for p in range(size)
    ]


def trace_square(ar: Arithmetic, m: list[list[Any]]) -> Any:
    """X_abcd X^abcd = 4 tr(M M) for the pair operator M of X."""
    size = len(m)
    total = ar.sum(
        [
            ar.product(m[p][q], m[q][p])
            for p in range(size)
            for q in range(size)
            if not ar.is_zero(m[p][q]) and not ar.is_zero(m[q][p])
        ]
    )
    return ar.scale(total, sympy.Integer(4))


def weyl_lower(
    ar: Arithmetic, riemann: dict, ricci: list, scalar: Any, g: list, n: int, budget: Budget
) -> dict:
    """C_abcd = R_abcd - (g_ac R_bd - g_ad R_bc - g_bc R_ad + g_bd R_ac)/(n-2)
    + R (g_ac g_bd - g_ad g_bc)/((n-1)(n-2))."""
    k1 = sympy.Rational(-1, n - 2)
    k2 = sympy.Rational(1, (n - 1) * (n - 2))
    weyl = {}
    slots = pairs(n)
    for i, (a, b) in enumerate(slots):
        for c, d in slots[i:]:
            ricci_part = [
                ar.product(g[a][c], ricci[b][d]),
                ar.scale(ar.product(g[a][d], ricci[b][c]), -1),
                ar.scale(ar.product(g[b][c], ricci[a][d]), -1),
                ar.product(g[b][d], ricci[a][c]),
            ]
            metric_part = ar.sum(
                [ar.product(g[a][c], g[b][d]), ar.scale(ar.product(g[a][d], g[b][c]), -1)]
            )
            value = ar.sum(
                [
                    component(ar, riemann, a, b, c, d),
                    ar.scale(ar.sum(ricci_part), k1),
                    ar.scale(ar.product(scalar, metric_part), k2),
                ]
            )
            if not ar.is_zero(value):
                weyl[(a, b, c, d)] = value
        budget.check("Weyl tensor", ar, list(weyl.values())[-1:])
    return weyl


# ====================================================================== to the data model


def to_geometry(
    spacetime: Spacetime, t: Tensors, ar: Arithmetic, engine: str, seconds: float
) -> Geometry:
    n = spacetime.dimension

    def show(x: Any) -> sympy.Expr:
        return ar.display(x)

    def matrix(rows: list[list[Any]]) -> sympy.ImmutableMatrix:
        return sympy.ImmutableMatrix(n, n, [show(rows[a][b]) for a in range(n) for b in range(n)])

    return Geometry(
        dimension=n,
        metric=spacetime.metric,
        inverse_metric=matrix(t.inverse),
        christoffel={k: show(v) for k, v in t.christoffel.items()},
        riemann={k: show(v) for k, v in t.riemann.items()},
        ricci=matrix(t.ricci),
        ricci_scalar=show(t.ricci_scalar),
        einstein=matrix(t.einstein),
        einstein_mixed=matrix(t.einstein_mixed),
        weyl=None if t.weyl is None else {k: show(v) for k, v in t.weyl.items()},
        kretschmann=show(t.kretschmann),
        ricci_squared=show(t.ricci_squared),
        weyl_squared=None if t.weyl_squared is None else show(t.weyl_squared),
        engine=engine,
        seconds=seconds,
    )
