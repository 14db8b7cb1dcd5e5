"""Deciding whether an expression vanishes (or two expressions agree) on an entry's spacetime.

One procedure for every verdict (claims, matter, Killing vectors, chart maps, Petrov, energy):

1. **Exact.** Both sides go into the rational-function field of ``algebra``. A zero normal form
   of the difference is a proof of equality (the field's arithmetic is a homomorphism onto
   functions). A non-zero one is a proof of difference whenever the form is canonical
   (``canonicity``); a witness point where the difference does not vanish is then computed
   from the difference itself, exactly at a rational point where possible. Sampling never
   overrules an exact answer.
2. **By cases.** Where the form is not canonical because of ``Abs`` or square roots of
   products (whose value depends on the signs of their factors), the sign of each such
   argument is proved on the domain by the sign prover (``positivity``) or, failing that, the
   domain is split (argument > 0, argument < 0) and each case is decided exactly.
3. **Sampled.** Only where neither applies: SAMPLED_POINTS fresh points drawn from the run's
   unpredictable stream (``decisions``) over the whole domain, many decades wide
   (``sampling.wide_points``), compared in mpmath at two precisions chosen from the size of
   the constants involved, so nothing overflows and a non-finite value is never "equal".
   DEVELOPERS.md §5 gives the probability argument for the number of points.

Every decision says which of the three reached it; an "equal" is recorded in the active
decision log so that each verdict's label is the weakest method it rests on.
"""

from __future__ import annotations

import dataclasses
import math
import random
from collections.abc import Callable, Iterator, Sequence

import mpmath
import sympy
from sympy.core.function import AppliedUndef

from generator.geometry import decisions
from generator.geometry.algebra import (
    Factored,
    FieldRequest,
    Frac,
    NotInField,
    RationalField,
    build_field,
    generators_of,
)
from generator.geometry.canonicity import canonical_reason
from generator.geometry.positivity import proves_sign
from generator.geometry.sampling import (
    Point,
    angle_coordinates,
    entry_points,
    iter_wide_points,
    numeric_memo,
    numeric_tree,
    sample_points,
    through_sin_cos,
    wide_points,
)
from generator.geometry.tracked import Program, tracked_value
from generator.model import Decision, Spacetime

CONFIRM_POINTS = 3  # deterministic points tried first for a witness
WITNESS_POINTS = 12  # points searched for a witness of a canonical difference
WITNESS_SEED = 20261203  # the witness search is deterministic: a page shows the same point
# Fresh points of the sampling fallback: a wrong claim whose difference is non-zero on a part
# of the domain holding a tenth of the sampling distribution survives all of them with
# probability 0.9**263 < 1e-12 (DEVELOPERS.md §5).
SAMPLED_POINTS = 263
DRAWS_PER_USABLE = 3  # points drawn per point needed (some are undefined or too costly)
BASE_DIGITS = 50  # working precision before the constants of the expressions are counted
MAX_DIGITS = 4000  # expressions needing more are not sampled ("could not decide")
MARGIN_DIGITS = 20  # digits kept beyond the estimated loss
MAX_LOSS_DIGITS = 600  # a point losing more to cancellation is skipped
MAX_CASE_DEPTH = 3  # sign splits in a row (at most 2**3 cases)
QUESTION_LIMIT = 200  # operations in an argument whose sign is asked
DIGITS = 30


def decide_zero(expr: sympy.Expr, spacetime: Spacetime) -> Decision:
    """Is ``expr`` identically zero on the spacetime's domain?"""
    return _recorded(_decide(sympy.sympify(expr), sympy.Integer(0), spacetime))


def zeros_at_once(exprs: Sequence[sympy.Expr], spacetime: Spacetime) -> list[bool] | None:
    """Which of ``exprs`` have a zero normal form in one field built for all of them (a
    tensor's components share their generators, and building the field is most of the cost
    of one decision); None when they do not fit one field. True is a proof, as in
    ``decide_zero``; False only means "not shown here" — the caller decides those one by one,
    with ``decide_zero``'s sign cases and sampling."""
    aligned = tuple(_without_subs(_aligned(sympy.sympify(e), spacetime)) for e in exprs)
    try:
        _, values = _field_of(aligned, spacetime)
    except (NotInField, ZeroDivisionError):
        return None
    found = [value.is_zero() for value in values]
    for zero in found:
        if zero:
            decisions.record("exact")
    return found


def decide_equal(claimed: sympy.Expr, computed: sympy.Expr, spacetime: Spacetime) -> Decision:
    """Is ``claimed`` equal to ``computed`` everywhere on the domain?"""
    return _recorded(_decide(sympy.sympify(claimed), sympy.sympify(computed), spacetime))


def sampled_zero(expr: sympy.Expr, spacetime: Spacetime) -> bool:
    """True when ``expr`` is decided to vanish (used by the SymPy fallback engine)."""
    return decide_zero(expr, spacetime).equal is True


def _recorded(decision: Decision) -> Decision:
    if decision.equal is True:
        decisions.record(decision.method)
    return decision


def canonical(expr: sympy.Expr, spacetime: Spacetime) -> sympy.Expr:
    """Display form: reduced fraction, factored (flint, display only), functions restored.

    Deterministic: the same expression always gives the same tree. Expressions outside the
    field get SymPy's ``factor(cancel(...))``, which is deterministic as well.
    """
    return canonical_all([expr], spacetime)[0]


def canonical_all(exprs: list[sympy.Expr], spacetime: Spacetime) -> list[sympy.Expr]:
    """``canonical`` of several expressions through one field (a tensor's components share
    their generators, and building the field is the costly part)."""
    aligned = tuple(_aligned(sympy.sympify(e), spacetime) for e in exprs)
    try:
        field, values = _field_of(aligned, spacetime)
    except (NotInField, ZeroDivisionError):
        return [sympy.factor(sympy.cancel(e)) for e in aligned]
    return [field.display(v) for v in values]


def canonical_factored(expr: sympy.Expr, spacetime: Spacetime) -> Factored:
    """The factor list ``canonical`` of ``expr`` is the product of (``factored_product``
    gives that expression back): the exact field's display factors, factored once; outside
    the field, SymPy's factor lists of ``factor(cancel(expr))``."""
    aligned = _aligned(sympy.sympify(expr), spacetime)
    try:
        field, (value,) = _field_of((aligned,), spacetime)
    except (NotInField, ZeroDivisionError):
        return factor_pairs(sympy.factor(sympy.cancel(aligned)))
    return field.display_factors(value)


def factor_pairs(expr: sympy.Expr) -> Factored:
    """A rational scale and (factor, exponent) pairs of ``expr``, negative exponents for the
    denominator's factors (SymPy's factor lists of numerator and denominator)."""
    top, bottom = sympy.fraction(sympy.together(expr))
    coefficient, factors = sympy.factor_list(top)
    bottom_coefficient, bottom_factors = sympy.factor_list(bottom)
    return (sympy.sympify(coefficient) / bottom_coefficient,
            factors + [(b, -p) for b, p in bottom_factors])


def exact_square_root(expr: sympy.Expr, spacetime: Spacetime) -> sympy.Expr | None:
    """±y with y**2 == ``expr`` exactly, when ``expr`` is a perfect square in the field
    (``RationalField.square_root``); None otherwise. Used where either sign will do, such as the
    pair of eigenvalues m ± sqrt(discriminant)."""
    expr = _aligned(sympy.sympify(expr), spacetime)
    try:
        field, (value,) = _field_of((expr,), spacetime)
    except (NotInField, ZeroDivisionError):
        return None
    root = field.square_root(value)
    return None if root is None else field.display(root)


def nonzero_in_field(field: RationalField, value: Frac, spacetime: Spacetime,
                     count: int = CONFIRM_POINTS) -> bool:
    """True when ``value`` is certainly not identically zero: it is non-zero at one of the
    first ``count`` sample points (exactly, or far outside the rounding error of a 60-digit
    evaluation where a generator is irrational there). A cheap witness for a non-zero normal
    form; False means only "no witness here", never "zero"."""
    return _witness_point(field, value, entry_points(spacetime, count), spacetime) is not None


def _field_of(
    exprs: tuple[sympy.Expr, ...], spacetime: Spacetime
) -> tuple[RationalField, list[Frac]]:
    request = FieldRequest(
        spacetime.coordinates, spacetime.parameters, spacetime.functions, exprs, 0
    )
    return build_field(request)


# ====================================================================== the decision


def _decide(left: sympy.Expr, right: sympy.Expr, spacetime: Spacetime) -> Decision:
    left, right = (_without_subs(_aligned(e, spacetime)) for e in (left, right))
    exact = _decide_exact(left, right, spacetime)
    if exact.equal is not None:
        return exact
    cases = _decide_by_cases(left, right, spacetime)
    if cases is not None:
        return cases
    return _decide_sampled(left, right, spacetime, exact.detail)


def _fallback_difference(left: sympy.Expr, right: sympy.Expr, spacetime: Spacetime
                         ) -> tuple[RationalField, Frac] | None:
    """The difference in the field, when both sides fit (it is far smaller to evaluate than
    the two sides, and its terms bound the rounding error)."""
    try:
        field, (a, b) = _field_of((left, right), spacetime)
        return field, field.sub(a, b)
    except (NotInField, ZeroDivisionError):
        return None


def _decide_exact(left: sympy.Expr, right: sympy.Expr, spacetime: Spacetime) -> Decision:
    """Equal or different by the normal form of the difference (with a witness point for a
    difference); equal None with the reason when the normal form cannot decide."""
    try:
        field, (a, b) = _field_of((left, right), spacetime)
        difference = field.sub(a, b)
    except (NotInField, ZeroDivisionError) as exc:
        return Decision(None, "failed", f"outside the exact field ({exc})")
    if difference.is_zero():
        return Decision(True, "exact", "normal form of the difference is zero")
    point = _witness_point(field, difference, entry_points(spacetime, CONFIRM_POINTS), spacetime)
    if point is not None:
        return Decision(False, "exact", "normal forms differ; the difference is non-zero at "
                        "the witness point", _witness(point, spacetime))
    reason = canonical_reason(field, difference, spacetime.parameters)
    if reason is not None:
        return Decision(None, "failed", f"normal form not canonical here ({reason})")
    point = _witness_point(field, difference, _witness_candidates(spacetime), spacetime)
    detail = "the normal form of the difference is not zero and the form is canonical here"
    if point is None:
        return Decision(False, "exact", detail + " (no witness point found in the domain)")
    return Decision(False, "exact", detail + "; the difference is non-zero at the witness "
                    "point", _witness(point, spacetime))


def _witness_candidates(spacetime: Spacetime) -> list[Point]:
    """Deterministic points for a witness: the entry's stream, then wide ones."""
    points = sample_points(spacetime, WITNESS_POINTS, WITNESS_SEED)
    return points + wide_points(spacetime, WITNESS_POINTS,
                                random.Random(WITNESS_SEED))


def _witness_point(field: RationalField, value: Frac, points: list[Point],
                   spacetime: Spacetime) -> Point | None:
    """The first of ``points`` where ``value`` is certainly non-zero (and defined)."""
    angles = angle_coordinates(spacetime)
    used = generators_of(field, value)
    for point in points:
        values = _generator_values(field, used, point, angles)
        if values is None:
            continue
        if all(v.is_Rational for v in values):
            found = field.value_at(value, values)
            if found is not None and found != 0:
                return point
        elif _numerically_nonzero(value, values, point):
            return point
    return None


def _generator_values(field: RationalField, used: set[int], point: Point,
                      angles: tuple[sympy.Symbol, ...]) -> list[sympy.Expr] | None:
    """Each used generator's value at the point: the point's own (rational) value for
    coordinates, parameters, free functions and sin/cos of angles, else the generator's
    meaning, to be evaluated numerically (not substituted: SymPy's own evaluation of a large
    argument can take long)."""
    values = []
    for k, spec in enumerate(field.specs):
        if k not in used:
            values.append(sympy.Integer(0))
        elif spec.key in point:
            values.append(point[spec.key])
        else:
            meaning = through_sin_cos(spec.meaning, angles)
            values.append(meaning if meaning.free_symbols or meaning.atoms(AppliedUndef)
                          else meaning.xreplace(point))
    return values


def _numerically_nonzero(value: Frac, values: list[sympy.Expr], point: Point) -> bool:
    """The fraction is certainly non-zero at these generator values (``frac_at``)."""
    return frac_at(value, values, point, 60) is True


def frac_at(value: Frac, values: list[sympy.Expr], point: Point, digits: int) -> bool | None:
    """True: numerator and denominator are certainly non-zero; False: the denominator is
    and the numerator is zero to the precision carried; None: not usable here.

    "Certainly": beyond MARGIN_DIGITS above the error of the evaluation, which is the sum of
    the absolute values of the terms times the precision left after the digits lost in the
    generators' own values (``tracked``); the precision is raised to cover the loss, up to
    MAX_DIGITS. mpmath's exponent range is unbounded, so nothing overflows."""
    while digits <= MAX_DIGITS:
        with mpmath.workdps(digits):
            numbers = _tracked_numbers(values, point)
            if numbers is None:
                return None
            lost = max((loss for _, loss in numbers), default=0.0)
            if lost > digits - 2 * MARGIN_DIGITS:
                if lost + digits > min(MAX_DIGITS, digits + MAX_LOSS_DIGITS):
                    return None
                digits += math.ceil(lost)
                continue
            plain = [v for v, _ in numbers]
            if _poly_size(value.den, plain, lost) is not True:
                return None
            return _poly_size(value.num, plain, lost)
    return None


def _tracked_numbers(values: list[sympy.Expr], point: Point
                     ) -> list[tuple[mpmath.mpc, float]] | None:
    try:
        memo = {k: (mpmath.mpc(v), 0.0) for k, v in numeric_memo(point).items()}
    except (KeyError, TypeError, ValueError, ZeroDivisionError):
        return None
    out = []
    for v in values:
        if v.is_Rational:
            out.append((mpmath.mpc(mpmath.mpf(int(v.p)) / int(v.q)), 0.0))
            continue
        found = _side_value(v, point, memo, mpmath.mp.dps)
        if found is None:
            return None
        out.append(found)
    return out


def _poly_size(poly, numbers: list[mpmath.mpc], lost: float) -> bool | None:
    """True: the polynomial is certainly non-zero at ``numbers``; False: it is zero to the
    precision carried; None: not a finite number."""
    total, bound = mpmath.mpc(0), mpmath.mpf(0)
    for monomial, coefficient in poly.terms():
        term = mpmath.mpf(int(coefficient.p)) / int(coefficient.q)
        for k, e in enumerate(monomial):
            if e:
                term *= numbers[k] ** int(e)
        total += term
        bound += abs(term)
    if not (mpmath.isfinite(total.real) and mpmath.isfinite(total.imag)):
        return None
    exponent = lost + MARGIN_DIGITS - mpmath.mp.dps
    return bool(abs(total) > bound * mpmath.mpf(10) ** exponent)


def _to_mpc(value: sympy.Expr, digits: int) -> mpmath.mpc | None:
    """A constant SymPy expression as an mpmath number at ``digits`` digits (None if it is not
    a finite number)."""
    try:
        number = mpmath.mpc(_numeric_tree(value, {}, digits))
    except (KeyError, TypeError, ValueError, ZeroDivisionError, OverflowError):
        number = _evalf_mpc(value, digits)
    if number is None or not (mpmath.isfinite(number.real) and mpmath.isfinite(number.imag)):
        return None
    return number


def _evalf_mpc(value: sympy.Expr, digits: int) -> mpmath.mpc | None:
    """SymPy's evaluation, for heads mpmath is not given here; never a Python float (which
    would overflow to inf)."""
    try:
        numeric = value.evalf(digits)
        re, im = numeric.as_real_imag()
        if not (re.is_number and im.is_number) or re.has(sympy.zoo, sympy.nan, sympy.oo) \
                or im.has(sympy.zoo, sympy.nan, sympy.oo):
            return None
        return mpmath.mpc(mpmath.mpf(sympy.Float(re, digits)), mpmath.mpf(sympy.Float(im, digits)))
    except (TypeError, ValueError, ZeroDivisionError, AttributeError):
        return None


def _numeric_tree(e: sympy.Basic, memo: dict, digits: int) -> mpmath.mpc:
    with mpmath.workdps(digits):
        return numeric_tree(e, memo)


# ---------------------------------------------------------------------------- by cases


def _decide_by_cases(left: sympy.Expr, right: sympy.Expr, spacetime: Spacetime
                     ) -> Decision | None:
    """Decide by the signs of the arguments of Abs and of the factors of square-root
    radicands (None when there are none, or a case cannot be decided exactly)."""
    if not sign_questions(left, right):
        return None
    return _cases(left, right, spacetime, {}, 0)


def sign_questions(*exprs: sympy.Expr) -> list[sympy.Expr]:
    """The expressions whose signs decide how Abs and square roots of products evaluate:
    the argument of each Abs, and each non-constant factor of a radicand that is not a
    single factor to the first power. Real arguments only (coordinates, parameters and free
    functions are real)."""
    found: list[sympy.Expr] = []
    for expr in exprs:
        for atom in sorted(expr.atoms(sympy.Abs), key=sympy.count_ops):
            argument = atom.args[0]
            if sympy.count_ops(argument) <= QUESTION_LIMIT and not argument.has(sympy.I):
                found.append(argument)
        for power in expr.atoms(sympy.Pow):
            found += _radicand_questions(power)
    unique: list[sympy.Expr] = []
    for q in found:
        if q not in unique and not q.is_number:
            unique.append(q)
    return unique


def _radicand_factors(power: sympy.Pow):
    """(constant, [(factor, exponent)]) of a square root's radicand (negative exponents for
    the denominator), or None when it is no candidate for a rewrite."""
    base, exponent = power.as_base_exp()
    if not (exponent.is_Rational and exponent.q == 2) or base.is_number or base.has(sympy.I):
        return None
    if sympy.count_ops(base) > QUESTION_LIMIT or not _is_rational_in_atoms(base):
        return None
    num, den = sympy.fraction(sympy.cancel(base))
    try:
        c_num, top = sympy.factor_list(num)
        c_den, bottom = sympy.factor_list(den)
    except (sympy.PolynomialError, NotImplementedError):
        return None
    factors = [(f, int(e)) for f, e in top] + [(f, -int(e)) for f, e in bottom]
    if len(factors) == 1 and factors[0][1] == 1:
        return None  # one factor to the first power: already as simple as it gets
    return c_num / c_den, factors


def _is_rational_in_atoms(expr: sympy.Expr) -> bool:
    stand_ins = {a: sympy.Dummy() for a in expr.atoms(AppliedUndef, sympy.Derivative)}
    replaced = expr.xreplace(stand_ins)
    return not replaced.atoms(sympy.Function) and replaced.is_rational_function()


def _radicand_questions(power: sympy.Pow) -> list[sympy.Expr]:
    found = _radicand_factors(power)
    return [] if found is None else [f for f, _ in found[1]]


def _proved_sign(question: sympy.Expr, spacetime: Spacetime) -> int | None:
    if proves_sign(question, spacetime):
        return 1
    if proves_sign(-question, spacetime):
        return -1
    return None


def _cases(left: sympy.Expr, right: sympy.Expr, spacetime: Spacetime,
           signs: dict[sympy.Expr, int], depth: int) -> Decision | None:
    open_questions = [q for q in sign_questions(left, right) if q not in signs]
    if not open_questions:
        return _exact_in_case(with_signs(left, signs), with_signs(right, signs), spacetime)
    question = open_questions[0]
    sign = _proved_sign(question, spacetime)
    if sign is not None:
        return _cases(left, right, spacetime, {**signs, question: sign}, depth)
    if depth >= MAX_CASE_DEPTH:
        return None
    outcomes = []
    for sign, relation in ((1, sympy.StrictGreaterThan(question, 0)),
                           (-1, sympy.StrictLessThan(question, 0))):
        case = dataclasses.replace(spacetime, domain=(*spacetime.domain, relation))
        outcome = _cases(left, right, case, {**signs, question: sign}, depth + 1)
        if outcome is not None and outcome.equal is False:
            return dataclasses.replace(outcome, detail=f"where {relation}: {outcome.detail}")
        outcomes.append(outcome)
    if all(o is not None and o.equal is True for o in outcomes):
        return Decision(True, "by cases", f"equal exactly where {question} > 0 and where "
                        f"{question} < 0")
    return None


def with_signs(expr: sympy.Expr, signs: dict[sympy.Expr, int]) -> sympy.Expr:
    """``expr`` with each Abs and each square root of a product written for the given signs
    of their arguments' factors: Abs(u) = s·u; for w = c·Π f_i**e_i with s_i f_i ≥ 0,
    w**(p/2) = (c·Π s_i**e_i)**(p/2) · Π (s_i f_i)**(e_i p/2) (principal roots of
    non-negative reals multiply; a negative constant carries the factor i)."""
    table: dict[sympy.Basic, sympy.Expr] = {}
    for atom in expr.atoms(sympy.Abs):
        sign = signs.get(atom.args[0])
        if sign is not None:
            table[atom] = sign * atom.args[0]
    for power in expr.atoms(sympy.Pow):
        found = _radicand_factors(power)
        if found is None or any(f not in signs for f, _ in found[1]):
            continue
        constant, factors = found
        p = power.exp * 2
        value = sympy.Integer(1)
        for f, e in factors:
            sign = sympy.Integer(signs[f])
            constant *= sign**e
            value *= (sign * f) ** (e * p / 2)
        table[power] = sympy.Pow(constant, p / 2) * value
    if not table:
        return expr
    rewritten = expr.xreplace(table)
    return rewritten if rewritten == expr else with_signs(rewritten, signs)


def _exact_in_case(left: sympy.Expr, right: sympy.Expr, spacetime: Spacetime
                   ) -> Decision | None:
    """Within one case: equal by a zero normal form; different only with a witness point
    inside the case (a case may be empty: a non-zero form alone proves nothing there)."""
    try:
        field, (a, b) = _field_of((left, right), spacetime)
        difference = field.sub(a, b)
    except (NotInField, ZeroDivisionError):
        return None
    if difference.is_zero():
        return Decision(True, "by cases", "normal form of the difference is zero once Abs and "
                        "square roots are written for the signs of their arguments on the domain")
    point = _witness_point(field, difference, _witness_candidates(spacetime), spacetime)
    if point is None:
        return None
    return Decision(False, "by cases", "the difference is non-zero at the witness point",
                    _witness(point, spacetime))


# ---------------------------------------------------------------------------- sampled


def _decide_sampled(left: sympy.Expr, right: sympy.Expr, spacetime: Spacetime, why: str
                    ) -> Decision:
    """The fallback: SAMPLED_POINTS usable points out of fresh wide points of the domain. A
    point where the sides certainly differ is a witness; a point where either side is not a
    finite number, or where the evaluation would need more than MAX_DIGITS, is not counted.
    The difference is evaluated in the field when both sides fit (``frac_at``), else both
    sides at two precisions (``compare_at``)."""
    digits = working_digits(left, right)
    if digits is None:
        return Decision(None, "failed", f"{why}; the constants are too large to compare "
                        f"numerically")
    angles = angle_coordinates(spacetime)
    in_field = _fallback_difference(left, right, spacetime)
    if in_field is None:
        left, right = through_sin_cos(left, angles), through_sin_cos(right, angles)
    test = _PointTest(left, right, in_field, angles)
    usable = 0
    for point in fallback_points(spacetime, SAMPLED_POINTS * DRAWS_PER_USABLE):
        verdict = test.verdict(point, digits)
        if verdict is True:
            return Decision(False, "sampled", f"{why}; differs at a random point of the "
                            f"domain", _witness(point, spacetime))
        usable += verdict is False
        if usable >= SAMPLED_POINTS:
            break
    if usable < SAMPLED_POINTS:
        return Decision(None, "failed", f"{why}; only {usable} usable random points in the "
                        f"domain (need {SAMPLED_POINTS})")
    return Decision(True, "sampled", f"{why}; equal at {usable} random points of the domain "
                    f"(fresh for each run, spread over many decades; at least {digits} "
                    f"digits beyond those lost to cancellation)")


def fallback_points(spacetime: Spacetime, count: int) -> Iterator[Point]:
    """Up to ``count`` fallback points: those this check already drew for the spacetime,
    then fresh ones from the run's stream (kept for the next decision)."""
    drawn = decisions.drawn_points(spacetime)
    yield from list(drawn[:count])
    if len(drawn) >= count:
        return
    for point in iter_wide_points(spacetime, count - len(drawn), decisions.sampling_rng()):
        drawn.append(point)
        yield point


class _PointTest:
    """Tells, point by point, whether the two sides differ, with the expressions compiled
    once (``tracked.Program``): the difference in the field when both sides fit (its
    generators evaluated numerically where a point does not give them), else the two sides.
    A head the compiler does not know is evaluated by SymPy instead (slower)."""

    def __init__(self, left: sympy.Expr, right: sympy.Expr,
                 in_field: tuple[RationalField, Frac] | None,
                 angles: tuple[sympy.Symbol, ...]) -> None:
        self.left, self.right, self.in_field, self.angles = left, right, in_field, angles
        self.program: Program | None = None
        self.compiled = False
        self.numeric: list[int] = []

    def verdict(self, point: Point, digits: int) -> bool | None:
        if not self.compiled:
            self._compile(point)
        if self.in_field is not None:
            return self._field_verdict(point, digits)
        if self.program is None:
            return compare_at(self.left, self.right, point, digits)
        return _compare(lambda d: self._sides_at(point, d), digits)

    def _compile(self, point: Point) -> None:
        self.compiled = True
        leaves = set(point)
        if self.in_field is not None:
            field, difference = self.in_field
            used = sorted(generators_of(field, difference))
            self.numeric = [k for k in used if field.specs[k].key not in point]
            exprs = [through_sin_cos(field.specs[k].meaning, self.angles)
                     for k in self.numeric]
        else:
            exprs = [self.left, self.right]
        try:
            self.program = Program(exprs, leaves)
        except KeyError:
            self.program = None
            self.in_field = None  # evaluate the two sides by SymPy, point by point

    def _sides_at(self, point: Point, digits: int) -> Difference | None:
        assert self.program is not None
        with mpmath.workdps(digits):
            try:
                (x, x_lost), (y, y_lost) = self.program.run(numeric_memo(point))
            except (ZeroDivisionError, ValueError, TypeError):
                return None
            if not all(mpmath.isfinite(v.real) and mpmath.isfinite(v.imag) for v in (x, y)):
                return None
            return x - y, max(abs(x), abs(y)), max(x_lost, y_lost)

    def _field_verdict(self, point: Point, digits: int) -> bool | None:
        assert self.in_field is not None and self.program is not None
        field, difference = self.in_field
        if not self.numeric:
            values = _generator_values(field, generators_of(field, difference), point,
                                       self.angles)
            found = field.value_at(difference, values) if values is not None else None
            return None if found is None else found != 0
        while digits <= MAX_DIGITS:
            with mpmath.workdps(digits):
                numbers = self._generator_numbers(point)
                if numbers is None:
                    return None
                lost = max((loss for _, loss in numbers), default=0.0)
                if lost > digits - 2 * MARGIN_DIGITS:
                    if lost > MAX_LOSS_DIGITS or lost + digits > MAX_DIGITS:
                        return None
                    digits += math.ceil(lost)
                    continue
                plain = [v for v, _ in numbers]
                if _poly_size(difference.den, plain, lost) is not True:
                    return None
                return _poly_size(difference.num, plain, lost)
        return None

    def _generator_numbers(self, point: Point) -> list[tuple[mpmath.mpc, float]] | None:
        assert self.in_field is not None and self.program is not None
        field, _ = self.in_field
        try:
            memo = numeric_memo(point)
            computed = self.program.run(memo)
        except (ZeroDivisionError, ValueError, TypeError, KeyError):
            return None
        if not all(mpmath.isfinite(v.real) and mpmath.isfinite(v.imag) for v, _ in computed):
            return None
        numbers = [(mpmath.mpc(0), 0.0)] * len(field.specs)
        for k, spec in enumerate(field.specs):
            if spec.key in point:
                numbers[k] = (memo[spec.key], 0.0)
        for k, found in zip(self.numeric, computed, strict=True):
            numbers[k] = found
        return numbers


def working_digits(*exprs: sympy.Expr) -> int | None:
    """Digits to carry so that constants written into the expressions cannot hide below the
    rounding error: BASE_DIGITS plus the digits of every rational and float, plus the decimal
    exponent of every exponential of a number. None when that exceeds MAX_DIGITS."""
    digits = BASE_DIGITS
    for expr in exprs:
        for atom in expr.atoms(sympy.Rational):
            digits += len(str(abs(atom.p))) + len(str(atom.q)) - 2
        for atom in expr.atoms(sympy.Float):
            digits += atom._prec // 3
        for atom in expr.atoms(sympy.exp):
            if atom.args[0].is_number:
                size = _to_mpc(atom.args[0], 30)
                if size is None or abs(size) > MAX_DIGITS * 3:
                    return None
                digits += int(abs(size) / math.log(10)) + 1
        for power in expr.atoms(sympy.Pow):
            digits += _power_digits(power)
        if digits > MAX_DIGITS:
            return None
    return digits


def _power_digits(power: sympy.Pow) -> int:
    """Decimal orders of magnitude of a number raised to a number ((1 - √2)**10000 is about
    1e-3828: it must not vanish below the rounding error of the rest)."""
    base, exponent = power.as_base_exp()
    if not (base.is_number and exponent.is_number):
        return 0
    b, e = _to_mpc(base, 30), _to_mpc(exponent, 30)
    if b is None or e is None or b == 0:
        return MAX_DIGITS
    with mpmath.workdps(30):
        return int(abs(e) * abs(mpmath.log10(abs(b)))) + 1


def compare_at(left: sympy.Expr, right: sympy.Expr, point: Point, digits: int) -> bool | None:
    """True: the sides certainly differ at the point; False: they agree to the working
    precision; None: not usable (a side is undefined or not finite there, the digits lost to
    cancellation (``tracked``) exceed MAX_LOSS_DIGITS, or two precisions disagree)."""
    return _compare(lambda d: _difference_at(left, right, point, d), digits)


Difference = tuple[mpmath.mpc, mpmath.mpf, float]  # left − right, larger magnitude, loss


def _compare(difference: Callable[[int], Difference | None], digits: int) -> bool | None:
    first = difference(digits)
    if first is None:
        return None
    if first[2] > digits - MARGIN_DIGITS:  # keep ``digits`` good digits after the loss
        if first[2] > MAX_LOSS_DIGITS or first[2] + digits > MAX_DIGITS:
            return None
        digits += math.ceil(first[2])
        first = difference(digits)
        if first is None or first[2] > digits - MARGIN_DIGITS:
            return None
    second = difference(2 * digits)
    if second is None:
        return None
    (d1, _, _), (d2, scale2, lost2) = first, second
    with mpmath.workdps(2 * digits):
        if d2 == 0:
            return False
        if abs(d2) <= scale2 * mpmath.mpf(10) ** (lost2 + MARGIN_DIGITS - 2 * digits):
            return False  # zero to the precision carried
        if abs(d1 - d2) <= abs(d2) * mpmath.mpf(10) ** -10:
            return True  # the same non-zero difference at both precisions
        if abs(d2) <= abs(d1) * mpmath.mpf(10) ** (-digits // 2):
            return False  # rounding noise: it shrank with the precision
    return None


def _difference_at(left: sympy.Expr, right: sympy.Expr, point: Point, digits: int
                   ) -> tuple[mpmath.mpc, mpmath.mpf, float] | None:
    """(left − right, the larger magnitude, digits lost) at ``digits`` digits."""
    with mpmath.workdps(digits):
        try:
            memo = {k: (mpmath.mpc(v), 0.0) for k, v in numeric_memo(point).items()}
        except (KeyError, TypeError, ValueError, ZeroDivisionError):
            return None
        values = []
        for side in (left, right):
            value = _side_value(side, point, memo, digits)
            if value is None:
                return None
            values.append(value)
        (x, x_lost), (y, y_lost) = values
        return x - y, max(abs(x), abs(y)), max(x_lost, y_lost)


def _side_value(side: sympy.Expr, point: Point, memo: dict, digits: int
                ) -> tuple[mpmath.mpc, float] | None:
    try:
        number, lost = tracked_value(side, dict(memo))
    except ZeroDivisionError:
        return None
    except (KeyError, TypeError, ValueError, OverflowError):
        try:
            number, lost = _evalf_mpc(side.xreplace(point), digits), 0.0
        except (ZeroDivisionError, ValueError):
            return None
    if number is None or not (mpmath.isfinite(number.real) and mpmath.isfinite(number.imag)):
        return None
    return number, lost


def _aligned(expr: sympy.Expr, spacetime: Spacetime) -> sympy.Expr:
    """Use the spacetime's own symbols and functions for same-named ones in ``expr``.

    SymPy tells ``Symbol('r')`` from ``Symbol('r', real=True)`` and ``Function('a')`` from
    ``Function('a', positive=True)``; a claim read with other assumptions than the metric must
    still be compared with it, not with an unrelated variable."""
    own = {str(s): s for s in (*spacetime.coordinates, *spacetime.parameters)}
    symbols = {s: own[s.name] for s in expr.free_symbols if s.name in own and own[s.name] != s}
    if symbols:
        expr = expr.xreplace(symbols)
    heads = {f.func.__name__: f.func for f in spacetime.functions}
    foreign = {
        f
        for f in expr.atoms(AppliedUndef)
        if f.func.__name__ in heads and f.func is not heads[f.func.__name__]
    }
    if foreign:
        expr = expr.xreplace({f: heads[f.func.__name__](*f.args) for f in foreign})
    return expr


def _without_subs(expr: sympy.Expr) -> sympy.Expr:
    """Evaluate ``Subs`` objects (SymPy writes derivatives of f(g(x)) with them) so both the
    field and the sample points see plain derivatives of the free functions."""
    if not expr.has(sympy.Subs):
        return expr
    return expr.replace(lambda e: isinstance(e, sympy.Subs), lambda e: e.doit())


def _witness(point: Point, spacetime: Spacetime) -> dict[str, str]:
    """The point as readable strings: coordinates, parameters and free-function values."""
    keys = list(spacetime.parameters) + list(spacetime.coordinates)
    keys += [
        k
        for k in point
        if isinstance(k, (sympy.Function, sympy.Derivative))
        and not isinstance(k, (sympy.sin, sympy.cos))
    ]
    return {str(k): str(point[k]) for k in keys if k in point}
