"""CPU seconds of the physical data (horizons, Komar charges, observers' kinematics) of every
shipped entry, slowest first: what the horizons/charges/observers stage adds to a cold check.

    python bench/physical_data.py          # all entries
    python bench/physical_data.py kerr     # entries whose id contains "kerr"

A measurement, not a test: nothing here is asserted anywhere.
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

from generator.entry.catalog import entry_files
from generator.entry.loader import load_entry
from generator.geometry.curvature import compute_geometry
from generator.geometry.sampling import entry_points
from generator.physics.horizons import find_horizons
from generator.physics.kinematics import observer_kinematics
from generator.physics.komar import komar_charges

CATALOG = Path(__file__).resolve().parent.parent / "catalog"


def cpu(function, *args) -> float:
    started = time.process_time()
    try:
        function(*args)
    except Exception as exc:  # a measurement script reports failures instead of stopping
        print(f"  ({type(exc).__name__}: {exc})", file=sys.stderr)
    return time.process_time() - started


def main(pattern: str = "") -> None:
    rows = []
    for path in entry_files([CATALOG]):
        if pattern not in path.stem:
            continue
        loaded = load_entry(path)
        st = loaded.spacetime
        if st is None:
            continue
        geometry = compute_geometry(st)
        points = entry_points(st, 3)
        rows.append((path.stem, cpu(find_horizons, st, geometry),
                     cpu(komar_charges, st, points),
                     cpu(observer_kinematics, st, geometry, points, None)))
    rows.sort(key=lambda row: -sum(row[1:]))
    print(f"{'entry':40} {'horizons':>9} {'komar':>7} {'observers':>9}")
    for name, *seconds in rows:
        print(f"{name:40} " + " ".join(f"{s:9.2f}" for s in seconds))
    print(f"{'total':40} " + " ".join(f"{sum(r[k] for r in rows):9.2f}" for k in (1, 2, 3)))


if __name__ == "__main__":
    main(*sys.argv[1:2])
