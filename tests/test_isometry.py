"""The computed isometry algebra: dimensions of textbook spacetimes from the shipped entries,
the listed basis against the dimension, brackets, and the jets it rests on.

Dimensions are those of the textbooks on exact solutions (e.g. Stephani, Kramer, MacCallum,
Hoenselaers & Herlt, "Exact Solutions of Einstein's Field Equations", 2nd ed. 2003, ch. 8-13,
and Hawking & Ellis 1973, ch. 5); recalled from memory unless marked otherwise.
"""

from __future__ import annotations

import random
from pathlib import Path

import pytest
import sympy
from classify_cases import killing_claims, prepared, schwarzschild_entry

from generator.entry.loader import load_entry
from generator.geometry.algebra import FieldRequest, build_field
from generator.physics.classify import classify
from generator.physics.isometry import isometry_dimension
from generator.physics.jets import FieldJets, primes
from generator.physics.lie_algebra import recognise, structure

CATALOG = Path(__file__).resolve().parents[1] / "catalog"

DIMENSIONS = [
    # (entry, isometry dimension, orbit dimension, source)
    ("backgrounds/minkowski-cartesian", 10, 4, "Poincaré group; common practice"),
    ("backgrounds/minkowski-spherical", 10, 4, "Poincaré group; common practice"),
    ("backgrounds/de-sitter-static", 10, 4, "Hawking & Ellis 1973 §5.2, from memory"),
    ("backgrounds/anti-de-sitter-global", 10, 4, "Hawking & Ellis 1973 §5.2, from "
     "memory"),
    ("universes/einstein-static-universe", 7, 4, "R × SO(4); Hawking & Ellis 1973 "
     "§5.3, from memory"),
    ("universes/flrw-flat", 6, 3, "homogeneous and isotropic slices; common practice"),
    ("universes/flrw-curved", 6, 3, "homogeneous and isotropic slices; common practice"),
    ("isolated-objects/schwarzschild", 4, 3, "static, spherically symmetric; common practice"),
    ("isolated-objects/reissner-nordstrom", 4, 3, "static, spherically symmetric; common practice"),
    ("isolated-objects/kerr-boyer-lindquist", 2, 2, "stationary and axisymmetric only; Stephani et "
     "al. 2003, from memory"),
    ("universes/godel", 5, 4, "Gödel 1949, from memory: a 5-dimensional group, homogeneous"),
    ("isolated-objects/taub-nut", 4, 3, "SU(2) × R acting on 3-dimensional orbits; Misner 1963, "
     "from memory"),
    ("universes/kasner", 3, 3, "Bianchi I: three spatial translations for generic exponents; "
     "common practice"),
    ("radiation/plane-wave", 5, 3, "the generic plane wave has a 5-dimensional group "
     "(Heisenberg); Ehlers & Kundt 1962, from memory"),
    ("radiation/pp-wave-general", 1, 1, "only ∂_v for a generic profile; Ehlers & Kundt 1962, "
     "from memory"),
    ("throats-and-products/bertotti-robinson", 6, 4, "AdS2 × S2: 3 + 3; Bertotti 1959, "
     "Robinson 1959, from memory"),
    ("euclidean-and-initial-data/round-3-sphere", 6, 3, "SO(4); common practice"),
    ("euclidean-and-initial-data/round-2-sphere", 3, 2, "SO(3); common practice"),
    ("euclidean-and-initial-data/eguchi-hanson", 4, 3, "U(2) acting on 3-dimensional orbits; "
     "Eguchi & Hanson 1978, from memory"),
    ("other-dimensions/btz", 6, 3, "locally AdS3 (Bañados, Teitelboim & Zanelli 1992, from "
     "memory): 6 locally, 2 after the identification"),
]


def computed(name: str):
    spacetime = load_entry(CATALOG / f"{name}.yaml").spacetime
    return isometry_dimension(spacetime)[0]


@pytest.mark.parametrize(("name", "dimension", "orbit", "source"), DIMENSIONS)
def test_isometry_dimension_of_textbook_spacetimes(name: str, dimension: int, orbit: int,
                                                   source: str) -> None:
    result = computed(name)
    assert result.why_null is None
    assert (result.dimension, result.orbit_dimension) == (dimension, orbit), source
    assert result.points_agree


@pytest.mark.slow
def test_tangherlini_in_five_dimensions_has_seven() -> None:
    # R × SO(4) (Tangherlini 1963, from memory): 1 + 6 on 4-dimensional orbits.
    result = computed("other-dimensions/schwarzschild-tangherlini-5d")
    assert (result.dimension, result.orbit_dimension) == (7, 4)


def test_jets_match_sympy_taylor_coefficients() -> None:
    # Reference: SymPy's own differentiation, reduced modulo the same prime.
    t, r, M = sympy.symbols("t r M")
    expr = (r**2 + 3 * M * t) / (r - 2 * M) ** 3
    field, (value,) = build_field(FieldRequest((t, r), (M,), (), (expr,), 2))
    p = primes()[0]
    jets = FieldJets(field, 3, random.Random(5), p)
    jet = jets.rational(value)
    at = {s.key: v for s, v in zip(field.specs, jets.point.values, strict=True)}
    for (i, j), k in jets.space.index.items():
        derivative = sympy.diff(expr, t, i, r, j) if i + j else expr
        exact = sympy.Rational(derivative.subs({t: at[t], r: at[r], M: at[M]}))
        expected = int(exact.p) * pow(int(exact.q) * sympy.factorial(i) * sympy.factorial(j),
                                      -1, p) % p
        assert int(jet[k]) == expected, (i, j)


# ------------------------------------------------------------------ the listed basis


def classified(*vectors: dict[str, str]):
    entry, spacetime, geometry = prepared(schwarzschild_entry(claims=killing_claims(*vectors)))
    return classify(entry, spacetime, geometry, {})


ROTATIONS = ({"phi": "1"}, {"theta": "sin(phi)", "phi": "cos(phi)*cos(theta)/sin(theta)"},
             {"theta": "cos(phi)", "phi": "-sin(phi)*cos(theta)/sin(theta)"})


def test_complete_schwarzschild_basis_is_so3_plus_r() -> None:
    # Static and spherically symmetric: ∂_t and the rotations, so(3) ⊕ ℝ (common practice).
    classification, problems = classified({"t": "1"}, *ROTATIONS)
    iso = classification.symmetry.isometry
    assert problems == []
    assert (iso.dimension, iso.listed, iso.complete) == (4, 4, True)
    assert iso.algebra_name == "so(3) ⊕ ℝ"
    # [∂_φ, X] = Y and [∂_φ, Y] = −X for the two other rotations (by hand).
    assert (1, 2, (0, 0, 0, 1)) in iso.structure
    assert (1, 3, (0, 0, -1, 0)) in iso.structure


def test_fewer_vectors_than_the_dimension_is_a_warning_naming_how_many() -> None:
    classification, problems = classified({"t": "1"})
    assert classification.symmetry.isometry.complete is False
    (warning,) = problems
    assert warning.severity == "warning"
    assert "(3 missing)" in warning.message


def test_more_independent_vectors_than_the_dimension_is_an_error() -> None:
    # Mutation: a fifth, non-Killing vector (∂_r) in a claimed basis of the 4-dimensional
    # algebra: its own check fails and the count is refused.
    classification, problems = classified({"t": "1"}, *ROTATIONS, {"r": "1"})
    messages = [p.message for p in problems if p.severity == "error"]
    assert any("fails the Killing equation" in m for m in messages)
    assert any("lists 5 independent Killing vectors but its isometry algebra has "
               "dimension 4" in m for m in messages)
    iso = classification.symmetry.isometry
    assert len(iso.basis) == 4  # the failing vector is left out of the basis shown


def test_dependent_listed_vectors_count_once() -> None:
    classification, _ = classified({"t": "1"}, {"t": "2"})
    assert classification.symmetry.isometry.listed == 1


def test_sphere_rotations_are_recognised_as_so3() -> None:
    spacetime = load_entry(CATALOG / "euclidean-and-initial-data/round-2-sphere.yaml").spacetime
    theta, phi = spacetime.coordinates
    basis = [[0, 1], [sympy.sin(phi), sympy.cos(phi) * sympy.cos(theta) / sympy.sin(theta)],
             [sympy.cos(phi), -sympy.sin(phi) * sympy.cos(theta) / sympy.sin(theta)]]
    basis = [[sympy.sympify(v) for v in x] for x in basis]
    _, name = structure(spacetime, basis, True)
    assert name == "so(3)"


def test_recognition_mutations() -> None:
    # so(3): [X1, X2] = X3 and cyclic; flipping one sign gives sl(2, R) (Killing form of
    # signature (2, 1)); no brackets at all is abelian. Cartan's criterion, common practice.
    so3 = ((0, 1, (0, 0, 1)), (0, 2, (0, -1, 0)), (1, 2, (1, 0, 0)))
    sl2 = ((0, 1, (0, 0, -1)), (0, 2, (0, -1, 0)), (1, 2, (1, 0, 0)))
    assert recognise(so3, 3) == "so(3)"
    assert recognise(sl2, 3) == "sl(2,ℝ)"
    assert recognise((), 2) == "abelian ℝ²"


def test_complete_bases_of_the_curated_three_spheres() -> None:
    # The round S³ and the Einstein static universe R × S³ (Einstein 1917): so(4) and
    # so(4) ⊕ ℝ, dimensions 6 and 7 (common practice); the entries list complete bases.
    from generator.physics.symmetry_stage import listed_vectors

    for name, expected in (("euclidean-and-initial-data/round-3-sphere", "so(4)"),
                           ("universes/einstein-static-universe", "so(4) ⊕ ℝ")):
        loaded = load_entry(CATALOG / f"{name}.yaml")
        names = [str(x) for x in loaded.spacetime.coordinates]
        basis = [xi for _, xi in listed_vectors(loaded.entry, loaded.spacetime, names)]
        _, algebra = structure(loaded.spacetime, basis, True)
        assert algebra == expected, name


def test_brackets_through_a_conical_angle_come_out_and_are_checked() -> None:
    """The cosmic string (Vilenkin 1981): off the axis it is flat space with φ′ = (1 − 4μ)φ,
    so ∂_φ and the two translations across the axis, X = cos φ′ ∂_r − sin φ′/((1 − 4μ) r) ∂_φ
    and Y = sin φ′ ∂_r + cos φ′/((1 − 4μ) r) ∂_φ, satisfy [∂_φ, X] = −(1 − 4μ) Y,
    [∂_φ, Y] = (1 − 4μ) X, [X, Y] = 0 (the Euclidean plane's algebra, by hand; common
    practice). A bracket through cos((1 − 4μ)φ) once kept the linear solve busy for minutes."""
    spacetime = load_entry(CATALOG / "strings-tubes-and-bubbles/cosmic-string.yaml").spacetime
    _, r, phi, _ = spacetime.coordinates
    (mu,) = spacetime.parameters
    k = 1 - 4 * mu
    x = [0, sympy.cos(k * phi), -sympy.sin(k * phi) / (k * r), 0]
    y = [0, sympy.sin(k * phi), sympy.cos(k * phi) / (k * r), 0]
    basis = [[sympy.sympify(v) for v in b] for b in ([0, 0, 1, 0], x, y)]
    brackets, _ = structure(spacetime, basis, True)
    table = {(i, j): tuple(sympy.factor(c) for c in cs) for i, j, cs in brackets}
    assert set(table) == {(0, 1), (0, 2)}
    assert table[(0, 1)] == (0, 0, sympy.factor(-k))
    assert table[(0, 2)] == (0, sympy.factor(k), 0)
    # Mutation: a vector outside the span (the dilation r ∂_r) has no expansion.
    from generator.physics.lie_algebra import expand_in_basis
    assert expand_in_basis([sympy.Integer(0), r, sympy.Integer(0), sympy.Integer(0)], basis,
                           spacetime) is None
