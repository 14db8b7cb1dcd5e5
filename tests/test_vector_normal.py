"""Found Killing vectors are shown divided by their content, with a positive leading
coefficient for small parameters (issue 17): the conical-deficit string's basis reads like the
flat chart's with φ′ = (1 − 4μ)φ.

Source: a straight cosmic string, −dt² + dr² + (1 − 4μ)² r² dφ² + dz², is locally Minkowski
space in the chart φ′ = (1 − 4μ)φ (A. Vilenkin, "Gravitational field of vacuum domain walls
and strings", Phys. Rev. D 23 (1981) 852; from memory). Its translations, boosts and
rotations are those of Minkowski space written in (r, φ′): e.g. ∂_x′ = cos φ′ ∂_r −
sin φ′/(r(1 − 4μ)) ∂_φ, and (1 − 4μ) times it has no parameter denominator (common practice).
"""

from __future__ import annotations

import pytest
import sympy as sp

from generator.physics.vector_normal import normalised

mu = sp.Symbol("mu", positive=True)
t, r, phi, z = sp.symbols("t r phi z")
CHART = (t, r, phi, z)
K = 1 - 4 * mu  # the rate, written as it tends to 1 for a light string
C, S = sp.cos(phi * K), sp.sin(phi * K)


def proportional(x, y) -> bool:
    """y = c·x with c a non-zero constant (free of the coordinates)."""
    ratios = {sp.simplify(b / a) for a, b in zip(x, y, strict=True) if a != 0}
    zeros_agree = all((a == 0) == (sp.simplify(b) == 0) for a, b in zip(x, y, strict=True))
    return zeros_agree and len(ratios) == 1 and not (ratios.pop().free_symbols & set(CHART))


# ---------------------------------------------------------------------------- unit cases

def test_the_solvers_scale_is_cleared() -> None:
    # The form the search used to show: (4μ − 1)/(4μ) cos(φ(4μ − 1)) ∂_r − …/(4μ r) ∂_φ.
    k = 4 * mu - 1
    raw = [0, k * sp.cos(phi * k) / (4 * mu), -sp.sin(phi * k) / (4 * mu * r), 0]
    shown = normalised(raw, CHART)
    assert sp.simplify(shown[1] - K * C) == 0 and sp.simplify(shown[2] + S / r) == 0
    assert shown[1].has(sp.cos(phi * K))  # the rate written as 1 − 4μ, not 4μ − 1
    assert proportional(raw, shown)


def test_a_common_polynomial_factor_is_taken_out() -> None:
    raw = [0, z * (1 - 16 * mu**2) * C, -z * (1 + 4 * mu) * S / r,
           -r * (1 - 16 * mu**2) * C]
    shown = normalised(raw, CHART)
    assert sp.simplify(shown[1] - z * K * C) == 0  # 1 − 16μ² = (1 − 4μ)(1 + 4μ)
    assert sp.simplify(shown[2] + z * S / r) == 0
    assert proportional(raw, shown)


@pytest.mark.parametrize("raw, expected", [
    ([sp.Integer(0), 0, sp.Rational(-1, 2), 0], [0, 0, 1, 0]),  # −½ ∂_φ → ∂_φ
    ([z / 3, 0, 0, t / 3], [z, 0, 0, t]),
    ([-2 * z, 0, 0, -2 * t], [z, 0, 0, t]),
    ([mu * z, 0, 0, mu * t], [z, 0, 0, t]),
])
def test_rational_and_parameter_content(raw, expected) -> None:
    shown = normalised(raw, CHART)
    assert all(sp.simplify(a - b) == 0 for a, b in zip(shown, expected, strict=True))


def test_never_changes_the_direction() -> None:
    # A mutation: if the normaliser dropped a term or divided one component only, the result
    # would stop being proportional to the input; the check must notice that.
    raw = [r * (4 * mu - 1) * sp.cos(phi * (4 * mu - 1)) / (4 * mu),
           t * (4 * mu - 1) * sp.cos(phi * (4 * mu - 1)) / (4 * mu),
           -t * sp.sin(phi * (4 * mu - 1)) / (4 * mu * r), 0]
    shown = normalised(raw, CHART)
    assert proportional(raw, shown)
    assert not proportional(raw, [shown[0], 2 * shown[1], shown[2], 0])
    assert not proportional(raw, [shown[0], shown[1], 0, 0])


def test_the_zero_vector_is_left_alone() -> None:
    assert normalised([sp.Integer(0)] * 4, CHART) == [0, 0, 0, 0]


# ---------------------------------------------------------------------------- the entry


@pytest.mark.slow
def test_cosmic_string_basis_reads_like_the_flat_charts() -> None:
    from test_killing_search_known import searched

    st, _listed, result = searched("strings-tubes-and-bubbles/cosmic-string.yaml", keep=4)
    t_, r_, phi_, z_ = st.coordinates
    m = st.parameters[0]
    swap = {t_: t, r_: r, phi_: phi, z_: z, m: mu}
    found = [[sp.sympify(c).xreplace(swap) for c in xi] for xi in result.found]
    assert result.complete and len(found) == 6
    for xi in found:  # no parameter left in a denominator, no rate written 4μ − 1
        for c in xi:
            assert mu not in sp.fraction(sp.together(c))[1].free_symbols
            assert not c.has(sp.cos(phi * (4 * mu - 1))) and not c.has(sp.sin(phi * (4 * mu - 1)))
    published = [
        [0, K * C, -S / r, 0],  # (1 − 4μ) ∂_x′
        [0, K * S, C / r, 0],  # (1 − 4μ) ∂_y′
        [r * K * C, t * K * C, -t * S / r, 0],  # (1 − 4μ)(x′ ∂_t + t ∂_x′)
    ]
    for vector in published:
        assert any(all(sp.simplify(a - b) == 0 for a, b in zip(xi, vector, strict=True))
                   for xi in found), vector
