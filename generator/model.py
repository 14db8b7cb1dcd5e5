"""Typed data passed between the pipeline stages.

load (``loader``) -> ``Entry`` + ``Spacetime``
compute (``geometry``) -> ``Geometry``
classify & verify (``classify``, ``verify``) -> ``Classification``, ``Verdict``s
render (``render``) <- ``EntryReport``

Everything here is a frozen dataclass holding plain values or SymPy objects, so results can be
pickled between processes and cached.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Literal

import sympy

from generator.errors import Diagnostic, SourcePos

# ---------------------------------------------------------------------------- entry (as written)


@dataclass(frozen=True)
class MathText:
    """A math string from the YAML file with the position of its first character.

    ``offsets`` maps each character of ``text`` to its (line, column) in the file, so a parse
    error at character k can be reported exactly even inside folded block scalars.
    """

    text: str
    pos: SourcePos
    offsets: tuple[tuple[int, int], ...] = ()

    def pos_at(self, offset: int) -> SourcePos:
        """Position of character ``offset`` of the string (clamped to the string)."""
        if not self.offsets:
            return SourcePos(self.pos.file, self.pos.line, self.pos.column + max(offset, 0))
        k = min(max(offset, 0), len(self.offsets) - 1)
        line, column = self.offsets[k]
        return SourcePos(self.pos.file, line, column)


@dataclass(frozen=True)
class Parameter:
    name: str
    assume: str  # positive | negative | nonnegative | nonzero | real | integer | ...
    meaning: str
    pos: SourcePos


@dataclass(frozen=True)
class FreeFunction:
    name: str
    of: tuple[str, ...]
    assume: str | None
    meaning: str
    pos: SourcePos


@dataclass(frozen=True)
class Claim:
    """One claimed scalar value, with where it was taken from."""

    name: str  # e.g. "kretschmann"
    value: MathText
    source: str | None  # a reference's key or unshared role, or "computed-here"
    locator: str | None
    pos: SourcePos


@dataclass(frozen=True)
class Matter:
    kind: str
    cosmological_constant: MathText | None = None
    potential: tuple[tuple[str, MathText], ...] = ()  # A_a, lower index, by coordinate name
    density: MathText | None = None
    pressure: MathText | None = None
    velocity: tuple[tuple[str, MathText], ...] = ()  # u^a, upper index
    null_direction: tuple[tuple[str, MathText], ...] = ()  # k^a, upper index
    pos: SourcePos | None = None
    principal_pressures: tuple[tuple[str, MathText], ...] = ()  # anisotropic fluid: T^i_i
    scalar: MathText | None = None  # scalar field φ
    scalar_potential: MathText | None = None  # V(φ) along the solution; None: massless
    lagrangian: MathText | None = None  # nonlinear electrodynamics: L(F) along the solution
    lagrangian_derivative: MathText | None = None  # dL/dF along the solution
    coupling: MathText | None = None  # dilaton–Maxwell: a in e^(−2aφ) F²


@dataclass(frozen=True)
class VectorClaim:
    """A claimed Killing vector, contravariant components by coordinate name."""

    components: tuple[tuple[str, MathText], ...]
    pos: SourcePos


@dataclass(frozen=True)
class TensorClaim:
    """A claimed rank-2 Killing tensor: lower-index components by coordinate-name pair."""

    name: str | None
    components: tuple[tuple[tuple[str, str], MathText], ...]
    pos: SourcePos


@dataclass(frozen=True)
class ConformalClaim:
    """A claimed conformal Killing vector (or homothety): L_ξ g = 2 factor g."""

    vector: tuple[tuple[str, MathText], ...]
    factor: MathText
    pos: SourcePos


@dataclass(frozen=True)
class Claims:
    scalars: tuple[Claim, ...] = ()  # ricci_scalar, kretschmann, ricci_squared, weyl_squared
    petrov_type: str | None = None
    petrov_pos: SourcePos | None = None
    hawking_ellis_type: str | None = None
    energy_conditions: tuple[tuple[str, str], ...] = ()  # (condition, holds|violated|undecided)
    killing_vectors: tuple[VectorClaim, ...] = ()
    pos: SourcePos | None = None
    # (claim name, source, locator) for petrov_type and hawking_ellis_type
    label_sources: tuple[tuple[str, str | None, str | None], ...] = ()
    physical: tuple[Claim, ...] = ()  # horizon, orbit and observer claims (schema.PHYSICAL_CLAIMS)
    killing_tensors: tuple[TensorClaim, ...] = ()
    conformal_killing_vectors: tuple[ConformalClaim, ...] = ()
    homotheties: tuple[ConformalClaim, ...] = ()


@dataclass(frozen=True)
class Reference:
    role: str  # original | claims | textbook | review | erratum
    authors: tuple[str, ...]
    title: str
    venue: str
    year: int
    doi: str | None
    arxiv: str | None
    isbn: str | None
    locator: str | None
    unconfirmed: tuple[str, ...]  # names of fields recalled but not confirmed
    pos: SourcePos
    confirmed: str | None = None  # where the fields were confirmed (a record's address)
    key: str | None = None  # the entry's own short name for this work, for claim sources


@dataclass(frozen=True)
class RelatedChart:
    entry: str
    map: tuple[tuple[str, MathText], ...]  # this entry's coordinates in the other's coordinates
    pos: SourcePos
    kind: str = "chart"  # chart: same spacetime | limit: the other entry is a limit of this one
    limit: tuple[tuple[str, MathText], ...] = ()  # parameter -> value it tends to (kind limit)


@dataclass(frozen=True)
class Curation:
    added: str  # ISO date
    by: str


@dataclass(frozen=True)
class Entry:
    """One catalog entry exactly as written (strings kept, with positions)."""

    id: str
    file: str  # path as given to the tool, used in diagnostics
    family: str  # name of the folder under catalog/
    title: str
    chart: str
    summary: str
    notes: str
    tags: tuple[str, ...]
    coordinates: tuple[str, ...]
    signature: str
    parameters: tuple[Parameter, ...]
    functions: tuple[FreeFunction, ...]
    domain: tuple[MathText, ...]
    line_element: MathText | None
    components: tuple[tuple[tuple[str, str], MathText], ...]
    matter: Matter
    claims: Claims
    references: tuple[Reference, ...]
    curation: Curation
    related: tuple[RelatedChart, ...]
    abbreviations: tuple[tuple[str, MathText], ...] = ()  # named shorthands (prose, typesetting)
    periods: tuple[tuple[str, MathText], ...] = ()  # declared identifications y ~ y + period
    positions: dict[str, SourcePos] = field(default_factory=dict, compare=False, hash=False)
    source_text: str = field(default="", compare=False, hash=False, repr=False)

    def published_source(self, subject: str) -> str | None:
        """The source (key or role) that prints the value claimed under ``subject`` (a verdict
        subject such as ``claims.kretschmann``), or None when the entry names no publication
        for it: ``computed-here``, the short form without a source, and structural facts."""
        name = subject.removeprefix("claims.")
        sources = {c.name: c.source for c in self.claims.scalars}
        sources.update({label: source for label, source, _ in self.claims.label_sources})
        sources.update({c.name: c.source for c in self.claims.physical})
        source = sources.get(name) if subject.startswith("claims.") else None
        return source if self.cited_reference(source) is not None else None

    def cited_reference(self, source: str | None) -> Reference | None:
        """The one reference a claim's ``source`` names: the reference with that key, else
        the only reference with that role. None for ``computed-here``, an unknown name, or a
        role that several references share (the loader refuses those), so that a value is
        never attributed to a work the entry did not single out."""
        if source is None:
            return None
        keyed = [r for r in self.references if r.key == source]
        if keyed:
            return keyed[0]
        by_role = [r for r in self.references if r.role == source]
        return by_role[0] if len(by_role) == 1 else None

    def pos(self, key: str) -> SourcePos:
        """Position of a dotted key path (e.g. ``claims.kretschmann``), else of the file start."""
        while key:
            if key in self.positions:
                return self.positions[key]
            key = key.rpartition(".")[0]
        return SourcePos(self.file, 1, 1)


# ---------------------------------------------------------------------------- mathematics


@dataclass(frozen=True)
class Spacetime:
    """The mathematics of an entry in SymPy, built by the loader from the whitelisted parser.

    ``metric`` is in the entry's declared signature. ``sign`` is +1 for "-+++"-type entries and
    -1 when the tool flipped a "+---" entry to the catalog convention (``metric`` is then
    already flipped and ``sign`` records it, so pages can say so).
    """

    coordinates: tuple[sympy.Symbol, ...]
    parameters: tuple[sympy.Symbol, ...]
    functions: tuple[sympy.Expr, ...]  # applied undefined functions, e.g. a(t), H(u, x, y)
    metric: sympy.ImmutableMatrix
    signature: str  # as declared
    sign: int
    domain: tuple[sympy.Basic, ...]  # relationals over coordinates and parameters
    symbols: dict[str, sympy.Basic] = field(compare=False, hash=False, default_factory=dict)
    # Declared identifications (coordinate, period in the parameters): a horizon
    # cross-section is integrated over them instead of being given per unit range.
    periods: tuple[tuple[sympy.Symbol, sympy.Expr], ...] = ()

    @property
    def dimension(self) -> int:
        return len(self.coordinates)

    @property
    def lorentzian(self) -> bool:
        return self.signature.count("-") in (1, len(self.signature) - 1) and len(
            self.signature
        ) > 1 and "+" in self.signature


Index = tuple[int, ...]


@dataclass(frozen=True)
class Geometry:
    """Curvature of a spacetime, every component in the engine's canonical form.

    Index conventions (catalog-wide): R^a_bcd = d_c G^a_db - d_d G^a_cb + ...; R_bd = R^a_bad.
    Dicts hold nonzero components only. ``riemann`` holds R_abcd (all indices down) for a<b,
    c<d, (a,b)<=(c,d); other components follow from the symmetries.
    """

    dimension: int
    metric: sympy.ImmutableMatrix
    inverse_metric: sympy.ImmutableMatrix
    christoffel: dict[Index, sympy.Expr]  # (a, b, c) -> Gamma^a_bc, b <= c
    riemann: dict[Index, sympy.Expr]  # (a, b, c, d) -> R_abcd, independent ones
    ricci: sympy.ImmutableMatrix  # R_ab
    ricci_scalar: sympy.Expr
    einstein: sympy.ImmutableMatrix  # G_ab
    einstein_mixed: sympy.ImmutableMatrix  # G^a_b
    weyl: dict[Index, sympy.Expr] | None  # C_abcd independent ones; None below 4 dimensions
    kretschmann: sympy.Expr
    ricci_squared: sympy.Expr
    weyl_squared: sympy.Expr | None  # None below 4 dimensions
    engine: str  # which path computed it: "rational-function" or "sympy"
    seconds: float = 0.0


# Which method decided: "exact" (normal forms), "by cases" (exact within each case of a sign
# split, signs proved on the domain), "sampled" (agreement at random points only), "failed".
Method = Literal["exact", "by cases", "sampled", "failed"]


@dataclass(frozen=True)
class Decision:
    """Outcome of an equality/zero test. ``equal`` None means it could not be decided."""

    equal: bool | None
    method: Method
    detail: str = ""
    witness: dict[str, str] | None = None  # a sample point where the two sides differ


VerdictStatus = Literal["agrees", "computed-only", "disagrees"]


@dataclass(frozen=True)
class Verdict:
    """Result of verifying one claim or one structural fact of an entry."""

    subject: str  # dotted key of the claim, e.g. "claims.kretschmann", "matter.kind"
    ok: bool
    method: Method
    detail: str
    claimed: str = ""
    computed: str = ""
    # Role of the entry's reference that prints the claimed value; None when no published value
    # is named (a ``computed-here`` or unsourced claim, or a structural check of the entry).
    source: str | None = None
    witness: dict[str, str] | None = None  # for a "different" verdict: where the sides differ

    @property
    def status(self) -> VerdictStatus:
        """Agreement with a cited publication is kept apart from the tool agreeing with itself:
        a value nobody published can only be "computed-only", never "agrees"."""
        if not self.ok:
            return "disagrees"
        return "agrees" if self.source else "computed-only"


def related_subject(index: int) -> str:
    """The verdict subject of an entry's ``related[index]`` map (check, page and atlas agree)."""
    return f"related.{index}"


EnergyStatus = Literal["holds", "violated", "undecided", "not-applicable"]


@dataclass(frozen=True)
class EnergyCondition:
    name: str  # null | weak | strong | dominant
    status: EnergyStatus
    how: str  # "proved symbolically", "witness at r=3, M=1", "sampled only", reason if n/a
    witness: dict[str, str] | None = None


@dataclass(frozen=True)
class Horizon:
    """One root of a factor of g^{xx}: a null surface x = const and its data (None: see
    ``reasons``). ``location`` is exact: a closed form, or the symbol h_root of
    ``polynomial`` (a polynomial in h_root) when no closed form is used."""

    coordinate: str
    location: sympy.Expr
    polynomial: sympy.Expr
    kind: str  # event | inner | cosmological | horizon | undetermined
    normal_killing_vector: tuple[tuple[str, sympy.Expr], ...] | None
    angular_velocity: sympy.Expr | None
    surface_gravity_squared: sympy.Expr | None
    surface_gravity: sympy.Expr | None
    temperature: sympy.Expr | None
    area: sympy.Expr | None
    how: str
    reasons: dict[str, str] = field(default_factory=dict)
    numeric_location: str = ""  # at the first sample parameters, for ordering and plots
    # "exact", or "numeric" when the area integral is not elementary: then ``area`` is None
    # and ``area_numeric`` holds the quadrature's value (``area_digits`` significant digits)
    # at the parameter values ``area_parameters`` (the entry's first sample point).
    area_method: str = ""
    area_numeric: str = ""
    area_digits: int = 0
    area_parameters: tuple[tuple[str, str], ...] = ()
    # Where the horizon's generator turns in more than one plane (∂_t + Σ_j Ω_j ∂_{φ_j},
    # e.g. two planes in five dimensions): (coordinate, Ω_j) for each; ``angular_velocity``
    # is then None. Empty with one plane or none.
    angular_velocities: tuple[tuple[str, sympy.Expr], ...] = ()
    # A cross-section not compact in cyclic directions with no declared range (a black
    # string's z, a planar horizon's x, y): ``area`` is None and ``area_per_unit`` is the
    # area per unit coordinate range of the directions ``area_per`` (also set for a numeric
    # area, whose ``area_numeric`` is then per unit range too).
    area_per_unit: sympy.Expr | None = None
    area_per: tuple[str, ...] = ()
    # Range ends of a cross-section coordinate fixed by the metric without closed form (the
    # C-metric's x between two roots of its structure function): (symbol in ``area``,
    # coordinate, defining polynomial in the symbol, numeric value at the first sample
    # parameters, "lower" | "upper").
    area_roots: tuple[tuple[str, str, sympy.Expr, str, str], ...] = ()
    # At an h_root horizon whose κ is long: the parameter eliminated with the root's
    # polynomial (linear in it, e.g. M), its value in h_root, and κ rewritten with it (equal
    # at the root, exactly); "" / None otherwise.
    in_root_parameter: str = ""
    in_root_value: sympy.Expr | None = None
    surface_gravity_in_root: sympy.Expr | None = None

    @property
    def entropy(self) -> sympy.Expr | None:
        return None if self.area is None else self.area / 4

    @property
    def entropy_per_unit(self) -> sympy.Expr | None:
        """S = A/4 per unit coordinate range of ``area_per`` (Bekenstein–Hawking density)."""
        return None if self.area_per_unit is None else self.area_per_unit / 4


@dataclass(frozen=True)
class Kinematics:
    """Expansion, shear, vorticity and acceleration of a unit timelike observer field u^a
    (σ_ab σ^ab and ω_ab ω^ab without a factor ½)."""

    observer: tuple[tuple[str, sympy.Expr], ...]
    source: str  # "matter.velocity" or how the natural observer was chosen
    expansion: sympy.Expr
    shear_squared: sympy.Expr
    vorticity_squared: sympy.Expr
    acceleration_squared: sympy.Expr
    hubble_rate: sympy.Expr | None = None
    deceleration: sympy.Expr | None = None


@dataclass(frozen=True)
class PhysicalData:
    """Horizons, orbits, charges and observers of an entry. None fields carry their reason
    in ``reasons`` (keys: horizons, ergosurface, photon_sphere, isco, komar_mass,
    komar_angular_momentum, kinematics)."""

    horizons: tuple[Horizon, ...]
    horizons_note: str
    extremality: tuple[str, ...]
    ergosurface: sympy.Expr | None
    photon_sphere: sympy.Expr | None
    isco: sympy.Expr | None
    komar_mass: sympy.Expr | None
    komar_angular_momentum: sympy.Expr | None
    kinematics: Kinematics | None
    reasons: dict[str, str] = field(default_factory=dict)
    # An orbit radius with no closed form ("photon_sphere", "isco" → the value is h_root):
    # (coordinate, defining polynomial in h_root, numeric value at the first sample point).
    orbit_roots: dict[str, tuple[str, sympy.Expr, str]] = field(default_factory=dict)
    # With several rotation planes (Myers–Perry): (coordinate, Komar J of ∂_coordinate) for
    # each; ``komar_angular_momentum`` is then None. Empty otherwise.
    komar_angular_momenta: tuple[tuple[str, sympy.Expr], ...] = ()


@dataclass(frozen=True)
class Classification:
    """Physics derived from the geometry. A None field carries its reason in ``reasons``."""

    matter_kind: str  # vacuum | lambda-vacuum | electrovacuum | perfect-fluid | null-dust | ...
    cosmological_constant: sympy.Expr | None
    stress_energy_mixed: sympy.ImmutableMatrix | None  # T^a_b = (G^a_b + Lambda d^a_b)/8pi
    hawking_ellis_type: str | None
    energy_density: sympy.Expr | None
    principal_pressures: tuple[sympy.Expr, ...] | None
    energy_conditions: tuple[EnergyCondition, ...]
    petrov_type: str | None
    weyl_scalars: dict[str, sympy.Expr] | None  # Psi0..Psi4 in the tool's tetrad
    killing_vectors_checked: tuple[Verdict, ...]
    related_checked: tuple[Verdict, ...]
    geodesic_equations: tuple[sympy.Expr, ...]  # d2x^a/ds2 + Gamma^a_bc dx^b dx^c = 0 left sides
    reasons: dict[str, str] = field(default_factory=dict)
    physical: PhysicalData | None = None  # horizons, orbits, charges, observers
    physical_checked: tuple[Verdict, ...] = ()  # verdicts of claims about physical data
    symmetry: SymmetryResult | None = None  # isometry algebra, Killing tensors, invariants


@dataclass(frozen=True)
class IsometryAlgebra:
    """The local isometry algebra as computed (``isometry``); None fields carry ``why_null``."""

    dimension: int | None
    orbit_dimension: int | None
    listed: int  # independent Killing vectors the entry lists
    basis: tuple[tuple[tuple[str, sympy.Expr], ...], ...]  # verified vectors, by coordinate
    complete: bool | None  # the basis spans the algebra (None: dimension unknown)
    method: str
    why_null: str | None
    structure: tuple[tuple[int, int, tuple[sympy.Expr, ...]], ...] = ()  # [X_i, X_j] = c^k X_k
    algebra_name: str | None = None
    algebra_structure: str | None = None  # what is known of the algebra, in words
    found: int = 0  # the last ``found`` vectors of ``basis`` were found by the tool's search
    search: str | None = None  # what the search for missing vectors did, in words


@dataclass(frozen=True)
class InvariantCount:
    """Functionally independent scalar invariants and Karlhede's relation."""

    count: int | None
    used: tuple[str, ...]  # which invariants entered the Jacobian
    relation: str  # the relation as checked, in words
    consistent: bool | None
    why_null: str | None = None


@dataclass(frozen=True)
class WeylFrame:
    """Ψ0..Ψ4 in a null tetrad built by the tool; ``principal`` when l (and n for type D)
    is a principal null direction, so that only the type's scalars survive."""

    name: str  # which tetrad, in words
    principal: bool
    tetrad: tuple[tuple[str, tuple[tuple[str, sympy.Expr], ...]], ...]  # l, n, m: ξ^a by name
    scalars: tuple[tuple[str, sympy.Expr], ...]  # ("Psi0", ...), ..., ("Psi4", ...)
    invariant_i: sympy.Expr | None
    invariant_j: sympy.Expr | None
    why: str = ""
    checks: tuple[str, ...] = ()  # what was verified exactly about the tetrad and scalars


@dataclass(frozen=True)
class SymmetryResult:
    isometry: IsometryAlgebra
    tensors_checked: tuple[Verdict, ...]  # Killing tensors, conformal vectors, homotheties
    invariants: InvariantCount
    weyl_frame: WeylFrame | None = None  # None: the reason is under reasons["weyl_frame"]


@dataclass(frozen=True)
class EntryReport:
    """Everything the tool knows about one entry after checking it: what the site renders."""

    entry: Entry | None
    file: str
    spacetime: Spacetime | None
    geometry: Geometry | None
    classification: Classification | None
    verdicts: tuple[Verdict, ...]
    diagnostics: tuple[Diagnostic, ...]
    content_hash: str = ""
    seconds: float = 0.0
    # Hash of everything the report was computed from (the pipeline's cache key): lets the
    # render stage keep what it made of the report. Empty when the report was made otherwise.
    inputs_key: str = ""
    # The metric with its symbols renamed by position (physics.twins.literal_key), made where
    # the report is made: a warm check compares every entry's key and should not redo them.
    literal_key: str = ""
    # Hash of what the entry's figures are drawn from (``run.cache.figures_key``): the inputs
    # without the title, which figures name only in their alt text. Lets a rebuild after a
    # retitling keep the plots. Empty when the report was made otherwise.
    figures_key: str = ""

    @property
    def ok(self) -> bool:
        return not any(d.severity == "error" for d in self.diagnostics)

    @property
    def agreements(self) -> int:
        """How many checked values agree with a cited publication: the value itself, or a stated
        property that fixes it (vacuum: R_ab = 0; conformally flat: Weyl tensor zero)."""
        return sum(v.status == "agrees" for v in self.verdicts)


# ---------------------------------------------------------------------------- catalog as a whole


@dataclass(frozen=True)
class Family:
    name: str  # folder name under catalog/
    title: str
    about: str


@dataclass(frozen=True)
class Tag:
    name: str
    meaning: str


@dataclass(frozen=True)
class Revision:
    """One commit that changed the mathematics of an entry (from git history)."""

    commit: str  # full git commit id
    date: str  # ISO date of the commit
    content_hash: str  # the entry's content hash at that commit
    summary: str  # one line: what changed
    source: str = ""  # the entry file's text at that commit (so a cited hash leads to it)


@dataclass(frozen=True)
class Publication:
    """How a catalog is published and cited: its own settings (``publication.yaml`` beside
    ``families.yaml``), never a built-in address, so that a research group publishing its
    own catalog with this tool never cites somebody else's site."""

    title: str = "Metric Almanac"
    authors: str = "Metric Almanac contributors"
    version: str | None = None  # else the project's version (see entry.publication)
    site_address: str | None = None  # public address of the built site, e.g. https://…/
    repository: str | None = None  # public address of the catalog's source repository


@dataclass(frozen=True)
class CatalogMeta:
    """Catalog-wide data the site needs besides the entries (loaded once per build)."""

    version: str  # catalog release version (= project version in pyproject.toml)
    generator_version: str
    sympy_version: str
    families: tuple[Family, ...]
    tags: tuple[Tag, ...]
    contributing_markdown: str  # DEVELOPERS.md, rendered as the contributing page
    publication: Publication
    revisions: dict[str, tuple[Revision, ...]] = field(default_factory=dict)
