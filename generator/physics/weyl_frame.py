"""Weyl scalars in a principal null frame, and the complex invariants I and J.

The self-dual Weyl operator Q (``petrov``: Q = ½(W − iσS̃W) on bivectors, σ = √(−det g))
has tr Q² and tr Q³ proportional to the Newman–Penrose invariants I = Ψ0Ψ4 − 4Ψ1Ψ3 + 3Ψ2²
and J = det[[Ψ4, Ψ3, Ψ2], [Ψ3, Ψ2, Ψ1], [Ψ2, Ψ1, Ψ0]] (Stephani et al. 2003, ch. 4; from
memory), so I and J come out exactly, in any chart and without a tetrad.

In a principal frame of a type D field only Ψ2 survives, and it is the same in every such
frame (boosts, spins and l ↔ n leave it alone); then I = 3Ψ2² and J = −Ψ2³ give
Ψ2 = −3J/I, exactly. For type O every Ψ vanishes. For the other types this module does not
build the principal frame; the Ψ's are then those of the tool's orthonormal coordinate frame
where ``petrov`` has them (diagonal metrics), with the frame named and ``principal`` false
unless they already have the type's pattern.

Orientation: ε_{0123} = +√(−det g) in the entry's coordinate order, and m̄ = (e2 − i e3)/√2
pairs with it so that the Kerr metric in Boyer–Lindquist order (t, r, θ, φ) gives
Ψ2 = −M/(r − i a cos θ)³ (Teukolsky 1973, from memory).
"""

from __future__ import annotations

from dataclasses import replace

import sympy

from generator.geometry.algebra import Frac, NotInField, RationalField
from generator.geometry.curvature import WeylOperator
from generator.geometry.exactvalues import sign_at
from generator.geometry.sampling import entry_points
from generator.model import Geometry, Spacetime, WeylFrame
from generator.physics import principal_frame as pf
from generator.physics.petrov import (
    FieldAlgebra,
    PetrovResult,
    determinant,
    field_operators,
    operator_powers,
)
from generator.physics.tower import TooLarge

# With W normalised as the engine does (pairs a < b once), Q has the eigenvalues −2κΨ2, κΨ2,
# κΨ2 on the self-dual bivectors of a type D field in a principal frame. κ = 1 is what the
# Schwarzschild field gives against its textbook Ψ2 = −M/r³ (common practice); Kerr is then
# an independent check (tests/test_symmetry_stage.py).
KAPPA = sympy.Integer(1)

Complex = tuple[Frac, Frac]  # x + iσy


def traces(ops: WeylOperator, spacetime: Spacetime) -> tuple[Complex, Complex, Frac]:
    """tr Q², tr Q³ as x + iσy, and σ² = −det g (same formulas as the Petrov test)."""
    powers = operator_powers(ops, spacetime)  # the Petrov test's, when it had this operator
    return powers.t2, powers.t3, powers.sigma2


def to_expr(f: RationalField, x: Complex, sigma: sympy.Expr) -> sympy.Expr:
    real, imaginary = f.display(x[0]), f.display(x[1])
    return real + sympy.I * sigma * imaginary if imaginary != 0 else real


def sigma_of(f: RationalField, sigma2: Frac, spacetime: Spacetime) -> sympy.Expr:
    """√(−det g), with |u| written ±u where u has one sign at every sample point of the
    domain (sin θ on 0 < θ < π), so that the display is not littered with Abs."""
    root = f.square_root(sigma2)
    if root is not None:
        return f.display(root)
    sigma = sympy.sqrt(f.display(sigma2))
    points = entry_points(spacetime, 6)
    for atom in sigma.atoms(sympy.Abs):
        signs = {sign_at(atom.args[0], p, spacetime) for p in points}
        if signs in ({1}, {-1}):
            sigma = sigma.xreplace({atom: signs.pop() * atom.args[0]})
    return sigma


def weyl_frame(geometry: Geometry, spacetime: Spacetime, petrov: PetrovResult,
               operator: WeylOperator | None) -> tuple[WeylFrame | None, str]:
    """The frame and scalars, or None with the reason."""
    if petrov.type is None:
        return None, petrov.reason
    if petrov.type == "undecided":
        return None, "the Petrov type is undecided: " + petrov.reason
    try:
        ops = operator or field_operators(geometry, spacetime)
        t2, t3, sigma2 = traces(ops, spacetime)
    except (NotInField, ZeroDivisionError) as exc:
        return None, f"the Weyl operator does not fit the exact engine's field ({exc})"
    f = ops.field
    sigma = sigma_of(f, sigma2, spacetime)
    k2, k3 = KAPPA**2, KAPPA**3
    # tr Q² = 6κ²Ψ2² = 2κ² I and tr Q³ = −6κ³Ψ2³ = 6κ³ J (read off the type D form; both
    # sides are invariants, so the relation holds for every type)
    invariant_i = (f.scale(t2[0], 1 / (2 * k2)), f.scale(t2[1], 1 / (2 * k2)))
    invariant_j = (f.scale(t3[0], 1 / (6 * k3)), f.scale(t3[1], 1 / (6 * k3)))
    i_expr, j_expr = to_expr(f, invariant_i, sigma), to_expr(f, invariant_j, sigma)
    zero = sympy.Integer(0)
    if petrov.type == "O":
        scalars = dict.fromkeys(("Psi0", "Psi1", "Psi2", "Psi3", "Psi4"), zero)
        return WeylFrame("any null tetrad (the Weyl tensor vanishes)", True, (),
                         tuple(scalars.items()), zero, zero, "conformally flat"), ""
    built, why_not = tool_frame(ops, spacetime, petrov.type, invariant_i, invariant_j)
    if built is not None:
        return replace(built, invariant_i=i_expr, invariant_j=j_expr), ""
    if petrov.type == "D":
        ratio = FieldAlgebra(f, spacetime).quotient(t3, t2, sigma2)  # t3/t2 = −κ Ψ2
        psi2 = (f.scale(ratio[0], -1 / KAPPA), f.scale(ratio[1], -1 / KAPPA))
        scalars = {"Psi0": zero, "Psi1": zero, "Psi2": to_expr(f, psi2, sigma),
                   "Psi3": zero, "Psi4": zero}
        return WeylFrame("a principal null tetrad (l, n along the two double principal null "
                         "directions); Ψ2 is the same in all of them", True, (),
                         tuple(scalars.items()), i_expr, j_expr,
                         "Ψ2 = −3J/I from the exact invariants; the tetrad itself was not "
                         f"constructed ({why_not})"), ""
    if petrov.weyl_scalars is not None:
        principal = _has_pattern(petrov.type, petrov.weyl_scalars)
        return WeylFrame("orthonormal coordinate frame e_a = ∂_a/√|g_aa| (time first), "
                         "l, n = (e0 ± e1)/√2, m = (e2 + i e3)/√2", principal,
                         (), tuple(sorted(petrov.weyl_scalars.items())), i_expr, j_expr,
                         "" if principal else "no principal frame was constructed for type "
                         f"{petrov.type} ({why_not}); the scalars are those of the tool's "
                         "frame"), ""
    return WeylFrame("none", False, (), (), i_expr, j_expr,
                     f"no null tetrad was built for type {petrov.type}: {why_not}"), ""


PATTERN = {"N": ("Psi4",), "III": ("Psi3", "Psi4"), "II": ("Psi2", "Psi3", "Psi4")}


def _has_pattern(kind: str, scalars: dict[str, sympy.Expr]) -> bool:
    allowed = PATTERN.get(kind)
    if allowed is None:
        return False
    return all(scalars[name] == 0 for name in scalars if name not in allowed)


# ---------------------------------------------------------------------------- the tool's tetrad

FRAME_FAILURES = (pf.NotFound, TooLarge, NotInField, ZeroDivisionError)
# Factoring over Q(i) (SymPy's algebraic-extension factoring) costs seconds to minutes beyond
# small expressions, so only those are tried: Kerr's Ψ2 has 31 operations, Kerr–Newman's 60.
DISPLAY_FACTOR_LIMIT = 64  # operations
DISPLAY_FACTOR_SYMBOLS = 5  # free symbols (the norm in the factoring grows with each)


def tool_frame(ops: WeylOperator, spacetime: Spacetime, kind: str, invariant_i: Complex,
               invariant_j: Complex) -> tuple[WeylFrame | None, str]:
    """The tool's null tetrad, rotated into a principal frame where ``principal_frame``
    reaches one, with I and J of its scalars checked against the frame-free ones."""
    try:
        found = pf.principal_frame(ops, spacetime, kind)
        agreement = invariants_agree(ops.field, found, invariant_i, invariant_j)
    except FRAME_FAILURES as exc:
        return None, str(exc) or type(exc).__name__
    if not agreement:
        return None, ("the invariants I, J of the constructed frame's scalars differ from the "
                      "frame-free ones, so the frame is not shown")
    f = found.tower.field
    names = [str(x) for x in spacetime.coordinates]
    tetrad = tuple((label, tuple((names[a], readable(f.display(v[a]), spacetime, False))
                                 for a in range(4) if not v[a].is_zero()))
                   for label, v in (("l", found.l), ("n", found.n), ("m", found.m)))
    scalars = tuple((name, readable(f.display(found.psi[name]), spacetime))
                    for name in pf.NAMES)
    checks = (*found.checks, "I = Ψ0Ψ4 − 4Ψ1Ψ3 + 3Ψ2² and J = det[[Ψ4,Ψ3,Ψ2],[Ψ3,Ψ2,Ψ1],"
              "[Ψ2,Ψ1,Ψ0]] equal the frame-free I and J (normal form)")
    name = "null tetrad built by the tool: " + found.how
    why = "" if found.principal else ("principal frame not found in closed form: "
                                      f"{found.why}; the scalars are those of the tool's tetrad")
    return WeylFrame(name, found.principal, tetrad, scalars, None, None, why, checks), ""


def invariants_agree(base: RationalField, found: pf.PrincipalFrame, invariant_i: Complex,
                     invariant_j: Complex) -> bool:
    """I and J from the frame's Ψ's equal the operator's x + iσy, with σ = √(−det g) written
    in the tower through the tetrad: ε(l, n, m, m̄) = σ det T = i·ORIENTATION."""
    f = found.tower.field

    def carried(x: Frac) -> Frac:
        return pf.carry_into(found.tower, base, x)

    p0, p1, p2, p3, p4 = (found.psi[name] for name in pf.NAMES)
    frame_i = f.sum([f.mul(p0, p4), f.scale(f.mul(p1, p3), -4), f.scale(f.mul(p2, p2), 3)])
    rows = [[p4, p3, p2], [p3, p2, p1], [p2, p1, p0]]
    frame_j = determinant(f, rows)
    mb = [pf.conjugate(found.tower, x) for x in found.m]
    det = determinant(f, [found.l, found.n, found.m, mb])
    for frame_value, (x, y) in ((frame_i, invariant_i), (frame_j, invariant_j)):
        expected = f.sub(carried(x), f.scale(f.div(carried(y), det), pf.ORIENTATION))
        if not f.equal(frame_value, expected):
            return False
    return True


def readable(expr: sympy.Expr, spacetime: Spacetime, factor: bool = True) -> sympy.Expr:
    """|u| written ±u where u keeps one sign on the sampled domain, and (``factor``) small
    expressions factored over Q(i) (so Kerr's Ψ2 reads −M/(r − i a cos θ)³). Tetrad
    components are not factored: their square roots make the factoring slow for little."""
    points = entry_points(spacetime, 6)
    for atom in expr.atoms(sympy.Abs):
        signs = {sign_at(atom.args[0], p, spacetime) for p in points}
        if signs in ({1}, {-1}):
            expr = expr.xreplace({atom: signs.pop() * atom.args[0]})
    if factor and expr.has(sympy.I) and sympy.count_ops(expr) <= DISPLAY_FACTOR_LIMIT and \
            len(expr.free_symbols) <= DISPLAY_FACTOR_SYMBOLS:
        try:
            factored = gaussian_factored(expr)
        except (sympy.PolynomialError, NotImplementedError, ValueError, TypeError):
            return expr
        if sympy.count_ops(factored) < sympy.count_ops(expr):
            return factored
    return expr


def gaussian_factored(expr: sympy.Expr) -> sympy.Expr:
    """``sympy.factor(expr, domain=QQ_I)``, the same factors, found with less work: the
    numerator is first divided by the denominator's factors as often as they go in, so
    SymPy factors what is left (Kerr–Newman's Ψ2: a cubic of five symbols becomes a linear
    one). Factoring in Q(i) goes through norms of twice the degree, so the saving is large.

    Why the result is SymPy's: over a field, a polynomial is a unit times a product of
    normalised irreducible factors in one way only; the factors divided out are SymPy's own
    normalised factors of the denominator, so the numerator's factor list is theirs plus
    those of the quotient, with the same unit. (The Gaussian rationals QQ_I: SymPy factors
    them through Q(i) itself, as with extension=I, reading coefficients directly.)"""
    numerator, denominator = sympy.fraction(sympy.together(expr))
    domain = sympy.QQ_I
    if not numerator.free_symbols or not denominator.free_symbols:
        return sympy.factor(expr, domain=domain)  # nothing to divide out
    unit_d, below = sympy.factor_list(denominator, domain=domain)
    polys, _ = sympy.parallel_poly_from_expr([numerator, *(f for f, _ in below)],
                                             domain=domain)
    rest, divisors = polys[0], polys[1:]
    exponents = {}
    for (factor, power), divisor in zip(below, divisors, strict=True):
        taken = 0
        while taken < power and not rest.is_zero:
            quotient, remainder = rest.div(divisor)
            if not remainder.is_zero:
                break
            rest, taken = quotient, taken + 1
        exponents[factor] = taken - power
    unit_n, above = factor_list_over(rest.as_expr(), domain)
    for factor, power in above:
        exponents[factor] = exponents.get(factor, 0) + power
    product = sympy.Mul(*(f**e for f, e in exponents.items() if e))
    return sympy.Mul(unit_n / unit_d, product)


def factor_list_over(expr: sympy.Expr, domain: sympy.polys.domains.Domain
                     ) -> tuple[sympy.Expr, list[tuple[sympy.Expr, int]]]:
    """``sympy.factor_list(expr, domain=domain)`` for a polynomial over a field, without the
    factoring when ``expr`` is visibly irreducible: of degree one in some variable x, as
    A·x + B with gcd(A, B) = 1 (a primitive polynomial of degree one over the ring of the
    other variables, irreducible by Gauss's lemma). SymPy's answer for an irreducible
    polynomial over a field is (leading coefficient, [(monic polynomial, 1)]); that is
    returned. Kerr–Newman's Ψ2 leaves such a quotient: 40 ms of factoring over Q(i), 2 ms
    of gcd."""
    if expr.is_number:
        return sympy.factor_list(expr, domain=domain)
    poly = sympy.Poly(expr, domain=domain)
    if poly.is_ground or not visibly_irreducible(poly):
        return sympy.factor_list(expr, domain=domain)
    return poly.LC(), [(poly.monic().as_expr(), 1)]


def visibly_irreducible(poly: sympy.Poly) -> bool:
    """True when some variable x occurs to degree one only and poly = A·x + B with
    gcd(A, B) = 1 (or poly = c·x): then poly is irreducible. False means only "not seen to
    be irreducible" — the caller factors it."""
    for k in range(len(poly.gens)):
        if poly.degree(poly.gens[k]) != 1:
            continue
        slope = {(*m[:k], 0, *m[k + 1:]): c for m, c in poly.terms() if m[k] == 1}
        offset = {m: c for m, c in poly.terms() if m[k] == 0}
        if not offset:
            return not any(any(m) for m in slope)  # c·x alone
        a = sympy.Poly.from_dict(slope, *poly.gens, domain=poly.domain)
        b = sympy.Poly.from_dict(offset, *poly.gens, domain=poly.domain)
        if a.gcd(b).is_ground:
            return True
    return False
