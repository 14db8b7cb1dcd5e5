"""Dimension of the local isometry algebra, computed from the metric alone.

Method (the integrability conditions of Killing's equation; Nomizu 1960, Singer 1960, and the
textbooks on exact solutions): a Killing vector is fixed by its value and first derivatives at
one point — N = n(n+1)/2 numbers ζ_b = g_bc ξ^c and the antisymmetric part of ∂_a ζ_b. Every
higher Taylor coefficient follows from Killing's equation, order by order, and at each order
the equation is overdetermined: what is left over is a set of linear conditions on the N
numbers (at first order they are L_ξ R = 0, then L_ξ ∇R = 0, ...). The local Killing vectors
are exactly the data that meet the conditions of every order; the conditions are accumulated
until their rank has not changed for ``STABLE_ORDERS`` consecutive orders.

Written out in a chart around the point, with G = g(point) and ζ = Gξ,

    (L_ξ g)_ab = ∂_a ζ_b + ∂_b ζ_a + ξ^c ∂_c g_ab + (g − G)_cb ∂_a ξ^c + (g − G)_ac ∂_b ξ^c,

so the degree-m Taylor coefficient of the equation reads S(ζ^(m+1)) = −(lower orders), where
the symbol S(z)_ab = ∂_a z_b + ∂_b z_a does not depend on the metric and is injective on
homogeneous polynomials of degree ≥ 2. Its cokernel gives the conditions, a left inverse the
next coefficients. All arithmetic is on jets modulo a prime (``jets``), at a random point of
the entry's field, repeated at a second independent point and prime.

Every step can only *over*-estimate the dimension: the kernel of the conditions up to any
order contains the Killing algebra, and an unlucky point or prime lowers a rank. The
dimension reported is the smaller of the two points' values; it is certified from below when
as many independent Killing vectors have been verified symbolically (``complete``).

The computation is bounded by counted work, never by time (``WORK_BOUND`` units of jet
arithmetic, ``jets.JetWork``: term products of the jets, coefficients of the polynomials
evaluated and entries of the condition tables), together with the fixed bounds on the order
of the conditions and the number of points tried, so that a slow and a fast machine report
the same dimension. The entry's own time budget in the run stage stays the backstop.
"""

from __future__ import annotations

import random
from collections.abc import Sequence
from dataclasses import dataclass

import flint
import numpy as np
import sympy

from generator.geometry.algebra import FieldRequest, NotInField, build_field
from generator.model import Spacetime
from generator.physics.jets import (
    BadPoint,
    FieldJets,
    JetWork,
    JetWorkReached,
    jet_space,
    primes,
)

MAX_ORDER = {1: 3, 2: 8, 3: 7, 4: 6, 5: 5, 6: 4}  # highest order of conditions per dimension
STABLE_ORDERS = 2  # the rank must stay put this many orders in a row
POINT_ATTEMPTS = 40
SEED = 20261203
WORK_BOUND = 1_000_000_000  # units of counted jet arithmetic for one entry (see the docstring;
# bench/isometry_work.py prints what each shipped entry uses)


@dataclass(frozen=True)
class IsometryAtPoint:
    dimension: int
    orbit_dimension: int
    ranks: tuple[int, ...]  # rank of the conditions after each order
    stable: bool
    kernel: tuple[tuple[int, ...], ...]  # a basis of the allowed 1-jets (mod p)
    p: int
    bounded: bool = False  # the work bound stopped the orders before they settled


@dataclass(frozen=True)
class IsometryDimension:
    dimension: int | None
    orbit_dimension: int | None
    orders: int  # how many orders of conditions were used
    method: str
    why_null: str | None
    points_agree: bool = True
    work: int = 0  # units of jet arithmetic spent (for the benchmark that sets the bound)


# ====================================================================== linear algebra mod p


def row_reduce(rows: list[list[int]], p: int) -> list[list[int]]:
    """Reduced row echelon form (non-zero rows only) of a small matrix modulo p."""
    rows = [list(r) for r in rows if any(r)]
    if not rows:
        return []
    m = flint.nmod_mat(len(rows), len(rows[0]), [v % p for r in rows for v in r], p)
    reduced, rank = m.rref()
    return [[int(reduced[i, j]) for j in range(m.ncols())] for i in range(rank)]


def null_space(rows: list[list[int]], size: int, p: int) -> list[list[int]]:
    """A basis of {x : rows · x = 0} in GF(p)^size."""
    reduced = row_reduce(rows, p)
    pivots = [next(j for j, v in enumerate(r) if v) for r in reduced]
    basis = []
    for free in (j for j in range(size) if j not in pivots):
        x = [0] * size
        x[free] = 1
        for r, pivot in zip(reduced, pivots, strict=True):
            x[pivot] = (-r[free]) % p
        basis.append(x)
    return basis


def matrix_rank(rows: Sequence[Sequence[int]], p: int) -> int:
    rows = [list(r) for r in rows if any(r)]
    if not rows:
        return 0
    return flint.nmod_mat(len(rows), len(rows[0]), [v % p for r in rows for v in r], p).rank()


def _matmul(a: np.ndarray, b: np.ndarray, p: int) -> np.ndarray:
    """a @ b modulo p < 2**31 without overflow: b is split into 16-bit halves."""
    low, high = b & 0xFFFF, b >> 16
    return ((a @ low) % p + ((a @ high) % p) * 65536) % p


# ====================================================================== conditions at one point


class KillingConditions:
    """The staged solution of Killing's equation at one point (see the module docstring)."""

    def __init__(self, metric_jets: list[list[np.ndarray]], n: int, p: int, order: int,
                 work: JetWork | None = None) -> None:
        self.n, self.p, self.order = n, p, order
        self.work = work
        self.space = jet_space(n, order + 2)  # q in ``next_order`` reaches degree order + 2
        self.params = n * (n + 1) // 2
        self.g = metric_jets  # jets over jet_space(n, order + 2)
        g0 = [[int(metric_jets[a][b][0]) for b in range(n)] for a in range(n)]
        matrix = flint.nmod_mat(n, n, [v for row in g0 for v in row], p)
        if matrix.det() == 0:
            raise BadPoint("the metric is degenerate at the point")
        inverse = matrix.inv()
        self.g0_inv = np.array([[int(inverse[i, j]) for j in range(n)] for i in range(n)],
                               dtype=np.int64)
        size = self.space.size
        self.zeta = np.zeros((n, size, self.params), dtype=np.int64)
        self.dg = [[[self._diff(metric_jets[a][b], c) for c in range(n)] for b in range(n)]
                   for a in range(n)]
        self.delta = [[self._without_constant(metric_jets[a][b]) for b in range(n)]
                      for a in range(n)]
        self.conditions: list[list[int]] = []

    def _diff(self, jet: np.ndarray, var: int) -> np.ndarray:
        src, dst, fac = self.space.derivative_table(var)
        out = np.zeros(self.space.size, dtype=np.int64)
        out[dst] = (jet[src] * fac) % self.p
        return out

    @staticmethod
    def _without_constant(jet: np.ndarray) -> np.ndarray:
        out = jet.copy()
        out[0] = 0
        return out

    def xi(self) -> np.ndarray:
        """ξ^c = G^cb ζ_b, coefficient by coefficient (shape n × monomials × params)."""
        flat = self.zeta.reshape(self.n, -1)
        return _matmul(self.g0_inv, flat, self.p).reshape(self.zeta.shape)

    def lower_order(self, degree: int) -> np.ndarray:
        """Degree-``degree`` part of ξ^c ∂_c g_ab + (g − G)_cb ∂_a ξ^c + (g − G)_ac ∂_b ξ^c,
        rows (a ≤ b, γ), as linear forms in the parameters."""
        n, p = self.n, self.p
        xi = self.xi()
        dxi = [[self.diff_forms(xi[c], a) for a in range(n)] for c in range(n)]
        left, right, target = self.space.pairs_of_degree(degree)
        width = len(self.space.of_degree(degree))
        blocks = []
        for a in range(n):
            for b in range(a, n):
                out = np.zeros((width, self.params), dtype=np.int64)
                for c in range(n):
                    for jet, forms in ((self.dg[a][b][c], xi[c]), (self.delta[c][b], dxi[c][a]),
                                       (self.delta[a][c], dxi[c][b])):
                        coefficients = jet[right]
                        used = coefficients != 0
                        if not used.any():
                            continue
                        self._spend(int(used.sum()) * self.params)
                        contribution = (forms[left[used]] * coefficients[used][:, None]) % p
                        np.add.at(out, target[used], contribution)
                        out %= p
                blocks.append(out)
        return np.concatenate(blocks)

    def _spend(self, amount: int) -> None:
        if self.work is not None:
            self.work.spend(amount)

    def diff_forms(self, forms: np.ndarray, var: int) -> np.ndarray:
        src, dst, fac = self.space.derivative_table(var)
        out = np.zeros_like(forms)
        out[dst] = (forms[src] * fac[:, None]) % self.p
        return out

    def first_order(self) -> None:
        """Degree 0: ζ_b(0) and the antisymmetric part of ∂_a ζ_b are the parameters; the
        symmetric part is −½ (lower order)_ab."""
        n, p = self.n, self.p
        for b in range(n):
            self.zeta[b, 0, b] = 1
        lower = self.lower_order(0)  # rows (a ≤ b), one monomial each
        half = pow(2, -1, p)
        row = {pair: k for k, pair in enumerate((a, b) for a in range(n) for b in range(a, n))}
        antisymmetric = {pair: n + k for k, pair in enumerate(
            (a, b) for a in range(n) for b in range(a + 1, n))}
        for a in range(n):
            for b in range(n):
                unit = self.space.index[tuple(1 if v == a else 0 for v in range(n))]
                form = (-lower[row[min(a, b), max(a, b)]] * half) % p
                if a < b:
                    form[antisymmetric[a, b]] = (form[antisymmetric[a, b]] + 1) % p
                elif a > b:
                    form[antisymmetric[b, a]] = (form[antisymmetric[b, a]] - 1) % p
                self.zeta[b, unit] = form

    def next_order(self, degree: int) -> None:
        """Degree ``degree`` ≥ 1 of the equation: new conditions, and ζ of degree + 1.

        S(z) = e is inverted by the classical formula ∂_b∂_c z_a = ½(∂_b e_ca + ∂_c e_ab −
        ∂_a e_bc) and Euler's relation z_a = Σ h_b h_c ∂_b∂_c z_a / (d(d − 1)) for z of
        degree d; with w_a = Σ_b h_b e_ab and q = Σ_a h_a w_a (Euler again, e has degree
        d − 1) that is z_a = (2d w_a − ∂_a q) / (2d(d − 1)). Whatever of e this z does not
        reproduce, e − S(z), is the new conditions."""
        n, p = self.n, self.p
        rhs = (-self.lower_order(degree)) % p
        rows = self.space.of_degree(degree)
        width = len(rows)
        e = {}
        k = 0
        for a in range(n):
            for b in range(a, n):
                full = np.zeros((self.space.size, self.params), dtype=np.int64)
                full[rows] = rhs[k * width:(k + 1) * width]
                e[a, b] = e[b, a] = full
                k += 1
        d = degree + 1
        w = [sum(self._times(e[a, b], b) for b in range(n)) % p for a in range(n)]
        q = sum(self._times(w[a], a) for a in range(n)) % p
        scale = pow(2 * d * (d - 1), -1, p)
        z = [(2 * d * w[a] - self.diff_forms(q, a)) % p * scale % p for a in range(n)]
        residual = []
        for a in range(n):
            for b in range(a, n):
                image = (self.diff_forms(z[b], a) + self.diff_forms(z[a], b)) % p
                residual.append(((image - e[a, b]) % p)[rows])
        new = np.concatenate(residual)
        new = new[new.any(axis=1)]
        if len(new):
            self._spend((len(new) + len(self.conditions)) * self.params * self.params)
            self.conditions = row_reduce(self.conditions + new.tolist(), p)
        targets = self.space.of_degree(d)
        for a in range(n):
            self.zeta[a, targets] = z[a][targets]

    def _times(self, forms: np.ndarray, var: int) -> np.ndarray:
        """h_var · forms (degrees beyond the space are dropped: they are never needed)."""
        src, dst, _fac = self.space.derivative_table(var)
        out = np.zeros_like(forms)
        out[src] = forms[dst]
        return out


@dataclass
class SolvedConditions:
    """The solver after the last order it reached, with the ranks of the conditions per order;
    ``stable``: the rank settled (or came down to the known vectors); ``bounded``: the work
    bound stopped the orders first."""

    solver: KillingConditions
    ranks: list[int]
    stable: bool
    bounded: bool

    def kernel(self) -> list[list[int]]:
        """A basis of the allowed 1-jet data (the parameters of ``KillingConditions``)."""
        return null_space(self.solver.conditions, self.solver.params, self.solver.p)


def solve_conditions(metric_jets: list[list[np.ndarray]], n: int, p: int, order: int,
                     work: JetWork | None = None, known: int = 0) -> SolvedConditions:
    """The orders of conditions until they settle, reach ``known`` or ``order`` (see
    ``conditions_at_point``); raises JetWorkReached when the bound stops the first order."""
    solver = KillingConditions(metric_jets, n, p, order, work)
    ranks: list[int] = []
    stable = bounded = False
    solver.first_order()
    for degree in range(1, order + 1):
        try:
            solver.next_order(degree)
        except JetWorkReached:
            bounded = True
            break
        ranks.append(len(solver.conditions))
        if ranks[-1] == solver.params or solver.params - ranks[-1] <= known:
            stable = True
            break
        if len(ranks) > STABLE_ORDERS and len(set(ranks[-STABLE_ORDERS - 1:])) == 1:
            stable = True
            break
    return SolvedConditions(solver, ranks, stable, bounded)


def conditions_at_point(metric_jets: list[list[np.ndarray]], n: int, p: int, order: int,
                        work: JetWork | None = None, known: int = 0) -> IsometryAtPoint:
    """``known``: how many independent Killing vectors are already verified (a lower bound).
    The conditions can only shrink the kernel, never below the Killing algebra, so once the
    kernel is down to ``known`` the dimension is certain and no further order is needed.
    ``work``: the counted work bound; when it is reached the orders stop (``bounded``) and the
    kernel so far is an upper bound only."""
    try:
        solved = solve_conditions(metric_jets, n, p, order, work, known)
    except JetWorkReached:
        return IsometryAtPoint(n * (n + 1) // 2, n, (), False, (), p, True)
    kernel = solved.kernel()
    ranks, stable, bounded = solved.ranks, solved.stable, solved.bounded
    g0_inv = solved.solver.g0_inv
    values = [[int(sum(int(g0_inv[c][b]) * v[b] for b in range(n)) % p) for c in range(n)]
              for v in kernel]
    return IsometryAtPoint(len(kernel), matrix_rank(values, p), tuple(ranks), stable,
                           tuple(tuple(v) for v in kernel), p, bounded)


# ====================================================================== an entry


def metric_field(spacetime: Spacetime, extra: Sequence[sympy.Expr] = ()):
    """The engine's field of the metric components (and of ``extra`` expressions)."""
    n = spacetime.dimension
    entries = tuple(spacetime.metric[a, b] for a in range(n) for b in range(n))
    request = FieldRequest(spacetime.coordinates, spacetime.parameters, spacetime.functions,
                           (*entries, *extra), 2)
    field, values = build_field(request)
    return field, values[: n * n], values[n * n:]


def metric_jets_at(field, metric_values, n: int, order: int, rng: random.Random,
                   avoid: Sequence[int] = (), work: JetWork | None = None
                   ) -> tuple[FieldJets, list[list[np.ndarray]]]:
    """Jets of the metric at a random usable point, modulo a prime not in ``avoid``: at most
    ``POINT_ATTEMPTS`` points, each counted against ``work`` (raises JetWorkReached past it)."""
    choices = [q for q in primes() if q not in avoid]
    for attempt in range(POINT_ATTEMPTS):
        p = choices[attempt % len(choices)] if attempt < 8 else rng.choice(choices)
        try:
            jets = FieldJets(field, order, rng, p, work)
            metric = [[jets.rational(metric_values[a * n + b]) for b in range(n)]
                      for a in range(n)]
            return jets, metric
        except BadPoint:
            continue
    raise BadPoint("no usable point found")


@dataclass(frozen=True)
class PointData:
    """What the isometry stage takes from one random point besides the conditions: the
    1-jets (value and first derivatives, mod p) of extra expressions such as listed vectors'
    components and scalar invariants."""

    p: int
    one_jets: tuple[tuple[int, ...], ...]  # per extra expression: value, then ∂_1 .. ∂_n


def isometry_dimension(spacetime: Spacetime, extra: Sequence[sympy.Expr] = (),
                       verified: Sequence[Sequence[int]] = (), bound: int = WORK_BOUND
                       ) -> tuple[IsometryDimension, list[PointData]]:
    """The local isometry dimension at two independent random points (see module docstring),
    and the 1-jets of ``extra`` expressions at the same points.

    ``verified``: for each symbolically verified Killing vector, the positions of its n
    components in ``extra``. Their rank at a point bounds the dimension from below; when the
    conditions come down to it the dimension is certain (certified) and the second point,
    which could only confirm it, is skipped. ``bound``: the counted work bound (module
    docstring)."""
    n = spacetime.dimension
    order = MAX_ORDER.get(n)
    if order is None:
        return IsometryDimension(None, None, 0, "", f"not attempted in {n} dimensions "
                                 "(the condition tables grow too large)"), []
    work = JetWork(bound)
    try:
        field, metric_values, extra_values = metric_field(spacetime, extra)
    except (NotInField, ZeroDivisionError) as exc:
        return IsometryDimension(None, None, 0, "", f"the metric does not fit the exact "
                                 f"engine's field ({exc})"), []
    rng = random.Random(SEED)
    certified = None
    results: list[IsometryAtPoint] = []
    data: list[PointData] = []
    try:
        for _ in range(2):
            jets, metric = metric_jets_at(field, metric_values, n, order + 2, rng,
                                          [r.p for r in results], work)
            point = PointData(jets.p, tuple(_one_jet(jets, v, n) for v in extra_values))
            known = matrix_rank([[v for k in slots for v in point.one_jets[k]]
                                 for slots in verified], jets.p) if verified else 0
            results.append(conditions_at_point(metric, n, jets.p, order, work, known))
            data.append(point)
            if results[-1].dimension == known:
                certified = known
                break
            if results[-1].bounded:
                break
    except BadPoint as exc:
        return IsometryDimension(None, None, 0, "", f"no usable sample point ({exc})",
                                 work=work.used), []
    except JetWorkReached as exc:
        if not results:
            return IsometryDimension(None, None, 0, "", f"the work bound ({exc}) was reached "
                                     "while evaluating the metric at a sample point",
                                     work=work.used), []
    except NotInField as exc:
        return IsometryDimension(None, None, 0, "", f"a derivative leaves the exact engine's "
                                 f"field ({exc})"), []
    best = min(results, key=lambda r: r.dimension)
    orders = max(len(r.ranks) for r in results)
    agree = len({r.dimension for r in results}) == 1
    if certified is not None:
        method = (f"integrability conditions of Killing's equation up to order {orders} at a "
                  f"random point of the metric's field (exact arithmetic modulo a prime near "
                  f"2^31), down to the {certified} verified independent Killing vectors: "
                  f"certain")
        return IsometryDimension(best.dimension, best.orbit_dimension, orders, method, None,
                                 agree, work.used), data
    method = (f"integrability conditions of Killing's equation up to order {orders}, at two "
              f"random points of the metric's field, exact arithmetic modulo primes near 2^31")
    if any(r.bounded for r in results) or len(results) < 2:
        return IsometryDimension(None, None, orders, method, f"the work bound ({work.bound} "
                                 f"units of counted jet arithmetic) was reached after {orders} "
                                 f"orders of conditions (at most {best.dimension})",
                                 agree, work.used), data
    if not all(r.stable for r in results):
        return IsometryDimension(None, None, orders, method, f"the conditions did not settle "
                                 f"within {order} orders (at most {best.dimension})",
                                 agree, work.used), data
    return IsometryDimension(best.dimension, best.orbit_dimension, orders, method, None,
                             agree, work.used), data


def _one_jet(jets: FieldJets, value, n: int) -> tuple[int, ...]:
    jet = jets.rational(value)
    space = jets.space
    return (int(jet[0]), *(int(jet[space.index[tuple(1 if v == i else 0 for v in range(n))]])
                           for i in range(n)))
