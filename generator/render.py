"""Render stage: turn verified entry reports into the static site.

``render_site`` is the whole stage, top-down: choose what is published, typeset it once, then
write every page kind from its own pure context builder, then the downloads, plots, search
index and static assets. Templates (``site_templates/``) only loop and branch over the plain
data built here; the only markup we mark safe is MathML from ``mathtex`` and Markdown that went
through nh3.

Output is deterministic: everything is iterated in sorted or catalog order and nothing reads a
clock, so the same catalog gives byte-identical files.
"""

from __future__ import annotations

import hashlib
import json
import keyword
import re
import shutil
from collections import Counter
from collections.abc import Callable, Iterable, Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any
from urllib.parse import quote

import markdown
import nh3
import sympy
from jinja2 import Environment, FileSystemLoader, StrictUndefined, select_autoescape
from markupsafe import Markup, escape

from . import cite, export, mathtex, plots
from .atlas import MAPS_HERE, ChartLink, chart_links
from .cache import ResultCache, library_versions
from .errors import AlmanacError
from .mathparse import parse_inequality, parse_math, table_from_symbols
from .model import (
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

REPO_ROOT = Path(__file__).resolve().parent.parent
TEMPLATE_DIR = REPO_ROOT / "site_templates"
SCHEMA_FILE = REPO_ROOT / "schema" / "entry.schema.json"

SIGNATURE = "−+++"
UNITS = "G = c = 1 (geometric units)"
RIEMANN_CONVENTION = (
    r"R^{a}{}_{bcd} = \partial_{c}\Gamma^{a}{}_{db} - \partial_{d}\Gamma^{a}{}_{cb}"
    r" + \Gamma^{a}{}_{ce}\Gamma^{e}{}_{db} - \Gamma^{a}{}_{de}\Gamma^{e}{}_{cb}"
)
RICCI_CONVENTION = r"R_{bd} = R^{a}{}_{bad}"
FIELD_EQUATIONS = r"G_{ab} + \Lambda g_{ab} = 8\pi T_{ab}"
CAUTION = (
    "Every entry here has been recomputed and checked by machine, but a machine check is not "
    "peer review: before you rely on a formula, check it against the original literature cited "
    "on its page."
)

INVARIANTS = (
    ("ricci_scalar", "Ricci scalar", r"R"),
    ("kretschmann", "Kretschmann scalar", r"R_{abcd}R^{abcd}"),
    ("ricci_squared", "Ricci square", r"R_{ab}R^{ab}"),
    ("weyl_squared", "Weyl square", r"C_{abcd}C^{abcd}"),
)
MATTER_LABELS = {
    "vacuum": "vacuum",
    "lambda-vacuum": "Λ-vacuum",
    "electrovacuum": "electrovacuum",
    "perfect-fluid": "perfect fluid",
    "anisotropic-fluid": "anisotropic fluid",
    "null-dust": "null dust",
    "unspecified": "no declared source",
}
METHOD_LABELS = {
    "exact": "exact (normal form)",
    "sampled": "sampled at exact rational points",
    "failed": "could not be decided",
}
ROLE_LABELS = {
    "original": "original paper",
    "claims": "source of the stated values",
    "textbook": "textbook",
    "review": "review",
    "erratum": "erratum",
}
ALLOWED_NOTE_TAGS = {
    "p", "em", "strong", "code", "pre", "ul", "ol", "li", "blockquote", "h3", "h4", "h5",
    "table", "thead", "tbody", "tr", "th", "td", "br", "hr", "sub", "sup",
}
DOI_PATTERN = re.compile(r"^10\.\d{4,9}/[^\s\"<>]+$")
ARXIV_PATTERN = re.compile(r"^(\d{4}\.\d{4,5}|[a-z-]+(\.[A-Z]{2})?/\d{7})(v\d+)?$")


class RenderError(AlmanacError):
    """Raised by the render stage when a template or asset is missing or broken."""


# ---------------------------------------------------------------------------- the stage


def render_site(reports: Sequence[EntryReport], meta: CatalogMeta, out_dir: Path,
                kept_views: ResultCache | None = None) -> set[str]:
    """Write the complete site for the published (ok) reports into ``out_dir``.

    ``kept_views``: where entry views made by earlier builds are kept (see ``kept_view``).
    Returns the keys of the views this site is made of (what a pruned cache keeps)."""
    published = published_reports(reports, meta)
    around = surroundings(published)
    keys = {entry_id: view_key(r, meta, around[entry_id])
            for entry_id, r in zip(around, published, strict=True)}
    views = {entry_id: kept_view(r, meta, kept_views, keys[entry_id], around[entry_id])
             for entry_id, r in zip(around, published, strict=True)}
    cards = [views[r.entry.id].card for r in published if r.entry is not None]
    env = template_environment()
    pages = list(site_pages(published, views, cards, meta))
    for path, template, context in pages:
        write_text(out_dir / path, env.get_template(template).render(context))
    for report in published:
        write_entry_files(report, views[report.entry.id], meta, out_dir)  # type: ignore[union-attr]
    write_text(out_dir / "assets" / "search-index.js", search_index_script(cards))
    entries = [views[r.entry.id].data for r in published if r.entry is not None]
    write_text(out_dir / "catalog.json", catalog_json(entries, meta))
    copy_static(out_dir)
    if SCHEMA_FILE.is_file():
        (out_dir / "schema").mkdir(parents=True, exist_ok=True)
        shutil.copyfile(SCHEMA_FILE, out_dir / "schema" / "entry.schema.json")
    return {key for key in keys.values() if key is not None}


SLUG = re.compile(r"^[a-z0-9][a-z0-9-]*$")


def require_slugs(published: Sequence[EntryReport], meta: CatalogMeta) -> None:
    """Names that become file paths must be plain slugs (never ``..`` or ``/``)."""
    names = [("entry id", r.entry.id) for r in published if r.entry is not None]
    names += [("tag", t.name) for t in meta.tags] + [("family", f.name) for f in meta.families]
    for kind, name in names:
        if not SLUG.match(name):
            raise RenderError(f"{kind} {name!r} cannot become a page name (use [a-z0-9-])")


def published_reports(reports: Sequence[EntryReport], meta: CatalogMeta) -> list[EntryReport]:
    """The ok reports with an entry, in catalog order (family order, then id)."""
    family_order = {f.name: k for k, f in enumerate(meta.families)}
    chosen = [r for r in reports if r.ok and r.entry is not None]
    require_slugs(chosen, meta)
    return sorted(
        chosen,
        key=lambda r: (family_order.get(r.entry.family, len(family_order)), r.entry.id),  # type: ignore[union-attr]
    )


def site_pages(
    published: Sequence[EntryReport],
    views: Mapping[str, EntryView],
    cards: Sequence[dict[str, Any]],
    meta: CatalogMeta,
) -> Iterable[tuple[str, str, dict[str, Any]]]:
    """Every HTML page as (path, template, context)."""
    yield "index.html", "home.html", home_context(cards, meta)
    yield "browse.html", "browse.html", browse_context(cards, meta)
    yield "conventions.html", "conventions.html", conventions_context(meta)
    yield "contributing.html", "contributing.html", contributing_context(meta)
    yield "catalog.html", "catalog.html", catalog_context(cards, meta)
    yield "revisions.html", "revisions.html", revisions_context(cards, meta)
    yield "tags/index.html", "tag-list.html", tag_list_context(cards, meta)
    for tag in meta.tags:
        yield f"tags/{tag.name}.html", "tag.html", tag_context(tag.name, cards, meta)
    yield "families/index.html", "family-list.html", family_list_context(cards, meta)
    for family in meta.families:
        yield (f"families/{family.name}.html", "family.html",
               family_context(family.name, cards, meta))
    for report in published:
        entry_id = report.entry.id  # type: ignore[union-attr]
        yield f"entries/{entry_id}/index.html", "entry.html", entry_context(views[entry_id], meta)


def template_environment() -> Environment:
    """Jinja with autoescape everywhere and StrictUndefined (a missing key is a bug)."""
    if not TEMPLATE_DIR.is_dir():
        raise RenderError(f"template folder {TEMPLATE_DIR} is missing")
    return Environment(
        loader=FileSystemLoader(str(TEMPLATE_DIR)),
        autoescape=select_autoescape(default=True, default_for_string=True),
        undefined=StrictUndefined,
        keep_trailing_newline=True,
        trim_blocks=True,
        lstrip_blocks=True,
    )


def write_text(path: Path, text: str) -> None:
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text(text, encoding="utf-8", newline="\n")


def copy_static(out_dir: Path) -> None:
    """Copy site_templates/static/ to assets/ in sorted order."""
    static = TEMPLATE_DIR / "static"
    for source in sorted(static.rglob("*")):
        if source.is_file():
            target = out_dir / "assets" / source.relative_to(static)
            target.parent.mkdir(parents=True, exist_ok=True)
            shutil.copyfile(source, target)


# ---------------------------------------------------------------------------- shared context


def base_context(meta: CatalogMeta, root: str, title: str, section: str) -> dict[str, Any]:
    """What every page needs: relative root, title, navigation state, versions."""
    return {
        "root": root,
        "page_title": title,
        "section": section,
        "version": meta.version,
        "generator_version": meta.generator_version,
        "caution": CAUTION,
    }


def conventions_data() -> dict[str, Any]:
    return {
        "signature": SIGNATURE,
        "units": UNITS,
        "riemann": math_inline(RIEMANN_CONVENTION),
        "ricci": math_inline(RICCI_CONVENTION),
        "field_equations": math_inline(FIELD_EQUATIONS),
    }


def math_block(latex: str) -> Markup:
    return Markup(mathtex.latex_to_mathml(latex, display=True))


def math_inline(latex: str) -> Markup:
    return Markup(mathtex.latex_to_mathml(latex))


def counts(cards: Sequence[dict[str, Any]], key: str) -> list[dict[str, Any]]:
    tally = Counter(str(c[key]) for c in cards)
    return [{"name": name, "count": tally[name]} for name in sorted(tally)]


# ---------------------------------------------------------------------------- page contexts


def home_context(cards: Sequence[dict[str, Any]], meta: CatalogMeta) -> dict[str, Any]:
    by_family = Counter(c["family"] for c in cards)
    by_matter = Counter(c["matter_label"] for c in cards)
    return {
        **base_context(meta, "", "Metric Almanac", "home"),
        "conventions": conventions_data(),
        "entry_count": len(cards),
        "families": [
            {"name": f.name, "title": f.title, "about": f.about, "count": by_family[f.name]}
            for f in meta.families
        ],
        "matter_counts": [{"name": k, "count": by_matter[k]} for k in sorted(by_matter)],
    }


def browse_context(cards: Sequence[dict[str, Any]], meta: CatalogMeta) -> dict[str, Any]:
    used_tags = sorted({t for c in cards for t in c["tags"]})
    return {
        **base_context(meta, "", "Find a metric", "browse"),
        "cards": list(cards),
        "families": [{"name": f.name, "title": f.title} for f in meta.families],
        "dimensions": sorted({c["dimension"] for c in cards}),
        "matter_kinds": [{"value": k, "label": MATTER_LABELS.get(k, k)}
                         for k in sorted({c["matter"] for c in cards})],
        "petrov_types": sorted({c["petrov"] for c in cards if c["petrov"]}),
        "tags": used_tags,
    }


def conventions_context(meta: CatalogMeta) -> dict[str, Any]:
    return {**base_context(meta, "", "Conventions", "conventions"),
            "conventions": conventions_data()}


def contributing_context(meta: CatalogMeta) -> dict[str, Any]:
    return {
        **base_context(meta, "", "Contributing an entry", "contributing"),
        "body": markdown_html(meta.contributing_markdown, allow_links=True),
    }


def catalog_context(cards: Sequence[dict[str, Any]], meta: CatalogMeta) -> dict[str, Any]:
    return {
        **base_context(meta, "", "Whole catalog", "catalog"),
        "cards": list(cards),
        "has_schema": SCHEMA_FILE.is_file(),
    }


def tag_list_context(cards: Sequence[dict[str, Any]], meta: CatalogMeta) -> dict[str, Any]:
    tally = Counter(t for c in cards for t in c["tags"])
    return {
        **base_context(meta, "../", "Tags", "tags"),
        "tags": [{"name": t.name, "meaning": t.meaning, "count": tally[t.name]}
                 for t in sorted(meta.tags, key=lambda t: t.name)],
    }


def tag_context(name: str, cards: Sequence[dict[str, Any]], meta: CatalogMeta) -> dict[str, Any]:
    meaning = next((t.meaning for t in meta.tags if t.name == name), "")
    return {
        **base_context(meta, "../", f"Tag: {name}", "tags"),
        "tag": {"name": name, "meaning": meaning},
        "cards": [c for c in cards if name in c["tags"]],
    }


def family_list_context(cards: Sequence[dict[str, Any]], meta: CatalogMeta) -> dict[str, Any]:
    tally = Counter(c["family"] for c in cards)
    return {
        **base_context(meta, "../", "Families", "families"),
        "families": [{"name": f.name, "title": f.title, "about": f.about,
                      "count": tally[f.name]} for f in meta.families],
    }


def family_context(name: str, cards: Sequence[dict[str, Any]], meta: CatalogMeta) -> dict[str, Any]:
    family = next(f for f in meta.families if f.name == name)
    return {
        **base_context(meta, "../", family.title, "families"),
        "family": {"name": family.name, "title": family.title, "about": family.about},
        "cards": [c for c in cards if c["family"] == name],
    }


def entry_context(view: EntryView, meta: CatalogMeta) -> dict[str, Any]:
    return {**base_context(meta, "../../", view.card["title"], "entry"), **view.page}


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


@dataclass(frozen=True)
class Surroundings:
    """What an entry's view shows of the rest of the catalog, and nothing more (it is part of
    the view's key: adding an unrelated entry must not re-render every page)."""

    published_links: tuple[str, ...] = ()  # entries its own `related` names that are published
    charts: tuple[ChartLink, ...] = ()  # other charts of its spacetime (atlas.chart_links)


def surroundings(published: Sequence[EntryReport]) -> dict[str, Surroundings]:
    """The surroundings of every published entry, in the order given."""
    ids = {r.entry.id for r in published if r.entry is not None}
    charts = chart_links(published)
    return {r.entry.id: Surroundings(
                tuple(sorted({rel.entry for rel in r.entry.related} & ids)), charts[r.entry.id])
            for r in published if r.entry is not None}


def entry_view(report: EntryReport, meta: CatalogMeta,
               around: Surroundings = Surroundings()) -> EntryView:
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


VIEW_SUFFIX = ".view"
RENDER_LIBRARIES = ("matplotlib", "latex2mathml", "markdown", "nh3", "markupsafe", "numpy")


def kept_view(report: EntryReport, meta: CatalogMeta, shelf: ResultCache | None,
              key: str | None, around: Surroundings = Surroundings()) -> EntryView:
    """``entry_view``, kept under ``key`` (``view_key``: everything it is made from).

    Once the checks come from the cache, plots and typesetting are nearly all of a build's
    time; a rebuild then makes views only for the entries that changed (or whose
    surroundings in the catalog did: families, tags, revisions, the entries it is joined to).
    """
    if shelf is not None and key is not None:
        found = shelf.get(key, EntryView)
        if found is not None:
            return found
    view = entry_view(report, meta, around)
    if shelf is not None and key is not None:
        shelf.put(key, view)
    return view


def view_key(report: EntryReport, meta: CatalogMeta, around: Surroundings = Surroundings()
             ) -> str | None:
    """Hash of what ``entry_view`` reads: the report (by the hash of its inputs, which covers
    the generator's source and the computing libraries), the diagnostics added after checking
    it, the catalog-wide data an entry page shows, and the versions of the rendering
    libraries. None for a report without that hash (made outside the pipeline)."""
    entry = report.entry
    if not report.inputs_key or entry is None:
        return None
    parts = (
        report.inputs_key, repr(report.diagnostics), meta.version, meta.generator_version,
        meta.sympy_version, meta.base_url, repr(meta.families), repr(meta.tags),
        repr(meta.revisions.get(entry.id, ())), repr(around),
        library_versions(RENDER_LIBRARIES),
    )
    return hashlib.sha256("\0".join(parts).encode()).hexdigest()


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
        "authors": authors,
        "years": sorted({ref.year for ref in entry.references}),
        "href": f"entries/{entry.id}/index.html",
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
        "notes": markdown_html(entry.notes, allow_links=False),
        "metric": metric_data(report),
        "chart": chart_data(entry, report.spacetime),
        "invariants": invariant_rows(report, verdicts),
        "matter": matter_data(report, verdicts),
        "symmetry": symmetry_data(report, verdicts),
        "related": related_rows(report, around.published_links),
        "maps_onto_here": [chart_link_row(c) for c in around.charts if c.kind == MAPS_HERE],
        "charts_through": [chart_link_row(c) for c in around.charts if c.kind != MAPS_HERE],
        "references": [reference_data(r) for r in entry.references],
        "checks": [verdict_row(v) for v in report.verdicts],
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
        "plots": [{"file": p.file_name, "alt": p.alt, "caption": p.caption} for p in figures],
        "downloads": download_links(entry.id),
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


def revision_file(entry_id: str, content_hash: str) -> str:
    """Site path of an entry's YAML text at the revision with this content hash."""
    return f"entries/{entry_id}/revisions/{cite.short_hash(content_hash)}.yaml"


def revisions_context(cards: Sequence[dict[str, Any]], meta: CatalogMeta) -> dict[str, Any]:
    """Every recorded revision of every published entry, so a cited hash can be looked up."""
    published = {card["id"] for card in cards}
    rows = [
        {"hash": r.content_hash, "short": cite.short_hash(r.content_hash), "id": entry_id,
         "href": f"entries/{entry_id}/index.html", "date": r.date, "commit": r.commit[:12],
         "summary": r.summary, "source_href": revision_file(entry_id, r.content_hash)}
        for entry_id in sorted(published)
        for r in meta.revisions.get(entry_id, ())
    ]
    rows.sort(key=lambda row: (row["short"], row["id"], row["date"]))
    return {**base_context(meta, "", "Look up a content hash", "catalog"), "rows": rows}


def write_entry_files(report: EntryReport, view: EntryView, meta: CatalogMeta, out: Path) -> None:
    entry = report.entry
    assert entry is not None
    folder = out / "entries" / entry.id
    for revision in meta.revisions.get(entry.id, ()):
        if revision.source:
            write_text(out / revision_file(entry.id, revision.content_hash), revision.source)
    write_text(folder / "entry.json", view.json_document)
    write_text(folder / f"{entry.id}.py", view.sympy_script)
    write_text(folder / f"{entry.id}.tex", view.latex_document)
    for figure in view.plots:
        write_text(folder / figure.file_name, figure.svg)


# ---------------------------------------------------------------------------- math pieces


def coordinate_symbols(report: EntryReport) -> tuple[sympy.Symbol, ...]:
    return report.spacetime.coordinates if report.spacetime else ()


def typeset(expr: sympy.Expr | None, coords: Sequence[sympy.Symbol] = ()) -> Markup | None:
    """MathML for an expression; if conversion fails, the plain SymPy text, escaped."""
    if expr is None:
        return None
    try:
        return Markup(mathtex.expr_to_mathml(expr, coords))
    except (mathtex.UnsafeMathML, ValueError, KeyError, IndexError) as exc:
        text = escape(sympy.sstr(expr))
        return Markup(f'<code class="math-fallback" title="{escape(str(exc))}">{text}</code>')


def parsed(math: MathText | None, spacetime: Spacetime | None) -> sympy.Expr | None:
    """An entry's math string as SymPy, through the whitelisted parser (None if it fails)."""
    if math is None or spacetime is None:
        return None
    try:
        return parse_math(math, spacetime.symbols)
    except AlmanacError:
        return None


def typeset_text(math: MathText | None, spacetime: Spacetime | None) -> dict[str, Any] | None:
    """A claimed value typeset when it parses, else shown as plain (escaped) text."""
    if math is None:
        return None
    coords = spacetime.coordinates if spacetime else ()
    expr = parsed(math, spacetime)
    return {"math": typeset(expr, coords) if expr is not None else None, "text": math.text}


def metric_data(report: EntryReport) -> dict[str, Any]:
    st = report.spacetime
    if st is None:
        return {"line_element": None, "components": []}
    coords = st.coordinates
    line = mathtex.line_element_display_latex(st.metric, coords)
    components = []
    for i in range(st.dimension):
        for j in range(i, st.dimension):
            value = st.metric[i, j]
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


def relation_latex(relation: sympy.Basic, coords: Sequence[sympy.Symbol]) -> str:
    """LaTeX for an inequality; ``a < b`` and ``b < c`` print as ``a < b < c``."""
    if isinstance(relation, sympy.And):
        parts = sorted(relation.args, key=sympy.default_sort_key)
        if len(parts) == 2:
            first, second = parts
            if first.rhs == second.lhs or second.rhs == first.lhs:
                low, high = (first, second) if first.rhs == second.lhs else (second, first)
                return (f"{mathtex.to_latex(low.lhs, coords)} {RELATION_TEX[low.rel_op]} "
                        f"{mathtex.to_latex(low.rhs, coords)} {RELATION_TEX[high.rel_op]} "
                        f"{mathtex.to_latex(high.rhs, coords)}")
        return r",\quad ".join(relation_latex(p, coords) for p in parts)
    if isinstance(relation, sympy.core.relational.Relational):
        return (f"{mathtex.to_latex(relation.lhs, coords)} {RELATION_TEX[relation.rel_op]} "
                f"{mathtex.to_latex(relation.rhs, coords)}")
    return mathtex.to_latex(relation, coords)


RELATION_TEX = {"<": "<", ">": ">", "<=": r"\le", ">=": r"\ge", "==": "=", "!=": r"\ne"}


def invariant_rows(report: EntryReport, verdicts: Mapping[str, Verdict]) -> list[dict[str, Any]]:
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
            "computed": typeset(computed, coords),
            "claim": claim_data(claim, entry, report.spacetime) if claim else None,
            "verdict": verdict_row(verdicts[f"claims.{key}"]) if f"claims.{key}" in verdicts
            else None,
        })
    return rows


def claim_source(claim_source_role: str | None, entry: Entry) -> dict[str, Any]:
    """Who the claimed value comes from; ``computed-here`` means the tool's own result."""
    if claim_source_role == "computed-here":
        return {"computed_here": True,
                "label": "the tool's own result: no published value was found to compare with"}
    roles = {r.role for r in entry.references}
    role = claim_source_role or ("claims" if "claims" in roles else "original")
    refs = [r for r in entry.references if r.role == role]
    label = "; ".join(f"{short_authors(r.authors)} {r.year}" for r in refs) or role
    return {"computed_here": False, "label": label}


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
            {"name": ec.name, "status": ec.status, "how": ec.how,
             "claimed": dict(entry.claims.energy_conditions).get(ec.name, "")}
            for ec in (c.energy_conditions if c else ())
        ],
        "reasons": sorted((c.reasons if c else {}).items()),
        "energy_conditions_na": "",
    }
    statuses = {ec.status for ec in (c.energy_conditions if c else ())}
    if statuses == {"not-applicable"} and c is not None:
        data["energy_conditions_na"] = c.energy_conditions[0].how
        data["reasons"] = [(k, v) for k, v in data["reasons"] if k != "energy_conditions"]
    return data


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
        verdict = checks.get(related_subject(k))
        rows.append({
            "entry": rel.entry,
            "href": f"../{rel.entry}/index.html" if rel.entry in published else "",
            "map": [{"coordinate": name, "text": value.text} for name, value in rel.map],
            "verdict": verdict_row(verdict) if verdict else None,
        })
    return rows


def chart_link_row(link: ChartLink) -> dict[str, Any]:
    """One chart of this spacetime that another entry, or a chain of entries, joins to this
    one (all published, so every link has a page)."""
    return {
        "entry": link.entry,
        "href": f"../{link.entry}/index.html",
        "chart": link.chart,
        "map": [{"coordinate": name, "text": text} for name, text in link.map],
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
    }


def doi_url(doi: str | None) -> str:
    """An https link to doi.org we build ourselves; empty for anything not shaped like a DOI."""
    if not doi or not DOI_PATTERN.match(doi):
        return ""
    return "https://doi.org/" + quote(doi, safe="/.;()-_:")


def arxiv_url(arxiv: str | None) -> str:
    if not arxiv or not ARXIV_PATTERN.match(arxiv):
        return ""
    return "https://arxiv.org/abs/" + quote(arxiv, safe="/.")


def verdict_row(verdict: Verdict) -> dict[str, Any]:
    return {
        "subject": verdict.subject,
        "ok": verdict.ok,
        "state": "agrees" if verdict.ok else ("undecided" if verdict.method == "failed"
                                               else "disagrees"),
        "method": verdict.method,
        "method_label": METHOD_LABELS.get(verdict.method, verdict.method),
        "detail": verdict.detail,
        "claimed": verdict.claimed,
        "computed": verdict.computed,
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


def citations(report: EntryReport, meta: CatalogMeta) -> dict[str, str]:
    entry = report.entry
    assert entry is not None
    return {
        "entry_bibtex": cite_or_reason(lambda: cite.cite_entry(report, meta, "bibtex")),
        "entry_text": cite_or_reason(lambda: cite.cite_entry(report, meta, "text")),
        "original_bibtex": cite_or_reason(lambda: cite.cite_original(entry, "bibtex")),
        "url": cite.entry_url(meta, entry.id),
    }


def cite_or_reason(make: Callable[[], str]) -> str:
    """A citation, or why there is none (cite.py refuses e.g. an entry without a content
    hash); one uncitable entry should not take the whole site down."""
    try:
        return make()
    except ValueError as exc:
        return f"(no citation available: {exc})"


def markdown_html(text: str, allow_links: bool) -> Markup:
    """Markdown rendered then sanitised by nh3; links only when the text is our own."""
    html = markdown.markdown(text, extensions=["tables", "fenced_code"], output_format="html")
    tags = ALLOWED_NOTE_TAGS | ({"a", "h1", "h2"} if allow_links else set())
    attributes = {"a": {"href", "title"}} if allow_links else {}
    clean = nh3.clean(
        html, tags=tags, attributes=attributes, url_schemes={"https"},
        link_rel="noopener noreferrer",
    )
    return Markup(clean)


# ---------------------------------------------------------------------------- downloads


def expr_text(expr: sympy.Basic | None) -> str | None:
    """A SymPy expression as a string ``parse_expr`` reads back (entry's own names)."""
    return None if expr is None else sympy.sstr(expr, order="lex")


def entry_json(report: EntryReport, meta: CatalogMeta,
               around: Surroundings = Surroundings()) -> dict[str, Any]:
    """The entry as written plus everything computed: the JSON download."""
    entry = report.entry
    assert entry is not None
    return {
        "format": "metric-almanac-entry-data-1",
        "catalog_version": meta.version,
        "generator_version": meta.generator_version,
        "sympy_version": meta.sympy_version,
        "content_hash": report.content_hash,
        "url": cite.entry_url(meta, entry.id),
        "id": entry.id,
        "file": entry.file,
        "mathematics": cite.canonical_form(entry),
        "family": entry.family,
        "title": entry.title,
        "chart": entry.chart,
        "summary": entry.summary,
        "notes": entry.notes,
        "tags": list(entry.tags),
        "references": [reference_json(r) for r in entry.references],
        "computed": computed_json(report),
        "verdicts": [verdict_row(v) for v in report.verdicts],
        "same_spacetime": same_spacetime_json(around),
        "revisions": [
            {"commit": r.commit, "date": r.date, "content_hash": r.content_hash,
             "summary": r.summary} for r in meta.revisions.get(entry.id, ())
        ],
    }


def same_spacetime_json(around: Surroundings) -> list[dict[str, Any]]:
    """The published charts of this spacetime, joined by verified maps: written here, written
    there, or through a chain (``route``: the entries in between)."""
    rows = [{"entry": entry_id, "route": []} for entry_id in around.published_links]
    rows += [{"entry": link.entry, "route": list(link.route)} for link in around.charts]
    return sorted(rows, key=lambda row: row["entry"])


def reference_json(r: Reference) -> dict[str, Any]:
    return {
        "role": r.role, "authors": list(r.authors), "title": r.title, "venue": r.venue,
        "year": r.year, "doi": r.doi, "arxiv": r.arxiv, "isbn": r.isbn, "locator": r.locator,
        "unconfirmed": list(r.unconfirmed),
    }


def computed_json(report: EntryReport) -> dict[str, Any]:
    """All computed data of an entry (one definition, shared with `check --json`)."""
    if report.spacetime is None or report.geometry is None:
        return {}
    return export.computed_json(report.spacetime, report.geometry, report.classification)


def catalog_json(entries: Sequence[dict[str, Any]], meta: CatalogMeta) -> str:
    """The whole catalog in one file: the entries' JSON downloads (``entry_json``) together."""
    data = {
        "format": "metric-almanac-catalog-1",
        "catalog_version": meta.version,
        "generator_version": meta.generator_version,
        "sympy_version": meta.sympy_version,
        "families": [{"name": f.name, "title": f.title, "about": f.about} for f in meta.families],
        "tags": [{"name": t.name, "meaning": t.meaning} for t in meta.tags],
        "entries": list(entries),
    }
    return json.dumps(data, indent=1, sort_keys=True, ensure_ascii=False) + "\n"


def search_index_script(cards: Sequence[dict[str, Any]]) -> str:
    """The search index as a script (not fetched), so search works from file:// too."""
    fields = ("id", "title", "chart", "summary", "family", "family_title", "tags", "dimension",
              "matter", "matter_label", "petrov", "authors", "years", "href")
    rows = [{k: c[k] for k in fields} for c in cards]
    text = json.dumps(rows, ensure_ascii=True, sort_keys=True, separators=(",", ":"))
    text = text.replace("<", "\\u003c").replace(">", "\\u003e").replace("&", "\\u0026")
    return f"window.ALMANAC_INDEX = {text};\n"


def python_literal(text: str) -> str:
    """A string as a safe, ASCII-only Python literal (contributor text never becomes code)."""
    return ascii(text)


SCRIPT_NAMES = frozenset({"sympy", "metric", "coordinates", "ENTRY_ID", "TITLE",
                          "CATALOG_VERSION", "CONTENT_HASH"})


def require_identifiers(symbols: Sequence[Any]) -> None:
    """Names written into the SymPy script as code must be plain, non-clashing identifiers."""
    for symbol in symbols:
        name = getattr(symbol, "__name__", None) or str(symbol)
        if not name.isidentifier() or keyword.iskeyword(name) or name in SCRIPT_NAMES:
            raise RenderError(f"symbol name {name!r} cannot be written into the SymPy script")


def sympy_script(report: EntryReport, meta: CatalogMeta) -> str:
    """A standalone script that rebuilds the metric with SymPy (catalog signature)."""
    entry, st = report.entry, report.spacetime
    assert entry is not None
    lines = [
        "# Metric Almanac: SymPy script that rebuilds one entry's metric.",
        "# Conventions: signature -+++, G = c = 1. Check against the original literature.",
        "import sympy",
        "from sympy import (E, I, Abs, Derivative, LambertW, Rational, acos, acosh, acot, asin,",
        "                   asinh, atan, atanh, cos, cosh, cot, csc, exp, log, pi, sec, sin,",
        "                   sinh, sqrt, tan, tanh)",
        "",
        f"ENTRY_ID = {python_literal(entry.id)}",
        f"TITLE = {python_literal(entry.title)}",
        f"CATALOG_VERSION = {python_literal(meta.version)}",
        f"CONTENT_HASH = {python_literal(report.content_hash)}",
        "",
    ]
    if st is None:
        return "\n".join([*lines, "metric = None", ""])
    require_identifiers([*st.coordinates, *st.parameters, *(f.func for f in st.functions)])
    assumptions = {p.name: p.assume for p in entry.parameters}
    for symbol in st.coordinates:
        lines.append(f"{symbol} = sympy.Symbol({python_literal(str(symbol))}, real=True)")
    for symbol in st.parameters:
        kind = assumptions.get(str(symbol), "real")
        flag = kind if kind in SYMPY_ASSUMPTIONS else "real"
        lines.append(f"{symbol} = sympy.Symbol({python_literal(str(symbol))}, {flag}=True)")
    for applied in st.functions:
        name = applied.func.__name__
        lines.append(f"{name} = sympy.Function({python_literal(name)})")
    n = st.dimension
    lines += ["", f"coordinates = ({', '.join(str(c) for c in st.coordinates)},)",
              f"metric = sympy.zeros({n}, {n})"]
    for i in range(n):
        for j in range(i, n):
            if st.metric[i, j] != 0:
                value = expr_text(st.metric[i, j])
                target = f"metric[{i}, {j}]" if i == j else f"metric[{i}, {j}] = metric[{j}, {i}]"
                lines.append(f"{target} = {value}")
    lines += ["metric = sympy.ImmutableMatrix(metric)", "",
              'if __name__ == "__main__":', "    sympy.pprint(metric)", ""]
    return "\n".join(lines)


SYMPY_ASSUMPTIONS = frozenset({"positive", "negative", "nonnegative", "nonzero", "real"})
LATEX_SPECIALS = {
    "\\": r"\textbackslash{}", "{": r"\{", "}": r"\}", "$": r"\$", "&": r"\&", "#": r"\#",
    "%": r"\%", "_": r"\_", "^": r"\^{}", "~": r"\~{}",
}


def latex_escape(text: str) -> str:
    return "".join(LATEX_SPECIALS.get(ch, ch) for ch in text.replace("\n", " "))


def latex_document(report: EntryReport, meta: CatalogMeta) -> str:
    """A small standalone LaTeX file with the line element and the components."""
    entry, st = report.entry, report.spacetime
    assert entry is not None
    head = [
        r"\documentclass{article}", r"\usepackage{amsmath}", r"\begin{document}",
        rf"\section*{{{latex_escape(entry.title)} ({latex_escape(entry.chart)})}}",
        rf"% Metric Almanac {latex_escape(meta.version)}, entry {latex_escape(entry.id)}",
        r"% Conventions: signature $-+++$, $G = c = 1$.",
    ]
    body: list[str] = []
    if st is not None:
        line = mathtex.line_element_latex(st.metric, st.coordinates).replace(r"\text{d}",
                                                                            r"\mathrm{d}")
        body += [r"\begin{equation}", line, r"\end{equation}", r"\begin{align}"]
        rows = []
        for i in range(st.dimension):
            for j in range(i, st.dimension):
                if st.metric[i, j] != 0:
                    rows.append(mathtex.component_latex(st.coordinates[i], st.coordinates[j],
                                                        st.metric[i, j], st.coordinates)
                                .replace(" = ", " &= ", 1))
        body += [" \\\\\n".join(rows), r"\end{align}"]
    return "\n".join([*head, *body, r"\end{document}", ""])
