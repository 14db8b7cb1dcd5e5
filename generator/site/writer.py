"""Render stage: turn verified entry reports into the static site.

``render_site`` is the whole stage, top-down: choose what is published, make each entry's view
once (or take it from where earlier builds kept it), then write every page kind from its own pure
context builder, then the downloads, plots, search index and static assets. Templates
(``site_templates/``) only loop and branch over the plain data built in ``generator.site``; the only
markup marked safe is MathML from ``mathtex`` and Markdown that went through nh3.

Output is deterministic: everything is iterated in sorted or catalog order and nothing reads a
clock, so the same catalog gives byte-identical files.
"""

from __future__ import annotations

import hashlib
import re
import shutil
from collections.abc import Callable, Iterable, Mapping, Sequence
from pathlib import Path
from typing import Any, Protocol

from jinja2 import Environment, FileSystemLoader, StrictUndefined, select_autoescape

from generator.model import (
    CatalogMeta,
    EntryReport,
)
from generator.site.catalog_pages import (
    browse_context,
    catalog_context,
    catalog_json,
    contributing_context,
    conventions_context,
    entry_context,
    family_context,
    family_list_context,
    home_context,
    revisions_context,
    search_index_script,
    tag_context,
    tag_list_context,
)
from generator.site.common import (
    NOWHERE,
    SCHEMA_FILE,
    TEMPLATE_DIR,
    RenderError,
    Surroundings,
    revision_file,
)
from generator.site.entry_page import EntryView, entry_view, surroundings
from generator.site.plots import figures_kept_on, kept_figures_key
from generator.site.search import search_script, search_script_key
from generator.versions import library_versions

# ---------------------------------------------------------------------------- the stage


class ViewShelf(Protocol):
    """Where rendered entry views are kept between builds (the run stage's result cache)."""

    def get(self, key: str, kind: type) -> Any: ...

    def put(self, key: str, value: object) -> None: ...


# Makes the views of (report, surroundings) pairs, in order: here, or in worker processes
# (`run.views`), which is where a cold build spends most of its rendering time.
ViewMaker = Callable[[Sequence[tuple[EntryReport, Surroundings]], CatalogMeta],
                     list[EntryView]]


def views_made_here(wanted: Sequence[tuple[EntryReport, Surroundings]],
                    meta: CatalogMeta) -> list[EntryView]:
    return [entry_view(report, meta, around) for report, around in wanted]


def render_site(reports: Sequence[EntryReport], meta: CatalogMeta, out_dir: Path,
                kept_views: ViewShelf | None = None,
                make_views: ViewMaker = views_made_here) -> set[str]:
    """Write the complete site for the published (ok) reports into ``out_dir``.

    ``kept_views``: where entry views made by earlier builds are kept (see ``kept_views_of``);
    ``make_views`` makes the others. Returns the keys of the views this site is made of
    (what a pruned cache keeps)."""
    published = published_reports(reports, meta)
    around = surroundings(published)
    keys = {entry_id: view_key(r, meta, around[entry_id])
            for entry_id, r in zip(around, published, strict=True)}
    with figures_kept_on(kept_views):
        views = kept_views_of(published, meta, around, keys, kept_views, make_views)
    cards = [views[r.entry.id].card for r in published if r.entry is not None]
    env = template_environment()
    pages = list(site_pages(published, views, cards, meta))
    for path, template, context in pages:
        write_text(out_dir / path, env.get_template(template).render(context))
    for report in published:
        write_entry_files(report, views[report.entry.id], meta, out_dir)  # type: ignore[union-attr]
    write_text(out_dir / "assets" / "search-index.js", search_index_script(cards))
    script_key = search_script_key(cards, library_versions(RENDER_LIBRARIES))
    write_text(out_dir / "assets" / "search-lunr.js", kept_search_script(cards, script_key,
                                                                         kept_views))
    entries = [views[r.entry.id].data for r in published if r.entry is not None]
    write_text(out_dir / "catalog.json", catalog_json(entries, meta))
    copy_static(out_dir)
    if SCHEMA_FILE.is_file():
        (out_dir / "schema").mkdir(parents=True, exist_ok=True)
        shutil.copyfile(SCHEMA_FILE, out_dir / "schema" / "entry.schema.json")
    figures = {kept_figures_key(r) for r in published}
    return {key for key in (*keys.values(), *figures) if key is not None} | {script_key}


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


VIEW_SUFFIX = ".view"
RENDER_LIBRARIES = ("matplotlib", "latex2mathml", "markdown", "nh3", "markupsafe", "numpy",
                    "lunr")


def kept_views_of(published: Sequence[EntryReport], meta: CatalogMeta,
                  around: Mapping[str, Surroundings], keys: Mapping[str, str | None],
                  shelf: ViewShelf | None, make_views: ViewMaker = views_made_here
                  ) -> dict[str, EntryView]:
    """Entry id → ``entry_view``, each kept under its key (``view_key``: everything it is made
    from).

    Once the checks come from the cache, plots and typesetting are nearly all of a build's
    time; a rebuild then makes views only for the entries that changed (or whose
    surroundings in the catalog did: families, tags, revisions, the entries it is joined to),
    all at once, so that ``make_views`` can spread them over processes.
    """
    views: dict[str, EntryView] = {}
    missing: list[tuple[str, EntryReport]] = []
    for report in published:
        entry_id = report.entry.id  # type: ignore[union-attr]
        key = keys[entry_id]
        found = shelf.get(key, EntryView) if shelf is not None and key is not None else None
        if found is None:
            missing.append((entry_id, report))
        else:
            views[entry_id] = found
    made = make_views([(report, around[entry_id]) for entry_id, report in missing], meta)
    for (entry_id, _), view in zip(missing, made, strict=True):
        views[entry_id] = view
        if shelf is not None and keys[entry_id] is not None:
            shelf.put(keys[entry_id], view)  # type: ignore[arg-type]
    return views


def kept_search_script(cards: Sequence[Mapping[str, Any]], key: str,
                       shelf: ViewShelf | None) -> str:
    """The search script kept under ``key`` (``search_script_key``), else made and kept."""
    found = shelf.get(key, str) if shelf is not None else None
    if found is not None:
        return found
    script = search_script(cards)
    if shelf is not None:
        shelf.put(key, script)
    return script


def view_key(report: EntryReport, meta: CatalogMeta, around: Surroundings = NOWHERE
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
        meta.sympy_version, repr(meta.publication), repr(meta.families), repr(meta.tags),
        repr(meta.revisions.get(entry.id, ())), repr(around),
        library_versions(RENDER_LIBRARIES),
    )
    return hashlib.sha256("\0".join(parts).encode()).hexdigest()


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
