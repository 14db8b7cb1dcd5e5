"""Machine-readable form of an entry report (the `check --json` contract and site downloads).

Expressions are written with `str()`, which SymPy's `parse_expr` reads back, in the entry's own
symbol names. Values are given in the entry's own signature convention: for a "+---" entry the
tool computed with g -> -g, so g, R, G^a_b and R_abcd are flipped back here (squares and
Christoffel symbols do not change). The `check --json` output and the site's downloads both
come from here.
"""

from __future__ import annotations

from typing import Any

import sympy

from generator.model import Classification, EntryReport, Geometry, Spacetime, Verdict
from generator.physics.verify import entry_state
from generator.site.common import decided_by
from generator.site.physical_json import physical_json


def expr_text(expr: sympy.Basic | None) -> str | None:
    return None if expr is None else str(expr)


def report_json(report: EntryReport) -> dict[str, Any]:
    """One entry of the `check --json` document."""
    out: dict[str, Any] = {
        "id": report.entry.id if report.entry else None,
        "file": report.file,
        "ok": report.ok,
        "state": entry_state(report),
        "content_hash": report.content_hash,
        "diagnostics": [d.as_json() for d in report.diagnostics],
        "computed": None,
        "verified": [verdict_json(v) for v in report.verdicts],
        "decided_by": decided_by(report.verdicts),
    }
    if report.geometry is not None and report.spacetime is not None:
        out["computed"] = computed_json(report.spacetime, report.geometry, report.classification)
    return out


def computed_json(spacetime: Spacetime, geometry: Geometry,
                  classification: Classification | None) -> dict[str, Any]:
    """Everything computed for an entry: the contract keys first, then the full tensors."""
    sign = spacetime.sign
    names = [str(c) for c in spacetime.coordinates]
    data: dict[str, Any] = {
        "dimension": geometry.dimension,
        "signature": spacetime.signature,
        "signature_flipped": sign == -1,
        "ricci_scalar": str(sign * geometry.ricci_scalar),
        "kretschmann": str(geometry.kretschmann),
        "ricci_squared": str(geometry.ricci_squared),
        "weyl_squared": expr_text(geometry.weyl_squared),
        "einstein_mixed": matrix_components(sign * geometry.einstein_mixed, names),
        "matter_kind": None,
        "cosmological_constant": None,
        "petrov_type": None,
        "engine": geometry.engine,
        "metric": matrix_components(sign * spacetime.metric, names),
        "inverse_metric": matrix_components(sign * geometry.inverse_metric, names),
        "christoffel": indexed_components(geometry.christoffel, names),
        "riemann_lower": indexed_components(_scaled(geometry.riemann, sign), names),
        "ricci": matrix_components(geometry.ricci, names),
        "weyl_lower": indexed_components(_scaled(geometry.weyl, sign), names),
    }
    if classification is not None:
        data.update(classification_json(classification, names))
    return data


def _scaled(data: dict | None, sign: int) -> dict | None:
    """R_abcd and C_abcd scale with g: give them back in the entry's own signature."""
    return None if data is None else {k: sign * v for k, v in data.items()}


def matrix_components(matrix: sympy.MatrixBase | None, names: list[str]) -> dict[str, str]:
    """Nonzero components keyed "a b" by coordinate names."""
    if matrix is None:
        return {}
    n, m = matrix.shape
    return {f"{names[i]} {names[j]}": str(matrix[i, j])
            for i in range(n) for j in range(m) if matrix[i, j] != 0}


def indexed_components(data: dict[tuple[int, ...], sympy.Expr] | None,
                       names: list[str]) -> dict[str, str]:
    """Independent nonzero components keyed "a b c d" by coordinate names."""
    if not data:
        return {}
    return {" ".join(names[i] for i in key): str(value) for key, value in sorted(data.items())}


def classification_json(c: Classification, names: list[str]) -> dict[str, Any]:
    return {
        "matter_kind": None if c.matter_kind == "not-applicable" else c.matter_kind,
        "cosmological_constant": expr_text(c.cosmological_constant),
        "stress_energy_mixed": matrix_components(c.stress_energy_mixed, names),
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
        "killing_vectors_checked": [verdict_json(v) for v in c.killing_vectors_checked],
        "related_checked": [verdict_json(v) for v in c.related_checked],
        "geodesic_equations": [str(g) for g in c.geodesic_equations],
        "not_applicable": dict(sorted(c.reasons.items())),
        "physical_checked": [verdict_json(v) for v in c.physical_checked],
        **physical_json(c.physical),
        **symmetry_json(c, names),
    }


def symmetry_json(c: Classification, names: list[str]) -> dict[str, Any]:
    """The symmetry keys of the contract (isometry, independent_invariants,
    killing_tensors_checked, weyl_frame, weyl_invariants) and their companions."""
    s = c.symmetry
    if s is None:
        return {"isometry": None, "independent_invariants": None,
                "killing_tensors_checked": [], "weyl_frame": None, "weyl_invariants": None}
    iso = s.isometry
    return {
        "isometry": {
            "dimension": iso.dimension,
            "orbit_dimension": iso.orbit_dimension,
            "listed": iso.listed,
            "basis": [{name: str(value) for name, value in vector} for vector in iso.basis],
            "complete": iso.complete,
            "method": iso.method,
            "why_null": iso.why_null,
            "structure_constants": [
                {"bracket": [i, j], "coefficients": [str(v) for v in coefficients]}
                for i, j, coefficients in iso.structure],
            "algebra": iso.algebra_name,
            "algebra_structure": iso.algebra_structure,
            "basis_found_by_tool": [k >= len(iso.basis) - iso.found
                                    for k in range(len(iso.basis))],
            "search": iso.search,
        },
        "independent_invariants": s.invariants.count,
        "invariant_relation": {"invariants": list(s.invariants.used),
                               "relation": s.invariants.relation,
                               "consistent": s.invariants.consistent,
                               "why_null": s.invariants.why_null},
        "killing_tensors_checked": [verdict_json(v) for v in s.tensors_checked],
        "weyl_frame": None if s.weyl_frame is None else weyl_frame_json(s.weyl_frame),
        "weyl_invariants": None if s.weyl_frame is None or s.weyl_frame.invariant_i is None
        else {"I": str(s.weyl_frame.invariant_i), "J": str(s.weyl_frame.invariant_j)},
    }


TETRAD_CONVENTION = ("signature -+++: l.n = -1, m.mbar = 1, all other products 0, "
                     "g_ab = -l_a n_b - n_a l_b + m_a mbar_b + mbar_a m_b; "
                     "epsilon_abcd l^a n^b m^c mbar^d = +i with epsilon_0123 = +sqrt(-det g); "
                     "Psi0 = C(l,m,l,m), Psi1 = C(l,n,l,m), Psi2 = C(l,m,mbar,n), "
                     "Psi3 = C(l,n,mbar,n), Psi4 = C(n,mbar,n,mbar); components contravariant")


def weyl_frame_json(frame: Any) -> dict[str, Any]:
    return {"tetrad": {k: {name: str(v) for name, v in vector} for k, vector in frame.tetrad},
            "principal": frame.principal, "frame": frame.name, "why": frame.why,
            "checks": list(frame.checks),
            "convention": TETRAD_CONVENTION if frame.tetrad else None,
            **{k: str(v) for k, v in frame.scalars}}


def verdict_json(v: Verdict) -> dict[str, Any]:
    return {"subject": v.subject, "ok": v.ok, "status": v.status, "source": v.source,
            "method": v.method, "detail": v.detail, "claimed": v.claimed, "computed": v.computed,
            "witness": v.witness}


def check_document(reports: list[EntryReport]) -> dict[str, Any]:
    return {"entries": [report_json(r) for r in reports]}


def matter_as_entry_keys(spacetime: Spacetime, classification: Classification | None
                         ) -> dict[str, Any] | None:
    """The computed matter under the keys an entry's ``matter`` block uses (``density``,
    ``principal_pressures`` by coordinate), so ``--show-computed`` reads line by line against
    the entry. Pressures are named by coordinate when T^a_b and the metric are diagonal in
    this chart (the time coordinate is the one whose signature sign is the odd one out);
    otherwise they are the eigenvalues, listed in no coordinate order, and said to be so."""
    if classification is None:
        return None
    out: dict[str, Any] = {"kind": classification.matter_kind}
    if classification.cosmological_constant is not None:
        out["cosmological_constant"] = str(classification.cosmological_constant)
    if classification.energy_density is not None:
        out["density"] = str(classification.energy_density)
    by_coordinate = _pressures_by_coordinate(spacetime, classification)
    if by_coordinate is not None:
        values = set(by_coordinate.values())
        if len(values) == 1 and classification.matter_kind == "perfect-fluid":
            out["pressure"] = values.pop()
        out["principal_pressures"] = by_coordinate
    elif classification.principal_pressures is not None:
        out["principal_pressures_unordered"] = [str(p) for p in
                                                classification.principal_pressures]
    return out


def _pressures_by_coordinate(spacetime: Spacetime, classification: Classification
                             ) -> dict[str, str] | None:
    mixed, metric = classification.stress_energy_mixed, spacetime.metric
    if mixed is None or classification.energy_density is None:
        return None
    n = metric.shape[0]
    if any(mixed[a, b] != 0 or metric[a, b] != 0 for a in range(n) for b in range(n) if a != b):
        return None
    signs = spacetime.signature
    odd = [k for k, sign in enumerate(signs) if signs.count(sign) == 1]
    if len(odd) != 1 or n < 3:
        return None
    names = [str(c) for c in spacetime.coordinates]
    return {names[a]: str(mixed[a, a]) for a in range(n) if a != odd[0]}
