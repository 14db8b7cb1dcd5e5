"""The duplicate search for one new entry against the shipped catalog: CPU seconds.

Issue 18: a copy of catalog/isolated-objects/schwarzschild.yaml with M renamed to m and a new id
must be warned about in CI, so the search has to be quick enough to run for every changed
entry. This script checks the whole catalog once (through a result cache in a temporary
folder, so it is measured cold and warm separately from the search), then times
``search_twins`` for the renamed copy, with the chart groups of the catalog's ``related``
links (one chart per group compared) and without them (every chart compared), and prints the
entries named.

    python bench/twin_benchmark.py
"""

from __future__ import annotations

import re
import shutil
import tempfile
import time
from pathlib import Path

from generator.entry.catalog import chart_groups, entry_files, outline_all, outline_links
from generator.physics.twins import search_twins
from generator.run.pipeline import RunOptions, check_files

ROOT = Path(__file__).resolve().parent.parent


def main() -> None:
    with tempfile.TemporaryDirectory() as folder:
        work = Path(folder)
        shutil.copytree(ROOT / "catalog", work / "catalog")
        original = (work / "catalog/isolated-objects/schwarzschild.yaml").read_text()
        copy = re.sub(r"\bM\b", "m", original).replace("id: schwarzschild\n", "id: lamp-hole\n")
        (work / "catalog/isolated-objects/lamp-hole.yaml").write_text(copy)
        catalog = work / "catalog"
        files = entry_files([catalog])
        options = RunOptions(cache_dir=work / "cache")
        started = time.perf_counter()
        reports = check_files(files, catalog, work, options, search_duplicates=False)
        print(f"whole catalog checked: {len(reports)} entries, "
              f"{time.perf_counter() - started:.1f} s wall")
        new = [r for r in reports if r.entry is not None and r.entry.id == "lamp-hole"]
        others = [r for r in reports if r.entry is not None and r.entry.id != "lamp-hole"]
        groups = chart_groups(outline_links(outline_all(files, catalog, work)))
        for label, given in (("one chart per group", groups), ("every chart", {})):
            cpu = time.process_time()
            found = search_twins(new, others, {}, given).found.get("lamp-hole", [])
            print(f"{label}: {time.process_time() - cpu:.1f} s CPU, named "
                  f"{', '.join(other for other, _ in found) or 'nothing'}")


if __name__ == "__main__":
    main()
