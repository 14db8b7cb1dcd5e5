"""The factors of g_tt's numerator that hold the radius, found in the engine's field
(python-flint), agree with SymPy's ``factor`` (the reference library) up to constant factors.

Kerr in Boyer–Lindquist form: g_tt = −(1 − 2Mr/Σ), numerator r² − 2Mr + a² cos²θ (the
ergosurface polynomial; Wald, General Relativity, 1984, §12.3; from memory).
"""

from __future__ import annotations

import sympy as sp
from classify_cases import make_entry, prepared

from generator.physics.horizons import factors_in

KERR = ("-(1 - 2*M*r/(r**2 + a**2*cos(theta)**2))*dt**2"
        " - 4*M*a*r*sin(theta)**2/(r**2 + a**2*cos(theta)**2)*dt*dphi"
        " + (r**2 + a**2*cos(theta)**2)/(r**2 - 2*M*r + a**2)*dr**2"
        " + (r**2 + a**2*cos(theta)**2)*dtheta**2"
        " + (r**2 + a**2 + 2*M*a**2*r*sin(theta)**2/(r**2 + a**2*cos(theta)**2))"
        "*sin(theta)**2*dphi**2")


def kerr():
    return prepared(make_entry("t r theta phi", KERR, {"M": "positive", "a": "positive"},
                               ("r > 0", "0 < theta < pi")))[1]


def same_up_to_constants(found: list[sp.Expr], reference: list[sp.Expr]) -> bool:
    return len(found) == len(reference) and all(
        any(sp.simplify(f / g).is_constant() for g in reference) for f in found)


def sympy_factors(expr: sp.Expr, x: sp.Symbol) -> list[sp.Expr]:
    numerator = sp.factor(sp.numer(sp.together(expr)))
    bases = [f.base if f.is_Pow else f for f in sp.Mul.make_args(numerator)]
    return [b for b in bases if b.has(x)]


def test_kerr_ergosurface_polynomial() -> None:
    st = kerr()
    _t, r, theta, _phi = st.coordinates
    (m, a) = st.parameters
    found = factors_in(st.metric[0, 0], r, st)
    assert same_up_to_constants(found, [r**2 - 2 * m * r + a**2 * sp.cos(theta) ** 2])


def test_products_and_powers_agree_with_sympy() -> None:
    st = kerr()
    _t, r, theta, _phi = st.coordinates
    (m, a) = st.parameters
    expr = (r - m) ** 3 * (r**2 + a**2) * (r + a * sp.cos(theta)) / (m * (r**2 - 2 * m * r + 7))
    found = factors_in(expr, r, st)
    assert len(found) == 3
    assert same_up_to_constants(found, sympy_factors(expr, r))
    # a factor without r is not returned; a wrong reference is told apart
    assert not same_up_to_constants(found, [r - m, r**2 + a**2, r - a * sp.cos(theta)])
