"""A null tetrad built by the tool and rotated into a principal frame, exactly.

Convention (signature −+++): l·n = −1, m·m̄ = 1, every other product zero, so that
g_ab = −l_a n_b − n_a l_b + m_a m̄_b + m̄_a m_b; orientation ε_abcd l^a n^b m^c m̄^d = +i with
ε_{0123} = +√(−det g) in the entry's coordinate order. Weyl scalars (NP, from memory; Stephani
et al. 2003, ch. 3): Ψ0 = C(l,m,l,m), Ψ1 = C(l,n,l,m), Ψ2 = C(l,m,m̄,n), Ψ3 = C(l,n,m̄,n),
Ψ4 = C(n,m̄,n,m̄).

1. Tetrad. If a coordinate vector is null, l is that vector, n is built from another coordinate
   vector rationally, and the remaining two are projected orthogonally (no root). Otherwise a
   Gram–Schmidt pass over the coordinate vectors (in the first order that gives three positive
   norms and then one negative at every sample point) gives e_τ timelike, e_x, f₁, f₂
   spacelike, and l = e_τ + s e_x, n = (e_τ − s e_x)/(−2N_τ), s = √(−N_τ/N_x). Always
   m = (f₁ + i u f₂)/w with u = √(N₁/N₂), w = √(2N₁). Roots are adjoined to the entry's
   field as generators (``tower``), so everything below stays exact.
2. Principal null directions. Under the null rotation about n, l → l + b̄m + bm̄ + bb̄n,
   m → m + bn, the new Ψ0 is a quartic in b whose coefficients are contracted directly from
   the Weyl tensor (Ψ0, …, Ψ4 up to the binomial weights). Its repeated roots are found
   exactly by polynomial gcds with the derivative over the field (types II, III, N: rational
   in the field; type D: one more square root). l is rotated onto the most repeated root;
   for type D, n is then rotated (about l) onto the other double root, a linear condition.
3. Everything shown is re-verified in the final frame: the tetrad's products and the metric's
   reconstruction in normal form, the zero Ψ's in normal form, and I = Ψ0Ψ4 − 4Ψ1Ψ3 + 3Ψ2²,
   J = det[[Ψ4,Ψ3,Ψ2],[Ψ3,Ψ2,Ψ1],[Ψ2,Ψ1,Ψ0]] against the frame-free I, J of the Weyl operator.
   Type I with no repeated root is reported as not found in closed form.

The construction is bounded by counted work, never by time, so that a slow and a fast machine
publish the same frame: every fraction the vector and Weyl arithmetic and the gcds produce is
counted by its terms (``WORK_TERMS`` in all), and no single fraction may exceed
``SIZE_LIMIT`` terms. Past either bound the construction stops with a stated reason; the
entry's own time budget in the run stage stays the backstop for hostile input.
"""

# ruff: noqa: E741  (l, n, m are the null tetrad's own names)
from __future__ import annotations

import itertools
import math
from collections.abc import Sequence
from dataclasses import dataclass

import mpmath
import sympy

from generator.geometry.algebra import Frac, RationalField
from generator.geometry.curvature import WeylOperator
from generator.geometry.equality import nonzero_in_field
from generator.geometry.sampling import entry_points
from generator.model import Spacetime
from generator.physics.petrov import PAIRS, determinant
from generator.physics.tower import (
    I_KEY,
    TooLarge,
    Tower,
    adjoin_square_root,
    conjugate,
    square_root_in,
    value_at,
    with_i,
)

SIZE_LIMIT = 6000  # terms of one fraction; beyond it the construction stops with a reason
WORK_TERMS = 1_000_000  # terms of all fractions produced, summed: the frame's work bound
# (bench/principal_frame.py prints what each shipped entry uses)
ORIENTATION = 1  # ε(l, n, m, m̄) = +i: the sign the Kerr check pins (tests/test_principal_frame)
NAMES = ("Psi0", "Psi1", "Psi2", "Psi3", "Psi4")
PATTERN = {"O": (), "D": ("Psi2",), "N": ("Psi4",), "III": ("Psi3", "Psi4"),
           "II": ("Psi2", "Psi3", "Psi4"), "I": ("Psi1", "Psi2", "Psi3")}  # I: l, n on two

Vector = list[Frac]


class NotFound(Exception):
    """The principal frame was not reached; the message says why, for the page."""


class FrameWork:
    """Terms produced so far by the construction under way, against its bound (one
    construction at a time per process; ``principal_frame`` starts a new count)."""

    bound = WORK_TERMS
    used = 0

    @classmethod
    def start(cls, bound: int) -> None:
        cls.bound, cls.used = bound, 0

    @classmethod
    def count(cls, *xs: Frac) -> None:
        """Counts each fraction's terms; raises TooLarge past either bound."""
        for x in xs:
            size = x.size()
            if size > SIZE_LIMIT:
                raise TooLarge(f"an expression of the frame has more than {SIZE_LIMIT} terms")
            cls.used += size
        if cls.used > cls.bound:
            raise TooLarge(f"the frame construction produced more than {cls.bound} terms in "
                           "all, its work bound")


@dataclass(frozen=True)
class PrincipalFrame:
    """The tetrad (coordinate components, in the tower's field) and its scalars."""

    tower: Tower
    l: Vector
    n: Vector
    m: Vector
    psi: dict[str, Frac]
    principal: bool
    how: str  # how the tetrad was built and rotated, in words
    checks: tuple[str, ...]  # what was verified exactly
    why: str = ""  # why the frame is not principal


# ---------------------------------------------------------------------------- arithmetic


def carry_into(tower: Tower, base: RationalField, x: Frac) -> Frac:
    """A fraction of the entry's field as a fraction of the tower over it (the tower's
    generators come first in its variable order, the base's keep theirs after them)."""
    f = tower.field
    shift = len(f.specs) - len(base.specs)
    return Frac(*(f.ctx.from_dict({(0,) * shift + tuple(k): c for k, c in p.to_dict().items()})
                  for p in (x.num, x.den)))



class Frame:
    """Vector and Weyl arithmetic in the current tower (rebuilt when a root is adjoined)."""

    def __init__(self, tower: Tower, metric: Sequence[Sequence[Frac]],
                 weyl: Sequence[Sequence[Frac]]) -> None:
        self.tower = tower
        self.f = tower.field
        self.g = [list(row) for row in metric]
        self.c = [list(row) for row in weyl]

    def guard(self, *xs: Frac) -> None:
        FrameWork.count(*xs)

    def dot(self, x: Vector, y: Vector) -> Frac:
        f = self.f
        value = f.sum_of_products([(self.g[a][b], x[a], y[b]) for a in range(4)
                                   for b in range(4) if not self.g[a][b].is_zero()
                                   and not x[a].is_zero() and not y[b].is_zero()])
        self.guard(value)
        return value

    def combine(self, terms: Sequence[tuple[Frac, Vector]]) -> Vector:
        f = self.f
        out = [f.sum_of_products([(c, v[a]) for c, v in terms]) for a in range(4)]
        self.guard(*out)
        return out

    def scale(self, c: Frac, v: Vector) -> Vector:
        return [self.f.mul(c, x) for x in v]

    def wedge(self, x: Vector, y: Vector) -> list[Frac]:
        f = self.f
        return [f.sum_of_products([(x[a], y[b]), (f.neg(x[b]), y[a])]) for a, b in PAIRS]

    def apply(self, v: Sequence[Frac]) -> list[Frac]:
        """C·V on index pairs (the Weyl tensor applied to a bivector)."""
        f = self.f
        out = [f.sum_of_products([(self.c[p][q], v[q]) for q in range(6)]) for p in range(6)]
        self.guard(*out)
        return out

    def pair(self, u: Sequence[Frac], cv: Sequence[Frac]) -> Frac:
        """C(U, V) = U·(C·V)."""
        value = self.f.sum_of_products(list(zip(u, cv, strict=True)))
        self.guard(value)
        return value

    def weyl(self, u: Sequence[Frac], v: Sequence[Frac]) -> Frac:
        """C(U, V) for bivectors U, V (pair components)."""
        return self.pair(u, self.apply(v))

    def conj(self, v: Vector) -> Vector:
        return [conjugate(self.tower, x) for x in v]

    def scalars(self, l: Vector, n: Vector, m: Vector) -> dict[str, Frac]:
        mb = self.conj(m)
        lm, ln, mbn = self.wedge(l, m), self.wedge(l, n), self.wedge(mb, n)
        c_lm, c_mbn = self.apply(lm), self.apply(mbn)
        return {"Psi0": self.pair(lm, c_lm), "Psi1": self.pair(ln, c_lm),
                "Psi2": self.pair(lm, c_mbn), "Psi3": self.pair(ln, c_mbn),
                "Psi4": self.pair(mbn, c_mbn)}

    def quartic(self, l: Vector, n: Vector, m: Vector, about_n: bool) -> list[Frac]:
        """Coefficients (constant first) of Ψ0 after the rotation about n by b (``about_n``),
        or of Ψ4 after the rotation about l, as a polynomial in b resp. ā."""
        f, mb = self.f, self.conj(m)
        if about_n:
            a, v, w = self.wedge(l, m), _add(f, self.wedge(l, n), self.wedge(mb, m)), \
                self.wedge(mb, n)
        else:
            a, v, w = self.wedge(n, mb), _add(f, self.wedge(n, l), self.wedge(m, mb)), \
                self.wedge(m, l)
        ca, cv, cw = self.apply(a), self.apply(v), self.apply(w)
        two = sympy.Integer(2)
        return [self.pair(a, ca), f.scale(self.pair(a, cv), two),
                f.add(self.pair(v, cv), f.scale(self.pair(a, cw), two)),
                f.scale(self.pair(v, cw), two), self.pair(w, cw)]

    def rotate_about_n(self, l: Vector, n: Vector, m: Vector, b: Frac
                       ) -> tuple[Vector, Vector, Vector]:
        f = self.f
        bb = conjugate(self.tower, b)
        mb = self.conj(m)
        new_l = self.combine([(f.one(), l), (bb, m), (b, mb), (f.mul(b, bb), n)])
        new_m = self.combine([(f.one(), m), (b, n)])
        return new_l, n, new_m

    def rotate_about_l(self, l: Vector, n: Vector, m: Vector, a: Frac
                       ) -> tuple[Vector, Vector, Vector]:
        f = self.f
        ab = conjugate(self.tower, a)
        mb = self.conj(m)
        new_n = self.combine([(f.one(), n), (ab, m), (a, mb), (f.mul(a, ab), l)])
        new_m = self.combine([(f.one(), m), (a, l)])
        return l, new_n, new_m


def _add(f: RationalField, x: Sequence[Frac], y: Sequence[Frac]) -> list[Frac]:
    return [f.add(a, b) for a, b in zip(x, y, strict=True)]


# ---------------------------------------------------------------------------- polynomials


def _trim(f: RationalField, p: list[Frac]) -> list[Frac]:
    p = list(p)
    while p and p[-1].is_zero():
        p.pop()
    return p


def _monic(f: RationalField, p: list[Frac]) -> list[Frac]:
    lead = p[-1]
    return [f.div(c, lead) for c in p]


def _remainder(f: RationalField, p: list[Frac], q: list[Frac]) -> list[Frac]:
    p, q = _trim(f, p), _trim(f, q)
    while len(p) >= len(q):
        factor = f.div(p[-1], q[-1])
        shift = len(p) - len(q)
        for k, c in enumerate(q):
            p[k + shift] = f.sub(p[k + shift], f.mul(factor, c))
        FrameWork.count(factor, *p)
        p = _trim(f, p[:-1])
    return p


def _gcd(f: RationalField, p: list[Frac], q: list[Frac]) -> list[Frac]:
    p, q = _trim(f, p), _trim(f, q)
    while q:
        p, q = q, _remainder(f, p, q)
    return _monic(f, p)


def _derivative(f: RationalField, p: list[Frac]) -> list[Frac]:
    return [f.scale(c, k) for k, c in enumerate(p)][1:]


# ---------------------------------------------------------------------------- the tetrad


def _positive_everywhere(f: RationalField, x: Frac, points: Sequence[dict],
                         spacetime: Spacetime) -> bool | None:
    """True: positive at every sample point; False: negative at every one; None: mixed or
    not decidable."""
    signs = set()
    for point in points:
        value = value_at(f, x, point, spacetime)
        if value is None or abs(value.imag) > abs(value.real) * mpmath.mpf(10) ** -20:
            continue
        if value.real == 0:
            return None
        signs.add(value.real > 0)
    return signs.pop() if len(signs) == 1 else None


def _unit(f: RationalField, a: int) -> Vector:
    return [f.one() if b == a else f.zero() for b in range(4)]


def _gram_schmidt(frame: Frame, order: Sequence[int]) -> tuple[list[Vector], list[Frac]] | None:
    f = frame.f
    vectors: list[Vector] = []
    norms: list[Frac] = []
    for a in order:
        v = _unit(f, a)
        terms = [(f.one(), v)]
        for e, norm in zip(vectors, norms, strict=True):
            terms.append((f.neg(f.div(frame.dot(v, e), norm)), e))
        e = frame.combine(terms)
        norm = frame.dot(e, e)
        if norm.is_zero():
            return None
        vectors.append(e)
        norms.append(norm)
    return vectors, norms


def _orthogonal_frame(frame: Frame, spacetime: Spacetime, points: Sequence[dict]
                      ) -> tuple[list[Vector], list[Frac], tuple[int, ...]]:
    """e_τ, e_x, f₁, f₂ with norms (N_τ < 0 < the others at every sample point)."""
    f, names = frame.f, spacetime.coordinates
    diagonal = [frame.g[a][a] for a in range(4)]
    late = [a for a in range(4) if _positive_everywhere(f, diagonal[a], points, spacetime)
            is False]
    orders = sorted(itertools.permutations(range(4)),
                    key=lambda o: (o[-1] not in late, o))
    usable = []  # (order, vectors, norms, position of the timelike one)
    # The k-th norm of a Gram–Schmidt pass is det Gram(first k + 1) / det Gram(first k): it
    # depends on the set of the coordinate vectors before it and not on their order, so its
    # sign over the sample points is read once per (set, vector), not once per ordering.
    known_signs: dict[tuple[frozenset[int], int], bool | None] = {}

    def sign(order: tuple[int, ...], k: int, norm: Frac) -> bool | None:
        key = (frozenset(order[:k]), order[k])
        if key not in known_signs:
            known_signs[key] = _positive_everywhere(f, norm, points, spacetime)
        return known_signs[key]

    for order in orders:
        found = _gram_schmidt(frame, order)
        if found is None:
            continue
        vectors, norms = found
        signs = [sign(order, k, norm) for k, norm in enumerate(norms)]
        if signs.count(False) == 1 and signs.count(True) == 3:
            usable.append((order, vectors, norms, signs.index(False)))
            if signs[3] is False:  # the timelike one last: the first choice
                break
    if usable:
        order, vectors, norms, k = min(usable, key=lambda item: item[3] != 3)
        rest = [j for j in range(4) if j != k]
        return [vectors[k], *(vectors[j] for j in rest)], \
            [norms[k], *(norms[j] for j in rest)], order
    found = _time_function_frame(frame, spacetime, points)
    if found is not None:
        return found
    listed = ", ".join(map(str, names))
    raise NotFound("no ordering of the coordinate vectors gives a Gram–Schmidt frame with "
                   f"one timelike vector on the whole sampled domain ({listed})")


def _time_function_frame(frame: Frame, spacetime: Spacetime, points: Sequence[dict]
                         ) -> tuple[list[Vector], list[Frac], tuple[int, ...]] | None:
    """e_τ = ∇x^a for a coordinate with g^aa < 0 on the sampled domain (x^a a time
    function: Kerr's ∇t is the zero-angular-momentum observer), and Gram–Schmidt on the
    other coordinate vectors, which are orthogonal to it (g(∂_b, ∇x^a) = δ_b^a) and span a
    spacelike hypersurface, for metrics where no coordinate vector keeps its causal
    character over the domain (a rotating string, Taub–NUT near its axis)."""
    f = frame.f
    det = determinant(f, frame.g)
    if det.is_zero():
        return None
    for a in range(4):
        others = [b for b in range(4) if b != a]
        minor = [[frame.g[i][j] for j in others] for i in others]
        inverse_aa = f.div(determinant(f, minor), det)
        if _positive_everywhere(f, inverse_aa, points, spacetime) is not False:
            continue
        gradient = []
        for b in range(4):
            rows = [i for i in range(4) if i != b]
            cols = [j for j in range(4) if j != a]
            cofactor = determinant(f, [[frame.g[i][j] for j in cols] for i in rows])
            gradient.append(f.div(cofactor if (a + b) % 2 == 0 else f.neg(cofactor), det))
        found = _gram_schmidt(frame, others)
        if found is None:
            continue
        vectors, norms = found
        if all(_positive_everywhere(f, x, points, spacetime) for x in norms):
            return [gradient, *vectors], [inverse_aa, *norms], (*others, a)
    return None


def _projected_pair(frame: Frame, l: Vector, n: Vector, rest: Sequence[int]
                    ) -> tuple[Vector, Frac, Vector, Frac]:
    """Two orthogonal spacelike vectors spanning the complement of the (l, n) plane, from
    the coordinate vectors ``rest``: P(x) = x + (x·n) l + (x·l) n, then Gram–Schmidt."""
    f = frame.f
    projected = []
    for c in rest:
        x = _unit(f, c)
        projected.append(frame.combine([(f.one(), x), (frame.dot(x, n), l),
                                        (frame.dot(x, l), n)]))
    f1 = projected[0]
    n1 = frame.dot(f1, f1)
    if n1.is_zero():
        f1, projected[1] = projected[1], f1
        n1 = frame.dot(f1, f1)
    f2 = frame.combine([(f.one(), projected[1]),
                        (f.neg(f.div(frame.dot(projected[1], f1), n1)), f1)])
    return f1, n1, f2, frame.dot(f2, f2)


def _null_plane(frame: Frame, spacetime: Spacetime, points: Sequence[dict]):
    """l, n = the two null vectors g_bb ∂_a + (−g_ab ± √D) ∂_b, D = g_ab² − g_aa g_bb > 0,
    of a timelike coordinate plane (∂_a, ∂_b), for metrics where neither a coordinate vector
    nor a coordinate gradient keeps its causal character on the domain (a rotating string
    beyond its light cylinder); None when no coordinate plane is timelike throughout."""
    f = frame.f
    names = [str(x) for x in spacetime.coordinates]
    for a, b in itertools.combinations(range(4), 2):
        g = frame.g
        if g[b][b].is_zero():
            continue
        disc = f.sub(f.mul(g[a][b], g[a][b]), f.mul(g[a][a], g[b][b]))
        if _positive_everywhere(f, disc, points, spacetime) is not True:
            continue
        tower, root, kept = adjoin_square_root(frame.tower, disc, "D",
                                               [*_flat(frame.g), *_flat(frame.c)])
        new = _rebuilt(tower, kept[:16], kept[16:52])
        h = new.f
        gab, gbb = new.g[a][b], new.g[b][b]
        plus = new.combine([(gbb, _unit(h, a)), (h.sub(root, gab), _unit(h, b))])
        minus = new.combine([(gbb, _unit(h, a)), (h.neg(h.add(root, gab)), _unit(h, b))])
        product = new.dot(plus, minus)
        if product.is_zero():
            continue
        n = new.scale(h.neg(h.inv(product)), minus)
        spatial = _projected_pair(new, plus, n, [c for c in range(4) if c not in (a, b)])
        how = (f"l, n = the null vectors of the coordinate plane (∂_{names[a]}, ∂_{names[b]}),"
               " the other two coordinate vectors projected orthogonally")
        return new, plus, n, spatial, how, a
    return None


def _null_coordinate(frame: Frame) -> tuple[int, int] | None:
    for a in range(4):
        if frame.g[a][a].is_zero():
            for b in range(4):
                if b != a and not frame.g[a][b].is_zero():
                    return a, b
    return None


def build_tetrad(ops: WeylOperator, spacetime: Spacetime
                 ) -> tuple[Frame, Vector, Vector, Vector, str, int]:
    """(frame arithmetic, l, n, m, how, k) in a tower over the entry's field; k is the
    coordinate whose component of l the presentation sets to 1 where it can."""
    base = ops.field
    metric = [list(row) for row in ops.metric]
    lower = _lower_weyl(base, ops)
    tower, embed = with_i(base)
    metric = [[embed(x) for x in row] for row in metric]
    weyl = [[embed(x) for x in row] for row in lower]
    frame = Frame(tower, metric, weyl)
    f = frame.f
    points = entry_points(spacetime, 4)
    names = [str(x) for x in spacetime.coordinates]
    null = _null_coordinate(frame)
    if null is not None:
        a, b = null
        l = _unit(f, a)
        v = frame.scale(f.neg(f.inv(frame.g[a][b])), _unit(f, b))
        n = frame.combine([(f.one(), v), (f.scale(frame.dot(v, v), sympy.Rational(1, 2)), l)])
        spatial = _projected_pair(frame, l, n, [c for c in range(4) if c not in (a, b)])
        how = (f"l = ∂_{names[a]} (null), n from ∂_{names[b]}, the other two coordinate "
               "vectors projected orthogonally")
        frame, l, n, m = _complete(frame, spacetime, points, l, n, spatial)
        return frame, l, n, m, how, a
    try:
        vectors, norms, order = _orthogonal_frame(frame, spacetime, points)
    except NotFound:
        plane = _null_plane(frame, spacetime, points)
        if plane is None:
            raise
        frame, l, n, spatial, how, a = plane
        frame, l, n, m = _complete(frame, spacetime, points, l, n, spatial)
        return frame, l, n, m, how, a
    e_t, e_x, f1, f2 = vectors
    n_t, n_x, n1, n2 = norms
    ratio = f.neg(f.div(n_t, n_x))
    tower, s, carried = adjoin_square_root(frame.tower, ratio, "s",
                                           [*e_t, *e_x, *f1, *f2, n_t, n1, n2,
                                            *_flat(frame.g), *_flat(frame.c)])
    frame = _rebuilt(tower, carried[19:35], carried[35:71])
    e_t, e_x, f1, f2 = (carried[4 * k: 4 * k + 4] for k in range(4))
    n_t, n1, n2 = carried[16:19]
    f = frame.f
    l = frame.combine([(f.one(), e_t), (s, e_x)])
    n = frame.scale(f.inv(f.scale(n_t, -2)), frame.combine([(f.one(), e_t), (f.neg(s), e_x)]))
    how = ("Gram–Schmidt on ∂_" + ", ∂_".join(names[k] for k in order)
           + "; l, n = null combinations of the last two")
    frame, l, n, m = _complete(frame, spacetime, points, l, n, (f1, n1, f2, n2))
    return frame, l, n, m, how, order[0]


def _flat(rows: Sequence[Sequence[Frac]]) -> list[Frac]:
    return [x for row in rows for x in row]


def _rebuilt(tower: Tower, metric: Sequence[Frac], weyl: Sequence[Frac]) -> Frame:
    return Frame(tower, [list(metric[4 * a: 4 * a + 4]) for a in range(4)],
                 [list(weyl[6 * p: 6 * p + 6]) for p in range(6)])


def _complete(frame: Frame, spacetime: Spacetime, points: Sequence[dict], l: Vector,
              n: Vector, spatial: tuple[Vector, Frac, Vector, Frac]
              ) -> tuple[Frame, Vector, Vector, Vector]:
    """m = (f₁/√N₁ + i f₂/√N₂)/√2, with the orientation convention (m ↔ m̄ if needed)."""
    f1, n1, f2, n2 = spatial
    keep = [*l, *n, *f1, *f2, n1, n2, *_flat(frame.g), *_flat(frame.c)]
    tower, root2, keep = adjoin_square_root(frame.tower, frame.f.const(2), "2", keep)
    tower, w1, keep = adjoin_square_root(tower, keep[16], "N1", [*keep, root2])
    tower, w2, keep = adjoin_square_root(tower, keep[17], "N2", [*keep, w1])
    root2, w1 = keep[-2:]
    frame = _rebuilt(tower, keep[18:34], keep[34:70])
    f = frame.f
    l, n, f1, f2 = (keep[4 * k: 4 * k + 4] for k in range(4))
    m = frame.scale(f.inv(root2), frame.combine([(f.inv(w1), f1),
                                                 (f.div(tower.i, w2), f2)]))
    if _orientation(frame, spacetime, points, l, n, m) != ORIENTATION:
        m = frame.conj(m)
    return frame, l, n, m


def _orientation(frame: Frame, spacetime: Spacetime, points: Sequence[dict], l: Vector,
                 n: Vector, m: Vector) -> int:
    """The sign s with ε(l, n, m, m̄) = s·i, read at a sample point (|ε| = 1 there)."""
    f = frame.f
    matrix = [l, n, m, frame.conj(m)]
    det = determinant(f, matrix)
    metric_det = determinant(f, frame.g)
    for point in points:
        d, g = value_at(f, det, point, spacetime), value_at(f, metric_det, point, spacetime)
        if d is None or g is None or g.real >= 0:
            continue
        epsilon = mpmath.sqrt(-g.real) * d
        if abs(abs(epsilon) - 1) < mpmath.mpf(10) ** -10 and abs(epsilon.real) < 1e-10:
            return 1 if epsilon.imag > 0 else -1
    raise NotFound("the orientation of the tetrad could not be read at a sample point")



def _lower_weyl(f: RationalField, ops: WeylOperator) -> list[list[Frac]]:
    """C_PQ on index pairs from the operator W^P_Q = G^PR C_RQ and G_PR (the bivector metric
    of g_ab, the inverse of G^PR)."""
    g = ops.metric
    lower_g = [[f.sum_of_products([(g[a][c], g[b][d]), (f.neg(g[a][d]), g[b][c])])
                for c, d in PAIRS] for a, b in PAIRS]
    w = ops.operator
    return [[f.sum_of_products([(lower_g[r][p], w[p][q]) for p in range(6)])
             for q in range(6)] for r in range(6)]


# ---------------------------------------------------------------------------- verification


def tetrad_checks(frame: Frame, l: Vector, n: Vector, m: Vector) -> list[str]:
    """The normalisation and completeness of the tetrad, in normal form; raises NotFound if
    one fails (a wrong tetrad is never shown)."""
    f = frame.f
    mb = frame.conj(m)
    products = {"l·l": (l, l, 0), "n·n": (n, n, 0), "m·m": (m, m, 0), "l·m": (l, m, 0),
                "n·m": (n, m, 0), "l·n": (l, n, -1), "m·m̄": (m, mb, 1)}
    for label, (x, y, expected) in products.items():
        if not f.equal(frame.dot(x, y), f.const(expected)):
            raise NotFound(f"the tetrad fails {label} = {expected}")
    lower = [[f.sum_of_products([(frame.g[a][b], v[b]) for b in range(4)]) for a in range(4)]
             for v in (l, n, m, mb)]
    ll, nl, ml, mbl = lower
    for a in range(4):
        for b in range(a, 4):
            rebuilt = f.sum_of_products([(f.neg(ll[a]), nl[b]), (f.neg(nl[a]), ll[b]),
                                         (ml[a], mbl[b]), (mbl[a], ml[b])])
            if not f.equal(rebuilt, frame.g[a][b]):
                raise NotFound("the tetrad does not rebuild the metric "
                               f"(component {a}{b})")
    return ["l·n = −1, m·m̄ = 1, all other products 0 (normal form)",
            "g_ab = −l_a n_b − n_a l_b + m_a m̄_b + m̄_a m_b (normal form)"]


def pattern_holds(f: RationalField, psi: dict[str, Frac], kind: str) -> bool:
    allowed = PATTERN[kind]
    return all(psi[name].is_zero() for name in NAMES if name not in allowed)


# ---------------------------------------------------------------------------- rotations


def _repeated_root(f: RationalField, quartic: list[Frac], kind: str) -> list[Frac]:
    """The monic factor whose root(s) l must be rotated to: linear for II, III, N (the most
    repeated root), quadratic for D (both double roots)."""
    q = _trim(f, quartic)
    if len(q) < 5:
        raise NotFound("internal: the quartic lost its leading coefficient")
    if kind == "D":
        square = _square_root_of_quartic(f, q)
        if square is not None:
            return square
    repeated = _gcd(f, q, _derivative(f, q))
    if kind == "D":
        if len(repeated) != 3:
            raise NotFound("the repeated roots of the principal-direction quartic were not "
                           "separated exactly")
        return repeated
    while len(repeated) > 2:
        repeated = _gcd(f, repeated, _derivative(f, repeated))
    if len(repeated) != 2:
        raise NotFound("no repeated principal null direction was found exactly")
    return repeated


def _square_root_of_quartic(f: RationalField, q: list[Frac]) -> list[Frac] | None:
    """S = b² + p b + s with q = q₄ S² and p² ≠ 4s, when the quartic is visibly that
    square; else None. For type D this S is gcd(q, q′) (made monic), which the Euclidean
    algorithm reaches through growing remainders: with q/q₄ = b⁴ + a₃b³ + a₂b² + a₁b + a₀,
    p = a₃/2 and s = (a₂ − p²)/2 are forced, and a₁ = 2ps, a₀ = s² are checked exactly.
    S has two distinct roots (p² ≠ 4s), so gcd(S², 2SS′) = S·gcd(S, 2S′) = S."""
    if len(q) != 5:
        return None
    a0, a1, a2, a3 = (f.div(c, q[4]) for c in q[:4])
    p = f.scale(a3, sympy.Rational(1, 2))
    s = f.scale(f.sub(a2, f.mul(p, p)), sympy.Rational(1, 2))
    if not f.equal(a1, f.scale(f.mul(p, s), 2)) or not f.equal(a0, f.mul(s, s)):
        return None
    if f.sub(f.mul(p, p), f.scale(s, 4)).is_zero():
        return None  # a fourfold root: not type D, and the general path says so
    FrameWork.count(p, s)
    return [s, p, f.one()]


def _complex_root(frame: Frame, spacetime: Spacetime, points: Sequence[dict], x: Frac,
                  keep: list[Frac]) -> tuple[Frame, Frac, list[Frac]]:
    """√x for x = α + iβ in the tower: found in it, or x + iy with real adjoined roots
    ρ = √(α² + β²), x = √((α + ρ)/2), y = β/(2x)."""
    f = frame.f
    root = square_root_in(f, x)
    if root is not None:
        return frame, root, keep
    i_var = f.index[I_KEY]
    z = f.gens[i_var]
    b_poly, a_poly = divmod(x.num, z)
    alpha, beta = f.normal(a_poly, x.den), f.normal(b_poly, x.den)
    tower = frame.tower
    carried = [*keep, *_flat(frame.g), *_flat(frame.c)]
    if beta.is_zero():
        sign = _positive_everywhere(f, alpha, points, spacetime)
        if sign is None:
            raise NotFound("the discriminant of the principal directions changes sign")
        radicand = alpha if sign else f.neg(alpha)
        tower, r, carried = adjoin_square_root(tower, radicand, "d", carried)
        root = r if sign else tower.field.mul(tower.i, r)
    else:
        modulus2 = f.add(f.mul(alpha, alpha), f.mul(beta, beta))
        tower, rho, carried = adjoin_square_root(tower, modulus2, "rho",
                                                 [*carried, alpha, beta])
        g = tower.field
        if _positive_everywhere(g, rho, points, spacetime) is False:
            rho = g.neg(rho)
        alpha, beta = carried[-2:]
        tower, re, carried = adjoin_square_root(
            tower, g.scale(g.add(alpha, rho), sympy.Rational(1, 2)), "re", carried)
        g = tower.field
        alpha, beta = carried[-2:]
        carried = carried[:-2]
        root = g.add(re, g.mul(tower.i, g.div(beta, g.scale(re, 2))))
    k = len(keep)
    new = _rebuilt(tower, carried[k:k + 16], carried[k + 16:k + 52])
    return new, root, carried[:k]


def principal_frame(ops: WeylOperator, spacetime: Spacetime, kind: str,
                    bound: int = WORK_TERMS) -> PrincipalFrame:
    """The tool's tetrad rotated into a principal frame for Petrov type ``kind``; when that
    fails, the tool's own tetrad with ``principal`` false and the reason. Raises NotFound or
    TooLarge when no tetrad could be built at all. ``bound``: the work bound (terms produced,
    see the module docstring)."""
    FrameWork.start(bound)
    frame, l, n, m, how, k = build_tetrad(ops, spacetime)
    # The scalars come before any check of this first tetrad: when they outgrow the size
    # bound nothing is shown, and every tetrad that is shown is checked where it is returned
    # (a rotated or boosted one after the rotation, this one only if no rotation succeeds).
    psi = frame.scalars(l, n, m)
    if pattern_holds(frame.f, psi, kind):
        l, n, m = presented(frame, spacetime, kind, l, n, m, k)
        return PrincipalFrame(frame.tower, l, n, m, frame.scalars(l, n, m), True,
                              how + "; already principal",
                              tuple(tetrad_checks(frame, l, n, m)))
    before_rotation = FrameWork.used
    try:
        found = _rotated(frame, spacetime, kind, l, n, m, how, psi)
    except (NotFound, TooLarge, ZeroDivisionError) as exc:
        why = "a division by zero in the rotation" if isinstance(exc, ZeroDivisionError) \
            else str(exc)
        FrameWork.used = before_rotation  # the abandoned rotation's work is not charged
        checks = tetrad_checks(frame, l, n, m)
        return PrincipalFrame(frame.tower, l, n, m, psi, False, how, tuple(checks), why)
    frame, l, n, m, how = found
    l, n, m = presented(frame, spacetime, kind, l, n, m, k)
    psi = frame.scalars(l, n, m)
    if not pattern_holds(frame.f, psi, kind):
        raise NotFound("internal: the boost changed the pattern")
    return PrincipalFrame(frame.tower, l, n, m, psi, True, how,
                          tuple(tetrad_checks(frame, l, n, m)))


def presented(frame: Frame, spacetime: Spacetime, kind: str, l: Vector, n: Vector, m: Vector,
              k: int) -> tuple[Vector, Vector, Vector]:
    """A boost (and, for type D, the exchange l ↔ n) chosen for reading, not for the
    physics: l gets component 1 along coordinate k where that component is positive on the
    sampled domain (Kinnersley's choice l^r = 1 for Kerr), else −1 where it is negative."""
    f = frame.f
    points = entry_points(spacetime, 4)
    k = next((a for a in (k, *range(4)) if not l[a].is_zero() or not n[a].is_zero()), k)
    sign_l = None if l[k].is_zero() else _positive_everywhere(f, l[k], points, spacetime)
    if kind == "D" and sign_l is not True and not n[k].is_zero() and \
            _positive_everywhere(f, n[k], points, spacetime) is True:
        l, n, m = n, l, frame.conj(m)
        sign_l = True
    if sign_l is None:
        return l, n, m
    boost = f.inv(l[k]) if sign_l else f.neg(f.inv(l[k]))
    return frame.scale(boost, l), frame.scale(f.inv(boost), n), m


def quartic_of(f: RationalField, psi: dict[str, Frac], about_n: bool) -> list[Frac]:
    """``Frame.quartic`` read off the frame's Weyl scalars instead of contracted again: Ψ0
    after the null rotation about n by b is Ψ0 + 4bΨ1 + 6b²Ψ2 + 4b³Ψ3 + b⁴Ψ4, and Ψ4 after
    the one about l by a is Ψ4 + 4āΨ3 + 6ā²Ψ2 + 4ā³Ψ1 + ā⁴Ψ0 (the Newman–Penrose
    transformation laws; tests/test_principal_frame.py compares them with the contraction).
    The frame reached is checked from fresh contractions all the same (``pattern_holds``)."""
    names = NAMES if about_n else NAMES[::-1]
    return [f.scale(psi[name], c) for name, c in zip(names, (1, 4, 6, 4, 1), strict=True)]


def scalars_rotated_about_n(f: RationalField, psi: dict[str, Frac], b: Frac
                            ) -> dict[str, Frac]:
    """The Weyl scalars after ``Frame.rotate_about_n`` by b, from those before: Ψk' =
    Σ_{j ≥ k} C(4 − k, j − k) b^(j−k) Ψj (Ψ4 unchanged, Ψ3' = Ψ3 + bΨ4, …)."""
    values = [psi[name] for name in NAMES]
    powers = [f.one(), b]
    for _ in range(3):  # up to b⁴
        powers.append(f.mul(powers[-1], b))
    return {name: f.sum_of_products([(f.const(math.comb(4 - k, j - k)), powers[j - k],
                                      values[j]) for j in range(k, 5)])
            for k, name in enumerate(NAMES)}


def _rotated(frame: Frame, spacetime: Spacetime, kind: str, l: Vector, n: Vector, m: Vector,
             how: str, psi: dict[str, Frac]) -> tuple[Frame, Vector, Vector, Vector, str]:
    if kind == "I" and psi["Psi1"].is_zero() and psi["Psi3"].is_zero():
        raise NotFound("type I: the tool's tetrad has Ψ1 = Ψ3 = 0 (a transverse frame, the "
                       "usual canonical frame of type I, up to a boost), but l and n are not "
                       "principal; the four principal null directions are the roots of a "
                       "quartic with no repeated root, which the tool does not solve in "
                       "radicals")
    if kind == "I":
        raise NotFound("type I: the four principal null directions are the roots of a "
                       "quartic with no repeated root, which the tool does not solve in "
                       "radicals")
    points = entry_points(spacetime, 4)
    f = frame.f
    steps = []
    if psi["Psi4"].is_zero():  # n is principal: swap so that the quartic has degree 4
        l, n, m = n, l, frame.conj(m)
        steps.append("l ↔ n")
        psi = frame.scalars(l, n, m)
    for parameter in (f.one(), frame.tower.i, f.const(2), f.const(-1)):
        if not psi["Psi4"].is_zero():
            break
        l, n, m = frame.rotate_about_l(l, n, m, parameter)
        steps.append("a null rotation about l to move n off the principal directions")
        psi = frame.scalars(l, n, m)
    quartic = quartic_of(f, psi, about_n=True)
    factor = _repeated_root(f, quartic, kind)
    if kind == "D":
        p, q = factor[1], factor[0]
        discriminant = f.sub(f.mul(p, p), f.scale(q, 4))
        frame, root, kept = _complex_root(frame, spacetime, points, discriminant,
                                          [*l, *n, *m, p, *(psi[name] for name in NAMES)])
        f = frame.f
        l, n, m = kept[0:4], kept[4:8], kept[8:12]
        psi = dict(zip(NAMES, kept[13:18], strict=True))
        b = f.scale(f.sub(root, kept[12]), sympy.Rational(1, 2))
    else:
        b = f.neg(factor[0])
    l, n, m = frame.rotate_about_n(l, n, m, b)
    steps.append("a null rotation about n putting l on the "
                 + ("double" if kind in ("D", "II") else "repeated") + " principal direction")
    if kind == "D":
        d = quartic_of(f, scalars_rotated_about_n(f, psi, b), about_n=False)
        if not (d[4].is_zero() and d[3].is_zero()) or d[2].is_zero():
            raise NotFound("after the first rotation l is not a double principal direction")
        alpha = f.neg(f.div(d[1], f.scale(d[2], 2)))
        l, n, m = frame.rotate_about_l(l, n, m, conjugate(frame.tower, alpha))
        steps.append("a null rotation about l putting n on the other double direction")
    psi = frame.scalars(l, n, m)
    if not pattern_holds(f, psi, kind):
        raise NotFound("the rotated frame does not have the type's pattern of Weyl scalars")
    return frame, l, n, m, how + "; " + ", then ".join(steps)


def nonzero_scalars(frame: PrincipalFrame, spacetime: Spacetime) -> dict[str, bool]:
    """Which non-zero normal forms are certainly non-zero (a witness point)."""
    f = frame.tower.field
    return {name: (not value.is_zero()) and nonzero_in_field(f, value, spacetime)
            for name, value in frame.psi.items()}
