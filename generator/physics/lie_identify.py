"""Which real Lie algebra a table of structure constants describes, named only when certain.

Why invariants and not pattern matching: a basis found by the tool is arbitrary, so the name
must follow from data that do not depend on the basis — the dimensions of the derived algebra,
the centre and the radical, the signature of the Killing form B(x, y) = tr(ad x ad y), and, for
a semidirect product with an abelian ideal, the form that the ideal's representation preserves.
Everything is exact (rational arithmetic); a table with free parameters is not named.

What is named, and why the name is then certain (standard facts of Lie theory, common practice;
e.g. Knapp, Lie Groups Beyond an Introduction, 2nd ed. 2002, ch. I and VI, from memory):

* abelian (no brackets): ℝ or ℝᵈ;
* semisimple (B nondegenerate, Cartan's criterion) of dimension ≤ 10: the real semisimple
  algebras of these dimensions are sums of the simple ones of dimension 3 (so(3), sl(2,ℝ)),
  6 (so(3,1)), 8 (su(3), su(2,1), sl(3,ℝ)) and 10 (so(5), so(4,1), so(3,2)), and B has
  signature (dim p, dim k) for a Cartan decomposition g = k ⊕ p, which separates every
  possibility of the same dimension (table ``SEMISIMPLE``);
* a centre that meets the derived algebra only in 0 splits off: g ≅ g/z ⊕ ℝᶜ, and g/z is
  named by the same rules;
* the derived algebra of dimension 1 inside the centre: the Heisenberg algebra of dimension
  d − c + 1 plus ℝᶜ⁻¹;
* an abelian ideal a of dimension m that is its own centraliser, whose representation
  x ↦ ad x|a preserves a nondegenerate symmetric form Q unique up to scale, with
  dim g − m = m(m − 1)/2: then ad g acts on a as all of so(Q), and by Levi's theorem
  g ≅ so(Q) ⋉ ℝ^m = iso(p, q) (the Euclidean algebra iso(m) when Q is definite; iso(3,1) is
  the Poincaré algebra).

Anything else gets no name, only what is known: solvable or nilpotent, the dimensions, and the
Levi factor where that one has a name (``describe``).
"""

from __future__ import annotations

import itertools
from collections.abc import Sequence
from dataclasses import dataclass

import sympy

# (dimension, positive, negative eigenvalues of the Killing form) → the semisimple algebra.
SEMISIMPLE = {
    (3, 0, 3): "so(3)", (3, 2, 1): "sl(2,ℝ)",
    (6, 0, 6): "so(4)", (6, 2, 4): "sl(2,ℝ) ⊕ so(3)", (6, 4, 2): "so(2,2)",
    (6, 3, 3): "so(3,1)",
    (8, 0, 8): "su(3)", (8, 4, 4): "su(2,1)", (8, 5, 3): "sl(3,ℝ)",
    (9, 0, 9): "so(3) ⊕ so(3) ⊕ so(3)", (9, 2, 7): "sl(2,ℝ) ⊕ so(3) ⊕ so(3)",
    (9, 4, 5): "sl(2,ℝ) ⊕ sl(2,ℝ) ⊕ so(3)", (9, 6, 3): "sl(2,ℝ) ⊕ sl(2,ℝ) ⊕ sl(2,ℝ)",
    (10, 0, 10): "so(5)", (10, 4, 6): "so(4,1)", (10, 6, 4): "so(3,2)",
}
MAX_DIMENSION = 10
SUPERSCRIPT = str.maketrans("0123456789", "⁰¹²³⁴⁵⁶⁷⁸⁹")


def power(base: str, exponent: int) -> str:
    """ℝ, ℝ², ℝ³ …: the power written as readers read it (no program syntax on pages)."""
    return base if exponent == 1 else base + str(exponent).translate(SUPERSCRIPT)

Table = list[list[list[sympy.Rational]]]  # c[i][j][k]: [X_i, X_j] = Σ_k c[i][j][k] X_k


@dataclass(frozen=True)
class Identification:
    """``name``: the algebra when certain, else None; ``structure``: what is known, in words
    (always given for a table that could be read)."""

    name: str | None
    structure: str


def table_from_brackets(brackets: Sequence[tuple[int, int, Sequence[sympy.Expr]]], d: int
                        ) -> Table | None:
    """The full antisymmetric table from the nonzero brackets (i < j); None when a constant
    is not a rational number (a free parameter: not named)."""
    c = [[[sympy.Integer(0)] * d for _ in range(d)] for _ in range(d)]
    for i, j, coefficients in brackets:
        for k, value in enumerate(coefficients):
            value = sympy.sympify(value)
            if not value.is_Rational:
                return None
            c[i][j][k], c[j][i][k] = value, -value
    return c


def identify(c: Table) -> Identification:
    d = len(c)
    if d == 0:
        return Identification(None, "trivial")
    derived = _span([c[i][j] for i in range(d) for j in range(i + 1, d)], d)
    if not derived:
        return Identification("ℝ" if d == 1 else f"abelian {power('ℝ', d)}",
                              f"abelian, {d}-dimensional")
    centre = _centre(c)
    if centre and len(centre) < d and _meet_is_zero(centre, derived, d):
        quotient = identify(_quotient(c, centre))
        extra = len(centre)
        name = f"{quotient.name} ⊕ {power('ℝ', extra)}" if quotient.name else None
        return Identification(name, f"{quotient.structure}, plus a centre {power('ℝ', extra)} "
                              "as a direct summand")
    killing = _killing_form(c)
    positive, negative = _inertia(killing)
    if positive + negative == d:
        name = SEMISIMPLE.get((d, positive, negative)) if d <= MAX_DIMENSION else None
        return Identification(name, f"semisimple, {d}-dimensional, Killing form of signature "
                              f"({positive}, {negative})")
    if len(derived) == 1 and _contains(centre, derived, d):
        heisenberg = d - len(centre) + 1
        extra = len(centre) - 1
        name = f"Heisenberg algebra of dimension {heisenberg}" + (
            "" if extra == 0 else f" ⊕ {power('ℝ', extra)}")
        return Identification(name, f"nilpotent, {d}-dimensional")
    name = _inhomogeneous(c, derived, killing)
    return Identification(name, describe(c, derived, killing))


def describe(c: Table, derived: list[list[sympy.Rational]], killing: sympy.Matrix) -> str:
    d = len(c)
    radical = _radical(derived, killing, d)
    if len(radical) == d:
        kind = "nilpotent" if _nilpotent(c) else "solvable"
        return f"{kind}, {d}-dimensional, derived algebra of dimension {len(derived)}"
    levi = identify(_quotient(c, radical))
    levi_text = levi.name or f"of dimension {d - len(radical)}"
    return (f"{d}-dimensional, neither solvable nor semisimple: Levi factor {levi_text}, "
            f"radical of dimension {len(radical)}")


# ---------------------------------------------------------------------- iso(p, q)


def _inhomogeneous(c: Table, derived: list[list[sympy.Rational]], killing: sympy.Matrix
                   ) -> str | None:
    """iso(p, q) by the criterion in the module docstring, tried on the radical and on the
    derived algebra as the candidate translation ideal."""
    d = len(c)
    for ideal in (_radical(derived, killing, d), derived):
        m = len(ideal)
        if m < 2 or d - m != m * (m - 1) // 2 or not _abelian(c, ideal):
            continue
        if len(_centraliser(c, ideal)) != m:
            continue
        forms = _invariant_forms(c, ideal)
        if len(forms) != 1:
            continue
        positive, negative = _inertia(forms[0])
        if positive + negative != m:
            continue
        p, q = max(positive, negative), min(positive, negative)
        if q == 0:
            return f"iso({m})"
        return f"iso({p},{q})" + (" (Poincaré)" if (p, q) == (3, 1) else "")
    return None


def _coordinates_in(ideal: list[list[sympy.Rational]], vector: Sequence[sympy.Rational]
                    ) -> list[sympy.Rational]:
    basis = sympy.Matrix(ideal).T
    solution = basis.solve_least_squares(sympy.Matrix(vector)) if basis.rows != basis.cols \
        else basis.solve(sympy.Matrix(vector))
    return list(solution)


def _ad_on(c: Table, x: Sequence[sympy.Rational], ideal: list[list[sympy.Rational]]
           ) -> sympy.Matrix:
    """The matrix of ad x restricted to the ideal, in the ideal's basis."""
    columns = [_coordinates_in(ideal, _bracket(c, x, y)) for y in ideal]
    return sympy.Matrix(columns).T


def _invariant_forms(c: Table, ideal: list[list[sympy.Rational]]) -> list[sympy.Matrix]:
    """A basis of the symmetric forms Q on the ideal with Q A + Aᵀ Q = 0 for every ad x|ideal."""
    m, d = len(ideal), len(c)
    slots = [(a, b) for a in range(m) for b in range(a, m)]
    unknowns = sympy.symbols(f"q0:{len(slots)}")
    q = sympy.zeros(m, m)
    for s, (a, b) in zip(unknowns, slots, strict=True):
        q[a, b] = q[b, a] = s
    equations = []
    for i in range(d):
        unit = [sympy.Integer(1 if k == i else 0) for k in range(d)]
        a_matrix = _ad_on(c, unit, ideal)
        equations.extend(q * a_matrix + a_matrix.T * q)
    system = sympy.Matrix([[sympy.diff(e, s) for s in unknowns] for e in equations
                           if e != 0]) if any(e != 0 for e in equations) else \
        sympy.zeros(1, len(slots))
    out = []
    for vector in system.nullspace():
        form = sympy.zeros(m, m)
        for value, (a, b) in zip(vector, slots, strict=True):
            form[a, b] = form[b, a] = value
        out.append(form)
    return out


# ---------------------------------------------------------------------- linear algebra


def _bracket(c: Table, x: Sequence[sympy.Rational], y: Sequence[sympy.Rational]
             ) -> list[sympy.Rational]:
    d = len(c)
    return [sum((x[i] * y[j] * c[i][j][k] for i in range(d) for j in range(d)
                 if x[i] != 0 and y[j] != 0), sympy.Integer(0)) for k in range(d)]


def _span(vectors: Sequence[Sequence[sympy.Rational]], d: int) -> list[list[sympy.Rational]]:
    rows = [list(v) for v in vectors if any(e != 0 for e in v)]
    if not rows:
        return []
    reduced, pivots = sympy.Matrix(rows).rref()
    return [list(reduced.row(r)) for r in range(len(pivots))]


def _centre(c: Table) -> list[list[sympy.Rational]]:
    d = len(c)
    system = sympy.Matrix([[c[i][j][k] for i in range(d)] for j in range(d) for k in range(d)])
    return [list(v) for v in system.nullspace()]


def _centraliser(c: Table, ideal: list[list[sympy.Rational]]) -> list[list[sympy.Rational]]:
    d = len(c)
    rows = []
    for y in ideal:
        for k in range(d):
            rows.append([sum((y[j] * c[i][j][k] for j in range(d)), sympy.Integer(0))
                         for i in range(d)])
    return [list(v) for v in sympy.Matrix(rows).nullspace()]


def _abelian(c: Table, ideal: list[list[sympy.Rational]]) -> bool:
    return all(all(e == 0 for e in _bracket(c, x, y)) for x in ideal for y in ideal)


def _meet_is_zero(a: list[list[sympy.Rational]], b: list[list[sympy.Rational]], d: int) -> bool:
    return len(_span([*a, *b], d)) == len(a) + len(b)


def _contains(big: list[list[sympy.Rational]], small: list[list[sympy.Rational]], d: int
              ) -> bool:
    return bool(big) and len(_span([*big, *small], d)) == len(big)


def _killing_form(c: Table) -> sympy.Matrix:
    d = len(c)
    ad = [sympy.Matrix(d, d, lambda k, j, i=i: c[i][j][k]) for i in range(d)]
    return sympy.Matrix(d, d, lambda i, j: (ad[i] * ad[j]).trace())


def _inertia(form: sympy.Matrix) -> tuple[int, int]:
    """Numbers of positive and negative eigenvalues of a rational symmetric matrix, exactly:
    its characteristic polynomial has only real roots, so Descartes' rule of signs counts
    them."""
    lam = sympy.Symbol("lam")
    poly = sympy.Poly(form.charpoly(lam).as_expr(), lam)

    def changes(p: sympy.Poly) -> int:
        signs = [sympy.sign(co) for co in p.all_coeffs() if co != 0]
        return sum(1 for s, t in itertools.pairwise(signs) if s != t)

    mirrored = sympy.Poly(poly.as_expr().subs(lam, -lam), lam)
    return changes(poly), changes(mirrored)


def _radical(derived: list[list[sympy.Rational]], killing: sympy.Matrix, d: int
             ) -> list[list[sympy.Rational]]:
    """The solvable radical: the Killing-orthogonal complement of the derived algebra
    (characteristic 0, common practice)."""
    if not derived:
        return [[sympy.Integer(1 if k == i else 0) for k in range(d)] for i in range(d)]
    system = sympy.Matrix(derived) * killing
    return [list(v) for v in system.nullspace()]


def _nilpotent(c: Table) -> bool:
    d = len(c)
    units = [[sympy.Integer(1 if k == i else 0) for k in range(d)] for i in range(d)]
    current = units
    for _ in range(d + 1):
        current = _span([_bracket(c, x, y) for x in units for y in current], d)
        if not current:
            return True
    return False


def _quotient(c: Table, ideal: list[list[sympy.Rational]]) -> Table:
    """Structure constants of g/ideal in the basis of the unit vectors that complete the
    ideal's basis (their classes)."""
    d = len(c)
    complement: list[int] = []
    span = [list(v) for v in ideal]
    for i in range(d):
        unit = [sympy.Integer(1 if k == i else 0) for k in range(d)]
        if len(_span([*span, unit], d)) > len(span):
            span.append(unit)
            complement.append(i)
    full = sympy.Matrix([*ideal, *[[sympy.Integer(1 if k == i else 0) for k in range(d)]
                                   for i in complement]]).T
    inverse = full.inv()
    m = len(ideal)
    e = len(complement)
    out = [[[sympy.Integer(0)] * e for _ in range(e)] for _ in range(e)]
    for a, i in enumerate(complement):
        for b, j in enumerate(complement):
            coordinates = inverse * sympy.Matrix(c[i][j])
            for k in range(e):
                out[a][b][k] = coordinates[m + k]
    return out
