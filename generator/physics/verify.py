"""Stage 3: verify an entry's claims against what the engine computed.

Takes a loaded entry, runs the geometry engine under the entry's budget, asks `classify` for the
physics, and turns every comparison into a `Verdict` (what was checked and how it was decided)
plus a positioned diagnostic for each failure. A claim passes only when equality was decided;
"could not decide" is a failure too, because the catalog publishes nothing it has not verified.
"""

from __future__ import annotations

import time
from collections.abc import Mapping, Sequence
from dataclasses import replace
from fractions import Fraction

import mpmath
import sympy

from generator.entry.loader import TODO_CODE, LoadResult, parse_at, symbol_table
from generator.errors import BudgetExceeded, Diagnostic
from generator.geometry.curvature import (
    DegenerateMetric,
    Limits,
    compute_geometry_and_weyl,
)
from generator.geometry.equality import decide_equal
from generator.geometry.sampling import angle_coordinates, entry_points, through_sin_cos
from generator.model import Classification, Entry, EntryReport, Geometry, Spacetime, Verdict
from generator.physics import classify as classify_stage

SIGNATURE_POINTS = 3

# How each scalar changes when a "+---" entry is flipped to "-+++": R flips, squares do not.
_FLIP_POWER = {"ricci_scalar": 1, "kretschmann": 0, "ricci_squared": 0, "weyl_squared": 0}


def check_loaded(
    load: LoadResult,
    related: Mapping[str, LoadResult],
    limits: Limits | None = None,
) -> EntryReport:
    """Run geometry, classification and claim checks for one loaded entry."""
    started = time.perf_counter()
    entry, spacetime = load.entry, load.spacetime
    diagnostics = list(load.diagnostics)
    if entry is None or spacetime is None or not _computable(load):
        return EntryReport(entry, load.file, spacetime, None, None, (), tuple(diagnostics),
                           _hash(entry))
    signature_problems = check_signature(entry, spacetime)
    diagnostics += signature_problems
    if any(d.severity == "error" for d in signature_problems):
        return EntryReport(entry, load.file, spacetime, None, None, (), tuple(diagnostics),
                           _hash(entry))
    try:
        geometry, weyl_operator = compute_geometry_and_weyl(spacetime, limits)
    except (BudgetExceeded, DegenerateMetric) as exc:
        diagnostics.append(_budget_diagnostic(entry, exc) if isinstance(exc, BudgetExceeded)
                           else Diagnostic.at(entry.pos("metric"), "error",
                                              "the metric has no inverse (det g = 0)",
                                              "metric.degenerate",
                                              "check for a missing or duplicated component"))
        return EntryReport(entry, load.file, spacetime, None, None, (), tuple(diagnostics),
                           _hash(entry), time.perf_counter() - started)
    verdicts, claim_problems = check_scalar_claims(entry, spacetime, geometry)
    diagnostics += claim_problems
    classification = None
    try:
        classification, problems = classify_stage.classify(
            entry, spacetime, geometry, _related_pairs(entry, related), weyl_operator)
        diagnostics += problems
        verdicts += label_verdicts(entry, classification, problems)
    except BudgetExceeded as exc:
        diagnostics.append(_budget_diagnostic(entry, exc))
    if classification is not None and not compared_anything(verdicts):
        diagnostics.append(_nothing_claimed(entry))
    return EntryReport(entry, load.file, spacetime, geometry, classification,
                       with_published_sources(entry, verdicts), tuple(diagnostics), _hash(entry),
                       time.perf_counter() - started)


def with_published_sources(entry: Entry, verdicts: Sequence[Verdict]) -> tuple[Verdict, ...]:
    """Each verdict with the reference that prints its claimed value (if the entry names one),
    so that "agrees with the literature" is decided in one place from the entry itself."""
    return tuple(replace(v, source=entry.published_source(v.subject)) for v in verdicts)


NOTHING_CLAIMED = "entry.nothing-claimed"


def compared_anything(verdicts: list[Verdict] | tuple[Verdict, ...]) -> bool:
    """Whether some claim was compared with the computation. A matter kind 'unspecified'
    compares nothing (every geometry satisfies it), so an entry with no claims, no related
    maps and unspecified matter has nothing to be verified against."""
    return any(not (v.subject == "matter.kind" and v.claimed == "unspecified")
               for v in verdicts)


def _nothing_claimed(entry: Entry) -> Diagnostic:
    return Diagnostic.at(entry.pos("claims"), "warning",
                         "nothing is claimed, so nothing was verified: the tool's values "
                         "are its own, compared with no source", NOTHING_CLAIMED,
                         "add claims from the references (DEVELOPERS.md, step 3), or the "
                         "matter that supports the geometry")


def entry_state(report: EntryReport) -> str:
    """'verified', 'nothing-claimed' (loads and computes, but no claim was compared) or
    'failed': an entry with nothing claimed is never counted as verified."""
    if not report.ok:
        return "failed"
    if any(d.code == NOTHING_CLAIMED for d in report.diagnostics):
        return "nothing-claimed"
    return "verified"


def _computable(load: LoadResult) -> bool:
    """Compute whenever the metric, coordinates and parameters are complete: TODO markers
    left in a scaffold (a title, a reference) are reported beside the computed values, so a
    contributor can read what the tool computes before writing any claim."""
    return all(d.code == TODO_CODE for d in load.diagnostics if d.severity == "error")


def _hash(entry: Entry | None) -> str:
    if entry is None:
        return ""
    from generator.entry.content_hash import content_hash

    return content_hash(entry)


def _related_pairs(entry: Entry, related: Mapping[str, LoadResult]
                   ) -> dict[str, tuple[Entry, Spacetime]]:
    pairs = {}
    for item in entry.related:
        other = related.get(item.entry)
        if other is not None and other.entry is not None and other.spacetime is not None:
            pairs[item.entry] = (other.entry, other.spacetime)
    return pairs


def _budget_diagnostic(entry: Entry, exc: BudgetExceeded) -> Diagnostic:
    return Diagnostic.at(entry.pos("metric"), "error",
                         f"computation ran out of its budget in stage '{exc.stage}' ({exc.limit})",
                         "budget.exceeded",
                         "simplify the metric (e.g. fewer nested roots) or split the entry")


# ---------------------------------------------------------------------------- signature


def check_signature(entry: Entry, spacetime: Spacetime) -> list[Diagnostic]:
    """Check that the metric is non-degenerate with the declared signature at sample points."""
    points = entry_points(spacetime, SIGNATURE_POINTS)
    if not points:
        return [Diagnostic.at(entry.pos("domain"), "error", "no sample point satisfies the "
                              "domain and the parameter assumptions", "domain.empty",
                              "check the inequalities under 'domain' for contradictions")]
    angles = angle_coordinates(spacetime)
    # The entry's own metric (a "+---" entry is stored flipped): signs are reported as written.
    metric = (spacetime.metric * spacetime.sign).applyfunc(lambda v: through_sin_cos(v, angles))
    for point in points:
        signs = _inertia(metric, point)
        where = _describe(point)
        if signs is None:
            return [Diagnostic.at(entry.pos("metric"), "error", f"the metric is degenerate "
                                  f"(det g = 0) at {where}", "metric.degenerate",
                                  "check the metric components, or narrow the domain")]
        message = signature_mismatch(entry, metric, point, signs)
        if message:
            return [Diagnostic.at(entry.pos("signature"), "error", f"{message} at {where}",
                                  "metric.signature", "check signs of the components, or the "
                                  "domain (e.g. inside a horizon t and r swap roles)")]
    return []


def signature_mismatch(entry: Entry, metric: sympy.ImmutableMatrix,
                       point: dict[sympy.Basic, sympy.Expr], signs: list[str]) -> str:
    """Why the declared signature disagrees with the metric at ``point`` ('' if it agrees).

    Where the metric is diagonal at the point, the declared signature is read per coordinate
    ("+-++" for a metric whose g_tt is negative is wrong even though it has one minus sign);
    otherwise only the numbers of signs can be compared. Both orders are shown: the signs by
    coordinate as declared and as found, and the sorted counts."""
    declared = entry.signature
    values = metric.xreplace(point)
    n = values.shape[0]
    diagonal = all(values[i, j] == 0 for i in range(n) for j in range(n) if i != j)
    if diagonal:
        found = "".join(_inertia(sympy.ImmutableMatrix([[values[i, i]]]), {})[0]  # type: ignore
                        for i in range(n))
        if found != declared:
            order = ", ".join(entry.coordinates)
            return (f"declared signature '{declared}' but the metric's diagonal has signs "
                    f"'{found}' in coordinate order ({order}); sorted: '{_sorted(declared)}' "
                    f"declared, '{_sorted(found)}' found")
        return ""
    if _sorted(declared) != _sorted("".join(signs)):
        return (f"declared signature '{declared}' (sorted '{_sorted(declared)}') but the "
                f"metric's eigenvalues have signs '{_sorted(''.join(signs))}' (sorted; the "
                f"metric is not diagonal here, so signs have no coordinate order)")
    return ""


def _sorted(signs: str) -> str:
    return "".join(sorted(signs))


def _flip(signature: str) -> str:
    return signature.translate(str.maketrans("+-", "-+"))


def _inertia(metric: sympy.ImmutableMatrix, point: dict[sympy.Basic, sympy.Expr]
             ) -> list[str] | None:
    """Signs of the eigenvalues at a point, or None if the metric is degenerate there.

    ``metric`` has its circular functions written through sin and cos of the angles
    (``through_sin_cos``), so a point's rational sin and cos apply by plain replacement
    (``xreplace``; SymPy's ``subs`` took a tenth of a second per Kerr point).

    Rational values (the usual case) are decided exactly by ``exact_inertia``. Otherwise
    degeneracy is decided exactly (det g = 0 at the exact point). The signs come from
    eigenvalues at increasing precision until each is clearly away from zero, so charts whose
    components differ by many orders of magnitude (e.g. cosh**2 of a large radius) are fine.
    """
    values = metric.xreplace(point)
    if all(v.is_Rational for v in values):
        exact = exact_inertia([[Fraction(int(v.p), int(v.q)) for v in row]
                               for row in values.tolist()])
        return None if "0" in exact else exact
    if values.det() == 0:
        return None
    for digits in (50, 200, 800):
        with mpmath.workdps(digits):
            numeric = mpmath.matrix([[mpmath.mpf(sympy.N(v, digits)) for v in row]
                                     for row in values.tolist()])
            eigenvalues = mpmath.eigsy(numeric)[0]
            scale = max(abs(e) for e in eigenvalues)
            if all(abs(e) > scale * mpmath.mpf(10) ** (10 - digits) for e in eigenvalues):
                return ["-" if e < 0 else "+" for e in eigenvalues]
    return None


def exact_inertia(matrix: list[list[Fraction]]) -> list[str]:
    """Signs of the eigenvalues of a symmetric rational matrix ("0" for a zero eigenvalue).

    Sylvester's law of inertia: a congruence P^T A P keeps the number of positive, negative
    and zero eigenvalues, so symmetric Gaussian elimination reads the signs off the pivots,
    exactly. A zero diagonal with a nonzero a_ij is first made a nonzero pivot by adding row
    and column j to row and column i (the new diagonal entry is 2 a_ij + a_jj).
    """
    a = [list(row) for row in matrix]
    signs: list[str] = []
    while a:
        size = len(a)
        k = next((i for i in range(size) if a[i][i] != 0), None)
        if k is None:
            pair = next(((i, j) for i in range(size) for j in range(size) if a[i][j] != 0),
                        None)
            if pair is None:
                return signs + ["0"] * size
            i, j = pair
            for c in range(size):
                a[i][c] += a[j][c]
            for r in range(size):
                a[r][i] += a[r][j]
            k = i
        pivot = a[k][k]
        signs.append("+" if pivot > 0 else "-")
        rest = [i for i in range(size) if i != k]
        a = [[a[i][j] - a[i][k] * a[k][j] / pivot for j in rest] for i in rest]
    return signs


def _describe(point: dict[sympy.Basic, sympy.Expr]) -> str:
    parts = sorted(f"{k} = {v}" for k, v in point.items() if isinstance(k, sympy.Symbol))
    return ", ".join(parts)


# ---------------------------------------------------------------------------- scalar claims


def computed_scalar(name: str, geometry: Geometry) -> sympy.Expr | None:
    return getattr(geometry, name)


def check_scalar_claims(entry: Entry, spacetime: Spacetime, geometry: Geometry
                        ) -> tuple[list[Verdict], list[Diagnostic]]:
    """Compare each claimed invariant with the computed one (in the entry's own signature)."""
    table, _ = symbol_table(entry)
    verdicts: list[Verdict] = []
    diagnostics: list[Diagnostic] = []
    for claim in entry.claims.scalars:
        subject = f"claims.{claim.name}"
        computed = computed_scalar(claim.name, geometry)
        if computed is None:
            verdicts.append(Verdict(subject, False, "failed", "not defined below four "
                                    "dimensions", claim.value.text, "null"))
            continue
        computed = computed * spacetime.sign ** _FLIP_POWER[claim.name]
        claimed, problem = parse_at(claim.value, table)
        if problem is not None or claimed is None:
            diagnostics.extend([problem] if problem else [])
            verdicts.append(Verdict(subject, False, "failed", "the claim does not parse",
                                    claim.value.text, str(computed)))
            continue
        decision = decide_equal(claimed, computed, spacetime)
        verdicts.append(Verdict(subject, decision.equal is True, decision.method,
                                decision.detail, claim.value.text, str(computed),
                                witness=decision.witness if decision.equal is False else None))
        if decision.equal is not True:
            diagnostics.append(_verdict_diagnostic(entry, verdicts[-1], decision.equal is None))
    return verdicts, diagnostics


def _verdict_diagnostic(entry: Entry, verdict: Verdict, undecided: bool) -> Diagnostic:
    name = verdict.subject.split(".", 1)[1]
    label = name.replace("_", " ")
    if undecided:
        return Diagnostic.at(entry.pos(verdict.subject), "error",
                             f"claimed {label} could not be verified: {verdict.detail}",
                             f"claim.{name}", f"computed: {verdict.computed}")
    return Diagnostic.at(entry.pos(verdict.subject), "error",
                         f"claimed {label} does not match the computed value "
                         f"({verdict.detail}){witness_text(verdict.witness)}",
                         f"claim.{name}", f"computed: {verdict.computed}")


def witness_text(witness: dict[str, str] | None) -> str:
    """'; differs at r = 7/2, M = 1/3' — the point where claim and computation part, so a
    contributor can evaluate both by hand there (empty when no witness was found)."""
    if not witness:
        return ""
    return "; differs at " + ", ".join(f"{name} = {value}" for name, value in witness.items())


# ---------------------------------------------------------------------------- label claims


def label_verdicts(entry: Entry, classification: Classification,
                   problems: list[Diagnostic]) -> list[Verdict]:
    """Verdicts for the non-scalar claims, for the page's record of what was verified.

    `classify` already reported each disagreement as a diagnostic; this only records the
    outcome per claim so readers see what was checked.
    """
    failed_lines = {(d.line, d.column) for d in problems if d.severity == "error"}
    out: list[Verdict] = []
    claims = entry.claims
    pairs = [("matter.kind", entry.matter.kind, classification.matter_kind)]
    if claims.petrov_type:
        pairs.append(("claims.petrov_type", claims.petrov_type, classification.petrov_type))
    if claims.hawking_ellis_type:
        pairs.append(("claims.hawking_ellis_type", claims.hawking_ellis_type,
                      classification.hawking_ellis_type))
    computed_conditions = {c.name: c.status for c in classification.energy_conditions}
    for name, state in claims.energy_conditions:
        pairs.append((f"claims.energy_conditions.{name}", state, computed_conditions.get(name)))
    for subject, claimed, computed in pairs:
        pos = entry.pos(subject)
        ok = (pos.line, pos.column) not in failed_lines and (
            claimed == computed or subject == "matter.kind")
        out.append(Verdict(subject, ok, "exact", "", str(claimed), str(computed)))
    out += list(classification.killing_vectors_checked) + list(classification.related_checked)
    out += list(classification.physical_checked)
    if classification.symmetry is not None:
        out += list(classification.symmetry.tensors_checked)
    return out
