"""The entry format, declared once.

Every key of a catalog entry is declared here with a one-line explanation. The loader validates
YAML against these declarations, `jsonschema_export` turns them into the JSON Schema that
editors use, and the contributor documentation lists them from the same place, so the three can
never disagree.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from typing import Literal

Kind = Literal[
    "text",  # a non-empty string
    "line",  # a non-empty one-line string
    "markdown",  # Markdown text (sanitised when rendered)
    "integer",
    "date",  # YYYY-MM-DD
    "math",  # a math string (or a bare number) in the whitelisted grammar
    "choice",  # one of `choices`
    "list",  # a sequence of `item`
    "record",  # a mapping with the fixed keys `fields`
    "dict",  # a mapping from free keys matching `key_pattern` to `item`
    "claim",  # a `math` value, or a record {value, source, locator}
    "label-claim",  # a `choice` value, or a record {value, source, locator}
]


@dataclass(frozen=True)
class Field:
    """One key of the entry format (or the shape of a list item / dict value)."""

    name: str
    doc: str
    kind: Kind
    required: bool = False
    pattern: str | None = None
    choices: tuple[str, ...] = ()
    fields: tuple[Field, ...] = ()
    item: Field | None = None
    key_pattern: str | None = None
    min_items: int = 0
    old_name: str | None = None  # the key's former name, still read (with a warning) for a release

    def field(self, name: str) -> Field | None:
        return next((f for f in self.fields if f.name == name), None)

    def renamed(self, old: str) -> Field | None:
        """The field that used to be called ``old`` (None if no field was)."""
        return next((f for f in self.fields if f.old_name == old), None)


ID_PATTERN = r"^[a-z0-9]+(-[a-z0-9]+)*$"
NAME_PATTERN = r"^[A-Za-z][A-Za-z0-9_]*$"
DOI_PATTERN = r"^10\.\d{4,9}/\S+$"
ARXIV_PATTERN = r"^(\d{4}\.\d{4,5}|[a-z][a-z-]*(\.[A-Z]{2})?/\d{7})(v\d+)?$"
ISBN_PATTERN = r"^(97[89][- ]?)?\d{1,5}[- ]?\d{1,7}[- ]?\d{1,7}[- ]?[\dX]$"
SIGNATURE_PATTERN = r"^[+-]{2,11}$"

ASSUMPTIONS = ("positive", "negative", "nonnegative", "nonpositive", "nonzero", "real")
MATTER_KINDS = (
    "vacuum",
    "lambda-vacuum",
    "electrovacuum",
    "perfect-fluid",
    "null-dust",
    "anisotropic-fluid",
    "scalar-field",
    "nonlinear-electrodynamics",
    "dilaton-maxwell",
    "unspecified",
)
PETROV_TYPES = ("I", "II", "III", "D", "N", "O")
HAWKING_ELLIS_TYPES = ("I", "II", "III", "IV")
CONDITION_STATES = ("holds", "violated", "undecided")
ENERGY_CONDITIONS = ("null", "weak", "strong", "dominant")
# Their keys in an entry. A bare `null:` key is YAML's null, not a string, for every standard
# YAML parser (and so for editors validating against the JSON Schema): keys are suffixed.
ENERGY_CONDITION_KEYS = {name: f"{name}_condition" for name in ENERGY_CONDITIONS}
REFERENCE_ROLES = ("original", "independent", "claims", "textbook", "review", "erratum")
REFERENCE_FIELDS = ("authors", "title", "venue", "year", "doi", "arxiv", "isbn", "locator")
SCALAR_CLAIMS = ("ricci_scalar", "kretschmann", "ricci_squared", "weyl_squared")
# Claims about physical data computed from the metric (generator.physics.physical). Horizon
# claims name the principal horizon: the event horizon, else the outermost cosmological one.
PHYSICAL_CLAIM_DOCS = (
    ("horizon_location", "Where the principal horizon is (the value of its coordinate)."),
    ("surface_gravity", "The principal horizon's surface gravity κ (κ ≥ 0)."),
    ("horizon_area", "The area of the principal horizon's cross-section t = const."),
    ("horizon_angular_velocity", "The principal horizon's angular velocity Ω_H."),
    ("photon_sphere", "Radius of the outermost circular null orbit (static, spherical)."),
    ("isco", "Radius of the innermost stable circular timelike orbit (static, spherical)."),
    ("komar_mass", "Komar mass at infinity, M = −(n−2)/(16π(n−3)) ∮ ∇^a ξ^b dS_ab, ξ = ∂_t."),
    ("komar_angular_momentum", "Komar angular momentum at infinity, J = (1/16π) ∮ ∇^a ψ^b dS_ab."),
    ("expansion", "Expansion θ of the observers (declared fluid velocity, else at rest)."),
    ("shear_squared", "σ_ab σ^ab of the observers (no factor ½)."),
    ("vorticity_squared", "ω_ab ω^ab of the observers (no factor ½)."),
    ("acceleration_squared", "a_a a^a of the observers."),
)
PHYSICAL_CLAIMS = tuple(name for name, _ in PHYSICAL_CLAIM_DOCS)
COMPUTED_HERE = "computed-here"
RELATED_KINDS = ("chart", "limit")


def _vector(name: str, doc: str) -> Field:
    return Field(
        name, doc, "dict", key_pattern=NAME_PATTERN, item=Field("component", "", "math")
    )


PAIR_PATTERN = r"^[A-Za-z][A-Za-z0-9_]* [A-Za-z][A-Za-z0-9_]*$"


def _conformal_list(name: str, doc: str) -> Field:
    return Field(
        name,
        doc,
        "list",
        item=Field(
            "conformal_vector",
            "A vector and its conformal factor.",
            "record",
            fields=(
                replace(_vector("vector", "Contravariant components ξ^a by coordinate."),
                        required=True),
                Field("factor", "The factor ψ in L_ξ g = 2ψ g.", "math", required=True),
            ),
        ),
    )


def _claim_record(value: Field) -> tuple[Field, ...]:
    return (
        value,
        Field(
            "source",
            "The reference this value was taken from: its key, or its role when no other "
            "reference has that role; or computed-here.",
            "line",
        ),
        Field("locator", "Where in that reference (equation, page).", "line"),
    )


def _scalar_claim(name: str, doc: str) -> Field:
    value = Field("value", "The claimed expression.", "math", required=True)
    return Field(name, doc, "claim", fields=_claim_record(value))


PARAMETER = Field(
    "parameter",
    "A constant of the solution.",
    "record",
    fields=(
        Field(
            "assume",
            "What is known about it; used to simplify and to pick sample points.",
            "choice",
            required=True,
            choices=ASSUMPTIONS,
        ),
        Field("meaning", "What it stands for physically.", "line", required=True),
    ),
)

FUNCTION = Field(
    "function",
    "A free function of some coordinates, written e.g. a(t) in math strings.",
    "record",
    fields=(
        Field(
            "of",
            "The coordinates it depends on.",
            "list",
            required=True,
            item=Field("coordinate", "", "line", pattern=NAME_PATTERN),
            min_items=1,
        ),
        Field("assume", "What is known about its values.", "choice", choices=ASSUMPTIONS),
        Field("meaning", "What it stands for physically.", "line", required=True),
    ),
)

METRIC = Field(
    "metric",
    "The metric: exactly one of line_element or components.",
    "record",
    required=True,
    fields=(
        Field(
            "line_element",
            "ds² as a quadratic form in the coordinate differentials (dt, dr, ...).",
            "math",
        ),
        Field(
            "components",
            "Lower-index components g_ab keyed 'a b' (coordinate names); each pair once.",
            "dict",
            key_pattern=r"^[A-Za-z][A-Za-z0-9_]* [A-Za-z][A-Za-z0-9_]*$",
            item=Field("component", "", "math"),
        ),
    ),
)

MATTER = Field(
    "matter",
    "What the entry claims supports the geometry; verified against the field equations.",
    "record",
    required=True,
    fields=(
        Field("kind", "The kind of source.", "choice", required=True, choices=MATTER_KINDS),
        Field("cosmological_constant", "Λ in G_ab + Λ g_ab = 8π T_ab.", "math"),
        _vector("potential", "Electrovacuum, nonlinear electrodynamics and dilaton–Maxwell: the "
                "potential A_a, "
                "lower index, by coordinate."),
        Field("density", "Fluids and null dust: the energy density.", "math"),
        Field("pressure", "Perfect fluid: the isotropic pressure.", "math"),
        _vector("velocity", "Perfect fluid: the four-velocity u^a, upper index, by coordinate."),
        _vector("null_direction", "Null dust: the null vector k^a, upper index, by coordinate."),
        _vector(
            "principal_pressures",
            "Anisotropic fluid: T^i_i by coordinate, for T^a_b diagonal in this chart.",
        ),
        Field("scalar", "Scalar field and dilaton–Maxwell: the field φ as a function of the "
              "coordinates.", "math"),
        Field("scalar_potential", "Scalar field: the potential V(φ) along the solution, as a "
              "function of the coordinates (omit for a massless field).", "math"),
        Field("lagrangian", "Nonlinear electrodynamics: the Lagrangian L(F), F = ¼ F_ab F^ab, "
              "along the solution, as a function of the coordinates.", "math"),
        Field("lagrangian_derivative", "Nonlinear electrodynamics: dL/dF along the solution, "
              "as a function of the coordinates.", "math"),
        Field("coupling", "Dilaton–Maxwell: the constant a of the coupling e^(−2aφ) F_ab F^ab.",
              "math"),
    ),
)

CLAIMS = Field(
    "claims",
    "Values stated in the literature; every one is verified.",
    "record",
    fields=(
        _scalar_claim("ricci_scalar", "The Ricci scalar R."),
        _scalar_claim("kretschmann", "The Kretschmann scalar R_abcd R^abcd."),
        _scalar_claim("ricci_squared", "The square of the Ricci tensor R_ab R^ab."),
        _scalar_claim("weyl_squared", "The square of the Weyl tensor C_abcd C^abcd."),
        *(_scalar_claim(name, doc) for name, doc in PHYSICAL_CLAIM_DOCS),
        Field(
            "petrov_type",
            "The Petrov type (4D Lorentzian only).",
            "label-claim",
            choices=PETROV_TYPES,
            fields=_claim_record(
                Field("value", "The claimed type.", "choice", required=True, choices=PETROV_TYPES)
            ),
        ),
        Field(
            "hawking_ellis_type",
            "The Hawking–Ellis (Segre) type of T^a_b (non-vacuum only).",
            "label-claim",
            choices=HAWKING_ELLIS_TYPES,
            fields=_claim_record(
                Field(
                    "value",
                    "The claimed type.",
                    "choice",
                    required=True,
                    choices=HAWKING_ELLIS_TYPES,
                )
            ),
        ),
        Field(
            "energy_conditions",
            "Each of null_condition, weak_condition, strong_condition, dominant_condition: "
            "holds, violated or undecided.",
            "record",
            fields=tuple(
                Field(key, f"The {name} energy condition.", "choice", choices=CONDITION_STATES,
                      old_name=name)
                for name, key in ENERGY_CONDITION_KEYS.items()
            ),
        ),
        Field(
            "killing_vectors",
            "Killing vectors, contravariant components by coordinate.",
            "list",
            item=_vector("vector", "A Killing vector."),
        ),
        Field(
            "killing_tensors",
            "Rank-2 Killing tensors K_ab (∇_(a K_bc) = 0), e.g. Carter's tensor.",
            "list",
            item=Field(
                "killing_tensor",
                "A symmetric Killing tensor.",
                "record",
                fields=(
                    Field("name", "What it is called, e.g. Carter's tensor.", "line"),
                    Field(
                        "components",
                        "Lower-index components K_ab keyed 'a b' (coordinate names); each pair "
                        "once; missing pairs are zero.",
                        "dict",
                        required=True,
                        key_pattern=PAIR_PATTERN,
                        item=Field("component", "", "math"),
                    ),
                ),
            ),
        ),
        _conformal_list("conformal_killing_vectors",
                        "Conformal Killing vectors ξ with L_ξ g = 2ψ g, ψ the stated factor."),
        _conformal_list("homotheties",
                        "Homothetic vectors: L_ξ g = 2c g with a constant factor c."),
    ),
)

REFERENCE = Field(
    "reference",
    "A publication.",
    "record",
    fields=(
        Field("role", "Why it is cited (independent: the same solution found independently).",
              "choice", required=True, choices=REFERENCE_ROLES),
        Field("key", "A short name, unique in the entry, by which a claim's source names "
              "exactly this work (needed when another reference has the same role).", "line",
              pattern=ID_PATTERN),
        Field(
            "authors",
            "Authors as printed.",
            "list",
            required=True,
            item=Field("author", "", "line"),
            min_items=1,
        ),
        Field("title", "Title of the work.", "line", required=True),
        Field("venue", "Journal with volume and page, or publisher.", "line", required=True),
        Field("year", "Year of publication.", "integer", required=True),
        Field("doi", "Digital Object Identifier, e.g. 10.1103/PhysRevLett.11.237.", "line",
              pattern=DOI_PATTERN),
        Field("arxiv", "arXiv identifier, e.g. gr-qc/0506126 or 1104.0001.", "line",
              pattern=ARXIV_PATTERN),
        Field("isbn", "ISBN of a book.", "line", pattern=ISBN_PATTERN),
        Field("locator", "Where in the work (equation, section, page).", "line"),
        Field("confirmed", "Where the bibliographic fields were confirmed: the address of a public "
              "record of the work, or 'paper's own arXiv listing'.", "line"),
        Field(
            "unconfirmed",
            "Fields recalled but not confirmed against the publication; shown as such.",
            "list",
            item=Field("field", "", "choice", choices=REFERENCE_FIELDS),
        ),
    ),
)

ENTRY = Field(
    "entry",
    "One catalog entry: catalog/<family>/<id>.yaml.",
    "record",
    fields=(
        Field("id", "Stable identifier; equals the file stem; never reused.", "line",
              required=True, pattern=ID_PATTERN),
        Field("title", "Name of the spacetime.", "line", required=True),
        Field("chart", "Which coordinate chart this entry is written in.", "line", required=True),
        Field("summary", "One line saying what it is.", "line", required=True),
        Field("notes", "Physical interpretation, ranges, caveats (Markdown).", "markdown"),
        Field("tags", "Tags from catalog/tags.yaml.", "list", item=Field("tag", "", "line",
              pattern=ID_PATTERN)),
        Field("coordinates", "Coordinate names in index order.", "list", required=True,
              item=Field("coordinate", "", "line", pattern=NAME_PATTERN), min_items=2),
        Field("signature", 'Signature, e.g. "-+++"; checked at sample points.', "line",
              required=True, pattern=SIGNATURE_PATTERN),
        Field("parameters", "Constants of the solution.", "dict", key_pattern=NAME_PATTERN,
              item=PARAMETER),
        Field("functions", "Free functions of coordinates.", "dict", key_pattern=NAME_PATTERN,
              item=FUNCTION),
        Field("abbreviations", "Named shorthands for sub-expressions, e.g. `Sigma: r**2 + "
              "a**2*cos(theta)**2`; prose math may use them and pages typeset with them.",
              "dict", key_pattern=NAME_PATTERN, item=Field("definition", "", "math")),
        Field("domain", "Inequalities that pick the region where sample points are taken.",
              "list", item=Field("inequality", "", "math")),
        Field("periods", "Declared identifications: coordinate → its period (y ~ y + period, "
              "an expression in the parameters), e.g. `x: L` for a planar horizon made a "
              "torus; horizon areas and entropies are then totals over it instead of per "
              "unit coordinate range.", "dict", key_pattern=NAME_PATTERN,
              item=Field("period", "", "math")),
        METRIC,
        MATTER,
        CLAIMS,
        Field("references", "Publications; one with role 'original' is required.", "list",
              required=True, item=REFERENCE, min_items=1),
        Field(
            "curation",
            "Who added the entry and when.",
            "record",
            required=True,
            fields=(
                Field("added", "Date the entry was added (YYYY-MM-DD).", "date", required=True),
                Field("by", "Who added it.", "line", required=True),
            ),
        ),
        Field(
            "related",
            "Other entries for the same spacetime (charts, limits), with a verified map.",
            "list",
            item=Field(
                "related chart",
                "",
                "record",
                fields=(
                    Field("entry", "Id of the other entry.", "line", required=True,
                          pattern=ID_PATTERN),
                    _vector(
                        "map",
                        "This entry's coordinates as functions of the other entry's.",
                    ),
                    Field("kind", "chart (default): another chart of the same spacetime; "
                          "limit: the other entry is this metric in a limit of its "
                          "parameters.", "choice", choices=RELATED_KINDS),
                    Field("limit", "Kind limit: each parameter of this entry and the value it "
                          "tends to (e.g. a: 0); the map, if given, then applies.", "dict",
                          key_pattern=NAME_PATTERN, item=Field("value", "", "math")),
                ),
            ),
        ),
    ),
)


def walk(field: Field, prefix: str = "") -> list[tuple[str, Field]]:
    """All declared keys as (dotted path, field) pairs, for documentation and tests."""
    out: list[tuple[str, Field]] = []
    for child in field.fields:
        path = f"{prefix}{child.name}"
        out.append((path, child))
        if child.kind == "record":
            out.extend(walk(child, path + "."))
        elif child.item is not None and child.item.kind == "record":
            marker = "[]." if child.kind == "list" else ".<name>."
            out.extend(walk(child.item, path + marker))
    return out


def _kind_label(field: Field) -> str:
    if field.kind == "choice":
        return " \\| ".join(field.choices)
    if field.kind == "label-claim":
        return " \\| ".join(field.choices) + ", or {value, source, locator}"
    if field.kind == "claim":
        return "math, or {value, source, locator}"
    if field.kind == "dict" and field.item is not None:
        return f"mapping of name → {field.item.kind}"
    if field.kind == "list" and field.item is not None:
        return f"list of {field.item.kind}"
    return field.kind


def reference_markdown() -> str:
    """The table of every key for DEVELOPERS.md, generated from the declarations above."""
    rows = ["| key | required | value | meaning |", "|---|---|---|---|"]
    for path, field in walk(ENTRY):
        required = "yes" if field.required else ""
        rows.append(f"| `{path}` | {required} | {_kind_label(field)} | {field.doc} |")
    return "\n".join(rows) + "\n"


KEYS_START, KEYS_END = "<!-- keys:start -->", "<!-- keys:end -->"


def with_reference_table(guide: str) -> str:
    """DEVELOPERS.md with the generated key table placed between its markers."""
    head, _, rest = guide.partition(KEYS_START)
    _, _, tail = rest.partition(KEYS_END)
    return f"{head}{KEYS_START}\n{reference_markdown()}{KEYS_END}{tail}"
