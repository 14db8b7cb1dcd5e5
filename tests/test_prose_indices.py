"""Index notation written in words in an entry's prose is shown as sub- and superscripts.

Notes say "g_tt", "R_ab = 0", "T_ab k^a k^b", "Delta_r" — how relativists type tensors in
plain text (common practice); a reader of the page should see g with subscript tt, not
program-like ASCII. Snake-case words, longer kernels and text inside code stay as written, and
nothing an entry writes can smuggle markup through the conversion.
"""

from __future__ import annotations

import pytest

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
