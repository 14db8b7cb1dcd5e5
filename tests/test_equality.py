"""Equality and zero decisions: right claims pass, every perturbation of them fails.

The right values are published invariants (sources beside each); the perturbations are the
mutation tests the verification logic needs: a factor (1 + 1/1000), an extra r**-7 term and a
sign flip must each be rejected, with the method that rejected them reported.
"""

from __future__ import annotations

import pytest
import sympy as sp
from _known_metrics import (
    M,
    Q,
    a,
    flrw_flat,
    kerr,
    kerr_newman,
    kruskal,
    r,
    reissner_nordstrom,
    schwarzschild,
    spacetime,
    t,
    theta,
)

from generator.geometry.curvature import compute_geometry
from generator.geometry.equality import (
    canonical,
    decide_equal,
    decide_zero,
    exact_square_root,
)

SCHWARZSCHILD_K = (
    48 * M**2 / r**6
)  # Cherubini et al., Int. J. Mod. Phys. D 11 (2002) 827 (from memory)
RN_K = (48 * M**2 * r**2 - 96 * M * Q**2 * r + 56 * Q**4) / r**8  # same source (from memory)


def perturbations(value: sp.Expr) -> list[sp.Expr]:
    return [value * (1 + sp.Rational(1, 1000)), value + r**-7, -value]


@pytest.mark.parametrize(
    ("builder", "right"), [(schwarzschild, SCHWARZSCHILD_K), (reissner_nordstrom, RN_K)]
)
def test_right_claim_accepted_and_perturbations_rejected(builder, right) -> None:
    st = builder()
    computed = compute_geometry(st).kretschmann
    accepted = decide_equal(right, computed, st)
    assert (accepted.equal, accepted.method) == (True, "exact")
    assert "normal form of the difference is zero" in accepted.detail
    for wrong in perturbations(right):
        rejected = decide_equal(wrong, computed, st)
        assert rejected.equal is False, wrong
        assert rejected.method == "exact"
        assert rejected.witness is not None and "r" in rejected.witness


def test_witness_really_separates_the_two_sides() -> None:
    st = schwarzschild()
    decision = decide_equal(SCHWARZSCHILD_K + r**-7, SCHWARZSCHILD_K, st)
    point = {
        sp.Symbol(k, real=True) if k != "M" else M: sp.sympify(v)
        for k, v in decision.witness.items()
        if k in ("M", "r")
    }
    assert (r**-7).xreplace(point) != 0


def test_trigonometric_identity_is_exact() -> None:
    st = schwarzschild()
    decision = decide_zero(sp.sin(theta) ** 2 + sp.cos(theta) ** 2 - 1, st)
    assert (decision.equal, decision.method) == (True, "exact")
    tangent = decide_equal(sp.tan(theta) * sp.cos(theta), sp.sin(theta), st)
    assert (tangent.equal, tangent.method) == (True, "exact")
    double = decide_equal(sp.sin(2 * theta), 2 * sp.sin(theta) * sp.cos(theta), st)
    assert (double.equal, double.method) == (True, "exact")
    wrong = decide_equal(sp.sin(theta) ** 2, 1 + sp.cos(theta) ** 2, st)
    assert wrong.equal is False


def test_square_root_forms_are_exact() -> None:
    st = schwarzschild()
    root = sp.sqrt(1 - 2 * M / r)
    assert decide_equal(root**2, (r - 2 * M) / r, st).method == "exact"
    assert decide_equal(root**2, (r - 2 * M) / r, st).equal is True
    assert decide_equal(1 / root, root * r / (r - 2 * M), st).equal is True
    assert decide_equal(root**3, root * (1 - 2 * M / r), st).method == "exact"
    sign = decide_equal(root, -root, st)
    assert sign.equal is False


def test_related_radicals_are_decided_by_the_signs_of_their_factors() -> None:
    # sqrt(1 - 2M/r) and sqrt(r - 2M)/sqrt(r) are different generators of the field; with
    # r > 2M > 0 proved on the domain the first is the second (principal roots of positive
    # reals multiply; common practice), and the decision says it went by cases.
    st = schwarzschild()
    decision = decide_equal(sp.sqrt(1 - 2 * M / r), sp.sqrt(r - 2 * M) / sp.sqrt(r), st)
    assert (decision.equal, decision.method) == (True, "by cases")
    wrong = decide_equal(sp.sqrt(1 - 2 * M / r), sp.sqrt(r - M) / sp.sqrt(r), st)
    assert wrong.equal is False


def test_free_function_forms_are_exact() -> None:
    st = flrw_flat()
    scale = st.functions[0]
    lhs = sp.diff(scale**3, t, 2)
    rhs = 6 * scale * sp.Derivative(scale, t) ** 2 + 3 * scale**2 * sp.Derivative(scale, (t, 2))
    decision = decide_equal(lhs, rhs, st)
    assert (decision.equal, decision.method) == (True, "exact")
    wrong = decide_equal(lhs, rhs + sp.Derivative(scale, (t, 3)) / 10**6, st)
    assert wrong.equal is False
    assert "Derivative(a(t), (t, 3))" in wrong.witness


def test_exponential_and_lambert_w_are_exact() -> None:
    st = kruskal()
    T, X = st.coordinates[:2]
    w = sp.LambertW((X**2 - T**2) / sp.E)
    decision = decide_equal(sp.exp(w) * w, (X**2 - T**2) / sp.E, st)
    assert (decision.equal, decision.method) == (True, "exact")
    assert decide_equal(sp.exp(2 * X) * sp.exp(-X), sp.exp(X), st).method == "exact"


def test_outside_the_field_is_sampled() -> None:
    # Floats do not fit the exact field; the decision must be sampled (30 digits, 1e-20).
    st = schwarzschild()
    decision = decide_equal(sp.Float("0.5", 30) * r, r / 2, st)
    assert (decision.equal, decision.method) == (True, "sampled")
    wrong = decide_equal(sp.Float("0.5000001", 30) * r, r / 2, st)
    assert (wrong.equal, wrong.method) == (False, "sampled")


def test_abs_is_decided_on_the_domain() -> None:
    # |r| = r holds where the entry lives (r > 2M > 0), though not as a polynomial identity.
    st = schwarzschild()
    assert decide_equal(sp.Abs(r), r, st).equal is True
    assert decide_equal(sp.Abs(r), -r, st).equal is False


@pytest.mark.slow
def test_kerr_claim_and_its_perturbations() -> None:
    # Kerr Kretschmann scalar (from memory; C. Cherubini et al. 2002, R. C. Henry 2000).
    st = kerr()
    c = sp.cos(theta)
    right = (
        48
        * M**2
        * (r**6 - 15 * a**2 * r**4 * c**2 + 15 * a**4 * r**2 * c**4 - a**6 * c**6)
        / (r**2 + a**2 * c**2) ** 6
    )
    computed = compute_geometry(st).kretschmann
    assert decide_equal(right, computed, st).equal is True
    for wrong in perturbations(right):
        assert decide_equal(wrong, computed, st).equal is False


def test_canonical_is_deterministic_and_equal() -> None:
    st = schwarzschild()
    value = sp.sin(theta) ** 2 * (r**2 - 4 * M**2) / (r - 2 * M)
    shown = canonical(value, st)
    assert shown == canonical(sp.expand(value), st)
    assert decide_equal(shown, value, st).equal is True
    assert shown == (r + 2 * M) * sp.sin(theta) ** 2


def test_canonical_outside_the_field() -> None:
    st = spacetime((t, r), (), sp.diag(-1, 1), signature="-+")
    shown = canonical(sp.Float("0.5") * r + r / 2, st)
    assert shown == sp.factor(sp.cancel(sp.Float("0.5") * r + r / 2))


def test_undecidable_when_the_domain_is_empty() -> None:
    st = spacetime((t, r), (M,), sp.diag(-1, 1), domain=(sp.Gt(r, 1), sp.Lt(r, 0)), signature="-+")
    decision = decide_equal(sp.Float("0.5") * r, r / 2, st)
    assert (decision.equal, decision.method) == (None, "failed")


def test_claims_with_other_assumptions_still_compare_with_the_metric() -> None:
    # A claim read with plain symbols and an assumption-free a(t) means the entry's r, M and
    # scale factor; SymPy would otherwise treat them as unrelated variables.
    st = schwarzschild()
    plain_r, plain_m = sp.Symbol("r"), sp.Symbol("M")
    assert decide_equal(48 * plain_m**2 / plain_r**6, SCHWARZSCHILD_K, st).equal is True
    assert decide_equal(47 * plain_m**2 / plain_r**6, SCHWARZSCHILD_K, st).equal is False
    cosmos = flrw_flat()
    plain_a = sp.Function("a")(t)
    right = 6 * sp.Derivative(plain_a, t) ** 2 / plain_a**2
    scale = cosmos.functions[0]
    computed = 6 * sp.Derivative(scale, t) ** 2 / scale**2
    decision = decide_equal(right, computed, cosmos)
    assert (decision.equal, decision.method) == (True, "exact")


def test_exact_square_root_gives_a_root_whose_square_is_the_input() -> None:
    # Kerr–Newman's t–phi block of T^a_b has the discriminant Q**4/(64 pi**2 Sigma**4) in
    # disguise (Sigma = r**2 + a**2 cos**2 theta; from memory, checked here by squaring).
    st = kerr_newman()
    sigma = r**2 + a**2 - a**2 * sp.sin(theta) ** 2
    disguised = sp.expand(Q**4 * sigma**2) / (64 * sp.pi**2 * sp.expand(sigma**6))
    root = exact_square_root(disguised, st)
    assert root is not None
    assert not any(p.exp.is_Rational and p.exp.q == 2 for p in root.atoms(sp.Pow))
    assert decide_equal(root**2, disguised, st).equal is True
    assert exact_square_root(r**2 - 2 * a * r, st) is None
