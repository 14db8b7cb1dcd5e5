"""Classify & verify (1/4): what kind of matter supports the geometry, and is the declared source
right?

The geometry alone decides vacuum (R_ab = 0) and Λ-vacuum (R_ab = (R/n) g_ab, R constant).
Any other spacetime needs a source: the declared one (Maxwell field, perfect fluid, null dust,
anisotropic fluid) is rebuilt from its own data and must satisfy G_ab + Λ g_ab = 8π T_ab
component by component. Every zero test goes through ``equality.decide_zero``.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass, field

import sympy

from generator.entry.mathparse import parse_math
from generator.errors import Diagnostic, MathSyntaxError
from generator.geometry.equality import canonical_all, decide_equal
from generator.geometry.exactvalues import coordinate_names, index_label, vanish_each, vanishes
from generator.model import Decision, Entry, Geometry, MathText, Spacetime
from generator.physics.exact_sources import exact_electrovacuum

SOURCE_KINDS = ("electrovacuum", "perfect-fluid", "null-dust", "anisotropic-fluid",
                "scalar-field", "nonlinear-electrodynamics", "dilaton-maxwell")
EINSTEIN_KINDS = ("vacuum", "lambda-vacuum")
EIGHT_PI = 8 * sympy.pi


@dataclass(frozen=True)
class MatterResult:
    """What `classify` needs from this stage: the computed kind, Λ, T and any problems."""

    kind: str
    cosmological_constant: sympy.Expr | None
    stress_energy: sympy.ImmutableMatrix | None  # T_ab
    stress_energy_mixed: sympy.ImmutableMatrix | None  # T^a_b
    diagnostics: tuple[Diagnostic, ...] = ()
    reasons: dict[str, str] = field(default_factory=dict)
    source: SourceData | None = None


@dataclass(frozen=True)
class SourceData:
    """Parsed declared source, kept so energy conditions can use e.g. the null-dust density."""

    kind: str
    density: sympy.Expr | None = None
    vector: tuple[sympy.Expr, ...] | None = None  # u^a or k^a
    pressures: tuple[sympy.Expr, ...] | None = None  # principal pressures when declared


@dataclass(frozen=True)
class Geometric:
    """What the geometry alone says about the matter (vacuum, Λ-vacuum or neither)."""

    kind: str  # vacuum | lambda-vacuum | non-vacuum | undecided
    cosmological_constant: sympy.Expr | None
    failing: tuple[str, ...] = ()  # components that fail the vacuum / Einstein test
    undecided: tuple[str, ...] = ()


class SourceProblem(Exception):
    """A declared source cannot be built (unparsable text, unknown coordinate, missing data)."""

    def __init__(self, diagnostic: Diagnostic) -> None:
        super().__init__(diagnostic.message)
        self.diagnostic = diagnostic


# ---------------------------------------------------------------------------- geometry alone


def pairs(n: int) -> list[tuple[int, int]]:
    return [(a, b) for a in range(n) for b in range(a, n)]


def failing_components(matrix: sympy.Matrix, spacetime: Spacetime, name: str,
                       symmetric: bool = True) -> tuple[list[str], list[str]]:
    """Labels of the components that are not zero, and of those that could not be decided."""
    n = spacetime.dimension
    indices = pairs(n) if symmetric else [(a, b) for a in range(n) for b in range(n)]
    decisions = vanish_each([matrix[a, b] for a, b in indices], spacetime)
    return labelled(indices, decisions, spacetime, name)


def labelled(indices: list[tuple[int, int]], decisions: list[Decision], spacetime: Spacetime,
             name: str) -> tuple[list[str], list[str]]:
    """``failing_components``' labels for decisions already made."""
    names = coordinate_names(spacetime)
    failing, undecided = [], []
    for (a, b), decision in zip(indices, decisions, strict=True):
        label = name.format(index_label(names, (a,)), index_label(names, (b,)),
                            index_label(names, (a, b)))
        if decision.equal is False:
            failing.append(label)
        elif decision.equal is None:
            undecided.append(label)
    return failing, undecided


def geometric_kind(geometry: Geometry, spacetime: Spacetime) -> Geometric:
    """Vacuum, Λ-vacuum (with Λ = (n-2)R/(2n)) or neither, from the Ricci tensor alone."""
    n = geometry.dimension
    indices = pairs(n)
    decisions = vanish_each([geometry.ricci[a, b] for a, b in indices], spacetime)
    failing, undecided = labelled(indices, decisions, spacetime, "R_{2}")
    if not failing and not undecided:
        return Geometric("vacuum", None)
    if n < 3:
        return Geometric("non-vacuum", None, tuple(failing), tuple(undecided))
    scalar = geometry.ricci_scalar
    traceless_name = "R_{2} - (R/n) g_{2}"
    if scalar == 0:  # traceless already (Maxwell fields): the components decided above
        off, unsure = labelled(indices, decisions, spacetime, traceless_name)
    else:
        traceless = geometry.ricci - scalar / n * geometry.metric
        off, unsure = failing_components(traceless, spacetime, traceless_name)
    constant = all(vanishes(sympy.diff(scalar, x), spacetime).equal is True
                   for x in spacetime.coordinates)
    if not off and not unsure and constant:
        return Geometric("lambda-vacuum", sympy.factor((n - 2) * scalar / (2 * n)))
    if unsure or undecided:
        return Geometric("undecided", None, tuple(off), tuple(unsure + undecided))
    return Geometric("non-vacuum", None, tuple(failing), ())


# ---------------------------------------------------------------------------- parsing the source


def parse_field(entry: Entry, spacetime: Spacetime, key: str, text: MathText) -> sympy.Expr:
    """Parse one math string of the matter block with the whitelisted parser."""
    try:
        return parse_math(text, spacetime.symbols)
    except MathSyntaxError as exc:
        raise SourceProblem(Diagnostic.at(text.pos_at(exc.offset), "error", exc.message,
                                          "math.syntax", exc.hint)) from exc


def parse_vector(entry: Entry, spacetime: Spacetime, key: str,
                 items: Sequence[tuple[str, MathText]]) -> list[sympy.Expr]:
    """Components by coordinate name into a list in index order (missing ones are zero)."""
    names = coordinate_names(spacetime)
    values = [sympy.Integer(0)] * len(names)
    for name, text in items:
        if name not in names:
            raise SourceProblem(Diagnostic.at(
                entry.pos(f"{key}.{name}"), "error",
                f"'{name}' in {key} is not a coordinate of this entry", "matter.component",
                f"use the coordinate names {', '.join(names)}"))
        values[names.index(name)] = parse_field(entry, spacetime, f"{key}.{name}", text)
    return values


def require(entry: Entry, key: str, value: object, kind: str) -> None:
    if value is None or value == ():
        raise SourceProblem(Diagnostic.at(
            entry.pos("matter.kind"), "error", f"matter kind '{kind}' needs '{key}'",
            "matter.missing", f"add matter.{key} (see the entry format)"))


def require_all(entry: Entry, kind: str, **values: object) -> None:
    """``require`` for each key of a matter kind, in the order given (the first missing one
    is the one reported)."""
    for key, value in values.items():
        require(entry, key, value, kind)


def declared_lambda(entry: Entry, spacetime: Spacetime) -> sympy.Expr | None:
    text = entry.matter.cosmological_constant
    if text is None:
        return None
    return parse_field(entry, spacetime, "matter.cosmological_constant", text)


# ---------------------------------------------------------------------------- sources


def lower(vector: Sequence[sympy.Expr], metric: sympy.Matrix) -> list[sympy.Expr]:
    n = len(vector)
    return [sum((metric[a, b] * vector[b] for b in range(n)), sympy.Integer(0))
            for a in range(n)]


def norm(vector: Sequence[sympy.Expr], metric: sympy.Matrix) -> sympy.Expr:
    return sum((v * w for v, w in zip(vector, lower(vector, metric), strict=True)),
               sympy.Integer(0))


def field_strength(potential: Sequence[sympy.Expr], coordinates: Sequence[sympy.Symbol]
                   ) -> sympy.Matrix:
    """F_ab = ∂_a A_b − ∂_b A_a."""
    n = len(coordinates)
    return sympy.Matrix(n, n, lambda a, b: sympy.diff(potential[b], coordinates[a])
                        - sympy.diff(potential[a], coordinates[b]))


def maxwell_divergence(F: sympy.Matrix, geometry: Geometry,
                       coordinates: Sequence[sympy.Symbol]) -> list[sympy.Expr]:
    """∇_a F^ab = ∂_a F^ab + Γ^a_ac F^cb, with Γ^a_ac = ∂_c(det g)/(2 det g).

    Writing the contracted Christoffel symbol through det g itself (not √|g|) keeps the
    divergence free of square roots and of the sign of the determinant.
    """
    ginv = geometry.inverse_metric
    upper = ginv * F * ginv.T
    det = geometry.metric.det()
    n = len(coordinates)
    trace_gamma = [sympy.diff(det, x) / (2 * det) for x in coordinates]
    return [sum((sympy.diff(upper[a, b], coordinates[a]) + trace_gamma[a] * upper[a, b]
                 for a in range(n)), sympy.Integer(0)) for b in range(n)]


def maxwell_stress(F: sympy.Matrix, geometry: Geometry) -> sympy.Matrix:
    """T_ab = (F_ac F_b^c − ¼ g_ab F_cd F^cd)/4π (Gaussian units, signature −+++)."""
    g, ginv = geometry.metric, geometry.inverse_metric
    mixed = F * ginv  # F_a^c
    invariant = sum((F[c, d] * (ginv * F * ginv.T)[c, d] for c in range(g.rows)
                     for d in range(g.rows)), sympy.Integer(0))
    return (F * mixed.T - g * invariant / 4) / (4 * sympy.pi)


def perfect_fluid(density: sympy.Expr, pressure: sympy.Expr, velocity: Sequence[sympy.Expr],
                  metric: sympy.Matrix) -> sympy.Matrix:
    u = lower(velocity, metric)
    n = len(u)
    return sympy.Matrix(n, n, lambda a, b: (density + pressure) * u[a] * u[b]) + pressure * metric


def null_dust(density: sympy.Expr, direction: Sequence[sympy.Expr], metric: sympy.Matrix
              ) -> sympy.Matrix:
    k = lower(direction, metric)
    n = len(k)
    return sympy.Matrix(n, n, lambda a, b: density * k[a] * k[b])


# ---------------------------------------------------------------------------- checking a source


@dataclass(frozen=True)
class Built:
    """A declared source rebuilt from the entry: T_ab, or T^a_b for anisotropic fluids."""

    stress: sympy.Matrix
    mixed: bool
    side_problems: tuple[Diagnostic, ...]
    source: SourceData


def build_electrovacuum(entry: Entry, spacetime: Spacetime, geometry: Geometry) -> Built:
    require(entry, "potential", entry.matter.potential, "electrovacuum")
    potential = parse_vector(entry, spacetime, "matter.potential", entry.matter.potential)
    F = field_strength(potential, spacetime.coordinates)
    divergence = maxwell_divergence(F, geometry, spacetime.coordinates)
    names = coordinate_names(spacetime)
    bad = [f"∇_a F^a{index_label(names, (b,))}" for b, value in enumerate(divergence)
           if vanishes(value, spacetime).equal is not True]
    problems = ()
    if bad:
        problems = (Diagnostic.at(
            entry.pos("matter.potential"), "error",
            f"the declared potential does not solve Maxwell's equations: "
            f"{', '.join(bad)} ≠ 0 (or undecided)", "matter.maxwell",
            "check A_a (lower index) and its sign; sources outside the field are not allowed "
            "in an electrovacuum"),)
    return Built(maxwell_stress(F, geometry), False, problems, SourceData("electrovacuum"))


def exact_maxwell(entry: Entry, spacetime: Spacetime, geometry: Geometry,
                  Lambda: sympy.Expr | None) -> Built | None:
    """The Maxwell source when all its equations hold in the exact field (``exact_sources``);
    None sends the check down the SymPy path, which names what fails."""
    if not entry.matter.potential:
        return None
    try:
        potential = parse_vector(entry, spacetime, "matter.potential", entry.matter.potential)
    except SourceProblem:
        return None
    found = exact_electrovacuum(spacetime, geometry.einstein, potential, Lambda)
    if found is None:
        return None
    return Built(found.stress, False, (), SourceData("electrovacuum"))


def build_perfect_fluid(entry: Entry, spacetime: Spacetime, geometry: Geometry) -> Built:
    m = entry.matter
    for key, value in (("density", m.density), ("pressure", m.pressure),
                       ("velocity", m.velocity)):
        require(entry, key, value, "perfect-fluid")
    assert m.density is not None and m.pressure is not None
    rho = parse_field(entry, spacetime, "matter.density", m.density)
    p = parse_field(entry, spacetime, "matter.pressure", m.pressure)
    u = parse_vector(entry, spacetime, "matter.velocity", m.velocity)
    problems = ()
    normalisation = vanishes(norm(u, geometry.metric) + 1, spacetime)
    if normalisation.equal is not True:
        verb = "is not" if normalisation.equal is False else "could not be shown to be"
        problems = (Diagnostic.at(
            entry.pos("matter.velocity"), "error",
            f"the fluid velocity {verb} a unit timelike vector: g_ab u^a u^b + 1 ≠ 0"
            f" (g_ab u^a u^b = {sympy.factor(norm(u, geometry.metric))})",
            "matter.velocity", "give u^a (upper index) normalised to g_ab u^a u^b = -1"),)
    pressures = (p,) * (len(u) - 1)
    return Built(perfect_fluid(rho, p, u, geometry.metric), False, problems,
                 SourceData("perfect-fluid", rho, tuple(u), pressures))


def build_null_dust(entry: Entry, spacetime: Spacetime, geometry: Geometry) -> Built:
    m = entry.matter
    require(entry, "density", m.density, "null-dust")
    require(entry, "null_direction", m.null_direction, "null-dust")
    assert m.density is not None
    rho = parse_field(entry, spacetime, "matter.density", m.density)
    k = parse_vector(entry, spacetime, "matter.null_direction", m.null_direction)
    problems = ()
    if vanishes(norm(k, geometry.metric), spacetime).equal is not True:
        problems = (Diagnostic.at(
            entry.pos("matter.null_direction"), "error",
            f"the null direction is not null: g_ab k^a k^b = "
            f"{sympy.factor(norm(k, geometry.metric))} ≠ 0", "matter.null-direction",
            "give k^a (upper index) with g_ab k^a k^b = 0"),)
    return Built(null_dust(rho, k, geometry.metric), False, problems,
                 SourceData("null-dust", rho, tuple(k)))


def build_anisotropic(entry: Entry, spacetime: Spacetime, geometry: Geometry) -> Built:
    """T^a_b = diag(−ρ, p_1, ...): the coordinate missing from principal_pressures is time."""
    m = entry.matter
    require(entry, "density", m.density, "anisotropic-fluid")
    require(entry, "principal_pressures", m.principal_pressures, "anisotropic-fluid")
    assert m.density is not None
    names = coordinate_names(spacetime)
    pressures = parse_vector(entry, spacetime, "matter.principal_pressures",
                             m.principal_pressures)
    listed = {name for name, _ in m.principal_pressures}
    missing = [c for c in names if c not in listed]
    if len(missing) != 1:
        raise SourceProblem(Diagnostic.at(
            entry.pos("matter.principal_pressures"), "error",
            f"principal_pressures must name every coordinate but the time coordinate "
            f"(names {len(listed)} of {len(names)})", "matter.pressures",
            "list one pressure T^i_i for each spatial coordinate"))
    rho = parse_field(entry, spacetime, "matter.density", m.density)
    time = names.index(missing[0])
    diagonal = [-rho if a == time else pressures[a] for a in range(len(names))]
    spatial = tuple(pressures[a] for a in range(len(names)) if a != time)
    return Built(sympy.diag(*diagonal), True, (), SourceData("anisotropic-fluid", rho,
                                                             pressures=spatial))


def gradient(field: sympy.Expr, coordinates: Sequence[sympy.Symbol]) -> list[sympy.Expr]:
    return [sympy.diff(field, x) for x in coordinates]


def wave_operator(field: sympy.Expr, geometry: Geometry,
                  coordinates: Sequence[sympy.Symbol]) -> sympy.Expr:
    """□φ = ∂_a(g^ab ∂_b φ) + Γ^a_ac g^cb ∂_b φ, with Γ^a_ac = ∂_c(det g)/(2 det g) (no root
    of the determinant, as in ``maxwell_divergence``)."""
    ginv = geometry.inverse_metric
    det = geometry.metric.det()
    n = len(coordinates)
    up = [sum((ginv[a, b] * sympy.diff(field, coordinates[b]) for b in range(n)),
              sympy.Integer(0)) for a in range(n)]
    return sum((sympy.diff(up[a], coordinates[a]) + sympy.diff(det, coordinates[a])
                / (2 * det) * up[a] for a in range(n)), sympy.Integer(0))


def scalar_stress(field: sympy.Expr, potential: sympy.Expr, geometry: Geometry,
                  coordinates: Sequence[sympy.Symbol]) -> sympy.Matrix:
    """T_ab = ∇_aφ ∇_bφ − g_ab (½ ∇^cφ ∇_cφ + V), the minimally coupled field whose action is
    ∫ √−g (R/16π − ½ ∇φ·∇φ − V) (signature −+++)."""
    d = gradient(field, coordinates)
    g, ginv = geometry.metric, geometry.inverse_metric
    n = len(d)
    kinetic = sum((ginv[a, b] * d[a] * d[b] for a in range(n) for b in range(n)),
                  sympy.Integer(0))
    return sympy.Matrix(n, n, lambda a, b: d[a] * d[b] - g[a, b] * (kinetic / 2 + potential))


def scalar_field_problems(entry: Entry, spacetime: Spacetime, geometry: Geometry,
                          field: sympy.Expr, potential: sympy.Expr | None
                          ) -> tuple[Diagnostic, ...]:
    """The field equation □φ = V'(φ), with V known only along the solution: V must be a
    function of φ alone (dV ∧ dφ = 0) and □φ ∂_aφ = ∂_aV for every a, which is □φ = V'(φ)
    wherever dφ ≠ 0 — decided exactly, without dividing by a derivative of φ."""
    x = spacetime.coordinates
    names = coordinate_names(spacetime)
    box = wave_operator(field, geometry, x)
    d = gradient(field, x)
    if potential is None:
        residuals = {"□φ": box}
    else:
        dv = gradient(potential, x)
        residuals = {f"□φ ∂_{names[a]}φ − ∂_{names[a]}V": box * d[a] - dv[a]
                     for a in range(len(x))}
        residuals.update({f"∂_{names[a]}V ∂_{names[b]}φ − ∂_{names[b]}V ∂_{names[a]}φ":
                          dv[a] * d[b] - dv[b] * d[a]
                          for a in range(len(x)) for b in range(a + 1, len(x))})
    bad = [label for label, value in residuals.items()
           if vanishes(value, spacetime).equal is not True]
    if not bad:
        return ()
    key = "matter.scalar_potential" if potential is not None and "□φ" not in bad else \
        "matter.scalar"
    return (Diagnostic.at(
        entry.pos(key), "error",
        f"the declared scalar field does not solve its field equation □φ = V′(φ): "
        f"{', '.join(bad)} ≠ 0 (or undecided)", "matter.scalar-field",
        "check φ and V (V is the potential along the solution, a function of φ alone; "
        "omit it for a massless field)"),)


def build_scalar_field(entry: Entry, spacetime: Spacetime, geometry: Geometry) -> Built:
    m = entry.matter
    require(entry, "scalar", m.scalar, "scalar-field")
    assert m.scalar is not None
    field = parse_field(entry, spacetime, "matter.scalar", m.scalar)
    potential = None if m.scalar_potential is None else \
        parse_field(entry, spacetime, "matter.scalar_potential", m.scalar_potential)
    problems = scalar_field_problems(entry, spacetime, geometry, field, potential)
    stress = scalar_stress(field, potential if potential is not None else sympy.Integer(0),
                           geometry, spacetime.coordinates)
    return Built(stress, False, problems, SourceData("scalar-field"))


def invariant_f(F: sympy.Matrix, geometry: Geometry) -> sympy.Expr:
    """F = ¼ F_ab F^ab (positive for a magnetic field, negative for an electric one)."""
    ginv = geometry.inverse_metric
    upper = ginv * F * ginv.T
    n = F.rows
    return sum((F[a, b] * upper[a, b] for a in range(n) for b in range(n)),
               sympy.Integer(0)) / 4


def nonlinear_stress(F: sympy.Matrix, lagrangian: sympy.Expr, slope: sympy.Expr,
                     geometry: Geometry) -> sympy.Matrix:
    """T_ab = (L_F F_ac F_b^c − g_ab L)/4π for the action ∫ √−g (R/16π − L(F)/4π); with
    L = F this is the Maxwell tensor of ``maxwell_stress``."""
    g, ginv = geometry.metric, geometry.inverse_metric
    return (slope * F * (F * ginv).T - g * lagrangian) / (4 * sympy.pi)


def nonlinear_problems(entry: Entry, spacetime: Spacetime, geometry: Geometry,
                       F: sympy.Matrix, lagrangian: sympy.Expr, slope: sympy.Expr
                       ) -> tuple[Diagnostic, ...]:
    """The declared L and L_F must belong together (∂_a L = L_F ∂_a F) and the field must
    solve ∇_a(L_F F^ab) = 0; both decided exactly."""
    x = spacetime.coordinates
    names = coordinate_names(spacetime)
    invariant = invariant_f(F, geometry)
    problems = []
    bad = [f"∂_{names[a]}L − L_F ∂_{names[a]}F" for a in range(len(x))
           if vanishes(sympy.diff(lagrangian, x[a]) - slope * sympy.diff(invariant, x[a]),
                       spacetime).equal is not True]
    if bad:
        problems.append(Diagnostic.at(
            entry.pos("matter.lagrangian_derivative"), "error",
            f"the declared L and dL/dF do not belong together: {', '.join(bad)} ≠ 0 "
            f"(F = ¼ F_ab F^ab = {sympy.factor(invariant)} here)", "matter.lagrangian",
            "give L(F) and dL/dF both evaluated on this field, with F = ¼ F_ab F^ab"))
    divergence = maxwell_divergence(slope * F, geometry, x)
    bad = [f"∇_a(L_F F^a{index_label(names, (b,))})" for b, value in enumerate(divergence)
           if vanishes(value, spacetime).equal is not True]
    if bad:
        problems.append(Diagnostic.at(
            entry.pos("matter.potential"), "error",
            f"the field does not solve the nonlinear field equations: {', '.join(bad)} ≠ 0 "
            "(or undecided)", "matter.nonlinear-field",
            "check A_a (lower index) and dL/dF"))
    return tuple(problems)


def build_nonlinear(entry: Entry, spacetime: Spacetime, geometry: Geometry) -> Built:
    m = entry.matter
    kind = "nonlinear-electrodynamics"
    require_all(entry, kind, potential=m.potential, lagrangian=m.lagrangian,
                lagrangian_derivative=m.lagrangian_derivative)
    assert m.lagrangian is not None and m.lagrangian_derivative is not None
    potential = parse_vector(entry, spacetime, "matter.potential", m.potential)
    lagrangian = parse_field(entry, spacetime, "matter.lagrangian", m.lagrangian)
    slope = parse_field(entry, spacetime, "matter.lagrangian_derivative",
                        m.lagrangian_derivative)
    F = field_strength(potential, spacetime.coordinates)
    problems = nonlinear_problems(entry, spacetime, geometry, F, lagrangian, slope)
    return Built(nonlinear_stress(F, lagrangian, slope, geometry), False, problems,
                 SourceData(kind))


def dilaton_maxwell_stress(field: sympy.Expr, weight: sympy.Expr, F: sympy.Matrix,
                           geometry: Geometry, coordinates: Sequence[sympy.Symbol]
                           ) -> sympy.Matrix:
    """T_ab = [∇_aφ ∇_bφ − ½ g_ab (∇φ)² + e^(−2aφ) (F_ac F_b^c − ¼ g_ab F_cd F^cd)]/4π for the
    Einstein-frame action ∫ √−g (R − 2(∇φ)² − e^(−2aφ) F_cd F^cd)/16π, with `weight` the
    factor e^(−2aφ). The dilaton is dimensionless in this normalisation (common practice in
    the dilaton black-hole literature, e.g. Garfinkle, Horowitz and Strominger 1991)."""
    kinetic = scalar_stress(field, sympy.Integer(0), geometry, coordinates) / (4 * sympy.pi)
    return kinetic + weight * maxwell_stress(F, geometry)


def dilaton_maxwell_problems(entry: Entry, spacetime: Spacetime, geometry: Geometry,
                             field: sympy.Expr, coupling: sympy.Expr, F: sympy.Matrix
                             ) -> tuple[Diagnostic, ...]:
    """The two matter equations of the same action: ∇_a(e^(−2aφ) F^ab) = 0 and
    □φ = −(a/2) e^(−2aφ) F_cd F^cd, each decided exactly (``vanishes``)."""
    x = spacetime.coordinates
    names = coordinate_names(spacetime)
    weight = sympy.exp(-2 * coupling * field)
    problems = []
    divergence = maxwell_divergence(weight * F, geometry, x)
    bad = [f"∇_a(e^(−2aφ) F^a{index_label(names, (b,))})" for b, value in enumerate(divergence)
           if vanishes(value, spacetime).equal is not True]
    if bad:
        problems.append(Diagnostic.at(
            entry.pos("matter.potential"), "error",
            f"the field does not solve the dilaton-coupled Maxwell equations: {', '.join(bad)} "
            "≠ 0 (or undecided)", "matter.dilaton-maxwell",
            "check A_a (lower index), the dilaton φ and the coupling a (e^(−2aφ) F²)"))
    # F_cd F^cd = 4 F with F = ¼ F_ab F^ab.
    dilaton = wave_operator(field, geometry, x) + 2 * coupling * weight * invariant_f(F, geometry)
    if vanishes(dilaton, spacetime).equal is not True:
        problems.append(Diagnostic.at(
            entry.pos("matter.scalar"), "error",
            "the dilaton does not solve its field equation □φ = −(a/2) e^(−2aφ) F_cd F^cd "
            "(or undecided)", "matter.dilaton",
            "check φ (dimensionless, normalised as in the action ∫ √−g (R − 2(∇φ)² − "
            "e^(−2aφ) F²)/16π) and the sign of the coupling a"))
    return tuple(problems)


def build_dilaton_maxwell(entry: Entry, spacetime: Spacetime, geometry: Geometry) -> Built:
    m = entry.matter
    kind = "dilaton-maxwell"
    require_all(entry, kind, potential=m.potential, scalar=m.scalar, coupling=m.coupling)
    assert m.scalar is not None and m.coupling is not None
    potential = parse_vector(entry, spacetime, "matter.potential", m.potential)
    field = parse_field(entry, spacetime, "matter.scalar", m.scalar)
    coupling = parse_field(entry, spacetime, "matter.coupling", m.coupling)
    if coupling.free_symbols & set(spacetime.coordinates):
        raise SourceProblem(Diagnostic.at(
            entry.pos("matter.coupling"), "error",
            "the dilaton coupling must be a constant (it depends on a coordinate)",
            "matter.coupling", "give the constant a of e^(−2aφ) F², e.g. 1 for the string case"))
    F = field_strength(potential, spacetime.coordinates)
    problems = dilaton_maxwell_problems(entry, spacetime, geometry, field, coupling, F)
    stress = dilaton_maxwell_stress(field, sympy.exp(-2 * coupling * field), F, geometry,
                                    spacetime.coordinates)
    return Built(stress, False, problems, SourceData(kind))


BUILDERS: dict[str, Callable[[Entry, Spacetime, Geometry], Built]] = {
    "electrovacuum": build_electrovacuum,
    "perfect-fluid": build_perfect_fluid,
    "null-dust": build_null_dust,
    "anisotropic-fluid": build_anisotropic,
    "scalar-field": build_scalar_field,
    "nonlinear-electrodynamics": build_nonlinear,
    "dilaton-maxwell": build_dilaton_maxwell,
}


def field_equation_residual(geometry: Geometry, Lambda: sympy.Expr | None, built: Built
                            ) -> sympy.Matrix:
    """G + Λ g − 8π T, lower indices (or mixed for a source given as T^a_b)."""
    lam = Lambda if Lambda is not None else sympy.Integer(0)
    if built.mixed:
        identity = sympy.eye(geometry.dimension)
        return geometry.einstein_mixed + lam * identity - EIGHT_PI * built.stress
    return geometry.einstein + lam * geometry.metric - EIGHT_PI * built.stress


def residual_message(kind: str, failing: list[str], undecided: list[str]) -> str:
    parts = []
    if failing:
        parts.append(", ".join(failing) + " ≠ 0")
    if undecided:
        parts.append("undecided: " + ", ".join(undecided))
    return (f"the declared {kind} source does not satisfy G_ab + Λ g_ab = 8π T_ab: "
            + "; ".join(parts))


def check_source(entry: Entry, spacetime: Spacetime, geometry: Geometry,
                 Lambda: sympy.Expr | None) -> tuple[Built | None, list[Diagnostic]]:
    """Rebuild the declared source and test each component of the field equations."""
    kind = entry.matter.kind
    if kind == "electrovacuum":
        exact = exact_maxwell(entry, spacetime, geometry, Lambda)
        if exact is not None:
            return exact, []
    try:
        built = BUILDERS[kind](entry, spacetime, geometry)
    except SourceProblem as problem:
        return None, [problem.diagnostic]
    residual = field_equation_residual(geometry, Lambda, built)
    lam = " + Λ g_{2}" if Lambda is not None else ""
    if built.mixed:
        template = "G^{0}_{1}" + (" + Λ δ^{0}_{1}" if Lambda is not None else "") \
            + " − 8π T^{0}_{1}"
    else:
        template = "G_{2}" + lam + " − 8π T_{2}"
    failing, undecided = failing_components(residual, spacetime, template,
                                            symmetric=not built.mixed)
    diagnostics = list(built.side_problems)
    wrong_fields = field_diagnostics(entry, spacetime, geometry, Lambda, built,
                                     residual_message(kind, failing, undecided)) \
        if failing or undecided else []
    diagnostics += wrong_fields
    if (failing or undecided) and not wrong_fields:
        diagnostics.append(Diagnostic.at(
            entry.pos("matter.kind"), "error", residual_message(kind, failing, undecided),
            "matter.field-equations",
            "check the density, pressure and vector fields (and their index positions) "
            "against the reference"))
    return built, diagnostics


def field_diagnostics(entry: Entry, spacetime: Spacetime, geometry: Geometry,
                      Lambda: sympy.Expr | None, built: Built, residual: str
                      ) -> list[Diagnostic]:
    """An error at each declared density or pressure line that differs from the value the
    field equations imply, with that value.

    For a perfect fluid with the declared u^a, T_ab = (G_ab + Λ g_ab)/8π gives
    ρ = T_ab u^a u^b and, from the trace T = −ρ + (n − 1) p, p = (T + ρ)/(n − 1) (common
    practice); for an anisotropic fluid, ρ = −T^t_t and p_i = T^i_i. Other sources (and a
    wrong velocity) are left to the component-by-component message at ``matter.kind``."""
    source, m = built.source, entry.matter
    lam = Lambda if Lambda is not None else sympy.Integer(0)
    expected: list[tuple[str, sympy.Expr | None, sympy.Expr]] = []
    if source.kind == "perfect-fluid" and source.vector is not None:
        stress = (geometry.einstein + lam * geometry.metric) / EIGHT_PI
        u, n = source.vector, geometry.dimension
        rho = sum((stress[a, b] * u[a] * u[b] for a in range(n) for b in range(n)),
                  sympy.Integer(0))
        trace = sum((geometry.inverse_metric[a, b] * stress[a, b]
                     for a in range(n) for b in range(n)), sympy.Integer(0))
        expected = [("matter.density", source.density, rho),
                    ("matter.pressure", (source.pressures or (None,))[0],
                     (trace + rho) / (n - 1))]
    elif source.kind == "anisotropic-fluid" and source.pressures is not None:
        mixed = (geometry.einstein_mixed + lam * sympy.eye(geometry.dimension)) / EIGHT_PI
        names = coordinate_names(spacetime)
        listed = dict(m.principal_pressures)
        time = next(a for a, name in enumerate(names) if name not in listed)
        spatial = [a for a in range(len(names)) if a != time]
        expected = [("matter.density", source.density, -mixed[time, time])]
        expected += [(f"matter.principal_pressures.{names[a]}", declared, mixed[a, a])
                     for a, declared in zip(spatial, source.pressures, strict=True)]
    out = []
    for key, declared, value in expected:
        if declared is None or vanishes(declared - value, spacetime).equal is not False:
            continue
        shown = canonical_all([value], spacetime)[0]
        label = key.removeprefix("matter.")
        given = "velocity" if source.kind == "perfect-fluid" else "source"
        out.append(Diagnostic.at(
            entry.pos(key), "error",
            f"{residual}; with the declared {given} the field equations give {label} = "
            f"{shown}", "matter.field-equations",
            f"write {label.rpartition('.')[2]}: {shown}, or check the metric and the "
            f"reference's conventions"))
    return out


# ---------------------------------------------------------------------------- the stage


def classify_matter(entry: Entry, spacetime: Spacetime, geometry: Geometry) -> MatterResult:
    """Computed matter kind, Λ and T^a_b, with a diagnostic for every disagreement."""
    try:
        Lambda = declared_lambda(entry, spacetime)
    except SourceProblem as problem:
        return MatterResult("undecided", None, None, None, (problem.diagnostic,),
                            {"matter_kind": "the cosmological constant could not be read"})
    found = geometric_kind(geometry, spacetime)
    declared = entry.matter.kind
    diagnostics: list[Diagnostic] = []
    if declared in EINSTEIN_KINDS:
        diagnostics += check_einstein_kind(entry, spacetime, found, Lambda)
    built = None
    if declared in BUILDERS:
        built, problems = check_source(entry, spacetime, geometry, Lambda)
        diagnostics += problems
    kind = computed_kind(found, declared, built is not None and not diagnostics)
    lam = found.cosmological_constant if kind == "lambda-vacuum" and Lambda is None else Lambda
    stress = (geometry.einstein + (lam or 0) * geometry.metric) / EIGHT_PI
    mixed = (geometry.einstein_mixed + (lam or 0) * sympy.eye(geometry.dimension)) / EIGHT_PI
    reasons = {}
    if geometry.dimension < 3:
        # G_ab vanishes identically in two dimensions: no metric there is "non-vacuum".
        kind = NOT_APPLICABLE
        reasons["matter_kind"] = "Einstein's equations are empty below three dimensions"
    verified = built.source if built is not None and not diagnostics else None
    return MatterResult(kind, lam, simplest(stress, spacetime), simplest(mixed, spacetime),
                        tuple(diagnostics), reasons, verified)


def simplest(matrix: sympy.Matrix, spacetime: Spacetime) -> sympy.ImmutableMatrix:
    """Every component in display form, through one field for the whole matrix."""
    return sympy.ImmutableMatrix(matrix.rows, matrix.cols,
                                 canonical_all(list(matrix), spacetime))


NOT_APPLICABLE = "not-applicable"


def computed_kind(found: Geometric, declared: str, source_ok: bool) -> str:
    if found.kind in ("vacuum", "lambda-vacuum"):
        return found.kind
    if source_ok:
        return declared
    return found.kind


def check_einstein_kind(entry: Entry, spacetime: Spacetime, found: Geometric,
                        Lambda: sympy.Expr | None) -> list[Diagnostic]:
    """A declared vacuum or Λ-vacuum must match what the Ricci tensor says."""
    declared = entry.matter.kind
    at = entry.pos("matter.kind")
    if found.kind == "undecided":
        return [Diagnostic.at(at, "error", f"matter.kind is {declared} but the Ricci tensor "
                              f"could not be decided: {', '.join(found.undecided)}",
                              "matter.kind", "simplify the metric or narrow the domain")]
    if declared == "vacuum":
        return check_vacuum(entry, spacetime, found, Lambda)
    if found.kind != "lambda-vacuum":
        what = ("Ricci-flat (Λ = 0)" if found.kind == "vacuum" else
                f"not an Einstein space ({', '.join(found.failing)} ≠ 0)")
        hint = "declare kind: vacuum" if found.kind == "vacuum" else \
            "declare the matter source, or kind: unspecified"
        return [Diagnostic.at(at, "error", f"matter.kind is lambda-vacuum but the geometry "
                              f"is {what}", "matter.kind", hint)]
    if Lambda is not None:
        assert found.cosmological_constant is not None
        decision = decide_equal(Lambda, found.cosmological_constant, spacetime)
        if decision.equal is not True:
            return [Diagnostic.at(entry.pos("matter.cosmological_constant"), "error",
                                  f"declared Λ = {Lambda} but the geometry gives "
                                  f"Λ = (n−2)R/(2n) = {found.cosmological_constant}",
                                  "matter.cosmological-constant",
                                  "check the sign convention: G_ab + Λ g_ab = 8π T_ab")]
    return []


def check_vacuum(entry: Entry, spacetime: Spacetime, found: Geometric,
                 Lambda: sympy.Expr | None) -> list[Diagnostic]:
    at = entry.pos("matter.kind")
    if Lambda is not None and vanishes(Lambda, spacetime).equal is not True:
        return [Diagnostic.at(entry.pos("matter.cosmological_constant"), "error",
                              "matter.kind is vacuum but a nonzero cosmological constant is "
                              "declared", "matter.kind", "declare kind: lambda-vacuum")]
    if found.kind == "vacuum":
        return []
    if found.kind == "lambda-vacuum":
        return [Diagnostic.at(at, "error", f"matter.kind is vacuum but R_ab ≠ 0: the geometry "
                              f"is a Λ-vacuum with Λ = {found.cosmological_constant}",
                              "matter.kind", "declare kind: lambda-vacuum")]
    return [Diagnostic.at(at, "error", f"matter.kind is vacuum but R_ab ≠ 0: "
                          f"{', '.join(found.failing)} ≠ 0", "matter.kind",
                          "declare the matter source (e.g. perfect-fluid), or check the metric")]
