"""The catalog-wide pages (home, browse, families, tags, revisions), the search index and
catalog.json.
"""

from __future__ import annotations

import json
from collections import Counter
from collections.abc import Sequence
from typing import Any

from generator.entry.content_hash import short_hash
from generator.model import CatalogMeta
from generator.site.common import (
    EVIDENCE_LABELS,
    MATTER_LABELS,
    SCHEMA_FILE,
    base_context,
    conventions_data,
    markdown_html,
    revision_file,
)
from generator.site.entry_page import EntryView
from generator.site.physical_page import family_limit_tree


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
        "agreeing_values": sum(c["agreements"] for c in cards),
        "computed_only_entries": sum(c["evidence"] == "computed-only" for c in cards),
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
        "isometry_dimensions": sorted({c["isometry"] for c in cards if c["isometry"]}, key=int),
        "evidence": [{"value": k, "label": EVIDENCE_LABELS[k]}
                     for k in sorted({c["evidence"] for c in cards})],
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
        "limit_tree": family_limit_tree([c for c in cards if c["family"] == name]),
    }


def entry_context(view: EntryView, meta: CatalogMeta) -> dict[str, Any]:
    return {**base_context(meta, "../../", view.card["title"], "entry"), **view.page}


def revisions_context(cards: Sequence[dict[str, Any]], meta: CatalogMeta) -> dict[str, Any]:
    """Every recorded revision of every published entry, so a cited hash can be looked up."""
    published = {card["id"] for card in cards}
    rows = [
        {"hash": r.content_hash, "short": short_hash(r.content_hash), "id": entry_id,
         "href": f"entries/{entry_id}/index.html", "date": r.date, "commit": r.commit[:12],
         "summary": r.summary, "source_href": revision_file(entry_id, r.content_hash)}
        for entry_id in sorted(published)
        for r in meta.revisions.get(entry_id, ())
    ]
    rows.sort(key=lambda row: (row["short"], row["id"], row["date"]))
    return {**base_context(meta, "", "Look up a content hash", "catalog"), "rows": rows}


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
              "matter", "matter_label", "petrov", "isometry", "evidence", "authors", "years",
              "href")
    rows = [{k: c[k] for k in fields} for c in cards]
    text = json.dumps(rows, ensure_ascii=True, sort_keys=True, separators=(",", ":"))
    text = text.replace("<", "\\u003c").replace(">", "\\u003e").replace("&", "\\u0026")
    return f"window.ALMANAC_INDEX = {text};\n"
