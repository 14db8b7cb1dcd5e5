"""Stage "classify & verify": the physics of an entry, checked against what it claims.

Order: matter content (``matter``) → algebraic type of T and energy conditions (``energy``) →
Petrov type (``petrov``) → Killing vectors, linked charts and geodesics (``symmetry``). Each
step returns data for the page plus positioned diagnostics; nothing here raises for bad input.
A quantity that a dimension or signature makes meaningless is None with its reason, never 0.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import replace

import sympy

from generator.errors import Diagnostic
from generator.geometry.curvature import WeylOperator
from generator.geometry.sampling import Point, entry_points
from generator.model import Classification, EnergyCondition, Entry, Geometry, Spacetime
from generator.physics.energy import CONDITIONS, Spectrum, energy_conditions, hawking_ellis
from generator.physics.limits_between import check_all_limits
from generator.physics.matter import MatterResult, classify_matter
from generator.physics.petrov import PetrovResult, petrov_type
from generator.physics.physical import check_physical_claims, physical_data
from generator.physics.symmetry import check_all_related, check_killing_vector, geodesic_equations
from generator.physics.symmetry_stage import symmetry
from generator.physics.weyl_frame import weyl_frame

SAMPLE_COUNT = 10
NO_MATTER = ("vacuum", "lambda-vacuum")
# SymPy's ways of giving up on an expression; they make a result "undecided", not a crash.
ALGEBRA_FAILURES = (ValueError, TypeError, ZeroDivisionError, NotImplementedError,
                    ArithmeticError, sympy.PolynomialError, RecursionError)


def classify(entry: Entry, spacetime: Spacetime, geometry: Geometry,
             related: Mapping[str, tuple[Entry, Spacetime]],
             weyl_operator: WeylOperator | None = None,
             ) -> tuple[Classification, list[Diagnostic]]:
    """Classify the entry's spacetime and check every physics claim it makes.

    ``weyl_operator``: the engine's exact Weyl operator, if it has one (spares the Petrov
    test a conversion); the results are the same without it."""
    points = entry_points(spacetime, SAMPLE_COUNT)
    diagnostics: list[Diagnostic] = []
    reasons: dict[str, str] = {}
    matter = classify_matter(entry, spacetime, geometry)
    diagnostics += matter.diagnostics
    reasons.update(matter.reasons)
    try:
        spectrum, conditions = stress_energy_physics(matter, spacetime, geometry, points,
                                                     reasons)
    except ALGEBRA_FAILURES as exc:
        why = f"the computer algebra failed ({type(exc).__name__}: {exc})"
        reasons["hawking_ellis_type"] = reasons["energy_conditions"] = why
        spectrum = Spectrum("undecided", "failed", why)
        conditions = tuple(EnergyCondition(name, "undecided", why) for name in CONDITIONS)
    diagnostics += check_stress_claims(entry, spectrum, conditions, matter)
    try:
        petrov = petrov_type(geometry, spacetime, points, weyl_operator)
    except ALGEBRA_FAILURES as exc:
        petrov = PetrovResult("undecided", f"the computer algebra failed "
                              f"({type(exc).__name__}: {exc})")
    record_petrov_reasons(petrov, reasons)
    diagnostics += check_petrov_claim(entry, petrov)
    killing = [check_killing_vector(entry, spacetime, i, claim)
               for i, claim in enumerate(entry.claims.killing_vectors)]
    diagnostics += [problem for _, problem in killing if problem is not None]
    linked, link_problems = check_all_related(entry, spacetime, related)
    diagnostics += link_problems
    limit_verdicts, limit_problems = check_all_limits(entry, spacetime, related)
    linked += limit_verdicts
    diagnostics += limit_problems
    source = matter.source
    declared = source.vector if source is not None and source.kind == "perfect-fluid" else None
    physical = physical_data(spacetime, geometry, declared)
    physical_verdicts, physical_problems = check_physical_claims(entry, spacetime, physical)
    diagnostics += physical_problems
    try:
        frame, why_no_frame = weyl_frame(geometry, spacetime, petrov, weyl_operator)
    except ALGEBRA_FAILURES as exc:
        frame, why_no_frame = None, f"the computer algebra failed ({type(exc).__name__})"
    if frame is None:
        reasons["weyl_frame"] = why_no_frame
    summary, symmetry_problems = symmetry(entry, spacetime, geometry,
                                          [verdict for verdict, _ in killing], frame)
    diagnostics += symmetry_problems
    classification = Classification(
        matter_kind=matter.kind,
        cosmological_constant=matter.cosmological_constant,
        stress_energy_mixed=matter.stress_energy_mixed,
        hawking_ellis_type=spectrum.type if spectrum else None,
        energy_density=spectrum.energy_density if spectrum else None,
        principal_pressures=spectrum.pressures if spectrum else None,
        energy_conditions=conditions,
        petrov_type=petrov.type,
        weyl_scalars=petrov.weyl_scalars,
        killing_vectors_checked=tuple(verdict for verdict, _ in killing),
        related_checked=tuple(linked),
        geodesic_equations=geodesic_equations(geometry, spacetime.coordinates),
        reasons=reasons,
        physical=physical,
        physical_checked=tuple(physical_verdicts),
        symmetry=summary,
    )
    return classification, diagnostics


# ---------------------------------------------------------------------------- T, HE type, ECs


def stress_energy_physics(matter: MatterResult, spacetime: Spacetime, geometry: Geometry,
                          points: Sequence[Point], reasons: dict[str, str]
                          ) -> tuple[Spectrum | None, tuple[EnergyCondition, ...]]:
    """Hawking–Ellis type and energy conditions, or the reason they do not apply."""
    why = not_applicable_reason(matter, spacetime)
    if why:
        reasons["hawking_ellis_type"] = why
        reasons["energy_conditions"] = why
        return None, tuple(EnergyCondition(name, "not-applicable", why) for name in CONDITIONS)
    assert matter.stress_energy_mixed is not None and matter.stress_energy is not None
    spectrum = hawking_ellis(matter.stress_energy_mixed, matter.stress_energy, geometry.metric,
                             spacetime, points)
    spectrum = with_declared_source(spectrum, matter)
    if spectrum.method != "exact" or spectrum.type == "undecided":
        reasons["hawking_ellis_type"] = spectrum.reason
    if spectrum.energy_density is None:
        reasons["energy_density"] = ("defined for Hawking–Ellis type I only" if spectrum.type
                                     != "I" else spectrum.reason)
    conditions = energy_conditions(spectrum, matter.stress_energy, geometry.metric, spacetime,
                                   points)
    return spectrum, conditions


def with_declared_source(spectrum: Spectrum, matter: MatterResult) -> Spectrum:
    """Use the declared (and verified) ρ and pressures: equal to the eigenvalues of T^a_b,
    usually in a much simpler form, which helps both the page and the positivity proofs."""
    source = matter.source
    if source is None or source.density is None:
        return spectrum
    if source.kind == "null-dust" and spectrum.type == "II":
        return replace(spectrum, null_dust_weight=source.density)
    if source.kind == "perfect-fluid" and source.pressures is not None:
        return Spectrum("I", "exact", "a perfect fluid with unit timelike velocity (declared "
                        "and verified): u^a is the timelike eigenvector", source.density,
                        source.pressures)
    if source.pressures is not None and spectrum.type == "I" and spectrum.method == "exact":
        return replace(spectrum, energy_density=source.density, pressures=source.pressures,
                       reason=spectrum.reason + "; ρ and pressures as declared (verified)")
    return spectrum


def not_applicable_reason(matter: MatterResult, spacetime: Spacetime) -> str:
    if not spacetime.lorentzian:
        return "energy conditions and the Hawking–Ellis type need a Lorentzian metric"
    if spacetime.dimension < 3:
        return "Einstein's equations are empty below three dimensions"
    if matter.kind in NO_MATTER:
        return f"{matter.kind}: no matter (T_ab = 0)"
    if matter.stress_energy_mixed is None:
        return "the stress-energy tensor could not be formed"
    return ""


def check_stress_claims(entry: Entry, spectrum: Spectrum | None,
                        conditions: tuple[EnergyCondition, ...], matter: MatterResult
                        ) -> list[Diagnostic]:
    problems = []
    claimed = entry.claims.hawking_ellis_type
    if claimed:
        problem = compare_type_claim(entry, "claims.hawking_ellis_type", "Hawking–Ellis type",
                                     claimed, spectrum.type if spectrum else None,
                                     spectrum.reason if spectrum else
                                     f"{matter.kind}: there is no matter to classify")
        problems += [problem] if problem else []
    computed = {c.name: c for c in conditions}
    for name, state in entry.claims.energy_conditions:
        problem = compare_condition(entry, name, state, computed.get(name))
        problems += [problem] if problem else []
    return problems


def compare_type_claim(entry: Entry, subject: str, label: str, claimed: str,
                       computed: str | None, reason: str) -> Diagnostic | None:
    at = entry.pos(subject)
    code = "claim." + subject.split(".")[-1]
    if computed is None:
        return Diagnostic.at(at, "error", f"a {label} is claimed but it does not apply here: "
                             f"{reason}", code, f"remove claims.{subject.split('.')[-1]}")
    if computed == "undecided":
        return Diagnostic.at(at, "error", f"claimed {label} {claimed} could not be confirmed: "
                             f"{reason}", code, "check it by hand and simplify the chart, or "
                             "remove the claim")
    if computed != claimed:
        return Diagnostic.at(at, "error", f"claimed {label} {claimed} but the computed type is "
                             f"{computed}", code, reason)
    return None


def compare_condition(entry: Entry, name: str, claimed: str,
                      computed: EnergyCondition | None) -> Diagnostic | None:
    at = entry.pos(f"claims.energy_conditions.{name}")
    code = "claim.energy-condition"
    if computed is None or computed.status == "not-applicable":
        why = computed.how if computed else "unknown condition"
        return Diagnostic.at(at, "error", f"the {name} energy condition is claimed but does "
                             f"not apply: {why}", code, "remove the claim")
    if claimed == computed.status:
        return None
    if claimed == "holds" and computed.status == "undecided":
        return Diagnostic.at(at, "error", f"the {name} energy condition is claimed to hold but "
                             f"could not be proved: {computed.how}", code,
                             "claim 'undecided', or tighten the domain so a proof goes through")
    if claimed == "undecided":
        return Diagnostic.at(at, "warning", f"the {name} energy condition is claimed undecided "
                             f"but the tool finds it {computed.status}: {computed.how}", code,
                             f"claim '{computed.status}'")
    if claimed == "violated" and computed.status == "undecided":
        return Diagnostic.at(at, "error", f"the {name} energy condition is claimed violated but "
                             f"no violation was found: {computed.how}", code,
                             "claim 'undecided', or widen the domain to include a violating "
                             "region")
    return Diagnostic.at(at, "error", f"the {name} energy condition is claimed {claimed} but "
                         f"it is {computed.status}: {computed.how}", code,
                         "check the matter content against the reference")


# ---------------------------------------------------------------------------- Petrov


def record_petrov_reasons(petrov: PetrovResult, reasons: dict[str, str]) -> None:
    if petrov.type is None or petrov.type == "undecided":
        reasons["petrov_type"] = petrov.reason
    if petrov.weyl_scalars is None:
        reasons["weyl_scalars"] = (petrov.reason if petrov.type is None else
                                   "shown only for metrics diagonal in their chart, with an "
                                   "orthonormal frame of fixed signs over the domain and a "
                                   "Weyl tensor small enough to display")


def check_petrov_claim(entry: Entry, petrov: PetrovResult) -> list[Diagnostic]:
    claimed = entry.claims.petrov_type
    if not claimed:
        return []
    problem = compare_type_claim(entry, "claims.petrov_type", "Petrov type", claimed,
                                 petrov.type, petrov.reason)
    return [problem] if problem else []


