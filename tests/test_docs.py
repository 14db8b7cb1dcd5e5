"""The contributor guide stays in step with the code it documents."""

from __future__ import annotations

import re
from pathlib import Path

from generator.entry.schema import ENTRY, walk, with_reference_table

ROOT = Path(__file__).resolve().parent.parent
GUIDE = ROOT / "DEVELOPERS.md"
CODE = re.compile(r'"((?:file|yaml|entry|catalog|math|metric|domain|claim|matter|budget|'
                  r'petrov|killing|related|energy|distributed|internal)\.[a-z-]+)"')


def test_key_table_is_generated_from_the_schema() -> None:
    guide = GUIDE.read_text(encoding="utf-8")
    assert with_reference_table(guide) == guide, "run: python -m generator schema --docs"
    for path, _ in walk(ENTRY):
        assert f"`{path}`" in guide


def test_every_diagnostic_code_is_documented() -> None:
    guide = GUIDE.read_text(encoding="utf-8")
    documented = set(re.findall(r"`([a-z]+\.[a-z<>*-]+)`", guide))
    file_names = ("html", "json", "yaml", "svg", "tex", "py", "js", "css")
    used = {code for path in (ROOT / "generator").glob("*.py")
            for code in CODE.findall(path.read_text(encoding="utf-8"))
            if code.rsplit(".", 1)[1] not in file_names}
    assert used, "no diagnostic codes found: the pattern is stale"
    missing = sorted(code for code in used if code not in documented
                     and f"{code.split('.')[0]}.*" not in documented)
    assert missing == []
