"""The `check --json` keys for physical data: horizons, ergosurface, photon sphere, ISCO,
Komar charges and observers' kinematics (documented in DEVELOPERS.md). A quantity that does
not apply is null, with its reason under ``physical_reasons``."""

from __future__ import annotations

from typing import Any

import sympy

from generator.model import Horizon, Kinematics, PhysicalData


def _text(value: sympy.Basic | None) -> str | None:
    return None if value is None else str(value)


def horizon_json(h: Horizon) -> dict[str, Any]:
    return {
        "coordinate": h.coordinate,
        "location": str(h.location),
        "defining_polynomial": str(h.polynomial),
        "kind": h.kind,
        "normal_killing_vector": None if h.normal_killing_vector is None
        else {name: str(value) for name, value in h.normal_killing_vector},
        "angular_velocity": _text(h.angular_velocity),
        "surface_gravity": _text(h.surface_gravity),
        "temperature": _text(h.temperature),
        "area": _text(h.area),
        "area_method": h.area_method or None,
        "area_numeric": None if h.area_method != "numeric" else {
            "value": h.area_numeric, "significant_digits": h.area_digits,
            "parameters": dict(h.area_parameters)},
        "entropy": _text(h.entropy),
        "angular_velocities": None if not h.angular_velocities
        else {name: str(value) for name, value in h.angular_velocities},
        "area_per_unit": None if not h.area_per else {
            "value": _text(h.area_per_unit), "entropy": _text(h.entropy_per_unit),
            "per_unit_of": list(h.area_per)},
        "area_roots": [{"symbol": symbol, "coordinate": coordinate,
                        "defining_polynomial": str(polynomial),
                        "numeric_at_first_sample": numeric, "end": end}
                       for symbol, coordinate, polynomial, numeric, end in h.area_roots],
        "in_terms_of_root": None if h.surface_gravity_in_root is None else {
            "eliminated": h.in_root_parameter, "value": _text(h.in_root_value),
            "surface_gravity": _text(h.surface_gravity_in_root)},
        "how": h.how,
        "not_applicable": dict(sorted(h.reasons.items())),
    }


def kinematics_json(k: Kinematics | None) -> dict[str, Any] | None:
    if k is None:
        return None
    return {
        "observer": {name: str(value) for name, value in k.observer},
        "observer_source": k.source,
        "expansion": str(k.expansion),
        "shear_squared": str(k.shear_squared),
        "vorticity_squared": str(k.vorticity_squared),
        "acceleration_squared": str(k.acceleration_squared),
        "hubble_rate": _text(k.hubble_rate),
        "deceleration": _text(k.deceleration),
    }


def physical_json(data: PhysicalData | None) -> dict[str, Any]:
    if data is None:
        why = "the physical data could not be computed"
        return {"horizons": [], "horizons_note": why, "extremality": [], "ergosurface": None,
                "photon_sphere": None, "isco": None,
                "komar": {"mass": None, "angular_momentum": None},
                "komar_angular_momenta": None, "kinematics": None,
                "physical_reasons": {"all": why}, "orbit_roots": {}}
    return {
        "horizons": [horizon_json(h) for h in data.horizons],
        "horizons_note": data.horizons_note,
        "extremality": list(data.extremality),
        "ergosurface": _text(data.ergosurface),
        "photon_sphere": _text(data.photon_sphere),
        "isco": _text(data.isco),
        "komar": {"mass": _text(data.komar_mass),
                  "angular_momentum": _text(data.komar_angular_momentum)},
        "komar_angular_momenta": None if not data.komar_angular_momenta
        else {name: str(value) for name, value in data.komar_angular_momenta},
        "kinematics": kinematics_json(data.kinematics),
        "physical_reasons": dict(sorted(data.reasons.items())),
        "orbit_roots": {key: {"coordinate": coordinate, "defining_polynomial": str(polynomial),
                              "numeric_at_first_sample": numeric}
                        for key, (coordinate, polynomial, numeric)
                        in sorted(data.orbit_roots.items())},
    }
