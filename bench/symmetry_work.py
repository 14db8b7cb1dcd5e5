"""Counted work of the symmetry stage's two bounded computations for shipped entries: the
isometry dimension (units of jet arithmetic, ``isometry.WORK_BOUND``) and the principal Weyl
frame (terms produced, ``principal_frame.WORK_TERMS``), with CPU seconds beside them, largest
work first. The bounds are set from these figures with a wide margin, so that no shipped
entry comes near them; the figures are the same on every machine, the seconds are not.

    python bench/symmetry_work.py            # every entry
    python bench/symmetry_work.py kerr       # entries whose id contains "kerr"

The search for missing Killing vectors is skipped (it has its own bound and benchmark,
bench/killing_search_bench.py). A measurement, not a test: nothing here is asserted.
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from generator.entry.catalog import entry_files  # noqa: E402
from generator.entry.loader import load_entry  # noqa: E402
from generator.geometry.curvature import compute_geometry_and_weyl  # noqa: E402
from generator.physics import isometry, symmetry_stage  # noqa: E402
from generator.physics.petrov import petrov_type  # noqa: E402
from generator.physics.principal_frame import WORK_TERMS, FrameWork  # noqa: E402
from generator.physics.symmetry import check_killing_vector  # noqa: E402
from generator.physics.weyl_frame import weyl_frame  # noqa: E402

CATALOG = ROOT / "catalog"
spent: dict[str, float] = {}


def recording_isometry_dimension(*args, **kwargs):
    started = time.process_time()
    computed, points = isometry.isometry_dimension(*args, **kwargs)
    spent["isometry"] = computed.work
    spent["isometry_seconds"] = time.process_time() - started
    spent["why"] = computed.why_null or ""
    return computed, points


def measure(path: Path) -> dict[str, object] | None:
    load = load_entry(path)
    entry, st = load.entry, load.spacetime
    if entry is None or st is None:
        return None
    geometry, operator = compute_geometry_and_weyl(st, None)
    frame = None
    spent.clear()
    FrameWork.start(WORK_TERMS)
    started = time.process_time()
    if st.dimension == 4 and st.lorentzian:
        petrov = petrov_type(geometry, st, [], operator)
        try:
            frame, _ = weyl_frame(geometry, st, petrov, operator)
        except Exception as exc:  # a measurement reports failures instead of stopping
            print(f"  {path.stem}: frame: {type(exc).__name__}: {exc}", file=sys.stderr)
    frame_seconds = time.process_time() - started
    verdicts = [check_killing_vector(entry, st, i, claim)[0]
                for i, claim in enumerate(entry.claims.killing_vectors)]
    symmetry_stage.symmetry(entry, st, geometry, verdicts, frame)
    return {"entry": path.stem, "isometry": spent.get("isometry", 0),
            "isometry_seconds": spent.get("isometry_seconds", 0.0),
            "frame": FrameWork.used, "frame_seconds": frame_seconds,
            "why": spent.get("why", "")}


def main(pattern: str = "") -> None:
    symmetry_stage.isometry_dimension = recording_isometry_dimension
    symmetry_stage.missing_vectors = lambda *args: None
    rows = []
    for path in entry_files([CATALOG]):
        if pattern in path.stem:
            row = measure(path)
            if row is not None:
                rows.append(row)
                print(f"  {row['entry']}: {row['isometry']} {row['frame']}", file=sys.stderr,
                      flush=True)
    rows.sort(key=lambda row: -int(row["isometry"]))
    print(f"{'entry':44} {'isometry units':>15} {'s':>6} {'frame terms':>12} {'s':>6}")
    for row in rows:
        print(f"{row['entry']:44} {row['isometry']:15d} {row['isometry_seconds']:6.1f} "
              f"{row['frame']:12d} {row['frame_seconds']:6.1f}  {row['why']}")
    print(f"bounds: isometry {isometry.WORK_BOUND}, frame {WORK_TERMS}; largest: isometry "
          f"{max((r['isometry'] for r in rows), default=0)}, frame "
          f"{max((r['frame'] for r in rows), default=0)}")


if __name__ == "__main__":
    main(*sys.argv[1:2])
