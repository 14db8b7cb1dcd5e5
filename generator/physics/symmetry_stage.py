"""Classify & verify: the symmetry of an entry as computed, not just as claimed.

Brings together the isometry dimension (``isometry``), the entry's listed Killing vectors
(which of them are verified and independent: the basis shown), claimed Killing tensors and
conformal symmetries (``killing_tensors``), the structure constants of the verified basis
(``lie_algebra``) and the count of functionally independent scalar invariants with Karlhede's
relation. Diagnostics: a warning when the listed vectors do not span the computed algebra, an
error when more independent vectors are listed than the algebra can hold.
"""

from __future__ import annotations

from collections.abc import Sequence

import sympy

from generator.errors import Diagnostic
from generator.geometry.algebra import NotInField
from generator.geometry.exactvalues import coordinate_names
from generator.model import (
    Entry,
    Geometry,
    InvariantCount,
    IsometryAlgebra,
    Spacetime,
    SymmetryResult,
    Verdict,
    WeylFrame,
)
from generator.physics import killing_search, killing_tensors, lie_algebra
from generator.physics.isometry import IsometryDimension, PointData, isometry_dimension
from generator.physics.isometry import matrix_rank as rank_mod_p
from generator.physics.jets import BadPoint
from generator.physics.symmetry import Unreadable, parse_components

# Ways the arithmetic can give up on a strange metric: a reason on the page, never a crash.
COMPUTATION_FAILURES = (ArithmeticError, ValueError, TypeError, NotImplementedError,
                        RecursionError, NotInField, BadPoint)
INVARIANT_NAMES = (("ricci_scalar", "R"), ("kretschmann", "R_abcd R^abcd"),
                   ("ricci_squared", "R_ab R^ab"), ("weyl_squared", "C_abcd C^abcd"))


def symmetry(entry: Entry, spacetime: Spacetime, geometry: Geometry,
             killing_verdicts: Sequence[Verdict], frame: WeylFrame | None = None
             ) -> tuple[SymmetryResult, list[Diagnostic]]:
    """``frame``: the Weyl frame, if any; its invariant I joins the scalar invariants (its
    imaginary part, the parity-odd one, separates Kerr's orbits where the real ones cannot)."""
    names = coordinate_names(spacetime)
    n = len(names)
    vectors = listed_vectors(entry, spacetime, names)
    invariants = [(label, value) for attr, label in INVARIANT_NAMES
                  if (value := getattr(geometry, attr)) is not None and not value.is_number]
    invariants += weyl_invariant_parts(frame)
    extra = [c for _, xi in vectors for c in xi] + [value for _, value in invariants]
    verified_ids = {v.subject for v in killing_verdicts if v.ok}
    slots = [list(range(i * n, (i + 1) * n)) for i, (k, _) in enumerate(vectors)
             if f"claims.killing_vectors.{k}" in verified_ids]
    try:
        computed, points = isometry_dimension(spacetime, extra, slots)
    except COMPUTATION_FAILURES as exc:
        computed, points = IsometryDimension(None, None, 0, "", "the computation failed "
                                             f"({type(exc).__name__}: {exc})"), []
    verified = {v.subject for v in killing_verdicts if v.ok}
    ok_vectors = [(k, xi) for k, xi in vectors if f"claims.killing_vectors.{k}" in verified]
    all_rank = _vector_rank(points, [k for k, _ in vectors], vectors, n)
    basis = _independent(points, ok_vectors, vectors, n)
    search = missing_vectors(spacetime, [xi for _, xi in basis], computed.dimension)
    found = list(search.found) if search else []
    vectors_all = [xi for _, xi in basis] + found
    diagnostics = count_diagnostics(entry, computed, all_rank, len(basis),
                                    bool(entry.claims.killing_vectors), search, names)
    complete = None if computed.dimension is None else len(vectors_all) == computed.dimension
    try:
        structure, algebra_name = lie_algebra.structure(spacetime, vectors_all, bool(complete))
    except COMPUTATION_FAILURES:
        structure, algebra_name = (), None
    known = None
    if complete and (structure or algebra_name):
        try:
            known = lie_algebra.identification(structure, len(vectors_all)).structure
        except COMPUTATION_FAILURES:
            known = None
    algebra = IsometryAlgebra(
        dimension=computed.dimension,
        orbit_dimension=computed.orbit_dimension,
        listed=all_rank,
        basis=tuple(tuple((names[a], xi[a]) for a in range(n) if xi[a] != 0)
                    for xi in vectors_all),
        complete=complete,
        method=computed.method + ("" if computed.points_agree else
                                  "; the two points disagreed, the smaller value is kept"),
        why_null=computed.why_null,
        structure=structure,
        algebra_name=algebra_name,
        algebra_structure=known,
        found=len(found),
        search=search.summary if search else None,
    )
    tensors, problems = killing_tensors.check_all(entry, spacetime, geometry)
    count = invariant_count(points, [label for label, _ in invariants], len(vectors) * n,
                            computed, n)
    diagnostics += problems
    return SymmetryResult(algebra, tuple(tensors), count, frame), diagnostics


def missing_vectors(spacetime: Spacetime, verified: Sequence[Sequence[sympy.Expr]],
                    dimension: int | None) -> killing_search.SearchResult | None:
    """The search for Killing vectors beyond the verified listed ones, run only when they
    fall short of the computed dimension (the search is the costly part of the stage)."""
    if dimension is None or len(verified) >= dimension:
        return None
    if spacetime.functions:
        return killing_search.SearchResult(
            (), False, "not searched: the metric has free functions, and the ansatz holds "
            "no functions of them")
    try:
        return killing_search.search_killing_vectors(spacetime, verified, dimension)
    except COMPUTATION_FAILURES as exc:
        return killing_search.SearchResult((), False, f"the search failed "
                                           f"({type(exc).__name__})")


def weyl_invariant_parts(frame: WeylFrame | None) -> list[tuple[str, sympy.Expr]]:
    """Re I and Im I of the Weyl invariant I = a + i b (as ``weyl_frame`` writes it), where
    they are not constants."""
    if frame is None or frame.invariant_i is None:
        return []
    value = frame.invariant_i
    parts = [("Re I", value.subs(sympy.I, 0)), ("Im I", value.coeff(sympy.I))]
    return [(label, part) for label, part in parts if part != 0 and not part.is_number]


def listed_vectors(entry: Entry, spacetime: Spacetime, names: Sequence[str]
                   ) -> list[tuple[int, list[sympy.Expr]]]:
    """The entry's Killing vectors that parse (the others are reported by their own check)."""
    out = []
    for k, claim in enumerate(entry.claims.killing_vectors):
        template = Diagnostic.at(claim.pos, "error", "", "claim.killing-vector")
        try:
            out.append((k, parse_components(claim.components, names, spacetime.symbols,
                                            template)))
        except Unreadable:
            continue
    return out


def _rows(point: PointData, positions: Sequence[int], n: int) -> list[list[int]]:
    """Each vector's 1-jet (values and first derivatives of its components) as one row; a
    Killing vector is determined by its 1-jet, so their rank is the number of independent
    vectors (modulo p it can only come out lower)."""
    return [[v for a in range(n) for v in point.one_jets[pos * n + a]] for pos in positions]


def _vector_rank(points: Sequence[PointData], which: Sequence[int],
                 vectors: Sequence[tuple[int, list[sympy.Expr]]], n: int) -> int:
    position = {k: i for i, (k, _) in enumerate(vectors)}
    if not points:
        return 0
    return max(rank_mod_p(_rows(p, [position[k] for k in which], n), p.p) for p in points)


def _independent(points: Sequence[PointData], candidates: Sequence[tuple[int, list]],
                 vectors: Sequence[tuple[int, list[sympy.Expr]]], n: int
                 ) -> list[tuple[int, list[sympy.Expr]]]:
    """A maximal independent subset, in the entry's order."""
    chosen: list[tuple[int, list[sympy.Expr]]] = []
    for item in candidates:
        trial = [k for k, _ in chosen] + [item[0]]
        if not points or _vector_rank(points, trial, vectors, n) == len(trial):
            chosen.append(item)
    return chosen


def count_diagnostics(entry: Entry, computed: IsometryDimension, listed: int, verified: int,
                      has_list: bool, search: killing_search.SearchResult | None = None,
                      names: Sequence[str] = ()) -> list[Diagnostic]:
    """An entry that lists Killing vectors is told when the list falls short of the algebra
    (a warning) or exceeds it (an error). One that lists none gets no message: its page and
    report still give the dimension, with no basis and ``complete`` false."""
    d = computed.dimension
    if d is None:
        return []
    at = entry.pos("claims.killing_vectors")
    if listed > d:
        return [Diagnostic.at(at, "error", f"the entry lists {listed} independent Killing "
                              f"vectors but its isometry algebra has dimension {d}",
                              "claim.killing-vectors",
                              "one of them is not a Killing vector or the metric is not the "
                              "one intended")]
    if verified < d and has_list:
        missing = d - verified
        message = (f"the isometry algebra has dimension {d} but the entry lists {verified} "
                   f"independent verified Killing vector{'s' if verified != 1 else ''} "
                   f"({missing} missing)")
        hint = "add the missing Killing vectors under claims.killing_vectors"
        if search is not None:
            found = len(search.found)
            message += (f"; the tool found {found} of them, so its basis is complete"
                        if search.complete else
                        f"; the tool found {found} of them and the list is still incomplete "
                        f"(the rest are not in the searched ansatz)" if found else
                        "; the tool's search found none of them")
            if found:
                hint += ", e.g. the ones the tool found (verified): " + "; ".join(
                    as_claim(xi, names) for xi in search.found)
        return [Diagnostic.at(at, "warning", message, "symmetry.incomplete", hint)]
    return []


def as_claim(xi: Sequence[sympy.Expr], names: Sequence[str]) -> str:
    """A vector the way an entry lists it, e.g. {t: r*cos(theta), r: t*cos(theta)}."""
    return "{" + ", ".join(f"{name}: {sympy.sstr(value)}"
                           for name, value in zip(names, xi, strict=True) if value != 0) + "}"


def invariant_count(points: Sequence[PointData], labels: Sequence[str], offset: int,
                    computed: IsometryDimension, n: int) -> InvariantCount:
    """Rank of the Jacobian of the scalar invariants (functional independence), and
    Karlhede's relation: isometry dimension = isotropy dimension + n − t, i.e. the orbits have
    dimension n − t, with t the number of functionally independent invariants of all orders.
    The invariants used here are a subset, so their count is a lower bound on t."""
    if not points:
        return InvariantCount(None, tuple(labels), "", None, "no sample point was usable")
    count = max(rank_mod_p([list(p.one_jets[offset + i][1:]) for i in range(len(labels))],
                           p.p) for p in points) if labels else 0
    orbit = computed.orbit_dimension
    if orbit is None:
        return InvariantCount(count, tuple(labels), "", None,
                              None if computed.why_null is None else
                              "Karlhede's relation needs the orbit dimension: "
                              + computed.why_null)
    expected = n - orbit
    relation = (f"Karlhede: t = n − orbit dimension = {n} − {orbit} = {expected} "
                f"(isometry {computed.dimension} = isotropy "
                f"{computed.dimension - orbit} + {orbit}); "
                f"{count} of the scalar invariants used are independent")
    consistent = True if count == expected else (False if count > expected else None)
    if consistent is None:
        relation += (f"; the remaining {expected - count} need differential invariants "
                     "beyond those computed")
    return InvariantCount(count, tuple(labels), relation, consistent)
