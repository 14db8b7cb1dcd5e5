"""Stage 1: load and validate one catalog entry.

Reads the YAML safely (`yamlcheck`), builds the typed `Entry`, then builds the `Spacetime` —
the entry's mathematics in SymPy — through the whitelisted parser. Every problem becomes a
positioned diagnostic; nothing here raises for bad input.
"""

from __future__ import annotations

import keyword
import re
from collections.abc import Iterable
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import sympy
from sympy.core.function import AppliedUndef

from generator.entry import schema
from generator.entry.mathparse import SymbolTable, parse_expression, parse_inequality, valid_name
from generator.entry.prose import check_prose
from generator.entry.safefile import read_catalog_file
from generator.entry.yamlcheck import MAX_FILE_BYTES, validate
from generator.errors import Diagnostic, MathSyntaxError, SourcePos
from generator.model import (
    Claim,
    Claims,
    ConformalClaim,
    Curation,
    Entry,
    FreeFunction,
    MathText,
    Matter,
    Parameter,
    Reference,
    RelatedChart,
    Spacetime,
    TensorClaim,
    VectorClaim,
)

CATALOG_SIGNATURE = "-"  # the catalog writes Lorentzian metrics with one minus sign ("-+++")


@dataclass(frozen=True)
class LoadResult:
    """An entry as loaded: either part may be None when errors stopped it."""

    file: str
    entry: Entry | None
    spacetime: Spacetime | None
    diagnostics: tuple[Diagnostic, ...] = field(default=())

    @property
    def ok(self) -> bool:
        return not any(d.severity == "error" for d in self.diagnostics)


@dataclass(frozen=True)
class Vocabulary:
    """Catalog-wide names an entry may refer to (tags, families); empty means unchecked."""

    tags: frozenset[str] = frozenset()
    families: frozenset[str] = frozenset()


def load_entry(path: Path, display: str | None = None, vocabulary: Vocabulary | None = None,
               with_math: bool = True) -> LoadResult:
    """Load one entry file; ``display`` is the path shown in diagnostics.

    ``with_math=False`` stops after the entry's structure (no metric is built): enough for
    cross-references between entries (``catalog.outline_all`` uses it for a file its quick
    reading finds unusual, so that the loader's diagnostics speak).
    """
    file = display or str(path)
    source, problem = _read_source(path, file)
    if problem is not None:
        return LoadResult(file, None, None, (problem,))
    return load_text(source, file, path, vocabulary or Vocabulary(), with_math)


def load_text(source: str, file: str, path: Path, vocabulary: Vocabulary,
              with_math: bool = True) -> LoadResult:
    validated = validate(file, source, schema.ENTRY)
    diagnostics = list(validated.diagnostics) + find_todos(file, source)
    if any(d.severity == "error" for d in diagnostics) and not validated.data:
        return LoadResult(file, None, None, tuple(diagnostics))
    data = validated.data
    if not _has_required(data):
        return LoadResult(file, None, None, tuple(diagnostics))
    entry = _build_entry(data, file, path, validated.positions, source)
    diagnostics += _without_follow_ons(_check_entry(entry, path, vocabulary), diagnostics)
    if not with_math or any(d.severity == "error" and d.code != TODO_CODE
                            for d in diagnostics):
        return LoadResult(file, entry, None, tuple(diagnostics))
    spacetime, math_problems = build_spacetime(entry)
    diagnostics += math_problems
    if spacetime is not None:
        diagnostics += check_prose(entry, spacetime)
    return LoadResult(file, entry, spacetime, tuple(diagnostics))


def _without_follow_ons(found: Iterable[Diagnostic], earlier: list[Diagnostic]
                        ) -> list[Diagnostic]:
    """Drop a signature-length error when a coordinate was already refused (a 'θ' is left
    out of the coordinates, so the signature seems one sign too long: a false error)."""
    refused_coordinate = any(d.message.startswith("'coordinates.") for d in earlier)
    return [d for d in found
            if not (refused_coordinate and d.code == "entry.signature" and "signs but" in
                    d.message)]


TODO_CODE = "entry.todo"
_TODO = re.compile(r"\bTODO\b[\s:—-]*(?P<what>[^\"'\n\]]*)")


def find_todos(file: str, source: str) -> list[Diagnostic]:
    """One error per TODO marker, at the marker's line and column.

    ``new`` writes TODO markers for what a contributor has not said yet; an entry with one
    left is refused, so a half-filled scaffold never passes ``check``.
    """
    out = []
    for number, line in enumerate(source.splitlines(), start=1):
        for match in _TODO.finditer(line):
            what = match["what"].strip().rstrip(".,;") or "a placeholder"
            out.append(
                Diagnostic(
                    file,
                    number,
                    match.start() + 1,
                    "error",
                    f"still to fill in: {what}",
                    TODO_CODE,
                    "replace the placeholder with the real value and delete the TODO marker",
                )
            )
    return out


def _read_source(path: Path, file: str) -> tuple[str, Diagnostic | None]:
    """The entry's text: never through a symbolic link, at most MAX_FILE_BYTES (`safefile`)."""
    return read_catalog_file(path, file, MAX_FILE_BYTES)


def _has_required(data: dict[str, Any]) -> bool:
    return all(f.name in data for f in schema.ENTRY.fields if f.required)


# ---------------------------------------------------------------------------- typed entry


def _build_entry(data: dict[str, Any], file: str, path: Path,
                 positions: dict[str, SourcePos], source: str) -> Entry:
    def pos(key: str) -> SourcePos:
        return positions.get(key, SourcePos(file, 1, 1))

    metric = data.get("metric", {})
    return Entry(
        id=data["id"],
        file=file,
        family=path.parent.name,
        title=data["title"],
        chart=data["chart"],
        summary=data["summary"],
        notes=data.get("notes", ""),
        tags=tuple(data.get("tags", ())),
        coordinates=tuple(data["coordinates"]),
        signature=data["signature"],
        parameters=tuple(
            Parameter(name, spec["assume"], spec["meaning"], pos(f"parameters.{name}"))
            for name, spec in data.get("parameters", {}).items()
            if "assume" in spec and "meaning" in spec
        ),
        functions=tuple(
            FreeFunction(name, tuple(spec["of"]), spec.get("assume"), spec["meaning"],
                         pos(f"functions.{name}"))
            for name, spec in data.get("functions", {}).items()
            if "of" in spec and "meaning" in spec
        ),
        domain=tuple(data.get("domain", ())),
        line_element=metric.get("line_element"),
        components=tuple(
            (tuple(key.split()), value) for key, value in metric.get("components", {}).items()
        ),
        matter=_build_matter(data.get("matter", {}), pos("matter")),
        claims=_build_claims(data.get("claims", {}), pos),
        references=tuple(
            _build_reference(ref, pos(f"references.{i}"))
            for i, ref in enumerate(data.get("references", ()))
            if {"role", "authors", "title", "venue", "year"} <= ref.keys()
        ),
        curation=Curation(data["curation"].get("added", ""), data["curation"].get("by", "")),
        related=tuple(
            RelatedChart(item["entry"], tuple(item.get("map", {}).items()),
                         pos(f"related.{i}"), item.get("kind", "chart"),
                         tuple(item.get("limit", {}).items()))
            for i, item in enumerate(data.get("related", ()))
            if "entry" in item
        ),
        abbreviations=tuple(data.get("abbreviations", {}).items()),
        periods=tuple(data.get("periods", {}).items()),
        positions=_condition_positions(positions),
        source_text=source,
    )


def _build_matter(data: dict[str, Any], pos: SourcePos) -> Matter:
    return Matter(
        kind=data.get("kind", "unspecified"),
        cosmological_constant=data.get("cosmological_constant"),
        potential=tuple(data.get("potential", {}).items()),
        density=data.get("density"),
        pressure=data.get("pressure"),
        velocity=tuple(data.get("velocity", {}).items()),
        null_direction=tuple(data.get("null_direction", {}).items()),
        principal_pressures=tuple(data.get("principal_pressures", {}).items()),
        pos=pos,
        scalar=data.get("scalar"),
        scalar_potential=data.get("scalar_potential"),
        lagrangian=data.get("lagrangian"),
        lagrangian_derivative=data.get("lagrangian_derivative"),
        coupling=data.get("coupling"),
    )


_CONDITION_NAMES = {key: name for name, key in schema.ENERGY_CONDITION_KEYS.items()}


def _energy_conditions(data: dict[str, str]) -> tuple[tuple[str, str], ...]:
    """(condition, state) pairs under the conditions' own names (null, weak, ...): the
    entry's keys carry a suffix only so that YAML reads them as strings."""
    return tuple(sorted((_CONDITION_NAMES.get(key, key), state) for key, state in data.items()))


def _condition_positions(positions: dict[str, SourcePos]) -> dict[str, SourcePos]:
    """Positions of ``claims.energy_conditions.null_condition`` also under ``...null``, the
    name the physics stage reports a disagreement at."""
    prefix = "claims.energy_conditions."
    extra = {f"{prefix}{name}": positions[f"{prefix}{key}"]
             for key, name in _CONDITION_NAMES.items() if f"{prefix}{key}" in positions}
    return {**positions, **extra}


def _build_claims(data: dict[str, Any], pos: Any) -> Claims:
    scalars = tuple(
        Claim(name, data[name]["value"], data[name].get("source"), data[name].get("locator"),
              pos(f"claims.{name}"))
        for name in schema.SCALAR_CLAIMS
        if name in data and "value" in data[name]
    )
    physical = tuple(
        Claim(name, data[name]["value"], data[name].get("source"), data[name].get("locator"),
              pos(f"claims.{name}"))
        for name in schema.PHYSICAL_CLAIMS
        if name in data and "value" in data[name]
    )
    petrov = data.get("petrov_type", {})
    hawking_ellis = data.get("hawking_ellis_type", {})
    return Claims(
        scalars=scalars,
        petrov_type=petrov.get("value"),
        petrov_pos=pos("claims.petrov_type") if petrov else None,
        hawking_ellis_type=hawking_ellis.get("value"),
        energy_conditions=_energy_conditions(data.get("energy_conditions", {})),
        killing_vectors=tuple(
            VectorClaim(tuple(vector.items()), pos(f"claims.killing_vectors.{i}"))
            for i, vector in enumerate(data.get("killing_vectors", ()))
        ),
        pos=pos("claims"),
        label_sources=_label_sources(data),
        physical=physical,
        killing_tensors=tuple(
            TensorClaim(item.get("name"),
                        tuple((tuple(key.split()), value)
                              for key, value in item.get("components", {}).items()),
                        pos(f"claims.killing_tensors.{i}"))
            for i, item in enumerate(data.get("killing_tensors", ()))
        ),
        conformal_killing_vectors=_conformal(data, "conformal_killing_vectors", pos),
        homotheties=_conformal(data, "homotheties", pos),
    )


def _conformal(data: dict[str, Any], key: str, pos: Any) -> tuple[ConformalClaim, ...]:
    return tuple(
        ConformalClaim(tuple(item.get("vector", {}).items()), item["factor"],
                       pos(f"claims.{key}.{i}"))
        for i, item in enumerate(data.get(key, ())) if "factor" in item
    )


def _label_sources(data: dict[str, Any]) -> tuple[tuple[str, str | None, str | None], ...]:
    out = []
    for name in ("petrov_type", "hawking_ellis_type"):
        if name in data:
            out.append((name, data[name].get("source"), data[name].get("locator")))
    return tuple(out)


def _build_reference(data: dict[str, Any], pos: SourcePos) -> Reference:
    return Reference(
        role=data["role"],
        authors=tuple(data["authors"]),
        title=data["title"],
        venue=data["venue"],
        year=data["year"],
        doi=data.get("doi"),
        arxiv=data.get("arxiv"),
        isbn=data.get("isbn"),
        locator=data.get("locator"),
        unconfirmed=tuple(data.get("unconfirmed", ())),
        pos=pos,
        confirmed=data.get("confirmed"),
        key=data.get("key"),
    )


# ---------------------------------------------------------------------------- entry-level rules


def _check_entry(entry: Entry, path: Path, vocabulary: Vocabulary) -> list[Diagnostic]:
    checks = (_check_identity, _check_names, _check_signature_shape, _check_metric_form,
              _check_references, _check_claim_sources, _check_vocabulary, _check_isbns)
    out: list[Diagnostic] = []
    for check in checks:
        out.extend(check(entry, path, vocabulary))
    return out


def _error(pos: SourcePos, message: str, code: str, hint: str = "") -> Diagnostic:
    return Diagnostic.at(pos, "error", message, code, hint)


def _check_identity(entry: Entry, path: Path, vocabulary: Vocabulary) -> Iterable[Diagnostic]:
    if entry.id != path.stem:
        yield _error(entry.pos("id"), f"id '{entry.id}' differs from the file name "
                     f"'{path.name}'", "entry.id-mismatch",
                     f"rename the file to {entry.id}.yaml or set id: {path.stem}")


def _reserved_hint(name: str) -> str:
    if keyword.iskeyword(name):
        return (f"'{name}' is a keyword the math grammar keeps out; call it e.g. '{name}_' or "
                f"'{name[:3]}' (the page can still show the Greek letter)")
    return "it is a reserved word of the math grammar (a function or constant)"


def _check_names(entry: Entry, path: Path, vocabulary: Vocabulary) -> Iterable[Diagnostic]:
    seen: dict[str, str] = {}
    declared = [(c, "coordinates", entry.pos("coordinates")) for c in entry.coordinates]
    declared += [(p.name, "parameters", p.pos) for p in entry.parameters]
    declared += [(f.name, "functions", f.pos) for f in entry.functions]
    for name, where, pos in declared:
        if not valid_name(name):
            yield _error(pos, f"'{name}' cannot be used as a name in {where}", "entry.name",
                         _reserved_hint(name))
        elif name in seen:
            yield _error(pos, f"'{name}' is declared twice (in {seen[name]} and {where})",
                         "entry.name", "give each coordinate, parameter and function its own name")
        elif name.startswith("d") and name[1:] in entry.coordinates:
            yield _error(pos, f"'{name}' clashes with the differential of '{name[1:]}'",
                         "entry.name", "rename it")
        seen.setdefault(name, where)
    for function in entry.functions:
        for argument in function.of:
            if argument not in entry.coordinates:
                yield _error(function.pos, f"function '{function.name}' depends on "
                             f"'{argument}', which is not a coordinate", "entry.name",
                             f"coordinates are: {', '.join(entry.coordinates)}")


def _check_signature_shape(entry: Entry, path: Path, vocabulary: Vocabulary
                           ) -> Iterable[Diagnostic]:
    if len(entry.signature) != len(entry.coordinates):
        yield _error(entry.pos("signature"), f"signature '{entry.signature}' has "
                     f"{len(entry.signature)} signs but there are {len(entry.coordinates)} "
                     "coordinates", "entry.signature", "write one sign per coordinate")


def _check_metric_form(entry: Entry, path: Path, vocabulary: Vocabulary) -> Iterable[Diagnostic]:
    has_line, has_components = entry.line_element is not None, bool(entry.components)
    if has_line == has_components:
        yield _error(entry.pos("metric"), "metric needs exactly one of 'line_element' or "
                     "'components'", "entry.metric", "remove one of them" if has_line
                     else "add line_element: -dt**2 + ...")
    seen: set[frozenset[str]] = set()
    for (a, b), text in entry.components:
        for name in (a, b):
            if name not in entry.coordinates:
                yield _error(text.pos, f"'{name}' in component '{a} {b}' is not a coordinate",
                             "entry.metric", f"coordinates are: {', '.join(entry.coordinates)}")
        pair = frozenset((a, b))
        if pair in seen:
            yield _error(text.pos, f"component '{a} {b}' is given twice (g is symmetric)",
                         "entry.metric", "give each unordered pair once")
        seen.add(pair)


def _check_references(entry: Entry, path: Path, vocabulary: Vocabulary) -> Iterable[Diagnostic]:
    originals = [r for r in entry.references if r.role == "original"]
    if not originals:
        yield _error(entry.pos("references"), "no reference with role 'original'",
                     "entry.reference", "cite the publication that first gave this solution")
    for ref in entry.references:
        if not (ref.doi or ref.arxiv or ref.isbn) and ref.role == "original" and ref.year > 1995:
            yield Diagnostic.at(ref.pos, "warning", "original reference has no doi, arxiv or "
                                "isbn", "entry.reference", "add an identifier readers can follow")


def _check_claim_sources(entry: Entry, path: Path, vocabulary: Vocabulary
                         ) -> Iterable[Diagnostic]:
    yield from _check_reference_keys(entry)
    # At the `source:` line itself (entry.pos falls back to the claim for the short form).
    sources = [(c.source, entry.pos(f"claims.{c.name}.source"))
               for c in (*entry.claims.scalars, *entry.claims.physical)]
    sources += [(s, entry.pos(f"claims.{n}.source")) for n, s, _ in entry.claims.label_sources]
    for source, pos in sources:
        if source is None or source == schema.COMPUTED_HERE:
            continue
        if entry.cited_reference(source) is not None:
            continue
        sharing = [r for r in entry.references if r.role == source]
        if sharing:
            works = "; ".join(f"{', '.join(r.authors)} {r.year}" for r in sharing)
            yield _error(pos, f"claim source '{source}' names {len(sharing)} references "
                         f"({works})", "entry.claim-source",
                         "give the reference that prints this value a `key:` and name that "
                         "key here, so the value is credited to that work alone")
        else:
            yield _error(pos, f"claim source '{source}' is not the key or role of any "
                         "reference", "entry.claim-source",
                         f"use one of: {', '.join(_nameable_sources(entry))}")


def _nameable_sources(entry: Entry) -> list[str]:
    """What a claim's ``source`` may say in this entry: keys, roles no two references share,
    and computed-here."""
    roles = [r.role for r in entry.references]
    names = {r.key for r in entry.references if r.key}
    names |= {role for role in roles if roles.count(role) == 1}
    return sorted(names | {schema.COMPUTED_HERE})


def _check_reference_keys(entry: Entry) -> Iterable[Diagnostic]:
    """A key names one work: it may not repeat, nor read as a role or computed-here, which
    would make a claim's source mean two things."""
    seen: set[str] = set()
    reserved = {*schema.REFERENCE_ROLES, schema.COMPUTED_HERE}
    for i, ref in enumerate(entry.references):
        if ref.key is None:
            continue
        pos = entry.pos(f"references.{i}.key")
        if ref.key in reserved:
            yield _error(pos, f"reference key '{ref.key}' is also a role name",
                         "entry.reference", "choose a key such as the first author and year, "
                         "e.g. kerr-1963")
        elif ref.key in seen:
            yield _error(pos, f"reference key '{ref.key}' is given to two references",
                         "entry.reference", "give each reference its own key")
        seen.add(ref.key)


def _check_vocabulary(entry: Entry, path: Path, vocabulary: Vocabulary) -> Iterable[Diagnostic]:
    if vocabulary.tags:
        for i, tag in enumerate(entry.tags):
            if tag not in vocabulary.tags:
                yield _error(entry.pos(f"tags.{i}"), f"unknown tag '{tag}'", "entry.tag",
                             "use a tag from catalog/tags.yaml, or add it there with its "
                             "meaning")
    if vocabulary.families and entry.family not in vocabulary.families:
        yield _error(SourcePos(entry.file, 1, 1), f"folder '{entry.family}' is not a family "
                     "of the catalog", "entry.family",
                     f"move the file into one of: {', '.join(sorted(vocabulary.families))}")


def _check_isbns(entry: Entry, path: Path, vocabulary: Vocabulary) -> Iterable[Diagnostic]:
    for i, ref in enumerate(entry.references):
        if ref.isbn and not isbn_checksum_ok(ref.isbn):
            yield _error(entry.pos(f"references.{i}.isbn"), f"ISBN '{ref.isbn}' fails its "
                         "checksum", "entry.format", "copy the ISBN again from the book")


def isbn_checksum_ok(isbn: str) -> bool:
    """ISBN-10 / ISBN-13 check digit (common practice: ISO 2108)."""
    digits = [c for c in isbn if c.isdigit() or c == "X"]
    if len(digits) == 10:
        values = [10 if c == "X" else int(c) for c in digits]
        return sum((10 - i) * v for i, v in enumerate(values)) % 11 == 0
    if len(digits) == 13 and "X" not in digits:
        total = sum((1 if i % 2 == 0 else 3) * int(c) for i, c in enumerate(digits))
        return total % 10 == 0
    return False


# ---------------------------------------------------------------------------- mathematics

_ASSUMPTIONS = {
    "positive": {"positive": True},
    "negative": {"negative": True},
    "nonnegative": {"nonnegative": True},
    "nonpositive": {"nonpositive": True},
    "nonzero": {"nonzero": True, "real": True},
    "real": {"real": True},
}


def symbol_table(entry: Entry) -> tuple[SymbolTable, dict[str, sympy.Basic]]:
    """Symbols of an entry: coordinates are real, parameters carry their assumptions."""
    symbols: dict[str, sympy.Symbol] = {c: sympy.Symbol(c, real=True) for c in entry.coordinates}
    for p in entry.parameters:
        symbols[p.name] = sympy.Symbol(p.name, **_ASSUMPTIONS[p.assume])
    functions = {}
    for f in entry.functions:
        head = sympy.Function(f.name, **_ASSUMPTIONS.get(f.assume or "real", {"real": True}))
        functions[f.name] = (head, tuple(symbols[a] for a in f.of))
    differentials = {f"d{c}": sympy.Dummy(f"d{c}") for c in entry.coordinates}
    flat: dict[str, sympy.Basic] = dict(symbols)
    flat.update({name: head(*args) for name, (head, args) in functions.items()})
    return SymbolTable(symbols, functions, differentials), flat


def parse_at(math: MathText, table: SymbolTable, relation: bool = False
             ) -> tuple[sympy.Basic | None, Diagnostic | None]:
    """Parse one math string, turning a syntax error into a diagnostic at the exact character."""
    try:
        parser = parse_inequality if relation else parse_expression
        return parser(math.text, table), None
    except MathSyntaxError as exc:
        return None, Diagnostic.at(math.pos_at(exc.offset), "error", exc.message, "math.syntax",
                                   exc.hint)
    except (RecursionError, MemoryError, OverflowError, ValueError, TypeError) as exc:
        return None, Diagnostic.at(math.pos, "error", f"cannot build this expression: "
                                   f"{type(exc).__name__}", "math.limit",
                                   "simplify the expression by hand")


def build_spacetime(entry: Entry) -> tuple[Spacetime | None, list[Diagnostic]]:
    table, flat = symbol_table(entry)
    diagnostics: list[Diagnostic] = []
    if entry.line_element is not None:
        metric = _metric_from_line_element(entry, table, diagnostics)
    else:
        metric = _metric_from_components(entry, table, diagnostics)
    domain = []
    no_differentials = SymbolTable(table.symbols, table.functions, {})
    for text in entry.domain:
        relation, problem = parse_at(text, no_differentials, relation=True)
        if problem:
            diagnostics.append(problem)
        elif relation is not None:
            domain.extend(relation.args if isinstance(relation, sympy.And) else [relation])
    periods = _periods(entry, no_differentials, diagnostics)
    if metric is None or diagnostics:
        return None, diagnostics
    sign = -1 if _is_flipped(entry.signature) else 1
    spacetime = Spacetime(
        coordinates=tuple(table.symbols[c] for c in entry.coordinates),
        parameters=tuple(table.symbols[p.name] for p in entry.parameters),
        functions=tuple(flat[f.name] for f in entry.functions),
        metric=sympy.ImmutableMatrix(metric * sign),
        signature=entry.signature,
        sign=sign,
        domain=tuple(domain),
        symbols=flat,
        periods=periods,
    )
    return spacetime, diagnostics


def _periods(entry: Entry, table: SymbolTable, diagnostics: list[Diagnostic]
             ) -> tuple[tuple[sympy.Symbol, sympy.Expr], ...]:
    """The declared periods, each of a coordinate and free of every coordinate (a period
    that changed from point to point would be no identification)."""
    found = []
    coordinates = {table.symbols[c] for c in entry.coordinates}
    for name, text in entry.periods:
        pos = entry.pos(f"periods.{name}")
        if name not in entry.coordinates:
            diagnostics.append(Diagnostic.at(pos, "error", f"'{name}' is not a coordinate of "
                                             "this entry", "periods.coordinate",
                                             "name one of the coordinates: "
                                             + ", ".join(entry.coordinates)))
            continue
        value, problem = parse_at(text, table)
        if problem is not None or value is None:
            diagnostics += [problem] if problem else []
            continue
        if value.free_symbols & coordinates or value.atoms(AppliedUndef):
            diagnostics.append(Diagnostic.at(pos, "error", f"the period of {name} depends on "
                                             "the coordinates or a free function",
                                             "periods.value", "give a constant: an "
                                             "expression in the parameters"))
            continue
        if value.is_number and not value.is_positive:
            diagnostics.append(Diagnostic.at(pos, "error", f"the period of {name} is not "
                                             "positive", "periods.value",
                                             "give a positive period"))
            continue
        found.append((table.symbols[name], value))
    return tuple(found)


def _is_flipped(signature: str) -> bool:
    """A Lorentzian "+---" signature is turned into the catalog's "-+++" convention."""
    minus = signature.count("-")
    return len(signature) > 2 and minus == len(signature) - 1 and signature.count("+") == 1


def _metric_from_components(entry: Entry, table: SymbolTable, diagnostics: list[Diagnostic]
                            ) -> sympy.Matrix | None:
    n = len(entry.coordinates)
    metric = sympy.zeros(n, n)
    index = {c: i for i, c in enumerate(entry.coordinates)}
    plain = SymbolTable(table.symbols, table.functions, {})
    for (a, b), text in entry.components:
        value, problem = parse_at(text, plain)
        if problem:
            diagnostics.append(problem)
            continue
        i, j = index[a], index[b]
        metric[i, j] = metric[j, i] = value
    return None if diagnostics else metric


def _metric_from_line_element(entry: Entry, table: SymbolTable, diagnostics: list[Diagnostic]
                              ) -> sympy.Matrix | None:
    text = entry.line_element
    assert text is not None
    form, problem = parse_at(text, table)
    if problem:
        diagnostics.append(problem)
        return None
    differentials = [table.differentials[f"d{c}"] for c in entry.coordinates]
    hessian, reason = _quadratic_form_hessian(form, differentials)
    if reason:
        diagnostics.append(_error(text.pos, f"line_element is not a quadratic form in the "
                                  f"differentials: {reason}", "metric.line-element",
                                  "write ds² as a sum of terms like f*dr**2 or 2*g*dt*dphi"))
        return None
    n = len(differentials)
    metric = sympy.zeros(n, n)
    for (i, j), value in hessian.items():
        metric[i, j] = metric[j, i] = value / 2
    return metric


def _quadratic_form_hessian(form: sympy.Expr, differentials: list[sympy.Symbol]
                            ) -> tuple[dict[tuple[int, int], sympy.Expr], str]:
    """The second derivatives of ``form`` in the differentials (i <= j), or why ``form`` is not
    homogeneous of degree two in them.

    The form is read as a polynomial in the differentials by walking its tree once (sums
    merge, products multiply, integer powers repeat), with the coefficients left as they are:
    no derivative is taken and nothing is expanded except the parts that must vanish. A
    differential inside a function, a root or a denominator is refused.
    """
    index = {d: i for i, d in enumerate(differentials)}
    try:
        terms = _in_differentials(form, index)
    except _NotQuadratic as exc:
        return {}, str(exc)
    hessian: dict[tuple[int, int], sympy.Expr] = {}
    for monomial, coefficient in sorted(terms.items()):
        if len(monomial) == 2:
            i, j = monomial
            hessian[i, j] = 2 * coefficient if i == j else coefficient
        elif sympy.expand(coefficient) != 0:
            return {}, ("it has a term without differentials" if not monomial else
                        f"it has a term linear in {differentials[monomial[0]].name}")
    return hessian, ""


class _NotQuadratic(Exception):
    """Why a line element is not a quadratic form in the differentials."""


Monomial = tuple[int, ...]  # sorted indices of the differentials in a term


def _in_differentials(expr: sympy.Expr, index: dict[sympy.Symbol, int]
                      ) -> dict[Monomial, sympy.Expr]:
    """``expr`` as {monomial in the differentials: coefficient}, degrees up to two."""
    if not expr.free_symbols & index.keys():
        return {(): expr}
    if expr in index:
        return {(index[expr],): sympy.Integer(1)}
    if isinstance(expr, sympy.Add):
        total: dict[Monomial, sympy.Expr] = {}
        for arg in expr.args:
            for monomial, coefficient in _in_differentials(arg, index).items():
                total[monomial] = total.get(monomial, 0) + coefficient
        return total
    if isinstance(expr, sympy.Mul):
        product: dict[Monomial, sympy.Expr] = {(): sympy.Integer(1)}
        for arg in expr.args:
            product = _times(product, _in_differentials(arg, index))
        return product
    if isinstance(expr, sympy.Pow) and expr.exp.is_Integer and expr.exp > 0:
        base, power = _in_differentials(expr.base, index), {(): sympy.Integer(1)}
        for _ in range(int(expr.exp)):
            power = _times(power, base)
        return power
    raise _NotQuadratic("a differential appears inside a function, a root or a denominator")


def _times(x: dict[Monomial, sympy.Expr], y: dict[Monomial, sympy.Expr]
           ) -> dict[Monomial, sympy.Expr]:
    product: dict[Monomial, sympy.Expr] = {}
    for mx, cx in x.items():
        for my, cy in y.items():
            monomial = tuple(sorted(mx + my))
            if len(monomial) > 2:
                raise _NotQuadratic("it has a term of degree three or more")
            product[monomial] = product.get(monomial, 0) + cx * cy
    return product
