"""A wrong claim is never accepted: the exact decision is not overruled by sampling, sample
points cannot be aimed at, sign-dependent claims are decided by cases, numbers never overflow.

Sources of the values compared with: the Schwarzschild invariants R = 0 and
K = R_abcd R^abcd = 48 M²/r⁶ (C. Cherubini, D. Bini, S. Capozziello, R. Ruffini, "Second
order scalar invariants of the Riemann tensor: applications to black hole spacetimes",
Int. J. Mod. Phys. D 11 (2002) 827, from memory) and the Killing vectors ∂_t, ∂_φ of
Schwarzschild (common practice). The perturbations are built here to defeat the previous
checker's fixed, bounded sample points (the reproductions of the soundness review) and, by
property tests, to vanish at the very points a given seed produces.
"""

from __future__ import annotations

import os
import random
import shutil
from pathlib import Path

import pytest
import sympy as sp
from _known_metrics import M, r, schwarzschild
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from generator.entry.catalog import vocabulary
from generator.entry.loader import load_entry
from generator.geometry import decisions
from generator.geometry.curvature import compute_geometry
from generator.geometry.equality import (
    SAMPLED_POINTS,
    _witness_candidates,
    compare_at,
    decide_equal,
    decide_zero,
)
from generator.geometry.sampling import entry_points, wide_points
from generator.physics.symmetry import lie_derivative_metric
from generator.physics.verify import check_loaded

CATALOG = Path(__file__).resolve().parent.parent / "catalog"
SCHWARZSCHILD_FILE = CATALOG / "isolated-objects" / "schwarzschild.yaml"
# The start of the shipped entry's Ricci-scalar claim (long form), replaced by each test's claim.
RICCI_LINE = "ricci_scalar: {value: 0,"
KRETSCHMANN = 48 * M**2 / r**6  # Cherubini et al. 2002 (from memory)
# bench/mutation_score.py --code lowers the number of examples per mutant (ALMANAC_EXAMPLES).
SETTINGS = settings(max_examples=int(os.environ.get("ALMANAC_EXAMPLES", "12")), deadline=None,
                    suppress_health_check=[HealthCheck.too_slow])


@pytest.fixture(scope="module")
def geometry():
    return compute_geometry(schwarzschild())


def aimed_points(spacetime, seed: int, entry_id: str = "schwarzschild", count: int = 12):
    """Every point the checker looks at for this seed: the deterministic witness stream and
    the first fallback points of the entry's run stream."""
    decisions.set_run_seed(seed)
    fallback = wide_points(spacetime, count, decisions.derived_rng("entry", entry_id))
    return entry_points(spacetime, 10) + _witness_candidates(spacetime) + fallback


def vanishing_at(points, variable: sp.Symbol) -> sp.Expr:
    """A polynomial in one variable that is zero at each point's value of it."""
    values = {p[variable] for p in points if variable in p}
    return sp.Mul(*[(variable - v) for v in sorted(values)])


# ---------------------------------------------------------------------------- reproductions


def _check_with_claim(tmp_path: Path, old: str, new: str):
    """The shipped Schwarzschild entry with one line changed, checked in process."""
    family = tmp_path / "catalog" / "isolated-objects"
    family.mkdir(parents=True)
    for name in ("families.yaml", "tags.yaml"):
        shutil.copy(CATALOG / name, tmp_path / "catalog" / name)
    text = SCHWARZSCHILD_FILE.read_text(encoding="utf-8")
    assert old in text
    path = family / "schwarzschild.yaml"
    path.write_text(text.replace(old, new, 1), encoding="utf-8")
    load = load_entry(path, "schwarzschild.yaml", vocabulary(tmp_path / "catalog"))
    return check_loaded(load, {})


@pytest.mark.parametrize("claim", ["exp(1000)", "sqrt(2)*(10**40)**8",
                                   "((1+sqrt(2))**100)**100", "Abs(M - 3) + M - 3",
                                   "-1/10**100", "exp(-1000)"])
def test_overflowing_and_sign_dependent_ricci_claims_are_rejected(tmp_path, claim) -> None:
    # Issue 15.1 (the first three overflowed a Python float) and issue 22 (Abs: zero for
    # M <= 3 only; the true value is R = 0, vacuum).
    report = _check_with_claim(tmp_path, RICCI_LINE, f"ricci_scalar: {{value: {claim},")
    verdict = next(v for v in report.verdicts if v.subject == "claims.ricci_scalar")
    assert not verdict.ok and not report.ok
    if verdict.detail == "the claim does not parse":  # refused by the grammar's size limits
        assert any(d.code.startswith("math.") for d in report.diagnostics)
    else:
        assert verdict.method in ("exact", "by cases")


def test_the_shipped_entry_still_verifies_exactly(tmp_path) -> None:
    report = _check_with_claim(tmp_path, RICCI_LINE, RICCI_LINE)
    assert report.ok
    assert {v.method for v in report.verdicts if v.ok} <= {"exact", "by cases"}


def test_a_ricci_claim_aimed_at_the_sample_points_is_rejected(geometry) -> None:
    # Issue 22 (1): R + P(r) with P zero at every r the checker samples for this seed.
    spacetime = schwarzschild()
    perturbation = vanishing_at(aimed_points(spacetime, 7), r) / r**40
    decisions.set_run_seed(7)
    decision = decide_equal(geometry.ricci_scalar + perturbation, geometry.ricci_scalar,
                            spacetime)
    assert (decision.equal, decision.method) == (False, "exact")


def test_a_metric_off_vacuum_away_from_the_sample_points_is_not_vacuum() -> None:
    # Issue 22 (2): Schwarzschild with g_tt changed by a term that vanishes, with its first
    # derivative, at the radii the old checker sampled and at fallback points of a seed:
    # R_ab ≠ 0, decided exactly.
    base = schwarzschild()
    decisions.set_run_seed(11)
    aimed = entry_points(base, 5) + wide_points(base, 3, decisions.derived_rng("entry", "x"))
    bump = vanishing_at(aimed, r) ** 2 / r**20
    metric = sp.Matrix(base.metric)
    metric[0, 0] = metric[0, 0] * (1 + bump)
    from dataclasses import replace

    spacetime = replace(base, metric=sp.ImmutableMatrix(metric))
    ricci = compute_geometry(spacetime).ricci
    outcomes = [decide_zero(ricci[i, i], spacetime) for i in range(2)]
    assert any(d.equal is False for d in outcomes)
    assert all(d.method == "exact" for d in outcomes if d.equal is False)


def test_a_vector_that_fails_killing_away_from_the_sample_points_is_rejected() -> None:
    # Issue 22 (3): ξ = ∂_t + P(r) ∂_φ with P zero at the sampled radii is not Killing.
    spacetime = schwarzschild()
    xi = [sp.Integer(1), sp.Integer(0), sp.Integer(0), vanishing_at(aimed_points(spacetime, 5), r)]
    lie = lie_derivative_metric(xi, spacetime.metric, spacetime.coordinates)
    decisions.set_run_seed(5)
    outcomes = [decide_zero(lie[a, b], spacetime) for a in range(4) for b in range(a, 4)]
    assert any(d.equal is False for d in outcomes)


def test_an_abs_claim_true_only_for_small_mass_is_rejected_by_cases(geometry) -> None:
    # Issue 22 (4): |M − 3| + M − 3 is 0 for M ≤ 3 and 2(M − 3) above.
    decision = decide_equal(sp.Abs(M - 3) + M - 3, geometry.ricci_scalar, schwarzschild())
    assert (decision.equal, decision.method) == (False, "by cases")
    assert sp.Rational(decision.witness["M"]) > 3


# ---------------------------------------------------------------------------- properties


@SETTINGS
@given(seed=st.integers(0, 2**62), scale=st.integers(1, 10**6), power=st.integers(1, 12))
def test_perturbations_vanishing_at_a_seeds_points_are_rejected(geometry, seed, scale,
                                                                  power) -> None:
    spacetime = schwarzschild()
    points = aimed_points(spacetime, seed)
    perturbation = (vanishing_at(points, r) * vanishing_at(points, M)) / (scale * r**power)
    decisions.set_run_seed(seed)
    with decisions.open_log("schwarzschild"):
        decision = decide_equal(KRETSCHMANN + perturbation, geometry.kretschmann, spacetime)
    assert decision.equal is False and decision.method == "exact"


@SETTINGS
@given(cut=st.fractions(min_value=1, max_value=10**9), height=st.integers(1, 1000),
       where=st.sampled_from(["mass", "radius", "root"]))
def test_perturbations_living_in_part_of_the_domain_are_rejected(geometry, cut, height,
                                                                 where) -> None:
    spacetime = schwarzschild()
    c = sp.Rational(cut.numerator, cut.denominator)
    bump = {"mass": sp.Abs(M - c) + M - c,  # non-zero only for M > c
            "radius": sp.Abs(r - c * M) - (r - c * M),  # non-zero only for r < cM
            "root": sp.sqrt((M - c) ** 2) - (c - M)}[where]  # non-zero only for M > c
    decision = decide_equal(KRETSCHMANN + height * bump, geometry.kretschmann, spacetime)
    if where == "radius" and c <= 2:
        assert decision.equal is True  # r > 2M ≥ cM: the bump is zero on the whole domain
    else:
        assert decision.equal is False, (where, c)
        assert decision.method in ("exact", "by cases")


@SETTINGS
@given(form=st.sampled_from(range(6)), factor=st.fractions(min_value=-50, max_value=50))
def test_true_claims_in_non_canonical_forms_are_accepted(geometry, form, factor) -> None:
    spacetime = schwarzschild()
    q = sp.Rational(factor.numerator, factor.denominator)
    f = 1 - 2 * M / r
    forms = [48 * sp.Abs(M) ** 2 / sp.Abs(r) ** 6,
             48 * sp.sqrt(M**2) * M / r**6,
             48 * M**2 * sp.sqrt(f) ** 2 / (r**6 * f),
             48 * M**2 * sp.sqrt(r * (r - 2 * M)) / (r**6 * sp.sqrt(r) * sp.sqrt(r - 2 * M)),
             48 * M**2 * sp.Abs(r - 2 * M) / (r**6 * (r - 2 * M)),
             48 * M**2 * sp.sqrt((r**2 - 4 * M**2) ** 2) / (r**6 * (r - 2 * M) * (r + 2 * M))]
    decision = decide_equal(q * forms[form], q * geometry.kretschmann, spacetime)
    assert decision.equal is True, forms[form]
    assert decision.method in ("exact", "by cases")


@SETTINGS
@given(cut=st.fractions(min_value=3, max_value=10**6))
def test_abs_claims_true_on_part_of_the_domain_are_rejected(cut) -> None:
    spacetime = schwarzschild()
    c = sp.Rational(cut.numerator, cut.denominator)
    # |r − c| = r − c holds for r > c only: the domain r > 2M reaches below c for small M.
    decision = decide_equal(sp.Abs(r - c), r - c, spacetime)
    assert decision.equal is False and decision.method in ("exact", "by cases")
    assert sp.Rational(decision.witness["r"]) < c


# ---------------------------------------------------------------------------- the fallback


def test_sampled_fallback_points_change_with_the_seed_and_replay_with_it() -> None:
    spacetime = schwarzschild()
    decisions.set_run_seed(1)
    first = wide_points(spacetime, 5, decisions.derived_rng("entry", "x"))
    decisions.set_run_seed(2)
    other = wide_points(spacetime, 5, decisions.derived_rng("entry", "x"))
    decisions.set_run_seed(1)
    again = wide_points(spacetime, 5, decisions.derived_rng("entry", "x"))
    assert first == again and first != other


def test_sampled_fallback_reaches_large_and_small_magnitudes() -> None:
    spacetime = schwarzschild()
    points = wide_points(spacetime, 300, random.Random(3))
    masses = [p[M] for p in points]
    assert max(masses) > 10**8 and min(masses) < sp.Rational(1, 10**8)
    assert all(p[r] > 2 * p[M] for p in points)  # inside the domain, exactly


def test_a_claim_outside_the_field_is_sampled_and_says_so() -> None:
    # log(r**2) = 2 log r for r > 0 (common practice); the field does not know it.
    spacetime = schwarzschild()
    decision = decide_equal(sp.log(r**2), 2 * sp.log(r), spacetime)
    assert (decision.equal, decision.method) == (True, "sampled")
    assert str(SAMPLED_POINTS) in decision.detail
    tiny = decide_equal(sp.log(r**2) + sp.Rational(1, 10**300), 2 * sp.log(r), spacetime)
    assert tiny.equal is False  # a tiny constant is not lost below the rounding error


def test_numeric_comparison_cannot_overflow_or_call_nan_equal() -> None:
    huge = sp.exp(sp.Integer(1000))
    assert compare_at(huge, sp.Integer(0), {}, 50) is True
    assert compare_at(huge * (1 + sp.Rational(1, 10**20)), huge, {}, 50) is True
    assert compare_at(((1 + sp.sqrt(2)) ** 100) ** 100, sp.Integer(0), {}, 60) is True
    assert compare_at(sp.Integer(10) ** -400, sp.Integer(0), {}, 50) is True
    assert compare_at(sp.log(sp.Integer(0)), sp.log(sp.Integer(0)), {}, 50) is None
    assert compare_at(sp.nan, sp.nan, {}, 50) is None
    assert compare_at(sp.zoo, sp.zoo, {}, 50) is None


def test_the_decision_log_labels_a_sampled_equal() -> None:
    spacetime = schwarzschild()
    with decisions.open_log("x") as log, decisions.subject("claims.ricci_scalar"):
        decide_equal(sp.log(r**2), 2 * sp.log(r), spacetime)
    assert log.method_for("claims.ricci_scalar") == "sampled"
    assert log.method_for("claims.kretschmann") == "exact"
    assert decisions.weakest("exact", "by cases") == "by cases"
    assert decisions.weakest("by cases", "sampled", "exact") == "sampled"


def test_a_sampled_killing_verdict_does_not_claim_a_proof() -> None:
    from generator.physics.symmetry import how_shown

    assert "not proved" in how_shown("sampled", "L_ξ g_ab = 0")
    assert how_shown("exact", "L_ξ g_ab = 0") == "L_ξ g_ab = 0"


def test_a_witness_is_found_where_a_generator_is_irrational(geometry) -> None:
    # e**1000 and sqrt(2)·10**320 are irrational at every point: the witness comes from a
    # 60-digit evaluation far outside its rounding error, not from exact arithmetic.
    for claim in (sp.exp(1000), sp.sqrt(2) * sp.Integer(10) ** 320, sp.sqrt(r) - sp.sqrt(M)):
        decision = decide_equal(claim, geometry.ricci_scalar, schwarzschild())
        assert decision.equal is False and decision.witness is not None, claim


def test_a_sampled_claim_is_labelled_and_refused_on_request(tmp_path) -> None:
    # log(r**2) − 2 log r = 0 for r > 0 (common practice): true, but only sampling decides it.
    from generator.run.pipeline import sampled_refusals
    from generator.site.export import report_json

    report = _check_with_claim(tmp_path, RICCI_LINE,
                               "ricci_scalar: {value: log(r**2) - 2*log(r),")
    verdict = next(v for v in report.verdicts if v.subject == "claims.ricci_scalar")
    assert verdict.ok and verdict.method == "sampled" and report.ok
    data = report_json(report)
    assert data["decided_by"] == "sampled"
    assert {"subject": "claims.ricci_scalar", "method": "sampled"}.items() <= next(
        v for v in data["verified"] if v["subject"] == "claims.ricci_scalar").items()
    refusals = sampled_refusals(report)
    assert [d.code for d in refusals] == ["verdict.sampled"] and refusals[0].line == 31
