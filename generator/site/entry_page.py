"""The data of one entry's page and list card, computed once per entry (``EntryView``)."""

from __future__ import annotations

import json
import re
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import sympy
from markupsafe import Markup

from generator.entry.content_hash import short_hash
from generator.entry.mathparse import (
    parse_expression,
    parse_inequality,
    table_from_symbols,
    valid_name,
)
from generator.entry.prose import abbreviation_values, plain_prose
from generator.errors import AlmanacError
from generator.model import (
    CatalogMeta,
    Claim,
    Entry,
    EntryReport,
    MathText,
    Reference,
    Spacetime,
    Verdict,
    related_subject,
)
from generator.site import cite, mathtex, plots
from generator.site.atlas import MAPS_HERE, ChartLink, chart_links
from generator.site.common import (
    EVIDENCE_LABELS,
    INVARIANTS,
    MATTER_LABELS,
    METHOD_LABELS,
    NOWHERE,
    RIEMANN_CONVENTION,
    ROLE_LABELS,
    SIGNATURE,
    UNITS,
    Surroundings,
    abbreviation_pairs,
    arxiv_url,
    coordinate_symbols,
    decided_by,
    doi_url,
    math_block,
    math_inline,
    parsed,
    readable_text,
    reader_text,
    relation_latex,
    typeset,
    typeset_text,
    verdict_row,
)
from generator.site.downloads import entry_json, latex_document, sympy_script
from generator.site.isometry_page import isometry_data, isometry_dimension_text
from generator.site.physical_page import (
    limit_families,
    limit_rows,
    limit_tree,
    physical_section,
    verified_limit_links,
)
from generator.site.prose_html import (
    abbreviation_rows,
    prose_line,
    prose_markdown,
    prose_symbols,
)
from generator.site.tensor_tables import tensor_tables

# ---------------------------------------------------------------------------- one entry


@dataclass(frozen=True)
class EntryView:
    """Everything rendered about one entry, computed once: list card, page data, downloads."""

    card: dict[str, Any]
    page: dict[str, Any]
    plots: tuple[plots.Plot, ...]
    latex_document: str
    sympy_script: str
    data: dict[str, Any]  # the JSON download, also the entry's part of catalog.json
    json_document: str


def surroundings(published: Sequence[EntryReport]) -> dict[str, Surroundings]:
    """The surroundings of every published entry, in the order given."""
    ids = {r.entry.id for r in published if r.entry is not None}
    charts = chart_links(published)
    families = limit_families(published)
    return {r.entry.id: Surroundings(
                tuple(sorted({rel.entry for rel in r.entry.related} & ids)), charts[r.entry.id],
                families.get(r.entry.id, ()))
            for r in published if r.entry is not None}


def entry_view(report: EntryReport, meta: CatalogMeta,
               around: Surroundings = NOWHERE) -> EntryView:
    entry = report.entry
    assert entry is not None
    figures = plots.entry_plots(report)
    card = entry_card(report, meta)
    page = entry_page_data(report, meta, card, figures, around)
    data = entry_json(report, meta, around)
    return EntryView(
        card=card,
        page=page,
        plots=figures,
        latex_document=latex_document(report, meta),
        sympy_script=sympy_script(report, meta),
        data=data,
        json_document=json.dumps(data, indent=2, sort_keys=True, ensure_ascii=False) + "\n",
    )


def entry_card(report: EntryReport, meta: CatalogMeta) -> dict[str, Any]:
    """The short form of an entry used in lists and in the search index."""
    entry = report.entry
    assert entry is not None
    c = report.classification
    kind = c.matter_kind if c else entry.matter.kind
    family_title = next((f.title for f in meta.families if f.name == entry.family), entry.family)
    authors = sorted({a for ref in entry.references for a in ref.authors})
    return {
        "id": entry.id,
        "title": entry.title,
        "chart": entry.chart,
        "summary": entry.summary,
        "family": entry.family,
        "family_title": family_title,
        "tags": list(entry.tags),
        "dimension": len(entry.coordinates),
        "matter": kind,
        "matter_label": MATTER_LABELS.get(kind, kind),
        "petrov": (c.petrov_type if c else None) or "",
        "isometry": isometry_dimension_text(report),
        "agreements": report.agreements,
        "evidence": "literature" if report.agreements else "computed-only",
        "evidence_label": EVIDENCE_LABELS["literature" if report.agreements else "computed-only"],
        "authors": authors,
        "years": sorted({ref.year for ref in entry.references}),
        "href": f"entries/{entry.id}/index.html",
        "summary_html": prose_line(entry.summary, prose_symbols(entry, report.spacetime)),
        "chart_html": prose_line(entry.chart, prose_symbols(entry, report.spacetime)),
        "notes_text": plain_prose(entry.notes),  # for the search index only
        "limit_links": verified_limit_links(report),
    }


def entry_page_data(
    report: EntryReport,
    meta: CatalogMeta,
    card: dict[str, Any],
    figures: Sequence[plots.Plot],
    around: Surroundings,
) -> dict[str, Any]:
    entry = report.entry
    assert entry is not None
    verdicts = {v.subject: v for v in report.verdicts}
    return {
        "entry": card,
        "notes": prose_markdown(entry.notes, prose_symbols(entry, report.spacetime)),
        "metric": metric_data(report, abbreviation_pairs(report)),
        "abbreviations": abbreviation_rows(
            entry, report.spacetime,
            abbreviation_values(entry, report.spacetime) if report.spacetime else {}),
        "chart": chart_data(entry, report.spacetime),
        "invariants": invariant_rows(report, verdicts, abbreviation_pairs(report)),
        "tensors": tensor_tables(report, abbreviation_pairs(report)),
        "matter": matter_data(report, verdicts),
        "symmetry": symmetry_data(report, verdicts),
        "isometry": isometry_data(report),
        "related": related_rows(report, around.published_links),
        "physical": physical_section(report),
        "limits": limit_rows(report, around.published_links),
        "limit_tree": limit_tree(around.limits, entry.id),
        "maps_onto_here": [chart_link_row(c) for c in around.charts if c.kind == MAPS_HERE],
        "charts_through": [chart_link_row(c) for c in around.charts if c.kind != MAPS_HERE],
        "references": [reference_data(r) for r in entry.references],
        "checks": [verdict_row(v) for v in report.verdicts],
        "decided_by": decided_by(report.verdicts),
        "verified": verification_summary(report),
        "provenance": {
            "generator_version": meta.generator_version,
            "sympy_version": meta.sympy_version,
            "content_hash": report.content_hash,
            "engine": report.geometry.engine if report.geometry else "",
            "curated_by": entry.curation.by,
            "added": entry.curation.added,
        },
        "entry_conventions": entry_conventions(entry, report.spacetime),
        "citations": citations(report, meta),
        "revisions": [
            {"date": r.date, "commit": r.commit[:12], "hash": r.content_hash[:12],
             "summary": r.summary}
            for r in meta.revisions.get(entry.id, ())
        ],
        "plots": [{"file": p.file_name, "alt": reader_text(p.alt),
                   "caption": reader_text(p.caption)} for p in figures],
        "downloads": download_links(entry.id),
    }


SUBJECT_LABELS = {
    **{f"claims.{key}": label for key, label, _ in INVARIANTS},
    "claims.petrov_type": "Petrov type",
    "claims.hawking_ellis_type": "Hawking–Ellis type",
    "matter.kind": "Matter content",
    "claims.horizon_location": "Horizon location",
    "claims.surface_gravity": "Surface gravity",
    "claims.horizon_area": "Horizon area",
    "claims.horizon_angular_velocity": "Angular velocity of the horizon",
    "claims.photon_sphere": "Photon sphere",
    "claims.isco": "Innermost stable circular orbit",
    "claims.komar_mass": "Komar mass",
    "claims.komar_angular_momentum": "Komar angular momentum",
    "claims.expansion": "Expansion of the observers",
    "claims.shear_squared": "Shear of the observers",
    "claims.vorticity_squared": "Vorticity of the observers",
    "claims.acceleration_squared": "Acceleration of the observers",
}
# Numbered claims (a list under one key): the reader's name, numbered from 1.
NUMBERED_LABELS = {
    "claims.killing_vectors": "Killing vector",
    "claims.killing_tensors": "Killing tensor",
    "claims.conformal_killing_vectors": "Conformal Killing vector",
    "claims.homotheties": "Homothety",
}


def subject_label(subject: str, entry: Entry) -> str:
    """A verdict's subject in readers' words (the check log keeps the key)."""
    if subject in SUBJECT_LABELS:
        return SUBJECT_LABELS[subject]
    head, _, index = subject.rpartition(".")
    if head in NUMBERED_LABELS and index.isdigit():
        return f"{NUMBERED_LABELS[head]} {int(index) + 1}"
    if head == "related" and index.isdigit() and int(index) < len(entry.related):
        return f"Map to {entry.related[int(index)].entry}"
    if subject.startswith("claims.energy_conditions."):
        return f"{subject.rpartition('.')[2]} energy condition"
    return _spelled_out(subject)


def _spelled_out(subject: str) -> str:
    """A key no label names yet, in words rather than as a dotted key (never a key on a page)."""
    words = subject.removeprefix("claims.").replace(".", " ").replace("_", " ").strip()
    return words[:1].upper() + words[1:]


def verification_summary(report: EntryReport) -> dict[str, Any]:
    """What only this tool has, for the top of the page: how many stated facts were checked,
    how, against which published source, and which are the tool's own results (a value no
    cited publication prints is never counted as agreement)."""
    entry = report.entry
    assert entry is not None
    rows = []
    for verdict in report.verdicts:
        source = claim_source(verdict.source, entry) if verdict.source else None
        rows.append({**verdict_row(verdict), "label": subject_label(verdict.subject, entry),
                     "against": source["label"] if source and not source["computed_here"]
                     else ""})
    states = [row["state"] for row in rows]
    agreeing = [r for r in rows if r["state"] == "agrees"]
    return {
        "rows": rows,
        "total": len(rows),
        "agrees": len(agreeing),
        "exact": sum(1 for r in agreeing if r["method"] == "exact"),
        "sampled": sum(1 for r in agreeing if r["method"] == "sampled"),
        "computed_only": states.count("computed-only"),
        "undecided": states.count("undecided"),
        "disagrees": states.count("disagrees"),
        "sources": sorted({r["against"] for r in rows if r["against"]}),
        "own": [r["label"] for r in rows if r["state"] == "computed-only"],
    }


def download_links(entry_id: str) -> list[dict[str, str]]:
    return [
        {"file": "entry.json", "label": "All data as JSON",
         "about": "the entry and everything computed from it"},
        {"file": f"{entry_id}.py", "label": "SymPy script",
         "about": "rebuilds the metric as a SymPy matrix"},
        {"file": f"{entry_id}.tex", "label": "LaTeX",
         "about": "line element and components, ready for a paper"},
    ]


def metric_data(report: EntryReport,
                pairs: Sequence[tuple[sympy.Symbol, sympy.Expr]] = ()) -> dict[str, Any]:
    st = report.spacetime
    if st is None:
        return {"line_element": None, "components": []}
    coords = st.coordinates
    metric = mathtex.abbreviate_matrix(st.metric, pairs)
    line = mathtex.line_element_display_latex(metric, coords)
    components = []
    for i in range(st.dimension):
        for j in range(i, st.dimension):
            value = metric[i, j]
            if value != 0:
                components.append(
                    Markup(mathtex.latex_to_mathml(
                        mathtex.component_latex(coords[i], coords[j], value, coords)))
                )
    return {"line_element": math_block(line), "components": components}


def chart_data(entry: Entry, st: Spacetime | None) -> dict[str, Any]:
    symbols = st.symbols if st else {}

    def symbol_math(name: str) -> Markup | None:
        value = symbols.get(name)
        return typeset(value) if value is not None else None

    return {
        "coordinates": [{"name": c, "math": symbol_math(c)} for c in entry.coordinates],
        "parameters": [
            {"name": p.name, "math": symbol_math(p.name), "assume": p.assume, "meaning": p.meaning}
            for p in entry.parameters
        ],
        "functions": [
            {"name": f.name, "of": ", ".join(f.of), "assume": f.assume or "", "meaning": f.meaning}
            for f in entry.functions
        ],
        "domain": [domain_row(d, st) for d in entry.domain],
    }


def domain_row(math: MathText, st: Spacetime | None) -> dict[str, Any]:
    """One domain inequality typeset (chains kept as chains), or as text if it won't parse."""
    if st is None:
        return {"math": None, "text": math.text}
    try:
        relation = parse_inequality(math.text, table_from_symbols(st.symbols))
    except AlmanacError:
        return {"math": None, "text": math.text}
    return {"math": math_inline(relation_latex(relation, st.coordinates)), "text": math.text}


def invariant_rows(report: EntryReport, verdicts: Mapping[str, Verdict],
                   pairs: Sequence[tuple[sympy.Symbol, sympy.Expr]] = ()
                   ) -> list[dict[str, Any]]:
    entry, geometry = report.entry, report.geometry
    assert entry is not None
    coords = coordinate_symbols(report)
    claims = {c.name: c for c in entry.claims.scalars}
    rows = []
    for key, label, symbol in INVARIANTS:
        computed = getattr(geometry, key, None) if geometry else None
        claim = claims.get(key)
        if computed is None and claim is None:
            continue
        rows.append({
            "key": key,
            "label": label,
            "symbol": math_inline(symbol),
            "computed": typeset(mathtex.abbreviate(computed, pairs) if computed is not None
                                else None, coords),
            "claim": claim_data(claim, entry, report.spacetime) if claim else None,
            "verdict": verdict_row(verdicts[f"claims.{key}"]) if f"claims.{key}" in verdicts
            else None,
        })
    return rows


COMPUTED_ONLY_WORDS = "computed by this tool; no published value to compare"


def claim_source(source: str | None, entry: Entry) -> dict[str, Any]:
    """Who the claimed value comes from. Only the one reference the claim names counts: a
    value without one (``computed-here``, or the short form) is shown as the tool's own
    result, never attributed to a paper by default, and never to two papers at once."""
    ref = entry.cited_reference(source)  # None for computed-here: no reference bears it
    if ref is None:
        return {"computed_here": True, "label": COMPUTED_ONLY_WORDS}
    return {"computed_here": False, "label": work_label(ref)}


def work_label(reference: Reference) -> str:
    """A work as a reader names it in passing: surnames and year (Kerr 1963)."""
    return f"{short_authors(reference.authors)} {reference.year}"


def claim_data(claim: Claim, entry: Entry, st: Spacetime | None) -> dict[str, Any]:
    return {
        "value": typeset_text(claim.value, st),
        "source": claim_source(claim.source, entry),
        "locator": claim.locator or "",
    }


def short_authors(authors: Sequence[str]) -> str:
    surnames = [a.split()[-1] if a.split() else a for a in authors]
    if len(surnames) > 2:
        return f"{surnames[0]} et al."
    return " & ".join(surnames)


def matter_data(report: EntryReport, verdicts: Mapping[str, Verdict]) -> dict[str, Any]:
    entry, c = report.entry, report.classification
    assert entry is not None
    coords = coordinate_symbols(report)
    data: dict[str, Any] = {
        "claimed_kind": MATTER_LABELS.get(entry.matter.kind, entry.matter.kind),
        "computed_kind": MATTER_LABELS.get(c.matter_kind, c.matter_kind) if c else None,
        "kind_verdict": verdict_row(verdicts["matter.kind"]) if "matter.kind" in verdicts
        else None,
        "cosmological_constant": typeset(c.cosmological_constant, coords) if c else None,
        "density": typeset(c.energy_density, coords) if c else None,
        "pressures": [typeset(p, coords) for p in (c.principal_pressures or ())] if c else [],
        "hawking_ellis": c.hawking_ellis_type if c else None,
        "hawking_ellis_claim": entry.claims.hawking_ellis_type,
        "stress_energy": stress_energy_rows(report),
        "energy_conditions": [
            {"name": ec.name, "status": ec.status, "how": readable_text(ec.how),
             "claimed": dict(entry.claims.energy_conditions).get(ec.name, "")}
            for ec in (c.energy_conditions if c else ())
        ],
        "reasons": matter_reasons(c.reasons if c else {}, entry.matter.kind),
        "energy_conditions_na": "",
        "hawking_ellis_na": "",
    }
    statuses = {ec.status for ec in (c.energy_conditions if c else ())}
    if statuses == {"not-applicable"} and c is not None:
        data["energy_conditions_na"] = readable_reason(c.energy_conditions[0].how,
                                                       entry.matter.kind)
        data["hawking_ellis_na"] = readable_reason(
            c.reasons.get("hawking_ellis_type", ""), entry.matter.kind)
        data["reasons"] = [(k, v) for k, v in data["reasons"]
                           if k not in (REASON_LABELS["energy_conditions"],
                                        REASON_LABELS["hawking_ellis_type"])]
    return data


# What the matter section explains, by the checker's internal key, in readers' words; reasons
# about other sections (Petrov type, Weyl scalars) are shown there or not at all.
REASON_LABELS = {
    "matter_kind": "Matter content",
    "hawking_ellis_type": "Hawking–Ellis type",
    "energy_density": "Energy density",
    "energy_conditions": "Energy conditions",
}


def readable_reason(text: str, matter_kind: str) -> Markup:
    """A checker's reason for a page: the matter kind's label instead of its key, and
    ``T_ab`` with a real subscript."""
    if text.startswith(f"{matter_kind}: "):
        text = f"{MATTER_LABELS.get(matter_kind, matter_kind)}: " + text[len(matter_kind) + 2:]
    return readable_text(text)


def matter_reasons(reasons: Mapping[str, str], matter_kind: str) -> list[tuple[str, Markup]]:
    return [(REASON_LABELS[key], readable_reason(reasons[key], matter_kind))
            for key in REASON_LABELS if key in reasons]


def stress_energy_rows(report: EntryReport) -> list[Markup]:
    c, st = report.classification, report.spacetime
    if c is None or st is None or c.stress_energy_mixed is None:
        return []
    printer_coords = st.coordinates
    rows = []
    for i, a in enumerate(st.coordinates):
        for j, b in enumerate(st.coordinates):
            value = c.stress_energy_mixed[i, j]
            if value != 0:
                name = rf"T^{{{sympy.latex(a)}}}{{}}_{{{sympy.latex(b)}}}"
                rows.append(math_inline(f"{name} = {mathtex.to_latex(value, printer_coords)}"))
    return rows


def symmetry_data(report: EntryReport, verdicts: Mapping[str, Verdict]) -> dict[str, Any]:
    entry, c = report.entry, report.classification
    assert entry is not None
    checks = {v.subject: v for v in (c.killing_vectors_checked if c else ())}
    claimed = []
    for k, vector in enumerate(entry.claims.killing_vectors):
        verdict = checks.pop(f"claims.killing_vectors.{k}", None)
        claimed.append({**vector_math(vector.components, report.spacetime),
                        "verdict": verdict_row(verdict) if verdict else None})
    return {
        "petrov": c.petrov_type if c else None,
        "petrov_claim": entry.claims.petrov_type,
        "petrov_verdict": verdict_row(verdicts["claims.petrov_type"])
        if "claims.petrov_type" in verdicts else None,
        "petrov_reason": (c.reasons.get("petrov_type", "") if c else ""),
        "killing_vectors": claimed,
        "killing_checks": [verdict_row(v) for _, v in sorted(checks.items())],
    }


def vector_math(
    components: Sequence[tuple[str, MathText]], st: Spacetime | None
) -> dict[str, Any]:
    """A contravariant vector as ``f ∂_x + g ∂_y`` (plain text if a component won't parse)."""
    text = ", ".join(f"{name}: {value.text}" for name, value in components)
    if st is None:
        return {"math": None, "text": text}
    terms = []
    for name, value in components:
        expr = parsed(value, st)
        symbol = st.symbols.get(name)
        if expr is None or symbol is None:
            return {"math": None, "text": text}
        partial = rf"\partial_{{{sympy.latex(symbol)}}}"
        if expr == 1:
            terms.append(partial)
        else:
            body = mathtex.to_latex(expr, st.coordinates)
            terms.append(rf"\left({body}\right){partial}" if expr.is_Add else rf"{body}\,{partial}")
    return {"math": math_inline(" + ".join(terms).replace("+ -", "- ")), "text": text}


def related_rows(report: EntryReport, published: Sequence[str]) -> list[dict[str, Any]]:
    """Other charts of the same spacetime; linked only when that entry is published."""
    entry, c = report.entry, report.classification
    assert entry is not None
    checks = {v.subject: v for v in (c.related_checked if c else ())}
    rows = []
    for k, rel in enumerate(entry.related):
        if rel.kind == "limit":
            continue  # shown with the limits (physical_page.limit_rows), not as a chart
        verdict = checks.get(related_subject(k))
        rows.append({
            "entry": rel.entry,
            "href": f"../{rel.entry}/index.html" if rel.entry in published else "",
            "map": [map_item(name, value.text, report.spacetime) for name, value in rel.map],
            "verdict": verdict_row(verdict) if verdict else None,
        })
    return rows


def map_item(coordinate: str, text: str, st: Spacetime | None) -> dict[str, Any]:
    """One coordinate of a map between charts, typeset: ``r = sqrt(X**2 - T**2)`` as math.

    A map is written in the other chart's names, which this entry does not declare; the
    whitelisted parser reads them as plain symbols (already checked with the map itself).
    When it still does not parse, the text is shown as code.
    """
    known = dict(st.symbols) if st is not None else {}
    names = {n for n in [*re.findall(r"[A-Za-z_][A-Za-z0-9_]*", text), coordinate]
             if valid_name(n) and n not in known}
    table = table_from_symbols({**known, **{n: sympy.Symbol(n) for n in sorted(names)}})
    coords = st.coordinates if st is not None else ()
    try:
        expr = parse_expression(text, table)
        latex = (f"{mathtex.to_latex(sympy.Symbol(coordinate), coords)} = "
                 f"{mathtex.to_latex(expr, coords)}")
        return {"coordinate": coordinate, "text": text, "math": math_inline(latex)}
    except (AlmanacError, mathtex.UnsafeMathML, ValueError, TypeError, RecursionError):
        return {"coordinate": coordinate, "text": text, "math": None}


def chart_link_row(link: ChartLink) -> dict[str, Any]:
    """One chart of this spacetime that another entry, or a chain of entries, joins to this
    one (all published, so every link has a page)."""
    return {
        "entry": link.entry,
        "href": f"../{link.entry}/index.html",
        "chart": link.chart,
        "map": [map_item(name, text, None) for name, text in link.map],
        "method_label": METHOD_LABELS.get(link.method, link.method),
        "route": [{"entry": step, "href": f"../{step}/index.html"} for step in link.route],
    }


def reference_data(reference: Reference) -> dict[str, Any]:
    unconfirmed = set(reference.unconfirmed)
    return {
        "role": reference.role,
        "role_label": ROLE_LABELS.get(reference.role, reference.role),
        "authors": list(reference.authors),
        "title": reference.title,
        "venue": reference.venue,
        "year": reference.year,
        "doi": reference.doi or "",
        "doi_url": doi_url(reference.doi),
        "arxiv": reference.arxiv or "",
        "arxiv_url": arxiv_url(reference.arxiv),
        "isbn": reference.isbn or "",
        "locator": reference.locator or "",
        "unconfirmed": {f: f in unconfirmed for f in
                        ("authors", "title", "venue", "year", "doi", "arxiv", "isbn", "locator")},
        "any_unconfirmed": bool(unconfirmed),
        "confirmed": reference.confirmed or "",
    }


def entry_conventions(entry: Entry, st: Spacetime | None) -> dict[str, Any]:
    flipped = bool(st is not None and st.sign == -1)
    return {
        "signature_written": entry.signature,
        "flipped": flipped,
        "signature_shown": SIGNATURE if st is not None and st.lorentzian else entry.signature,
        "units": UNITS,
        "riemann": math_inline(RIEMANN_CONVENTION),
    }


def citations(report: EntryReport, meta: CatalogMeta) -> dict[str, Any]:
    """The citations, and what a reader of a paper needs to check that the entry they open is
    the one that was cited: the content hash, the revision, and the page that looks it up."""
    entry = report.entry
    assert entry is not None
    latest = meta.revisions.get(entry.id, ())[-1:]
    originals = [{"label": work_label(r), "confirmed": r.confirmed or "",
                  "unconfirmed": list(r.unconfirmed)}
                 for r in entry.references if r.role == "original"]
    return {
        "entry_bibtex": cite_or_reason(lambda: cite.cite_entry(report, meta, "bibtex")),
        "entry_text": cite_or_reason(lambda: cite.cite_entry(report, meta, "text")),
        "original_bibtex": cite_or_reason(lambda: cite.cite_original(entry, "bibtex")),
        "url": cite.entry_url(meta, entry.id) or "",
        "repository": meta.publication.repository or "",
        "content_hash": report.content_hash,
        "short_hash": short_hash(report.content_hash) if report.content_hash else "",
        "revision": {"date": latest[0].date, "commit": latest[0].commit[:12]} if latest else None,
        "originals": originals,
        "several_originals": len(originals) > 1,
    }


def cite_or_reason(make: Callable[[], str]) -> str:
    """A citation, or why there is none (cite.py refuses e.g. an entry without a content
    hash); one uncitable entry should not take the whole site down."""
    try:
        return make()
    except ValueError as exc:
        return f"(no citation available: {exc})"
