"""A search for the Killing vectors an entry does not list, in an ansatz built from its own
generators, with every vector found verified symbolically before it is accepted.

Why an ansatz: Killing's equation L_ξ g = 0 is linear in ξ, so once each component ξ^a is
written as a combination Σ_k c_ak m_k of known functions m_k with unknown constants c_ak, the
equation becomes a linear system for the c's. The functions are monomials in

* the coordinates (powers −2 … 2), the sines and cosines, hyperbolic functions, exponentials
  and radicals that occur in the metric, and the radical √|g_xx| of every coordinate x the
  metric does not depend on (the norm of the Killing vector ∂_x);
* the entry's parameters (powers −1 … 1; constants may depend on them);
* for every coordinate x the metric does not depend on ("cyclic"), one factor of a class
  {1, x, x²}, {e^{kx}}, {e^{−kx}} or {cos kx, sin kx}. ∂_x is then a Killing vector and the
  algebra splits into eigenspaces of [∂_x, ·], whose x-dependence is one of these classes;
  the rates k are 1 and the square roots (and inverse square roots) of the parameter
  coefficients of the metric's components — e.g. √(Λ/3) in 1 − Λr²/3, or 1/(1 − 4μ) for a
  conical deficit (1 − 4μ)² r² dφ².

Each choice of classes is one independent block of the linear system (different classes are
linearly independent functions of x, and ∂_x keeps each class), which keeps the systems small.
A block is solved modulo a prime near 2^31 from the values and first derivatives of every
function at random points of the metric's field (``jets``, order 1): the equations at a point
are exact, and evaluating at more points than unknowns leaves (with high probability) exactly
the solutions. The rational coefficients are recovered by rational reconstruction, and each
vector is then checked with the project's symbolic zero test of L_ξ g, as a listed vector is;
a vector that fails is dropped, so the search never returns an unverified vector. Independence
from the listed and already found vectors is judged by their 1-jets (a Killing vector is fixed
by its value and first derivatives at one point) at two random points.

Each vector found is shown divided by its content, with a positive leading coefficient
(``vector_normal``), and verified in exactly that form.

After a block finds a vector, the basis is closed under brackets (the bracket of two Killing
vectors is one): a bracket is kept when its 1-jet raises the rank at a random point of a field
holding every component, and it passes the symbolic check like any other candidate.

The search stops as soon as the listed and found vectors span the computed dimension, or when
the ansatz, the size bound or the work bound is exhausted; it then says how many it found.
The work bound counts what the search does — random points evaluated, unknowns of the linear
systems solved and symbolic checks of candidates — never the time it takes, so that what is
found is the same on a slow and a fast machine (the entry's own time budget in the run stage
stays the backstop).
"""

from __future__ import annotations

import itertools
import math
import random
import re
from collections.abc import Sequence
from dataclasses import dataclass, field

import flint
import numpy as np
import sympy

from generator.geometry.algebra import NotInField
from generator.geometry.exactvalues import vanishes
from generator.model import Spacetime
from generator.physics.isometry import MAX_ORDER, matrix_rank, metric_field, solve_conditions
from generator.physics.isometry import WORK_BOUND as ISOMETRY_WORK_BOUND
from generator.physics.jets import BadPoint, FieldJets, FieldPoint, JetWork, JetWorkReached, primes
from generator.physics.killing_eigen import (
    AdjointAction,
    adjoint_action,
    may_hold_new,
    rate_squares_at,
)
from generator.physics.lie_algebra import commutator
from generator.physics.symmetry import lie_derivative_metric
from generator.physics.vector_normal import normalised

SEED = 20261204
MAX_UNKNOWNS = 1400  # columns of one block's linear system
DEGREES = (2, 3, 4)  # total degree of the non-cyclic part, tried in turn
MAX_CYCLIC_DEGREE = 2  # total degree of the polynomial classes over all cyclic coordinates
MAX_RATES = 2  # candidate rates k per cyclic coordinate
EXTRA_POINTS = 16
SIGNATURE_POINTS = (0,)  # one point: the parameters must keep one value (independence is
# over functions of the parameters), and one generic 1-jet fixes a Killing vector
PRIME_TRIES = 6
CIRCULAR = (sympy.sin, sympy.cos)
HYPERBOLIC = (sympy.sinh, sympy.cosh)


@dataclass(frozen=True)
class WorkBound:
    """How much work one entry's search may do, counted in deterministic units (see module
    docstring): random points of the metric's field evaluated, unknowns (columns) of the linear
    systems solved — the reductions of the monomials included — and symbolic checks of
    candidate vectors by Killing's equation."""

    points: int = 1500
    unknowns: int = 30000
    checks: int = 60


WORK_BOUND = WorkBound()
WORK_KINDS = ("points", "unknowns", "checks")


class WorkBoundReached(Exception):
    """The search has done as much work as its bound allows."""


class Work:
    """The work done so far against a bound; ``spend`` is called before the work is done."""

    def __init__(self, bound: WorkBound) -> None:
        self.bound = bound
        self.used = dict.fromkeys(WORK_KINDS, 0)

    def spend(self, kind: str, amount: int = 1) -> None:
        if self.used[kind] + amount > getattr(self.bound, kind):
            raise WorkBoundReached(kind)
        self.used[kind] += amount

    def snapshot(self) -> tuple[tuple[str, int], ...]:
        return tuple((kind, self.used[kind]) for kind in WORK_KINDS)


@dataclass(frozen=True)
class SearchResult:
    """``found``: verified Killing vectors (components in coordinate order) independent of the
    listed ones; ``rejected``: candidates the symbolic check refused (never shown); ``work``:
    the work done (points, unknowns, checks) and ``work_at_last_find`` the work done when the
    last vector was found (for the benchmark that sets the bound)."""

    found: tuple[tuple[sympy.Expr, ...], ...]
    complete: bool
    summary: str  # what was searched and with what outcome, in words
    rejected: int = 0
    work: tuple[tuple[str, int], ...] = ()
    work_at_last_find: tuple[tuple[str, int], ...] = ()


@dataclass(frozen=True)
class Atom:
    expr: sympy.Expr
    low: int
    high: int
    parameter: bool = False


# ====================================================================== the ansatz


def cyclic_coordinates(spacetime: Spacetime) -> list[int]:
    metric = spacetime.metric
    return [i for i, x in enumerate(spacetime.coordinates)
            if not any(x in metric[a, b].free_symbols for a in range(spacetime.dimension)
                       for b in range(spacetime.dimension))]


def _parameter_coefficients(spacetime: Spacetime) -> list[sympy.Expr]:
    """Non-numeric coefficients of the metric components: their coordinate-free factors, and
    the coefficients of their numerators and denominators as polynomials in the coordinates
    and the coordinates' functions (each factored), simplest first."""
    coordinates = set(spacetime.coordinates)
    out: list[sympy.Expr] = []

    def add(c: sympy.Expr) -> None:
        c = sympy.factor(c)
        if c.free_symbols and not c.free_symbols & coordinates and c not in out:
            out.append(c)

    n = spacetime.dimension
    for a in range(n):
        for b in range(a, n):
            value = spacetime.metric[a, b]
            if value == 0:
                continue
            for factor in sympy.Mul.make_args(sympy.factor(value)):
                add(factor)
            for part in sympy.fraction(sympy.together(value)):
                generators = sorted((g for g in sympy.expand(part).atoms(sympy.Symbol,
                                                                        sympy.Function)
                                     if g.free_symbols & coordinates), key=str)
                if not generators:
                    continue
                try:
                    coefficients = sympy.Poly(part, *generators).coeffs()
                except sympy.PolynomialError:
                    continue
                if len(coefficients) == 1:
                    add(coefficients[0])
                for c in coefficients[:-1]:
                    add(c / coefficients[-1])
    return sorted(out, key=sympy.count_ops)


def candidate_rates(spacetime: Spacetime) -> list[sympy.Expr]:
    """1 and √|c|, 1/√|c| for the metric's parameter coefficients c (see module docstring)."""
    rates = [sympy.Integer(1)]
    for c in _parameter_coefficients(spacetime):
        magnitude = -c if c.could_extract_minus_sign() else c
        root = sympy.sqrt(magnitude).replace(sympy.Abs, lambda x: x)
        root = sympy.powdenest(root, force=True)
        for k in (root, 1 / root):
            k = sympy.simplify(k)
            if k not in rates and k.free_symbols:
                rates.append(k)
        if len(rates) > MAX_RATES:
            break
    return rates[: MAX_RATES + 1]


def classes_for(x: sympy.Symbol, rates: Sequence[sympy.Expr]
                ) -> list[tuple[str, tuple[sympy.Expr, ...]]]:
    # The polynomial class in levels {1} ⊂ {1, x} ⊂ {1, x, x²}: a smaller class leaves room
    # for a higher degree in the other coordinates within the size bound.
    # Each class is named by its kind and level or rate index (see ``_complexity``).
    out: list[tuple[str, tuple[sympy.Expr, ...]]] = [
        (f"poly{level}", (sympy.Integer(1), x, x**2)[:level]) for level in (1, 2, 3)]
    for index, k in enumerate(rates):
        out.append((f"trig{index}", (sympy.cos(k * x), sympy.sin(k * x))))
        out.append((f"exp{index}", (sympy.exp(k * x),)))
        out.append((f"exp{index}", (sympy.exp(-k * x),)))
    return out


def _function_atoms(spacetime: Spacetime, cyclic: Sequence[int]) -> list[Atom]:
    coordinates = set(spacetime.coordinates)
    n = spacetime.dimension
    values = [spacetime.metric[a, b] for a in range(n) for b in range(a, n)]
    atoms: list[Atom] = []

    def add(atom: Atom) -> None:
        if all(a.expr != atom.expr for a in atoms):
            atoms.append(atom)

    for i, x in enumerate(spacetime.coordinates):
        if i not in cyclic and any(_bare(value, x) for value in values):
            add(Atom(x, -2, 2))
    for value in values:
        for f in _ordered(value.atoms(*CIRCULAR, *HYPERBOLIC)):
            arg = f.args[0]
            if not arg.free_symbols & coordinates:
                continue
            sin_f, cos_f = (sympy.sin, sympy.cos) if f.func in CIRCULAR else \
                (sympy.sinh, sympy.cosh)
            add(Atom(sin_f(arg), -1, 1))
            # cosh never vanishes, and 1/cosh (tanh = sinh/cosh) is common in Killing vectors
            # (anti-de Sitter's global chart); 1/cos is left out to keep the blocks small.
            add(Atom(cos_f(arg), -1 if cos_f is sympy.cosh else 0, 1))
        for f in _ordered(value.atoms(sympy.exp)):
            if f.args[0].free_symbols & coordinates:
                add(Atom(f, -2, 2))
        for f in _ordered(value.atoms(sympy.Pow)):
            if f.exp.is_Rational and not f.exp.is_Integer and f.base.free_symbols & coordinates:
                add(Atom(_root_atom(f.base, f.exp.q), -1, 1))
    for i in cyclic:
        radicand = spacetime.metric[i, i]
        if radicand == 0:
            continue
        if i < len(spacetime.signature) and spacetime.signature[i] == "-":
            radicand = -radicand
        root = sympy.powdenest(sympy.sqrt(sympy.factor(radicand)), force=True)
        if _is_power_of_atoms(root, atoms):
            continue
        if any(p.exp.is_Rational and not p.exp.is_Integer and p.base.free_symbols & coordinates
               for p in root.atoms(sympy.Pow)):
            add(Atom(_root_atom(radicand, 2), -1, 1))
    return atoms


def _is_power_of_atoms(root: sympy.Expr, atoms: Sequence[Atom]) -> bool:
    """Whether every coordinate root in ``root`` is already a power of a root atom: √(t^{4/3})
    is t^{2/3}, a power of the atom t^{1/3}. Adding √(t^{4/3}) as an atom of its own gave the
    flat dust universe's translations as √(t^{4/3})/t^{2/3} ∂_x, and the bracket table then
    solved over numbers such as 2^{2/3} for minutes."""
    roots = [p for p in root.atoms(sympy.Pow) if p.exp.is_Rational and not p.exp.is_Integer]
    if not roots:
        return False
    for p in roots:
        if not any(isinstance(a.expr, sympy.Pow) and a.expr.base == p.base
                   and a.expr.exp.is_Rational and (p.exp / a.expr.exp).is_Integer
                   for a in atoms):
            return False
    return True


def _root_atom(radicand: sympy.Expr, q: int) -> sympy.Expr:
    """The q-th root as an atom, with a denominator that is a q-th power of the parameters
    taken out: √(1 + r²/ℓ²) becomes √(ℓ² + r²) (1/ℓ is among the parameter powers). The
    field adjoins the root of such a denominator with a sign of its own at each point, which
    made the vectors built on √(1 + r²/ℓ²) inconsistent from point to point."""
    numerator, denominator = sympy.fraction(sympy.together(radicand))
    root_of_denominator = sympy.powdenest(denominator ** sympy.Rational(1, q), force=True)
    if denominator != 1 and not any(
            f.exp.is_Rational and not f.exp.is_Integer
            for f in root_of_denominator.atoms(sympy.Pow)) and not \
            root_of_denominator.free_symbols & radicand.free_symbols - set(
                x for x in radicand.free_symbols if x.is_positive):
        return sympy.expand(numerator) ** sympy.Rational(1, q)
    return radicand ** sympy.Rational(1, q)


def _ordered(found: set[sympy.Expr]) -> list[sympy.Expr]:
    """A set of subexpressions in a fixed order (a set's order follows string hashes, which
    change from one process to the next; the ansatz, and so what is found, must not)."""
    return sorted(found, key=sympy.default_sort_key)


def _bare(value: sympy.Expr, x: sympy.Symbol) -> bool:
    """Whether x occurs in ``value`` outside sin, cos, sinh, cosh and exp."""
    stripped = value.replace(lambda e: isinstance(e, (*CIRCULAR, *HYPERBOLIC, sympy.exp)),
                             lambda e: sympy.Integer(2))
    return x in stripped.free_symbols


def _parameter_atoms(spacetime: Spacetime, rates: Sequence[sympy.Expr]) -> list[Atom]:
    """The parameters, and each rate k with a radical in it as an atom of its own (powers −2…2):
    a Killing vector's components then carry k itself, e.g. k = √(Λ/3) in de Sitter, with a
    rational coefficient — written in √Λ they would need the irrational 1/√3. A parameter whose
    square root is such a rate (up to a rational factor) is covered by the rate's powers."""
    atoms = [Atom(p, -1, 1, True) for p in spacetime.parameters]
    rate_atoms: list[sympy.Expr] = []
    for k in rates[1:]:
        radical = any(f.exp.is_Rational and not f.exp.is_Integer and f.base.free_symbols
                      for f in k.atoms(sympy.Pow))
        if radical and not any(_rational_ratio(k * other) or _rational_ratio(k / other)
                               for other in rate_atoms):
            rate_atoms.append(k)
    covered = {p for p in spacetime.parameters
               if any(_rational_ratio(k**2 / p) or _rational_ratio(k**2 * p)
                      for k in rate_atoms)}
    return ([a for a in atoms if a.expr not in covered]
            + [Atom(k, -2, 2, True) for k in rate_atoms])


def _rational_ratio(ratio: sympy.Expr) -> bool:
    return sympy.simplify(ratio).is_Rational is True


def monomials(atoms: Sequence[Atom], degree: int, parameter_degree: int
              ) -> list[tuple[int, ...]]:
    """Exponent vectors with Σ|e| ≤ degree over function atoms and ≤ parameter_degree over
    parameter atoms, simplest first."""
    ranges = [range(a.low, a.high + 1) for a in atoms]
    out = []
    for exps in itertools.product(*ranges):
        function_degree = sum(abs(e) for e, a in zip(exps, atoms, strict=True)
                              if not a.parameter)
        parameter = sum(abs(e) for e, a in zip(exps, atoms, strict=True) if a.parameter)
        if function_degree <= degree and parameter <= parameter_degree:
            out.append(exps)
    return sorted(out, key=lambda e: (sum(abs(v) for v in e), e))


# ====================================================================== values at points


class PointValues:
    """Values and first derivatives (mod p) of the metric, the ansatz atoms and the listed
    vectors' components at many random points of the metric's field."""

    def __init__(self, spacetime: Spacetime, atoms: Sequence[sympy.Expr],
                 listed: Sequence[Sequence[sympy.Expr]]) -> None:
        self.n = spacetime.dimension
        extra = [*atoms, *(c for xi in listed for c in xi)]
        self.field, self.metric_values, self.extra_values = metric_field(spacetime, extra)
        self.atom_count = len(atoms)
        self.rng = random.Random(SEED)
        self.p = self._prime()
        self.atoms: list[np.ndarray] = []  # per point: (atoms, 1 + n)
        self.metric: list[np.ndarray] = []  # per point: (n, n, 1 + n)
        self.listed: list[np.ndarray] = []  # per point: (vectors, n, 1 + n)
        self.listed_count = len(listed)
        self.first_state: object = None  # the generator's state the first point was drawn in
        self.first_point: FieldPoint | None = None

    def _prime(self) -> int:
        for p in primes()[:PRIME_TRIES]:
            try:
                FieldJets(self.field, 1, random.Random(SEED), p)
                return p
            except BadPoint:
                continue
        raise BadPoint("no prime gave a usable point")

    def _one_jet(self, jets: FieldJets, value) -> list[int]:
        jet = jets.rational(value)
        space = jets.space
        units = [space.index[tuple(1 if v == i else 0 for v in range(self.n))]
                 for i in range(self.n)]
        return [int(jet[0]), *(int(jet[u]) for u in units)]

    def grow(self, count: int, work: Work) -> None:
        attempts = 0
        while len(self.atoms) < count and attempts < 4 * count + 40:
            attempts += 1
            work.spend("points")
            state = self.rng.getstate()
            try:
                jets = FieldJets(self.field, 1, self.rng, self.p)
                atoms = np.array([self._one_jet(jets, v)
                                  for v in self.extra_values[: self.atom_count]],
                                 dtype=np.int64).reshape(self.atom_count, self.n + 1)
                if atoms.size and (atoms[:, 0] == 0).any():
                    continue  # an atom with a negative power must not vanish
                metric = np.array([self._one_jet(jets, v) for v in self.metric_values],
                                  dtype=np.int64).reshape(self.n, self.n, self.n + 1)
                listed = np.array([self._one_jet(jets, v)
                                   for v in self.extra_values[self.atom_count:]],
                                  dtype=np.int64).reshape(self.listed_count, self.n,
                                                          self.n + 1)
            except (BadPoint, ZeroDivisionError):
                continue
            if not self.atoms:
                self.first_state, self.first_point = state, jets.point
            self.atoms.append(atoms)
            self.metric.append(metric)
            self.listed.append(listed)
        if len(self.atoms) < count:
            raise BadPoint("too few usable points")

    def adjoint_action(self, cyclic: Sequence[int], dimension: int,
                       rates: Sequence[sympy.Expr]) -> AdjointAction | None:
        """ad(∂_x) on the Killing algebra at the first point (``killing_eigen``), where the
        signatures are taken; None where the algebra cannot be had there. The conditions are
        solved to a low order first (most searched entries are highly symmetric and settle
        there), then to the highest order the isometry stage uses."""
        n, p = self.n, self.p
        highest = MAX_ORDER.get(n)
        if highest is None or self.first_point is None or not cyclic:
            return None
        work = JetWork(ISOMETRY_WORK_BOUND)
        for order in dict.fromkeys((min(2, highest), highest)):
            rng = random.Random()
            rng.setstate(self.first_state)
            try:
                jets = FieldJets(self.field, order + 2, rng, p, work)
                if jets.point != self.first_point:
                    return None
                metric = [[jets.rational(self.metric_values[a * n + b]) for b in range(n)]
                          for a in range(n)]
                solved = solve_conditions(metric, n, p, order, work, dimension)
            except (BadPoint, JetWorkReached, NotInField, ArithmeticError):
                return None
            if len(solved.kernel()) == dimension:
                # π and the like are transcendental: a random value, as the metric has here
                parameters = {spec.key: jets.point.values[k]
                              for k, spec in enumerate(self.field.specs)
                              if spec.kind in ("parameter", "constant")}
                return adjoint_action(solved, dimension, cyclic,
                                      rate_squares_at(rates, parameters, p))
        return None

    def monomial_jets(self, point: int, exponents: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Values m_k and derivatives ∂_b m_k of the monomials (rows of ``exponents``)."""
        p = self.p
        atoms = self.atoms[point]
        values = np.ones(len(exponents), dtype=np.int64)
        log_derivative = np.zeros((len(exponents), self.n), dtype=np.int64)
        for j in range(atoms.shape[0]):
            column = exponents[:, j]
            if not column.any():
                continue
            a = int(atoms[j, 0])
            inverse = pow(a, -1, p)
            low = int(column.min())
            # a^e mod p for every exponent in the column's range, then picked per row (the
            # same numbers as one pow per row, without a Python loop over the rows)
            powers = np.array([pow(a if e > 0 else inverse, abs(e), p)
                               for e in range(low, int(column.max()) + 1)], dtype=np.int64)
            values = values * powers[column - low] % p
            rate = (atoms[j, 1:] * inverse) % p  # ∂_b a / a
            log_derivative = (log_derivative + (column[:, None] % p) * rate[None, :]) % p
        return values, (log_derivative * values[:, None]) % p


# ====================================================================== solving a block


def killing_rows(values: PointValues, point: int, exponents: np.ndarray) -> np.ndarray:
    """Rows (a ≤ b) of L_ξ g at one point for ξ = m_k ∂_c, columns ordered (c, k):
    m_k ∂_c g_ab + ∂_a m_k g_cb + ∂_b m_k g_ac, modulo p, for all a, b, c, k at once."""
    n, p = values.n, values.p
    m, dm = values.monomial_jets(point, exponents)
    g = values.metric[point]
    g0, dm_t = g[:, :, 0], dm.T  # g_ab, and ∂_a m_k indexed [a, k]
    # Each product is below 2⁶², a sum of three is not: reduce them one by one (an int64
    # overflow made a rare point inconsistent and lost whole blocks).
    first = g[:, :, 1:, None] * m[None, None, None, :] % p  # [a, b, c, k]
    second = dm_t[:, None, None, :] * g0.T[None, :, :, None] % p  # ∂_a m_k g_cb
    third = dm_t[None, :, None, :] * g0[:, None, :, None] % p  # ∂_b m_k g_ac
    entries = (first + second + third) % p
    upper_a, upper_b = np.triu_indices(n)
    return entries[upper_a, upper_b].reshape(len(upper_a), n * len(exponents))


def kernel(rows: np.ndarray, p: int) -> list[list[int]]:
    """A basis of the null space as flint derives it from the reduced row echelon form
    (canonical: its entries are the reductions of the rational ones)."""
    basis, nullity = nmod_matrix(rows, p).nullspace()
    # Only the first ``nullity`` columns hold the basis: read those, not the whole square.
    size = rows.shape[1]
    return [[int(basis[i, j]) for i in range(size)] for j in range(nullity)]


def nmod_matrix(rows: np.ndarray, p: int) -> flint.nmod_mat:
    """The matrix of ``rows`` (entries in 0 … p − 1) over Z/p. Built through an integer
    matrix: python-flint reads a list into ``fmpz_mat`` about a third faster than into
    ``nmod_mat``, and the reduction modulo p is then one call."""
    count, size = rows.shape
    return flint.nmod_mat(flint.fmpz_mat(count, size, rows.ravel().tolist()), p)


def rational_reconstruction(a: int, p: int) -> sympy.Rational | None:
    """r/s ≡ a (mod p) with |r|, |s| ≤ √(p/2), if there is one (Wang's method)."""
    bound = math.isqrt(p // 2)
    r0, r1, s0, s1 = p, a % p, 0, 1
    while r1 > bound:
        q = r0 // r1
        r0, r1 = r1, r0 - q * r1
        s0, s1 = s1, s0 - q * s1
    if s1 == 0 or abs(s1) > bound or math.gcd(r1, abs(s1)) != 1:
        return None
    return sympy.Rational(r1, s1)


def vector_signature(values: PointValues, points: Sequence[int], exponents: np.ndarray,
                     coefficients: Sequence[int]) -> list[int]:
    """Values and first derivatives of the vector's components at ``points``."""
    n, p = values.n, values.p
    c = np.array(coefficients, dtype=np.int64).reshape(n, len(exponents))
    out: list[int] = []
    for point in points:
        m, dm = values.monomial_jets(point, exponents)
        for a in range(n):
            out.append(int((c[a] * m % p).sum() % p))
            out.extend(int(v) for v in ((c[a][:, None] * dm) % p).sum(axis=0) % p)
    return out


def listed_signature(values: PointValues, points: Sequence[int], k: int) -> list[int]:
    return [int(v) for point in points for v in values.listed[point][k].ravel()]


# ====================================================================== the search


@dataclass
class _State:
    signatures: list[list[int]]
    found: list[tuple[sympy.Expr, ...]]
    rejected: int = 0
    work_at_last_find: tuple[tuple[str, int], ...] = ()
    listed: list[tuple[sympy.Expr, ...]] = field(default_factory=list)
    from_brackets: int = 0  # found vectors that are brackets (no 1-jet in ``signatures``)
    tried: set = field(default_factory=set)  # pairs of basis positions already bracketed


def search_killing_vectors(spacetime: Spacetime, listed: Sequence[Sequence[sympy.Expr]],
                           dimension: int, bound: WorkBound = WORK_BOUND) -> SearchResult:
    """Killing vectors independent of ``listed`` (already verified), until together they
    span ``dimension`` or the ansatz is exhausted (see module docstring)."""
    work = Work(bound)
    listed = [[sympy.sympify(c) for c in xi] for xi in listed]
    n = spacetime.dimension
    cyclic = cyclic_coordinates(spacetime)
    rates = candidate_rates(spacetime)
    function_atoms = _function_atoms(spacetime, cyclic)
    parameter_atoms = _parameter_atoms(spacetime, rates)
    base_atoms = [*function_atoms, *parameter_atoms]
    classes = [classes_for(spacetime.coordinates[i], rates) for i in cyclic]
    factor_exprs = list(dict.fromkeys(f for cls in classes for _, fs in cls for f in fs
                                      if f != 1))
    atom_exprs = [a.expr for a in base_atoms] + factor_exprs
    described = describe(spacetime, function_atoms, parameter_atoms, cyclic, rates)
    try:
        values = PointValues(spacetime, atom_exprs, listed)
        values.grow(2, work)
    except WorkBoundReached:
        return SearchResult((), False, "not searched: the work bound was reached while "
                            "sampling points", work=work.snapshot())
    except (BadPoint, NotInField, ZeroDivisionError) as exc:
        return SearchResult((), False, f"not searched: {exc}")
    state = _State([listed_signature(values, SIGNATURE_POINTS, k) for k in range(len(listed))],
                   [], listed=[tuple(xi) for xi in listed])
    target = dimension
    why = ""
    bases = {degree: monomials(base_atoms, degree, 1) for degree in DEGREES}
    blocks = sorted(itertools.product(*classes), key=_complexity)
    action = values.adjoint_action(cyclic, dimension, rates)
    kept = _undominated(blocks, bases, n)
    skipped = 0
    try:
        for choice, degree in kept:
            if _rank(state, values.p) >= target:
                break
            if action is not None and not may_hold_new(
                    action, [(cyclic[j], kind) for j, (kind, _) in enumerate(choice)],
                    state.signatures):
                skipped += 1
                continue
            base = bases[degree]
            before = len(state.found)
            _solve_block(spacetime, values, base, base_atoms, factor_exprs, choice, state,
                         work)
            if len(state.found) > before:
                _close_under_brackets(spacetime, state, target, values.p, work)
    except WorkBoundReached:
        why = "; stopped at the work bound"
    except (BadPoint, NotInField, ZeroDivisionError) as exc:
        why = f"; stopped: {exc}"
    found = tuple(state.found)
    total = _rank(state, values.p)
    complete = total >= target
    listed_rank = matrix_rank(state.signatures[: len(listed)], values.p) if listed else 0
    missing = target - listed_rank
    if complete:
        summary = (f"{len(found)} of the {missing} missing Killing vectors found by the tool "
                   f"in {described}; the basis is complete")
    else:
        summary = (f"{len(found)} of the {missing} missing Killing vectors found by the tool; "
                   f"the rest are not in the searched ansatz ({described}){why}")
    if skipped:
        summary += (f"; {skipped} of the ansatz's {len(kept)} blocks were not solved: the "
                    f"eigenvalues of ad(∂_x) on the algebra leave no room in them for a vector "
                    f"beyond those known")
    return SearchResult(found, complete, summary, state.rejected, work.snapshot(),
                        state.work_at_last_find)


def _combinations(choice) -> frozenset:
    return frozenset(c for c in itertools.product(*(fs for _, fs in choice))
                     if sum(map(_polynomial_degree, c)) <= MAX_CYCLIC_DEGREE)


def _undominated(blocks, bases, n: int) -> list[tuple[tuple, int]]:
    """Each block with the highest degree of the non-cyclic part that fits the size bound,
    without the blocks another one contains (its functions of the cyclic coordinates and at
    least its degree): with polynomial classes in levels, {1, x} is inside {1, x, x²}, and
    solving both at the same degree would repeat the work."""
    sized = []
    for choice in blocks:
        combinations = _combinations(choice)
        fitting = [d for d in DEGREES if n * len(combinations) * len(bases[d]) <= MAX_UNKNOWNS]
        sized.append((choice, combinations, fitting[-1] if fitting else DEGREES[0]))
    # Only blocks with the same exponential and circular classes can contain one another.
    groups: dict[tuple, list[int]] = {}
    for k, (choice, _, _) in enumerate(sized):
        pattern = tuple("poly" if kind.startswith("poly") else fs for kind, fs in choice)
        groups.setdefault(pattern, []).append(k)
    kept = []
    for k, (choice, combinations, degree) in enumerate(sized):
        pattern = tuple("poly" if kind.startswith("poly") else fs for kind, fs in choice)
        dominated = any(other != k and combinations <= sized[other][1]
                        and degree <= sized[other][2]
                        and (combinations != sized[other][1] or degree != sized[other][2]
                             or other < k)
                        for other in groups[pattern])
        if not dominated:
            kept.append((choice, degree))
    return kept


def _complexity(choice) -> tuple[int, int, int, int]:
    """Simplest blocks first: fewer exponential or circular classes; then lower polynomial
    levels; then the rates in their order (1 first); then fewer functions."""
    transcendental = sum(not kind.startswith("poly") for kind, _ in choice)
    degree = sum(int(kind[4:]) - 1 for kind, _ in choice if kind.startswith("poly"))
    rates = sum(int(kind[-1]) for kind, _ in choice if not kind.startswith("poly"))
    return (transcendental, degree, rates, sum(len(fs) for _, fs in choice))


def _rank(state: _State, p: int) -> int:
    """Independent vectors known: the rank of the 1-jets, plus the brackets (each proved
    outside the span of everything before it)."""
    return (matrix_rank(state.signatures, p) if state.signatures else 0) + state.from_brackets


# ====================================================================== closing the algebra


def _close_under_brackets(spacetime: Spacetime, state: _State, target: int, p: int,
                          work: Work) -> None:
    """The bracket of two Killing vectors is one: bracket each vector found with the listed
    and found ones, keep the brackets whose 1-jets at a random point of a field holding them
    all raise the rank (exact arithmetic modulo a prime: a rank that goes up proves
    independence) and that pass Killing's equation symbolically. In a maximally symmetric
    space one boost and the rotations give the other boosts."""
    while _rank(state, p) < target:
        basis = [*state.listed, *state.found]
        pairs = [(j, i) for i in range(len(state.listed), len(basis)) for j in range(len(basis))
                 if i != j and (min(i, j), max(i, j)) not in state.tried]
        if not pairs:
            return
        candidates = []
        for j, i in pairs:
            state.tried.add((min(i, j), max(i, j)))
            bracket = tuple(normalised(
                [tidy(_one_for_sin_squared(c, spacetime.coordinates))
                 for c in commutator(basis[j], basis[i], spacetime.coordinates)],
                spacetime.coordinates))
            if any(c != 0 for c in bracket):
                candidates.append(bracket)
        if not candidates:
            return
        work.spend("points")
        flags = raises_rank(spacetime, basis, candidates)
        added = 0
        for candidate, new in zip(candidates, flags, strict=True):
            if not new or _rank(state, p) >= target:
                continue
            work.spend("checks")
            if not is_killing(candidate, spacetime):
                state.rejected += 1
                continue
            state.found.append(candidate)
            state.from_brackets += 1
            state.work_at_last_find = work.snapshot()
            added += 1
        if not added:
            return


def _one_for_sin_squared(expr: sympy.Expr, coordinates: Sequence[sympy.Symbol]) -> sympy.Expr:
    """sin²x → 1 − cos²x for each coordinate x, so that sin²x + cos²x cancels in a bracket
    (an exact identity; the result is verified afterwards in exactly this form)."""
    for x in coordinates:
        if expr.has(sympy.sin(x)):
            expr = sympy.expand(expr.subs(sympy.sin(x) ** 2, 1 - sympy.cos(x) ** 2))
    return expr


def raises_rank(spacetime: Spacetime, basis: Sequence[Sequence[sympy.Expr]],
                candidates: Sequence[Sequence[sympy.Expr]]) -> list[bool]:
    """For each candidate in turn, whether its 1-jet raises the rank of the 1-jets of the
    basis and the candidates kept before it, at one random point of the field of the metric
    and all these components (modulo a prime near 2³¹; a rank mod p never exceeds the true
    one, so True is certain). All False when no usable point is found."""
    n = spacetime.dimension
    vectors = [*basis, *candidates]
    field, _, extra = metric_field(spacetime, [sympy.sympify(c) for xi in vectors for c in xi])
    rng = random.Random(SEED + 1)
    for q in primes()[:PRIME_TRIES]:
        for _ in range(20):
            try:
                jets = FieldJets(field, 1, rng, q)
                rows = [[v for a in range(n) for v in _jet_of(jets, extra[k * n + a], n)]
                        for k in range(len(vectors))]
            except (BadPoint, ZeroDivisionError, NotInField):
                continue
            kept = rows[: len(basis)]
            rank = matrix_rank(kept, q) if kept else 0
            flags = []
            for row in rows[len(basis):]:
                trial = matrix_rank([*kept, row], q)
                flags.append(trial > rank)
                if trial > rank:
                    kept.append(row)
                    rank = trial
            return flags
    return [False] * len(candidates)


def _jet_of(jets: FieldJets, value, n: int) -> list[int]:
    """Value and first derivatives of a field element at the jets' point."""
    jet = jets.rational(value)
    units = [jets.space.index[tuple(1 if v == i else 0 for v in range(n))] for i in range(n)]
    return [int(jet[0]) % jets.p, *(int(jet[u]) % jets.p for u in units)]


def describe(spacetime: Spacetime, function_atoms: Sequence[Atom],
             parameter_atoms: Sequence[Atom], cyclic: Sequence[int],
             rates: Sequence[sympy.Expr]) -> str:
    parts = ["polynomials in the coordinates (powers −2…2)"]
    if function_atoms:
        parts.append("the functions " + ", ".join(readable(a.expr) for a in function_atoms))
    if cyclic:
        names = ", ".join(readable(spacetime.coordinates[i]) for i in cyclic)
        parts.append(f"exp(±kx), cos kx, sin kx for the cyclic coordinates x = {names} with "
                     f"k in {{{', '.join(readable(k) for k in rates)}}}")
    if parameter_atoms:
        parts.append("powers −1…1 of " + ", ".join(readable(a.expr) for a in parameter_atoms))
    return "; ".join(parts) + f"; total degree ≤ {DEGREES[-1]}"


SUPERSCRIPT = str.maketrans("0123456789-", "⁰¹²³⁴⁵⁶⁷⁸⁹⁻")


def readable(expr: sympy.Expr) -> str:
    """One line of mathematics as a reader writes it — √(1 − Λr²/3), θ, r⁻¹ — never program
    syntax (the sentence is shown on the entry's page as it is)."""
    names = {x: sympy.Symbol(sympy.pretty(x, use_unicode=True)) for x in expr.free_symbols}
    text = sympy.sstr(expr.xreplace(names))
    text = re.sub(r"\*\*\((-?\d+)\)|\*\*(\d+)",
                  lambda m: (m.group(1) or m.group(2)).translate(SUPERSCRIPT), text)
    text = re.sub(r"\*\*\(([^()]*)\)", r"^(\1)", text)
    return (text.replace("sqrt(", "√(").replace("*", "·").replace(" - ", " − ")
            .replace("-", "−"))


def _solve_block(spacetime: Spacetime, values: PointValues, base: list[tuple[int, ...]],
                 base_atoms: Sequence[Atom], factor_exprs: Sequence[sympy.Expr],
                 choice, state: _State, work: Work) -> None:
    n = values.n
    factor_sets = [fs for _, fs in choice]
    width = len(base_atoms) + len(factor_exprs)
    exponent_rows = []
    for combination in itertools.product(*factor_sets) if factor_sets else [()]:
        if sum(_polynomial_degree(f) for f in combination) > MAX_CYCLIC_DEGREE:
            continue
        tail = [0] * len(factor_exprs)
        for f in combination:
            if f == 1:
                continue
            tail[factor_exprs.index(f)] = 1
        for exps in base:
            exponent_rows.append((*exps, *tail))
    if not exponent_rows:
        return
    exponents = np.array(exponent_rows, dtype=np.int64).reshape(len(exponent_rows), width)
    exponents = _independent_monomials(values, exponents, work, MAX_UNKNOWNS // n)
    if n * len(exponents) > MAX_UNKNOWNS:
        exponents = exponents[: MAX_UNKNOWNS // n]
    # Simplest monomials last: the free variables of the echelon form are then the simple
    # ones, and each solution comes out with coefficient 1 on a simple term.
    exponents = exponents[::-1]
    size = n * len(exponents)
    per_point = n * (n + 1) // 2
    needed = size // per_point + EXTRA_POINTS
    values.grow(needed + 2, work)
    work.spend("unknowns", size)
    rows = np.concatenate([killing_rows(values, k, exponents) for k in range(2, needed + 2)])
    for vector in kernel(rows, values.p):
        signature = vector_signature(values, SIGNATURE_POINTS, exponents, vector)
        trial = [*state.signatures, signature]
        if matrix_rank(trial, values.p) <= (matrix_rank(state.signatures, values.p)
                                            if state.signatures else 0):
            continue
        candidate = _exact_vector(vector, exponents, base_atoms, factor_exprs, n, values.p,
                                  spacetime.coordinates)
        if candidate is not None and state.from_brackets and not raises_rank(
                spacetime, [*state.listed, *state.found], [candidate])[0]:
            continue  # a combination of brackets already found (they have no 1-jets here)
        if candidate is not None:
            work.spend("checks")
        if candidate is None or not is_killing(candidate, spacetime):
            state.rejected += 1
            continue
        state.signatures.append(signature)
        state.found.append(candidate)
        state.work_at_last_find = work.snapshot()


def _polynomial_degree(factor: sympy.Expr) -> int:
    if factor.is_Symbol:
        return 1
    if isinstance(factor, sympy.Pow) and factor.base.is_Symbol:
        return int(factor.exp)
    return 0


def _independent_monomials(values: PointValues, exponents: np.ndarray, work: Work,
                           wanted: int | None = None) -> np.ndarray:
    """Drop monomials that are linear combinations of earlier ones (sin² = 1 − cos², a
    radical times its radicand, ...): their values at more points than monomials have the
    earlier columns as pivots. A relation among the monomials holds with its first derivatives,
    so each point gives n + 1 rows (values and derivatives) and few points are needed.

    ``wanted``: only the first ``wanted`` independent monomials are used by the caller. A
    column is a pivot exactly when it is independent of the columns before it, so the pivots
    among the leading columns are those of the whole matrix: a prefix of twice ``wanted``
    columns (the same points and rows) is reduced first, and the whole only if the prefix
    holds fewer pivots. The result's first ``wanted`` monomials are the same either way."""
    count = len(exponents)
    points = -(-(count + 4) // (values.n + 1)) + 2
    values.grow(points, work)
    work.spend("unknowns", count)
    width = count if wanted is None else min(count, 2 * wanted)
    while True:
        leading = exponents[:width]
        rows = np.concatenate([np.vstack([m[None, :], dm.T]) for m, dm in
                               (values.monomial_jets(k, leading) for k in range(points))])
        reduced, rank = nmod_matrix(rows, values.p).rref()
        if width == count or rank >= (wanted or 0):
            return leading[pivot_columns(reduced, rank)]
        width = count


def pivot_columns(reduced: flint.nmod_mat, rank: int) -> list[int]:
    """The pivot column of each of the first ``rank`` rows of a reduced row echelon form.
    Pivots move strictly right from row to row, so one left-to-right scan reads each column
    at most once (reading the whole matrix into Python cost more than the elimination)."""
    pivots: list[int] = []
    column, width = 0, reduced.ncols()
    for i in range(rank):
        while column < width and int(reduced[i, column]) == 0:
            column += 1
        pivots.append(column)
        column += 1
    return pivots


def _exact_vector(vector: Sequence[int], exponents: np.ndarray, base_atoms: Sequence[Atom],
                  factor_exprs: Sequence[sympy.Expr], n: int, p: int,
                  coordinates: Sequence[sympy.Symbol]) -> tuple[sympy.Expr, ...] | None:
    atoms = [a.expr for a in base_atoms] + list(factor_exprs)
    count = len(exponents)
    components = []
    for a in range(n):
        terms = []
        for k in range(count):
            value = vector[a * count + k]
            if value == 0:
                continue
            q = rational_reconstruction(value, p)
            if q is None:
                return None
            monomial = sympy.Mul(*(atom ** int(e) for atom, e in zip(atoms, exponents[k],
                                                                      strict=True) if e))
            terms.append(q * monomial)
        components.append(sympy.Add(*terms))
    if all(c == 0 for c in components):
        return None
    return tuple(normalised(components, coordinates))


def tidy(expr: sympy.Expr) -> sympy.Expr:
    """A readable form: common factors pulled out, with no simplification that could hide
    an error (the vector is verified afterwards in exactly this form)."""
    try:
        return sympy.factor_terms(sympy.together(expr))
    except (sympy.PolynomialError, TypeError, ValueError):
        return expr


def is_killing(xi: Sequence[sympy.Expr], spacetime: Spacetime) -> bool:
    """The same symbolic test as for a listed vector: every L_ξ g_ab vanishes."""
    lie = lie_derivative_metric(list(xi), spacetime.metric, spacetime.coordinates)
    n = spacetime.dimension
    return all(vanishes(lie[a, b], spacetime).equal is True
               for a in range(n) for b in range(a, n))
