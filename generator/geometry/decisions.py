"""How every decision of one check was reached, and where its random sample points come from.

Each verdict of an entry says which method decided it: "exact" (normal forms), "by cases"
(exact within each case of a sign split) or "sampled" (agreement at random points only). A
verdict may rest on many decisions made deep inside the engine (a curvature component dropped
as zero, a Ricci component tested for vacuum), so every decision that says "equal" is
recorded in the active ``DecisionLog`` under the subject being checked, and a verdict's
label is the weakest method recorded for it. A log lives in a context variable: a check
opens one (``open_log``) and names the subject it is working on (``subject``).

The log also holds the random source of the sampling fallback. Its points must not be
predictable (a claim aimed at known points would pass), so each run draws a seed from the
system's randomness; a check can be replayed with the same seed (``--seed``), and within a
check the stream is derived from the seed and the entry's id, so replays do not depend on the
order in which entries run.
"""

from __future__ import annotations

import contextlib
import contextvars
import hashlib
import random
import secrets
from collections.abc import Iterator
from dataclasses import dataclass, field

# Weakest last: a verdict is as strong as the weakest decision it rests on.
METHOD_ORDER = ("exact", "by cases", "sampled", "failed")
BASE_SUBJECT = "geometry"  # decisions every verdict of the entry rests on


def weakest(*methods: str) -> str:
    """The weakest of the given methods (unknown ones count as "failed")."""
    ranks = [METHOD_ORDER.index(m) if m in METHOD_ORDER else len(METHOD_ORDER) - 1
             for m in methods]
    return METHOD_ORDER[max(ranks, default=0)]


_RUN_SEED: int | None = None
_UNLOGGED: list[random.Random] = []  # the stream for decisions made outside any check


def set_run_seed(seed: int | None) -> None:
    """Fix the seed of this process's sampling (None: draw a fresh one on first use)."""
    global _RUN_SEED
    _RUN_SEED = seed
    _UNLOGGED.clear()
    _UNLOGGED_POINTS.clear()


def run_seed() -> int:
    """The seed of this run: fixed by ``set_run_seed`` or drawn once from the system."""
    global _RUN_SEED
    if _RUN_SEED is None:
        _RUN_SEED = secrets.randbits(63)
    return _RUN_SEED


def derived_rng(*parts: object) -> random.Random:
    """A random stream determined by the run seed and ``parts`` (e.g. an entry id)."""
    text = "|".join([str(run_seed()), *map(str, parts)])
    return random.Random(int.from_bytes(hashlib.sha256(text.encode()).digest()[:16], "big"))


@dataclass
class DecisionLog:
    """The methods of the "equal" decisions made under each subject, and the sampling stream."""

    rng: random.Random
    methods: dict[str, set[str]] = field(default_factory=dict)
    current: str = BASE_SUBJECT
    # Fallback points drawn so far, per spacetime: every sampled decision of the check uses
    # them (drawing points is most of the fallback's cost), drawing more when it needs more.
    points: dict[object, list] = field(default_factory=dict)

    def record(self, method: str) -> None:
        self.methods.setdefault(self.current, set()).add(method)

    def method_for(self, subject: str) -> str:
        """The weakest method recorded for ``subject`` (dotted prefixes count: a decision made
        for ``claims.energy_conditions`` counts for each condition) or for the geometry."""
        found = set(self.methods.get(BASE_SUBJECT, set()))
        for recorded, methods in self.methods.items():
            if subject == recorded or subject.startswith(recorded + "."):
                found |= methods
        return weakest(*found) if found else "exact"

    def sampled_subjects(self) -> list[str]:
        return sorted(s for s, m in self.methods.items() if "sampled" in m)


_LOG: contextvars.ContextVar[DecisionLog | None] = contextvars.ContextVar("decision_log",
                                                                          default=None)


@contextlib.contextmanager
def open_log(entry_id: str) -> Iterator[DecisionLog]:
    """Record the decisions of one entry's check (sampling stream from the seed and the id)."""
    log = DecisionLog(derived_rng("entry", entry_id))
    token = _LOG.set(log)
    try:
        yield log
    finally:
        _LOG.reset(token)


def active_log() -> DecisionLog | None:
    return _LOG.get()


@contextlib.contextmanager
def subject(name: str) -> Iterator[None]:
    """Attribute the decisions made inside the block to ``name`` (a verdict's subject)."""
    log = _LOG.get()
    if log is None:
        yield
        return
    previous, log.current = log.current, name
    try:
        yield
    finally:
        log.current = previous


def record(method: str) -> None:
    """Note that a decision said "equal" by ``method`` (no log open: nothing to do)."""
    log = _LOG.get()
    if log is not None:
        log.record(method)


_UNLOGGED_POINTS: dict[object, list] = {}


def drawn_points(key: object) -> list:
    """The list of fallback points already drawn for ``key`` (a spacetime) in this check
    (outside a check: in this process, since the last ``set_run_seed``)."""
    log = _LOG.get()
    store = log.points if log is not None else _UNLOGGED_POINTS
    if log is None and len(store) > 64:
        store.clear()
    return store.setdefault(key, [])


def sampling_rng() -> random.Random:
    """The random stream for fallback sample points: the open log's, else a fresh one."""
    log = _LOG.get()
    if log is not None:
        return log.rng
    if not _UNLOGGED:
        _UNLOGGED.append(derived_rng("unlogged"))
    return _UNLOGGED[0]
