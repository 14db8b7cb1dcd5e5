"""A stand-in for a planted pickle, shared by the cache and canonical-pickling tests."""

from __future__ import annotations


class Reduces:
    """Pickles as a call of ``target(*args)``: the shape of every code-running pickle."""

    def __init__(self, target, *args) -> None:
        self.target, self.args = target, args

    def __reduce__(self) -> tuple:
        return (self.target, self.args)
