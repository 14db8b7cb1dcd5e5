"""Diagnostics and the few exceptions the pipeline raises.

Every problem found in a contributor's entry becomes a `Diagnostic` with a file position and a
hint, collected and reported together (never a traceback). Exceptions are reserved for the
cases where a stage cannot go on at all.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from typing import Literal

Severity = Literal["error", "warning", "note"]


@dataclass(frozen=True)
class SourcePos:
    """A 1-based line/column position in a catalog file (from the YAML node marks)."""

    file: str
    line: int
    column: int


@dataclass(frozen=True)
class Diagnostic:
    """One message for a contributor, printed like a compiler's: ``file:line:col: error: ...``."""

    file: str
    line: int
    column: int
    severity: Severity
    message: str
    code: str = ""
    hint: str = ""

    @classmethod
    def at(
        cls,
        pos: SourcePos,
        severity: Severity,
        message: str,
        code: str = "",
        hint: str = "",
    ) -> Diagnostic:
        return cls(pos.file, pos.line, pos.column, severity, message, code, hint)

    def format_text(self) -> str:
        """Render as ``path:line:col: severity: message [code]`` plus an indented hint line.

        Every part can hold text from the entry (a key, a value, a file name), so control
        characters are shown escaped: a key holding a line break and ``::error`` must not start
        a line of its own that CI would read as a workflow command."""
        head = (f"{printable(self.file)}:{self.line}:{self.column}: {self.severity}: "
                f"{printable(self.message)}")
        if self.code:
            head += f" [{printable(self.code)}]"
        if self.hint:
            head += f"\n    hint: {printable(self.hint)}"
        return head

    def format_github(self) -> str:
        """Render as a GitHub Actions workflow command so it lands on the pull request's line."""
        level = {"error": "error", "warning": "warning", "note": "notice"}[self.severity]
        title = self.code or self.severity
        text = self.message + (f" (hint: {self.hint})" if self.hint else "")
        # GitHub's own escapes for line breaks (the annotation shows them as line breaks, the
        # log line stays one line); every other control character is written out.
        text = printable(text.replace("%", "%25").replace("\r", "%0D").replace("\n", "%0A"))
        return (
            f"::{level} file={_escape_property(self.file)},line={self.line},col={self.column},"
            f"title={_escape_property(title)}::{text}"
        )

    def as_json(self) -> dict[str, object]:
        return {
            "file": self.file,
            "line": self.line,
            "column": self.column,
            "severity": self.severity,
            "message": self.message,
            "code": self.code,
            "hint": self.hint,
        }


def _escape_property(value: str) -> str:
    return printable(
        value.replace("%", "%25")
        .replace("\r", "%0D")
        .replace("\n", "%0A")
        .replace(":", "%3A")
        .replace(",", "%2C")
    )


# Characters that end a line or act on a terminal: C0 and C1 controls, DEL, and the Unicode
# line and paragraph separators (some readers split lines there too).
_CONTROL = re.compile("[\x00-\x1f\x7f-\x9f\u2028\u2029]")


def printable(text: str) -> str:
    """``text`` with every control character written as an escape (``\\n``, ``\\x1b``,
    ``\\u2028``), so that printed diagnostics are one line each whatever an entry holds."""
    return _CONTROL.sub(_escape_control, text)


def _escape_control(match: re.Match[str]) -> str:
    char = match.group()
    named = {"\n": "\\n", "\r": "\\r", "\t": "\\t"}
    if char in named:
        return named[char]
    return f"\\x{ord(char):02x}" if ord(char) < 0x100 else f"\\u{ord(char):04x}"


class AlmanacError(Exception):
    """Base class: a stage cannot continue (raised by the pipeline, caught by the CLI)."""


class MathSyntaxError(AlmanacError):
    """Raised by `mathparse` for a math string outside the whitelisted grammar.

    ``offset`` is the 0-based character offset inside the math string, so the loader can turn
    it into a line/column in the YAML file.
    """

    def __init__(self, message: str, offset: int, hint: str = "") -> None:
        super().__init__(message)
        self.message = message
        self.offset = offset
        self.hint = hint


class BudgetExceeded(AlmanacError):
    """Raised by the geometry engine when an entry runs out of its time or size budget.

    ``stage`` names what was running (e.g. "Riemann tensor"), so the diagnostic can say it.
    """

    def __init__(self, stage: str, limit: str) -> None:
        super().__init__(f"{stage}: {limit}")
        self.stage = stage
        self.limit = limit

    def __reduce__(self) -> tuple[type, tuple[str, str]]:
        """Crosses process boundaries intact (`run_limited` from a thread runs in a child)."""
        return (BudgetExceeded, (self.stage, self.limit))


class UsageError(AlmanacError):
    """Raised by the CLI for bad command-line usage or unreadable paths (exit status 2)."""
