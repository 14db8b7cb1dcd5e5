"""Entries whose Killing bases were completed with published vectors (issue 17, item 4): each
listed vector passes Killing's equation, a mutated one fails, and the listed plus found
vectors span the computed dimension (never called complete otherwise).

de Sitter, flat slicing −dt² + e^{2Ht}(dr² + r² dΩ²), H = √(Λ/3): 10 Killing vectors —
three translations, three rotations, the dilation ∂_t − H x·∂ and three special conformal
generators K_i = 2x_i(η∂_η + x·∂) − (x·x − η²)∂_i in conformal time η = −e^{−Ht}/H (the
conformal Killing vectors of Minkowski space that keep η, since the metric is conformally flat
with factor 1/(Hη)²; from memory, common practice for the Poincaré patch of de Sitter space).
"""

from __future__ import annotations

from pathlib import Path

import pytest
import sympy as sp

from generator.entry.loader import load_entry
from generator.physics.killing_search import is_killing

ROOT = Path(__file__).resolve().parent.parent


def de_sitter_flat():
    return load_entry(ROOT / "catalog" / "backgrounds" / "de-sitter-flat.yaml").spacetime


def special_conformal(st):
    """H² K_x, H² K_y, H² K_z in the entry's spherical chart (module docstring)."""
    t, r, th, ph = st.coordinates
    h = sp.sqrt(st.parameters[0] / 3)
    e, q = sp.exp(-2 * h * t), h**2 * r**2
    s, c = sp.sin, sp.cos
    return [
        [-2 * h * r * s(th) * c(ph), (q + e) * s(th) * c(ph), -(q - e) * c(th) * c(ph) / r,
         (q - e) * s(ph) / (r * s(th))],
        [-2 * h * r * s(th) * s(ph), (q + e) * s(th) * s(ph), -(q - e) * c(th) * s(ph) / r,
         -(q - e) * c(ph) / (r * s(th))],
        [-2 * h * r * c(th), (q + e) * c(th), (q - e) * s(th) / r, sp.Integer(0)],
    ]


@pytest.mark.parametrize("k", [0, 1, 2])
def test_de_sitter_flat_special_conformal_vectors_are_killing(k: int) -> None:
    st = de_sitter_flat()
    vector = special_conformal(st)[k]
    assert is_killing(vector, st)
    # Mutations: the time component doubled, or e^{−2Ht} with the wrong sign in r.
    assert not is_killing([2 * vector[0], *vector[1:]], st)
    t = st.coordinates[0]
    flipped = [sp.sympify(c).subs(sp.exp(-2 * sp.sqrt(st.parameters[0] / 3) * t),
                                  -sp.exp(-2 * sp.sqrt(st.parameters[0] / 3) * t))
               for c in vector]
    assert not is_killing(flipped, st)


@pytest.mark.slow
def test_de_sitter_flat_basis_is_complete() -> None:
    from test_killing_search_known import searched

    _st, listed, result = searched("backgrounds/de-sitter-flat.yaml", keep=7)
    assert len(listed) == 7 and result.complete and len(listed) + len(result.found) == 10


# ---------------------------------------------------------------------------- spinning string
#
# −(dt + 4J dφ)² + dr² + (1 − 4μ)² r² dφ² + dz² is Minkowski space in T = t + 4Jφ,
# φ′ = (1 − 4μ)φ (the local flat chart of Deser, Jackiw & 't Hooft, "Three-dimensional
# Einstein gravity: dynamics of flat space", Ann. Phys. 152 (1984) 220, and Mazur, Phys. Rev.
# Lett. 57 (1986) 929; from memory): its ten local Killing vectors are Poincaré generators
# written back in (t, r, φ, z), e.g. (1 − 4μ)∂_x′ = 4J sin(kφ)/r ∂_t + k cos(kφ) ∂_r −
# sin(kφ)/r ∂_φ with k = 1 − 4μ (derived here by the chain rule; common practice).


def spinning_string():
    from generator.geometry.exactvalues import coordinate_names
    from generator.physics.symmetry_stage import listed_vectors

    load = load_entry(ROOT / "catalog" / "strings-tubes-and-bubbles"
                      / "spinning-cosmic-string.yaml")
    st = load.spacetime
    return st, [xi for _, xi in listed_vectors(load.entry, st, coordinate_names(st))]


def listed(relative: str):
    from generator.geometry.exactvalues import coordinate_names
    from generator.physics.symmetry_stage import listed_vectors

    load = load_entry(ROOT / "catalog" / relative)
    st = load.spacetime
    return st, [xi for _, xi in listed_vectors(load.entry, st, coordinate_names(st))]


# de Sitter (global and open slicings) and anti-de Sitter (open slicing) are maximally
# symmetric: 10 Killing vectors (Hawking & Ellis, The Large Scale Structure of Space-Time,
# 1973, §5.2; from memory). Written as −dt² + a(t)² dΣ² with dΣ² the unit 3-sphere (k = 1) or
# hyperbolic 3-space (k = −1) and n_A its embedding coordinates, the six isometries of Σ and
# the four vectors n_A ∂_t + k (a'/a) ∇̂n_A, which are Killing exactly when
# k(a a'' − a'²) = 1 (a = √(3/Λ) cosh(√(Λ/3) t); α sinh(t/α); ℓ cos(t/ℓ)): derived here from
# Killing's equation for a warped product (common practice), each checked below.
TEN = ["backgrounds/de-sitter-global.yaml", "backgrounds/de-sitter-open.yaml",
       "backgrounds/anti-de-sitter-open.yaml",
       "strings-tubes-and-bubbles/spinning-cosmic-string.yaml"]


@pytest.mark.slow
@pytest.mark.parametrize("relative", TEN)
def test_entry_lists_ten_independent_killing_vectors(relative: str) -> None:
    from generator.physics.killing_search import raises_rank

    st, vectors = listed(relative)
    assert len(vectors) == 10
    assert all(is_killing(xi, st) for xi in vectors)
    assert raises_rank(st, [], vectors) == [True] * 10  # independent, exact modulo a prime


# Entries whose complete bases were written into the entry from the tool's verified search
# (so the search need not run on every check): the count is the isometry dimension of the
# table in test_isometry (flat and maximally symmetric: 10, Poincaré / de Sitter groups;
# R × SO(4) for the static 5D black holes: 7, Tangherlini 1963 and common practice).
LISTED_COMPLETE = [
    ("backgrounds/anti-de-sitter-static.yaml", 10), ("backgrounds/anti-de-sitter-global.yaml", 10),
    ("backgrounds/anti-de-sitter-poincare.yaml", 10), ("backgrounds/de-sitter-flat.yaml", 10),
    ("backgrounds/milne.yaml", 10), ("backgrounds/minkowski-spherical.yaml", 10),
    ("backgrounds/rindler.yaml", 10), ("euclidean-and-initial-data/euclidean-de-sitter.yaml", 10),
    ("strings-tubes-and-bubbles/cosmic-string.yaml", 10), ("backgrounds/de-sitter-static.yaml", 10),
    ("other-dimensions/reissner-nordstrom-5d.yaml", 7),
    ("other-dimensions/schwarzschild-anti-de-sitter-5d.yaml", 7),
]


@pytest.mark.slow
@pytest.mark.parametrize(("relative", "dimension"), LISTED_COMPLETE)
def test_entry_lists_a_complete_independent_basis(relative: str, dimension: int) -> None:
    from generator.physics.killing_search import raises_rank

    st, vectors = listed(relative)
    assert len(vectors) == dimension
    assert all(is_killing(xi, st) for xi in vectors)
    assert raises_rank(st, [], vectors) == [True] * dimension


def test_de_sitter_global_boost_and_a_mutation() -> None:
    st, vectors = listed("backgrounds/de-sitter-global.yaml")
    t, chi, _theta, _phi = st.coordinates
    h = sp.sqrt(st.parameters[0] / 3)
    boost = [sp.cos(chi) / h, -sp.sin(chi) * sp.tanh(h * t), 0, 0]  # n_0 ∂_t/H + tanh ∇̂n_0
    assert is_killing(boost, st)
    assert not is_killing([boost[0], -boost[1], 0, 0], st)  # the sign of k flipped
    assert any(all(sp.simplify(a - b) == 0 for a, b in zip(xi, boost, strict=True))
               for xi in vectors)


def test_spinning_string_translation_and_its_mutations() -> None:
    st, vectors = spinning_string()
    _t, r, phi, _z = st.coordinates
    mu, j = (next(p for p in st.parameters if str(p) == name) for name in ("mu", "J"))
    k = 1 - 4 * mu
    translation = [4 * j * sp.sin(k * phi) / r, k * sp.cos(k * phi), -sp.sin(k * phi) / r, 0]
    assert any(all(sp.simplify(a - b) == 0 for a, b in zip(xi, translation, strict=True))
               for xi in vectors)
    assert is_killing(translation, st)
    assert not is_killing([0, *translation[1:]], st)  # the frame-dragging term dropped
    assert not is_killing([-translation[0], *translation[1:]], st)  # its sign flipped
