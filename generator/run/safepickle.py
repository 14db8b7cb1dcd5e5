"""Reading back the cache's pickles without letting them run code.

Pickle can call any importable function with any arguments, so a signature alone is the only
thing between a planted cache file and code execution — and a signature is only as good as
its key. Replacing pickle for reports and entry views (frozen dataclasses full of SymPy
expressions) by a format that cannot execute anything would mean a serializer for SymPy
trees; until then, this unpickler narrows what a pickle may build to what the cache holds:

- only classes (never functions) of the project's own modules that are data classes or
  enumerations; SymPy's expression and matrix classes; a few plain containers; markupsafe's
  Markup (a str); mpmath's number types; and the one SymPy helper that rebuilds an undefined
  function from its name;
- SymPy classes are never called with a text argument, except those that take a *name*
  (Symbol, Dummy, Wild, undefined functions) or digits (Float): most SymPy constructors pass
  text to ``sympify``, which evaluates it as Python;
- the old protocol-0/1 opcodes that call a class directly are refused.

It is the pure-Python unpickler (the C one cannot check arguments), which is slower; cache
files are read once per build each.

What made reading slow was not the unpickler but SymPy: an expression is pickled as a call of
its class on its arguments, so loading re-runs the canonicalisation (flattening, sorting,
collecting, evaluating functions and comparisons) of every node, about 80 % of a warm check.
`canonical_dumps` stores sums, products, powers, elementary functions and comparisons as
already-canonical arguments instead, rebuilt by `rebuild_operation`, `rebuild_power` and
`rebuild_unevaluated` without evaluation: the same objects (equal, same argument order),
rebuilt about five times faster. The rebuilders are allowed to the unpickler and check their
own arguments: only SymPy expressions, never text, so nothing reaches ``sympify``.
"""

from __future__ import annotations

import copyreg
import dataclasses
import enum
import io
import pickle
from typing import Any, ClassVar

import sympy
from sympy import Add, Basic, Mul, Pow

MAX_PICKLE_BYTES = 64 * 1024 * 1024

_BUILTINS = frozenset({"set", "frozenset", "complex", "slice", "bytearray", "range"})
# SymPy callables that legitimately receive text: a name, or the digits of a Float.
_NAMED = frozenset({
    ("sympy.core.symbol", "Symbol"),
    ("sympy.core.symbol", "Dummy"),
    ("sympy.core.symbol", "Wild"),
    ("sympy.core.numbers", "Float"),
    ("sympy.core.function", "_rebuild_undef"),
    ("sympy.core.function", "UndefinedFunction"),
})
_FUNCTIONS = frozenset({("sympy.core.function", "_rebuild_undef"),
                        ("generator.run.safepickle", "rebuild_operation"),
                        ("generator.run.safepickle", "rebuild_power"),
                        ("generator.run.safepickle", "rebuild_unevaluated")})
_PLAIN = frozenset({("markupsafe", "Markup"), ("collections", "OrderedDict")})


class RefusedPickle(pickle.UnpicklingError):
    """A pickle asked for something the cache never stores."""


def safe_loads(payload: bytes) -> Any:
    """Unpickle ``payload`` under the rules above; raises RefusedPickle (or another
    UnpicklingError) for anything else."""
    if len(payload) > MAX_PICKLE_BYTES:
        raise RefusedPickle("cache file too large")
    return _SafeUnpickler(io.BytesIO(payload)).load()


def canonical_dumps(value: object) -> bytes:
    """Pickle ``value`` with SymPy's sums, products, powers, elementary functions and
    comparisons kept as built (see the module's docstring), so that loading does not redo
    SymPy's canonicalisation."""
    buffer = io.BytesIO()
    pickler = pickle.Pickler(buffer, protocol=pickle.HIGHEST_PROTOCOL)
    pickler.dispatch_table = {**copyreg.dispatch_table, **CANONICAL_REDUCERS}
    pickler.dump(value)
    return buffer.getvalue()


def register_canonical_reducers() -> None:
    """Make every pickler of this process use the reducers of `canonical_dumps`: a worker
    process calls it so that the reports it hands back load fast in the parent."""
    for kind, reducer in CANONICAL_REDUCERS.items():
        copyreg.pickle(kind, reducer)


def rebuild_operation(kind: type, args: tuple, commutative: bool | None) -> Basic:
    """A sum or product from arguments that were already canonical when pickled."""
    if (kind is not Add and kind is not Mul) or not _expressions(args, at_least=2) or \
            not _flag(commutative):
        raise RefusedPickle("refused a sum or product with unexpected arguments")
    return kind._from_args(args, commutative)


def rebuild_power(base: Basic, exponent: Basic, commutative: bool | None) -> Basic:
    """A power exactly as pickled (``Pow(b, e, evaluate=False)`` minus its post-processing,
    which only matrix expressions use)."""
    if not _expressions((base, exponent), at_least=2) or not _flag(commutative):
        raise RefusedPickle("refused a power with unexpected arguments")
    power = Basic.__new__(Pow, base, exponent)
    power.is_commutative = commutative
    return power


def rebuild_unevaluated(kind: type, args: tuple) -> Basic:
    """An elementary function or a comparison as pickled, built with ``evaluate=False`` (its
    evaluation, the bulk of rebuilding it, already happened before it was pickled)."""
    if not isinstance(kind, type) or kind not in UNEVALUATED_KINDS or \
            not _expressions(args, at_least=1):
        raise RefusedPickle("refused a function or comparison with unexpected arguments")
    return kind(*args, evaluate=False)


def _expressions(args: object, at_least: int) -> bool:
    """A tuple of at least ``at_least`` SymPy objects (a list, not a generator: it runs per
    node, and that is faster)."""
    return type(args) is tuple and len(args) >= at_least and \
        all([isinstance(arg, Basic) for arg in args])


def _flag(value: object) -> bool:
    """A fuzzy truth value (identity, so no object's own ``__eq__`` is asked)."""
    return value is True or value is False or value is None


def _reduce_operation(node: Basic) -> tuple:
    return rebuild_operation, (type(node), node.args, node.is_commutative)


def _reduce_power(node: Basic) -> tuple:
    return rebuild_power, (*node.args, node.is_commutative)


def _reduce_unevaluated(node: Basic) -> tuple:
    return rebuild_unevaluated, (type(node), node.args)


# The elementary functions metrics are written with, and the comparisons of domains; each
# takes its arguments as expressions only (``_sympify``, never parsing) under evaluate=False.
UNEVALUATED_KINDS = frozenset({
    sympy.exp, sympy.log, sympy.sin, sympy.cos, sympy.tan, sympy.cot, sympy.sec, sympy.csc,
    sympy.sinh, sympy.cosh, sympy.tanh, sympy.coth, sympy.sech, sympy.csch, sympy.asin,
    sympy.acos, sympy.atan, sympy.acot, sympy.asinh, sympy.acosh, sympy.atanh, sympy.LambertW,
    sympy.Abs, sympy.sign, sympy.erf, sympy.StrictGreaterThan, sympy.GreaterThan,
    sympy.StrictLessThan, sympy.LessThan, sympy.Equality, sympy.Unequality,
})
# Exact types: a subclass (a matrix sum, say) keeps SymPy's own pickling.
CANONICAL_REDUCERS = {Add: _reduce_operation, Mul: _reduce_operation, Pow: _reduce_power,
                      **dict.fromkeys(UNEVALUATED_KINDS, _reduce_unevaluated)}


def allowed(module: str, name: str, found: object) -> bool:
    """Whether ``module.name`` (already imported as ``found``) may be built by a pickle."""
    if module == "builtins":
        return name in _BUILTINS
    if (module, name) in _FUNCTIONS or (module, name) in _PLAIN:
        return True
    if not isinstance(found, type):
        return False
    if module.startswith("generator."):
        return dataclasses.is_dataclass(found) or issubclass(found, enum.Enum)
    if module.startswith("sympy."):
        import sympy
        from sympy.matrices import MatrixBase

        return issubclass(found, (sympy.Basic, MatrixBase)) or type(found).__name__ == \
            "UndefinedFunction"
    if module.startswith("mpmath."):
        return name in ("mpf", "mpc")
    return False


class _SafeUnpickler(pickle._Unpickler):
    dispatch: ClassVar[dict] = dict(pickle._Unpickler.dispatch)

    def find_class(self, module: str, name: str) -> Any:
        if not (module == "builtins" or module.split(".")[0] in
                ("generator", "sympy", "mpmath", "markupsafe", "collections")):
            raise RefusedPickle(f"refused {module}.{name}")
        found = super().find_class(module, name)
        if not allowed(module, name, found):
            raise RefusedPickle(f"refused {module}.{name}")
        self._origins[id(found)] = (module, name)
        return found

    def __init__(self, file: io.BytesIO) -> None:
        super().__init__(file)
        self._origins: dict[int, tuple[str, str]] = {}

    def _check_call(self, target: object, args: object) -> None:
        origin = self._origins.get(id(target))
        if origin is None:  # built by the pickle itself: only an undefined function, f(r)
            if not (isinstance(target, type) and type(target).__name__ == "UndefinedFunction"
                    and type(target).__module__ == "sympy.core.function"):
                raise RefusedPickle("refused a call of an object the pickle built")
            origin = ("sympy.core.function", "AppliedUndef")
        if origin[0].startswith("sympy.") and origin not in _NAMED and _holds_text(args):
            raise RefusedPickle(f"refused text passed to {origin[0]}.{origin[1]}")

    def load_reduce(self) -> None:
        self._check_call(self.stack[-2], self.stack[-1])
        super().load_reduce()

    def load_newobj(self) -> None:
        self._check_call(self.stack[-2], self.stack[-1])
        super().load_newobj()

    def load_newobj_ex(self) -> None:
        self._check_call(self.stack[-3], (self.stack[-2], self.stack[-1]))
        super().load_newobj_ex()

    def load_refused(self) -> None:
        raise RefusedPickle("old pickle opcodes that call classes directly are refused")

    dispatch[pickle.REDUCE[0]] = load_reduce
    dispatch[pickle.NEWOBJ[0]] = load_newobj
    dispatch[pickle.NEWOBJ_EX[0]] = load_newobj_ex
    dispatch[pickle.OBJ[0]] = load_refused
    dispatch[pickle.INST[0]] = load_refused


def _holds_text(value: object, depth: int = 0) -> bool:
    if isinstance(value, (str, bytes, bytearray)):
        return True
    if depth > 20:
        return True  # deeper than anything the cache writes: refuse
    if isinstance(value, dict):
        return any(_holds_text(k, depth + 1) or _holds_text(v, depth + 1)
                   for k, v in value.items())
    if isinstance(value, (tuple, list, set, frozenset)):
        return any(_holds_text(item, depth + 1) for item in value)
    return False
