"""Hand-built ``Entry`` objects for tests that must not depend on the YAML loader.

The Schwarzschild data is the published solution (K. Schwarzschild 1916); everything else
(base URLs, contributor names) is invented for the tests.
"""

from __future__ import annotations

from dataclasses import replace

from generator.errors import SourcePos
from generator.model import Claim, Claims, Curation, Entry, MathText, Matter, Parameter, Reference

FILE = "catalog/isolated-objects/schwarzschild-test.yaml"


def pos(line: int = 1, column: int = 1) -> SourcePos:
    return SourcePos(FILE, line, column)


def math(text: str, line: int = 1) -> MathText:
    return MathText(text, pos(line))


SCHWARZSCHILD_ORIGINAL = Reference(
    role="original",
    authors=("K. Schwarzschild",),
    title="Über das Gravitationsfeld eines Massenpunktes nach der Einsteinschen Theorie",
    venue="Sitzungsber. Preuss. Akad. Wiss. Berlin 1916, 189",
    year=1916,
    doi=None,
    arxiv="physics/9905030",
    isbn=None,
    locator=None,
    unconfirmed=("venue",),
    pos=pos(30),
)


def schwarzschild(**overrides: object) -> Entry:
    """Schwarzschild in Schwarzschild coordinates, as the loader would build it."""
    entry = Entry(
        id="schwarzschild-test",
        file=FILE,
        family="isolated-objects",
        title="Schwarzschild black hole",
        chart="Schwarzschild coordinates",
        summary="Static spherically symmetric vacuum.",
        notes="",
        tags=("vacuum", "black-hole"),
        coordinates=("t", "r", "theta", "phi"),
        signature="-+++",
        parameters=(Parameter("M", "positive", "mass", pos(8)),),
        functions=(),
        domain=(math("r > 2*M", 10), math("0 < theta < pi", 11)),
        line_element=math(
            "-(1 - 2*M/r)*dt**2 + dr**2/(1 - 2*M/r) + r**2*(dtheta**2 + sin(theta)**2*dphi**2)",
            13,
        ),
        components=(),
        matter=Matter(kind="vacuum", pos=pos(15)),
        claims=Claims(
            scalars=(
                Claim("ricci_scalar", math("0", 18), None, None, pos(18)),
                Claim("kretschmann", math("48*M**2/r**6", 19), "textbook", None, pos(19)),
            ),
            petrov_type="D",
        ),
        references=(SCHWARZSCHILD_ORIGINAL,),
        curation=Curation(added="2026-12-01", by="Test Curator"),
        related=(),
    )
    return replace(entry, **overrides)
