"""Classify & verify (2/4): Hawking–Ellis type of T^a_b and the classical energy conditions.

Hawking–Ellis (Segre) types: I — diagonalisable (a timelike eigenvector), II — a double null
eigenvector, III — a triple null eigenvector, IV — complex eigenvalues. T^a_b is split into the
blocks its nonzero components couple; 1×1 blocks are eigenvalues, 2×2 blocks are solved in
closed form; anything larger is typed at exact sample points only (and says so).

Energy conditions for type I with energy density ρ and principal pressures p_i (n dimensions):
null ρ + p_i ≥ 0; weak ρ ≥ 0 and null; strong null and (n−3)ρ + Σp_i ≥ 0; dominant ρ ≥ |p_i|
(Hawking & Ellis 1973, §4.3, from memory). "holds" needs a proof (``positivity``); "violated"
needs an exact witness point; everything else is "undecided".
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import mpmath
import sympy

from generator.geometry.equality import canonical, canonical_all, exact_square_root
from generator.geometry.exactvalues import (
    Point,
    describe_point,
    point_text,
    sign_at,
    value_at,
    vanishes,
)
from generator.model import EnergyCondition, Spacetime
from generator.physics.positivity import proved_sign, proves_sign

CONDITIONS = ("null", "weak", "strong", "dominant")
BOOSTS = ((sympy.Rational(5, 4), sympy.Rational(3, 4)), (sympy.Rational(13, 5),
                                                         sympy.Rational(12, 5)))


@dataclass(frozen=True)
class Spectrum:
    """Algebraic type of T^a_b with, for type I, the energy density and principal pressures."""

    type: str  # I | II | III | IV | undecided
    method: str  # exact | sampled | failed
    reason: str
    energy_density: sympy.Expr | None = None
    pressures: tuple[sympy.Expr, ...] | None = None
    null_dust_weight: sympy.Expr | None = None  # T_aa with T_ab = ρ k_a k_b: sign of ρ


# ---------------------------------------------------------------------------- blocks


def coupled_blocks(mixed: sympy.Matrix, metric: sympy.Matrix, spacetime: Spacetime
                   ) -> list[list[int]]:
    """Index sets that T^a_b or g_ab couple (connected components), in index order."""
    n = mixed.rows
    parent = list(range(n))

    def root(i: int) -> int:
        while parent[i] != i:
            i = parent[i]
        return i

    for a in range(n):
        for b in range(a + 1, n):
            linked = any(vanishes(m[i, j], spacetime).equal is not True
                         for m in (mixed, metric) for i, j in ((a, b), (b, a)))
            if linked:
                parent[root(a)] = root(b)
    groups: dict[int, list[int]] = {}
    for i in range(n):
        groups.setdefault(root(i), []).append(i)
    return sorted(groups.values())


def lorentzian_block(blocks: list[list[int]], metric: sympy.Matrix, points: Sequence[Point],
                     spacetime: Spacetime) -> int | None:
    """Which block holds the time direction (its metric block has det < 0) at the points."""
    quick = [quick_determinant(metric.extract(block, block)) for block in blocks]
    simplified: dict[int, sympy.Expr] = {}
    found = set()
    for point in points:
        for k, determinant in enumerate(quick):
            sign = sign_at(determinant, point, spacetime)
            if sign is None and len(blocks[k]) > 1:
                # The product form may be undefined where a factor's pole cancels: ask the
                # simplified determinant there (SymPy's det, computed once per block).
                if k not in simplified:
                    simplified[k] = metric.extract(blocks[k], blocks[k]).det()
                sign = sign_at(simplified[k], point, spacetime)
            if sign == -1:
                found.add(k)
    return found.pop() if len(found) == 1 else None


def quick_determinant(block: sympy.Matrix) -> sympy.Expr:
    """det of a 1×1 or 2×2 block as the plain product formula (SymPy's det simplifies every
    entry product first, which took most of the Hawking–Ellis test of Kerr–Newman); only its
    sign at exact sample points is used, and that is the same number either way."""
    if block.rows == 1:
        return block[0, 0]
    if block.rows == 2:
        return block[0, 0] * block[1, 1] - block[0, 1] * block[1, 0]
    return block.det()


# ---------------------------------------------------------------------------- the type


def hawking_ellis(mixed: sympy.Matrix, lower: sympy.Matrix, metric: sympy.Matrix,
                  spacetime: Spacetime, points: Sequence[Point]) -> Spectrum:
    """Hawking–Ellis type of T^a_b; energy density and pressures when it is type I."""
    blocks = coupled_blocks(mixed, metric, spacetime)
    if any(len(b) > 2 for b in blocks):
        return pointwise_type(mixed, spacetime, points,
                              "T^a_b couples more than two coordinates in this chart")
    time = lorentzian_block(blocks, metric, points, spacetime)
    eigen: list[tuple[list[sympy.Expr], int | None]] = []  # eigenvalues, index of timelike one
    kinds = []
    for k, block in enumerate(blocks):
        if len(block) == 1:
            eigen.append(([mixed[block[0], block[0]]], 0 if k == time else None))
            kinds.append("I")
            continue
        part = two_by_two(mixed.extract(block, block), metric.extract(block, block),
                          spacetime, points, k == time)
        if isinstance(part, Spectrum):
            kinds.append(part.type)
            if part.type != "I":
                return finish_non_type_one(part, mixed, lower, blocks, block, spacetime)
            continue
        eigen.append(part)
        kinds.append("I")
    return type_one(eigen, blocks, metric, spacetime)


def type_one(eigen: list[tuple[list[sympy.Expr], int | None]], blocks: list[list[int]],
             metric: sympy.Matrix, spacetime: Spacetime) -> Spectrum:
    density = None
    pressures = []
    for values, timelike in eigen:
        for i, value in enumerate(values):
            if i == timelike and density is None:
                density = -value
            else:
                pressures.append(value)
    if density is None:
        return Spectrum("I", "exact", "T^a_b is diagonalisable with real eigenvalues, but no "
                        "eigenvector is timelike at every sample point (does the domain cross "
                        "a horizon?), so ρ and the pressures are not separated")
    return Spectrum("I", "exact", "T^a_b is diagonalisable with real eigenvalues",
                    sympy.factor(density), tuple(sympy.factor(p) for p in pressures))


def two_by_two(block: sympy.Matrix, gblock: sympy.Matrix, spacetime: Spacetime,
               points: Sequence[Point], holds_time: bool
               ) -> tuple[list[sympy.Expr], int | None] | Spectrum:
    """Eigenvalues of a coupled pair (and which one is timelike), or a non-type-I Spectrum."""
    A, B, C, D = block[0, 0], block[0, 1], block[1, 0], block[1, 1]
    # In the exact field (``canonical``): SymPy's cancel of the same sum took 30 ms for
    # Kerr–Newman's block and left sin² and cos² unreduced.
    discriminant = canonical((A - D) ** 2 / 4 + B * C, spacetime)
    if vanishes(discriminant, spacetime).equal is True:
        if vanishes(B, spacetime).equal is True and vanishes(C, spacetime).equal is True:
            return [A, D], (0 if holds_time else None)
        return Spectrum("II", "exact", "a coupled pair of T^a_b has a double eigenvalue and is "
                        "not diagonalisable (null eigenvector)")
    # A perfect square m² is positive wherever m ≠ 0: proving m ≠ 0 is far cheaper than
    # proving the expanded square positive. {m - y, m + y} is the same pair for either root
    # ±y, so the exact root also gives eigenvalues free of radicals.
    root = exact_square_root(discriminant, spacetime)
    if root is not None:
        sign, method = square_sign(root, spacetime, points)
    else:
        sign, method = discriminant_sign(discriminant, spacetime, points)
    if sign is None:
        return Spectrum("undecided", "failed", "the sign of the eigenvalue discriminant "
                        f"{discriminant} changes or could not be decided")
    if sign < 0:
        return Spectrum("IV", method, "a coupled pair of T^a_b has complex eigenvalues "
                        f"(discriminant {discriminant} < 0)")
    if root is None:
        root = sympy.sqrt(discriminant)
    values = [(A + D) / 2 - root, (A + D) / 2 + root]
    if not holds_time:
        return values, None
    return values, timelike_eigenvalue(values, A, B, C, D, gblock, spacetime, points)


def discriminant_sign(discriminant: sympy.Expr, spacetime: Spacetime,
                      points: Sequence[Point]) -> tuple[int | None, str]:
    sign = proved_sign(discriminant, spacetime, strict=True)
    if sign is not None:
        return sign, "exact"
    signs = {sign_at(discriminant, p, spacetime) for p in points}
    signs.discard(None)
    return (signs.pop(), "sampled") if len(signs) == 1 and 0 not in signs else (None, "failed")


def square_sign(root: sympy.Expr, spacetime: Spacetime, points: Sequence[Point]
                ) -> tuple[int | None, str]:
    """The sign of root², as ``discriminant_sign`` gives it: never negative; positive, proved
    when root ≠ 0 is, else when root ≠ 0 at every sample point."""
    if proved_sign(root, spacetime, strict=True) is not None:  # root > 0 or root < 0
        return 1, "exact"
    signs = {sign_at(root, p, spacetime) for p in points} - {None}
    return (1, "sampled") if signs and 0 not in signs else (None, "failed")


def timelike_eigenvalue(values: list[sympy.Expr], A: sympy.Expr, B: sympy.Expr,
                        C: sympy.Expr, D: sympy.Expr, gblock: sympy.Matrix,
                        spacetime: Spacetime, points: Sequence[Point]) -> int | None:
    """Index of the eigenvalue whose eigenvector has negative norm at every sample point.

    The norms are put in normal form first (one field for both): evaluating the reduced
    quotient at the points is cheaper than substituting into the raw product v·g·v."""
    use_first_row = vanishes(B, spacetime).equal is not True
    norms = []
    for lam in values:
        v = sympy.Matrix([B, lam - A]) if use_first_row else sympy.Matrix([lam - D, C])
        norms.append((v.T * gblock * v)[0, 0])
    found = set()
    for i, norm in enumerate(canonical_all(norms, spacetime)):
        signs = {sign_at(norm, p, spacetime) for p in points} - {None}
        if signs == {-1}:
            found.add(i)
    return found.pop() if len(found) == 1 else None


def finish_non_type_one(part: Spectrum, mixed: sympy.Matrix, lower: sympy.Matrix,
                        blocks: list[list[int]], block: list[int], spacetime: Spacetime
                        ) -> Spectrum:
    """Type II from a degenerate pair; pure null dust when nothing else is nonzero."""
    if part.type != "II":
        return part
    others = [i for b in blocks for i in b if b != block]
    pair = block
    trace_zero = vanishes(mixed[pair[0], pair[0]] + mixed[pair[1], pair[1]], spacetime)
    rest_zero = all(vanishes(mixed[i, i], spacetime).equal is True for i in others)
    if trace_zero.equal is True and rest_zero:
        weight = next((lower[i, i] for i in pair
                       if vanishes(lower[i, i], spacetime).equal is not True), None)
        return Spectrum("II", part.method, "T_ab = ρ k_a k_b (pure null radiation)",
                        null_dust_weight=weight)
    return part


def pointwise_type(mixed: sympy.Matrix, spacetime: Spacetime, points: Sequence[Point],
                   why: str) -> Spectrum:
    """Type at each exact sample point (Jordan structure over Q); agreed types are reported as
    sampled, never as proved."""
    types = set()
    for point in points:
        values = [value_at(v, point, spacetime) for v in mixed]
        if any(v is None for v in values):
            continue
        if all(v.is_Rational for v in values):
            types.add(type_at_point(sympy.Matrix(mixed.rows, mixed.cols, values)))
        elif has_complex_eigenvalue(values, mixed.rows):
            types.add("IV")
    if len(types) == 1:
        kind = types.pop()
        return Spectrum(kind, "sampled", f"{why}; type {kind} at every usable exact sample "
                        "point (not proved for the whole domain)")
    if not types:
        return Spectrum("undecided", "failed", f"{why}; T^a_b is not rational at the sample "
                        "points and no complex eigenvalue was found numerically")
    return Spectrum("undecided", "failed", f"{why}; the type differs between sample points "
                    f"({', '.join(sorted(types))})")


def has_complex_eigenvalue(values: list[sympy.Expr], n: int) -> bool:
    """An eigenvalue whose imaginary part is far above the error of a 50-digit evaluation.

    Eigenvalues depend continuously on the entries, so an imaginary part of 1e-15 (relative)
    cannot be an artefact of 50-digit rounding: the matrix has a non-real eigenvalue, which is
    Hawking–Ellis type IV. Real (or nearly real) spectra are left undecided here.
    """
    with mpmath.workdps(50):
        matrix = mpmath.matrix([[mpmath.mpf(sympy.N(values[n * i + j], 50)) for j in range(n)]
                                for i in range(n)])
        eigenvalues = mpmath.eig(matrix, left=False, right=False)
        scale = max([abs(e) for e in eigenvalues] + [mpmath.mpf(1)])
        return any(abs(mpmath.im(e)) > scale * mpmath.mpf(10) ** -15 for e in eigenvalues)


def type_at_point(matrix: sympy.Matrix) -> str:
    """Segre type of a rational matrix self-adjoint for a Lorentzian metric."""
    characteristic = matrix.charpoly()
    x = characteristic.gen
    squarefree = sympy.Poly(sympy.sqf_part(characteristic.as_expr()), x)
    if squarefree.count_roots() < squarefree.degree():
        return "IV"
    s_of_m = evaluate_polynomial(squarefree, matrix)
    power = s_of_m
    for depth in (1, 2, 3):
        if power.is_zero_matrix:
            return {1: "I", 2: "II", 3: "III"}[depth]
        power = power * s_of_m
    return "undecided"


def evaluate_polynomial(poly: sympy.Poly, matrix: sympy.Matrix) -> sympy.Matrix:
    result = sympy.zeros(matrix.rows, matrix.cols)
    for coefficient in poly.all_coeffs():
        result = result * matrix + coefficient * sympy.eye(matrix.rows)
    return result


# ---------------------------------------------------------------------------- energy conditions


def inequalities(spectrum: Spectrum, dimension: int) -> dict[str, list[tuple[str, sympy.Expr]]]:
    """For type I: each condition as a list of (label, expression that must be ≥ 0)."""
    rho, ps = spectrum.energy_density, spectrum.pressures or ()
    assert rho is not None
    null = [(f"ρ + p_{i + 1}", rho + p) for i, p in enumerate(ps)]
    return {
        "null": null,
        "weak": [("ρ", rho), *null],
        "strong": [*null, ("(n−3)ρ + Σp" if dimension != 4 else "ρ + Σp",
                           (dimension - 3) * rho + sum(ps, sympy.Integer(0)))],
        "dominant": [("ρ", rho), *null, *((f"ρ − p_{i + 1}", rho - p)
                                          for i, p in enumerate(ps))],
    }


def judge(requirements: list[tuple[str, sympy.Expr]], spacetime: Spacetime,
          points: Sequence[Point], name: str, proved: dict[sympy.Expr, bool] | None = None
          ) -> EnergyCondition:
    """Proved for all requirements → holds; else one negative at a point → violated.

    With free functions a negative value at a point only shows that *some* choice of the
    functions violates the condition, so the verdict is then "undecided" (it depends on them).
    ``proved`` remembers proofs across the four conditions, which share most inequalities
    (ρ + p_i ≥ 0 is part of every one).
    """
    proved = {} if proved is None else proved
    for _label, expr in requirements:
        if expr not in proved:
            proved[expr] = proves_sign(expr, spacetime)
    unproved = [(label, expr) for label, expr in requirements if not proved[expr]]
    if not unproved:
        return EnergyCondition(name, "holds", "proved symbolically on the whole domain")
    for label, expr in unproved:
        for point in points:
            if sign_at(expr, point, spacetime) == -1:
                if has_free_functions(expr, spacetime):
                    return EnergyCondition(name, "undecided", f"depends on the free functions: "
                                           f"{label} < 0 for some values of them (e.g. at "
                                           f"{point_text(point)})")
                return EnergyCondition(name, "violated", f"{label} < 0 at {point_text(point)}",
                                       describe_point(point))
    labels = ", ".join(label for label, _ in unproved)
    return EnergyCondition(name, "undecided", f"not proved ({labels} ≥ 0); no violation at "
                           f"{len(points)} exact sample points")


def has_free_functions(expr: sympy.Expr, spacetime: Spacetime) -> bool:
    heads = {f.func for f in spacetime.functions}
    return any(f.func in heads for f in sympy.sympify(expr).atoms(sympy.Function))


def energy_conditions(spectrum: Spectrum, lower: sympy.Matrix, metric: sympy.Matrix,
                      spacetime: Spacetime, points: Sequence[Point]
                      ) -> tuple[EnergyCondition, ...]:
    if spectrum.type == "I" and spectrum.energy_density is not None:
        table = inequalities(spectrum, spacetime.dimension)
        proved: dict[sympy.Expr, bool] = {}
        return tuple(judge(table[name], spacetime, points, name, proved)
                     for name in CONDITIONS)
    if spectrum.null_dust_weight is not None:
        requirement = [("ρ (null dust)", spectrum.null_dust_weight)]
        proved = {}
        return tuple(judge(requirement, spacetime, points, name, proved)
                     for name in CONDITIONS)
    iv = interval_context()
    enclosed = enclosed_points(iv, lower, metric, spacetime, points)
    return tuple(observer_search(iv, name, lower, spacetime, enclosed, len(points), spectrum)
                 for name in CONDITIONS)


# ---------------------------------------------------------------------------- observers
#
# The observer search works in interval arithmetic (mpmath.iv): each exact value of T_ab and
# g_ab at the point is enclosed in an interval, every step of the frame and the tests widens the
# enclosure as needed, and a test counts as violated only when its whole interval lies on the
# wrong side of zero. That is as certain as the exact route and much cheaper: exact values such
# as exp(-13/4) otherwise grow into huge trees through the Gram–Schmidt steps.

INTERVAL_BITS = 240
# A value is enclosed within this relative slack of its 60-digit evaluation, plus the absolute
# slack below which ``exactvalues.exact_sign`` calls a number zero: a value that is exactly zero
# but does not look it (exp(1)*exp(-1) - 1) stays an interval around zero.
RELATIVE_SLACK = mpmath.mpf(10) ** -50
ABSOLUTE_SLACK = mpmath.mpf(10) ** -45

IntervalMatrix = Any  # a matrix of an interval context (its class is made per context)
Interval = Any  # an interval number of that context
IntervalContext = Any


def interval_context() -> IntervalContext:
    """A private interval-arithmetic context at INTERVAL_BITS (mpmath's shared ``iv`` has no
    local precision switch, and changing its precision would leak into other code)."""
    ctx = type(mpmath.iv)()
    ctx.prec = INTERVAL_BITS
    return ctx


def enclosure(iv: IntervalContext, value: sympy.Expr) -> Interval | None:
    """An interval that certainly contains the exact real number ``value`` (None if it is not
    a real number)."""
    if value.is_Rational:
        return iv.mpf(int(value.p)) / iv.mpf(int(value.q))
    numeric = value.evalf(60)
    if not (numeric.is_Float or numeric.is_Rational):
        return None
    # The 60-digit value must keep its digits on the way in: at mpmath's default 53 bits it
    # would be rounded far beyond the slack, and a small T_ab k^a k^b could change sign.
    with mpmath.workprec(INTERVAL_BITS):
        centre = mpmath.mpf(numeric._mpf_) if numeric.is_Float else mpmath.mpf(
            int(numeric.p)) / int(numeric.q)
        slack = abs(centre) * RELATIVE_SLACK + ABSOLUTE_SLACK
        lower, upper = centre - slack, centre + slack
    return iv.mpf([lower, upper])


def interval_matrix(iv: IntervalContext, values: Sequence[sympy.Expr], rows: int
                    ) -> IntervalMatrix | None:
    enclosed = [enclosure(iv, v) for v in values]
    if any(e is None for e in enclosed):
        return None
    cols = len(enclosed) // rows
    return iv.matrix([[enclosed[cols * i + j] for j in range(cols)] for i in range(rows)])


def certainly_negative(x: Interval) -> bool:
    return bool(x.b < 0)


def certainly_positive(x: Interval) -> bool:
    return bool(x.a > 0)


def orthogonal_frame(iv: IntervalContext, metric: IntervalMatrix
                     ) -> tuple[list[IntervalMatrix], list[Interval]] | None:
    """Gram–Schmidt, spatial-first so the last vector is the slice normal; None when a norm
    is not certainly non-zero."""
    n = metric.rows
    order = [*range(1, n), 0]
    frame: list[IntervalMatrix] = []
    norms: list[Interval] = []
    for i in order:
        v = iv.matrix(n, 1)
        v[i] = iv.mpf(1)
        for e, q in zip(frame, norms, strict=True):
            v = v - e * ((e.T * metric * v)[0, 0] / q)
        q = (v.T * metric * v)[0, 0]
        if not (certainly_negative(q) or certainly_positive(q)):
            return None
        frame.append(v)
        norms.append(q)
    return frame, norms


Enclosed = tuple[Point, IntervalMatrix, IntervalMatrix]  # a point with T_ab and g_ab there


def enclosed_points(iv: IntervalContext, lower: sympy.Matrix, metric: sympy.Matrix,
                    spacetime: Spacetime, points: Sequence[Point]) -> list[Enclosed]:
    """T_ab and g_ab enclosed in intervals at each sample point where both are numbers; done
    once for the four conditions, which all search the same points."""
    found = []
    for point in points:
        T = [value_at(v, point, spacetime) for v in lower]
        g = [value_at(v, point, spacetime) for v in metric]
        if any(v is None for v in T + g):
            continue
        Ti, gi = interval_matrix(iv, T, lower.rows), interval_matrix(iv, g, metric.rows)
        if Ti is not None and gi is not None:
            found.append((point, Ti, gi))
    return found


def observer_search(iv: IntervalContext, name: str, lower: sympy.Matrix, spacetime: Spacetime,
                    enclosed: Sequence[Enclosed], tried: int, spectrum: Spectrum
                    ) -> EnergyCondition:
    """Look for an explicit observer (or null vector) that violates the condition at the
    ``tried`` sample points (``enclosed``: those where T_ab and g_ab are numbers)."""
    for point, Ti, gi in enclosed:
        found = violation_at(iv, name, Ti, gi)
        if found and has_free_functions(lower, spacetime):
            return EnergyCondition(name, "undecided", f"depends on the free functions: "
                                   f"{found} for some values of them")
        if found:
            return EnergyCondition(name, "violated", f"{found} at {point_text(point)}",
                                   describe_point(point))
    return EnergyCondition(name, "undecided", f"Hawking–Ellis type {spectrum.type}; no "
                           f"violating observer found at {tried} exact sample points")


def test_vectors(iv: IntervalContext, gm: IntervalMatrix
                 ) -> tuple[list[tuple[str, IntervalMatrix]], list[IntervalMatrix]]:
    """Unit timelike test observers (the slice normal and boosts of it) and null vectors."""
    built = orthogonal_frame(iv, gm)
    if built is None:
        return [], []
    frame, norms = built
    timelike = [k for k, q in enumerate(norms) if certainly_negative(q)]
    if len(timelike) != 1:
        return [], []
    t = timelike[0]
    unit = [e / iv.sqrt(abs(q)) for e, q in zip(frame, norms, strict=True)]
    observers = [("slice-normal observer", unit[t])]
    nulls = []
    for k in range(len(unit)):
        if k == t:
            continue
        nulls += [unit[t] + unit[k], unit[t] - unit[k]]
        for c, s in BOOSTS:
            ci, si = (iv.mpf(int(x.p)) / iv.mpf(int(x.q)) for x in (c, s))
            observers += [("boosted observer", unit[t] * ci + unit[k] * si),
                          ("boosted observer", unit[t] * ci - unit[k] * si)]
    return observers, nulls


def violation_at(iv: IntervalContext, name: str, T: IntervalMatrix, g: IntervalMatrix) -> str:
    """Description of a violating vector at this point, or '' if none of the tests fails
    with certainty."""
    observers, nulls = test_vectors(iv, g)
    n = g.rows
    try:
        ginv = iv.inverse(g)
    except ZeroDivisionError:
        return ""
    trace = iv.mpf(0)
    for a in range(n):
        for b in range(n):
            trace += ginv[a, b] * T[a, b]

    def quad(v: IntervalMatrix) -> Interval:
        return (v.T * T * v)[0, 0]

    if name in ("null", "weak", "strong", "dominant"):
        for k in nulls:
            if certainly_negative(quad(k)):
                return "T_ab k^a k^b < 0 for a null vector k"
    for label, u in observers:
        energy = quad(u)
        if name in ("weak", "dominant") and certainly_negative(energy):
            return f"T_ab u^a u^b < 0 for the {label}"
        if name == "strong" and certainly_negative(energy + trace / (n - 2)):
            return f"(T_ab − T g_ab/(n−2)) u^a u^b < 0 for the {label}"
        if name == "dominant":
            flux = -(ginv * T * u)
            if certainly_positive((flux.T * g * flux)[0, 0]):
                return f"the energy flux seen by the {label} is spacelike"
    return ""
