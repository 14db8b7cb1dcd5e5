"""Textbook term order when typesetting: a sum opens with a positive term where it has one,
powers of the coordinate fall, and the line element lists dt² first.

Printed forms compared with (all from memory): the Kruskal–Szekeres combination X² − T²
(C. W. Misner, K. S. Thorne and J. A. Wheeler, Gravitation, 1973, §31.5); Kerr's
Δ = r² − 2Mr + a² and the Boyer–Lindquist line element led by dt² (R. H. Boyer and R. W.
Lindquist, J. Math. Phys. 8, 265 (1967)); de Sitter's 1 − Λr²/3 (common practice).
"""

from __future__ import annotations

import itertools
from pathlib import Path

import pytest
import sympy as sp

from generator.entry.catalog import vocabulary
from generator.entry.loader import load_entry
from generator.site.mathtex import line_element_latex, positive_first, textbook_order, to_latex

T, X, r, M, a, lam, e = sp.symbols("T X r M a Lambda e", real=True)
CATALOG = Path(__file__).resolve().parent.parent / "catalog"


@pytest.mark.parametrize(("expr", "coordinates", "expected"), [
    ((-T**2 + X**2) / e, (T, X), r"\frac{X^{2} - T^{2}}{e}"),
    (-T**2 + X**2, (T, X), r"X^{2} - T^{2}"),
    (r**2 - 2 * M * r + a**2, (r,), r"r^{2} - 2 M r + a^{2}"),
    (1 - lam * r**2 / 3, (r,), r"1 - \frac{\Lambda r^{2}}{3}"),
    (lam * r**2 - 3, (r,), r"\Lambda r^{2} - 3"),
    (-r**2 - a**2, (r,), r"- r^{2} - a^{2}"),  # no positive term: nothing to move
])
def test_sums_open_with_a_positive_term(expr: sp.Expr, coordinates: tuple,
                                        expected: str) -> None:
    assert to_latex(expr, coordinates) == expected


def test_the_order_does_not_depend_on_how_the_sum_was_built() -> None:
    """Deterministic: every permutation of the same terms prints the same."""
    terms = [-lam * r**4 / 3, r**2, -2 * M * r, a**2, -T**2]
    shown = {to_latex(sp.Add(*perm, evaluate=False), (r, T))
             for perm in itertools.permutations(terms)}
    assert len(shown) == 1
    assert not next(iter(shown)).startswith("-")


def test_positive_first_moves_only_the_first_positive_term() -> None:
    ordered = textbook_order([-T**2, X**2, -M], frozenset({T, X}))
    assert ordered[0] == X**2
    assert positive_first([-T**2, -M, X**2, a]) == [X**2, -T**2, -M, a]
    assert positive_first([X**2, -T**2]) == [X**2, -T**2]


@pytest.mark.parametrize(("entry_id", "opening", "inside"), [
    ("schwarzschild-kruskal-szekeres", r"\text{d}s^{2} = -", r"X^{2} - T^{2}"),
    ("kerr-boyer-lindquist", r"\text{d}s^{2} = -\left(1 - ", r"r^{2} - 2 M r + a^{2}"),
    ("minkowski-cartesian", r"\text{d}s^{2} = -\text{d}t^{2} + \text{d}x^{2}", ""),
])
def test_shipped_line_elements_read_as_in_textbooks(entry_id: str, opening: str,
                                                    inside: str) -> None:
    path = next(CATALOG.glob(f"*/{entry_id}.yaml"))
    st = load_entry(path, path.name, vocabulary(CATALOG)).spacetime
    latex = line_element_latex(st.metric * st.sign, st.coordinates)
    assert latex.startswith(opening)
    assert inside in latex
    assert r"- T^{2} + X^{2}" not in latex
    first = latex.index(r"\text{d}", len(r"\text{d}s^{2}"))
    assert latex[first:].startswith(r"\text{d}" + ("T" if "kruskal" in entry_id else "t"))
