"""CPU seconds of the Weyl frame (the tool's null tetrad, its rotation onto the principal null
directions and the checks) for every shipped 4D Lorentzian entry, slowest first, with the
outcome by Petrov type: what the principal-frame step adds to a cold check.

    python bench/principal_frame.py          # all entries
    python bench/principal_frame.py kerr     # entries whose id contains "kerr"

A measurement, not a test: nothing here is asserted anywhere.
"""

from __future__ import annotations

import collections
import sys
import time
from pathlib import Path

from generator.entry.catalog import entry_files
from generator.entry.loader import load_entry
from generator.geometry.curvature import compute_geometry_and_weyl
from generator.physics.petrov import petrov_type
from generator.physics.principal_frame import FrameWork
from generator.physics.weyl_frame import weyl_frame

CATALOG = Path(__file__).resolve().parent.parent / "catalog"


def outcome(frame) -> str:
    if frame is None:
        return "no frame"
    if not frame.tetrad:
        return "principal, no tetrad" if frame.principal else "not principal, no tetrad"
    return "principal" if frame.principal else "not found in closed form"


def main(pattern: str = "") -> None:
    rows = []
    for path in entry_files([CATALOG]):
        if pattern not in path.stem:
            continue
        st = load_entry(path).spacetime
        if st is None or st.dimension != 4 or not st.lorentzian:
            continue
        geometry, operator = compute_geometry_and_weyl(st, None)
        petrov = petrov_type(geometry, st, [], operator)
        FrameWork.start(FrameWork.bound)
        started = time.process_time()
        try:
            frame, _ = weyl_frame(geometry, st, petrov, operator)
        except Exception as exc:  # a measurement script reports failures instead of stopping
            print(f"  {path.stem}: {type(exc).__name__}: {exc}", file=sys.stderr)
            frame = None
        rows.append((path.stem, petrov.type, outcome(frame), time.process_time() - started,
                     FrameWork.used))
    rows.sort(key=lambda row: -row[3])
    print(f"{'entry':44} {'type':>9} {'seconds':>8} {'terms':>9}  outcome")
    for name, kind, result, seconds, terms in rows:
        print(f"{name:44} {kind!s:>9} {seconds:8.2f} {terms:9d}  {result}")
    print(f"{'total':44} {'':>9} {sum(r[3] for r in rows):8.2f}")
    for (kind, result), count in sorted(collections.Counter((r[1], r[2]) for r in rows).items(),
                                        key=str):
        print(f"  type {kind}: {count} {result}")


if __name__ == "__main__":
    main(*sys.argv[1:2])
