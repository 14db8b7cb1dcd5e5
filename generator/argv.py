"""Command-line words that argparse would misread, made unambiguous before parsing.

argparse takes any word that begins with '-' for an option, so ``--signature "-+++"`` or
``--metric "-dt**2 + dx**2"`` — the tool's own examples — fail with "expected one argument".
Joining such a value to its option (``--signature=-+++``) is argparse's own unambiguous form.
"""

from __future__ import annotations

import argparse
from collections.abc import Sequence


def join_dash_values(argv: Sequence[str], parser: argparse.ArgumentParser) -> list[str]:
    """``argv`` with every option that takes one value joined to a value beginning with '-'
    (unless that value is itself an option of the parser or of its subcommands)."""
    takes_value, every_option = _options(parser)
    out: list[str] = []
    words = list(argv)
    i = 0
    while i < len(words):
        word = words[i]
        following = words[i + 1] if i + 1 < len(words) else None
        if (word in takes_value and following is not None and following.startswith("-")
                and following.split("=", 1)[0] not in every_option and following != "--"):
            out.append(f"{word}={following}")
            i += 2
            continue
        out.append(word)
        i += 1
    return out


def _options(parser: argparse.ArgumentParser) -> tuple[set[str], set[str]]:
    """(long options that take exactly one value, every option string), subcommands included."""
    takes_value: set[str] = set()
    every: set[str] = set()
    for action in parser._actions:
        every.update(action.option_strings)
        if action.option_strings and action.nargs is None:
            takes_value.update(s for s in action.option_strings if s.startswith("--"))
        if isinstance(action, argparse._SubParsersAction):
            for sub in action.choices.values():
                more_values, more_options = _options(sub)
                takes_value |= more_values
                every |= more_options
    return takes_value, every
