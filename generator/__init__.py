"""Metric Almanac: load, verify and publish a catalog of spacetime metrics."""

import os

__version__ = "0.1.0"

# SymPy keeps the results of its costly pure functions (expansion, gcds, canonical forms) in
# least-recently-used caches of SYMPY_CACHE_SIZE entries, read once when SymPy is imported.
# Its default of 1,000 is outgrown by one check, which meets the same expressions again in
# later stages (Kerr–Newman's full check: about a tenth quicker with 20,000). The caches only
# memoise, so no result changes; a size the user set is kept. Workers inherit the setting.
os.environ.setdefault("SYMPY_CACHE_SIZE", "20000")
