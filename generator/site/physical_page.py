"""Page data for the "Horizons and orbits" and "Observers" sections and the limits an entry
verifies (its place in a family of solutions). Values are labelled as the check left them:
"agrees" when a claim with a source matched, "computed" otherwise; a null quantity shows its
reason, never a number."""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

import sympy
from markupsafe import Markup

from generator.model import EntryReport, Horizon, Verdict, related_subject
from generator.physics.horizons import H
from generator.site import mathtex
from generator.site.common import math_inline, reader_text, verdict_row

HORIZON_CLAIM_FIELDS = {"horizon_location": "location", "surface_gravity": "surface_gravity",
                        "horizon_area": "area", "horizon_angular_velocity": "angular_velocity"}


def _math(name: str, value: sympy.Expr | None, coordinates: tuple) -> Markup | None:
    if value is None:
        return None
    try:
        return math_inline(f"{name} = {mathtex.to_latex(value, coordinates)}")
    except (ValueError, TypeError, RecursionError):
        return None


def _many(pairs: Sequence[tuple[str, sympy.Expr]], coordinates: tuple) -> Markup | None:
    """Several typeset equations in one formula, separated by commas."""
    try:
        return math_inline(r",\quad ".join(f"{name} = {mathtex.to_latex(value, coordinates)}"
                                             for name, value in pairs))
    except (ValueError, TypeError, RecursionError):
        return None


def per_unit_words(names: Sequence[str]) -> str:
    measure = {1: "length", 2: "area", 3: "volume"}.get(len(names), f"{len(names)}-volume")
    return f"per unit coordinate {measure} of {', '.join(names)}"


def killing_generator(h: Horizon, coordinates: tuple) -> Markup | None:
    """χ = ∂_t + Ω ∂_φ (+ Ω' ∂_ψ …) typeset."""
    if not h.normal_killing_vector:
        return None
    terms = []
    try:
        for name, value in h.normal_killing_vector:
            d = rf"\partial_{{{sympy.latex(sympy.Symbol(name))}}}"
            if value == 1:
                terms.append(d)
            else:
                terms.append(rf"\left({mathtex.to_latex(value, coordinates)}\right) {d}")
        return math_inline(r"\chi = " + " + ".join(terms))
    except (ValueError, TypeError, RecursionError):
        return None


def horizon_row(h: Horizon, coordinates: tuple, verdicts: Mapping[str, dict[str, Any]],
                principal: bool) -> dict[str, Any]:
    symbol = sympy.Symbol(h.coordinate)
    quantities = [
        ("location", _math(sympy.latex(symbol), h.location, coordinates), h.location),
        ("angular velocity", _math(r"\Omega_H", h.angular_velocity, coordinates),
         h.angular_velocity),
        ("surface gravity", _math(r"\kappa", h.surface_gravity, coordinates),
         h.surface_gravity),
        ("temperature", _math("T", h.temperature, coordinates), h.temperature),
        ("area", _math("A", h.area, coordinates), h.area),
        ("entropy", _math("S", h.entropy, coordinates), h.entropy),
    ]
    field_of = {"location": "location", "surface gravity": "surface_gravity",
                "area": "area", "angular velocity": "angular_velocity"}
    claim_of = {v: k for k, v in HORIZON_CLAIM_FIELDS.items()}
    rows = []
    for label, shown, value in quantities:
        key = field_of.get(label, "")
        verdict = verdicts.get(f"claims.{claim_of[key]}") if principal and key in claim_of \
            else None
        reason = h.reasons.get(key or label, h.reasons.get("surface_gravity", "")) \
            if value is None else ""
        note = ""
        if label == "area" and value is None and h.area_method == "numeric":
            shown = math_inline(f"A \\approx {h.area_numeric}")
            at = ", ".join(f"{name} = {number}" for name, number in h.area_parameters)
            note = (f"numeric: mpmath quadrature, {h.area_digits} significant digits, at {at}; "
                    "the area integral is not elementary here")
            if h.area_per:
                label, reason = f"area {per_unit_words(h.area_per)}", ""
        if label == "area" and h.area_roots:
            note = "; ".join(f"{name} is the root of {polynomial} = 0 at the {end} end of "
                             f"{coordinate}'s range (≈ {numeric} at the first sample "
                             "parameters)"
                             for name, coordinate, polynomial, numeric, end in h.area_roots)
        if label == "angular velocity" and h.angular_velocities:
            value = h.angular_velocities
            shown = _many([(f"\\Omega_{{{sympy.latex(sympy.Symbol(name))}}}", w)
                           for name, w in h.angular_velocities], coordinates)
            reason = ""
        if h.surface_gravity_in_root is not None and label in ("surface gravity",
                                                                "temperature"):
            value, shown, note = in_root_form(h, label, coordinates)
        if h.area_per_unit is not None and label in ("area", "entropy"):
            per = per_unit_words(h.area_per)
            value = h.area_per_unit if label == "area" else h.entropy_per_unit
            shown = _math(r"\mathcal{A}" if label == "area" else r"\mathcal{S}", value,
                          coordinates)
            label, reason = f"{label} {per}", ""
        text = "" if value is None else reader_text(
            ", ".join(f"Ω_{n} = {w}" for n, w in value) if isinstance(value, tuple)
            else str(value))
        rows.append({"label": label, "math": shown, "text": text,
                     "reason": reader_text(reason), "verdict": verdict,
                     "note": reader_text(note)})
    generator = killing_generator(h, coordinates)
    return {"kind": h.kind, "coordinate": h.coordinate, "generator": generator,
            "polynomial": reader_text(str(h.polynomial)) if h.location.has(H) else "",
            "how": reader_text(h.how), "rows": rows}


def in_root_form(h: Horizon, label: str, coordinates: tuple
                 ) -> tuple[sympy.Expr, Markup | None, str]:
    """κ (or T = κ/2π) with a parameter eliminated by the root's polynomial (M in terms of
    r₊): the form reduced modulo the polynomial runs to hundreds of terms, this one to a few
    factors; both are equal at the root, exactly. The long form stays in the JSON report."""
    kappa = h.surface_gravity_in_root
    value = kappa if label == "surface gravity" else kappa / (2 * sympy.pi)
    shown = _math(r"\kappa" if label == "surface gravity" else "T", value, coordinates)
    note = (f"{h.in_root_parameter} eliminated with the root's polynomial: "
            f"{h.in_root_parameter} = {h.in_root_value} at the root, so this form equals the "
            "one reduced modulo the polynomial exactly; that longer form is in the JSON report")
    return value, shown, note


def physical_section(report: EntryReport) -> dict[str, Any] | None:
    c, st = report.classification, report.spacetime
    if c is None or st is None or c.physical is None:
        return None
    data = c.physical
    coordinates = st.coordinates
    verdicts = {v.subject: verdict_row(v) for v in c.physical_checked}
    events = [h for h in data.horizons if h.kind == "event"]
    cosmological = [h for h in data.horizons if h.kind == "cosmological"]
    principal = events[-1] if events else (cosmological[-1] if cosmological else None)
    orbits = []
    for key, label, symbol in (("ergosurface", "ergosurface (g_tt = 0)", "r_E"),
                               ("photon_sphere", "photon sphere", "r_{ph}"),
                               ("isco", "innermost stable circular orbit", "r_{ISCO}"),
                               ("komar_mass", "Komar mass", "M_K"),
                               ("komar_angular_momentum", "Komar angular momentum", "J_K")):
        value = getattr(data, key)
        note = ""
        if key in data.orbit_roots:
            _, polynomial, numeric = data.orbit_roots[key]
            note = (f"h_root is the root of {polynomial} = 0 that lies in the static region; "
                    f"≈ {numeric} at the first sample parameters")
        if key == "komar_angular_momentum" and data.komar_angular_momenta:
            orbits += [{"label": f"Komar angular momentum of ∂_{name}",
                        "math": _math(f"J_{{{sympy.latex(sympy.Symbol(name))}}}", spin,
                                      coordinates),
                        "text": reader_text(str(spin)), "reason": "", "verdict": None,
                        "note": "one rotation plane each; J = (1/16π) ∮ ∇^a ψ^b dS_ab"}
                       for name, spin in data.komar_angular_momenta]
            continue
        orbits.append({"label": label, "math": _math(symbol, value, coordinates),
                       "text": "" if value is None else reader_text(str(value)),
                       "reason": reader_text(data.reasons.get(key, "")) if value is None else "",
                       "verdict": verdicts.get(f"claims.{key}"), "note": reader_text(note)})
    observers = None
    if data.kinematics is not None:
        k = data.kinematics
        rows = []
        for key, symbol, value in (
                ("expansion", r"\theta", k.expansion),
                ("shear_squared", r"\sigma_{ab}\sigma^{ab}", k.shear_squared),
                ("vorticity_squared", r"\omega_{ab}\omega^{ab}", k.vorticity_squared),
                ("acceleration_squared", r"a_a a^a", k.acceleration_squared),
                ("hubble_rate", "H", k.hubble_rate),
                ("deceleration", "q", k.deceleration)):
            if value is not None:
                rows.append({"math": _math(symbol, value, coordinates),
                             "text": reader_text(str(value)),
                             "verdict": verdicts.get(f"claims.{key}"), "note": ""})
        observer = reader_text(", ".join(f"u^{name} = {value}" for name, value in k.observer))
        observers = {"source": k.source, "observer": observer, "rows": rows}
    return {
        "horizons": [horizon_row(h, coordinates, verdicts, h is principal)
                     for h in data.horizons],
        "horizons_note": reader_text(data.horizons_note),
        "extremality": [reader_text(str(e)) for e in data.extremality],
        "orbits": orbits,
        "observers": observers,
        "observers_reason": reader_text(data.reasons.get("kinematics", "")),
    }


def limit_rows(report: EntryReport, published: tuple[str, ...]) -> list[dict[str, Any]]:
    """The limits this entry states (kind: limit), each with its verdict."""
    entry, c = report.entry, report.classification
    if entry is None:
        return []
    checks: dict[str, Verdict] = {v.subject: v for v in (c.related_checked if c else ())}
    rows = []
    for k, link in enumerate(entry.related):
        if link.kind != "limit":
            continue
        verdict = checks.get(related_subject(k))
        rows.append({
            "entry": link.entry,
            "href": f"../{link.entry}/index.html" if link.entry in published else "",
            "limit": ", ".join(f"{name} → {value.text}" for name, value in link.limit),
            "verdict": verdict_row(verdict) if verdict else None,
        })
    return rows


def verified_limit_links(report: EntryReport) -> list[tuple[str, str]]:
    """(target id, limit shown) of this entry's limit links that verified."""
    entry, c = report.entry, report.classification
    if entry is None or c is None:
        return []
    checks = {v.subject: v for v in c.related_checked}
    out = []
    for k, link in enumerate(entry.related):
        verdict = checks.get(related_subject(k))
        if link.kind == "limit" and verdict is not None and verdict.ok:
            out.append((link.entry, ", ".join(f"{name} → {value.text}"
                                              for name, value in link.limit)))
    return out


def family_limit_tree(cards: Sequence[Mapping[str, Any]]) -> list[dict[str, Any]]:
    """The limit tree of a family page: verified limit links between its published entries,
    with links relative to the families/ folder."""
    ids = {card["id"] for card in cards}
    edges = [(card["id"], target, shown) for card in cards
             for target, shown in card.get("limit_links", ()) if target in ids]
    return limit_tree(edges, "", prefix="../entries/")


def limit_families(published: Sequence[EntryReport]) -> dict[str, tuple[tuple[str, str, str], ...]]:
    """Entry id → the verified limit links (from, to, limit) of its family: the entries joined
    to it by limit links in either direction, all published."""
    ids = {r.entry.id for r in published if r.entry is not None}
    edges = [(report.entry.id, target, shown) for report in published
             if report.entry is not None
             for target, shown in verified_limit_links(report) if target in ids]
    parent = {i: i for i in ids}

    def root(i: str) -> str:
        while parent[i] != i:
            parent[i] = parent[parent[i]]
            i = parent[i]
        return i

    for a, b, _ in edges:
        ra, rb = root(a), root(b)
        parent[max(ra, rb)] = min(ra, rb)
    by_root: dict[str, list[tuple[str, str, str]]] = {}
    for edge in edges:
        by_root.setdefault(root(edge[0]), []).append(edge)
    return {i: tuple(sorted(by_root.get(root(i), ()))) for i in sorted(ids)
            if by_root.get(root(i))}


def limit_tree(edges: Sequence[tuple[str, str, str]], here: str, prefix: str = "../"
               ) -> list[dict[str, Any]]:
    """The family as nested nodes from its most general members down (an entry reached along
    two paths appears under both), for the page's nested list."""
    children: dict[str, list[tuple[str, str]]] = {}
    targets = set()
    for a, b, shown in edges:
        children.setdefault(a, []).append((b, shown))
        targets.add(b)
    tops = sorted({a for a, _, _ in edges} - targets)

    def node(entry_id: str, shown: str, seen: frozenset[str]) -> dict[str, Any]:
        below = [node(b, how, seen | {entry_id}) for b, how in sorted(children.get(entry_id, []))
                 if b not in seen]
        return {"entry": entry_id, "href": f"{prefix}{entry_id}/index.html", "limit": shown,
                "here": entry_id == here, "children": below}

    return [node(top, "", frozenset()) for top in tops]
