"""The shortcuts of the Petrov test and the Weyl frame (issue 21, heavy entries fast).

* the type-D test divides once, μ = t3/t2, instead of multiplying by t2², t2t3 and t3²: the
  complex quotient is exact (μ·t2 = t3 in normal form) and μ is the published −κΨ2;
* (Q − λ)(Q + 2λ) with λ = −μ vanishes for type D fields and not for a type II field or a
  wrong λ (mutations);
* the operator's powers are computed once per operator and never handed to another one;
* a Gram–Schmidt norm depends on the set of vectors before it, not on their order (what the
  sign memo of the frame search relies on), and does depend on that set (mutation);
* the first tetrad's checks are still made, and shown, when no rotation succeeds.
"""

from __future__ import annotations

import sympy as sp
from _known_metrics import M, a, kasner, kerr, r, schwarzschild, theta
from classify_cases import make_entry, prepared

from generator.geometry.curvature import compute_geometry_and_weyl
from generator.physics import principal_frame as pf
from generator.physics.petrov import (
    FieldAlgebra,
    operator_powers,
    type_d_residue,
)


def operator_of(st):
    _, operator = compute_geometry_and_weyl(st, None)
    assert operator is not None
    return operator


def mu_of(operator, st):
    algebra = FieldAlgebra(operator.field, st)
    powers = operator_powers(operator, st)
    return algebra, powers, algebra.quotient(powers.t3, powers.t2, powers.sigma2)


def all_zero(grid) -> bool:
    return all(x.is_zero() for row in grid for x in row)


# ---------------------------------------------------------------------------- μ = t3/t2


def test_mu_times_t2_is_t3_exactly_and_a_wrong_quotient_is_not() -> None:
    # (x + iσy)(u + iσv) = (xu − σ²yv) + iσ(xv + yu) (common practice); Kerr has both parts.
    st = kerr()
    operator = operator_of(st)
    algebra, powers, mu = mu_of(operator, st)
    f = operator.field
    assert not mu[1].is_zero()
    back = algebra.number(mu, powers.t2, powers.sigma2)
    assert f.equal(back[0], powers.t3[0]) and f.equal(back[1], powers.t3[1])
    # Mutation: the conjugate quotient (a sign slip in the imaginary part) is caught.
    wrong = algebra.number((mu[0], f.neg(mu[1])), powers.t2, powers.sigma2)
    assert not (f.equal(wrong[0], powers.t3[0]) and f.equal(wrong[1], powers.t3[1]))


def test_schwarzschild_mu_is_m_over_r_cubed() -> None:
    # t3/t2 = −κΨ2 with κ = 1 (weyl_frame.KAPPA) and Ψ2 = −M/r³ (Griffiths & Podolský 2009,
    # "Exact Space-Times", §8.1 — from memory): μ = M/r³, real.
    st = schwarzschild()
    operator = operator_of(st)
    _, _, mu = mu_of(operator, st)
    assert mu[1].is_zero()
    assert sp.simplify(operator.field.display(mu[0]) - M / r**3) == 0


def test_kerr_mu_is_minus_the_published_psi2() -> None:
    # Ψ2 = −M/(r − i a cos θ)³ in Kinnersley's tetrad (Teukolsky 1973, from memory), so
    # μ = t3/t2 = −Ψ2; compared at rational points with σ = √(−det g) = Σ sin θ.
    st = kerr()
    operator = operator_of(st)
    _, _, mu = mu_of(operator, st)
    f = operator.field
    sigma = (r**2 + a**2 * sp.cos(theta) ** 2) * sp.sin(theta)
    ours = f.display(mu[0]) + sp.I * sigma * f.display(mu[1])
    published = M / (r - sp.I * a * sp.cos(theta)) ** 3
    for values in ({M: 1, a: sp.Rational(1, 2), r: 3, theta: sp.Rational(7, 10)},
                   {M: 2, a: sp.Rational(3, 2), r: sp.Rational(11, 3), theta: 2}):
        difference = complex(sp.N((ours - published).subs(values), 30))
        assert abs(difference) < 1e-20


# ---------------------------------------------------------------------------- the D residue


def test_the_residue_vanishes_for_type_d_and_not_for_a_wrong_lambda() -> None:
    # Schwarzschild and Kerr are type D (Stephani et al. 2003, Table 15.1 — from memory).
    for st in (schwarzschild(), kerr()):
        operator = operator_of(st)
        algebra, powers, mu = mu_of(operator, st)
        assert all_zero(type_d_residue(algebra, operator, powers, mu))
        # Mutation: λ off by a factor 2 leaves a non-zero residue.
        f = operator.field
        doubled = (f.scale(mu[0], 2), f.scale(mu[1], 2))
        assert not all_zero(type_d_residue(algebra, operator, powers, doubled))


def test_the_residue_does_not_vanish_for_a_type_ii_kundt_wave() -> None:
    # ds² = 2 du dr + 2 r² x du² + dx² + dy² is type II (Griffiths & Podolský 2009, §18.2 —
    # from memory; the same case as tests/test_petrov.py's Kundt waves).
    _entry, st, _geometry = prepared(make_entry("u r x y",
                                                "2*du*dr + 2*(r**2*x)*du**2 + dx**2 + dy**2"))
    operator = operator_of(st)
    algebra, powers, mu = mu_of(operator, st)
    assert not (powers.t2[0].is_zero() and powers.t2[1].is_zero())
    assert not all_zero(type_d_residue(algebra, operator, powers, mu))


# ---------------------------------------------------------------------------- the powers


def test_powers_are_kept_for_one_operator_only() -> None:
    # tr Q² = 2κ²I with I = 3Ψ2² = 3M²/r⁶ for Schwarzschild (§8.1 as above): t2 = 6M²/r⁶.
    kerr_st, schwarzschild_st = kerr(), schwarzschild()
    kerr_op, schwarzschild_op = operator_of(kerr_st), operator_of(schwarzschild_st)
    first = operator_powers(kerr_op, kerr_st)
    assert operator_powers(kerr_op, kerr_st) is first
    other = operator_powers(schwarzschild_op, schwarzschild_st)
    assert other is not first
    f = schwarzschild_op.field
    assert sp.simplify(f.display(other.t2[0]) - 6 * M**2 / r**6) == 0 and other.t2[1].is_zero()
    again = operator_powers(kerr_op, kerr_st)
    g = kerr_op.field
    assert all(g.equal(x, y) for x, y in zip((*again.t2, *again.t3), (*first.t2, *first.t3),
                                             strict=True))


# ---------------------------------------------------------------------------- Gram–Schmidt


def test_a_gram_schmidt_norm_depends_on_the_set_before_it_not_its_order() -> None:
    # The k-th norm is det Gram(e_1..e_k+1)/det Gram(e_1..e_k) (common practice, linear
    # algebra): Kerr's off-diagonal metric in Boyer–Lindquist coordinates.
    st = kerr()
    frame, *_ = pf.build_tetrad(operator_of(st), st)
    f = frame.f
    _, norms = pf._gram_schmidt(frame, (0, 1, 2, 3))
    _, swapped = pf._gram_schmidt(frame, (1, 0, 2, 3))
    assert f.equal(norms[2], swapped[2]) and f.equal(norms[3], swapped[3])
    # Mutation: a different set before the third vector, or the same vector after a different
    # set, gives a different norm, so the memo must key on the set and the vector.
    _, other = pf._gram_schmidt(frame, (0, 2, 1, 3))
    assert not f.equal(norms[2], other[2])
    _, phi_after_t_r = pf._gram_schmidt(frame, (0, 1, 3, 2))
    _, phi_after_r = pf._gram_schmidt(frame, (1, 3, 0, 2))
    assert not f.equal(phi_after_t_r[2], phi_after_r[1])  # g_φφ − g_tφ²/g_tt against g_φφ
    assert not f.equal(norms[1], swapped[1])


# ---------------------------------------------------------------------------- first tetrad


def test_the_unrotated_tetrad_is_still_checked_when_no_rotation_succeeds() -> None:
    # Generic Kasner is type I (Stephani et al. 2003, §13.3 — from memory): no rotation is
    # tried to success, and the tool's own tetrad comes back with its checks.
    st = kasner()
    found = pf.principal_frame(operator_of(st), st, "I")
    assert not found.principal
    assert any("l·n = −1" in check for check in found.checks)
    assert any("g_ab" in check for check in found.checks)


# ---------------------------------------------------------------------------- sum of products


def test_sum_of_products_is_the_normal_form_of_the_sum_of_products() -> None:
    # Field arithmetic (common practice): one common denominator normalised once must give
    # the normal form that a product-by-product sum gives, in a tower with square roots
    # (Kerr's tetrad: i, √2, the Gram–Schmidt roots) where normal forms are reduced and
    # rationalised, and with zero and repeated-denominator terms.
    st = kerr()
    frame, ell, n, m, _how, _k = pf.build_tetrad(operator_of(st), st)
    f = frame.f
    mb = frame.conj(m)
    cases = [list(zip(ell, n, strict=True)), list(zip(m, mb, strict=True)),
             [(ell[0], m[2]), (f.zero(), n[1]), (n[0], m[2]), (m[3], mb[3]), (ell[1], ell[1])],
             [(frame.g[a][b], f.mul(ell[a], n[b])) for a in range(4) for b in range(4)]]
    for pairs in cases:
        expected = f.sum([f.mul(x, y) for x, y in pairs])
        assert f.equal(f.sum_of_products(pairs), expected)
    assert f.equal(f.sum_of_products([]), f.zero())
    # The metric contracted with the tetrad: l·n = −1 and m·m̄ = 1 (the normalisation).
    products = [(frame.g[a][b], f.mul(ell[a], n[b])) for a in range(4) for b in range(4)]
    assert f.equal(f.sum_of_products(products), f.const(-1))
    triples = [(frame.g[a][b], m[a], mb[b]) for a in range(4) for b in range(4)]
    assert f.equal(f.sum_of_products(triples), f.one())
    # Mutation: dropping a non-zero term changes the value.
    nonzero = [(x, y) for x, y in products if not x.is_zero() and not y.is_zero()]
    assert len(nonzero) >= 2
    assert not f.equal(f.sum_of_products(nonzero[1:]), f.const(-1))


# ---------------------------------------------------------------------------- Ψ display


def test_kasner_scalars_with_shared_factoring_match_an_independent_weyl_tensor() -> None:
    # Kasner (E. Kasner, Am. J. Math. 43 (1921) 217) with p = (−2/7, 3/7, 6/7), which meets
    # Σp = Σp² = 1: type I with Ψ0 = Ψ4 and Ψ2 non-zero and different (common practice for
    # a diagonal Bianchi I metric). The five contractions share their factored sums; each Ψ
    # must still be its own contraction, here against the Weyl tensor computed with plain
    # SymPy by tests/test_principal_frame.py's textbook formulas, in the same frame
    # l, n = (e0 ± e1)/√2, m = (e2 + i e3)/√2.
    from _known_metrics import spacetime, t, x, y, z
    from test_principal_frame import contract, sympy_weyl

    from generator.geometry.curvature import compute_geometry_and_weyl as geometry_of
    from generator.geometry.sampling import sample_points
    from generator.physics.petrov import petrov_type

    p = (sp.Rational(-2, 7), sp.Rational(3, 7), sp.Rational(6, 7))
    st = spacetime((t, x, y, z), (), sp.diag(-1, *(t ** (2 * q) for q in p)), (sp.Gt(t, 0),))
    geometry, operator = geometry_of(st, None)
    result = petrov_type(geometry, st, sample_points(st, 4, 3), operator)
    assert result.type == "I" and result.weyl_scalars is not None
    point = {t: sp.Rational(3, 2)}
    scale = [1.0, *(float(sp.N((t ** -q).subs(point), 30)) for q in p)]
    e = [[scale[a] if b == a else 0.0 for b in range(4)] for a in range(4)]
    r2 = 2 ** 0.5
    ell = [(e[0][k] + e[1][k]) / r2 for k in range(4)]
    n = [(e[0][k] - e[1][k]) / r2 for k in range(4)]
    m = [(e[2][k] + 1j * e[3][k]) / r2 for k in range(4)]
    mb = [(e[2][k] - 1j * e[3][k]) / r2 for k in range(4)]
    weyl = sympy_weyl(st, point)
    expected = {"Psi0": contract(weyl, (ell, m, ell, m)), "Psi1": contract(weyl, (ell, n, ell, m)),
                "Psi2": contract(weyl, (ell, m, mb, n)), "Psi3": contract(weyl, (ell, n, mb, n)),
                "Psi4": contract(weyl, (n, mb, n, mb))}
    assert abs(expected["Psi2"]) > 1e-3 and abs(expected["Psi0"] - expected["Psi2"]) > 1e-3
    for name, value in expected.items():
        ours = complex(sp.N(result.weyl_scalars[name].subs(point), 30))
        assert abs(ours - complex(value)) < 1e-9 * max(1.0, abs(complex(value))), name
