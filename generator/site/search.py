"""The finder's full-text index, built at build time with lunr and shipped as a script.

Why lunr: the Python package (``lunr`` on PyPI) builds an index in the format that the small
lunr JavaScript library (``lunr`` 2.3.9 on npm, MIT licence, vendored under
``site_templates/static/vendor/lunr/``) loads directly. So the tokenising, stemming and
field-boosted scoring are done by one well-kept library on both sides instead of hand-written
matching, words match whole (stemmed) tokens or prefixes — never a substring inside a word, so
"charged" no longer finds "uncharged" — and the page needs no server: the index is a script
file, loaded from file:// as well as over http.

What lunr does not know is the trade. Before text reaches lunr, on both sides, it is *folded*
the same way: lower case, accents dropped (Nordström → nordstrom), Greek letters spelt out
(Λ → lambda) and every other character a separator. Synonyms of the trade (AdS, RN, FLRW …)
are added as aliases to the field whose text contains the long form, so "AdS" ranks an entry
titled anti-de Sitter as a title match. Phrases that name a property ("Petrov type D", "5D",
"Λ-vacuum", "charged") become filters in finder.js, which holds those rules.
"""

from __future__ import annotations

import hashlib
import json
import re
import unicodedata
from collections.abc import Mapping, Sequence
from typing import Any

from lunr import lunr

# Field boosts: a word in the title counts most, then the chart, tags, authors, summary, notes.
FIELDS = (
    ("title", 10),
    ("chart", 6),
    ("tags", 4),
    ("authors", 3),
    ("summary", 2),
    ("notes", 1),
)
GREEK = {
    "α": "alpha", "β": "beta", "γ": "gamma", "δ": "delta", "ε": "epsilon", "ζ": "zeta",
    "η": "eta", "θ": "theta", "ι": "iota", "κ": "kappa", "λ": "lambda", "μ": "mu", "ν": "nu",
    "ξ": "xi", "π": "pi", "ρ": "rho", "σ": "sigma", "ς": "sigma", "τ": "tau", "υ": "upsilon",
    "φ": "phi", "χ": "chi", "ψ": "psi", "ω": "omega",
}
# Short forms of the trade and the long form each stands for (after folding).
SYNONYMS = {
    "ads": "anti de sitter",
    "rn": "reissner nordstrom",
    "flrw": "friedmann lemaitre robertson walker",
    "kn": "kerr newman",
    "ltb": "lemaitre tolman bondi",
    "btz": "banados teitelboim zanelli",
}


def fold(text: str) -> str:
    """The form both the index and the query are reduced to before lunr sees them.

    finder.js repeats these steps with the table shipped beside the index; a test checks that
    both give the same words.
    """
    text = unicodedata.normalize("NFKD", text.lower())
    text = "".join(GREEK.get(ch, ch) for ch in text if not unicodedata.combining(ch))
    return " ".join(re.sub(r"[^a-z0-9]+", " ", text).split())


def with_aliases(folded: str) -> str:
    """Folded text plus the short form of every long form it contains ("… ads")."""
    padded = f" {folded} "
    extra = [short for short, long in SYNONYMS.items() if f" {long} " in padded]
    extra += [long for short, long in SYNONYMS.items() if f" {short} " in padded
              and f" {long} " not in padded]
    return " ".join([folded, *extra]) if extra else folded


def surnames(authors: Sequence[str]) -> str:
    """Authors as the names readers search by (surnames; initials add nothing)."""
    return " ".join(a.split()[-1] for a in authors if a.split())


def search_document(card: Mapping[str, Any]) -> dict[str, str]:
    """One entry as lunr sees it: every field folded, aliases added."""
    return {
        "id": card["id"],
        "title": with_aliases(fold(card["title"])),
        "chart": with_aliases(fold(card["chart"])),
        "tags": fold(" ".join(card["tags"])),
        "authors": fold(surnames(card["authors"])),
        "summary": with_aliases(fold(card["summary"])),
        "notes": with_aliases(fold(card.get("notes_text", ""))),
    }


def build_index(cards: Sequence[Mapping[str, Any]]) -> dict[str, Any] | None:
    """The serialised lunr index of the published entries (sorted by id: deterministic);
    None for a catalog with nothing published (lunr cannot build an empty index)."""
    documents = [search_document(c) for c in sorted(cards, key=lambda c: c["id"])]
    if not documents:
        return None
    index = lunr(ref="id", fields=[{"field_name": name, "boost": boost}
                                   for name, boost in FIELDS], documents=documents)
    return index.serialize()


def search_script_key(cards: Sequence[Mapping[str, Any]], libraries: str) -> str:
    """Hash of everything ``search_script`` reads (the cards' search documents, the fields
    and their boosts, the fold table, the synonyms) and of the library versions: a rebuild
    whose cards did not change reuses the kept script (building the lunr index was a second
    of every rebuild)."""
    documents = [search_document(c) for c in sorted(cards, key=lambda c: c["id"])]
    text = json.dumps([documents, FIELDS, GREEK, SYNONYMS, libraries], sort_keys=True,
                      ensure_ascii=True)
    return "search-" + hashlib.sha256(text.encode()).hexdigest()


def search_script(cards: Sequence[Mapping[str, Any]]) -> str:
    """``window.ALMANAC_SEARCH``: the lunr index, the fold table and the synonyms."""
    data = {"index": build_index(cards), "greek": GREEK, "synonyms": SYNONYMS}
    text = json.dumps(data, ensure_ascii=True, sort_keys=True, separators=(",", ":"))
    text = text.replace("<", "\\u003c").replace(">", "\\u003e").replace("&", "\\u0026")
    return f"window.ALMANAC_SEARCH = {text};\n"
