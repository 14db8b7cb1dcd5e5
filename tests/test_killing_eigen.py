"""ad(∂_x) on the Killing algebra at a point (``killing_eigen``) and the blocks of the search
it lets us skip.

Checked against things outside the module:

* de Sitter's algebra so(4,1) under a static time translation (a boost of the embedding
  hyperboloid) splits as 4 + 3 + 3 with eigenvalues 0, +k, −k, k² = Λ/3, and under a rotation
  as 4 + 3 + 3 with eigenvalues 0, ±i (common practice: the centraliser of a boost in so(4,1)
  is so(1,1) ⊕ so(3), of a rotation so(2) ⊕ so(2,1); the boost e^{kt}(…) written out in
  Hawking & Ellis, The Large Scale Structure of Space-Time, 1973, §5.2, from memory);
* BTZ: locally AdS₃, with the embedding of Bañados, Henneaux, Teitelboim & Zanelli, Phys. Rev.
  D 48, 1506 (1993) (from memory) the other four Killing vectors depend on t and φ through
  e^{±u ± w}, u = r₊φ/ℓ − r₋t/ℓ², w = r₊t/ℓ² − r₋φ/ℓ; with M = (r₊² + r₋²)/ℓ², J = 2r₊r₋/ℓ
  the characteristic polynomials are λ²((λ² − M/ℓ²)² − J²/ℓ⁶) for ad(∂_t) and
  λ²((λ² − M)² − J²/ℓ²) for ad(∂_φ) (derived here from that embedding);
* the matrix itself against ∂_t Y computed by SymPy's differentiation of the boost above.
"""

from __future__ import annotations

from pathlib import Path

import flint
import pytest
import sympy

from generator.entry.loader import load_entry
from generator.geometry.exactvalues import coordinate_names
from generator.physics import killing_eigen, killing_search
from generator.physics.killing_eigen import may_hold_new, parameters_of_jet
from generator.physics.killing_search import (
    WORK_BOUND,
    PointValues,
    Work,
    candidate_rates,
    cyclic_coordinates,
    listed_signature,
    search_killing_vectors,
)
from generator.physics.symmetry_stage import listed_vectors

ROOT = Path(__file__).resolve().parent.parent


def shipped(relative: str):
    load = load_entry(ROOT / "catalog" / relative)
    return load.entry, load.spacetime


def action_for(st, listed, dimension):
    values = PointValues(st, [], listed)
    values.grow(2, Work(WORK_BOUND))
    action = values.adjoint_action(cyclic_coordinates(st), dimension, candidate_rates(st))
    assert action is not None
    return values, action


def parameter_values(values: PointValues) -> dict[str, int]:
    return {str(spec.key): values.first_point.values[k]
            for k, spec in enumerate(values.field.specs) if spec.kind == "parameter"}


def charpoly(action, var: int) -> list[int]:
    matrix = flint.nmod_mat([list(r) for r in dict(action.matrices)[var]], action.p)
    return [int(c) for c in matrix.charpoly().coeffs()]


def expected(p: int, *factors: list[int]) -> list[int]:
    """The product of polynomials (coefficients constant first) modulo p."""
    out = flint.nmod_poly([1], p)
    for f in factors:
        out *= flint.nmod_poly(f, p)
    return [int(c) for c in out.coeffs()]


def de_sitter_boost(st):
    t, r, theta, _phi = st.coordinates
    k = sympy.sqrt(st.parameters[0] / 3)
    f = 1 - k**2 * r**2
    return [sympy.exp(k * t) * k * r * sympy.cos(theta) / sympy.sqrt(f),
            sympy.exp(k * t) * sympy.sqrt(f) * sympy.cos(theta),
            -sympy.exp(k * t) * sympy.sqrt(f) * sympy.sin(theta) / r, sympy.Integer(0)]


def test_de_sitter_eigenvalues_of_time_translation_and_rotation() -> None:
    _, st = shipped("backgrounds/de-sitter-static.yaml")
    values, action = action_for(st, [], 10)
    p = action.p
    k2 = parameter_values(values)["Lambda"] * pow(3, -1, p) % p
    assert k2 in action.rate_squares
    assert charpoly(action, 0) == expected(p, [0, 0, 0, 0, 1], *[[-k2, 0, 1]] * 3)
    assert charpoly(action, 3) == expected(p, [0, 0, 0, 0, 1], *[[1, 0, 1]] * 3)
    # A wrong expectation is told apart (the eigenvalue of the rotation's classes is ±i, not ±1).
    assert charpoly(action, 3) != expected(p, [0, 0, 0, 0, 1], *[[-1, 0, 1]] * 3)


def test_the_matrix_maps_a_boost_to_its_time_derivative() -> None:
    _, st = shipped("backgrounds/de-sitter-static.yaml")
    boost = de_sitter_boost(st)
    t = st.coordinates[0]
    derivative = [sympy.diff(c, t) for c in boost]  # [∂_t, Y] = ∂_t Y
    values, action = action_for(st, [boost, derivative], 10)
    p, d = action.p, len(action.kernel)
    source = parameters_of_jet(action, listed_signature(values, (0,), 0))
    image = parameters_of_jet(action, listed_signature(values, (0,), 1))
    basis = flint.nmod_mat([[action.kernel[j][i] for j in range(d)]
                            for i in range(len(source))], p)
    coordinates = _solve(basis, source, p)
    matrix = flint.nmod_mat([list(r) for r in dict(action.matrices)[0]], p)
    mapped = basis * (matrix * flint.nmod_mat([[c] for c in coordinates], p))
    assert [int(mapped[i, 0]) for i in range(len(image))] == image
    assert image != source  # the eigenvalue k ≠ 1: the check is not an identity


def _solve(basis, vector, p):
    augmented = flint.nmod_mat([[int(basis[i, j]) for j in range(basis.ncols())] + [vector[i]]
                                for i in range(basis.nrows())], p)
    reduced, rank = augmented.rref()
    assert rank == basis.ncols(), "the boost's 1-jet must lie in the algebra"
    return [int(reduced[i, basis.ncols()]) for i in range(rank)]


def test_btz_characteristic_polynomials_from_the_embedding() -> None:
    _, st = shipped("other-dimensions/btz.yaml")
    values, action = action_for(st, [], 6)
    p = action.p
    v = parameter_values(values)
    m, j, ell = v["M"], v["J"], v["ell"]
    inv = lambda x: pow(x, -1, p)  # noqa: E731
    # λ²((λ² − a)² − b) = λ⁶ − 2aλ⁴ + (a² − b)λ²
    a, b = m * inv(ell**2) % p, j * j * inv(pow(ell, 6, p)) % p
    assert charpoly(action, 0) == expected(p, [0, 0, (a * a - b) % p, 0, -2 * a % p, 0, 1])
    a, b = m % p, j * j * inv(ell**2) % p
    assert charpoly(action, 2) == expected(p, [0, 0, (a * a - b) % p, 0, -2 * a % p, 0, 1])


def test_blocks_of_de_sitter_that_can_and_cannot_hold_a_new_vector() -> None:
    entry, st = shipped("backgrounds/de-sitter-static.yaml")
    names = coordinate_names(st)
    vectors = [xi for _, xi in listed_vectors(entry, st, names)]
    time_and_rotations = [xi for xi in vectors if all(
        sympy.sympify(c).free_symbols <= {st.coordinates[2], st.coordinates[3]} for c in xi)]
    assert len(time_and_rotations) == 4
    values, action = action_for(st, [*time_and_rotations, *vectors], 10)
    rates = candidate_rates(st)
    k_index = next(i for i, k in enumerate(rates) if sympy.simplify(k**2 - st.parameters[0] / 3)
                   == 0)
    known = [listed_signature(values, (0,), i) for i in range(4)]
    everything = [listed_signature(values, (0,), i) for i in range(len(vectors) + 4)]
    # the boosts: e^{±kt} times functions of r, θ, φ with rotations' eigenvalues 0 or ±i
    assert may_hold_new(action, [(0, f"exp{k_index}"), (3, "poly1")], known)
    assert may_hold_new(action, [(0, f"exp{k_index}"), (3, "trig0")], known)
    # rate 1 is no eigenvalue of ∂_t, k is none of ∂_φ; the joint kernel is ∂_t, ∂_φ (known)
    assert not may_hold_new(action, [(0, "exp0"), (3, "poly1")], known)
    assert not may_hold_new(action, [(0, "poly1"), (3, f"trig{k_index}")], known)
    assert not may_hold_new(action, [(0, "poly3"), (3, "poly3")], known)
    # with the whole algebra known no block can add anything
    assert not may_hold_new(action, [(0, f"exp{k_index}"), (3, "trig0")], everything)


def test_btz_search_solves_no_block_and_says_why() -> None:
    entry, st = shipped("other-dimensions/btz.yaml")
    listed = [xi for _, xi in listed_vectors(entry, st, coordinate_names(st))]
    result = search_killing_vectors(st, listed, 6)
    assert result.found == () and not result.complete
    assert dict(result.work)["unknowns"] == 0
    assert "blocks were not solved" in result.summary


@pytest.mark.slow
def test_a_wrong_eigenvalue_rule_loses_the_de_sitter_boosts(monkeypatch) -> None:
    """Mutation: classes e^{kx} treated like {cos kx, sin kx} (λ² + k² instead of λ² − k²):
    the boosts' blocks are then skipped and the search no longer completes de Sitter, which
    the correct rule does (tests/test_killing_search_known.py)."""
    entry, st = shipped("backgrounds/de-sitter-static.yaml")
    vectors = [xi for _, xi in listed_vectors(entry, st, coordinate_names(st))][:4]
    real = killing_eigen.class_polynomial

    def confused(kind, rate_squares):
        return real(kind.replace("exp", "trig"), rate_squares)

    monkeypatch.setattr(killing_eigen, "class_polynomial", confused)
    result = killing_search.search_killing_vectors(st, vectors, 10)
    assert not result.complete
