"""The isometry dimension and the principal Weyl frame are bounded by counted work, never by
time, so a slow and a fast machine report the same thing (issue 17). A tiny bound stops early
— the same way on every run — and says so; the default bound gives the textbook results.

Sources: Schwarzschild has a 4-dimensional isometry algebra on 3-dimensional orbits (static
and spherically symmetric; common practice) and Ψ2 = −M/r³ as its only Weyl scalar in a
principal frame (Chandrasekhar, The Mathematical Theory of Black Holes, 1983, §21; from
memory); Kerr has a 2-dimensional algebra (Stephani et al., Exact Solutions of Einstein's
Field Equations, 2nd ed. 2003, from memory).
"""

from __future__ import annotations

from pathlib import Path

import pytest
from _known_metrics import kerr, schwarzschild

from generator.geometry.curvature import compute_geometry_and_weyl
from generator.physics import isometry, jets
from generator.physics import principal_frame as pf
from generator.physics.isometry import isometry_dimension
from generator.physics.jets import JetWork, JetWorkReached
from generator.physics.petrov import petrov_type
from generator.physics.tower import TooLarge

# ---------------------------------------------------------------------------- the counter


def test_jet_work_is_counted_before_it_is_done() -> None:
    work = JetWork(10)
    work.spend(10)
    with pytest.raises(JetWorkReached):
        work.spend(1)
    assert work.used == 10


def test_no_clock_is_read() -> None:
    # A CPU-time cap or a wall-clock deadline made what is computed depend on the machine.
    for module in (isometry, jets, pf):
        source = Path(module.__file__).read_text()
        assert "process_time" not in source and "monotonic" not in source
        assert "import time" not in source


# ---------------------------------------------------------------------------- the isometry


def test_the_default_bound_gives_schwarzschild_four_the_same_way_twice() -> None:
    first, _ = isometry_dimension(schwarzschild())
    second, _ = isometry_dimension(schwarzschild())
    assert (first.dimension, first.orbit_dimension) == (4, 3)
    assert first == second and 0 < first.work <= isometry.WORK_BOUND


@pytest.mark.parametrize("bound", [1, 20_000, 300_000])
def test_a_tiny_isometry_bound_stops_early_the_same_way_and_says_so(bound: int) -> None:
    first, points_first = isometry_dimension(schwarzschild(), bound=bound)
    second, points_second = isometry_dimension(schwarzschild(), bound=bound)
    assert first == second and points_first == points_second
    assert first.dimension is None
    assert first.why_null is not None and "work bound" in first.why_null
    assert first.work <= bound


def test_the_bound_is_what_decides_not_the_point() -> None:
    # Just below what Kerr needs the answer is refused; at exactly that work it is given.
    full, _ = isometry_dimension(kerr())
    assert full.dimension == 2
    short, _ = isometry_dimension(kerr(), bound=full.work - 1)
    assert short.dimension is None and "work bound" in (short.why_null or "")
    exact, _ = isometry_dimension(kerr(), bound=full.work)
    assert exact == full


# ---------------------------------------------------------------------------- the frame


def _shown(frame: pf.PrincipalFrame) -> dict[str, tuple[str, str]]:
    return {name: (str(x.num), str(x.den)) for name, x in frame.psi.items()}


def _operator_and_type(st):
    geometry, operator = compute_geometry_and_weyl(st, None)
    return operator, petrov_type(geometry, st, [], operator).type


def test_the_default_frame_bound_gives_schwarzschild_psi2() -> None:
    st = schwarzschild()
    operator, kind = _operator_and_type(st)
    frame = pf.principal_frame(operator, st, kind)
    used = pf.FrameWork.used
    again = pf.principal_frame(operator, st, kind)
    assert frame.principal and pf.FrameWork.used == used <= pf.WORK_TERMS
    assert [name for name, value in frame.psi.items() if not value.is_zero()] == ["Psi2"]
    assert _shown(frame) == _shown(again) and frame.how == again.how


def test_a_tiny_frame_bound_stops_early_the_same_way_and_says_so() -> None:
    st = schwarzschild()
    operator, kind = _operator_and_type(st)
    full = pf.principal_frame(operator, st, kind)
    needed = pf.FrameWork.used
    outcomes = []
    for _ in range(2):
        try:
            frame = pf.principal_frame(operator, st, kind, bound=needed - 1)
            outcomes.append(("frame", frame.principal, frame.why))
        except TooLarge as exc:
            outcomes.append(("refused", None, str(exc)))
    assert outcomes[0] == outcomes[1]
    assert outcomes[0][1] is not True  # never the principal frame with less work than it needs
    assert "work bound" in outcomes[0][2]
    assert full.principal and pf.principal_frame(operator, st, kind, bound=needed).principal
