"""Duplicate detection (generator/physics/twins.py) on hand-built reports.

Published metrics used (standard forms, common practice; from memory):
- Schwarzschild in Schwarzschild, isotropic and ingoing Eddington–Finkelstein coordinates
  (e.g. C. W. Misner, K. S. Thorne, J. A. Wheeler, "Gravitation", 1973, §31.2 and ex. 31.7;
  isotropic form g = -((1 - m/2ρ)/(1 + m/2ρ))² dt² + (1 + m/2ρ)⁴ (dρ² + ρ² dΩ²)).
- Reissner–Nordström, f = 1 - 2M/r + Q²/r² (G = c = 1, Gaussian units).
- de Sitter in static coordinates (f = 1 - r²/ℓ², R = 12/ℓ²) and in the flat slicing
  (-dt² + e^{2Ht} dx², R = 12 H²): the same space with ℓ = 1/H.
The classifications (matter kind, Petrov type) are stated by hand, as known facts of the trade.
The two "lantern" metrics are a demo pair of our own: same fingerprint, different spacetimes.
"""

from __future__ import annotations

from dataclasses import replace

import pytest
import sympy as sp
from _entry_builders import schwarzschild

from generator.geometry.curvature import compute_geometry
from generator.model import Classification, EntryReport, RelatedChart, Spacetime
from generator.physics.twins import (
    find_all_twins,
    find_twins,
    fingerprint,
    search_twins,
    twin_card,
    twin_diagnostics,
    worth_comparing,
)

t, r, th, ph, rho, v, x, y, z = sp.symbols("t r theta phi rho v x y z", real=True)
M, m, ell, H = sp.symbols("M m ell H", positive=True)
Q, c = sp.symbols("Q c", real=True)
ANGLES = [th > 0, th < sp.pi]


def spacetime(
    coords: list, params: list, metric: sp.Matrix, domain: list, signature: str = "-+++"
) -> Spacetime:
    return Spacetime(
        tuple(coords), tuple(params), (), sp.ImmutableMatrix(metric), signature, 1, tuple(domain)
    )


def report(
    entry_id: str, s: Spacetime, kind: str, petrov: str | None = "D", lam: sp.Expr | None = None
) -> EntryReport:
    classification = Classification(kind, lam, None, None, None, None, (), petrov, None, (), (), ())
    entry = schwarzschild(id=entry_id)
    return EntryReport(entry, entry.file, s, compute_geometry(s), classification, (), ())


def static_spherical(f: sp.Expr, params: list, domain: list) -> Spacetime:
    return spacetime(
        [t, r, th, ph], params, sp.diag(-f, 1 / f, r**2, r**2 * sp.sin(th) ** 2), domain
    )


@pytest.fixture(scope="module")
def schwarzschild_charts() -> dict[str, EntryReport]:
    f = 1 - 2 * M / r
    a, b = (1 - m / (2 * rho)) / (1 + m / (2 * rho)), (1 + m / (2 * rho)) ** 4
    ef = sp.Matrix(
        [[-f, 1, 0, 0], [1, 0, 0, 0], [0, 0, r**2, 0], [0, 0, 0, r**2 * sp.sin(th) ** 2]]
    )
    g = 1 - 2 * M / r + Q**2 / r**2
    return {
        "schwarzschild": report(
            "schwarzschild", static_spherical(f, [M], [r > 2 * M, *ANGLES]), "vacuum"
        ),
        "isotropic": report(
            "schwarzschild-isotropic",
            spacetime(
                [t, rho, th, ph],
                [m],
                sp.diag(-(a**2), b, b * rho**2, b * rho**2 * sp.sin(th) ** 2),
                [rho > m / 2, *ANGLES],
            ),
            "vacuum",
        ),
        "eddington": report(
            "schwarzschild-ef", spacetime([v, r, th, ph], [M], ef, [r > 2 * M, *ANGLES]), "vacuum"
        ),
        "reissner": report(
            "reissner-nordstrom",
            static_spherical(g, [M, Q], [r > 2 * M, Q**2 < M**2, *ANGLES]),
            "electrovacuum",
        ),
    }


@pytest.mark.slow
def test_two_charts_of_schwarzschild_are_flagged(schwarzschild_charts) -> None:
    new = schwarzschild_charts["isotropic"]
    others = list(schwarzschild_charts.values())
    found = dict(find_twins(new, others))
    assert set(found) == {"schwarzschild", "schwarzschild-ef"}
    assert found["schwarzschild"].startswith(
        "same kind (4D, vacuum, Petrov D, 1 independent invariant)"
    )
    assert "kretschmann" in found["schwarzschild"]


@pytest.mark.slow
def test_schwarzschild_and_reissner_nordstrom_are_not_twins(schwarzschild_charts) -> None:
    new = schwarzschild_charts["schwarzschild"]
    assert "reissner-nordstrom" not in dict(find_twins(new, list(schwarzschild_charts.values())))
    assert find_twins(schwarzschild_charts["reissner"], list(schwarzschild_charts.values())) == []


@pytest.mark.slow
def test_related_charts_are_skipped(schwarzschild_charts) -> None:
    new = schwarzschild_charts["isotropic"]
    link = RelatedChart("schwarzschild", (), new.entry.pos("related"))
    linked = replace(new, entry=replace(new.entry, related=(link,)))
    found = dict(find_twins(linked, list(schwarzschild_charts.values())))
    assert set(found) == {"schwarzschild-ef"}


@pytest.mark.slow
def test_charts_joined_through_a_third_entry_are_skipped(schwarzschild_charts) -> None:
    """Isotropic and Eddington–Finkelstein both map onto the Schwarzschild chart (a catalog's
    related links, as ``catalog.chart_groups`` reads them): the two are the same spacetime
    by construction, so neither may be warned as the other's twin."""
    new = schwarzschild_charts["isotropic"]
    others = list(schwarzschild_charts.values())
    groups = {"schwarzschild": "schwarzschild", "schwarzschild-ef": "schwarzschild",
              "schwarzschild-isotropic": "schwarzschild",
              "reissner-nordstrom": "reissner-nordstrom"}
    assert search_twins([new], others, {}, groups).found == {}
    # with every entry in a group of its own the same search warns of both
    alone = {name: name for name in groups}
    assert set(dict(search_twins([new], others, {}, alone).found[new.entry.id])) == {
        "schwarzschild", "schwarzschild-ef"}
    # without groups given, they come from the links of the entries searched
    chained = [replace(chart, entry=replace(chart.entry, related=(
        RelatedChart("schwarzschild", (), chart.entry.pos("related")),)))
        for chart in (new, schwarzschild_charts["eddington"])]
    assert find_twins(chained[0], [*others, chained[1]]) == []
    cards = {name: twin_card(chart) for name, chart in schwarzschild_charts.items()}
    assert worth_comparing(cards["isotropic"], cards["eddington"])
    assert not worth_comparing(cards["isotropic"], cards["eddington"], groups)


@pytest.mark.slow
def test_same_fingerprint_different_spacetime_is_not_flagged() -> None:
    """Demo pair: f = 1 - 2M/r + c/r**3 and f = 1 - 2M/r + c/r**4 share every exact
    fingerprint part (4D, unspecified matter, no invariant vanishes, rank 1) but their
    invariants never take the same values together."""
    domain = [r > 2 * M, c > 0, c < M**3, *ANGLES]
    cubic = report(
        "lantern-cubic",
        static_spherical(1 - 2 * M / r + c / r**3, [M, c], domain),
        "unspecified",
        None,
    )
    quartic = report(
        "lantern-quartic",
        static_spherical(1 - 2 * M / r + c / r**4, [M, c], domain),
        "unspecified",
        None,
    )
    assert fingerprint(cubic) == fingerprint(quartic)  # so the values decide
    assert find_twins(cubic, [quartic]) == []


def test_de_sitter_charts_match_with_a_rescaled_parameter() -> None:
    """ℓ (static) against H (flat slicing): no renaming maps one to the other, only ℓ = 1/H."""
    lam_static, lam_flat = 3 / ell**2, 3 * H**2
    static = report(
        "de-sitter-static",
        static_spherical(1 - r**2 / ell**2, [ell], [r > 0, r < ell, *ANGLES]),
        "lambda-vacuum",
        "O",
        lam_static,
    )
    e = sp.exp(2 * H * t)
    flat = report(
        "de-sitter-flat",
        spacetime([t, x, y, z], [H], sp.diag(-1, e, e, e), []),
        "lambda-vacuum",
        "O",
        lam_flat,
    )
    (pair,) = find_twins(static, [flat])
    assert pair[0] == "de-sitter-flat"
    assert "0 independent invariants" in pair[1]


def test_sphere_is_not_the_hyperbolic_plane() -> None:
    """Demo 2D Riemannian pair: curvature +2/ℓ² against -2/ℓ² (same fingerprint otherwise)."""
    sphere = report(
        "lantern-sphere",
        spacetime([th, ph], [ell], sp.diag(ell**2, ell**2 * sp.sin(th) ** 2), ANGLES, "++"),
        "unspecified",
        None,
    )
    hyperbolic = report(
        "lantern-saddle",
        spacetime([x, y], [ell], sp.diag(ell**2 / y**2, ell**2 / y**2), [y > 0], "++"),
        "unspecified",
        None,
    )
    stereographic = report(
        "lantern-sphere-stereo",
        spacetime([x, y], [m], sp.diag(*(2 * [4 * m**2 / (1 + x**2 + y**2) ** 2])), [], "++"),
        "unspecified",
        None,
    )
    assert fingerprint(sphere) == fingerprint(hyperbolic)  # so the values decide
    assert find_twins(sphere, [hyperbolic]) == []
    assert [pair[0] for pair in find_twins(sphere, [hyperbolic, stereographic])] == [
        "lantern-sphere-stereo"
    ]


def test_different_petrov_type_or_matter_is_never_a_twin() -> None:
    sphere = spacetime([th, ph], [ell], sp.diag(ell**2, ell**2 * sp.sin(th) ** 2), ANGLES, "++")
    a = report("lantern-a", sphere, "unspecified", None)
    b = report("lantern-b", sphere, "vacuum", None)
    assert find_twins(a, [b]) == []
    assert [p[0] for p in find_twins(a, [report("lantern-c", sphere, "unspecified", None)])] == [
        "lantern-c"
    ]


def test_entries_with_free_functions_or_without_geometry_are_not_compared() -> None:
    sphere = spacetime([th, ph], [ell], sp.diag(ell**2, ell**2 * sp.sin(th) ** 2), ANGLES, "++")
    a = report("lantern-a", sphere, "unspecified", None)
    b = report("lantern-b", sphere, "unspecified", None)
    with_function = replace(b, spacetime=replace(sphere, functions=(sp.Function("w")(th),)))
    assert find_twins(a, [with_function]) == []
    assert find_twins(a, [replace(b, geometry=None)]) == []
    assert find_twins(replace(a, entry=None), [b]) == []


def test_find_all_twins_and_warnings() -> None:
    sphere = spacetime([th, ph], [ell], sp.diag(ell**2, ell**2 * sp.sin(th) ** 2), ANGLES, "++")
    a = report("lantern-a", sphere, "unspecified", None)
    b = report("lantern-b", sphere, "unspecified", None)
    found = find_all_twins([a], [a, b])
    assert list(found) == ["lantern-a"] and found["lantern-a"][0][0] == "lantern-b"
    (warning,) = twin_diagnostics(a, found["lantern-a"])
    assert warning.severity == "warning" and warning.code == "entry.duplicate"
    assert warning.message.startswith("probably the same spacetime as entry 'lantern-b': same kind")


@pytest.mark.slow
def test_cards_rule_out_pairs_before_any_report_is_loaded(schwarzschild_charts) -> None:
    # Two Schwarzschild charts share the exact fingerprint; Reissner–Nordström differs in its
    # matter kind, so its card alone rules it out; a link or a known different rank does too.
    iso, plain, rn = (twin_card(schwarzschild_charts[k])
                      for k in ("isotropic", "schwarzschild", "reissner"))
    assert iso is not None and plain is not None and rn is not None
    assert worth_comparing(iso, plain) and not worth_comparing(iso, rn)
    assert not worth_comparing(iso, iso)
    assert not worth_comparing(replace(iso, links=frozenset({"schwarzschild"})), plain)
    assert not worth_comparing(replace(iso, rank=1), replace(plain, rank=2))
    assert worth_comparing(replace(iso, rank=1), replace(plain, rank=1))


@pytest.mark.slow
def test_known_ranks_are_used_and_new_ones_reported(schwarzschild_charts) -> None:
    new = schwarzschild_charts["isotropic"]
    others = [schwarzschild_charts["schwarzschild"], schwarzschild_charts["eddington"]]
    fresh = search_twins([new], others, {})
    assert fresh.ranks == {"schwarzschild-isotropic": 1, "schwarzschild": 1,
                           "schwarzschild-ef": 1}
    # A (deliberately wrong) remembered rank is believed: the pair is then ruled out unseen.
    remembered = search_twins([new], others, {"schwarzschild": 2})
    assert [other for other, _ in remembered.found["schwarzschild-isotropic"]] == [
        "schwarzschild-ef"]
    assert "schwarzschild" not in remembered.ranks


def test_one_chart_per_group_of_related_charts_is_compared(schwarzschild_charts) -> None:
    """Issue 18: charts joined by verified maps are one spacetime (same invariant values), so
    the search compares a new entry with one of them, the cheapest to evaluate, and names
    it. Without the groups both charts are named (and both were compared)."""
    from generator.physics.twins import group_representatives

    new = schwarzschild_charts["isotropic"]
    others = [schwarzschild_charts["schwarzschild"], schwarzschild_charts["eddington"]]
    groups = {"schwarzschild": "g", "schwarzschild-ef": "g"}
    chosen = group_representatives(others, groups)
    assert len(chosen) == 1
    found = search_twins([new], others, {}, groups).found["schwarzschild-isotropic"]
    assert [other for other, _ in found] == [chosen[0].entry.id]
    apart = search_twins([new], others, {}, {}).found["schwarzschild-isotropic"]
    assert {other for other, _ in apart} == {"schwarzschild", "schwarzschild-ef"}


def test_the_cheapest_chart_represents_its_group(schwarzschild_charts) -> None:
    """A chart whose invariants need Lambert W (Kruskal–Szekeres style) is never chosen over
    one that does not (mpmath evaluates Lambert W slowly)."""
    from generator.physics.twins import group_representatives

    plain = schwarzschild_charts["schwarzschild"]
    geometry = plain.geometry
    slow = replace(plain, entry=replace(plain.entry, id="slow-chart"),
                   geometry=replace(geometry, kretschmann=sp.LambertW(r) + 1))
    assert group_representatives([slow, plain], {"slow-chart": "g", "schwarzschild": "g"}) \
        == [plain]


def test_a_copy_with_renamed_symbols_is_found_literally_and_nothing_else_is() -> None:
    """Two entries holding the same metric with other names (M → m, r → rho) are one
    spacetime written twice; the literal test says so without the numerical search (which a
    loaded machine can time out), and never confuses a different metric or a related chart.
    Schwarzschild f = 1 − 2M/r against Reissner–Nordström f = 1 − 2M/r + Q²/r² (common
    practice)."""
    from generator.physics.twins import LITERAL_REASON, literal_key, literal_twins

    f = 1 - 2 * M / r
    original = report("schwarzschild", static_spherical(f, [M], [r > 2 * M, *ANGLES]), "vacuum")
    renamed = spacetime([t, rho, th, ph], [m],
                        sp.diag(-(1 - 2 * m / rho), 1 / (1 - 2 * m / rho), rho**2,
                                rho**2 * sp.sin(th) ** 2), [rho > 2 * m, *ANGLES])
    copy = report("lamp-hole", renamed, "vacuum")
    charged = report("reissner", static_spherical(f + Q**2 / r**2, [M, Q], [r > 2 * M, *ANGLES]),
                     "electrovacuum")
    assert literal_key(original.spacetime) == literal_key(copy.spacetime)
    assert literal_key(original.spacetime) != literal_key(charged.spacetime)
    assert literal_twins([copy], [original, copy, charged]) == {
        "lamp-hole": [("schwarzschild", LITERAL_REASON)]}
    # the parameters in another order, or another signature, are not literally the same
    swapped = replace(charged.spacetime, parameters=(Q, M))
    assert literal_key(swapped) != literal_key(charged.spacetime)
    # joined by a `related` link: not a duplicate
    assert literal_twins([copy], [original], {"lamp-hole": "g", "schwarzschild": "g"}) == {}


def test_a_literal_twin_is_reported_even_when_the_numerical_search_runs_out_of_time(
        monkeypatch) -> None:
    from generator.errors import BudgetExceeded
    from generator.run import pipeline

    f = 1 - 2 * M / r
    original = report("schwarzschild", static_spherical(f, [M], [r > 2 * M, *ANGLES]), "vacuum")
    copy = report("lamp-hole", static_spherical(1 - 2 * m / r, [m], [r > 2 * m, *ANGLES]),
                  "vacuum")
    copy = replace(copy, file="catalog/isolated-objects/lamp-hole.yaml")

    def out_of_time(*args, **kwargs):
        raise BudgetExceeded("twin search", "time limit of 120 s")

    monkeypatch.setattr(pipeline, "run_limited_in_child", out_of_time)
    monkeypatch.setattr(pipeline, "run_limited", out_of_time)
    warnings = pipeline.twin_warnings([copy], [original, copy])[copy.file]
    assert [w.severity for w in warnings] == ["warning", "note"]
    assert "'schwarzschild'" in warnings[0].message and "same metric components" in \
        warnings[0].message


def test_a_whole_catalog_run_still_reports_literal_twins() -> None:
    """Runs too large for the numerical search (more than eight entries) keep its exact part."""
    from generator.run.pipeline import literal_twin_warnings

    f = 1 - 2 * M / r
    original = report("schwarzschild", static_spherical(f, [M], [r > 2 * M, *ANGLES]), "vacuum")
    copy = replace(report("lamp-hole", static_spherical(1 - 2 * m / r, [m],
                                                        [r > 2 * m, *ANGLES]), "vacuum"),
                   file="catalog/isolated-objects/lamp-hole.yaml")
    found = literal_twin_warnings([original, copy], {})
    assert set(found) == {original.file, copy.file}
    assert literal_twin_warnings([original, copy], {"schwarzschild": "g", "lamp-hole": "g"}) == {}


def test_the_literal_key_made_in_the_worker_is_the_one_compared(tmp_path) -> None:
    """A worker stores the key in the report (a warm check reads it back instead of redoing
    it); the stored key is what the comparison uses, and it is the key of the report's own
    metric. Fixture: the scale-small catalog's point mass (Schwarzschild, common practice)."""
    from pathlib import Path

    from generator.physics.twins import LITERAL_REASON, literal_key, literal_twins
    from generator.run.tasks import Task, run_task

    root = Path(__file__).parent / "roots" / "scale-small" / "catalog"
    made = run_task(Task(root / "black-holes" / "point-mass.yaml", "point-mass.yaml", root,
                         root.parent, (), 60.0))
    assert made.literal_key and made.literal_key == literal_key(made.spacetime)
    # A report whose stored key says "the same metric" is matched by that key alone.
    f = 1 - 2 * M / r
    other = report("schwarzschild", static_spherical(f + Q**2 / r**2, [M, Q],
                                                     [r > 2 * M, *ANGLES]), "electrovacuum")
    assert literal_twins([made], [made, other]) == {}
    marked = replace(other, literal_key=made.literal_key)
    assert literal_twins([made], [made, marked]) == {
        made.entry.id: [("schwarzschild", LITERAL_REASON)]}


@pytest.mark.slow
def test_a_newton_run_stops_at_its_evaluation_budget(schwarzschild_charts, monkeypatch) -> None:
    """A run from a start with no root nearby once halved its damped steps for 2,774
    evaluations (69 s); MAX_EVALUATIONS ends such a run as "no root here". Mutation guard:
    with a budget too small to converge, the charts found above are no longer found, so the
    budget is really applied (the default one leaves them found: the test above)."""
    from generator.physics import twins

    monkeypatch.setattr(twins, "MAX_EVALUATIONS", 2)
    new = schwarzschild_charts["isotropic"]
    found = dict(find_twins(new, list(schwarzschild_charts.values())))
    assert "schwarzschild" not in found and "schwarzschild-ef" not in found
