"""The physical-data stage (horizons, orbits, charges, observers) runs under the entry's budget
like every other stage: a hostile entry whose horizon polynomial is built to be expensive ends
with a positioned budget diagnostic naming a physical stage, never with a traceback and never
with the budget hit swallowed as "the computer algebra failed".

The entry is invented (a robustness fixture, not physics): f(r) = 1 − 2M/r + a r² + b r³ +
r¹⁴/(M² + 1), whose degree-14 factor with two parameters makes the extremality discriminant
and the orbit conditions slow while the curvature of a diagonal f(r) metric stays quick.
"""

from __future__ import annotations

import time
from pathlib import Path

import pytest

from generator.entry.catalog import vocabulary
from generator.entry.loader import LoadResult, load_text
from generator.errors import BudgetExceeded
from generator.geometry.curvature import compute_geometry
from generator.physics import physical
from generator.run.limits import run_limited, stage_of_name
from generator.run.tasks import check_within_limits
from tests._hostile import SEED_ENTRY, SEED_LINE_ELEMENT

CATALOG = Path(__file__).resolve().parent.parent / "catalog"
PHYSICAL_STAGES = {"physical data", "horizons", "surface gravity", "horizon area",
                   "photon sphere and ISCO", "ergosurface", "Komar charges",
                   "observers' kinematics", "physical claims"}
F = "(1 - 2*M/r + a*r**2/(1 + a**2) + b*r**3/(1 + b**2) + r**14/(M**2 + 1))"


def hostile_load() -> LoadResult:
    line = f"-{F}*dt**2 + dr**2/{F} + r**2*(dtheta**2 + sin(theta)**2*dphi**2)"
    text = SEED_ENTRY.replace(SEED_LINE_ELEMENT, line).replace(
        "  M: {assume: positive, meaning: mass}\n",
        "  M: {assume: positive, meaning: mass}\n  a: {assume: positive, meaning: invented}\n"
        "  b: {assume: positive, meaning: invented}\n").replace(
        "matter:\n  kind: vacuum", "matter:\n  kind: unspecified")
    assert line in text and "kind: unspecified" in text
    family = next(p.name for p in CATALOG.iterdir() if (p / "schwarzschild.yaml").exists())
    load = load_text(text, "schwarzschild.yaml", CATALOG / family / "schwarzschild.yaml",
                     vocabulary(CATALOG), True)
    assert load.spacetime is not None, load.diagnostics
    return load


def test_physical_helpers_have_physical_stage_names() -> None:
    """The innermost named frame names the stage: the horizon finder's helpers must not be
    reported as "Killing vectors" (a word their names share with the Killing stage)."""
    for name in ("physical_data", "find_horizons", "killing_coordinates", "horizon_area",
                 "photon_sphere_and_isco", "komar_charges", "observer_kinematics"):
        assert stage_of_name(name) in PHYSICAL_STAGES, name


def test_a_budget_hit_in_the_physical_stage_is_not_swallowed() -> None:
    """physical_data used to catch BudgetExceeded per part and go on; now the alarm ends it."""
    assert BudgetExceeded not in physical.FAILURES
    load = hostile_load()
    geometry = compute_geometry(load.spacetime)
    with pytest.raises(BudgetExceeded) as caught:
        run_limited(physical.physical_data, load.spacetime, geometry, None, seconds=1.0,
                    memory_bytes=0, hard_grace=30.0)
    assert caught.value.stage in PHYSICAL_STAGES


def find_horizons(*args):
    """A horizon search that never ends, named like the real one so the stage is found. It
    spins in its own frame: the real search, repeated, was ended inside a geometry helper whose
    name (the innermost frame's) then named the stage."""
    deadline = time.monotonic() + 300.0
    while time.monotonic() < deadline:
        sum(range(10_000))
    raise AssertionError("the entry's budget never ended the horizon search")


@pytest.mark.slow
def test_a_hostile_entry_ends_at_its_budget_with_the_physical_stage_named(
        monkeypatch: pytest.MonkeyPatch) -> None:
    """The whole check under the entry's budget: a report with a positioned budget.exceeded
    error that names a physical stage. The classification steps before the physical stage
    (matter content, Hawking–Ellis type and energy conditions, Petrov type) are also slow on
    this metric; they are answered from outside the budget (the matter computed beforehand,
    the others left undecided), so that the budget runs out where this test looks whatever
    the machine's load. The horizon search is replaced by one that never ends: the degree-14
    polynomial alone stopped being slow enough once roots stayed symbolic (h_root), and a test
    that depends on how slow the machine is would be flaky either way. The check
    runs in this process, so the patches hold."""
    from generator.physics import classify
    from generator.physics.matter import classify_matter
    from generator.physics.petrov import PetrovResult

    load = hostile_load()
    matter = classify_matter(load.entry, load.spacetime, compute_geometry(load.spacetime))
    monkeypatch.setattr(classify, "classify_matter", lambda *args: matter)
    monkeypatch.setattr(classify, "stress_energy_physics", lambda *args: (None, ()))
    monkeypatch.setattr(classify, "petrov_type",
                        lambda *args: PetrovResult("undecided", "not computed in this test"))
    monkeypatch.setattr(physical, "find_horizons", find_horizons)
    report = check_within_limits([load], 10.0)
    budget = [d for d in report.diagnostics if d.code == "budget.exceeded"]
    assert len(budget) == 1, report.diagnostics
    stage = budget[0].message.split("stage '")[1].split("'")[0]
    assert stage in PHYSICAL_STAGES, budget[0].message
    assert budget[0].line > 1 and not report.ok
