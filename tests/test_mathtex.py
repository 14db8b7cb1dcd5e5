"""Typesetting: line elements in textbook shape, MathML that reads without JavaScript.

Reference forms (recalled from memory, standard in the field):
- Schwarzschild: ds^2 = -(1 - 2M/r) dt^2 + dr^2/(1 - 2M/r) + r^2 (dtheta^2 + sin^2 theta dphi^2)
  (Carroll, Spacetime and Geometry, 2004, eq. 5.38; Misner, Thorne & Wheeler 1973, eq. 31.1).
- Reissner–Nordström: f = 1 - 2M/r + Q^2/r^2 (Carroll 2004, eq. 6.46).
- Kerr in Boyer–Lindquist form: Delta = r^2 - 2Mr + a^2, Sigma = r^2 + a^2 cos^2 theta
  (Boyer & Lindquist, J. Math. Phys. 8, 265, 1967; Carroll 2004, eq. 6.71).
"""

from __future__ import annotations

import xml.etree.ElementTree as ET

import pytest
import sympy

from generator.site import mathtex

t, r, theta, phi = sympy.symbols("t r theta phi", real=True)
M, Q, a = sympy.symbols("M Q a", positive=True)
COORDS = (t, r, theta, phi)


def schwarzschild() -> sympy.Matrix:
    f = 1 - 2 * M / r
    return sympy.diag(-f, 1 / f, r**2, r**2 * sympy.sin(theta) ** 2)


def kerr() -> sympy.Matrix:
    sigma = r**2 + a**2 * sympy.cos(theta) ** 2
    delta = r**2 - 2 * M * r + a**2
    g = sympy.zeros(4, 4)
    g[0, 0] = -(1 - 2 * M * r / sigma)
    g[0, 3] = g[3, 0] = -2 * M * a * r * sympy.sin(theta) ** 2 / sigma
    g[1, 1] = sigma / delta
    g[2, 2] = sigma
    g[3, 3] = (r**2 + a**2 + 2 * M * r * a**2 * sympy.sin(theta) ** 2 / sigma) * sympy.sin(
        theta) ** 2
    return g


def test_schwarzschild_line_element_has_the_textbook_shape() -> None:
    latex = mathtex.line_element_latex(schwarzschild(), COORDS)
    assert latex == (
        r"\text{d}s^{2} = -\left(1 - \frac{2 M}{r}\right)\,\text{d}t^{2}"
        r" + \frac{\text{d}r^{2}}{1 - \frac{2 M}{r}}"
        r" + r^{2}\left(\text{d}\theta^{2} + \sin^{2}\theta\,\text{d}\phi^{2}\right)"
    )


def test_terms_come_time_radial_angular_even_if_coordinates_are_listed_otherwise() -> None:
    shuffled = (theta, r, phi, t)
    g = sympy.diag(r**2, 1 / (1 - 2 * M / r), r**2 * sympy.sin(theta) ** 2, -(1 - 2 * M / r))
    terms = mathtex.line_element_terms(g, [str(c) for c in shuffled])
    assert [str(shuffled[term.a]) for term in terms] == ["t", "r", "theta", "phi"]


def test_line_element_terms_preserve_the_quadratic_form() -> None:
    g = kerr()
    dx = sympy.symbols("dt dr dtheta dphi")
    terms = mathtex.line_element_terms(g, [str(c) for c in COORDS])
    rebuilt = sum(term.coefficient * dx[term.a] * dx[term.b] for term in terms)
    expected = sum(g[i, j] * dx[i] * dx[j] for i in range(4) for j in range(4))
    assert sympy.expand(rebuilt - expected) == 0


def test_kerr_cross_term_follows_dt_squared_and_keeps_its_sign() -> None:
    latex = mathtex.line_element_latex(kerr(), COORDS)
    dt2 = latex.index(r"\text{d}t^{2}")
    cross = latex.index(r"\text{d}t\,\text{d}\phi")
    dr2 = latex.index(r"\text{d}r^{2}")
    assert dt2 < cross < dr2
    assert r"- \frac{4 M a r \sin^{2}" in latex


@pytest.mark.parametrize(
    ("expr", "expected"),
    [
        (1 - 2 * M / r + Q**2 / r**2, r"1 - \frac{2 M}{r} + \frac{Q^{2}}{r^{2}}"),
        (r**2 - 2 * M * r + a**2, r"r^{2} - 2 M r + a^{2}"),
        (r**2 + a**2 * sympy.cos(theta) ** 2, r"r^{2} + a^{2} \cos^{2} {\theta}"),
    ],
)
def test_sums_are_ordered_as_in_the_literature(expr: sympy.Expr, expected: str) -> None:
    assert mathtex.to_latex(expr, COORDS) == expected


def test_free_functions_keep_brackets_and_time_derivatives_get_dots() -> None:
    scale = sympy.Function("a")
    latex = mathtex.to_latex(scale(t) ** 2 * sympy.diff(scale(t), t, 2), (t,))
    assert r"a^{2}\left(t\right)" in latex
    assert r"\ddot{a}" in latex


def test_mathml_has_upright_differential_and_no_tex_left() -> None:
    markup = mathtex.latex_to_mathml(mathtex.line_element_latex(schwarzschild(), COORDS), True)
    root = ET.fromstring(markup)
    ns = "{http://www.w3.org/1998/Math/MathML}"
    upright = [e for e in root.iter(f"{ns}mi") if e.text == "d"]
    assert upright and all(e.get("mathvariant") == "normal" for e in upright)
    assert root.get("display") == "block"
    assert root.find(f".//{ns}mfrac") is not None
    assert "\\" not in "".join(root.itertext())


def test_brackets_grow_with_their_content() -> None:
    markup = mathtex.latex_to_mathml(mathtex.line_element_latex(schwarzschild(), COORDS))
    assert 'stretchy="true"' in markup


@pytest.mark.parametrize(
    "latex",
    [r"\text{<script>alert(1)</script>}", r"\text{<img src=x onerror=alert(1)>}"],
)
def test_mathml_outside_the_allow_list_is_refused(latex: str) -> None:
    with pytest.raises(mathtex.UnsafeMathML):
        mathtex.latex_to_mathml(latex)


def test_radial_coordinate_is_found_by_role() -> None:
    assert mathtex.radial_coordinate(["t", "r", "theta", "phi"]) == "r"
    assert mathtex.radial_coordinate(["t", "x", "y", "z"]) is None


def test_flat_flrw_groups_the_spatial_part() -> None:
    """Flat FLRW: ds^2 = -dt^2 + a^2(t)(dx^2 + dy^2 + dz^2) (Carroll 2004, eq. 8.9, from memory)."""
    x, y, z = sympy.symbols("x y z", real=True)
    scale = sympy.Function("a")(t)
    latex = mathtex.line_element_latex(sympy.diag(-1, scale**2, scale**2, scale**2),
                                       (t, x, y, z))
    assert latex == (
        r"\text{d}s^{2} = -\text{d}t^{2} + a^{2}\left(t\right)"
        r"\left(\text{d}x^{2} + \text{d}y^{2} + \text{d}z^{2}\right)"
    )


def test_minkowski_needs_no_brackets() -> None:
    x, y, z = sympy.symbols("x y z", real=True)
    latex = mathtex.line_element_latex(sympy.diag(-1, 1, 1, 1), (t, x, y, z))
    assert latex == (r"\text{d}s^{2} = -\text{d}t^{2} + \text{d}x^{2} + \text{d}y^{2}"
                     r" + \text{d}z^{2}")


def test_function_names_get_thin_spaces_like_tex_operators() -> None:
    # TeX sets \cos as an operator with thin spaces around it (common practice): "a cos θ",
    # never "acosθ", which reads as arccos.
    a, theta = sympy.symbols("a theta")
    spaced = mathtex.operator_spacing(mathtex.to_latex(a * sympy.cos(theta)))
    assert spaced == r"a\,\cos\,{\theta}"
    markup = mathtex.latex_to_mathml(mathtex.to_latex(a**2 * sympy.cos(theta) ** 2))
    assert markup.count("<mspace") == 2


def test_abbreviations_replace_their_definitions_exactly() -> None:
    """Kerr in Boyer–Lindquist form with Σ = r² + a² cos²θ and Δ = r² − 2Mr + a²
    (Boyer & Lindquist, J. Math. Phys. 8, 265 (1967); common practice)."""
    r, theta, M, a = sympy.symbols("r theta M a", positive=True)
    Sigma, Delta = sympy.symbols("Sigma Delta")
    sigma = r**2 + a**2 * sympy.cos(theta) ** 2
    delta = r**2 - 2 * M * r + a**2
    g_rr = sigma / delta
    g_tt = -(1 - 2 * M * r / sigma)
    pairs = [(Sigma, sigma), (Delta, delta)]
    assert mathtex.abbreviate(g_rr, pairs) == Sigma / Delta
    assert mathtex.abbreviate(g_tt, pairs) == -(1 - 2 * M * r / Sigma)
    assert mathtex.abbreviate(r**2 + a**2, pairs) == r**2 + a**2  # no definition inside
    for value in (g_rr, g_tt):
        back = mathtex.abbreviate(value, pairs).subs({Sigma: sigma, Delta: delta})
        assert sympy.cancel(back - value) == 0


def test_sums_that_read_better_negated_get_their_sign_pulled_out() -> None:
    """g_tt = -(1 - 2M/r) as every textbook writes Schwarzschild (common practice)."""
    r, M = sympy.symbols("r M", positive=True)
    assert mathtex.signed_latex(2 * M / r - 1, (r,)) == r"-\left(1 - \frac{2 M}{r}\right)"
    assert mathtex.signed_latex(1 - 2 * M / r, (r,)) == r"1 - \frac{2 M}{r}"
