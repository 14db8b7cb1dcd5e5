"""Assembly of an entry's physical data (horizons, orbits, charges, observers) and the check
of claims about them.

Each part may fail on its own (outside the exact field, a budget); it then becomes None with
its reason, never a made-up value. Claims name the *principal horizon*: the event horizon if
there is one, else the outermost cosmological horizon.
"""

from __future__ import annotations

from collections.abc import Sequence

import sympy

from generator.entry.loader import parse_at, symbol_table
from generator.entry.schema import PHYSICAL_CLAIMS
from generator.errors import Diagnostic
from generator.geometry import decisions
from generator.geometry.algebra import NotInField
from generator.geometry.curvature import DegenerateMetric
from generator.geometry.equality import decide_equal
from generator.geometry.sampling import entry_points
from generator.model import (
    Decision,
    Entry,
    Geometry,
    Horizon,
    PhysicalData,
    Spacetime,
    Verdict,
)
from generator.physics.horizons import H, find_horizons
from generator.physics.kinematics import observer_kinematics
from generator.physics.komar import komar_angular_momenta, komar_charges
from generator.physics.orbits import ergosurface, photon_sphere_and_isco
from generator.physics.root_isolation import closed_form_at_root
from generator.physics.rootclaims import decide_at_root, relation_at_root

# What one part may fail with and still leave the others. Not BudgetExceeded: a budget hit
# (the entry's alarm or memory cap) ends the whole entry with the stage named, like every
# other stage; swallowing it here let a hostile entry run on past its budget.
FAILURES = (ValueError, TypeError, ZeroDivisionError, NotImplementedError, ArithmeticError,
            sympy.PolynomialError, RecursionError, NotInField, DegenerateMetric)


def physical_data(spacetime: Spacetime, geometry: Geometry,
                  declared_velocity: Sequence[sympy.Expr] | None) -> PhysicalData:
    points = entry_points(spacetime, 3)
    reasons: dict[str, str] = {}
    try:
        horizons, note, extremal = find_horizons(spacetime, geometry)
    except FAILURES as exc:
        horizons, note, extremal = (), f"the computer algebra failed ({type(exc).__name__})", ()
    if not horizons:
        reasons["horizons"] = note
    orbit_roots: dict[str, tuple[str, sympy.Expr, str]] = {}
    try:
        orbits = photon_sphere_and_isco(spacetime, horizons, points)
        photon, photon_why, isco, isco_why = (orbits.photon_sphere, orbits.photon_why,
                                              orbits.isco, orbits.isco_why)
        orbit_roots = {key: (root.coordinate, root.polynomial, root.numeric)
                       for key, root in orbits.roots.items()}
    except FAILURES as exc:
        photon = isco = None
        photon_why = isco_why = f"the computer algebra failed ({type(exc).__name__})"
    try:
        ergo, ergo_why = ergosurface(spacetime, horizons, points)
    except FAILURES as exc:
        ergo, ergo_why = None, f"the computer algebra failed ({type(exc).__name__})"
    try:
        kinematics, kin_why = observer_kinematics(spacetime, geometry, points, declared_velocity)
    except FAILURES as exc:
        kinematics, kin_why = None, f"the computer algebra failed ({type(exc).__name__})"
    for key, value, why in (("photon_sphere", photon, photon_why), ("isco", isco, isco_why),
                            ("ergosurface", ergo, ergo_why), ("kinematics", kinematics, kin_why)):
        if value is None:
            reasons[key] = why
    try:
        mass, mass_why, spin, spin_why = komar_charges(spacetime, points)
    except FAILURES as exc:
        mass = spin = None
        mass_why = spin_why = f"the computer algebra failed ({type(exc).__name__})"
    if mass is None:
        reasons["komar_mass"] = mass_why
    if spin is None:
        reasons["komar_angular_momentum"] = spin_why
    spins: tuple[tuple[str, sympy.Expr], ...] = ()
    if spin is None and "rotation planes" in spin_why:
        try:
            spins = komar_angular_momenta(spacetime, points)
        except FAILURES:
            spins = ()
    return PhysicalData(horizons, note, extremal, ergo, photon, isco, mass, spin, kinematics,
                        reasons, orbit_roots, spins)


# ---------------------------------------------------------------------------- claims
# A horizon or orbit at an algebraic root (value h_root) is claimed in the entry's symbols
# with the radius coordinate standing for the root, and its location as a relation that
# vanishes there (generator.physics.rootclaims).

# claim name -> how to read the computed value off PhysicalData
HORIZON_CLAIMS = {
    "horizon_location": "location",
    "surface_gravity": "surface_gravity",
    "horizon_area": "area",
    "horizon_angular_velocity": "angular_velocity",
}
ORBIT_CLAIMS = ("photon_sphere", "isco")
CHARGE_CLAIMS = {"komar_mass": "komar_mass", "komar_angular_momentum": "komar_angular_momentum"}
KINEMATIC_CLAIMS = ("expansion", "shear_squared", "vorticity_squared", "acceleration_squared")
assert set(PHYSICAL_CLAIMS) == (set(HORIZON_CLAIMS) | set(ORBIT_CLAIMS) | set(CHARGE_CLAIMS)
                                | set(KINEMATIC_CLAIMS))


def principal_horizon(data: PhysicalData) -> Horizon | None:
    events = [h for h in data.horizons if h.kind == "event"]
    if events:
        return events[-1]
    cosmological = [h for h in data.horizons if h.kind == "cosmological"]
    return cosmological[-1] if cosmological else None


def computed_claim(name: str, data: PhysicalData) -> tuple[sympy.Expr | None, str]:
    """The computed value a physical claim is compared with, or why there is none."""
    if name in HORIZON_CLAIMS:
        horizon = principal_horizon(data)
        if horizon is None:
            return None, data.reasons.get("horizons", "no event or cosmological horizon")
        value = getattr(horizon, HORIZON_CLAIMS[name])
        if name == "horizon_area" and value is not None and horizon.area_roots:
            return None, ("the area holds the roots " + ", ".join(
                r[0] for r in horizon.area_roots) + " that bound the cross-section; a claim "
                "of it is not compared in this version")
        return value, horizon.reasons.get(HORIZON_CLAIMS[name], "not computed")
    if name in ORBIT_CLAIMS or name in CHARGE_CLAIMS:
        return getattr(data, name), data.reasons.get(name, "")
    if data.kinematics is None:
        return None, data.reasons.get("kinematics", "no observer field")
    return getattr(data.kinematics, name), ""


def check_physical_claims(entry: Entry, spacetime: Spacetime, data: PhysicalData | None
                          ) -> tuple[list[Verdict], list[Diagnostic]]:
    verdicts: list[Verdict] = []
    problems: list[Diagnostic] = []
    table, _ = symbol_table(entry)
    for claim in entry.claims.physical:
        subject = f"claims.{claim.name}"
        claimed, problem = parse_at(claim.value, table)
        if problem is not None or claimed is None:
            problems += [problem] if problem else []
            verdicts.append(Verdict(subject, False, "failed", "the claim does not parse",
                                    claim.value.text))
            continue
        if data is None:
            computed, why = None, "the physical data could not be computed"
        else:
            computed, why = computed_claim(claim.name, data)
        label = claim.name.replace("_", " ")
        if computed is None:
            verdicts.append(Verdict(subject, False, "failed", why, claim.value.text, "null"))
            problems.append(Diagnostic.at(claim.pos, "error", f"claimed {label} could not be "
                                          f"verified: {why}", f"claim.{claim.name}",
                                          "remove the claim or simplify the chart"))
            continue
        at_root = root_of_claim(claim.name, data, spacetime) if data is not None else None
        with decisions.subject(subject):
            decision = decide_physical_claim(claim.name, claimed, computed, spacetime, at_root)
        ok = decision.equal is True
        shown = str(computed)
        hint = f"computed: {computed}"
        if at_root is not None:
            x = spacetime.coordinates[at_root[0]]
            shown = f"{computed}, h_root a root of {at_root[1]} = 0"
            hint = (f"computed: {shown}; write the claim in {x} (standing for the root), and a "
                    f"location as an expression in {x} that vanishes there or as a closed "
                    "form (radicals) of the root")
        verdicts.append(Verdict(subject, ok, decision.method, decision.detail, claim.value.text,
                                shown, entry.published_source(subject)))
        if not ok:
            verb = "does not match" if decision.equal is False else "could not be matched with"
            problems.append(Diagnostic.at(claim.pos, "error", f"claimed {label} {verb} the "
                                          f"computed value ({decision.detail})",
                                          f"claim.{claim.name}", hint))
    return verdicts, problems



def decide_physical_claim(name: str, claimed: sympy.Expr, computed: sympy.Expr,
                          spacetime: Spacetime, at_root: tuple[int, sympy.Expr, str] | None
                          ) -> Decision:
    """The one comparison of a physical claim with its computed value: in the root's field
    where the value sits at an algebraic root (``root_of_claim``), else by ``decide_equal``.
    Tests call it too, so that what they mutate is what ``check`` decides."""
    if at_root is not None:
        return decide_root_claim(name, claimed, computed, spacetime, at_root)
    return decide_equal(claimed, computed, spacetime)


def root_of_claim(name: str, data: PhysicalData, spacetime: Spacetime
                  ) -> tuple[int, sympy.Expr, str] | None:
    """(coordinate index, polynomial in h_root, numeric root) when the claimed quantity sits
    at an algebraic root without closed form; None otherwise."""
    names = [str(x) for x in spacetime.coordinates]
    if name in HORIZON_CLAIMS:
        horizon = principal_horizon(data)
        if horizon is None or not horizon.location.has(H) or horizon.coordinate not in names:
            return None
        return names.index(horizon.coordinate), horizon.polynomial, horizon.numeric_location
    if name in data.orbit_roots:
        coordinate, polynomial, numeric = data.orbit_roots[name]
        if coordinate in names:
            return names.index(coordinate), polynomial, numeric
    return None


def decide_root_claim(name: str, claimed: sympy.Expr, computed: sympy.Expr,
                      spacetime: Spacetime, at_root: tuple[int, sympy.Expr, str]) -> Decision:
    """A claim at an algebraic root, decided in the root's extension field."""
    x_index, polynomial, numeric = at_root
    located = name in ("horizon_location", *ORBIT_CLAIMS)
    if located and not claimed.has(spacetime.coordinates[x_index]):
        # a closed form (radicals) for the root: a root of P, and the computed one
        found = closed_form_at_root(claimed, spacetime, x_index, polynomial, H, numeric)
    elif located:
        found = relation_at_root(claimed, spacetime, x_index, polynomial, H)
    else:
        found = decide_at_root(claimed, computed, spacetime, x_index, polynomial, H, numeric)
    if found.equal is True:
        decisions.record(found.method)
    return Decision(found.equal, found.method, found.detail)
