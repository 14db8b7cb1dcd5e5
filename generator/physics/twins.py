"""Duplicate warnings: is a new entry's spacetime probably already in the catalog?

The same spacetime written in another chart, with renamed parameters, looks nothing like the
original as text, so the comparison uses what a coordinate change cannot alter: scalar
curvature invariants. Two steps.

1. **Fingerprint** (exact, cheap). Dimension, signature, matter kind, Petrov type, whether a
   cosmological constant is present, which of R, R_ab R^ab, K = R_abcd R^abcd and
   C_abcd C^abcd vanish identically or are constant, and the *functional rank*: how many of
   the scalar invariants are functionally independent (the rank of their Jacobian with respect
   to the coordinates at generic points). Schwarzschild has rank 1 in every chart (everything
   is a function of the areal radius), Kerr rank 2, de Sitter rank 0. Different fingerprints
   are never the same spacetime.

2. **Matching values** (numerical, bounded). From the first non-constant invariant P we build
   differential invariants |∇P|², □P and ∇P·∇|∇P|², which are also chart-independent. At a
   few sample points of the new entry we take the values of all invariants and ask whether
   the other entry reaches the same values somewhere: unknowns are the other entry's
   parameters (so renamed and re-scaled parameters are found: m for M, or 1/H for ℓ) and as
   many of its coordinates as the functional rank; a square subset of the equations is solved
   with Newton's method (mpmath, 30 digits) from the other entry's own sample points, and every
   remaining invariant must then agree to 1e-15 relative. Parameters must keep their declared
   signs.

Limits, said plainly:
- It is a warning, not a proof. Scalar invariants do not separate all spacetimes (every pp-wave
  has all of them zero, like Minkowski); a fingerprint match with too few invariants to test is
  reported as such, so the contributor can judge.
- Entries with free functions (a(t), H(u, x, y)) are not compared: their invariants depend on
  unknown functions.
- A chart that fixes a parameter to a number (units with M = 1) is matched only when the
  invariants happen to agree at the sampled parameter values; a special case of a family
  (Schwarzschild inside Reissner–Nordström at Q = 0) has a different matter kind or is found
  only if the sample parameters allow it.
- Newton's method can miss a solution (a false "different"); several starting points reduce
  that. It cannot invent one: a match is confirmed by the extra invariants.
"""

from __future__ import annotations

import itertools
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, replace
from functools import cached_property

import mpmath
import sympy

from generator.entry.catalog import chart_groups
from generator.errors import Diagnostic
from generator.geometry.equality import decide_zero
from generator.geometry.sampling import Point, sample_points
from generator.model import EntryReport, Spacetime

SEED = 20261202
POINTS_HERE = 2  # sample points of the new entry whose values must be matched
STARTS_THERE = 4  # Newton starting points in the other entry
DIGITS = 30
SOLVE_TOLERANCE = mpmath.mpf("1e-18")
CHECK_TOLERANCE = mpmath.mpf("1e-15")
MAX_NODES = 20_000  # skip the third derived invariant when |grad P|^2 grows beyond this
# Evaluations of the invariants one Newton run may use. A run that converges used at most 394
# in the twin tests; one from a start with no root nearby (Kerr asked for Kerr–NUT's values)
# halved its damped steps for 2,774 evaluations, 69 s, before giving up.
MAX_EVALUATIONS = 600

BASE_INVARIANTS = ("ricci_scalar", "ricci_squared", "kretschmann", "weyl_squared")


@dataclass(frozen=True)
class Fingerprint:
    dimension: int
    negative_signs: int
    matter_kind: str
    petrov_type: str | None
    has_lambda: bool
    zero: tuple[bool, ...]  # per BASE_INVARIANTS: vanishes identically
    constant: tuple[bool, ...]  # per BASE_INVARIANTS: no coordinate dependence
    rank: int | None = None  # functional rank; None until computed (it is the costly part)

    def differences(self, other: Fingerprint) -> list[str]:
        """Names of the fingerprint parts that differ (Petrov type only if both are known)."""
        out = [
            name
            for name in ("dimension", "negative_signs", "matter_kind", "has_lambda", "zero",
                         "constant", "rank")
            if getattr(self, name) != getattr(other, name)
        ]  # fmt: skip
        if self.petrov_type and other.petrov_type and self.petrov_type != other.petrov_type:
            out.append("petrov_type")
        return out

    def describe(self) -> str:
        petrov = f", Petrov {self.petrov_type}" if self.petrov_type else ""
        return (
            f"{self.dimension}D, {self.matter_kind}{petrov}, "
            f"{self.rank} independent invariant{'s' if self.rank != 1 else ''}"
        )


@dataclass(frozen=True)
class Invariants:
    """Chart-independent scalars of one entry, as SymPy expressions and numeric functions."""

    names: tuple[str, ...]
    exprs: tuple[sympy.Expr, ...]
    symbols: tuple[sympy.Symbol, ...]  # parameters, then coordinates
    numeric: Callable[..., list]


# ---------------------------------------------------------------------------- public entry


def find_twins(new: EntryReport, others: Sequence[EntryReport]) -> list[tuple[str, str]]:
    """(other id, reason) for each entry whose spacetime is probably the new entry's one.

    Pairs linked by ``related`` (either direction, directly or through a chain of the entries
    given) are skipped: they are known charts of the same spacetime. Entries without geometry
    or with free functions are not compared.
    """
    if not _comparable(new):
        return []
    return find_all_twins([new], others).get(new.entry.id, [])  # type: ignore[union-attr]


def fingerprint(report: EntryReport) -> Fingerprint:
    """The exact part of the comparison, for tests and for explaining a warning."""
    return _Profile(report).fingerprint


def find_all_twins(
    new: Sequence[EntryReport],
    catalog: Sequence[EntryReport],
    known_ranks: Mapping[str, int] | None = None,
) -> dict[str, list[tuple[str, str]]]:
    """``find_twins`` for several new entries at once, profiling every entry only once.

    ``known_ranks`` (entry id -> functional rank, from an earlier search) spares the costly
    part of the fingerprint for those entries. Returns new entry id -> its (other id, reason)
    pairs (entries without twins omitted).
    """
    return search_twins(new, catalog, known_ranks or {}).found


@dataclass(frozen=True)
class TwinSearch:
    """What a search found, and the functional ranks it had to compute (worth keeping)."""

    found: dict[str, list[tuple[str, str]]]
    ranks: dict[str, int]


def search_twins(new: Sequence[EntryReport], catalog: Sequence[EntryReport],
                 known_ranks: Mapping[str, int],
                 groups: Mapping[str, str] | None = None) -> TwinSearch:
    """``groups``: entry id → its group of charts joined by ``related`` links, followed
    through chains (``catalog.chart_groups``); pairs in one group are never twins. Without
    it the groups come from the links of the reports searched."""
    if groups is None:
        groups = chart_groups((r.entry.id, [item.entry for item in r.entry.related
                                            if item.kind == "chart"])
                              for r in [*new, *catalog] if r.entry is not None)
    profiles: dict[int, _Profile] = {}

    def profile(report: EntryReport) -> _Profile:
        if id(report) not in profiles:
            assert report.entry is not None
            profiles[id(report)] = _Profile(report, known_ranks.get(report.entry.id))
        return profiles[id(report)]

    out: dict[str, list[tuple[str, str]]] = {}
    for report in (r for r in new if _comparable(r)):
        candidates = [
            other for other in catalog
            if other is not report and _comparable(other)
            and not _same_group(report.entry.id, other.entry.id, groups)  # type: ignore
            and not profile(report).exact.differences(profile(other).exact)
        ]
        pairs = [
            (other.entry.id, reason)  # type: ignore[union-attr]
            for other in group_representatives(candidates, groups)
            for reason in [_twin_reason(profile(report), profile(other))]
            if reason
        ]
        if pairs:
            out[report.entry.id] = pairs  # type: ignore[union-attr]
    ranks = {p.report.entry.id: p.computed_rank for p in profiles.values()  # type: ignore
             if p.computed_rank is not None}
    return TwinSearch(out, ranks)


LITERAL_REASON = ("the same metric components, up to the names of the coordinates and "
                  "parameters")


def literal_key(spacetime: Spacetime) -> str:
    """The metric with coordinates and parameters renamed by position: two entries with the
    same key are one spacetime written twice (a copy with renamed symbols), found without
    any numerical search — the cheap first test, which no load on the machine can time out."""
    names = {**{c: sympy.Symbol(f"_x{i}") for i, c in enumerate(spacetime.coordinates)},
             **{p: sympy.Symbol(f"_p{j}") for j, p in enumerate(spacetime.parameters)}}
    return f"{spacetime.signature}|" + sympy.srepr(spacetime.metric.xreplace(names))


def literal_twins(new: Sequence[EntryReport], catalog: Sequence[EntryReport],
                  groups: Mapping[str, str] | None = None) -> dict[str, list[tuple[str, str]]]:
    """New entry id → (other id, reason) for catalog entries whose metric is literally the new
    entry's (see ``literal_key``); charts already joined by ``related`` links are skipped.

    Run before the numerical search and outside its time limit: it is exact, costs one
    expression walk per entry, and must not be lost when the search runs out of time."""
    keys: dict[int, str] = {}

    def key(report: EntryReport) -> str | None:
        if report.spacetime is None or report.entry is None:
            return None
        if id(report) not in keys:
            keys[id(report)] = report.literal_key or literal_key(report.spacetime)
        return keys[id(report)]

    out: dict[str, list[tuple[str, str]]] = {}
    for report in new:
        mine = key(report)
        if mine is None:
            continue
        found = [(other.entry.id, LITERAL_REASON) for other in catalog  # type: ignore
                 if other is not report and key(other) == mine
                 and other.entry.id != report.entry.id  # type: ignore[union-attr]
                 and not _same_group(report.entry.id, other.entry.id, groups)]  # type: ignore
        if found:
            out[report.entry.id] = found  # type: ignore[union-attr]
    return out


def group_representatives(reports: Sequence[EntryReport],
                          groups: Mapping[str, str]) -> list[EntryReport]:
    """One entry per group of charts joined by ``related`` maps, the cheapest to evaluate.

    Charts joined by verified maps are one spacetime, so their invariants take the same
    values: matching the new entry against one of them answers for all, and the cheapest
    (shortest invariants, no Lambert W, which mpmath evaluates slowly) keeps the search
    quick enough to run on every changed entry in CI. Order of first appearance is kept."""
    chosen: dict[str, EntryReport] = {}
    for report in reports:
        assert report.entry is not None
        group = groups.get(report.entry.id, report.entry.id)
        if group not in chosen or _evaluation_cost(report) < _evaluation_cost(chosen[group]):
            chosen[group] = report
    return list(chosen.values())


def _evaluation_cost(report: EntryReport) -> tuple[int, int, str]:
    """(uses Lambert W, length of the base invariants, id): smaller is cheaper; the id breaks
    ties so the choice is deterministic."""
    geometry = report.geometry
    assert geometry is not None and report.entry is not None
    exprs = [e for e in (getattr(geometry, name) for name in BASE_INVARIANTS) if e is not None]
    lambert = any(e.has(sympy.LambertW) for e in exprs)
    return (int(lambert), sum(len(str(e)) for e in exprs), report.entry.id)


# ---------------------------------------------------------------------------- cards


@dataclass(frozen=True)
class TwinCard:
    """What the search needs to know of a catalog entry before loading its whole report: its
    id and links, its exact fingerprint (None when it cannot be compared at all) and, once a
    search has computed it, its functional rank. Kept in the cache beside the report, so a
    pull-request check loads only the reports of entries that might be twins."""

    id: str
    links: frozenset[str]
    exact: Fingerprint | None
    rank: int | None = None


def twin_card(report: EntryReport) -> TwinCard | None:
    """The card of a checked entry (None without an entry)."""
    if report.entry is None:
        return None
    links = frozenset(item.entry for item in report.entry.related)
    exact = _Profile(report).exact if _comparable(report) and report.ok else None
    return TwinCard(report.entry.id, links, exact)


def worth_comparing(new: TwinCard, other: TwinCard,
                    groups: Mapping[str, str] | None = None) -> bool:
    """False when the cards alone show that the two cannot be reported as twins."""
    if new.exact is None or other.exact is None or new.id == other.id:
        return False
    if other.id in new.links or new.id in other.links or _same_group(new.id, other.id, groups):
        return False  # the cards' own links, then chains through the rest of the catalog
    if new.rank is not None and other.rank is not None and new.rank != other.rank:
        return False
    return not new.exact.differences(other.exact)


def twin_diagnostics(report: EntryReport, twins: Sequence[tuple[str, str]]) -> list[Diagnostic]:
    """One warning per probable twin, at the entry's id (for ``check`` output)."""
    if report.entry is None:
        return []
    hint = (
        "if it is the same spacetime in another chart, add it under 'related' with the "
        "coordinate map; if not, say in 'notes' how the two differ"
    )
    return [
        Diagnostic.at(
            report.entry.pos("id"),
            "warning",
            f"probably the same spacetime as entry '{other}': {reason}",
            "entry.duplicate",
            hint,
        )
        for other, reason in twins
    ]


def _comparable(report: EntryReport) -> bool:
    s = report.spacetime
    return bool(
        report.entry and s and report.geometry and report.classification and not s.functions
    )


def _same_group(a: str, b: str, groups: Mapping[str, str] | None) -> bool:
    """The same entry, or joined by a chain of ``related`` links (see ``search_twins``)."""
    return a == b or (groups is not None and groups.get(a, a) == groups.get(b, b))


# ---------------------------------------------------------------------------- profiles


class _Profile:
    """What is known about one entry for the comparison, computed as late as possible.

    The exact parts of the fingerprint are cheap and rule out most pairs; the invariant set
    (derivatives of large expressions) and the functional rank are built only for entries that
    survive them, and only once per run.
    """

    def __init__(self, report: EntryReport, known_rank: int | None = None) -> None:
        spacetime, geometry = report.spacetime, report.geometry
        assert spacetime is not None and geometry is not None
        self.report = report
        self.known_rank = known_rank
        self.computed_rank: int | None = None
        base = [getattr(geometry, name) for name in BASE_INVARIANTS]
        zero = tuple(e is None or _is_zero(e, spacetime, geometry.engine) for e in base)
        constant = tuple(
            e is None or not (e.free_symbols & set(spacetime.coordinates)) for e in base
        )
        self.exact = Fingerprint(
            dimension=spacetime.dimension,
            negative_signs=_negative_signs(spacetime),
            matter_kind=report.classification.matter_kind,  # type: ignore[union-attr]
            petrov_type=report.classification.petrov_type,  # type: ignore[union-attr]
            has_lambda=_has_lambda(report),
            zero=zero,
            constant=constant,
        )

    @cached_property
    def invariants(self) -> Invariants:
        return invariant_set(self.report, self.exact.zero, self.exact.constant)

    @cached_property
    def fingerprint(self) -> Fingerprint:
        """The exact fingerprint completed with the functional rank (computed only when an
        earlier search has not already found it)."""
        if self.known_rank is not None:
            return replace(self.exact, rank=self.known_rank)
        spacetime = self.report.spacetime
        assert spacetime is not None
        self.computed_rank = functional_rank(self.invariants, spacetime)
        return replace(self.exact, rank=self.computed_rank)


def _is_zero(expr: sympy.Expr, spacetime: Spacetime, engine: str) -> bool:
    """The exact engine returns canonical forms, where zero is literally 0; expressions from
    the SymPy fallback engine are decided by the equality module."""
    if expr == 0:
        return True
    return engine != "rational-function" and decide_zero(expr, spacetime).equal is True


def _negative_signs(spacetime: Spacetime) -> int:
    """Minus signs of the signature in the catalog convention (after any flip)."""
    sign = "-" if spacetime.sign == 1 else "+"
    return spacetime.signature.count(sign)


def _has_lambda(report: EntryReport) -> bool:
    value = report.classification.cosmological_constant  # type: ignore[union-attr]
    return value is not None and value != 0


def invariant_set(
    report: EntryReport, zero: tuple[bool, ...], constant: tuple[bool, ...]
) -> Invariants:
    """Non-vanishing base invariants plus differential invariants of the first non-constant
    one (P): |∇P|², □P and ∇P·∇|∇P|²."""
    spacetime, geometry = report.spacetime, report.geometry
    assert spacetime is not None and geometry is not None
    names, exprs = [], []
    for name, is_zero in zip(BASE_INVARIANTS, zero, strict=True):
        if not is_zero:
            names.append(name)
            exprs.append(getattr(geometry, name))
    varying = [n for n, z, c in zip(BASE_INVARIANTS, zero, constant, strict=True) if not (z or c)]
    if varying:
        primary = getattr(geometry, varying[0])
        for name, expr in _differential_invariants(varying[0], primary, report):
            names.append(name)
            exprs.append(expr)
    symbols = (*spacetime.parameters, *spacetime.coordinates)
    numeric = sympy.lambdify(symbols, exprs, modules="mpmath", dummify=True)
    return Invariants(tuple(names), tuple(exprs), symbols, numeric)


def _differential_invariants(
    name: str, p: sympy.Expr, report: EntryReport
) -> list[tuple[str, sympy.Expr]]:
    spacetime, geometry = report.spacetime, report.geometry
    assert spacetime is not None and geometry is not None
    x, ginv, n = spacetime.coordinates, geometry.inverse_metric, spacetime.dimension
    dp = [sympy.diff(p, c) for c in x]
    grad2 = sympy.Add(*(ginv[a, b] * dp[a] * dp[b] for a in range(n) for b in range(n)))
    gamma = geometry.christoffel
    box = sympy.Add(
        *(
            ginv[a, b] * (sympy.diff(dp[a], x[b]) - _connection_term(gamma, a, b, dp, n))
            for a in range(n)
            for b in range(n)
        )
    )
    out = [(f"|grad {name}|^2", grad2), (f"box {name}", box)]
    if _size(grad2) <= MAX_NODES:
        dg = [sympy.diff(grad2, c) for c in x]
        cross = sympy.Add(*(ginv[a, b] * dp[a] * dg[b] for a in range(n) for b in range(n)))
        out.append((f"grad {name}.grad|grad {name}|^2", cross))
    return out


def _size(expr: sympy.Expr) -> int:
    """Number of nodes of the expression tree, counted up to a bound (cheap on huge trees)."""
    return sum(1 for _ in itertools.islice(sympy.preorder_traversal(expr), MAX_NODES + 1))


def _connection_term(gamma: dict, a: int, b: int, dp: list, n: int) -> sympy.Expr:
    """Γ^c_ab ∂_c P (the dict holds Γ^c_ab for a <= b)."""
    lo, hi = min(a, b), max(a, b)
    return sympy.Add(*(gamma.get((c, lo, hi), 0) * dp[c] for c in range(n)))


# ---------------------------------------------------------------------------- numerics


def _values(inv: Invariants, point: Sequence[mpmath.mpf]) -> list[mpmath.mpf]:
    with mpmath.workdps(DIGITS):
        return [mpmath.mpf(mpmath.re(v)) for v in inv.numeric(*point)]


def _ordered(point: Point, spacetime: Spacetime) -> list[mpmath.mpf]:
    with mpmath.workdps(DIGITS):
        return [
            mpmath.mpf(sympy.N(point[s], DIGITS))
            for s in (*spacetime.parameters, *spacetime.coordinates)
        ]


def _points(spacetime: Spacetime, count: int, seed: int) -> list[list[mpmath.mpf]]:
    return [_ordered(p, spacetime) for p in sample_points(spacetime, count, seed)]


def functional_rank(inv: Invariants, spacetime: Spacetime) -> int:
    """Generic rank of d(invariants)/d(coordinates), the larger at two sample points.

    The derivatives are central differences at 30 digits (error far below the 1e-8 rank
    threshold): differentiating the invariants symbolically once more would cost more than
    the whole comparison.
    """
    offset = len(spacetime.parameters)
    coords = [offset + k for k in range(spacetime.dimension)]
    ranks = [_numeric_rank(_jacobian(inv, p, coords)) for p in _points(spacetime, 2, SEED)]
    return max(ranks, default=0)


def _numeric_rank(rows: list[list]) -> int:
    """Rank with every row scaled to unit length first (invariants differ by many orders of
    magnitude), counting singular values above 1e-8."""
    with mpmath.workdps(DIGITS):
        scaled = []
        for row in rows:
            values = [mpmath.re(v) for v in row]
            norm = mpmath.sqrt(sum(v * v for v in values))
            if norm > 0:
                scaled.append([v / norm for v in values])
        if not scaled or not scaled[0]:
            return 0
        singular = mpmath.svd_r(mpmath.matrix(scaled), compute_uv=False)
        return sum(1 for value in singular if value > mpmath.mpf("1e-8"))


# ---------------------------------------------------------------------------- matching


def _twin_reason(here: _Profile, there: _Profile) -> str | None:
    if here.exact.differences(there.exact) or here.fingerprint.differences(there.fingerprint):
        return None
    if here.invariants.names != there.invariants.names:
        return None
    kind = here.fingerprint.describe()
    spacetime_here = here.report.spacetime
    assert spacetime_here is not None
    targets = [_values(here.invariants, p) for p in _points(spacetime_here, POINTS_HERE, SEED)]
    verdicts: list[str] = []
    for target in targets:  # stop at the first point the other entry cannot reach
        verdicts.append(_match(target, there))
        if verdicts[-1] == "different":
            return None
    if not targets:
        return None
    if all(v == "underdetermined" for v in verdicts):
        return f"same kind ({kind}); too few invariants to compare values"
    names = ", ".join(here.invariants.names)
    return f"same kind ({kind}) and the same values of {names} at {len(targets)} sample points"


def _match(target: list[mpmath.mpf], there: _Profile) -> str:
    """'matched', 'different' or 'underdetermined' (not enough equations to test anything)."""
    spacetime = there.report.spacetime
    assert spacetime is not None
    unknowns = _unknowns(there, spacetime)
    if len(target) <= len(unknowns):
        return "underdetermined"
    for start in _points(spacetime, STARTS_THERE, SEED + 1):
        solved = _solve(target, there.invariants, start, unknowns, spacetime)
        if solved is not None and _agrees(_values(there.invariants, solved), target):
            return "matched"
    return "different"


def _unknowns(there: _Profile, spacetime: Spacetime) -> list[int]:
    """Positions (in parameters-then-coordinates order) that Newton's method may move."""
    params = list(range(len(spacetime.parameters)))
    offset = len(spacetime.parameters)
    used = (
        set().union(*(e.free_symbols for e in there.invariants.exprs))
        if there.invariants.exprs
        else set()
    )
    coords = [offset + k for k, c in enumerate(spacetime.coordinates) if c in used]
    return params + coords[: there.fingerprint.rank]


def _solve(
    target: list[mpmath.mpf],
    inv: Invariants,
    start: list[mpmath.mpf],
    unknowns: list[int],
    spacetime: Spacetime,
) -> list[mpmath.mpf] | None:
    """A point of the other entry where a square subset of the invariants takes the target
    values, found by Newton's method from ``start``; None if it does not converge."""
    if not unknowns:
        return start
    equations = _square_subsystem(inv, start, unknowns)
    if equations is None:
        return None

    def place(values: Sequence[mpmath.mpf]) -> list[mpmath.mpf]:
        point = list(start)
        for k, v in zip(unknowns, values, strict=True):
            point[k] = mpmath.re(v)
        return point

    evaluations = 0

    def residual(*values: mpmath.mpf) -> list[mpmath.mpf]:
        nonlocal evaluations
        evaluations += 1
        if evaluations > MAX_EVALUATIONS:
            raise _NotConverging
        got = _values(inv, place(values))
        return [(got[i] - target[i]) / _scale(target[i]) for i in equations]

    with mpmath.workdps(DIGITS):
        try:
            found = mpmath.findroot(
                residual, [start[k] for k in unknowns], tol=SOLVE_TOLERANCE, maxsteps=60
            )
        except (ValueError, ZeroDivisionError, OverflowError, TypeError, _NotConverging):
            return None
    values = list(found) if isinstance(found, mpmath.matrix) else [found]
    point = place(values)
    return point if _signs_kept(point, spacetime) else None


class _NotConverging(Exception):
    """A Newton run used up MAX_EVALUATIONS: treated like mpmath's own "no root found"."""


def _square_subsystem(inv: Invariants, start: list, unknowns: list[int]) -> list[int] | None:
    """Indices of len(unknowns) invariants whose Jacobian at ``start`` is regular."""
    jacobian = _jacobian(inv, start, unknowns)
    for chosen in itertools.combinations(range(len(jacobian)), len(unknowns)):
        if _numeric_rank([jacobian[i] for i in chosen]) == len(unknowns):
            return list(chosen)
    return None


def _jacobian(inv: Invariants, point: list, unknowns: list[int]) -> list[list[mpmath.mpf]]:
    """Central differences of every invariant along every unknown (rows: invariants)."""
    columns = []
    with mpmath.workdps(DIGITS):
        for k in unknowns:
            step = mpmath.mpf("1e-12") * max(1, abs(point[k]))
            up, down = list(point), list(point)
            up[k] += step
            down[k] -= step
            high, low = _values(inv, up), _values(inv, down)
            columns.append([(h - lo) / (2 * step) for h, lo in zip(high, low, strict=True)])
    return [list(row) for row in zip(*columns, strict=True)]


def _scale(value: mpmath.mpf) -> mpmath.mpf:
    return max(abs(value), mpmath.mpf(1e-30))


def _agrees(got: list[mpmath.mpf], target: list[mpmath.mpf]) -> bool:
    return all(abs(g - t) <= CHECK_TOLERANCE * _scale(t) for g, t in zip(got, target, strict=True))


def _signs_kept(point: list[mpmath.mpf], spacetime: Spacetime) -> bool:
    """Parameters must keep their declared signs (positive M stays positive)."""
    for symbol, value in zip(spacetime.parameters, point, strict=False):
        if (symbol.is_positive and value <= 0) or (symbol.is_negative and value >= 0):
            return False
        if (symbol.is_nonnegative and value < 0) or (symbol.is_nonzero and value == 0):
            return False
    return True
