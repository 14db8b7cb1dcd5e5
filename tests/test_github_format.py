"""GitHub Actions annotations (``Diagnostic.format_github``, used by ``check --format github``).

Source of the format, from memory: GitHub Docs, "Workflow commands for GitHub Actions",
section "Setting an error message" (``::error file={name},line={line},col={col},title={title}::
{message}``), and the escaping in the actions/toolkit package @actions/core, ``command.ts``:
``escapeData`` replaces % -> %25, CR -> %0D, LF -> %0A in the message; ``escapeProperty``
additionally replaces : -> %3A and , -> %2C in property values.
"""

from __future__ import annotations

import re

import pytest

from generator.errors import Diagnostic

FILE = "catalog/black-holes/lantern.yaml"  # demo path


def diagnostic(**overrides: object) -> Diagnostic:
    data: dict[str, object] = {
        "file": FILE,
        "line": 12,
        "column": 5,
        "severity": "error",
        "message": "claimed kretschmann differs from the computed value",
        "code": "claim.mismatch",
        "hint": "",
    }
    data.update(overrides)
    return Diagnostic(**data)  # type: ignore[arg-type]


def test_error_annotation_exact_text() -> None:
    assert diagnostic().format_github() == (
        "::error file=catalog/black-holes/lantern.yaml,line=12,col=5,title=claim.mismatch"
        "::claimed kretschmann differs from the computed value"
    )


def test_warning_and_note_levels() -> None:
    assert diagnostic(severity="warning").format_github().startswith("::warning file=")
    assert diagnostic(severity="note").format_github().startswith("::notice file=")


def test_hint_is_appended_and_title_falls_back_to_severity() -> None:
    text = diagnostic(code="", hint="recompute with check --explain").format_github()
    assert text == (
        "::error file=catalog/black-holes/lantern.yaml,line=12,col=5,title=error"
        "::claimed kretschmann differs from the computed value (hint: recompute with check "
        "--explain)"
    )


def test_message_escapes_percent_and_newlines_but_keeps_colons_and_commas() -> None:
    text = diagnostic(message="50% off:\r\nsee a, b", code="x").format_github()
    assert text.endswith("::50%25 off:%0D%0Asee a, b")


def test_title_property_escapes_colon_comma_percent_newline() -> None:
    text = diagnostic(code="a:b,c%d\ne").format_github()
    assert ",title=a%3Ab%2Cc%25d%0Ae::" in text


def test_file_property_is_escaped_like_every_property() -> None:
    text = diagnostic(file="odd,dir/x:y.yaml").format_github()
    assert text.startswith("::error file=odd%2Cdir/x%3Ay.yaml,line=12,col=5,")


# An independent reader of workflow commands (the toolkit's rules, reversed), so escaping is
# checked by round trip and not only against strings we wrote ourselves.
_COMMAND = re.compile(r"^::(?P<level>\w+) (?P<props>[^:]*)::(?P<data>.*)$", re.DOTALL)


def _unescape(value: str) -> str:
    for escaped, plain in (("%0D", "\r"), ("%0A", "\n"), ("%3A", ":"), ("%2C", ","), ("%25", "%")):
        value = value.replace(escaped, plain)
    return value


def read_command(text: str) -> tuple[str, dict[str, str], str]:
    assert "\n" not in text and "\r" not in text  # one command, one line
    match = _COMMAND.match(text)
    assert match is not None, text
    props = dict(item.split("=", 1) for item in match["props"].split(","))
    return match["level"], {k: _unescape(v) for k, v in props.items()}, _unescape(match["data"])


@pytest.mark.parametrize(
    "message",
    ["plain", "100% sure", "two\nlines", "colon: and, comma", "%0A literal", "tail\r\n"],
)
def test_round_trip_through_an_independent_reader(message: str) -> None:
    d = diagnostic(message=message, code="code:with,specials%")
    level, props, data = read_command(d.format_github())
    assert level == "error"
    assert props == {"file": FILE, "line": "12", "col": "5", "title": "code:with,specials%"}
    assert data == message
