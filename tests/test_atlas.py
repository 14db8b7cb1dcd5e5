"""Charts of one spacetime across entries: verified maps read both ways, chains followed (the
site's atlas), and declared links grouped the same way (the duplicate search's guard).

The graph logic is common practice (a verified map between two charts is a local isometry;
compositions of local isometries are local isometries, so connected charts describe one
spacetime locally). The entries here are small stand-ins with invented ids: only ids, charts,
related maps and their verdicts matter to the atlas. The shipped catalog's Schwarzschild
charts are checked at the end (their maps are the textbook ones, e.g. C. W. Misner, K. S.
Thorne and J. A. Wheeler, "Gravitation", 1973, §31.4 for Kruskal–Szekeres, from memory).
"""

from __future__ import annotations

import shutil
from pathlib import Path
from types import SimpleNamespace

import pytest

from generator.entry.catalog import Outline, chart_groups, outline_links
from generator.model import MathText, RelatedChart, SourcePos, Verdict
from generator.site.atlas import MAPS_HERE, THROUGH, ChartLink, chart_links

HERE = SourcePos("catalog/x.yaml", 1, 1)


def report(entry_id: str, *maps: tuple[str, bool, str], published: bool = True):
    """A stand-in report: ``maps`` are (target id, verified?, method)."""
    related = tuple(RelatedChart(target, (("u", MathText(f"u_{target}", HERE)),), HERE)
                    for target, _, _ in maps)
    verdicts = tuple(Verdict(f"related.{k}", ok, method, "", target)
                     for k, (target, ok, method) in enumerate(maps))
    entry = SimpleNamespace(id=entry_id, chart=f"chart of {entry_id}", related=related)
    return SimpleNamespace(entry=entry, ok=published,
                           classification=SimpleNamespace(related_checked=verdicts))


def ids(links: tuple[ChartLink, ...]) -> list[tuple[str, str, tuple[str, ...]]]:
    return [(link.entry, link.kind, link.route) for link in links]


def test_a_map_shows_on_the_page_it_points_to() -> None:
    links = chart_links([report("a", ("b", True, "exact")), report("b")])
    assert links["a"] == ()  # a writes the map itself: its page shows it already
    (back,) = links["b"]
    assert (back.entry, back.kind, back.method) == ("a", MAPS_HERE, "exact")
    assert back.map == (("u", "u_b"),) and back.chart == "chart of a"


def test_charts_mapped_onto_one_entry_are_joined_through_it() -> None:
    links = chart_links([report("hub"), report("left", ("hub", True, "exact")),
                         report("right", ("hub", True, "sampled"))])
    assert ids(links["left"]) == [("right", THROUGH, ("hub",))]
    assert ids(links["right"]) == [("left", THROUGH, ("hub",))]
    assert ids(links["hub"]) == [("left", MAPS_HERE, ()), ("right", MAPS_HERE, ())]


def test_a_long_chain_names_every_entry_in_between_from_this_side() -> None:
    links = chart_links([report("a", ("b", True, "exact")), report("b", ("c", True, "exact")),
                         report("c", ("d", True, "exact")), report("d")])
    assert ids(links["d"]) == [("a", THROUGH, ("c", "b")), ("b", THROUGH, ("c",)),
                               ("c", MAPS_HERE, ())]
    assert ids(links["a"]) == [("c", THROUGH, ("b",)), ("d", THROUGH, ("b", "c"))]


def test_the_shortest_chain_is_shown_and_ties_go_to_the_first_id() -> None:
    # a–b–d and a–c–d are both two steps; a–b–c–d is longer
    links = chart_links([report("a", ("b", True, "exact"), ("c", True, "exact")),
                         report("b", ("d", True, "exact"), ("c", True, "exact")),
                         report("c", ("d", True, "exact")), report("d")])
    assert ids(links["a"]) == [("d", THROUGH, ("b",))]


def test_failed_or_unpublished_maps_join_nothing() -> None:
    links = chart_links([report("a", ("b", False, "exact"), ("gone", True, "exact")),
                         report("b", ("c", True, "exact")), report("c")])
    assert links["a"] == ()
    assert ids(links["b"]) == [] and ids(links["c"]) == [("b", MAPS_HERE, ())]


def test_maps_written_both_ways_are_not_repeated() -> None:
    links = chart_links([report("a", ("b", True, "exact")), report("b", ("a", True, "exact"))])
    assert links == {"a": (), "b": ()}


def test_separate_spacetimes_stay_apart() -> None:
    links = chart_links([report("a", ("b", True, "exact")), report("b"),
                         report("c", ("d", True, "exact")), report("d")])
    assert {link.entry for link in links["a"] + links["b"]} <= {"a", "b"}
    assert {link.entry for link in links["c"] + links["d"]} <= {"c", "d"}


@pytest.mark.slow
def test_every_shipped_schwarzschild_chart_reaches_every_other(tmp_path: Path) -> None:
    from generator.run.pipeline import RunOptions, check_files

    # The five shipped files in a catalog of their own: with no cache, the duplicate search
    # would otherwise check every other shipped entry from scratch (minutes) to compare them.
    shipped = Path(__file__).resolve().parents[1] / "catalog"
    catalog = tmp_path / "catalog"
    (catalog / "isolated-objects").mkdir(parents=True)
    for name in ("families.yaml", "tags.yaml"):
        shutil.copy(shipped / name, catalog / name)
    charts = ["schwarzschild", "schwarzschild-ingoing-eddington-finkelstein",
              "schwarzschild-isotropic", "schwarzschild-kruskal-szekeres",
              "schwarzschild-painleve-gullstrand"]
    for name in [*charts, "backgrounds/minkowski-spherical"]:  # the limit M → 0
        source = shipped / (name if "/" in name else f"isolated-objects/{name}")
        target = catalog / (name if "/" in name else f"isolated-objects/{name}")
        target.parent.mkdir(exist_ok=True)
        shutil.copy(source.with_suffix(".yaml"), target.with_suffix(".yaml"))
    files = [catalog / "isolated-objects" / f"{name}.yaml" for name in charts]
    reports = check_files(files, catalog, tmp_path, RunOptions(jobs=1, cache_dir=None))
    assert all(r.ok for r in reports), [d.format_text() for r in reports for d in r.diagnostics]
    # checked together, the five are not warned as duplicates of one another: their related
    # links join them (this search is the one a pull request with several charts runs)
    assert [d.message for r in reports for d in r.diagnostics
            if d.code == "entry.duplicate"] == []
    links = chart_links(reports)
    # the four other charts each map onto the Schwarzschild chart itself
    assert ids(links["schwarzschild"]) == [(name, MAPS_HERE, ()) for name in charts[1:]]
    for name in charts[1:]:
        assert ids(links[name]) == [(other, THROUGH, ("schwarzschild",))
                                    for other in charts[1:] if other != name]


def outline(entry_id: str, *targets: str) -> Outline:
    return Outline(f"catalog/x/{entry_id}.yaml", entry_id, HERE,
                   tuple((target, HERE) for target in targets))


def test_declared_links_group_charts_through_chains_in_either_direction() -> None:
    groups = chart_groups(outline_links([
        outline("kruskal", "schw"), outline("schw"), outline("isotropic", "schw"),
        outline("rn"), outline("ds-static", "ds-flat"), outline("ds-flat", "ds-global"),
        outline("ds-global"), Outline("catalog/x/unreadable.yaml", None, HERE, ())]))
    assert groups == {"ds-flat": "ds-flat", "ds-global": "ds-flat", "ds-static": "ds-flat",
                      "isotropic": "isotropic", "kruskal": "isotropic", "rn": "rn",
                      "schw": "isotropic"}


def test_an_entry_view_sees_only_the_entries_it_is_joined_to() -> None:
    """What a page shows of the rest of the catalog is part of its kept view's key: adding an
    unrelated entry must leave every other view's surroundings as they were; publishing an
    entry that this one maps to, or one that maps onto it, changes them."""
    from generator.site.entry_page import surroundings

    base = [report("a", ("b", True, "exact"), ("c", True, "exact")), report("b")]
    before = surroundings(base)
    assert before["a"].published_links == ("b",)  # c is not published
    assert surroundings([*base, report("unrelated")])["a"] == before["a"]
    assert surroundings([*base, report("c")])["a"].published_links == ("b", "c")
    assert surroundings([*base, report("d", ("b", True, "exact"))])["b"] != before["b"]
