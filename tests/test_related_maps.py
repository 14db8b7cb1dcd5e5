"""Linked charts: a correct coordinate map pulls one metric back onto the other; wrong or
incomplete maps are rejected naming the components."""

from __future__ import annotations

from classify_cases import POSITIONS, make_entry, prepared, schwarzschild_entry, vector

from generator.errors import SourcePos
from generator.model import RelatedChart
from generator.physics.classify import classify

ISOTROPIC = ("-((1 - M/(2*rho))/(1 + M/(2*rho)))**2*dt**2 + (1 + M/(2*rho))**4*(drho**2"
             " + rho**2*(dtheta**2 + sin(theta)**2*dphi**2))")


def isotropic_entry():
    """Schwarzschild in isotropic coordinates, r = rho (1 + M/(2 rho))**2 (Misner, Thorne &
    Wheeler 1973, eq. (31.22), from memory)."""
    return make_entry("t rho theta phi", ISOTROPIC, {"M": "positive"},
                      ("rho > M/2", "0 < theta < pi"), id="isotropic")


def link(**map_: str) -> RelatedChart:
    return RelatedChart("isotropic", vector(**map_), POSITIONS["related.0"])


def check(chart: RelatedChart):
    entry, spacetime, geometry = prepared(schwarzschild_entry(related=(chart,)))
    other_entry, other, _ = prepared(isotropic_entry())
    return classify(entry, spacetime, geometry, {"isotropic": (other_entry, other)})


def test_isotropic_chart_is_the_same_schwarzschild_geometry() -> None:
    classification, problems = check(link(t="t", r="rho*(1 + M/(2*rho))**2", theta="theta",
                                          phi="phi"))
    assert problems == []
    (verdict,) = classification.related_checked
    assert verdict.ok
    assert verdict.method in ("exact", "sampled")


def test_wrong_radial_map_is_rejected_naming_components() -> None:
    classification, problems = check(link(t="t", r="rho*(1 + M/rho)**2", theta="theta",
                                          phi="phi"))
    (verdict,) = classification.related_checked
    assert not verdict.ok
    assert verdict.detail == "g_tt, g_(rho,rho), g_(theta,theta), g_(phi,phi) differ"
    assert len(problems) == 1
    assert problems[0].code == "related.map"
    assert problems[0].line == POSITIONS["related.0"].line
    assert "pulled-back g_tt, g_(rho,rho)" in problems[0].message


def test_swapped_angles_are_rejected() -> None:
    classification, _ = check(link(t="t", r="rho*(1 + M/(2*rho))**2", theta="phi",
                                   phi="theta"))
    assert not classification.related_checked[0].ok
    assert "g_(theta,theta)" in classification.related_checked[0].detail


def test_incomplete_map_is_rejected() -> None:
    classification, problems = check(link(t="t", r="rho*(1 + M/(2*rho))**2", theta="theta"))
    assert not classification.related_checked[0].ok
    assert "phi missing" in problems[0].message


def test_map_naming_an_unknown_symbol_is_a_syntax_error() -> None:
    _, problems = check(link(t="t", r="R*(1 + M/(2*rho))**2", theta="theta", phi="phi"))
    assert [p.code for p in problems] == ["math.syntax"]


def test_flat_polar_coordinates_pull_back_to_cartesian() -> None:
    # x = r cos(phi), y = r sin(phi): here the Cartesian entry maps onto the polar one.
    cartesian = make_entry("t x y", "-dt**2 + dx**2 + dy**2", {}, (), id="flat-cartesian",
                           related=(RelatedChart("flat-polar", vector(t="t", x="r*cos(phi)",
                                                                      y="r*sin(phi)"),
                                                 SourcePos("c.yaml", 9, 3)),))
    polar = make_entry("t r phi", "-dt**2 + dr**2 + r**2*dphi**2", {}, ("r > 0",),
                       id="flat-polar")
    entry, spacetime, geometry = prepared(cartesian)
    other_entry, other, _ = prepared(polar)
    classification, problems = classify(entry, spacetime, geometry,
                                        {"flat-polar": (other_entry, other)})
    assert problems == []
    assert classification.related_checked[0].ok
