"""Machine-readable form of an entry report (the `check --json` contract and site downloads).

Expressions are written with `str()`, which SymPy's `parse_expr` reads back, in the entry's own
symbol names. Values are given in the entry's own signature convention: for a "+---" entry the
tool computed with g -> -g, so R and G^a_b are flipped back here (squares do not change).
"""

from __future__ import annotations

from typing import Any

import sympy

from .model import Classification, EntryReport, Geometry, Spacetime


def expr_text(expr: sympy.Basic | None) -> str | None:
    return None if expr is None else str(expr)


def report_json(report: EntryReport) -> dict[str, Any]:
    """One entry of the `check --json` document."""
    out: dict[str, Any] = {
        "id": report.entry.id if report.entry else None,
        "file": report.file,
        "ok": report.ok,
        "content_hash": report.content_hash,
        "diagnostics": [d.as_json() for d in report.diagnostics],
        "computed": None,
        "verified": [
            {"subject": v.subject, "ok": v.ok, "method": v.method, "detail": v.detail,
             "claimed": v.claimed, "computed": v.computed}
            for v in report.verdicts
        ],
    }
    if report.geometry is not None and report.spacetime is not None:
        out["computed"] = computed_json(report.spacetime, report.geometry, report.classification)
    return out


def computed_json(spacetime: Spacetime, geometry: Geometry,
                  classification: Classification | None) -> dict[str, Any]:
    sign = spacetime.sign
    names = [str(c) for c in spacetime.coordinates]
    n = geometry.dimension
    einstein = {
        f"{names[a]} {names[b]}": str(sign * geometry.einstein_mixed[a, b])
        for a in range(n) for b in range(n) if geometry.einstein_mixed[a, b] != 0
    }
    data: dict[str, Any] = {
        "dimension": n,
        "signature": spacetime.signature,
        "ricci_scalar": str(sign * geometry.ricci_scalar),
        "kretschmann": str(geometry.kretschmann),
        "ricci_squared": str(geometry.ricci_squared),
        "weyl_squared": expr_text(geometry.weyl_squared),
        "einstein_mixed": einstein,
        "engine": geometry.engine,
        "matter_kind": None,
        "cosmological_constant": None,
        "petrov_type": None,
    }
    if classification is not None:
        data.update(classification_json(classification))
    return data


def classification_json(c: Classification) -> dict[str, Any]:
    return {
        "matter_kind": c.matter_kind,
        "cosmological_constant": expr_text(c.cosmological_constant),
        "petrov_type": c.petrov_type,
        "hawking_ellis_type": c.hawking_ellis_type,
        "energy_density": expr_text(c.energy_density),
        "principal_pressures": None if c.principal_pressures is None
        else [str(p) for p in c.principal_pressures],
        "energy_conditions": {
            e.name: {"status": e.status, "how": e.how, "witness": e.witness}
            for e in c.energy_conditions
        },
        "weyl_scalars": None if c.weyl_scalars is None
        else {k: str(v) for k, v in sorted(c.weyl_scalars.items())},
        "geodesic_equations": [str(g) for g in c.geodesic_equations],
        "not_applicable": dict(sorted(c.reasons.items())),
    }


def check_document(reports: list[EntryReport]) -> dict[str, Any]:
    return {"entries": [report_json(r) for r in reports]}
