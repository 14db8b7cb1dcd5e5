"""Index notation written in words in an entry's prose is shown as sub- and superscripts.

Notes say "g_tt", "R_ab = 0", "T_ab k^a k^b", "Delta_r" — how relativists type tensors in
plain text (common practice); a reader of the page should see g with subscript tt, not
program-like ASCII. Snake-case words, longer kernels and text inside code stay as written, and
nothing an entry writes can smuggle markup through the conversion.
"""

from __future__ import annotations

import pytest

from generator.site.common import reader_text
from generator.site.prose_html import ProseSymbols, prose_line, prose_markdown

NO_MATH = ProseSymbols(None)


@pytest.mark.parametrize("render", [prose_line, prose_markdown])
def test_metric_and_stress_components_get_real_indices(render):
    html = str(render("where g_tt = 0 and T_ab k^a k^b ≥ 0", NO_MATH))
    assert "<i>g</i><sub>tt</sub>" in html
    assert "<i>T</i><sub>ab</sub>" in html
    assert "<i>k</i><sup>a</sup>" in html and "<i>k</i><sup>b</sup>" in html
    assert "g_tt" not in html and "k^a" not in html


@pytest.mark.parametrize("render", [prose_line, prose_markdown])
def test_greek_names_become_letters(render):
    html = str(render("Delta_r > 0 with Xi_a = 1 and nabla_a", NO_MATH))
    assert "<i>Δ</i><sub>r</sub>" in html and "<i>Ξ</i><sub>a</sub>" in html
    assert "∇<sub>a</sub>" in html


@pytest.mark.parametrize("text", ["lambda_vacuum", "dr_s", "x_12345", "warp_drive"])
def test_words_that_are_not_index_notation_stay(text):
    assert str(prose_line(text, NO_MATH)) == text


def test_code_spans_keep_what_was_written():
    html = str(prose_markdown("the key `g_tt` here", NO_MATH))
    assert "<code>g_tt</code>" in html


@pytest.mark.parametrize("render", [prose_line, prose_markdown])
def test_markup_around_an_index_is_still_escaped(render):
    html = str(render("<script>x</script>_a R_<b>", NO_MATH))
    assert "<script>" not in html and "<b>" not in html


# The tool's own sentences (reasons, polynomials of algebraic roots, extremality conditions)
# are plain text on the page; they must read as mathematics, not as program syntax.

@pytest.mark.parametrize(("written", "shown"), [
    ("root of -2*M*r + Q**2 + r**2 = 0", "root of −2·M·r + Q² + r² = 0"),
    ("(-a**2*cos(theta)**2 + b**2 - ell**2)", "(−a²·cos(θ)² + b² − ℓ²)"),
    ("u^t = sqrt(-2*M*r**3 + Q**2*r**2)", "u^t = √(−2·M·r³ + Q²·r²)"),
    ("r**(-1) and x**(1/3)", "r⁻¹ and x^(1/3)"),
    ("(1 - Lambda*h**2)/(4*pi*h)", "(1 − Λ·h²)/(4·π·h)"),
])
def test_the_tools_sentences_read_as_mathematics(written, shown):
    assert reader_text(written) == shown


@pytest.mark.parametrize("text", ["non-vacuum", "Hawking–Ellis type", "1e-19", "spin-2 field",
                                  "the pipeline's phase", "photon sphere"])
def test_words_and_numbers_keep_their_hyphens_and_letters(text):
    assert reader_text(text) == text
