"""Which published entries are charts of one spacetime (a render-stage helper).

A ``related`` map is written, and verified, in one entry only: the isotropic Schwarzschild
entry maps onto the Schwarzschild entry, not the other way round. A reader of either page
should still find both, and a reader of the Schwarzschild page every chart joined to it
through a chain of verified maps (Kruskal–Szekeres → Schwarzschild ← Painlevé–Gullstrand).
Each verified map is a local isometry, and a composition of local isometries is one, so the
charts of one connected set describe the same spacetime locally (possibly different regions).

Only maps whose check passed and whose both ends are published count.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from generator.model import EntryReport, related_subject

MAPS_HERE = "maps-here"  # the other entry gives a map onto this one
THROUGH = "through"  # joined to this one by a chain of maps only


@dataclass(frozen=True)
class ChartLink:
    """Another published chart of this entry's spacetime that this entry's own ``related``
    list does not name."""

    entry: str
    chart: str  # how that entry describes its chart
    kind: str  # MAPS_HERE or THROUGH
    route: tuple[str, ...]  # for THROUGH: the entries in between, from this entry's side
    map: tuple[tuple[str, str], ...]  # for MAPS_HERE: its coordinates as functions of ours
    method: str  # for MAPS_HERE: how that map was verified ("exact" or "sampled")


@dataclass(frozen=True)
class _Map:
    owner: str  # the entry that writes the map (its coordinates as functions of target's)
    target: str
    map: tuple[tuple[str, str], ...]
    method: str


def verified_maps(published: Sequence[EntryReport]) -> list[_Map]:
    """The related maps of published entries that passed their check and reach a published
    entry, in catalog order."""
    ids = {r.entry.id for r in published if r.entry is not None}
    found = []
    for report in published:
        entry, classification = report.entry, report.classification
        if entry is None or classification is None:
            continue
        verdicts = {v.subject: v for v in classification.related_checked}
        for k, link in enumerate(entry.related):
            verdict = verdicts.get(related_subject(k))
            if verdict is not None and verdict.ok and link.entry in ids and link.kind == "chart":
                found.append(_Map(entry.id, link.entry,
                                  tuple((name, value.text) for name, value in link.map),
                                  verdict.method))
    return found


def chart_links(published: Sequence[EntryReport]) -> dict[str, tuple[ChartLink, ...]]:
    """For every published entry, the other charts of its spacetime its page should add to
    the maps it writes itself: maps written onto it by other entries, then the charts
    reached only through chains (shortest chain, ties broken by entry id), sorted by id."""
    charts = {r.entry.id: r.entry.chart for r in published if r.entry is not None}
    maps = verified_maps(published)
    neighbours: dict[str, set[str]] = {entry_id: set() for entry_id in charts}
    for m in maps:
        neighbours[m.owner].add(m.target)
        neighbours[m.target].add(m.owner)
    written = {(m.owner, m.target) for m in maps}
    onto = {(m.target, m.owner): m for m in maps}  # (this entry, the entry mapping onto it)
    links = {}
    for entry_id in charts:
        rows = []
        for other, route in sorted(_shortest_routes(entry_id, neighbours).items()):
            if (entry_id, other) in written:
                continue  # on the page already, with its own map
            if not route and (entry_id, other) in onto:
                m = onto[entry_id, other]
                rows.append(ChartLink(other, charts[other], MAPS_HERE, (), m.map, m.method))
            else:
                rows.append(ChartLink(other, charts[other], THROUGH, route, (), ""))
        links[entry_id] = tuple(rows)
    return links


def _shortest_routes(start: str, neighbours: dict[str, set[str]]) -> dict[str, tuple[str, ...]]:
    """Every entry joined to ``start``, with the entries strictly between them on a shortest
    chain (breadth first, neighbours in id order, so the choice is deterministic)."""
    routes: dict[str, tuple[str, ...]] = {start: ()}
    frontier = [start]
    while frontier:
        following = []
        for here in frontier:
            for there in sorted(neighbours[here]):
                if there not in routes:
                    routes[there] = routes[here] + ((here,) if here != start else ())
                    following.append(there)
        frontier = following
    del routes[start]
    return routes
