"""A whitelisted parser for the math strings of catalog entries.

Entries come from strangers, so math text is never handed to ``eval``, ``sympify`` or
``parse_expr``. This module tokenises the text itself and builds SymPy objects directly from a
small grammar: numbers, declared names, ``pi``/``E``/``I``, ``+ - * / **``, parentheses, a fixed
list of functions, declared free functions, coordinate differentials (line elements only) and
chained inequalities (domains only), and ``diff(f, x[, n])`` for derivatives of free
functions. Anything else is a `MathSyntaxError` with the offset of the
offending character. Size limits stop inputs such as ``9**9**9`` before SymPy evaluates them.
"""

from __future__ import annotations

import keyword
import re
import unicodedata
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from fractions import Fraction

import sympy

from generator.errors import MathSyntaxError
from generator.model import MathText

MAX_LENGTH = 20_000
MAX_DEPTH = 100
MAX_DIGITS = 40
MAX_EXPONENT = 100  # numerator and denominator bound of a numeric exponent
MAX_POWER_BITS = 4096  # bound on the size of a number raised to a number
MAX_DERIVATIVE_ORDER = 4
MAX_DEGREE = 200  # bound on the polynomial degree an expression can expand to
MAX_TERMS = 5_000  # bound on the number of terms an expression can expand to (`term_bound`)

KNOWN_FUNCTIONS: dict[str, Callable[..., sympy.Expr]] = {
    "sin": sympy.sin,
    "cos": sympy.cos,
    "tan": sympy.tan,
    "sec": sympy.sec,
    "csc": sympy.csc,
    "cot": sympy.cot,
    "sinh": sympy.sinh,
    "cosh": sympy.cosh,
    "tanh": sympy.tanh,
    "sech": sympy.sech,
    "csch": sympy.csch,
    "coth": sympy.coth,
    "asin": sympy.asin,
    "acos": sympy.acos,
    "atan": sympy.atan,
    "acot": sympy.acot,
    "asec": sympy.asec,
    "acsc": sympy.acsc,
    "asinh": sympy.asinh,
    "acosh": sympy.acosh,
    "atanh": sympy.atanh,
    "exp": sympy.exp,
    "log": sympy.log,
    "sqrt": sympy.sqrt,
    "Abs": sympy.Abs,
    "LambertW": sympy.LambertW,
}
CONSTANTS: dict[str, sympy.Expr] = {"pi": sympy.pi, "E": sympy.E, "I": sympy.I}
RESERVED = frozenset(KNOWN_FUNCTIONS) | frozenset(CONSTANTS) | {"diff"}

_TOKEN = re.compile(
    r"""
    (?P<space>\s+)
  | (?P<number>(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?)
  | (?P<name>[A-Za-z_][A-Za-z0-9_]*)
  | (?P<op>\*\*|<=|>=|[-+*/()<>,])
  | (?P<bad>.)
    """,
    re.VERBOSE | re.DOTALL,
)
_NAME = re.compile(r"[A-Za-z][A-Za-z0-9_]*\Z")
# Mathematics in prose adds relations, lists, ± and → to the grammar (see parse_prose).
_PROSE_TOKEN = re.compile(
    r"""
    (?P<space>\s+)
  | (?P<number>(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?)
  | (?P<name>[A-Za-z_][A-Za-z0-9_]*)
  | (?P<op>\*\*|<=|>=|!=|->|[-+*/()<>,=±∓≤≥≠→≈])
  | (?P<bad>.)
    """,
    re.VERBOSE | re.DOTALL,
)
PROSE_RELATIONS = {"=": "=", "!=": "≠", "≠": "≠", "<": "<", "<=": "≤", "≤": "≤", ">": ">",
                   ">=": "≥", "≥": "≥", "->": "→", "→": "→", "≈": "≈"}
PROSE_CONSTANTS: dict[str, sympy.Expr] = {"infinity": sympy.oo}


class PlusMinus(sympy.Function):
    """``a ± b`` in prose (``a`` is 0 for a leading ±): kept unevaluated, only ever typeset."""

    nargs = 2


class MinusPlus(sympy.Function):
    """``a ∓ b`` in prose, like `PlusMinus`."""

    nargs = 2


@dataclass(frozen=True)
class ProseChain:
    """``a = b < c``: expressions and the relations between them (one fewer than parts)."""

    parts: tuple[sympy.Expr, ...]
    relations: tuple[str, ...]


ProseMath = tuple[ProseChain, ...]  # comma-separated chains: ``r = 0, theta = pi/2``


@dataclass(frozen=True)
class Token:
    kind: str  # number | name | op | end
    text: str
    offset: int


@dataclass(frozen=True)
class SymbolTable:
    """What names a math string may use.

    ``symbols`` maps declared coordinate/parameter names to SymPy symbols; ``functions`` maps a
    declared free-function name to (its SymPy head, its default arguments) so ``a`` alone means
    ``a(t)``; ``differentials`` maps ``dtheta`` style names to the symbols standing for them.
    """

    symbols: Mapping[str, sympy.Symbol]
    functions: Mapping[str, tuple[sympy.FunctionClass, tuple[sympy.Symbol, ...]]]
    differentials: Mapping[str, sympy.Symbol]


def valid_name(name: str) -> bool:
    """A declarable name: an identifier that does not shadow the grammar's own words."""
    return (bool(_NAME.match(name)) and name not in RESERVED and not name.startswith("__")
            and not keyword.iskeyword(name))


def tokenize(text: str, prose: bool = False) -> list[Token]:
    if len(text) > MAX_LENGTH:
        raise MathSyntaxError(
            f"math string is {len(text)} characters long (limit {MAX_LENGTH})", MAX_LENGTH
        )
    tokens: list[Token] = []
    for match in (_PROSE_TOKEN if prose else _TOKEN).finditer(text):
        kind = match.lastgroup or "bad"
        if kind == "space":
            continue
        tokens.append(Token(kind, match.group(), match.start()))
    tokens.append(Token("end", "", len(text)))
    return tokens


def _explain_bad_character(text: str, offset: int) -> tuple[str, int, str]:
    char = text[offset]
    special = _notation_hint(text, offset)
    if special:
        return f"unexpected character {char!r}", offset, special
    hints = {
        "^": "write powers with ** (e.g. r**2)",
        ".": "attribute access is not part of the math grammar",
        "[": "indexing is not part of the math grammar",
        "=": "write one expression; equations and assignments are not allowed here",
        "'": "strings are not part of the math grammar",
        '"': "strings are not part of the math grammar",
        ":": "lambdas and slices are not part of the math grammar",
    }
    return (
        f"unexpected character {char!r}",
        offset,
        hints.get(char, "allowed: numbers, declared names, + - * / ** ( ) and known functions"),
    )


_SUPERSCRIPTS = {"²": "2", "³": "3", "⁴": "4", "¹": "1", "⁻": "-"}


def spelled_out(char: str) -> str | None:
    """'theta' for 'θ', 'Phi' for 'Φ' (Greek letters are written out in the grammar)."""
    try:
        name = unicodedata.name(char)
    except ValueError:
        return None
    for prefix, case in (("GREEK SMALL LETTER ", str.lower), ("GREEK CAPITAL LETTER ",
                                                              str.capitalize)):
        if name.startswith(prefix):
            word = name.removeprefix(prefix).split()[0]
            return case(word.replace("LAMDA", "LAMBDA"))
    return None


def _notation_hint(text: str, offset: int) -> str:
    """A fix for notation from papers and other systems: TeX, superscripts, Greek letters,
    square brackets after a function name ('' when none applies)."""
    char = text[offset]
    if char == "\\":
        word = re.match(r"[A-Za-z]+", text[offset + 1:])
        name = word.group() if word else ""
        example = f"{name}(theta)" if name in KNOWN_FUNCTIONS else (name or "theta")
        return (f"TeX is not part of the math grammar: write {example}, with powers as **, "
                f"e.g. sin(theta)**2 for \\sin^2\\theta")
    if char in _SUPERSCRIPTS:
        return f"write powers with **: sin(theta)**{_SUPERSCRIPTS[char]} for sin{char}θ"
    greek = spelled_out(char)
    if greek:
        return f"write Greek letters out: {greek} for {char}"
    if char == "[":
        before = re.search(r"([A-Za-z_]\w*)\s*$", text[:offset])
        if before:
            inside = re.match(r"[^\]]*", text[offset + 1:])
            arg = inside.group() if inside else "x"
            name = before.group(1)
            fixed = name.lower() if name.lower() in KNOWN_FUNCTIONS else name
            return f"write {fixed}({arg}): functions take round parentheses"
    return ""


class _Parser:
    """Precedence-climbing parser; each method returns a SymPy object."""

    def __init__(self, text: str, table: SymbolTable, allow_relations: bool,
                 prose: bool = False) -> None:
        self.text = text
        self.prose = prose
        self.tokens = tokenize(text, prose)
        self.index = 0
        self.table = table
        self.allow_relations = allow_relations
        self.depth = 0

    # -- token helpers
    @property
    def current(self) -> Token:
        """The next token; a character outside the grammar is reported when first reached."""
        token = self.tokens[self.index]
        if token.kind == "bad":
            raise MathSyntaxError(*_explain_bad_character(self.text, token.offset))
        return token

    def advance(self) -> Token:
        token = self.tokens[self.index]
        self.index += 1
        return token

    def expect(self, text: str) -> Token:
        if self.current.text != text:
            found = self.current.text or "end of text"
            raise MathSyntaxError(f"expected {text!r}, found {found!r}", self.current.offset,
                                  self.product_hint())
        return self.advance()

    def product_hint(self) -> str:
        """'insert '*' before 'dphi'' when a value follows a value: a product written by
        juxtaposition ('sin(theta)**2 dphi**2'), as on paper."""
        token = self.tokens[self.index]
        if token.kind in ("name", "number") or token.text == "(":
            before = self.text[:token.offset].rstrip()[-12:]
            return (f"insert '*' between '{before}' and '{token.text}': products need an "
                    f"explicit *")
        return ""

    def enter(self) -> None:
        self.depth += 1
        if self.depth > MAX_DEPTH:
            raise MathSyntaxError(
                f"expression nested more than {MAX_DEPTH} levels deep", self.current.offset
            )

    # -- grammar
    def parse(self) -> sympy.Basic:
        if self.current.kind == "end":
            raise MathSyntaxError("empty math string", 0, "write an expression, e.g. 0")
        result = self.relation() if self.allow_relations else self.sum()
        if self.current.kind != "end":
            raise MathSyntaxError(
                f"unexpected {self.current.text!r} after a complete expression",
                self.current.offset,
                self.product_hint() or "a missing operator? products need an explicit * "
                "(e.g. 2*M)",
            )
        return result

    def relation(self) -> sympy.Basic:
        left = self.sum()
        parts: list[sympy.Basic] = []
        while self.current.text in ("<", "<=", ">", ">="):
            op = self.advance().text
            right = self.sum()
            parts.append(_RELATIONS[op](left, right, evaluate=False))
            left = right
        if not parts:
            raise MathSyntaxError(
                "expected an inequality", self.current.offset, "e.g. r > 2*M or 0 < theta < pi"
            )
        return parts[0] if len(parts) == 1 else sympy.And(*parts, evaluate=False)

    def prose_math(self) -> ProseMath:
        """``chain (, chain)*`` where a chain is ``sum (relation sum)*``."""
        if self.current.kind == "end":
            raise MathSyntaxError("empty math in prose", 0, "write an expression between the $")
        chains = [self.prose_chain()]
        while self.current.text == ",":
            self.advance()
            chains.append(self.prose_chain())
        if self.current.kind != "end":
            raise MathSyntaxError(
                f"unexpected {self.current.text!r} after a complete expression",
                self.current.offset,
                "a missing operator? products need an explicit * (e.g. 2*M)",
            )
        return tuple(chains)

    def prose_chain(self) -> ProseChain:
        parts = [self.sum()]
        relations = []
        while self.current.text in PROSE_RELATIONS:
            relations.append(PROSE_RELATIONS[self.advance().text])
            parts.append(self.sum())
        return ProseChain(tuple(parts), tuple(relations))

    def sum(self) -> sympy.Expr:
        signs = ("+", "-", "±", "∓") if self.prose else ("+", "-")
        if self.prose and self.current.text in ("±", "∓"):
            value: sympy.Expr = sympy.S.Zero
        else:
            value = self.product()
        while self.current.text in signs:
            op = self.advance().text
            right = self.product()
            if op in ("±", "∓"):
                value = (PlusMinus if op == "±" else MinusPlus)(value, right)
            else:
                value = value + right if op == "+" else value - right
        return value

    def product(self) -> sympy.Expr:
        value = self.unary()
        while self.current.text in ("*", "/"):
            op = self.advance()
            right = self.unary()
            if op.text == "/":
                if right == 0:
                    raise MathSyntaxError("division by zero", op.offset)
                value = value / right
            else:
                value = value * right
        return value

    def unary(self) -> sympy.Expr:
        if self.current.text in ("+", "-"):
            op = self.advance().text
            self.enter()
            operand = self.unary()
            self.depth -= 1
            return -operand if op == "-" else operand
        return self.power()

    def power(self) -> sympy.Expr:
        base = self.atom()
        if self.current.text != "**":
            return base
        op = self.advance()
        self.enter()
        exponent = self.unary()  # right-associative, binds tighter than unary on the left
        self.depth -= 1
        _check_power(base, exponent, op.offset)
        return base**exponent

    def atom(self) -> sympy.Expr:
        token = self.current
        if token.kind == "number":
            self.advance()
            return _number(token)
        if token.kind == "name":
            return self.name()
        if token.text == "(":
            self.advance()
            self.enter()
            value = self.sum()
            self.depth -= 1
            self.expect(")")
            return value
        found = token.text or "end of text"
        raise MathSyntaxError(f"expected a number, a name or '(', found {found!r}", token.offset)

    def name(self) -> sympy.Expr:
        token = self.advance()
        name = token.text
        if name.startswith("__") or name in {"lambda", "import", "exec", "eval"}:
            raise MathSyntaxError(
                f"{name!r} is not allowed in math", token.offset, "only math names are allowed"
            )
        if name == "diff":
            return self.call_diff(token)
        if name in KNOWN_FUNCTIONS:
            return self.call_known(name, token)
        if name in self.table.functions:
            return self.call_free(name, token)
        if name in CONSTANTS:
            return CONSTANTS[name]
        if self.prose and name in PROSE_CONSTANTS and name not in self.table.symbols:
            return PROSE_CONSTANTS[name]
        if name in self.table.symbols:
            return self.table.symbols[name]
        if name in self.table.differentials:
            return self.table.differentials[name]
        raise MathSyntaxError(f"unknown name {name!r}", token.offset,
                              _unknown_name_hint(name, self.text[token.offset + len(name):]))

    def arguments(self) -> list[sympy.Expr]:
        self.expect("(")
        self.enter()
        args = [self.sum()]
        while self.current.text == ",":
            self.advance()
            args.append(self.sum())
        self.depth -= 1
        self.expect(")")
        return args

    def call_known(self, name: str, token: Token) -> sympy.Expr:
        if self.current.text != "(":
            raise MathSyntaxError(
                f"function {name!r} needs an argument in parentheses", token.offset
            )
        args = self.arguments()
        allowed = (1, 2) if name == "LambertW" else (1,)
        if len(args) not in allowed:
            raise MathSyntaxError(f"{name} takes {allowed[0]} argument", token.offset)
        if name == "LambertW" and len(args) == 2 and args[1] not in (0, -1):
            raise MathSyntaxError("LambertW's branch must be 0 or -1", token.offset)
        return KNOWN_FUNCTIONS[name](*args)

    def call_diff(self, token: Token) -> sympy.Expr:
        """``diff(f, x)``, ``diff(f, x, 2)``, ``diff(f, x, y)``: derivatives by coordinates."""
        if self.current.text != "(":
            raise MathSyntaxError("diff needs arguments: diff(a(t), t)", token.offset)
        start = self.current.offset
        args = self.arguments()
        if len(args) < 2:
            raise MathSyntaxError("diff needs an expression and a coordinate", start,
                                  "e.g. diff(a(t), t) or diff(a(t), t, 2)")
        variables: list[sympy.Expr] = []
        for arg in args[1:]:
            if arg.is_Integer and variables and 1 <= int(arg) <= MAX_DERIVATIVE_ORDER:
                variables += [variables[-1]] * (int(arg) - 1)
            elif isinstance(arg, sympy.Symbol) and arg in self.table.symbols.values():
                variables.append(arg)
            else:
                raise MathSyntaxError(f"cannot differentiate with respect to {arg}", start,
                                      "use declared coordinates and small whole orders")
        if len(variables) > MAX_DERIVATIVE_ORDER:
            raise MathSyntaxError(f"derivative order above {MAX_DERIVATIVE_ORDER}", start)
        return sympy.diff(args[0], *variables)

    def call_free(self, name: str, token: Token) -> sympy.Expr:
        head, default_args = self.table.functions[name]
        if self.current.text != "(":
            return head(*default_args)
        args = self.arguments()
        if len(args) != len(default_args):
            raise MathSyntaxError(
                f"{name} is declared with {len(default_args)} argument(s), got {len(args)}",
                token.offset,
                f"write {name}({', '.join(map(str, default_args))})",
            )
        return head(*args)


_RELATIONS = {"<": sympy.StrictLessThan, "<=": sympy.LessThan, ">": sympy.StrictGreaterThan,
              ">=": sympy.GreaterThan}


def _number(token: Token) -> sympy.Expr:
    digits = sum(ch.isdigit() for ch in token.text)
    if digits > MAX_DIGITS:
        raise MathSyntaxError(
            f"number literal has {digits} digits (limit {MAX_DIGITS})", token.offset
        )
    if "e" in token.text.lower():
        exponent = token.text.lower().partition("e")[2]
        if abs(int(exponent)) > MAX_DIGITS:
            raise MathSyntaxError("number exponent too large", token.offset)
    value = Fraction(token.text)  # exact: 0.1 is 1/10, never a float
    return sympy.Rational(value.numerator, value.denominator)


def _check_power(base: sympy.Expr, exponent: sympy.Expr, offset: int) -> None:
    """Refuse powers whose evaluation or later expansion would explode."""
    if exponent.is_Number and not exponent.is_Rational:
        raise MathSyntaxError("exponent must be exact", offset)
    if exponent.is_Rational:
        num, den = exponent.p, exponent.q
        if abs(num) > MAX_EXPONENT or den > MAX_EXPONENT:
            raise MathSyntaxError(
                f"exponent {exponent} is too large (limit {MAX_EXPONENT})",
                offset,
                "such powers would make the curvature computation explode",
            )
        if base.is_Rational and base != 0:
            bits = abs(num) * max(abs(base.p).bit_length(), base.q.bit_length())
            if bits > MAX_POWER_BITS:
                raise MathSyntaxError("number too large", offset)


def _unknown_name_hint(name: str, after: str = "") -> str:
    """How to fix an unknown name; ``after`` is the text that follows it (for 'Sin[theta]')."""
    if name.lower() in KNOWN_FUNCTIONS and name not in KNOWN_FUNCTIONS:
        bracket = re.match(r"\s*[\[(]([^\])]*)[\])]", after)
        argument = bracket.group(1) if bracket else "..."
        return (f"write {name.lower()}({argument}): function names are lower case, with "
                f"round brackets")
    if name.startswith("d") and len(name) > 1:
        return (
            "declare it under 'parameters', 'coordinates' or 'functions'; coordinate "
            "differentials such as dr are only allowed in metric.line_element"
        )
    if name.lower() in KNOWN_FUNCTIONS or name in {"ln", "arcsin", "arccos", "arctan"}:
        return "known functions: " + ", ".join(sorted(KNOWN_FUNCTIONS))
    return "declare it under 'parameters', 'coordinates' or 'functions'"


def degree_bound(expr: sympy.Basic) -> int:
    """An upper bound of the degree the expression reaches when expanded into polynomials.

    Nested integer powers multiply degrees (``((r + 1)**100 + 1)**100`` has degree 10 000), and
    the exact engine would build that polynomial inside one uninterruptible library call, so the
    parser refuses such expressions up front. Function applications count as one generator whose
    argument's degree also counts.
    """
    memo: dict[sympy.Basic, int] = {}

    def bound(node: sympy.Basic) -> int:
        if node in memo:
            return memo[node]
        if node.is_Atom:
            value = 0 if node.is_number else 1
        elif node.is_Add:
            value = max(bound(arg) for arg in node.args)
        elif node.is_Mul:
            value = sum(bound(arg) for arg in node.args)
        elif node.is_Pow and node.exp.is_Rational:
            value = abs(int(node.exp.p)) * bound(node.base)
        else:
            value = max([1, *(bound(arg) for arg in node.args)])
        memo[node] = min(value, 10**9)
        return memo[node]

    return bound(expr)


_TERM_CAP = 10**12  # counts stop growing here: enough to say "far too many"


def term_bound(expr: sympy.Basic) -> int:
    """An upper bound of the number of terms of the largest sum that expanding ``expr`` (as
    ``sympy.expand`` does, inside function arguments and denominators too) can build.

    The degree alone misses the number of variables: ``(M+a+b+c+d+e+f+g)**40`` has degree 40
    but C(47, 7) ≈ 6.3e7 terms, which took minutes and gigabytes to expand. A sum of ``t``
    terms raised to ``n`` has at most C(n+t-1, t-1) monomials; products multiply counts; sums
    add them. A power that stays a denominator, a root or a function argument is one term to
    its parent, but its own expansion counts towards the largest. Capped at 10**12.
    """
    memo: dict[sympy.Basic, int] = {}
    largest = [1]

    def terms(node: sympy.Basic) -> int:
        if node in memo:
            return memo[node]
        if node.is_Atom:
            value = 1
        elif node.is_Add:
            value = sum(terms(arg) for arg in node.args)
        elif node.is_Mul:
            value = 1
            for arg in node.args:
                value = min(value * terms(arg), _TERM_CAP)
        elif node.is_Pow and node.exp.is_Integer:
            expanded = _multinomial_terms(terms(node.base), abs(int(node.exp)))
            largest[0] = max(largest[0], expanded)
            value = expanded if node.exp > 0 else 1
        else:  # a function, a root, a non-integer power: its arguments expand on their own
            for arg in node.args:
                largest[0] = max(largest[0], terms(arg))
            value = 1
        memo[node] = value = min(value, _TERM_CAP)
        return value

    whole = terms(expr)  # first: it records the largest inner expansion on the way
    return max(largest[0], whole)


def _multinomial_terms(count: int, power: int) -> int:
    """C(power + count - 1, count - 1), the monomials of a ``count``-term sum to ``power``,
    computed with a cap so that a huge power costs nothing."""
    if count <= 1 or power <= 1:
        return count if power == 1 else 1
    k = min(power, count - 1)
    top = power + count - 1
    value = 1
    for i in range(1, k + 1):
        value = value * (top - k + i) // i
        if value >= _TERM_CAP:
            return _TERM_CAP
    return value


def _check_degree(expr: sympy.Basic) -> sympy.Basic:
    degree = degree_bound(expr)
    if degree > MAX_DEGREE:
        raise MathSyntaxError(
            f"expression expands to polynomial degree up to {degree} (limit {MAX_DEGREE})", 0,
            "nested powers multiply degrees; simplify the expression by hand")
    count = term_bound(expr)
    if count > MAX_TERMS:
        shown = f"{count:,}" if count < _TERM_CAP else f"more than {_TERM_CAP:,}"
        raise MathSyntaxError(
            f"expression expands to {shown} terms (limit {MAX_TERMS:,})", 0,
            "a power of a long sum has a vast number of terms once multiplied out; "
            "write it with fewer terms or as a named parameter")
    return expr


def parse_expression(text: str, table: SymbolTable) -> sympy.Expr:
    """Parse one math string into a SymPy expression (no differentials unless declared)."""
    return _check_degree(_Parser(text, table, allow_relations=False).parse())


def table_from_symbols(symbols: Mapping[str, sympy.Basic]) -> SymbolTable:
    """A table from ``Spacetime.symbols`` (names to symbols or applied free functions)."""
    plain: dict[str, sympy.Symbol] = {}
    functions: dict[str, tuple[sympy.FunctionClass, tuple[sympy.Symbol, ...]]] = {}
    for name, value in symbols.items():
        if isinstance(value, sympy.Symbol):
            plain[name] = value
        else:
            functions[name] = (value.func, tuple(value.args))
    return SymbolTable(plain, functions, {})


def parse_math(math: MathText, symbols: Mapping[str, sympy.Basic]) -> sympy.Expr:
    """Parse an entry's math string against a spacetime's symbols (for later stages)."""
    return parse_expression(math.text, table_from_symbols(symbols))


def parse_inequality(text: str, table: SymbolTable) -> sympy.Basic:
    """Parse a domain inequality; chains such as ``0 < theta < pi`` become an ``And``."""
    return _check_degree(_Parser(text, table, allow_relations=True).parse())


def parse_prose(text: str, table: SymbolTable) -> ProseMath:
    """Parse the mathematics of one span of prose (notes, summaries, chart descriptions).

    The same whitelisted grammar as every other math string, plus what sentences need and
    values never do: relations (``=``, ``<``, ``<=``, ``!=``, ``->``), comma-separated lists
    (``r = 0, theta = pi/2``), ``±``/``∓`` and the word ``infinity``. Unknown names are errors
    with their offset, exactly as in a metric.
    """
    result = _Parser(text, table, allow_relations=False, prose=True).prose_math()
    for chain in result:
        for part in chain.parts:
            _check_degree(part)
    return result
