"""Published spacetimes as hand-built entries for the classification tests.

Each builder names its source. Positions are fake but distinct per key, so tests can assert
that a diagnostic points at the right key.
"""

from __future__ import annotations

from dataclasses import replace

from _entry_builders import schwarzschild

from generator.entry.loader import build_spacetime
from generator.errors import SourcePos
from generator.geometry.curvature import compute_geometry
from generator.model import (
    Claims,
    Entry,
    FreeFunction,
    Geometry,
    MathText,
    Matter,
    Parameter,
    RelatedChart,
    Spacetime,
    VectorClaim,
)

FILE = "catalog/test/case.yaml"
KEYS = (
    "matter", "matter.kind", "matter.cosmological_constant", "matter.potential",
    "matter.density", "matter.pressure", "matter.velocity", "matter.null_direction",
    "matter.principal_pressures", "claims", "claims.petrov_type", "claims.hawking_ellis_type",
    "claims.energy_conditions", "claims.energy_conditions.null",
    "claims.energy_conditions.weak", "claims.energy_conditions.strong",
    "claims.energy_conditions.dominant", "claims.killing_vectors", "claims.killing_vectors.0",
    "claims.killing_vectors.1", "claims.killing_vectors.2", "claims.killing_vectors.3",
    "related", "related.0", "related.1",
)
POSITIONS = {key: SourcePos(FILE, 100 + i, 3) for i, key in enumerate(KEYS)}


def text(value: str) -> MathText:
    return MathText(value, SourcePos(FILE, 1, 1))


def vector(**components: str) -> tuple[tuple[str, MathText], ...]:
    return tuple((name, text(value)) for name, value in components.items())


def make_entry(coordinates: str, line_element: str, parameters: dict[str, str] | None = None,
               domain: tuple[str, ...] = (), matter: Matter | None = None,
               claims: Claims | None = None, functions: dict[str, tuple[str, ...]] | None = None,
               related: tuple[RelatedChart, ...] = (), signature: str = "-+++",
               id: str = "case") -> Entry:
    """An entry as the loader would build it (positions from POSITIONS)."""
    return replace(
        schwarzschild(),
        id=id,
        file=FILE,
        coordinates=tuple(coordinates.split()),
        signature=signature,
        parameters=tuple(Parameter(n, a, n, SourcePos(FILE, 2, 1))
                         for n, a in (parameters or {}).items()),
        functions=tuple(FreeFunction(n, of, "positive", n, SourcePos(FILE, 3, 1))
                        for n, of in (functions or {}).items()),
        domain=tuple(text(d) for d in domain),
        line_element=text(line_element),
        matter=matter or Matter(kind="vacuum"),
        claims=claims or Claims(),
        related=related,
        positions=dict(POSITIONS),
    )


def killing_claims(*vectors: dict[str, str], petrov: str | None = None) -> Claims:
    return Claims(killing_vectors=tuple(VectorClaim(vector(**v), SourcePos(FILE, 50 + i, 5))
                                        for i, v in enumerate(vectors)), petrov_type=petrov)


def prepared(entry: Entry) -> tuple[Entry, Spacetime, Geometry]:
    spacetime, problems = build_spacetime(entry)
    assert spacetime is not None, problems
    return entry, spacetime, compute_geometry(spacetime)


# ---------------------------------------------------------------------------- published metrics

SPHERE = "r**2*(dtheta**2 + sin(theta)**2*dphi**2)"


def schwarzschild_entry(**kw: object) -> Entry:
    """K. Schwarzschild, Sitzungsber. Preuss. Akad. Wiss. (1916) 189; vacuum, Petrov D."""
    return make_entry("t r theta phi", f"-(1 - 2*M/r)*dt**2 + dr**2/(1 - 2*M/r) + {SPHERE}",
                      {"M": "positive"}, ("r > 2*M", "0 < theta < pi"), **kw)


def reissner_nordstrom_entry(**kw: object) -> Entry:
    """H. Reissner, Ann. Phys. 355 (1916) 106; G. Nordström (1918); A_t = -Q/r (from memory)."""
    f = "(1 - 2*M/r + Q**2/r**2)"
    matter = kw.pop("matter", Matter(kind="electrovacuum", potential=vector(t="-Q/r")))
    return make_entry("t r theta phi", f"-{f}*dt**2 + dr**2/{f} + {SPHERE}",
                      {"M": "positive", "Q": "positive"},
                      ("Q < M", "r > M + sqrt(M**2 - Q**2)", "0 < theta < pi"),
                      matter=matter, **kw)


def de_sitter_static_entry(**kw: object) -> Entry:
    """W. de Sitter (1917), static chart; Λ = 3/ell**2 (Griffiths & Podolský 2009, ch. 4)."""
    f = "(1 - r**2/ell**2)"
    return make_entry("t r theta phi", f"-{f}*dt**2 + dr**2/{f} + {SPHERE}",
                      {"ell": "positive"}, ("0 < r", "r < ell", "0 < theta < pi"), **kw)


def flrw_dust_entry(**kw: object) -> Entry:
    """Einstein–de Sitter: a = t**(2/3), dust with rho = 1/(6 pi t**2) (Einstein & de Sitter
    1932; e.g. Stephani et al. 2003 §14.2, from memory)."""
    matter = kw.pop("matter", Matter(kind="perfect-fluid", density=text("1/(6*pi*t**2)"),
                                     pressure=text("0"), velocity=vector(t="1")))
    return make_entry("t x y z", "-dt**2 + t**(4/3)*(dx**2 + dy**2 + dz**2)", {},
                      ("t > 0",), matter=matter, **kw)


def flrw_free_entry(**kw: object) -> Entry:
    """Spatially flat FLRW with a free scale factor a(t): conformally flat (Petrov O)."""
    return make_entry("t x y z", "-dt**2 + a(t)**2*(dx**2 + dy**2 + dz**2)", {},
                      ("t > 0",), functions={"a": ("t",)},
                      matter=kw.pop("matter", Matter(kind="unspecified")), **kw)


def morris_thorne_entry(**kw: object) -> Entry:
    """Morris & Thorne, Am. J. Phys. 56 (1988) 395: zero-tidal-force wormhole with
    b(r) = b0**2/r, written in proper radial distance l (r**2 = b0**2 + l**2)."""
    return make_entry("t l theta phi",
                      "-dt**2 + dl**2 + (b0**2 + l**2)*(dtheta**2 + sin(theta)**2*dphi**2)",
                      {"b0": "positive"}, ("0 < theta < pi",),
                      matter=kw.pop("matter", Matter(kind="unspecified")), **kw)


def alcubierre_entry(**kw: object) -> Entry:
    """Alcubierre, Class. Quantum Grav. 11 (1994) L73, eq. (8), with constant speed v and a
    Gaussian shape function f(r_s) = exp(-r_s**2) in place of the tanh profile."""
    f = "exp(-((x - v*t)**2 + y**2 + z**2))"
    return make_entry("t x y z", f"-dt**2 + (dx - v*{f}*dt)**2 + dy**2 + dz**2",
                      {"v": "positive"}, (), matter=kw.pop("matter", Matter(kind="unspecified")),
                      **kw)


def pp_wave_entry(**kw: object) -> Entry:
    """Vacuum plane wave ds² = -H du² - 2 du dv + dx² + dy² with H = (x**2 - y**2) h(u)
    (Brinkmann 1925; Griffiths & Podolský 2009, ch. 17): Petrov N."""
    return make_entry("u v x y", "-(x**2 - y**2)*h(u)*du**2 - 2*du*dv + dx**2 + dy**2", {},
                      (), functions={"h": ("u",)}, **kw)


def kasner_entry(**kw: object) -> Entry:
    """Kasner (1921) with exponents (-2/7, 3/7, 6/7) (u = 2 in the usual parametrisation):
    vacuum, Petrov I (Stephani et al. 2003, §13.3, from memory)."""
    return make_entry("t x y z", "-dt**2 + t**(-4/7)*dx**2 + t**(6/7)*dy**2 + t**(12/7)*dz**2",
                      {}, ("t > 0",), **kw)


def kerr_entry(**kw: object) -> Entry:
    """Kerr, Phys. Rev. Lett. 11 (1963) 237, Boyer–Lindquist form: vacuum, Petrov D."""
    sigma = "(r**2 + a**2*cos(theta)**2)"
    delta = "(r**2 - 2*M*r + a**2)"
    line = (f"-(1 - 2*M*r/{sigma})*dt**2 - 4*M*a*r*sin(theta)**2/{sigma}*dt*dphi"
            f" + {sigma}/{delta}*dr**2 + {sigma}*dtheta**2"
            f" + (r**2 + a**2 + 2*M*r*a**2*sin(theta)**2/{sigma})*sin(theta)**2*dphi**2")
    return make_entry("t r theta phi", line, {"M": "positive", "a": "positive"},
                      ("a < M", "r > 2*M", "0 < theta < pi"), **kw)
