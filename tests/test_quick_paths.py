"""Three short cuts taken on every entry's check, each against the long way it replaces:

* the bracket table of Killing vectors with constant components (``lie_algebra.structure``)
  is empty without jets — checked against SymPy's own commutator and against the jets'
  table;
* the horizon-area integral with the factor free of the angle taken out
  (``horizons.integrate_separated``) — checked against ``sympy.integrate`` of the whole;
* the display factoring of the Weyl scalars over Q(i) (``weyl_frame.gaussian_factored``) —
  checked against ``sympy.factor(..., domain=QQ_I)``, expression for expression.

Sources: [X, Y]^a = X^b ∂_b Y^a − Y^b ∂_b X^a (common practice); Kerr's Ψ2 = −M/(r − ia cos θ)³
in the Kinnersley tetrad (Teukolsky, Astrophys. J. 185, 635, 1973, eq. 4.4, from memory) and
Kerr–Newman's Ψ2 with the extra Q² term (from memory); the horizon area 4π(r₊² + a²) of Kerr
(Misner, Thorne & Wheeler, Gravitation, 1973, §33.4, from memory)."""

from __future__ import annotations

from pathlib import Path

import pytest
import sympy
from sympy import I, cos, sin

from generator.entry.loader import load_entry
from generator.geometry.exactvalues import coordinate_names
from generator.physics import lie_algebra
from generator.physics.horizons import integrate_separated
from generator.physics.lie_algebra import commutator, expand_by_one_jet, structure
from generator.physics.symmetry_stage import listed_vectors
from generator.physics.weyl_frame import gaussian_factored

ROOT = Path(__file__).resolve().parent.parent
M, Q, a, r, theta, phi, L = sympy.symbols("M Q a r theta phi L")


def listed_basis(relative: str):
    load = load_entry(ROOT / "catalog" / relative)
    st = load.spacetime
    return st, [xi for _, xi in listed_vectors(load.entry, st, coordinate_names(st))]


@pytest.mark.parametrize("relative", ["isolated-objects/kerr-newman.yaml",
                                      "backgrounds/minkowski-cartesian.yaml"])
def test_constant_fields_commute_as_sympy_and_the_jets_say(relative: str) -> None:
    st, basis = listed_basis(relative)
    constant = [xi for xi in basis
                if not any(sympy.sympify(c).free_symbols & set(st.coordinates) for c in xi)]
    assert len(constant) >= 2
    for i in range(len(constant)):
        for j in range(i + 1, len(constant)):
            assert all(sympy.simplify(c) == 0
                       for c in commutator(constant[i], constant[j], st.coordinates))
    pairs = [(i, j) for i in range(len(constant)) for j in range(i + 1, len(constant))]
    by_jets = expand_by_one_jet(pairs, constant, st)
    assert by_jets is not None
    assert all(v is not None and all(c == 0 for c in v) for v in by_jets.values())
    table, name = structure(st, constant, True)
    assert table == ()
    assert name == lie_algebra.recognise((), len(constant))


def test_a_rotation_among_translations_keeps_its_brackets() -> None:
    """A mutant taking the short cut for any basis would lose [∂_x, x∂_y − y∂_x] = ∂_y."""
    st, basis = listed_basis("backgrounds/minkowski-cartesian.yaml")
    x, y = st.coordinates[1:3]
    rotation = [sympy.Integer(0), -y, x, sympy.Integer(0)]
    translations = [xi for xi in basis if list(xi) in ([0, 1, 0, 0], [0, 0, 1, 0])]
    assert len(translations) == 2
    chosen = [*translations, rotation]
    assert not lie_algebra._constant_components(chosen, st)
    table, _ = structure(st, chosen, False)
    assert table, "the rotation's brackets with the translations are not zero"


@pytest.mark.parametrize("integrand, variable, low, high", [
    ((r**2 + a**2) * sin(theta), theta, 0, sympy.pi),
    (2 * sympy.pi * (M**2 + Q**2) * sin(theta) * cos(theta)**2, theta, 0, sympy.pi),
    ((r**2 + a**2) * sin(theta), phi, 0, 2 * sympy.pi),
    (L**2 * sin(theta)**3, theta, 0, sympy.pi / 2),
    (sympy.Integer(7), phi, 0, 2 * sympy.pi),
])
def test_integral_with_the_constant_taken_out(integrand, variable, low, high) -> None:
    whole = sympy.integrate(integrand, (variable, low, high))
    assert sympy.simplify(integrate_separated(integrand, variable, low, high) - whole) == 0


KERR_PSI2 = -M / (r - I * a * cos(theta))**3
KERR_NEWMAN_PSI2 = (-(-I * M * a**3 * cos(theta)**3 - 3 * M * a**2 * r * cos(theta)**2
                      + 3 * I * M * a * r**2 * cos(theta) + M * r**3
                      + Q**2 * a**2 * cos(theta)**2 - 2 * I * Q**2 * a * r * cos(theta)
                      - Q**2 * r**2) / (a**2 * cos(theta)**2 + r**2)**3)


@pytest.mark.parametrize("expr", [
    KERR_NEWMAN_PSI2,
    sympy.together(sympy.expand(KERR_PSI2 * (r + I * a * cos(theta))**3)
                   / sympy.expand((r**2 + a**2 * cos(theta)**2)**3)),
    (r + I * a) / (r**2 + 1),  # nothing in common with a denominator that splits
    (r**2 + a**2) / (r**2 - a**2) * I,  # a real denominator that does not split over Q(i)
    I * M * (r - I * a)**2 / (r**3 * (r**2 + a**2)),
    (3 + 4 * I) * sympy.Integer(5) / 2,
])
def test_display_factoring_is_sympys(expr) -> None:
    expected = sympy.factor(expr, domain=sympy.QQ_I)
    found = gaussian_factored(expr)
    assert found == expected
    assert sympy.cancel(found - expr) == 0


def test_kerr_newman_psi2_reads_with_one_cubic_pole() -> None:
    found = gaussian_factored(KERR_NEWMAN_PSI2)
    denominator = sympy.fraction(found)[1]
    assert sympy.degree(sympy.Poly(denominator.subs(cos(theta), sympy.Symbol("c")), r)) == 4
    assert sympy.cancel(found - (-(M * (r + I * a * cos(theta)) - Q**2)
                                 / ((r - I * a * cos(theta))**3 * (r + I * a * cos(theta))))) == 0
