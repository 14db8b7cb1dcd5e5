"""The whitelisted math grammar: what it accepts, and what it refuses with a position."""

from __future__ import annotations

import pytest
import sympy

from generator.entry.mathparse import SymbolTable, parse_expression, parse_inequality, valid_name
from generator.errors import MathSyntaxError

r, M, t, theta = sympy.symbols("r M t theta", real=True)
a = sympy.Function("a")(t)
dt, dr = sympy.Dummy("dt"), sympy.Dummy("dr")
TABLE = SymbolTable(
    {"r": r, "M": M, "t": t, "theta": theta},
    {"a": (sympy.Function("a"), (t,))},
    {"dt": dt, "dr": dr},
)


def parse(text: str) -> sympy.Expr:
    return parse_expression(text, TABLE)


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        ("-(1 - 2*M/r)", 2 * M / r - 1),
        ("48*M**2/r**6", 48 * M**2 / r**6),
        ("0.5*r", r / 2),  # decimals are exact rationals, never floats
        ("1e-3", sympy.Rational(1, 1000)),
        ("2**-1", sympy.Rational(1, 2)),
        ("-r**2", -(r**2)),  # unary minus binds looser than ** (Python's rule)
        ("2**3**2", 512),  # ** is right-associative
        ("sin(theta)**2 + cos(theta)**2", sympy.sin(theta) ** 2 + sympy.cos(theta) ** 2),
        ("a", a),  # a declared function alone means a(t)
        ("a(t)**2", a**2),
        ("diff(a(t), t, 2)", sympy.diff(a, t, 2)),
        ("sqrt(r) * exp(-r) * LambertW(r)", sympy.sqrt(r) * sympy.exp(-r) * sympy.LambertW(r)),
        ("pi*E*I", sympy.pi * sympy.E * sympy.I),
        ("-dt**2 + dr**2", -(dt**2) + dr**2),
    ],
)
def test_accepts_the_grammar(text: str, expected: sympy.Expr) -> None:
    assert sympy.expand(parse(text) - expected) == 0
    assert not parse(text).has(sympy.Float)


@pytest.mark.parametrize(
    ("text", "offset", "message"),
    [
        ("r^2", 1, "unexpected character '^'"),
        ("x + 1", 0, "unknown name 'x'"),
        ("__import__('os')", 0, "'__import__' is not allowed"),
        ("r[0]", 1, "unexpected character '['"),
        ("lambda: r", 0, "'lambda' is not allowed"),
        ("r.real", 1, "unexpected character '.'"),
        ("9**9**9", 1, "too large"),
        ("r**1000", 1, "too large"),
        ("1" * 60, 0, "digits"),
        ("2 r", 2, "after a complete expression"),
        ("sin r", 0, "needs an argument"),
        ("a(r, t)", 0, "declared with 1 argument"),
        ("foo(r)", 0, "unknown name 'foo'"),
        ("(r + 1", 6, "expected ')'"),
        ("", 0, "empty"),
        ("r/0", 1, "division by zero"),
        ("diff(r, 3)", 4, "cannot differentiate"),
        ("open('x', 'w')", 0, "unknown name 'open'"),
        ("r + 'text'", 4, "unexpected character"),
    ],
)
def test_refuses_with_position(text: str, offset: int, message: str) -> None:
    with pytest.raises(MathSyntaxError) as caught:
        parse(text)
    assert message in caught.value.message
    assert caught.value.offset == offset


def test_deep_nesting_is_refused_not_a_recursion_error() -> None:
    with pytest.raises(MathSyntaxError, match="nested"):
        parse("(" * 500 + "r" + ")" * 500)
    with pytest.raises(MathSyntaxError, match="nested"):
        parse("-" * 500 + "r")


def test_differentials_only_where_declared() -> None:
    plain = SymbolTable(TABLE.symbols, TABLE.functions, {})
    with pytest.raises(MathSyntaxError, match="unknown name 'dt'") as caught:
        parse_expression("dt**2", plain)
    assert "line_element" in caught.value.hint


def test_inequalities_and_chains() -> None:
    chain = parse_inequality("0 < theta < pi", TABLE)
    assert isinstance(chain, sympy.And)
    assert set(chain.args) == {sympy.StrictLessThan(0, theta), sympy.StrictLessThan(theta,
                                                                                     sympy.pi)}
    with pytest.raises(MathSyntaxError, match="expected an inequality"):
        parse_inequality("r", TABLE)


def test_reserved_words_cannot_be_declared() -> None:
    assert valid_name("M") and valid_name("Lambda") and valid_name("r_s")
    for reserved in ("sin", "pi", "E", "I", "diff", "__class__", "2r", "a-b"):
        assert not valid_name(reserved)
