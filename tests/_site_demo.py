"""The invented demo catalog of the site tests (tests/roots/site-demo/reports.py), loaded once."""

from __future__ import annotations

import importlib.util
from pathlib import Path
from types import ModuleType

ROOTS = Path(__file__).parent / "roots"


def load_demo() -> ModuleType:
    spec = importlib.util.spec_from_file_location("site_demo_reports",
                                                  ROOTS / "site-demo" / "reports.py")
    assert spec and spec.loader
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module
