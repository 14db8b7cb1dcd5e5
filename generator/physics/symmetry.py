"""Classify & verify (4/4): claimed Killing vectors, linked charts, and geodesic equations.

Killing vectors are checked with L_ξ g_ab = ξ^c ∂_c g_ab + g_cb ∂_a ξ^c + g_ac ∂_b ξ^c = 0.
A linked chart is checked by pulling this entry's metric back through the declared map
x^a = X^a(y) (g'_ij = g_ab(X(y)) ∂_i X^a ∂_j X^b) and comparing each component with the other
entry's metric at the other entry's points. Every comparison goes through ``equality``.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence

import sympy

from generator.entry.mathparse import parse_math
from generator.errors import Diagnostic, MathSyntaxError
from generator.geometry import decisions
from generator.geometry.decisions import weakest
from generator.geometry.equality import decide_equal
from generator.geometry.exactvalues import coordinate_names, index_label, vanish_each
from generator.model import (
    Decision,
    Entry,
    Geometry,
    MathText,
    RelatedChart,
    Spacetime,
    VectorClaim,
    Verdict,
    related_subject,
)


class Unreadable(Exception):
    def __init__(self, diagnostic: Diagnostic) -> None:
        super().__init__(diagnostic.message)
        self.diagnostic = diagnostic


def parse_components(items: Sequence[tuple[str, MathText]], names: Sequence[str],
                     symbols: Mapping[str, sympy.Basic], at: Diagnostic) -> list[sympy.Expr]:
    """Components by coordinate name, in index order; unknown names are an error at ``at``."""
    values = [sympy.Integer(0)] * len(names)
    for name, text in items:
        if name not in names:
            raise Unreadable(Diagnostic(at.file, at.line, at.column, "error",
                                        f"'{name}' is not a coordinate here", at.code,
                                        f"use the coordinate names {', '.join(names)}"))
        try:
            values[names.index(name)] = parse_math(text, symbols)
        except MathSyntaxError as exc:
            raise Unreadable(Diagnostic.at(text.pos_at(exc.offset), "error", exc.message,
                                           "math.syntax", exc.hint)) from exc
    return values


# ---------------------------------------------------------------------------- Killing vectors


def lie_derivative_metric(xi: Sequence[sympy.Expr], metric: sympy.Matrix,
                          coordinates: Sequence[sympy.Symbol]) -> sympy.Matrix:
    """(L_ξ g)_ab. Terms with a zero ξ^c or a constant ξ^c are left out before
    differentiating: the usual claims are coordinate vectors such as ∂_t, and differentiating
    every metric component along every coordinate was most of the check's time."""
    n = len(coordinates)
    moving = [c for c in range(n) if xi[c] != 0]
    varying = [c for c in moving if not xi[c].is_number]

    def component(a: int, b: int) -> sympy.Expr:
        return sympy.Add(
            *(xi[c] * sympy.diff(metric[a, b], coordinates[c]) for c in moving),
            *(metric[c, b] * sympy.diff(xi[c], coordinates[a]) for c in varying),
            *(metric[a, c] * sympy.diff(xi[c], coordinates[b]) for c in varying))

    return sympy.Matrix(n, n, component)


def tally_symmetric(n: int, decide: Callable[[int, int], Decision],
                    label: Callable[[int, int], str]) -> tuple[list[str], list[str], str]:
    """Decide each component a <= b of a symmetric n×n tensor equation: the labels of the
    components that fail and of those left undecided, and the weakest method by which a
    passing component was decided ("exact", "by cases" or "sampled"), so a verdict says how
    it was reached."""
    failing, undecided, method = [], [], "exact"
    for a in range(n):
        for b in range(a, n):
            decision = decide(a, b)
            if decision.equal is False:
                failing.append(label(a, b))
            elif decision.equal is None:
                undecided.append(label(a, b))
            else:
                method = weakest(method, decision.method)
    return failing, undecided, method


def how_shown(method: str, equation: str) -> str:
    """The verdict's statement, worded by how strong the decision was: a sampled identity is
    not stated as proved."""
    if method == "sampled":
        return f"{equation} at every random sample point (not proved)"
    if method == "by cases":
        return f"{equation}, proved case by case on the signs of its arguments"
    return equation


def check_killing_vector(entry: Entry, spacetime: Spacetime, index: int, claim: VectorClaim
                         ) -> tuple[Verdict, Diagnostic | None]:
    subject = f"claims.killing_vectors.{index}"
    names = coordinate_names(spacetime)
    shown = "{" + ", ".join(f"{k}: {v.text}" for k, v in claim.components) + "}"
    template = Diagnostic.at(claim.pos, "error", "", "claim.killing-vector")
    try:
        xi = parse_components(claim.components, names, spacetime.symbols, template)
    except Unreadable as exc:
        return Verdict(subject, False, "failed", exc.diagnostic.message, shown), exc.diagnostic
    lie = lie_derivative_metric(xi, spacetime.metric, spacetime.coordinates)
    n = len(names)
    upper = [(a, b) for a in range(n) for b in range(a, n)]
    decided = dict(zip(upper, vanish_each([lie[a, b] for a, b in upper], spacetime),
                       strict=True))
    failing, undecided, method = tally_symmetric(
        n, lambda a, b: decided[a, b],
        lambda a, b: f"(L_ξ g)_{index_label(names, (a, b))}")
    if not failing and not undecided:
        return Verdict(subject, True, method, how_shown(method, "L_ξ g_ab = 0"), shown,
                       "Killing"), None
    detail = (", ".join(failing) + " ≠ 0") if failing else ""
    if undecided:
        detail += ("; " if detail else "") + "undecided: " + ", ".join(undecided)
    message = (f"claimed Killing vector {shown} fails the Killing equation: {detail}"
               if failing else f"claimed Killing vector {shown} could not be verified: {detail}")
    diagnostic = Diagnostic.at(claim.pos, "error", message, "claim.killing-vector",
                               "components are contravariant (ξ^a); check signs and factors")
    return Verdict(subject, False, "exact" if failing else "failed", detail, shown,
                   "not Killing" if failing else "undecided"), diagnostic


# ---------------------------------------------------------------------------- linked charts


def map_symbols(spacetime: Spacetime, other: Spacetime) -> dict[str, sympy.Basic]:
    """The other entry's coordinates, plus parameters of both (shared names mean the other's)."""
    table = {name: value for name, value in spacetime.symbols.items()
             if value not in spacetime.coordinates and not isinstance(value, sympy.Function)}
    table.update(other.symbols)
    return table


def pull_back(metric: sympy.Matrix, coordinates: Sequence[sympy.Symbol],
              images: Sequence[sympy.Expr], other_coordinates: Sequence[sympy.Symbol],
              renaming: Mapping[sympy.Basic, sympy.Basic]) -> sympy.Matrix:
    """g'_ij(y) = g_ab(X(y)) ∂_i X^a ∂_j X^b."""
    substitution = dict(renaming)
    substitution.update(dict(zip(coordinates, images, strict=True)))
    g = metric.xreplace(substitution)
    jacobian = sympy.Matrix(len(images), len(other_coordinates),
                            lambda a, i: sympy.diff(images[a], other_coordinates[i]))
    return jacobian.T * g * jacobian


def parameter_renaming(spacetime: Spacetime, other: Spacetime) -> dict[sympy.Basic, sympy.Basic]:
    """This entry's parameter symbols onto the other's of the same name (assumptions may
    differ, so the symbols need not be equal)."""
    by_name = {str(p): p for p in other.parameters}
    return {p: by_name[str(p)] for p in spacetime.parameters if str(p) in by_name}


def check_related(entry: Entry, spacetime: Spacetime, index: int, link: RelatedChart,
                  other_entry: Entry, other: Spacetime) -> tuple[Verdict, Diagnostic | None]:
    subject = related_subject(index)
    names = coordinate_names(spacetime)
    other_names = coordinate_names(other)
    template = Diagnostic.at(link.pos, "error", "", "related.map")
    given = {name for name, _ in link.map}
    missing = [c for c in names if c not in given]
    if missing or len(names) != len(other_names):
        why = (f"the map must give every coordinate of this entry ({', '.join(missing)} "
               f"missing)" if missing else f"dimensions differ ({len(names)} here, "
               f"{len(other_names)} in {other_entry.id})")
        return (Verdict(subject, False, "failed", why, other_entry.id),
                Diagnostic.at(link.pos, "error", f"map to '{other_entry.id}': {why}",
                              "related.map", "give this entry's coordinates as functions of "
                              f"{', '.join(other_names)}"))
    try:
        images = parse_components(link.map, names, map_symbols(spacetime, other), template)
    except Unreadable as exc:
        return Verdict(subject, False, "failed", exc.diagnostic.message, other_entry.id), \
            exc.diagnostic
    pulled = pull_back(spacetime.metric, spacetime.coordinates, images, other.coordinates,
                       parameter_renaming(spacetime, other))
    return compare_metrics(entry, subject, link, other_entry, other, pulled, other_names)


def compare_metrics(entry: Entry, subject: str, link: RelatedChart, other_entry: Entry,
                    other: Spacetime, pulled: sympy.Matrix, other_names: Sequence[str]
                    ) -> tuple[Verdict, Diagnostic | None]:
    failing, undecided, method = tally_symmetric(
        len(other_names), lambda i, j: decide_equal(pulled[i, j], other.metric[i, j], other),
        lambda i, j: f"g_{index_label(other_names, (i, j))}")
    if not failing and not undecided:
        return Verdict(subject, True, method, how_shown(method, f"pull-back equals the metric "
                                                        f"of {other_entry.id}"),
                       other_entry.id, "equal"), None
    detail = ", ".join(failing) + " differ" if failing else ""
    if undecided:
        detail += ("; " if detail else "") + "undecided: " + ", ".join(undecided)
    verb = "does not" if failing else "could not be shown to"
    diagnostic = Diagnostic.at(
        link.pos, "error", f"the map to '{other_entry.id}' {verb} carry this metric onto "
        f"its metric: pulled-back {detail}", "related.map",
        f"the map gives THIS entry's coordinates as functions of {other_entry.id}'s "
        f"({', '.join(other_names)})")
    return Verdict(subject, False, "exact" if failing else "failed", detail, other_entry.id,
                   "differs" if failing else "undecided"), diagnostic


def check_all_related(entry: Entry, spacetime: Spacetime,
                      related: Mapping[str, tuple[Entry, Spacetime]]
                      ) -> tuple[list[Verdict], list[Diagnostic]]:
    verdicts, diagnostics = [], []
    for index, link in enumerate(entry.related):
        if link.entry not in related or link.kind == "limit":
            continue  # a missing entry is reported by the catalog stage; limits: limits.py
        other_entry, other = related[link.entry]
        with decisions.subject(related_subject(index)):
            verdict, problem = check_related(entry, spacetime, index, link, other_entry, other)
        verdicts.append(verdict)
        if problem:
            diagnostics.append(problem)
    return verdicts, diagnostics


# ---------------------------------------------------------------------------- geodesics


def geodesic_equations(geometry: Geometry, coordinates: Sequence[sympy.Symbol]
                       ) -> tuple[sympy.Expr, ...]:
    """Left-hand sides d²x^a/ds² + Γ^a_bc ẋ^b ẋ^c, with x^a(s) functions of an affine s."""
    s = sympy.Symbol("s", real=True)
    paths = {x: sympy.Function(str(x), real=True)(s) for x in coordinates}
    velocity = [sympy.diff(paths[x], s) for x in coordinates]
    n = len(coordinates)
    equations = []
    for a in range(n):
        total = sympy.diff(paths[coordinates[a]], s, 2)
        for (upper, b, c), gamma in geometry.christoffel.items():
            if upper == a:
                weight = 1 if b == c else 2
                total += weight * gamma.xreplace(paths) * velocity[b] * velocity[c]
        equations.append(total)
    return tuple(equations)
