"""Reports are pickled with SymPy's nodes kept in canonical form and rebuilt unevaluated.

The reference is SymPy itself: a node rebuilt from its pickle must be the very node SymPy
built (``srepr`` equal, same argument order), and SymPy's own pickling is the comparison for
whole reports. The rebuilders are reachable from a signed cache file, so they are also tried
with what a planted pickle would hand them (text, which SymPy would parse as Python).
"""

from __future__ import annotations

import copyreg
import pickle
from pathlib import Path

import pytest
import sympy
from _pickle_helpers import Reduces

from generator.run import safepickle
from generator.run.safepickle import (
    CANONICAL_REDUCERS,
    RefusedPickle,
    canonical_dumps,
    rebuild_operation,
    rebuild_power,
    rebuild_unevaluated,
    register_canonical_reducers,
    safe_loads,
)

PROJECT = Path(__file__).resolve().parents[1]


def _sample_expressions() -> list[sympy.Basic]:
    """Every node kind the reducers handle, in the shapes metrics produce (common practice)."""
    t, r, theta = sympy.symbols("t r theta", real=True)
    m, a = sympy.symbols("M a", positive=True)
    p, q = sympy.symbols("p q", commutative=False)
    f = sympy.Function("f")
    sigma = r**2 + a**2 * sympy.cos(theta)**2
    return [
        1 - 2 * m * r / sigma,
        sympy.sin(theta)**2 * (r**2 + a**2 + 2 * m * r * a**2 * sympy.sin(theta)**2 / sigma),
        sympy.exp(-2 * t) * sympy.log(r) + sympy.sqrt(1 - 2 * m / r),
        sympy.atan(r / a) + sympy.LambertW(r * sympy.exp(r)) + sympy.Abs(t - r),
        sympy.cosh(t)**sympy.Rational(4, 3) * f(r) / (sympy.tanh(r) + 3),
        p * q - q * p + 2 * p,  # non-commutative products keep their flag
        sympy.StrictGreaterThan(r, 2 * m, evaluate=False),
        sympy.And(r > 0, theta < sympy.pi, sympy.Eq(t, 0, evaluate=False)),
        sympy.Lt(sympy.Rational(1, 2), r, evaluate=False),
    ]


def _nodes(expr: sympy.Basic):
    yield from sympy.preorder_traversal(expr)


@pytest.mark.parametrize("expr", _sample_expressions(), ids=str)
def test_each_node_reads_back_as_the_node_sympy_built(expr) -> None:
    back = safe_loads(canonical_dumps(expr))
    assert back == expr
    for original, read in zip(_nodes(expr), _nodes(back), strict=True):
        assert type(read) is type(original)
        assert read.args == original.args
        if isinstance(original, (sympy.Add, sympy.Mul, sympy.Pow)):
            assert read.is_commutative is original.is_commutative


def test_the_expressions_really_are_stored_by_the_rebuilders() -> None:
    # Otherwise the round trip above would pass through SymPy's own pickling and prove nothing.
    payload = canonical_dumps(_sample_expressions())
    for name in (b"rebuild_operation", b"rebuild_power", b"rebuild_unevaluated"):
        assert name in payload


def test_loaded_entries_read_back_equal_to_sympys_own_pickling() -> None:
    """Every shipped entry as loaded (metrics, domains, claims): the canonical pickle reads back
    equal to what SymPy's own pickle reads back to."""
    from generator.entry.catalog import vocabulary
    from generator.entry.loader import load_entry

    words = vocabulary(PROJECT / "catalog")
    loaded = [load_entry(path, path.name, words)
              for path in sorted((PROJECT / "catalog").glob("*/*.yaml"))]
    assert len(loaded) > 150
    for load in loaded:
        assert safe_loads(canonical_dumps(load)) == load


def test_a_reducer_that_lost_canonical_order_would_be_noticed(monkeypatch) -> None:
    """Mutation: storing a sum's arguments reversed rebuilds a different (non-canonical)
    object; the round-trip comparison above must see it."""
    def reversed_operation(node: sympy.Basic) -> tuple:
        return rebuild_operation, (type(node), node.args[::-1], node.is_commutative)

    monkeypatch.setitem(CANONICAL_REDUCERS, sympy.Add, reversed_operation)
    expr = _sample_expressions()[0]
    back = safe_loads(canonical_dumps(expr))
    assert back.args != expr.args  # what the node-by-node test compares (srepr sorts)
    assert back != expr


# ---------------------------------------------------------------------------- planted arguments


def _planted(marker: Path) -> dict[str, object]:
    code = f"__import__('pathlib').Path({str(marker)!r}).touch()"
    x = sympy.Symbol("x")
    return {
        "text in a sum": Reduces(rebuild_operation, sympy.Add, (x, code), True),
        "text as the power's exponent": Reduces(rebuild_power, x, code, True),
        "text to a function": Reduces(rebuild_unevaluated, sympy.sin, (code,)),
        "text to a comparison": Reduces(rebuild_unevaluated, sympy.StrictGreaterThan, (x, code)),
        "a kind not allowed": Reduces(rebuild_unevaluated, sympy.Function, (x,)),
        "a parser as the kind": Reduces(rebuild_operation, sympy.sympify, (x, x), True),
        "a symbol as the kind": Reduces(rebuild_unevaluated, x, (x,)),
        "a flag that is not fuzzy": Reduces(rebuild_operation, sympy.Mul, (x, x), code),
        "arguments in a list": Reduces(rebuild_operation, sympy.Add, [x, x], True),
        "an unhashable kind": Reduces(rebuild_unevaluated, [sympy.sin], (x,)),
    }


@pytest.mark.parametrize("name", list(_planted(Path("x"))))
def test_rebuilders_refuse_what_the_writer_never_stores(tmp_path, name) -> None:
    marker = tmp_path / "ran"
    payload = pickle.dumps(_planted(marker)[name], protocol=pickle.HIGHEST_PROTOCOL)
    with pytest.raises(RefusedPickle):
        safe_loads(payload)
    assert not marker.exists()


def test_the_rebuilders_alone_build_from_sound_arguments() -> None:
    # Control for the refusals: the same calls with expressions succeed.
    x, y = sympy.symbols("x y")
    assert rebuild_operation(sympy.Add, (x, y), True) == x + y
    assert rebuild_power(x, y, True) == x**y
    assert rebuild_unevaluated(sympy.cos, (x,)) == sympy.cos(x)


# ---------------------------------------------------------------------------- worker processes


def test_a_worker_hands_back_canonical_pickles() -> None:
    """Workers register the reducers process-wide, so the pool's own pickling of a report uses
    them; taken back out afterwards so other tests see plain pickling."""
    x = sympy.Symbol("x")
    try:
        register_canonical_reducers()
        payload = pickle.dumps(1 + x**2, protocol=pickle.HIGHEST_PROTOCOL)
    finally:
        for kind in CANONICAL_REDUCERS:
            copyreg.dispatch_table.pop(kind, None)
    assert b"rebuild_operation" in payload and b"rebuild_power" in payload
    assert pickle.loads(payload) == 1 + x**2
    assert b"rebuild_operation" not in pickle.dumps(1 + x**2)


def test_the_rebuilders_are_the_ones_the_unpickler_allows() -> None:
    allowed = {name for module, name in safepickle._FUNCTIONS if module == safepickle.__name__}
    assert allowed == {"rebuild_operation", "rebuild_power", "rebuild_unevaluated"}
