"""The content hash of an entry: a hash of its meaning, not of its layout.

The hash ignores how the YAML is laid out (whitespace, key order, comments) and covers the
entry's mathematics and provenance, so that a citation can name exactly what was cited.
"""

from __future__ import annotations

import hashlib
import json
import re

from generator.model import (
    Claims,
    Entry,
    FreeFunction,
    MathText,
    Matter,
    Parameter,
)

HASH_SCHEME = "metric-almanac-content-v1"
SHORT_HASH_LENGTH = 12

# ---------------------------------------------------------------------------- content hash


def content_hash(entry: Entry) -> str:
    """Full sha256 (64 hex digits) of the entry's mathematics in canonical form.

    Prose (title, summary, notes, meanings, references, curation) is left out: fixing a typo in
    a sentence is not a new revision of the mathematics that anyone could have cited.
    """
    payload = json.dumps(
        canonical_form(entry), sort_keys=True, ensure_ascii=False, separators=(",", ":")
    )
    return hashlib.sha256(payload.encode("utf-8")).hexdigest()


def short_hash(full: str) -> str:
    """The 12-hex-digit form shown on pages and in citations (48 bits: collisions negligible)."""
    return full[:SHORT_HASH_LENGTH]


def canonical_form(entry: Entry) -> dict[str, object]:
    """The mathematics of an entry as plain JSON data, independent of YAML layout.

    Mappings become sorted dicts; lists whose order carries meaning (coordinates, Killing
    vectors) keep it; the domain is a set of inequalities, so it is sorted.
    """
    return {
        "scheme": HASH_SCHEME,
        "coordinates": list(entry.coordinates),
        "signature": entry.signature,
        "parameters": {p.name: _parameter(p) for p in entry.parameters},
        "functions": {f.name: _function(f) for f in entry.functions},
        "domain": sorted(_math(d) for d in entry.domain),
        "metric": _metric(entry),
        "matter": _matter(entry.matter),
        "claims": _claims(entry.claims),
    }


def _math(text: MathText | None) -> str | None:
    """Whitespace carries no meaning in the math grammar, so it is removed entirely.

    Algebraically equal rewrites (``2*M/r`` vs ``M*2/r``) still change the hash: the hash names
    the text a reader saw, and deciding equality is the verifier's job, not the hash's.
    """
    if text is None:
        return None
    return re.sub(r"\s+", "", text.text)


def _parameter(p: Parameter) -> dict[str, object]:
    return {"assume": p.assume}


def _function(f: FreeFunction) -> dict[str, object]:
    return {"of": list(f.of), "assume": f.assume}


def _metric(entry: Entry) -> dict[str, object]:
    if entry.line_element is not None:
        return {"line_element": _math(entry.line_element)}
    order = {name: k for k, name in enumerate(entry.coordinates)}
    components: dict[str, str | None] = {}
    for (a, b), value in entry.components:
        first, second = sorted((a, b), key=lambda name: (order.get(name, len(order)), name))
        components[f"{first} {second}"] = _math(value)
    return {"components": components}


def _matter(matter: Matter) -> dict[str, object]:
    """Every field of ``Matter`` except its position, so new matter fields are hashed too."""
    out: dict[str, object] = {}
    for name, value in vars(matter).items():
        if name == "pos" or value is None or value == ():
            continue
        out[name] = _plain(value)
    return out


def _claims(claims: Claims) -> dict[str, object]:
    """Claimed values only; where a value was taken from (source, locator) is provenance."""
    out: dict[str, object] = {c.name: _math(c.value) for c in claims.scalars}
    out.update({c.name: _math(c.value) for c in claims.physical})
    if claims.petrov_type is not None:
        out["petrov_type"] = claims.petrov_type
    if claims.hawking_ellis_type is not None:
        out["hawking_ellis_type"] = claims.hawking_ellis_type
    if claims.energy_conditions:
        out["energy_conditions"] = dict(claims.energy_conditions)
    if claims.killing_vectors:
        out["killing_vectors"] = [_plain(v.components) for v in claims.killing_vectors]
    if claims.killing_tensors:
        out["killing_tensors"] = [{" ".join(k): _math(v) for k, v in t.components}
                                  for t in claims.killing_tensors]
    for name in ("conformal_killing_vectors", "homotheties"):
        items = getattr(claims, name)
        if items:
            out[name] = [{"vector": _plain(c.vector), "factor": _math(c.factor)} for c in items]
    return out


def _plain(value: object) -> object:
    """MathText -> normalised text; tuples of (name, value) pairs -> dicts; else as is."""
    if isinstance(value, MathText):
        return _math(value)
    if isinstance(value, tuple):
        if all(isinstance(v, tuple) and len(v) == 2 and isinstance(v[0], str) for v in value):
            return {k: _plain(v) for k, v in value}
        return [_plain(v) for v in value]
    return value
