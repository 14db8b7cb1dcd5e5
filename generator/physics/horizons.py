"""Horizons of an entry: where they are, what kind, and their surface gravity, area and
temperature — computed from the metric, exactly where the algebra allows.

A surface x = const is null where g^{xx} = 0 (its normal dx has norm g^{xx}). The candidates
are the factors of g^{xx}'s numerator (flint factoring) that depend on x and the parameters
only. Each root is kept exact as a generator h of the metric's field with its polynomial P(h)
(``rootfield``); the usual closed forms (linear, quadratic, biquadratic) are substituted for h
only at the end, for display and for comparing claims.

Kinds come from the sign of g^{xx} on either side of each root (x spacelike where g^{xx} > 0):
going outwards, a root where g^{xx} turns positive is a black-hole horizon (the outermost one
is the event horizon), one where it turns negative is a cosmological horizon, or an inner
(Cauchy) horizon when a black-hole horizon lies further out; a would-be cosmological horizon
whose cross-section reaches conformal infinity is an acceleration horizon (the C-metric's).
The horizon's generator is the Killing vector χ = ∂_t + Ω_H ∂_φ whose covector is normal to
it (χ_a ∝ ∂_a x on the horizon); its surface gravity is κ² = −½ ∇_a χ_b ∇^a χ^b on the
horizon (a limit along x, since the chart is usually singular there), with
∇_a χ_b = ∂_[a χ_b] because χ is Killing.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import mpmath
import sympy

from generator.geometry.algebra import (
    Factored,
    FieldRequest,
    Frac,
    NotInField,
    build_field,
    factored_product,
)
from generator.geometry.curvature import Budget, FieldArithmetic, Limits, inverse_matrix
from generator.geometry.equality import (
    canonical,
    canonical_factored,
    exact_square_root,
)
from generator.geometry.sampling import Point, angle_coordinates, entry_points, numeric_value
from generator.model import Geometry, Horizon, Spacetime
from generator.physics.cross_section import AxisRange, RangeRoot, axis_range, per_unit_words
from generator.physics.rootfield import RootField, coefficient, root_field

H = sympy.Symbol("h_root", real=True)
DIGITS = 30
PERIOD_NOTE = "azimuthal angles taken with period 2π"
# Cyclic coordinates read as azimuthal angles of period 2π (others, such as a cyclic z or y of
# a planar chart, have no known range and give no area).
AZIMUTHS = ("phi", "varphi", "psi")


# ---------------------------------------------------------------------------- candidates


def horizon_factors(spacetime: Spacetime, geometry: Geometry
                    ) -> tuple[list[tuple[int, sympy.Expr]], list[sympy.Expr]]:
    """(coordinate index, factor of g^{xx}'s numerator in x and the parameters only), and
    the factors in x that also hold radicals or functions (not solved here)."""
    n = spacetime.dimension
    diagonal = tuple(geometry.inverse_metric[i, i] for i in range(n))
    request = FieldRequest(spacetime.coordinates, spacetime.parameters, spacetime.functions,
                           diagonal, 0)
    try:
        field, values = build_field(request)
    except (NotInField, ZeroDivisionError):
        return [], []
    parameter_vars = {field.index[p] for p in spacetime.parameters if p in field.index}
    coordinate_vars = {field.index[x] for x in spacetime.coordinates if x in field.index}
    found, unsolved = [], []
    for i, value in enumerate(values):
        x = spacetime.coordinates[i]
        if value.is_zero() or x not in field.index:
            continue
        x_var = field.index[x]
        _, factors = value.num.factor()
        for factor, _power in factors:
            degrees = factor.degrees()
            used = {k for k, d in enumerate(degrees) if d}
            if degrees[x_var] >= 1 and used <= parameter_vars | {x_var}:
                found.append((i, field.poly_to_sympy(factor)))
            elif used and not used <= parameter_vars | coordinate_vars and any(
                    spec.meaning.has(x) for k, spec in enumerate(field.specs) if k in used):
                unsolved.append(field.poly_to_sympy(factor))
    return found, unsolved


def factors_in(expr: sympy.Expr, x: sympy.Symbol, spacetime: Spacetime) -> list[sympy.Expr]:
    """The distinct irreducible factors of the numerator of ``expr`` that contain ``x``,
    factored in the engine's field (python-flint): SymPy's ``factor`` on Kerr–AdS 5D's g_tt
    numerator ran for ten minutes. SymPy's ``factor`` only where the field cannot hold it."""
    request = FieldRequest(spacetime.coordinates, spacetime.parameters, spacetime.functions,
                           (expr,), 0)
    try:
        field, (value,) = build_field(request)
    except (NotInField, ZeroDivisionError):
        numerator = sympy.factor(sympy.numer(sympy.together(expr)))
        bases = [f.base if f.is_Pow else f for f in sympy.Mul.make_args(numerator)]
        return [b for b in bases if b.has(x)]
    if value.is_zero():
        return []
    # x itself, or a generator that depends on x (√(x² + y² + z²), e^{−x²/R²})
    holding_x = {k for k, spec in enumerate(field.specs) if spec.meaning.has(x)}
    if x in field.index:
        holding_x.add(field.index[x])
    _, factors = value.num.factor()
    return [field.poly_to_sympy(f) for f, _power in factors
            if any(d and k in holding_x for k, d in enumerate(f.degrees()))]


def closed_form_roots(polynomial: sympy.Expr, x: sympy.Symbol) -> list[sympy.Expr] | None:
    """All roots by radicals for degree 1, 2 and biquadratic polynomials, else None."""
    poly = sympy.Poly(polynomial, x)
    degree = poly.degree()
    coeffs = poly.all_coeffs()
    if degree == 1:
        return [-coeffs[1] / coeffs[0]]
    if degree == 2:
        a, b, c = coeffs
        root = sympy.sqrt(sympy.factor(b**2 - 4 * a * c))
        return [(-b + root) / (2 * a), (-b - root) / (2 * a)]
    if degree == 4 and coeffs[1] == 0 and coeffs[3] == 0:
        a, _, b, _, c = coeffs
        root = sympy.sqrt(sympy.factor(b**2 - 4 * a * c))
        squares = [(-b + root) / (2 * a), (-b - root) / (2 * a)]
        return [s * sympy.sqrt(q) for q in squares for s in (1, -1)]
    if degree > 2 and all(c == 0 for c in coeffs[1:-1]):
        # a binomial a x^n + c (the planar AdS black hole's r³ = 2mℓ²): the real n-th roots
        value = sympy.factor(-coeffs[-1] / coeffs[0])
        return [sympy.root(value, degree), -sympy.root(value, degree),
                -sympy.root(-value, degree), sympy.root(-value, degree)]
    return None


# ---------------------------------------------------------------------------- the whole job


def find_horizons(spacetime: Spacetime, geometry: Geometry
                  ) -> tuple[tuple[Horizon, ...], str, tuple[str, ...]]:
    """Horizons, a sentence on how complete the list is, and extremality conditions."""
    if not spacetime.lorentzian:
        return (), "not applicable: horizons need a Lorentzian metric", ()
    points = entry_points(spacetime, 3)
    if not points:
        return (), "no sample point in the domain to locate roots", ()
    factors, unsolved = horizon_factors(spacetime, geometry)
    horizons: list[Horizon] = []
    extremal: list[str] = []
    rootless: list[sympy.Expr] = []
    for x_index, factor in factors:
        found, condition, has_roots = horizons_of_factor(spacetime, geometry, x_index, factor,
                                                         points)
        horizons += found
        extremal += [condition] if condition else []
        if not has_roots and factor.free_symbols & set(spacetime.parameters):
            rootless.append(factor)
    horizons = classify_kinds(spacetime, geometry, horizons, points[0])
    unsolved_note = ""
    if unsolved:
        shown = "; ".join(str(f) for f in unsolved[:3])
        unsolved_note = (f"; g^{{xx}} also has factors with radicals or functions ({shown}) "
                         "whose zeros this version does not locate, so horizons there are "
                         "not listed")
    if not horizons:
        if unsolved:
            return (), "not determined" + unsolved_note, ()
        if rootless:
            at = ", ".join(f"{k} = {v}" for k, v in sorted(
                ((p, points[0][p]) for p in spacetime.parameters if p in points[0]), key=str))
            shown = "; ".join(str(f) for f in rootless[:3])
            return (), (f"none at the first sample parameters ({at}): the factor(s) {shown} "
                        "of g^{xx} have no real root in the chart's range there, but may for "
                        "other parameter values"), ()
        return (), ("none found: no factor of any g^{xx} (x a coordinate) vanishes at a real "
                    "value inside the chart's range; a horizon this chart does not reach in "
                    "that form (e.g. isotropic or Kruskal-type charts) is not excluded"), ()
    note = ("null surfaces x = const where a factor of g^{xx} in x and the parameters "
            "vanishes; every such root is listed, including those outside the entry's "
            "domain; roots where no Killing vector ∂_t + Ω ∂_φ is normal (such as an axis) "
            "are left out" + unsolved_note)
    return tuple(horizons), note, tuple(extremal)


def horizons_of_factor(spacetime: Spacetime, geometry: Geometry, x_index: int,
                       factor: sympy.Expr, points: Sequence[Point]
                       ) -> tuple[list[Horizon], str | None, bool]:
    """The horizons of one factor, the extremality condition, and whether it has real roots
    in range at the first sample parameters."""
    x = spacetime.coordinates[x_index]
    polynomial = sympy.expand(factor.xreplace({x: H}))
    params = {p: points[0][p] for p in spacetime.parameters if p in points[0]}
    numeric = real_roots(polynomial, params)
    positive = all(point[x] > 0 for point in points if x in point) or even_in(spacetime, x)
    if positive:
        numeric = [v for v in numeric if v > 0]
    if not numeric:
        return [], None, False
    explicit = closed_form_roots(polynomial, H)
    condition = extremality(polynomial, params) if len(numeric) > 1 else None
    try:
        data = HorizonAlgebra(spacetime, x_index, polynomial, points)
    except (NotInField, ZeroDivisionError):
        data = None
    if data is not None and data.time is not None and not data.chi and \
            data.reasons.get("normal_killing_vector", "").startswith("no Killing vector"):
        return [], None, True  # e.g. an axis of symmetry, where a rotation vector vanishes
    found = []
    for value in numeric:
        location = match_root(explicit, value, params)
        found.append(make_horizon(spacetime, geometry, x_index, polynomial, location, value,
                                  data, points))
    return found, condition, True


def real_roots(polynomial: sympy.Expr, params: dict) -> list[mpmath.mpf]:
    coeffs = sympy.Poly(polynomial.xreplace(params), H).all_coeffs()
    with mpmath.workdps(DIGITS):
        roots = mpmath.polyroots([mpmath.mpf(sympy.Rational(c).p) / sympy.Rational(c).q
                                  for c in coeffs], maxsteps=200, extraprec=60)
        out = sorted({mpmath.mpf(mpmath.re(r)) for r in roots
                      if abs(mpmath.im(r)) < mpmath.mpf(10) ** (5 - DIGITS)})
    return list(out)


def match_root(explicit: list[sympy.Expr] | None, value: mpmath.mpf, params: dict
               ) -> sympy.Expr | None:
    """The closed-form root that takes ``value`` at the sample parameters."""
    for candidate in explicit or []:
        number = numeric_value(candidate.xreplace(params), DIGITS)
        if number is not None and abs(number - value) < mpmath.mpf(10) ** (10 - DIGITS) * (
                1 + abs(value)):
            return candidate
    return None


def extremality(polynomial: sympy.Expr, params: dict) -> str:
    """Where two roots merge: the discriminant D of P vanishes (in x² for a biquadratic P);
    the side of D = 0 the sample parameters are on is where the roots are distinct."""
    poly = sympy.Poly(polynomial, H)
    coeffs = poly.all_coeffs()
    if poly.degree() == 4 and coeffs[1] == 0 and coeffs[3] == 0:
        u = sympy.Dummy("u")
        discriminant = sympy.discriminant(coeffs[0] * u**2 + coeffs[2] * u + coeffs[4], u)
    else:
        discriminant = sympy.discriminant(polynomial, H)
    shown = sympy.factor(discriminant)
    value = discriminant.xreplace(params)
    side = ">" if value.is_positive else "<" if value.is_negative else None
    if side is None:
        return f"two roots merge (extremal) where {shown} = 0"
    return (f"distinct roots while {shown} {side} 0 (as at the first sample parameters); two "
            f"roots merge (extremal) where {shown} = 0")


def even_in(spacetime: Spacetime, x: sympy.Symbol) -> bool:
    """The metric is unchanged by x → −x (then only x > 0 is kept)."""
    flipped = spacetime.metric.xreplace({x: -x})
    return all(sympy.expand(a - b) == 0 for a, b in zip(flipped, spacetime.metric, strict=True))


# ---------------------------------------------------------------------------- per factor


class HorizonAlgebra:
    """Everything at a root of one factor that does not depend on which root: the Killing
    generator, Ω_H, κ² and the area element, as fractions in h (exact modulo P(h))."""

    def __init__(self, spacetime: Spacetime, x_index: int, polynomial: sympy.Expr,
                 points: Sequence[Point]) -> None:
        self.spacetime = spacetime
        self.rf: RootField = root_field(spacetime, x_index, polynomial, H)
        self.points = points
        self.reasons: dict[str, str] = {}
        self.time, self.rotations = killing_coordinates(spacetime, points)
        self.probe = simple_point(spacetime, points[0])
        self.probes = simple_probes(spacetime, self.probe, self.others())
        self.omega: Frac | None = None  # Ω_H when at most one rotation plane
        self.omegas: dict[int, Frac] = {}  # Ω_j by coordinate index, every rotation plane
        self.kappa_squared: Frac | None = None
        self.kappa_root: Frac | None = None  # ±κ when κ² is visibly a square in h
        self.area_density: Frac | None = None
        self.chi: dict[int, Frac] = {}
        self.rotating: list[int] = []
        self.block: list[int] = []
        self._generator()
        if self.chi:
            self._surface_gravity()
        self._area_element()

    # -- helpers
    def others(self) -> list[int]:
        """Coordinates other than x and the cyclic ones (the horizon's non-Killing directions)."""
        cyclic = set(cyclic_coordinates(self.spacetime))
        return [i for i in range(self.spacetime.dimension)
                if i != self.rf.x_index and i not in cyclic]

    def constant_on_horizon(self, value: Frac) -> bool:
        """Every derivative along the horizon's other coordinates vanishes at the root (each
        derivative taken once: for a many-parameter κ² it is a large fraction)."""
        field = self.rf.field
        for i in self.others():
            derivative = field.diff(value, i)
            if not derivative.is_zero() and not self.rf.vanishes(derivative.num):
                return False
        return True

    def fixed(self, value: Frac) -> Frac | None:
        """``value`` with the other coordinates set to a point (valid when it is constant on
        the horizon: then every point where it is defined gives the same value at the root);
        the shortest of the sample point and simple points (angles at 0 or π/2, other
        coordinates at 0 or 1), so that no digits of a random sample point are shown. None
        when no generator has a rational value at any of them."""
        found = [v for v in (self._fixed_at(value, probe) for probe in self.probes)
                 if v is not None]
        return min(found, key=lambda v: (v.size(), len(str(v.num)) + len(str(v.den))),
                   default=None)

    def _fixed_at(self, value: Frac, point: Point) -> Frac | None:
        field = self.rf.field
        angles = angle_coordinates(self.spacetime)
        from generator.geometry.sampling import substitute

        replacements = {}
        for k, spec in enumerate(field.specs):
            if spec.kind in ("parameter", "constant") or k == self.rf.x_var:
                continue
            if not any(spec.meaning.has(self.spacetime.coordinates[i]) for i in self.others()):
                continue
            if value.num.degrees()[k] == 0 and value.den.degrees()[k] == 0:
                continue
            try:
                number = substitute(spec.meaning, point, angles)
            except (ZeroDivisionError, ValueError, TypeError):
                return None
            if not number.is_Rational:
                return None
            replacements[f"g{k}"] = number
        if not replacements:
            return value
        import flint

        values = {name: flint.fmpq(int(v.p), int(v.q)) for name, v in replacements.items()}
        num, den = value.num.subs(values), value.den.subs(values)
        if den.is_zero() or self.rf.vanishes(den):
            return None
        return field.normal(num, den)

    # -- the generator of the horizon
    def _generator(self) -> None:
        """χ = ∂_t + Σ_j Ω_j ∂_{φ_j} over every axial Killing coordinate coupled to t
        (one Ω per commuting rotation: two in five dimensions, ⌊(n−1)/2⌋ in general), with
        the Ω_j solving χ_a = 0 on the horizon for each rotation a (Cramer's rule in the
        root's field): then χ_a is along dx there, checked for every other a."""
        g, field = self.rf.metric, self.rf.field
        if self.time is None:
            self.reasons["normal_killing_vector"] = ("the metric depends on every coordinate "
                                                     "but x: no stationary Killing vector ∂_t")
            return
        t = self.time
        rotating = coupled_rotations(g, t, self.rotations)
        omegas = self._angular_velocities(rotating)
        if omegas is None:
            return
        self.omegas = omegas
        self.omega = omegas[rotating[0]] if len(rotating) == 1 else (
            field.zero() if not rotating else None)
        self.rotating = rotating
        n = self.spacetime.dimension
        chi = {a: field.sum([g[a][t]] + [field.mul(omegas[j], g[a][j]) for j in rotating])
               for a in range(n)}
        for a in range(n):
            if a == self.rf.x_index:
                continue
            lowered = self.rf.at_root(chi[a])
            if lowered is None or (not lowered.is_zero() and not self.rf.vanishes(lowered.num)):
                self.reasons["normal_killing_vector"] = (
                    "no Killing vector ∂_t + Σ Ω ∂_φ is normal to it (χ_a is not along dx)")
                self.omega, self.omegas = None, {}
                return
        self.chi = chi

    def _angular_velocities(self, rotating: list[int]) -> dict[int, Frac] | None:
        """Ω_j for the rotations ``rotating`` (Σ_j g_aj Ω_j = −g_at at the root), each
        constant on the horizon and fixed at a sample point; None with the reason recorded
        where they do not exist."""
        g, field = self.rf.metric, self.rf.field
        t = self.time
        if not rotating:
            return {}
        ar = FieldArithmetic(field)
        matrix, rhs = [], []
        for a in rotating:
            row = [self.rf.at_root(g[a][j]) for j in rotating]
            right = self.rf.at_root(g[a][t])
            if right is None or any(v is None for v in row):
                self.reasons["normal_killing_vector"] = "g_tφ / g_φφ is singular there"
                return None
            matrix.append(row)
            rhs.append(field.neg(right))
        det = field_det(ar, matrix)
        if det.is_zero() or self.rf.vanishes(det.num):
            self.reasons["normal_killing_vector"] = ("the rotations' metric block is degenerate "
                                                     "there: no unique angular velocities")
            return None
        omegas: dict[int, Frac] = {}
        for k, j in enumerate(rotating):
            replaced = [[*row[:k], rhs[i], *row[k + 1:]] for i, row in enumerate(matrix)]
            omega = field.div(field_det(ar, replaced), det)
            if not self.constant_on_horizon(omega):
                self.reasons["normal_killing_vector"] = ("the angular velocity -g_tφ/g_φφ is "
                                                         "not constant on it")
                return None
            omega = self.fixed(omega)
            if omega is None:
                self.reasons["normal_killing_vector"] = "Ω_H has no rational sample value"
                return None
            omegas[j] = omega
        return omegas

    # -- κ²
    def _surface_gravity(self) -> None:
        field = self.rf.field
        ar = FieldArithmetic(field)
        n = self.spacetime.dimension
        inverse = inverse_matrix(ar, [list(row) for row in self.rf.metric],
                                 Budget.start(Limits()))
        curl = [[field.scale(field.sub(field.diff(self.chi[b], a), field.diff(self.chi[a], b)),
                             sympy.Rational(1, 2)) for b in range(n)] for a in range(n)]
        raised = [[field.sum([field.mul(inverse[a][c], field.mul(inverse[b][d], curl[c][d]))
                              for c in range(n) for d in range(n)
                              if not curl[c][d].is_zero()]) for b in range(n)] for a in range(n)]
        square = field.sum([field.mul(curl[a][b], raised[a][b]) for a in range(n)
                            for b in range(n)])
        value = self.rf.limit(field.scale(square, sympy.Rational(-1, 2)))
        if value is None:
            self.reasons["surface_gravity"] = "−½ ∇χ·∇χ has no finite limit on the horizon"
            return
        if not self.constant_on_horizon(value):
            self.reasons["surface_gravity"] = ("κ² is not constant on it (not a Killing "
                                               "horizon of ∂_t + Ω ∂_φ)")
            return
        self.kappa_squared = self.fixed(value)
        if self.kappa_squared is not None:
            self.kappa_root = self.rf.field.square_root(self.kappa_squared)
        if self.kappa_squared is not None and location_free(self):
            # the remainder modulo P(h) is equal at every root; shown when it has fewer
            # terms and loses no visible square root
            reduced = self.rf.reduce(self.kappa_squared)
            if reduced is not None and reduced.size() < self.kappa_squared.size():
                root = self.rf.field.square_root(reduced)
                if root is not None or self.kappa_root is None:
                    self.kappa_squared, self.kappa_root = reduced, root
        if self.kappa_squared is None:
            self.reasons["surface_gravity"] = "κ² has no rational sample value"

    # -- area element
    def _area_element(self) -> None:
        n = self.spacetime.dimension
        skip = {self.rf.x_index} | ({self.time} if self.time is not None else set())
        if self.time is None:
            self.reasons["area"] = "no time coordinate to cut the horizon at t = const"
            return
        block = [a for a in range(n) if a not in skip]
        ar = FieldArithmetic(self.rf.field)
        # determinant by Laplace expansion in the field (blocks are at most 3x3 here)
        values = [[self.rf.metric[a][b] for b in block] for a in block]
        det = field_det(ar, values)
        at = self.rf.at_root(det)
        if at is None:
            self.reasons["area"] = "the induced metric is singular on the horizon"
            return
        self.area_density = at
        self.block = block


def simple_point(spacetime: Spacetime, point: Point) -> Point:
    """The sample point with each polar angle (0 < y < π in the domain) moved to π/2, where
    sin = 1 and cos = 0: quantities constant on a horizon are then read off in their
    shortest form."""
    probe = dict(point)
    for y in spacetime.coordinates:
        if polar_range(spacetime, y) is not None:
            probe[y] = sympy.pi / 2
            probe[sympy.sin(y)] = sympy.Integer(1)
            probe[sympy.cos(y)] = sympy.Integer(0)
    return probe


SIMPLE_PROBES = 16  # at most this many simple points are tried per quantity


def simple_probes(spacetime: Spacetime, probe: Point, others: Sequence[int]) -> list[Point]:
    """The sample point, then points with each other coordinate moved to a simple value:
    angles to 0 or π/2 (sin and cos 0 or 1), other coordinates to 0 or 1."""
    from itertools import islice, product

    angles = set(angle_coordinates(spacetime))
    choices = []
    for i in others:
        y = spacetime.coordinates[i]
        if y in angles:
            choices.append([(y, sympy.Integer(0), 0, 1), (y, sympy.pi / 2, 1, 0)])
        else:
            choices.append([(y, sympy.Integer(0), None, None), (y, sympy.Integer(1), None,
                                                                 None)])
    out = [probe]
    for combination in islice(product(*choices), SIMPLE_PROBES):
        point = dict(probe)
        for y, value, sine, cosine in combination:
            point[y] = value
            if sine is not None:
                point[sympy.sin(y)] = sympy.Integer(sine)
                point[sympy.cos(y)] = sympy.Integer(cosine)
        out.append(point)
    return out


def field_det(ar: FieldArithmetic, m: list[list[Frac]]) -> Frac:
    size = len(m)
    if size == 0:
        return ar.one()
    if size == 1:
        return m[0][0]
    terms = []
    for j in range(size):
        if m[0][j].is_zero():
            continue
        minor = [row[:j] + row[j + 1:] for row in m[1:]]
        term = ar.product(m[0][j], field_det(ar, minor))
        terms.append(term if j % 2 == 0 else ar.scale(term, -1))
    return ar.sum(terms)


def coupled_rotations(g: Sequence[Sequence[Frac]], t: int, rotations: list[int]) -> list[int]:
    """The axial Killing coordinates coupled to t: those with g_tφ ≠ 0 and, closing the set,
    those with g_φψ ≠ 0 to one already in it (their Ω must cancel that coupling)."""
    found = [j for j in rotations if not g[t][j].is_zero()]
    grown = True
    while grown:
        grown = False
        for j in rotations:
            if j not in found and any(not g[j][k].is_zero() for k in found):
                found.append(j)
                grown = True
    return sorted(found)


def cyclic_coordinates(spacetime: Spacetime) -> list[int]:
    return [i for i, x in enumerate(spacetime.coordinates)
            if not any(v.has(x) for v in spacetime.metric)]


def killing_coordinates(spacetime: Spacetime, points: Sequence[Point]
                        ) -> tuple[int | None, list[int]]:
    """The time coordinate (cyclic, g_tt < 0 at the most sample points; None when no cyclic
    coordinate is timelike at any) and the other cyclic coordinates (rotations)."""
    cyclic = cyclic_coordinates(spacetime)
    if not cyclic:
        return None, []
    angles = angle_coordinates(spacetime)
    from generator.geometry.sampling import substitute

    def timelike_votes(i: int) -> int:
        votes = 0
        for point in points:
            number = numeric_value(substitute(spacetime.metric[i, i], point, angles), DIGITS)
            votes += 1 if number is not None and mpmath.re(number) < 0 else 0
        return votes

    scores = {i: timelike_votes(i) for i in cyclic}
    best = max(cyclic, key=lambda i: (scores[i], -i))
    if not scores[best]:
        return None, []  # no cyclic coordinate is timelike anywhere sampled
    return best, [i for i in cyclic if i != best]


# ---------------------------------------------------------------------------- per root


def make_horizon(spacetime: Spacetime, geometry: Geometry, x_index: int,
                 polynomial: sympy.Expr, location: sympy.Expr | None, value: mpmath.mpf,
                 data: HorizonAlgebra | None, points: Sequence[Point]) -> Horizon:
    x = spacetime.coordinates[x_index]
    names = [str(c) for c in spacetime.coordinates]
    reasons: dict[str, str] = {}
    if location is None:
        shown_location = H
        how = (f"root of {sympy.factor(polynomial)} = 0 in h = {x} (no closed form used; "
               f"h ≈ {mpmath.nstr(value, 12)} at the first sample parameters)")
    else:
        shown_location = location
        how = f"root of {sympy.factor(polynomial.xreplace({H: x}))} = 0, by radicals"
    place = domain_place(spacetime, x, value, points[0])
    how += f"; {place}"
    if data is None:
        reason = "the metric does not fit the exact field"
        return Horizon(str(x), shown_location, polynomial, "undetermined", None, None, None,
                       None, None, None, how, {"all": reason}, mpmath.nstr(value, 20))

    def at(value_frac: Frac | None, key: str) -> sympy.Expr | None:
        if value_frac is None:
            reasons[key] = data.reasons.get(key, data.reasons.get("normal_killing_vector",
                                                                   "not computed"))
            return None
        return in_location(data.rf.field.display(value_frac), location)

    vector = None
    omegas: tuple[tuple[str, sympy.Expr], ...] = ()
    if data.chi:
        omegas = tuple((names[j], shortest(at(data.omegas[j], "angular_velocity"), spacetime,
                                           location)) for j in data.rotating)
        vector = ((names[data.time], sympy.Integer(1)),
                  *((name, w) for name, w in omegas if w != 0))
    if len(data.rotating) > 1 and data.chi:
        omega = None
        reasons["angular_velocity"] = (f"{len(data.rotating)} rotation planes: one angular "
                                       "velocity each (" + ", ".join(
                                           f"Ω_{name}" for name, _ in omegas) + ")")
    else:
        omega = shortest(at(data.omega, "angular_velocity"), spacetime, location)
    if data.chi and not data.rotating and not data.rotations:
        omega = None
        reasons["angular_velocity"] = "no axial Killing coordinate"
    kappa_squared = shortest(at(data.kappa_squared, "surface_gravity"), spacetime, location)
    kappa = None
    numeric_point = {p: points[0][p] for p in spacetime.parameters if p in points[0]}
    numeric_point[H] = sympy.Rational(mpmath.nstr(value, 25))
    if kappa_squared is not None:
        if data.kappa_root is not None:
            kappa = signed_positive(at(data.kappa_root, "surface_gravity"), numeric_point,
                                    spacetime)
        if kappa is None:
            kappa = positive_root(kappa_squared, spacetime, points)
    if kappa_squared is not None and kappa is None:
        reasons["surface_gravity"] = "κ² found but its sign could not be fixed"
    temperature = None if kappa is None else kappa / (2 * sympy.pi)
    extra: dict = {}
    if location is None and kappa is not None:
        extra.update(kappa_in_root(spacetime, data, numeric_point))
    exact = horizon_area(spacetime, data, location, numeric_point)
    if exact.value is not None and exact.roots:
        exact = cross_checked(exact, spacetime, data, value, numeric_point)
    area, area_how = exact.value, exact.how
    numeric_area: NumericArea | None = None
    if area is None:
        numeric_area, numeric_why = numeric_area_at(spacetime, data, value, numeric_point)
        if numeric_area is None:
            reasons["area"] = area_how if numeric_why in ("", area_how) else \
                f"{area_how}; {numeric_why}"
        else:
            reasons["area"] = (f"{area_how}: the area is given numerically ({NUMERIC_AREA_DIGITS} "
                               "significant digits) at the first sample parameters")
            how += f"; area numeric ({numeric_area.how})"
            extra.update({"area_method": "numeric", "area_numeric": numeric_area.value,
                          "area_digits": NUMERIC_AREA_DIGITS,
                          "area_parameters": numeric_area.parameters,
                          "area_per": numeric_area.per_unit})
            if numeric_area.per_unit:
                reasons["area"] = (f"the cross-section is not compact in "
                                   f"{', '.join(numeric_area.per_unit)}: the area is given "
                                   f"{per_unit_words(numeric_area.per_unit)}, numerically")
    else:
        how += f"; area {area_how}"
        extra["area_method"] = "exact"
        extra["area_roots"] = tuple((str(r.symbol), r.coordinate, r.polynomial, r.numeric,
                                     r.end) for r in exact.roots)
        if exact.per_unit:
            extra["area_per_unit"], extra["area_per"] = area, exact.per_unit
            reasons["area"] = (f"the cross-section is not compact in {', '.join(exact.per_unit)}"
                               f": the area is given {per_unit_words(exact.per_unit)} instead "
                               "(a total would depend on an identification the entry does not "
                               "declare)")
            area = None
    if len(omegas) > 1:
        extra["angular_velocities"] = omegas
    return Horizon(str(x), shown_location, polynomial, "", vector, omega, kappa_squared, kappa,
                   temperature, area, how, reasons, mpmath.nstr(value, 20), **extra)


def kappa_in_root(spacetime: Spacetime, data: HorizonAlgebra, numeric_point: dict) -> dict:
    """κ at an h_root horizon with a parameter eliminated by the root's polynomial (M in
    terms of r₊; ``root_elimination``), where κ² has more than LONG_TERMS terms: the
    Horizon fields ``in_root_parameter``, ``in_root_value`` and ``surface_gravity_in_root``
    (empty when nothing shorter is found)."""
    from generator.physics.root_elimination import LONG_TERMS, eliminate_parameter

    square = data.kappa_squared
    if square is None or square.size() <= LONG_TERMS:
        return {}
    found = eliminate_parameter(data.rf, spacetime, square)
    if found is None:
        return {}
    field = data.rf.field
    root = field.square_root(found.result)
    if root is not None:
        kappa = signed_positive(sympy.factor(field.display(root)), numeric_point, spacetime)
    else:
        kappa = sympy.sqrt(sympy.factor(field.display(found.result)))
    if kappa is None:
        return {}
    return {"in_root_parameter": str(found.parameter),
            "in_root_value": sympy.factor(field.display(found.value)),
            "surface_gravity_in_root": kappa}


def cross_checked(exact: ExactArea, spacetime: Spacetime, data: HorizonAlgebra,
                  value: mpmath.mpf, numeric_point: dict) -> ExactArea:
    """An exact area that holds range ends without closed form, kept only when mpmath's
    quadrature of the density between the numeric ends agrees with it at the first sample
    parameters (a pole of the density inside the range would make the antiderivative
    lie)."""
    from dataclasses import replace

    numeric, _ = numeric_area_at(spacetime, data, value, numeric_point)
    point = dict(numeric_point)
    point.update({sympy.Symbol(r.symbol.name, real=True): sympy.Rational(r.numeric)
                  for r in exact.roots})
    number = numeric_value(exact.value.xreplace(point), DIGITS)
    if numeric is None or number is None or abs(mpmath.im(number)) > 0 or abs(
            mpmath.re(number) - mpmath.mpf(numeric.value)) > mpmath.mpf(10) ** (
            3 - NUMERIC_AREA_DIGITS) * abs(mpmath.mpf(numeric.value)):
        return replace(exact, value=None, how=(
            "no area: the antiderivative between the range's ends is not confirmed by "
            "quadrature, as where the density diverges on the range (a horizon that reaches "
            "conformal infinity has no finite area)"))
    return replace(exact, how=exact.how + "; agrees with mpmath quadrature at the first "
                   "sample parameters")


def domain_place(spacetime: Spacetime, x: sympy.Symbol, value: mpmath.mpf, point: Point) -> str:
    """Whether the root lies inside the entry's domain, on its boundary, or outside it."""
    from generator.geometry.sampling import inside_domain

    def inside(v: mpmath.mpf) -> bool:
        probe = dict(point)
        probe[x] = sympy.Rational(str(mpmath.nstr(v, 25)))
        return inside_domain(spacetime, probe)

    step = mpmath.mpf(10) ** -8 * (1 + abs(value))
    if inside(value):
        return "inside the entry's domain"
    if inside(value + step) or inside(value - step):
        return "on the boundary of the entry's domain"
    return "outside the entry's domain (in the chart's continuation)"


def shortest(expr: sympy.Expr | None, spacetime: Spacetime, location: sympy.Expr | None
             ) -> sympy.Expr | None:
    """The shorter of the factored and the canonical (rationalised) form of ``expr``."""
    if expr is None or location is None:
        return expr
    other = canonical(expr, spacetime)
    return other if sympy.count_ops(other) < sympy.count_ops(expr) else expr


def in_location(expr: sympy.Expr, location: sympy.Expr | None) -> sympy.Expr:
    """An expression in h written at the horizon's closed-form location (kept in h_root
    when there is none)."""
    return expr if location is None else expr.xreplace({H: location})


def signed_positive(root: sympy.Expr, point: dict, spacetime: Spacetime) -> sympy.Expr | None:
    """±root, whichever is positive at the point (None when it is zero or not real there)."""
    number = numeric_value(root.xreplace(point), DIGITS)
    if number is None or abs(mpmath.im(number)) > mpmath.mpf(10) ** (5 - DIGITS):
        return None
    if mpmath.re(number) > 0:
        return root
    if mpmath.re(number) < 0:
        return sympy.factor(-root)
    return None


def positive_root(square: sympy.Expr, spacetime: Spacetime, points: Sequence[Point]
                  ) -> sympy.Expr | None:
    """κ ≥ 0 with κ² = ``square``: an exact square root when the field finds one (its sign
    chosen positive at the sample parameters), else sqrt(κ²) as it stands."""
    if square == 0:
        return sympy.Integer(0)
    root = exact_square_root(square, spacetime)
    if root is None and has_fractional_power(square):
        root = denested_root(canonical(square, spacetime), spacetime)
    if root is None:
        return sympy.sqrt(square)
    signs = set()
    for point in points:
        number = numeric_value(root.xreplace({p: point[p] for p in spacetime.parameters
                                              if p in point}), DIGITS)
        if number is None or abs(mpmath.im(number)) > 0:
            return sympy.sqrt(square)
        signs.add(mpmath.re(number) > 0)
    if len(signs) != 1:
        return sympy.sqrt(square)
    return root if signs == {True} else canonical(-root, spacetime)


def has_fractional_power(expr: sympy.Expr) -> bool:
    """Whether ``expr`` holds a root (a power with a non-integer rational exponent). Without
    one its canonical form holds none either (the field's radical generators come only from
    such powers), so ``denested_root`` has nothing to denest and the costly canonical form
    of a large κ² in h_root is not built."""
    return any(p.exp.is_Rational and not p.exp.is_Integer for p in expr.atoms(sympy.Pow))


def radical_parts(square: sympy.Expr, radical: sympy.Pow, spacetime: Spacetime
                  ) -> tuple[sympy.Expr, sympy.Expr, sympy.Expr] | None:
    """(A, B, w) with ``square`` = A + B·w, where w is the exact field's generator for the
    radical (w = D·√d, D the denominator of the radicand d) and A, B are free of it.

    Read off the normal form in the field (python-flint): its denominators are rationalised
    and its numerators reduced modulo w² = D²d, so the numerator is A' + B'·w. None when
    ``square`` does not fit the field or holds another radical."""
    try:
        field, (value,) = build_field(FieldRequest(spacetime.coordinates, spacetime.parameters,
                                                   spacetime.functions, (square,), 0))
    except (NotInField, ZeroDivisionError):
        return None
    found = [k for k, spec in enumerate(field.specs) if spec.kind == "radical"]
    if len(found) != 1:
        return None
    z = found[0]
    spec = field.specs[z]
    if spec.degree != 2 or value.den.degrees()[z] > 0 or value.num.degrees()[z] > 1 or \
            sympy.cancel(spec.base - radical.base) != 0:
        return None
    one = field.ctx.constant(1)
    den = field.normal(value.den, one)
    even = field.div(field.normal(coefficient(value.num, z, 0, field.ctx), one), den)
    odd = field.div(field.normal(coefficient(value.num, z, 1, field.ctx), one), den)
    return field.display(even), field.display(odd), spec.meaning


def denested_root(square: sympy.Expr, spacetime: Spacetime) -> sympy.Expr | None:
    """sqrt(A + B√W) = x + y√W when A² − B²W and (A ± √(A² − B²W))/2 are squares.

    A and B come from the exact field's normal form of ``square`` (``radical_parts``, with
    √W the field's generator for the radical); ``exact_square_root`` and ``canonical``
    normalise whatever form they are given, so the intermediate fractions need no SymPy
    ``cancel`` (that was most of the time of Kerr–Newman's horizons). The result is
    ``canonical`` of the root, whose square is checked against ``square`` exactly."""
    radicals = [r for r in square.atoms(sympy.Pow) if r.exp == sympy.Rational(1, 2)]
    if len(radicals) != 1:
        return None
    parts = radical_parts(square, radicals[0], spacetime)
    if parts is None:
        return None
    a, b, w = parts
    if b == 0:
        return None
    inner = exact_square_root(a**2 - b**2 * w**2, spacetime)
    if inner is None:
        return None
    for sign in (1, -1):
        x = exact_square_root((a + sign * inner) / 2, spacetime)
        if x is None or x == 0:
            continue
        candidate = x + b / (2 * x) * w
        if canonical(candidate**2 - square, spacetime) == 0:
            return canonical(candidate, spacetime)
    return None


# ---------------------------------------------------------------------------- area


@dataclass(frozen=True)
class CrossSection:
    """The horizon cross-section's coordinate ranges: ``ranges`` are integrated over;
    ``per_unit`` are cyclic directions with no range (the area is per unit coordinate
    range of them); ``roots`` stand for range ends without closed form; ``words`` say how
    each range was fixed."""

    ranges: tuple[tuple[sympy.Symbol, sympy.Expr, sympy.Expr], ...]
    per_unit: tuple[sympy.Symbol, ...]
    roots: tuple[RangeRoot, ...]
    numeric_ends: dict
    words: tuple[str, ...]


def cross_section_ranges(spacetime: Spacetime, data: HorizonAlgebra) -> CrossSection | str:
    """The coordinate ranges of the horizon's cross-section (polar angles from the domain,
    azimuths of period 2π, a coordinate between two axes from the metric, cyclic directions
    with no range per unit coordinate range), or why it has none."""
    ranges, per_unit, roots, words = [], [], [], []
    numeric_ends: dict = {}
    cyclic = set(cyclic_coordinates(spacetime))
    azimuths = [a for a in data.block if a in cyclic and str(spacetime.coordinates[a])
                in AZIMUTHS]
    periods = dict(spacetime.periods)
    for a in data.block:
        y = spacetime.coordinates[a]
        if a in cyclic and y in periods:
            declared, why = declared_range(spacetime, y, periods[y], data.points)
            if declared is None:
                return why
            ranges.append((y, sympy.Integer(0), periods[y]))
            numeric_ends[periods[y]] = declared
            words.append(f"{y} identified with the declared period {periods[y]}")
            continue
        bounds = angle_range(spacetime, y)
        if bounds is not None:
            ranges.append((y, *bounds))
            continue
        if a in azimuths:
            ranges.append((y, sympy.Integer(0), 2 * sympy.pi))
            continue
        found = axis_range(spacetime, a, azimuths, data.points) if a not in cyclic else None
        if isinstance(found, AxisRange):
            ranges.append((y, found.low, found.high))
            roots += found.roots
            words.append(found.describe(y))
            for end, number in zip((found.low, found.high), found.numeric, strict=True):
                numeric_ends[end] = number
        elif a in cyclic:
            per_unit.append(y)
        else:
            return found or (f"the cross-section is not compact in {y} and {y} is not a "
                             "cyclic direction: no range is known and an area per unit "
                             "coordinate range would not be constant")
    return CrossSection(tuple(ranges), tuple(per_unit), tuple(roots), numeric_ends,
                        tuple(words))


def declared_range(spacetime: Spacetime, y: sympy.Symbol, period: sympy.Expr,
                   points: Sequence[Point]) -> tuple[str | None, str]:
    """The declared period at the first sample parameters (a decimal string, the numeric
    end of the range), or None and why it cannot be used: not a positive number there."""
    values = {p: points[0][p] for p in spacetime.parameters if p in points[0]} if points \
        else {}
    number = numeric_value(period.xreplace(values), DIGITS)
    if number is None or abs(mpmath.im(number)) > 0 or not mpmath.re(number) > 0:
        return None, (f"the declared period of {y} is not a positive number at the first "
                      "sample parameters")
    return mpmath.nstr(mpmath.re(number), DIGITS), ""


@dataclass(frozen=True)
class ExactArea:
    """The area (or the area per unit coordinate range of ``per_unit``), how it was found,
    and the range ends without closed form it holds."""

    value: sympy.Expr | None
    how: str
    per_unit: tuple[str, ...] = ()
    roots: tuple[RangeRoot, ...] = ()


def horizon_area(spacetime: Spacetime, data: HorizonAlgebra, location: sympy.Expr | None,
                 numeric_point: dict) -> ExactArea:
    """∫ sqrt(det γ) over the horizon's cross-section t = const: exact when the density is a
    product of angle factors and a constant whose square root is found, over known ranges.
    Where the root has no closed form, the density is first reduced modulo its polynomial
    (terms that vanish only at the root drop out) and the constant part may stay a square
    root of an expression in h_root: still exact at the root."""
    if data.area_density is None:
        return ExactArea(None, data.reasons.get("area", "not computed"))
    section = cross_section_ranges(spacetime, data)
    if isinstance(section, str):
        return ExactArea(None, section)
    ranges = section.ranges
    angles = [y for y, _, _ in ranges]
    free = {r.symbol for r in section.roots}
    in_h = data.rf.field.display_factors(data.area_density)
    if any(base.has(y) for base, _ in in_h[1] for y in section.per_unit):
        return ExactArea(None, "the area density depends on a direction with no range")
    root = density_root(in_h, spacetime, angles)
    if root is not None:
        root = in_location(root, location)
    elif location is not None:
        at_location = factored_product(in_h).xreplace({H: location})
        root = density_root(canonical_factored(at_location, spacetime), spacetime, angles)
    else:
        reduced = data.rf.reduce(data.area_density)
        if reduced is not None:
            root = density_root(data.rf.field.display_factors(reduced), spacetime, angles,
                                radical_in_root=True)
    if root is None:
        return ExactArea(None, "the area density has no exact square root in the field")
    root = positive_cosines(root, ranges)
    try:
        integral = root
        for y, low, high in reversed(ranges):
            integral = integrate_separated(integral, y, low, high)
    except (ValueError, TypeError, NotImplementedError):
        return ExactArea(None, "the area integral is not elementary here")
    if integral.has(sympy.Integral):
        return ExactArea(None, "the area integral is not elementary here")
    point = dict(numeric_point)
    point.update({r.symbol: sympy.Rational(r.numeric) for r in section.roots})
    area = signed_positive(sympy.factor(integral), point, spacetime)
    if area is None:
        return ExactArea(None, "the area came out zero or not real at the sample parameters")
    if free and not area.free_symbols & free:
        area = sympy.factor(area)
    parts = []
    if any(polar_range(spacetime, y) for y in angles):
        parts.append("polar angles over (0, π) from the domain")
    elif any(angle_range(spacetime, y) for y in angles):
        parts.append("polar angles over (0, π/2) from the domain")
    if any(str(y) in AZIMUTHS for y in angles):
        parts.append(PERIOD_NOTE)
    parts += list(section.words)
    names = tuple(str(y) for y in section.per_unit)
    if names:
        parts.append(f"{per_unit_words(names)} (not compact: no range known, no total area)")
    return ExactArea(area, "exact" + (": " + "; ".join(parts) if parts else ""), names,
                     section.roots)


def integrate_separated(integrand: sympy.Expr, y: sympy.Symbol, low: sympy.Expr,
                        high: sympy.Expr) -> sympy.Expr:
    """∫ integrand dy over (low, high), with the factor free of y taken out first: SymPy's
    integrator then sees sin θ instead of (r₊² + a²)·sin θ, and gives the same value in a
    fraction of the time (the free factor is a constant of this integration)."""
    constant, varying = integrand.as_independent(y, as_Add=False)
    if varying == 1:
        return constant * (high - low)
    return constant * sympy.integrate(varying, (y, low, high))


NUMERIC_AREA_DIGITS = 15  # significant digits reported for a numeric area
QUADRATURE_DIGITS = 40  # working precision of the quadrature (the root is known to 30)


@dataclass(frozen=True)
class NumericArea:
    value: str
    parameters: tuple[tuple[str, str], ...]
    how: str
    per_unit: tuple[str, ...] = ()


def numeric_area_at(spacetime: Spacetime, data: HorizonAlgebra, root: mpmath.mpf,
                    point: dict) -> tuple[NumericArea | None, str]:
    """The area by mpmath quadrature (tanh–sinh) at the first sample parameters, where the
    integral is not elementary. Refused — never shown — when the density is not real and
    positive, the value not finite, or the quadrature's error estimate too large."""
    if data.area_density is None:
        return None, "no area density"
    section = cross_section_ranges(spacetime, data)
    if isinstance(section, str):
        return None, section
    ranges = [(y, section.numeric_ends.get(low, low), section.numeric_ends.get(high, high))
              for y, low, high in section.ranges]
    ranges = [(y, sympy.Rational(low) if isinstance(low, str) else low,
               sympy.Rational(high) if isinstance(high, str) else high)
              for y, low, high in ranges]
    reduced = data.rf.reduce(data.area_density) if location_free(data) else None
    density = data.rf.field.display(reduced if reduced is not None else data.area_density)
    fixed = {p: v for p, v in point.items() if p != H}
    with mpmath.workdps(QUADRATURE_DIGITS):
        memo = {p: mpmath.mpf(sympy.Rational(v).p) / sympy.Rational(v).q
                for p, v in fixed.items()}
        memo[H] = mpmath.mpf(root)
        integrated = [(y, low, high) for y, low, high in ranges if density.has(y)]
        factor = mpmath.mpf(1)
        for y, low, high in ranges:
            if not density.has(y):
                factor *= mpmath.mpf(numeric_value(high - low, QUADRATURE_DIGITS).real)
        try:
            value, error = quadrature(density, memo, integrated)
        except (ValueError, TypeError, ZeroDivisionError, KeyError, ArithmeticError) as exc:
            return None, f"the numeric quadrature failed ({type(exc).__name__})"
        if value is None:
            return None, "the area density is not real and positive on the cross-section"
        value *= factor
        error *= factor
        if not mpmath.isfinite(value) or value <= 0 or not mpmath.isfinite(error) or \
                error > abs(value) * mpmath.mpf(10) ** -(NUMERIC_AREA_DIGITS + 2):
            return None, "the numeric quadrature did not converge to a finite value"
        shown = mpmath.nstr(value, NUMERIC_AREA_DIGITS)
    parameters = tuple(sorted((str(p), str(v)) for p, v in fixed.items()))
    how = (f"mpmath tanh–sinh quadrature at {QUADRATURE_DIGITS} digits, at the root "
           f"{mpmath.nstr(root, 20)} for " + ", ".join(f"{p} = {v}" for p, v in parameters))
    if any(str(y) in AZIMUTHS for y, _, _ in ranges):
        how += "; " + PERIOD_NOTE
    if section.per_unit:
        how += "; " + per_unit_words([str(y) for y in section.per_unit])
    return NumericArea(shown, parameters, how, tuple(str(y) for y in section.per_unit)), ""


def location_free(data: HorizonAlgebra) -> bool:
    return data.rf.relation.degrees()[data.rf.h_var] > 1


def quadrature(density: sympy.Expr, memo: dict, ranges: Sequence[tuple[sympy.Symbol,
               sympy.Expr, sympy.Expr]]) -> tuple[mpmath.mpf | None, mpmath.mpf]:
    """∫ sqrt(density) over ``ranges`` (value, error estimate); value None where the density
    is negative or not real somewhere the rule samples it."""
    from generator.geometry.sampling import numeric_tree

    bad = []

    def integrand(*angles: mpmath.mpf) -> mpmath.mpf:
        local = dict(memo)
        local.update({y: mpmath.mpf(v) for (y, _, _), v in zip(ranges, angles, strict=True)})
        number = mpmath.mpc(numeric_tree(density, local))
        if not mpmath.isfinite(number) or abs(number.imag) > abs(number.real) * \
                mpmath.mpf(10) ** (8 - QUADRATURE_DIGITS) or number.real < 0:
            bad.append(number)
            return mpmath.mpf(0)
        return mpmath.sqrt(number.real)

    if not ranges:
        return integrand(), mpmath.mpf(0)
    bounds = [[numeric_value(low, QUADRATURE_DIGITS).real, numeric_value(high,
               QUADRATURE_DIGITS).real] for _, low, high in ranges]
    value, error = mpmath.quad(integrand, *bounds, error=True)
    return (None if bad else mpmath.mpf(value)), mpmath.mpf(error)


def density_root(factored: Factored, spacetime: Spacetime, angles: list[sympy.Symbol],
                 radical_in_root: bool = False) -> sympy.Expr | None:
    """sqrt(density) for a product of angle factors (even powers, taken positive on the
    ranges: sin of a polar angle is positive on (0, π)) and a constant part (exact square
    root, denested, or left as sqrt). A constant part in h_root is kept under sqrt only
    when ``radical_in_root`` (the caller then checks it is real and positive at the root).
    The density comes as its factor list (``display_factors`` of the exact field, or
    ``equality.factor_pairs``), so that it is never factored twice."""
    constant, factors = factored
    angular = sympy.Integer(1)
    for base, power in factors:
        if base.free_symbols & set(angles):
            if power % 2:
                return None
            piece = base ** (power // 2)
            if isinstance(base, sympy.sin) or (base.is_Pow and isinstance(base.base, sympy.sin)):
                angular *= piece
            elif base.free_symbols <= set(angles) | set(spacetime.parameters) | {H}:
                angular *= sympy.Abs(piece)
            else:
                return None
        else:
            constant *= base**power
    if constant.free_symbols & set(spacetime.coordinates):
        return None
    if constant == 1:
        return angular
    if constant.has(H):
        root = sympy.sqrt(constant)
        if radical_in_root:
            return angular * root
        return angular * root if not isinstance(root, sympy.Pow) or root.exp != sympy.Rational(
            1, 2) else None
    root = exact_square_root(constant, spacetime) or denested_root(constant, spacetime)
    return angular * (root if root is not None else sympy.sqrt(constant))


def sign_fixed(value: sympy.Expr, spacetime: Spacetime, points: Sequence[Point]) -> sympy.Expr:
    number = numeric_value(value.xreplace({p: points[0][p] for p in spacetime.parameters
                                          if p in points[0]}), DIGITS)
    if number is not None and mpmath.re(number) < 0:
        return canonical(-value, spacetime)
    return value


def angle_range(spacetime: Spacetime, y: sympy.Symbol) -> tuple[sympy.Expr, sympy.Expr] | None:
    """(0, π) for a polar angle, or (0, π/2) when the domain says 0 < y < π/2 (the angle
    between the two rotation planes of a five-dimensional chart, as in Myers–Perry)."""
    found = polar_range(spacetime, y)
    if found is not None:
        return found
    return (sympy.Integer(0), sympy.pi / 2) if bounded_by(spacetime, y, sympy.pi / 2) else None


def bounded_by(spacetime: Spacetime, y: sympy.Symbol, top: sympy.Expr) -> bool:
    """The domain holds 0 < y and y < top (strict or not)."""
    lower = upper = False
    for relation in spacetime.domain:
        if not isinstance(relation, sympy.core.relational.Relational):
            continue
        if isinstance(relation, (sympy.StrictLessThan, sympy.LessThan)):
            small, big = relation.lhs, relation.rhs
        elif isinstance(relation, (sympy.StrictGreaterThan, sympy.GreaterThan)):
            small, big = relation.rhs, relation.lhs
        else:
            continue
        lower |= small == 0 and big == y
        upper |= small == y and big == top
    return lower and upper


def positive_cosines(root: sympy.Expr, ranges: Sequence[tuple[sympy.Symbol, sympy.Expr,
                                                              sympy.Expr]]) -> sympy.Expr:
    """|cos y| is cos y on a range inside (0, π/2): said so, so that the integral is
    elementary."""
    inside = [y for y, low, high in ranges if low == 0 and high == sympy.pi / 2]
    return root.xreplace({sympy.Abs(sympy.cos(y)): sympy.cos(y) for y in inside})


def polar_range(spacetime: Spacetime, y: sympy.Symbol) -> tuple[sympy.Expr, sympy.Expr] | None:
    """(0, π) when the domain says 0 < y < π (a polar angle)."""
    lower = upper = False
    for relation in spacetime.domain:
        if not isinstance(relation, sympy.core.relational.Relational):
            continue
        lhs, rhs = relation.lhs, relation.rhs
        if isinstance(relation, (sympy.StrictLessThan, sympy.LessThan)):
            small, big = lhs, rhs
        elif isinstance(relation, (sympy.StrictGreaterThan, sympy.GreaterThan)):
            small, big = rhs, lhs
        else:
            continue
        lower |= small == 0 and big == y
        upper |= small == y and big == sympy.pi
    return (sympy.Integer(0), sympy.pi) if lower and upper else None


# ---------------------------------------------------------------------------- kinds


def inward_coordinate(spacetime: Spacetime, x_index: int, point: Point) -> bool:
    """Does the coordinate x grow inwards? Outwards is where the orbits of the other
    spatial coordinates grow: the determinant of the metric on them (t and x left out)
    shrinks as x grows at the sample point (e.g. the C-metric's y, which is like 1/r). A
    determinant that does not change (a product with a constant sphere) keeps x's own
    direction."""
    from generator.geometry.sampling import substitute

    time, _ = killing_coordinates(spacetime, [point])
    block = [a for a in range(spacetime.dimension) if a not in (x_index, time)]
    if time is None or not block:
        return False
    x = spacetime.coordinates[x_index]
    if x not in point or not point[x].is_Rational:
        return False
    angles = angle_coordinates(spacetime)
    step = sympy.Rational(1, 10**6) * (1 + abs(point[x]))
    values = []
    for shifted in (point[x] - step, point[x] + step):
        probe = dict(point)
        probe[x] = shifted
        # The determinant of the numbers, not the number of the symbolic determinant: the
        # symbolic 3 × 3 determinant of Kerr–AdS in five dimensions took minutes to expand.
        entries = [[numeric_value(substitute(spacetime.metric[a, b], probe, angles), DIGITS)
                    for b in block] for a in block]
        if any(e is None for row in entries for e in row):
            return False
        with mpmath.workdps(DIGITS):
            number = mpmath.det(mpmath.matrix(entries))
        if abs(mpmath.im(number)) > abs(mpmath.re(number)) * 1e-20:
            return False
        values.append(abs(mpmath.re(number)))
    return values[1] < values[0] * (1 - mpmath.mpf(10) ** -12)



def classify_kinds(spacetime: Spacetime, geometry: Geometry, horizons: list[Horizon],
                   point: Point) -> list[Horizon]:
    """Kinds from the sign of g^{xx} just below and just above each root (at the first sample
    point): − → + going outwards is a black-hole horizon (the outermost such is the event
    horizon), + → − a cosmological horizon, or an inner one when a black-hole horizon lies
    further out. No sign change (a double root) leaves the kind "horizon"."""
    from dataclasses import replace

    angles = angle_coordinates(spacetime)
    from generator.geometry.sampling import substitute

    out = []
    for coordinate in sorted({h.coordinate for h in horizons}):
        index = [str(c) for c in spacetime.coordinates].index(coordinate)
        x = spacetime.coordinates[index]
        component = geometry.inverse_metric[index, index]
        group = sorted((h for h in horizons if h.coordinate == coordinate),
                       key=lambda h: mpmath.mpf(h.numeric_location))
        turns = []
        for h in group:
            value = mpmath.mpf(h.numeric_location)
            step = mpmath.mpf(10) ** -6 * (1 + abs(value))
            signs = []
            for v in (value - step, value + step):
                probe = dict(point)
                probe[x] = sympy.Rational(mpmath.nstr(v, 25))
                number = numeric_value(substitute(component, probe, angles), DIGITS)
                signs.append(0 if number is None else mpmath.sign(mpmath.re(number)))
            turns.append(tuple(signs))
        if inward_coordinate(spacetime, index, point):
            # x grows inwards (the C-metric's y ~ 1/r): "outwards" is decreasing x
            group, turns = group[::-1], [(above, below) for below, above in turns[::-1]]
        black = [k for k, turn in enumerate(turns) if turn == (-1, 1)]
        for k, (h, turn) in enumerate(zip(group, turns, strict=True)):
            if h.kind == "undetermined":
                kind = "undetermined"
            elif turn == (-1, 1):
                kind = "event" if k == max(black) else "horizon"
            elif turn == (1, -1):
                kind = "inner" if any(b > k for b in black) else "cosmological"
                if kind == "cosmological" and reaches_conformal_infinity(spacetime, h, point):
                    kind = "acceleration"
            else:
                kind = "horizon"
            if kind == "acceleration" and h.area is None and h.area_method != "numeric":
                h = replace(h, reasons={**h.reasons, "area": ACCELERATION_AREA})
            out.append(replace(h, kind=kind))
    return out


ACCELERATION_AREA = ("no finite area: the cross-section reaches conformal infinity (the "
                     "metric diverges on it), as an acceleration horizon does")


def reaches_conformal_infinity(spacetime: Spacetime, horizon: Horizon, point: Point) -> bool:
    """Does the horizon's cross-section reach conformal infinity: does a metric component
    along a cross-section coordinate y with a range fixed by the metric (between two axes)
    diverge somewhere on that closed range at the root? Its denominator then has a factor
    in x and y (the C-metric's conformal factor 1/(x + y)², which vanishes on the
    acceleration horizon at the axis x = x₁). A cosmological horizon of de Sitter type is a
    compact sphere and never does. Read at the first sample parameters, like the kinds."""
    from generator.physics.cross_section import real_roots as roots_in

    names = [str(c) for c in spacetime.coordinates]
    x_index = names.index(horizon.coordinate)
    x = spacetime.coordinates[x_index]
    time, _ = killing_coordinates(spacetime, [point])
    cyclic = set(cyclic_coordinates(spacetime))
    azimuths = [a for a in cyclic if names[a] in AZIMUTHS]
    values = {p: point[p] for p in spacetime.parameters if p in point}
    values[x] = sympy.Rational(mpmath.nstr(mpmath.mpf(horizon.numeric_location), 25))
    for a in range(spacetime.dimension):
        if a in (x_index, time) or a in cyclic:
            continue
        y = spacetime.coordinates[a]
        if angle_range(spacetime, y) is not None:
            continue  # a polar angle: its range is not fixed by zeros of a polynomial
        try:
            found = axis_range(spacetime, a, azimuths, [point])
        except (sympy.PolynomialError, ValueError, TypeError, ZeroDivisionError):
            continue
        if not isinstance(found, AxisRange):
            continue
        low, high = (mpmath.mpf(end) for end in found.numeric)
        tolerance = mpmath.mpf(10) ** -15 * (1 + abs(low) + abs(high))
        _, bottom = sympy.fraction(sympy.together(spacetime.metric[a, a]))
        for factor, _power in sympy.factor_list(bottom)[1]:
            if not (factor.has(x) and factor.has(y)) or factor.free_symbols - {
                    x, y, *spacetime.parameters}:
                continue
            try:
                roots = roots_in(factor, y, values)
            except (sympy.PolynomialError, ValueError, TypeError, ZeroDivisionError):
                continue
            if any(low - tolerance <= v <= high + tolerance for v in roots):
                return True
    return False
