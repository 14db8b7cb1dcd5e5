"""A real, throw-away git repository for tests of history and changed-entry selection.

The demo entries are a scenario of our own (the "Lantern" toy spacetimes of the invented
Harbourtown observatory); they are not curated solutions.
"""

from __future__ import annotations

import os
import subprocess
from pathlib import Path

DEMO_ENTRY = """\
# yaml-language-server: $schema=../../schema/entry.schema.json
id: {id}
title: Lantern toy spacetime
chart: Harbour coordinates
summary: A two-dimensional demo metric of the Harbourtown observatory.
notes: {notes}
coordinates: [t, x]
signature: "-+"
parameters:
  k: {{assume: positive, meaning: lamp strength}}
domain:
  - x > 0
metric:
  line_element: {metric}
matter:
  kind: unspecified
references:
  - role: original
    authors: [A. Lamplighter]
    title: Notes on a lantern
    venue: Harbourtown Notes 1, 1
    year: 2026
curation:
  added: 2026-12-01
  by: Demo Curator
"""


def demo_entry(
    entry_id: str, metric: str = "-(1 + k*x**2)*dt**2 + dx**2", notes: str = "First notes."
) -> str:
    return DEMO_ENTRY.format(id=entry_id, metric=metric, notes=notes)


class Sandbox:
    """A git repository in ``root`` with a fixed identity and clock (deterministic commits)."""

    def __init__(self, root: Path) -> None:
        self.root = root
        self.tick = 0
        root.mkdir(parents=True, exist_ok=True)
        self.git("init", "-q", "-b", "main")

    def git(self, *args: str) -> str:
        env = {
            **os.environ,
            "GIT_AUTHOR_NAME": "Demo Curator",
            "GIT_AUTHOR_EMAIL": "curator@harbourtown.invalid",
            "GIT_COMMITTER_NAME": "Demo Curator",
            "GIT_COMMITTER_EMAIL": "curator@harbourtown.invalid",
            "GIT_AUTHOR_DATE": f"2026-11-{1 + self.tick:02d}T12:00:00+00:00",
            "GIT_COMMITTER_DATE": f"2026-11-{1 + self.tick:02d}T12:00:00+00:00",
            "GIT_CONFIG_GLOBAL": os.devnull,
            "GIT_CONFIG_NOSYSTEM": "1",
        }
        done = subprocess.run(
            ["git", *args], cwd=self.root, env=env, capture_output=True, text=True, check=True
        )
        return done.stdout

    def write(self, relative: str, text: str) -> Path:
        path = self.root / relative
        path.parent.mkdir(parents=True, exist_ok=True)
        path.write_text(text, encoding="utf-8")
        return path

    def commit(self, message: str) -> str:
        self.tick += 1
        self.git("add", "-A")
        self.git("commit", "-q", "-m", message)
        return self.git("rev-parse", "HEAD").strip()
