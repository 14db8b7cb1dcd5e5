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
"""

from __future__ import annotations

import dataclasses
import enum
import io
import pickle
from typing import Any, ClassVar

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
_FUNCTIONS = frozenset({("sympy.core.function", "_rebuild_undef")})
_PLAIN = frozenset({("markupsafe", "Markup"), ("collections", "OrderedDict")})


class RefusedPickle(pickle.UnpicklingError):
    """A pickle asked for something the cache never stores."""


def safe_loads(payload: bytes) -> Any:
    """Unpickle ``payload`` under the rules above; raises RefusedPickle (or another
    UnpicklingError) for anything else."""
    if len(payload) > MAX_PICKLE_BYTES:
        raise RefusedPickle("cache file too large")
    return _SafeUnpickler(io.BytesIO(payload)).load()


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
