"""The exact-field shortcuts of ``physics.exact_sources`` against published solutions and
against mutants (a wrong charge, a wrong sign, a wrong Λ, a tensor that is not Killing).

Sources beside each check:
* Kerr–Newman metric and potential A = −(Qr/Σ)(dt − a sin²θ dφ): E. T. Newman, E. Couch,
  K. Chinnapared, A. Exton, A. Prakash, R. Torrence, "Metric of a rotating, charged mass",
  J. Math. Phys. 6, 918 (1965) (potential in Boyer–Lindquist form as in the textbooks; from
  memory).
* Carter's Killing tensor of Kerr–Newman: B. Carter, "Global structure of the Kerr family of
  gravitational fields", Phys. Rev. 174, 1559 (1968); components as written in
  catalog/isolated-objects/kerr-newman.yaml (from memory, verified there by the SymPy path).
* The metric itself is a Killing tensor (∇g = 0): common practice.
"""

from __future__ import annotations

import sympy as sp
from _known_metrics import kerr_newman, reissner_nordstrom

from generator.geometry.curvature import compute_geometry
from generator.physics.exact_sources import exact_electrovacuum, killing_tensor_vanishes
from generator.physics.matter import maxwell_stress


def _kerr_newman_potential(scale: int = 1, phi_sign: int = 1):
    st = kerr_newman()
    _t, r, theta, _phi = st.coordinates
    _M, a, Q = st.parameters
    sigma = r**2 + a**2 * sp.cos(theta) ** 2
    potential = [-scale * Q * r / sigma, 0, 0,
                 phi_sign * Q * a * r * sp.sin(theta) ** 2 / sigma]
    return st, potential


def test_kerr_newman_potential_solves_einstein_maxwell_exactly():
    st, potential = _kerr_newman_potential()
    geometry = compute_geometry(st)
    found = exact_electrovacuum(st, geometry.einstein, potential, None)
    assert found is not None
    # The returned T_ab is the SymPy path's Maxwell tensor (compared at a rational point).
    from generator.physics.matter import field_strength
    reference = maxwell_stress(field_strength(potential, st.coordinates), geometry)
    _t, r, theta, _phi = st.coordinates
    M, a, Q = st.parameters
    point = {r: sp.Rational(7, 2), theta: sp.pi / 3, M: 1, a: sp.Rational(1, 3),
             Q: sp.Rational(1, 2)}
    for i, j in ((0, 0), (0, 3), (1, 1), (3, 3)):
        assert sp.simplify((found.stress[i, j] - reference[i, j]).subs(point)) == 0


def test_wrong_charge_in_the_potential_is_not_accepted():
    st, potential = _kerr_newman_potential(scale=2)
    assert exact_electrovacuum(st, compute_geometry(st).einstein, potential, None) is None


def test_wrong_sign_of_the_magnetic_part_is_not_accepted():
    st, potential = _kerr_newman_potential(phi_sign=-1)
    assert exact_electrovacuum(st, compute_geometry(st).einstein, potential, None) is None


def test_a_cosmological_constant_the_metric_does_not_have_is_not_accepted():
    st, potential = _kerr_newman_potential()
    Lam = sp.Symbol("Lambda", positive=True)
    assert exact_electrovacuum(st, compute_geometry(st).einstein, potential, Lam) is None


def test_reissner_nordstrom_coulomb_potential():
    """Reissner (1916), Nordström (1918): A = −Q/r dt in Gaussian units (common practice)."""
    st = reissner_nordstrom()
    _t, r, _theta, _phi = st.coordinates
    Q = next(p for p in st.parameters if p.name == "Q")
    geometry = compute_geometry(st)
    assert exact_electrovacuum(st, geometry.einstein, [-Q / r, 0, 0, 0], None) is not None
    assert exact_electrovacuum(st, geometry.einstein, [-Q / r**2, 0, 0, 0], None) is None


def _carter_tensor(st, tamper: bool = False):
    _t, r, theta, _phi = st.coordinates
    M, a, Q = st.parameters
    c, s = sp.cos(theta), sp.sin(theta)
    sigma = r**2 + a**2 * c**2
    delta = r**2 - 2 * M * r + a**2 + Q**2
    k = [[sp.Integer(0)] * 4 for _ in range(4)]
    k[0][0] = a**2 * (r**2 - 2 * M * r * c**2 + Q**2 * c**2 + a**2 * c**2) / sigma
    k[0][3] = k[3][0] = -a * s**2 * (r**4 + a**2 * r**2 + a**2 * r**2 * c**2 + a**4 * c**2
                                     + Q**2 * a**2 * c**2 - 2 * M * a**2 * r * c**2) / sigma
    k[1][1] = -a**2 * c**2 * sigma / delta
    k[2][2] = r**2 * sigma * (2 if tamper else 1)
    k[3][3] = s**2 * (r**6 + 2 * a**2 * r**4 + a**4 * r**2 + a**4 * r**2 * s**2 * c**2
                      + a**6 * s**2 * c**2 + Q**2 * a**4 * s**2 * c**2
                      - 2 * M * a**4 * r * s**2 * c**2) / sigma
    return k


def test_carters_tensor_of_kerr_newman_is_killing():
    st = kerr_newman()
    assert killing_tensor_vanishes(st, _carter_tensor(st))


def test_a_tampered_carter_tensor_is_not_killing():
    st = kerr_newman()
    assert not killing_tensor_vanishes(st, _carter_tensor(st, tamper=True))


def test_the_metric_is_a_killing_tensor_and_r_times_it_is_not():
    st = kerr_newman()
    g = [[st.metric[i, j] for j in range(4)] for i in range(4)]
    r = st.coordinates[1]
    assert killing_tensor_vanishes(st, g)
    assert not killing_tensor_vanishes(st, [[r * x for x in row] for row in g])
