"""The search for missing Killing vectors is bounded by counted work, never by time: what it
finds depends only on the metric and the bound, so a slow and a fast machine publish the same
page. A tiny bound stops early — the same way on every run and in a fresh process (whose string
hashes, and so set orders, differ) — and says so; the default bound completes the round 2-sphere
(three rotations, so(3): common practice, e.g. Carroll 2004 §3.8).
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import pytest
import sympy
from classify_cases import make_entry, prepared

from generator.physics import killing_search
from generator.physics.killing_search import (
    WORK_BOUND,
    Work,
    WorkBound,
    WorkBoundReached,
    search_killing_vectors,
)

ROOT = Path(__file__).resolve().parent.parent


def sphere():
    return prepared(make_entry("theta phi", "dtheta**2 + sin(theta)**2*dphi**2", {},
                               ("0 < theta < pi",), signature="++"))[1]


def minkowski_spherical():
    return prepared(make_entry("t r theta phi",
                               "-dt**2 + dr**2 + r**2*(dtheta**2 + sin(theta)**2*dphi**2)",
                               {}, ("r > 0", "0 < theta < pi")))[1]


ROTATION = [[sympy.Integer(0), sympy.Integer(1)]]


def test_work_is_counted_before_it_is_done() -> None:
    work = Work(WorkBound(points=2, unknowns=10, checks=1))
    work.spend("points", 2)
    with pytest.raises(WorkBoundReached):
        work.spend("points")
    work.spend("unknowns", 10)
    with pytest.raises(WorkBoundReached):
        work.spend("unknowns", 1)
    assert dict(work.snapshot()) == {"points": 2, "unknowns": 10, "checks": 0}


def test_a_tiny_bound_stops_early_and_says_so() -> None:
    st = sphere()
    tiny = WorkBound(points=12, unknowns=40, checks=1)
    first = search_killing_vectors(st, ROTATION, 3, tiny)
    second = search_killing_vectors(st, ROTATION, 3, tiny)
    assert not first.complete
    assert "stopped at the work bound" in first.summary
    assert first == second  # same vectors, same words, same work counted
    assert all(used <= getattr(tiny, kind) for kind, used in first.work)


def test_no_checks_allowed_finds_nothing_however_fast_the_machine() -> None:
    st = sphere()
    result = search_killing_vectors(st, ROTATION, 3, WorkBound(checks=0))
    assert result.found == () and "stopped at the work bound" in result.summary


def test_the_default_bound_completes_the_sphere_the_same_way_twice() -> None:
    st = sphere()
    first = search_killing_vectors(st, ROTATION, 3)
    second = search_killing_vectors(st, ROTATION, 3, WORK_BOUND)
    assert first.complete and len(first.found) == 2
    assert first.found == second.found and first.work == second.work
    assert "work bound" not in first.summary


def test_no_clock_is_read() -> None:
    # The search module imports no clock at all (a CPU-time cap made results depend on the
    # machine's speed).
    source = Path(killing_search.__file__).read_text()
    assert "process_time" not in source and "import time" not in source


SCRIPT = """
import json, sympy, sys
sys.path.insert(0, "tests")
from classify_cases import make_entry, prepared
from generator.physics.killing_search import search_killing_vectors
st = prepared(make_entry("t r theta phi",
                         "-dt**2 + dr**2 + r**2*(dtheta**2 + sin(theta)**2*dphi**2)",
                         {}, ("r > 0", "0 < theta < pi")))[1]
listed = [[1, 0, 0, 0], [0, 0, 0, 1]]
r = search_killing_vectors(st, [[sympy.Integer(c) for c in v] for v in listed], 10)
print(json.dumps({"found": [[str(c) for c in xi] for xi in r.found], "work": r.work,
                  "summary": r.summary}))
"""


@pytest.mark.slow
def test_fresh_processes_with_different_hash_seeds_agree() -> None:
    # Minkowski space in a spherical chart (10 Killing vectors, the Poincaré algebra: common
    # practice) with only ∂_t and ∂_φ listed: two processes with different string hashing
    # must find the same vectors in the same order with the same work.
    outputs = []
    for seed in ("1", "2"):
        env = dict(os.environ, PYTHONHASHSEED=seed)
        done = subprocess.run([sys.executable, "-c", SCRIPT], cwd=ROOT, env=env,
                              capture_output=True, text=True, check=True)
        outputs.append(json.loads(done.stdout))
    assert outputs[0] == outputs[1]
    assert len(outputs[0]["found"]) == 8
