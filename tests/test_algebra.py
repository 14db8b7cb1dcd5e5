"""The rational-function field: generators, relations, derivative rules, normal forms.

Derivatives are checked against SymPy's own ``diff`` (a general-purpose reference library);
identities are elementary facts of the trade (common practice).
"""

from __future__ import annotations

import pytest
import sympy as sp

from generator.geometry.algebra import (
    FieldRequest,
    NotInField,
    RationalField,
    build_field,
)

t, r, theta = sp.symbols("t r theta", real=True)
M, k = sp.symbols("M k", positive=True)
A = sp.Function("A")(t, r)


def field_with(*exprs: sp.Expr, depth: int = 1) -> tuple[RationalField, list]:
    request = FieldRequest((t, r, theta), (M, k), (A,), tuple(exprs), depth)
    return build_field(request)


def same(field: RationalField, x, y) -> bool:
    return field.equal(x, y)


@pytest.mark.parametrize(
    "expr",
    [
        (1 - 2 * M / r) ** -1,
        sp.sin(theta) ** 3 / (1 + sp.cos(theta)),
        sp.sqrt(1 - 2 * M / r),
        r ** sp.Rational(2, 3) * sp.exp(-k * r),
        sp.tanh(k * t) + 1 / sp.cosh(k * t),
        A**2 * sp.exp(r / (2 * M)),
        sp.LambertW(r / M),
        sp.log(r) * sp.atan(t / r),
        r ** (2 * k),
        sp.asin(t / r),
    ],
)
def test_derivatives_agree_with_sympy(expr: sp.Expr) -> None:
    # Reference: SymPy's diff, compared inside the field (exact) at every coordinate.
    field, (value,) = field_with(expr)
    for i, x in enumerate((t, r, theta)):
        mine = field.diff(value, i)
        _, (reference,) = field_with(sp.diff(expr, x), depth=0)
        back = field.to_sympy(mine)
        f2, (a, b) = build_field(
            FieldRequest((t, r, theta), (M, k), (A,), (back, sp.diff(expr, x)), 0)
        )
        assert f2.equal(a, b), (expr, x, back)
        assert reference is not None


def test_pythagoras_relations_reduce_to_zero() -> None:
    # sin^2 + cos^2 = 1 and cosh^2 - sinh^2 = 1 (common practice).
    _field, (trig, hyper) = field_with(
        sp.sin(theta) ** 2 + sp.cos(theta) ** 2 - 1, sp.cosh(t) ** 2 - sp.sinh(t) ** 2 - 1
    )
    assert trig.is_zero() and hyper.is_zero()


def test_rationalised_denominators_are_canonical() -> None:
    # 1/(1 + sin) = (1 - sin)/cos^2: two spellings, one normal form.
    field, (x, y) = field_with(1 / (1 + sp.sin(theta)), (1 - sp.sin(theta)) / sp.cos(theta) ** 2)
    assert same(field, x, y)
    assert not field.relations[0][2].is_zero()


def test_radical_relation() -> None:
    # (f^(1/3))^3 = f and f^(2/3) = (f^(1/3))^2 for positive f (common practice).
    f = 1 + M / r
    field, (cube, plain, square, direct) = field_with(
        (f ** sp.Rational(1, 3)) ** 3, f, f ** sp.Rational(2, 3), (f ** sp.Rational(1, 3)) ** 2
    )
    assert same(field, cube, plain)
    assert same(field, square, direct)
    assert not same(field, square, plain)


def test_exponential_laws() -> None:
    field, (x, y) = field_with(sp.exp(2 * r) * sp.exp(-r), sp.exp(r))
    assert same(field, x, y)
    field, (x, y) = field_with(sp.exp(r + t), sp.exp(r) * sp.exp(t))
    assert same(field, x, y)


def test_display_restores_functions_and_parses_back() -> None:
    from sympy.parsing.sympy_parser import parse_expr

    expr = (1 - sp.cos(theta) ** 2) * sp.sqrt(1 - 2 * M / r) * A / (r - 2 * M)
    field, (value,) = field_with(expr)
    shown = field.display(value)
    assert shown.has(sp.sin(theta)) and shown.has(A)
    names = {"A": sp.Function("A"), "t": t, "r": r, "theta": theta, "M": M}
    back = parse_expr(str(shown), local_dict=names)
    f2, (u, v) = build_field(FieldRequest((t, r, theta), (M, k), (A,), (back, expr), 0))
    assert f2.equal(u, v)


def test_floats_are_refused() -> None:
    with pytest.raises(NotInField):
        field_with(sp.Float("1.5") * r)


def test_functions_of_non_coordinates_are_refused() -> None:
    g = sp.Function("g")
    with pytest.raises(NotInField):
        build_field(FieldRequest((t, r), (M,), (g(t),), (g(t**2),), 0))


def test_derivative_beyond_closure_depth_is_refused() -> None:
    field, (value,) = field_with(sp.Derivative(A, t), depth=0)
    with pytest.raises(NotInField):
        field.diff(value, 0)


def test_division_by_zero_is_an_error() -> None:
    field, (value,) = field_with(sp.sin(theta) ** 2 + sp.cos(theta) ** 2 - 1)
    with pytest.raises(ZeroDivisionError):
        field.inv(value)


def test_radical_of_a_base_with_an_algebraic_denominator() -> None:
    # sqrt(1/(1 + sin)): the radicand's denominator is rationalised (to cos^2) before the
    # relation Z^2 = D N is formed; squaring must give back the radicand exactly.
    root = sp.sqrt(1 / (1 + sp.sin(theta)))
    field, (value, radicand, derivative) = field_with(
        root, 1 / (1 + sp.sin(theta)), sp.diff(root, theta)
    )
    assert same(field, field.mul(value, value), radicand)
    assert same(field, field.diff(value, 2), derivative)


def test_square_root_of_a_visible_square_and_none_otherwise() -> None:
    # (r**2 + a**2 cos**2)**2 / (4 r**2): a square once sin**2 = 1 - cos**2 is used
    # (common practice); r**2 - 2*M*r is not a square of a rational function.
    field, (square, other) = field_with(
        (r**2 + M**2 - M**2 * sp.sin(theta) ** 2) ** 2 / (4 * r**2), r**2 - 2 * M * r)
    root = field.square_root(square)
    assert root is not None
    assert same(field, field.mul(root, root), square)
    assert field.square_root(other) is None
    _f, (negative,) = field_with(-(r**2))
    assert _f.square_root(negative) is None  # -r**2 has no real square root
