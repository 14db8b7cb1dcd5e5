"""Diagnostics and the few exceptions the pipeline raises.

Every problem found in a contributor's entry becomes a `Diagnostic` with a file position and a
hint, collected and reported together (never a traceback). Exceptions are reserved for the
cases where a stage cannot go on at all.
"""

from __future__ import annotations

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
        """Render as ``path:line:col: severity: message [code]`` plus an indented hint line."""
        head = f"{self.file}:{self.line}:{self.column}: {self.severity}: {self.message}"
        if self.code:
            head += f" [{self.code}]"
        if self.hint:
            head += f"\n    hint: {self.hint}"
        return head

    def format_github(self) -> str:
        """Render as a GitHub Actions workflow command so it lands on the pull request's line."""
        level = {"error": "error", "warning": "warning", "note": "notice"}[self.severity]
        title = self.code or self.severity
        text = self.message + (f" (hint: {self.hint})" if self.hint else "")
        text = text.replace("%", "%25").replace("\r", "%0D").replace("\n", "%0A")
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
    return (
        value.replace("%", "%25")
        .replace("\r", "%0D")
        .replace("\n", "%0A")
        .replace(":", "%3A")
        .replace(",", "%2C")
    )


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


class UsageError(AlmanacError):
    """Raised by the CLI for bad command-line usage or unreadable paths (exit status 2)."""
