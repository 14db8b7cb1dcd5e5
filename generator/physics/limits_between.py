"""Limits between entries: a ``related`` link of kind ``limit``.

``related: [{entry: schwarzschild, kind: limit, limit: {a: 0}}]`` in the Kerr entry claims that
Kerr's metric with a → 0 is Schwarzschild's metric. The check: each component's limit (plain
substitution where it is defined, SymPy's one-sided limit where substitution gives 0/0 or ∞),
then the optional ``map`` pulled back exactly as for linked charts (none: the same coordinate
names), then every component compared with the other entry's metric through ``equality`` at
the other entry's points. A limit is never assumed to hold where it was not decided.
"""

from __future__ import annotations

from collections.abc import Mapping

import sympy

from generator.entry.mathparse import parse_math
from generator.errors import Diagnostic, MathSyntaxError
from generator.geometry.exactvalues import coordinate_names
from generator.model import Entry, RelatedChart, Spacetime, Verdict, related_subject
from generator.physics.symmetry import (
    Unreadable,
    compare_metrics,
    map_symbols,
    parameter_renaming,
    parse_components,
    pull_back,
)


def limit_values(entry: Entry, spacetime: Spacetime, link: RelatedChart
                 ) -> dict[sympy.Symbol, sympy.Expr]:
    """Parameter → the value it tends to; unknown names are an error at the link."""
    by_name = {str(p): p for p in spacetime.parameters}
    out = {}
    for name, text in link.limit:
        if name not in by_name:
            raise Unreadable(Diagnostic.at(link.pos, "error", f"'{name}' in the limit is not a "
                                           "parameter of this entry", "related.limit",
                                           f"use parameter names: {', '.join(by_name)}"))
        try:
            out[by_name[name]] = parse_math(text, spacetime.symbols)
        except MathSyntaxError as exc:
            raise Unreadable(Diagnostic.at(text.pos_at(exc.offset), "error", exc.message,
                                           "math.syntax", exc.hint)) from exc
    return out


def metric_in_limit(metric: sympy.Matrix, values: Mapping[sympy.Symbol, sympy.Expr]
                    ) -> sympy.Matrix:
    def component(expr: sympy.Expr) -> sympy.Expr:
        # Substituted as written (Kerr–Newman at Q = 0): the comparison that follows decides
        # equality in the exact field, which normalises anyway, so nothing is cancelled here.
        # Where the written form is singular at the limit (0/0), the cancelled one is
        # substituted instead, and a limit taken where that is singular too.
        direct = expr
        for symbol, target in values.items():  # in turn, as below
            direct = direct.xreplace({symbol: target})
        if not direct.has(sympy.zoo, sympy.nan, sympy.oo, -sympy.oo):
            return direct
        value = sympy.cancel(expr)
        for symbol, target in values.items():
            substituted = sympy.cancel(value.xreplace({symbol: target}))
            if substituted.has(sympy.zoo, sympy.nan, sympy.oo, -sympy.oo):
                substituted = sympy.limit(value, symbol, target)
            value = substituted
        return value

    return metric.applyfunc(component)


def check_limit(entry: Entry, spacetime: Spacetime, index: int, link: RelatedChart,
                other_entry: Entry, other: Spacetime) -> tuple[Verdict, Diagnostic | None]:
    subject = related_subject(index)
    names = coordinate_names(spacetime)
    other_names = coordinate_names(other)
    shown = ", ".join(f"{k} → {v.text}" for k, v in link.limit)
    if not link.limit:
        why = "a limit link names at least one parameter and its limit"
        return (Verdict(subject, False, "failed", why, other_entry.id),
                Diagnostic.at(link.pos, "error", f"limit to '{other_entry.id}': {why}",
                              "related.limit", "add e.g. limit: {a: 0}"))
    if len(names) != len(other_names) or (not link.map and names != other_names):
        why = ("dimensions differ" if len(names) != len(other_names) else
               "coordinate names differ; give a map")
        return (Verdict(subject, False, "failed", why, other_entry.id),
                Diagnostic.at(link.pos, "error", f"limit to '{other_entry.id}': {why}",
                              "related.limit", "give this entry's coordinates as functions "
                              f"of {', '.join(other_names)} under 'map'"))
    template = Diagnostic.at(link.pos, "error", "", "related.map")
    try:
        values = limit_values(entry, spacetime, link)
        if link.map:
            images = parse_components(link.map, names, map_symbols(spacetime, other), template)
        else:
            images = [other.coordinates[i] for i in range(len(names))]
    except Unreadable as exc:
        return Verdict(subject, False, "failed", exc.diagnostic.message, other_entry.id), \
            exc.diagnostic
    limited = metric_in_limit(spacetime.metric, values)
    pulled = pull_back(limited, spacetime.coordinates, images, other.coordinates,
                       parameter_renaming(spacetime, other))
    verdict, problem = compare_metrics(entry, subject, link, other_entry, other, pulled,
                                       other_names)
    detail = f"limit {shown}: " + verdict.detail
    return Verdict(verdict.subject, verdict.ok, verdict.method, detail, verdict.claimed,
                   verdict.computed), problem


def check_all_limits(entry: Entry, spacetime: Spacetime,
                     related: Mapping[str, tuple[Entry, Spacetime]]
                     ) -> tuple[list[Verdict], list[Diagnostic]]:
    verdicts, diagnostics = [], []
    for index, link in enumerate(entry.related):
        if link.kind != "limit" or link.entry not in related:
            continue
        other_entry, other = related[link.entry]
        verdict, problem = check_limit(entry, spacetime, index, link, other_entry, other)
        verdicts.append(verdict)
        if problem:
            diagnostics.append(problem)
    return verdicts, diagnostics
