"""Killing vectors: published symmetry generators pass, wrong ones fail naming the components;
geodesic equations agree with SymPy's own diffgeom Christoffel symbols."""

from __future__ import annotations

import sympy
from classify_cases import killing_claims, prepared, schwarzschild_entry
from sympy.diffgeom import CoordSystem, Manifold, Patch, TensorProduct
from sympy.diffgeom import metric_to_Christoffel_2nd as christoffel_2nd

from generator.physics.classify import classify


def checked(*vectors: dict[str, str]):
    entry, spacetime, geometry = prepared(schwarzschild_entry(claims=killing_claims(*vectors)))
    return classify(entry, spacetime, geometry, {})


def test_schwarzschild_has_time_translation_and_rotations() -> None:
    # Static + spherically symmetric: d/dt and the three rotation generators (e.g. Carroll
    # 2004, §5.2; common practice).
    classification, problems = checked(
        {"t": "1"},
        {"phi": "1"},
        {"theta": "sin(phi)", "phi": "cos(phi)*cos(theta)/sin(theta)"},
        {"theta": "cos(phi)", "phi": "-sin(phi)*cos(theta)/sin(theta)"},
    )
    assert problems == []
    assert [v.ok for v in classification.killing_vectors_checked] == [True] * 4


def test_radial_vector_is_not_killing() -> None:
    classification, problems = checked({"r": "1"})
    verdict = classification.killing_vectors_checked[0]
    assert not verdict.ok
    assert verdict.detail == "(L_ξ g)_tt, (L_ξ g)_rr, (L_ξ g)_(theta,theta), " \
                             "(L_ξ g)_(phi,phi) ≠ 0"
    errors = [p for p in problems if p.severity == "error"]
    assert len(errors) == 1
    assert errors[0].code == "claim.killing-vector"
    assert errors[0].line == 50


def test_rotation_with_a_sign_error_is_rejected() -> None:
    classification, problems = checked({"theta": "sin(phi)",
                                        "phi": "-cos(phi)*cos(theta)/sin(theta)"})
    verdict = classification.killing_vectors_checked[0]
    assert not verdict.ok
    # L_ξ g_φφ = 4 r² sinθ cosθ sinφ and L_ξ g_θφ = 2 r² cosφ for this sign (by hand).
    assert verdict.detail == "(L_ξ g)_(theta,phi), (L_ξ g)_(phi,phi) ≠ 0"
    assert "fails the Killing equation" in problems[0].message


def test_unknown_coordinate_in_killing_vector_is_an_error() -> None:
    classification, problems = checked({"x": "1"})
    assert not classification.killing_vectors_checked[0].ok
    assert "'x' is not a coordinate here" in problems[0].message


def test_geodesic_equations_match_sympy_diffgeom() -> None:
    # Independent Christoffel symbols from SymPy's diffgeom module.
    entry, spacetime, geometry = prepared(schwarzschild_entry())
    classification, _ = classify(entry, spacetime, geometry, {})
    t, r, th, ph = spacetime.coordinates
    M = spacetime.symbols["M"]
    chart = CoordSystem("c", Patch("P", Manifold("M4", 4)), [t, r, th, ph])
    dt, dr, dth, dph = chart.base_oneforms()
    _, R, TH, _ = chart.base_scalars()  # diffgeom differentiates its own scalar fields only
    f = 1 - 2 * M / R
    metric = (-f * TensorProduct(dt, dt) + TensorProduct(dr, dr) / f
              + R**2 * TensorProduct(dth, dth) + R**2 * sympy.sin(TH) ** 2
              * TensorProduct(dph, dph))
    gamma = christoffel_2nd(metric)
    s = sympy.Symbol("s", real=True)
    paths = [sympy.Function(str(x), real=True)(s) for x in spacetime.coordinates]
    scalars = dict(zip(chart.base_scalars(), paths, strict=True))
    for a in range(4):
        expected = sympy.diff(paths[a], s, 2) + sum(
            gamma[a, b, c].subs(scalars) * sympy.diff(paths[b], s) * sympy.diff(paths[c], s)
            for b in range(4) for c in range(4))
        assert sympy.simplify(classification.geodesic_equations[a] - expected) == 0
