"""Claimed Killing tensors and conformal symmetries, principal-frame Weyl scalars, the complex
invariants, and the count of independent invariants — each against a published or
hand-derived value, with mutations that must be rejected."""

from __future__ import annotations

import random
from pathlib import Path

import mpmath
import sympy
from classify_cases import FILE, kerr_entry, make_entry, prepared, schwarzschild_entry, text

from generator.entry.loader import load_entry
from generator.errors import SourcePos
from generator.geometry.curvature import compute_geometry, compute_geometry_and_weyl
from generator.model import Claims, ConformalClaim, TensorClaim
from generator.physics.classify import classify
from generator.physics.killing_tensors import check_all
from generator.physics.petrov import petrov_type
from generator.physics.weyl_frame import weyl_frame

CATALOG = Path(__file__).resolve().parents[1] / "catalog"
POS = SourcePos(FILE, 70, 5)


def carter(**override: str) -> TensorClaim:
    """Carter's tensor of Kerr, K^ab = δθ δθ + V V − a² cos²θ g^ab with V = a sinθ ∂_t +
    ∂_φ/sinθ, lowered with g: read off Carter's separation of the Hamilton–Jacobi equation
    (Carter, Phys. Rev. 174 (1968) 1559; Walker & Penrose 1970; from memory), lowered by
    hand with SymPy."""
    sigma = "(r**2 + a**2*cos(theta)**2)"
    components = {
        "t t": f"a**2*(r**2 - 2*M*r*cos(theta)**2 + a**2*cos(theta)**2)/{sigma}",
        "t phi": f"-a*sin(theta)**2*(r**4 + a**2*r**2 + a**2*r**2*cos(theta)**2 "
                 f"+ a**4*cos(theta)**2 - 2*M*a**2*r*cos(theta)**2)/{sigma}",
        "r r": f"-a**2*cos(theta)**2*{sigma}/(r**2 - 2*M*r + a**2)",
        "theta theta": f"r**2*{sigma}",
        "phi phi": f"sin(theta)**2*(r**6 + 2*a**2*r**4 + a**4*r**2 + a**4*r**2*sin(theta)**2"
                   f"*cos(theta)**2 + a**6*sin(theta)**2*cos(theta)**2 - 2*M*a**4*r"
                   f"*sin(theta)**2*cos(theta)**2)/{sigma}",
    }
    components.update(override)
    return TensorClaim("Carter", tuple((tuple(k.split()), text(v))
                                       for k, v in components.items()), POS)


def tensor_verdicts(entry_builder, *claims: TensorClaim):
    entry, spacetime, geometry = prepared(entry_builder(claims=Claims(killing_tensors=claims)))
    return check_all(entry, spacetime, geometry)


def test_carters_tensor_of_kerr_is_a_killing_tensor() -> None:
    verdicts, problems = tensor_verdicts(kerr_entry, carter())
    assert problems == []
    assert verdicts[0].ok and verdicts[0].detail == "∇_(a K_bc) = 0"


def test_a_wrong_carter_tensor_is_rejected_with_its_components() -> None:
    # Mutation: the r r component with the wrong sign.
    sigma = "(r**2 + a**2*cos(theta)**2)"
    verdicts, problems = tensor_verdicts(
        kerr_entry, carter(**{"r r": f"a**2*cos(theta)**2*{sigma}/(r**2 - 2*M*r + a**2)"}))
    assert not verdicts[0].ok
    assert "(∇K)_(r,r,theta)" in verdicts[0].detail
    assert problems[0].code == "claim.killing-tensor"


def test_a_non_constant_multiple_of_the_metric_is_not_a_killing_tensor() -> None:
    # r² g is not Killing (∇(f g) = df ⊗ g), while g itself is (common practice).
    metric = {"t t": "-(1 - 2*M/r)", "r r": "1/(1 - 2*M/r)", "theta theta": "r**2",
              "phi phi": "r**2*sin(theta)**2"}
    as_claim = [TensorClaim(None, tuple((tuple(k.split()), text(f"{scale}*({v})"))
                                        for k, v in metric.items()), POS)
                for scale in ("1", "r**2")]
    verdicts, problems = tensor_verdicts(schwarzschild_entry, *as_claim)
    assert [v.ok for v in verdicts] == [True, False]
    assert len(problems) == 1


def conformal(vector: dict[str, str], factor: str) -> ConformalClaim:
    return ConformalClaim(tuple((k, text(v)) for k, v in vector.items()), text(factor), POS)


def sphere_entry(**kw: object):
    return make_entry("theta phi", "dtheta**2 + sin(theta)**2*dphi**2", {},
                      ("0 < theta < pi",), signature="++", **kw)


def test_conformal_killing_vector_of_the_sphere() -> None:
    # ξ = sin θ ∂_θ (the gradient of −cos θ) gives L_ξ g = 2 cos θ g (by hand, common
    # practice); a wrong factor 2 cos θ is a mutation that must fail.
    claims = Claims(conformal_killing_vectors=(conformal({"theta": "sin(theta)"}, "cos(theta)"),
                                               conformal({"theta": "sin(theta)"},
                                                         "2*cos(theta)")))
    entry, spacetime, geometry = prepared(sphere_entry(claims=claims))
    verdicts, problems = check_all(entry, spacetime, geometry)
    assert [v.ok for v in verdicts] == [True, False]
    assert "(L_ξ g − 2ψ g)_(theta,theta)" in verdicts[1].detail
    assert [p.code for p in problems] == ["claim.conformal-killing-vectors"]


def test_homothety_of_minkowski_space() -> None:
    # The dilation x^a ∂_a: L_ξ η = 2η (common practice). Mutations: the factor 2, and a
    # non-constant factor (then it is not a homothety at all).
    line = "-dt**2 + dx**2 + dy**2 + dz**2"
    dilation = {"t": "t", "x": "x", "y": "y", "z": "z"}
    claims = Claims(homotheties=(conformal(dilation, "1"), conformal(dilation, "2"),
                                 conformal(dilation, "t")))
    entry, spacetime, geometry = prepared(make_entry("t x y z", line, claims=claims))
    verdicts, problems = check_all(entry, spacetime, geometry)
    assert [v.ok for v in verdicts] == [True, False, False]
    assert "must be constant" in problems[-1].message


# ------------------------------------------------------------------ Weyl frame and invariants


def frame_of(spacetime):
    geometry, operator = compute_geometry_and_weyl(spacetime, None)
    return weyl_frame(geometry, spacetime, petrov_type(geometry, spacetime, [], operator),
                      operator)[0]


def test_schwarzschild_principal_psi2() -> None:
    # Ψ2 = −M/r³ (e.g. Chandrasekhar 1983, §21; common practice), I = 3Ψ2², J = −Ψ2³.
    spacetime = load_entry(CATALOG / "isolated-objects/schwarzschild.yaml").spacetime
    frame = frame_of(spacetime)
    scalars = dict(frame.scalars)
    M, r = spacetime.symbols["M"], spacetime.symbols["r"]
    assert frame.principal
    assert sympy.simplify(scalars["Psi2"] + M / r**3) == 0
    assert [scalars[f"Psi{k}"] for k in (0, 1, 3, 4)] == [0, 0, 0, 0]
    assert sympy.simplify(frame.invariant_i - 3 * M**2 / r**6) == 0
    assert sympy.simplify(frame.invariant_j + (-M / r**3) ** 3) == 0


def test_kerr_principal_psi2_matches_teukolsky_at_random_points() -> None:
    # Ψ2 = −M/(r − i a cos θ)³ in the Kinnersley tetrad (Teukolsky, ApJ 185 (1973) 635,
    # from memory), compared numerically at random points.
    spacetime = load_entry(CATALOG / "isolated-objects/kerr-boyer-lindquist.yaml").spacetime
    psi2 = dict(frame_of(spacetime).scalars)["Psi2"]
    s = spacetime.symbols
    M, a, r, theta = s["M"], s["a"], s["r"], s["theta"]
    published = -M / (r - sympy.I * a * sympy.cos(theta)) ** 3
    rng = random.Random(17)
    ours, theirs = sympy.lambdify((M, a, r, theta), psi2, "mpmath"), \
        sympy.lambdify((M, a, r, theta), published, "mpmath")
    for _ in range(5):
        with mpmath.workdps(40):
            values = (mpmath.mpf(rng.uniform(1, 2)), mpmath.mpf(rng.uniform(-0.9, 0.9)),
                      mpmath.mpf(rng.uniform(3, 9)), mpmath.mpf(rng.uniform(0.1, 3.0)))
            got, want = mpmath.mpc(ours(*values)), mpmath.mpc(theirs(*values))
            assert mpmath.isfinite(got.real) and mpmath.isfinite(got.imag)
            assert abs(got - want) <= mpmath.mpf(10) ** -30 * abs(want)
    # Mutation: the complex conjugate form must not pass the same comparison.
    values = (mpmath.mpf(1.5), mpmath.mpf(0.5), mpmath.mpf(4), mpmath.mpf(1))
    conjugate = sympy.lambdify((M, a, r, theta), sympy.conjugate(published).subs(
        {sympy.conjugate(x): x for x in (M, a, r, theta)}), "mpmath")
    assert abs(mpmath.mpc(ours(*values)) - mpmath.mpc(conjugate(*values))) > 1e-6


def test_melvin_type_d_frame_has_only_psi2() -> None:
    # Melvin's magnetic universe is type D (Melvin 1964; Stephani et al. 2003 §22.2, from
    # memory): in a principal frame Ψ0 = Ψ4 = 0, unlike the coordinate frame.
    spacetime = load_entry(CATALOG / "strings-tubes-and-bubbles/melvin.yaml").spacetime
    frame = frame_of(spacetime)
    scalars = dict(frame.scalars)
    assert frame.principal and scalars["Psi0"] == 0 and scalars["Psi4"] == 0
    assert scalars["Psi2"] != 0


def test_invariant_count_and_karlhede() -> None:
    # Schwarzschild: one independent invariant (everything depends on r), orbits of
    # dimension 3 = 4 − 1: Karlhede's relation holds (Karlhede, Gen. Rel. Grav. 12 (1980)
    # 693, from memory).
    entry, spacetime, geometry = prepared(schwarzschild_entry())
    classification, _ = classify(entry, spacetime, geometry, {})
    count = classification.symmetry.invariants
    assert count.count == 1 and count.consistent is True
    flat = make_entry("t x y z", "-dt**2 + dx**2 + dy**2 + dz**2")
    entry, spacetime, geometry = prepared(flat)
    classification, _ = classify(entry, spacetime, compute_geometry(spacetime), {})
    assert classification.symmetry.invariants.count == 0
    assert classification.symmetry.invariants.consistent is True


def test_kerr_needs_the_parity_odd_invariant_for_karlhede() -> None:
    # Kerr's orbits are 2-dimensional, so t = 4 − 2 = 2 independent invariants: the real
    # invariants alone give 1 in vacuum (Kretschmann = C²), Im I (∝ the Chern–Pontryagin
    # invariant) supplies the second (common practice; Karlhede 1980, from memory).
    entry, spacetime, geometry = prepared(kerr_entry())
    classification, _ = classify(entry, spacetime, geometry, {})
    count = classification.symmetry.invariants
    assert "Im I" in count.used
    assert count.count == 2 and count.consistent is True
