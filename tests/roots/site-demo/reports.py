"""Demo catalog for the site tests: hand-built reports, invented data (see README.md)."""

from __future__ import annotations

import functools
from dataclasses import replace
from pathlib import Path

import sympy

from generator.errors import Diagnostic, SourcePos
from generator.model import (
    CatalogMeta,
    Claim,
    Claims,
    Classification,
    Curation,
    EnergyCondition,
    Entry,
    EntryReport,
    Family,
    FreeFunction,
    Geometry,
    InvariantCount,
    IsometryAlgebra,
    MathText,
    Matter,
    Parameter,
    Publication,
    Reference,
    RelatedChart,
    Revision,
    Spacetime,
    SymmetryResult,
    Tag,
    VectorClaim,
    Verdict,
)


def pos(file: str, line: int = 1) -> SourcePos:
    return SourcePos(file, line, 1)


def math(text: str, file: str = "demo.yaml") -> MathText:
    return MathText(text, pos(file))


def curvature(metric: sympy.Matrix, coords: tuple[sympy.Symbol, ...]) -> Geometry:
    """Plain textbook curvature with the catalog's conventions (demo data only)."""
    n = len(coords)
    inv = sympy.simplify(metric.inv())
    gamma = [[[sympy.simplify(sum(inv[a, e] * (sympy.diff(metric[e, b], coords[c])
              + sympy.diff(metric[e, c], coords[b]) - sympy.diff(metric[b, c], coords[e]))
              for e in range(n)) / 2) for c in range(n)] for b in range(n)] for a in range(n)]

    def riemann_up(a: int, b: int, c: int, d: int) -> sympy.Expr:
        value = sympy.diff(gamma[a][d][b], coords[c]) - sympy.diff(gamma[a][c][b], coords[d])
        value += sum(gamma[a][c][e] * gamma[e][d][b] - gamma[a][d][e] * gamma[e][c][b]
                     for e in range(n))
        return value

    up = {(a, b, c, d): sympy.simplify(riemann_up(a, b, c, d))
          for a in range(n) for b in range(n) for c in range(n) for d in range(n)}
    low = {(a, b, c, d): sympy.simplify(sum(metric[a, e] * up[(e, b, c, d)] for e in range(n)))
           for a in range(n) for b in range(n) for c in range(n) for d in range(n)}
    ricci = sympy.Matrix(n, n, lambda b, d: sympy.simplify(sum(up[(a, b, a, d)] for a in range(n))))
    scalar = sympy.simplify(sum(inv[a, b] * ricci[a, b] for a in range(n) for b in range(n)))
    einstein = sympy.simplify(ricci - scalar * metric / 2)
    mixed = sympy.simplify(inv * einstein)
    kretschmann = sympy.simplify(sum(
        low[(a, b, c, d)] ** 2 * inv[a, a] * inv[b, b] * inv[c, c] * inv[d, d]
        for a in range(n) for b in range(n) for c in range(n) for d in range(n)))
    ricci_mixed = inv * ricci
    ricci_squared = sympy.simplify(sum(ricci_mixed[a, b] * ricci_mixed[b, a]
                                       for a in range(n) for b in range(n)))
    weyl_squared = sympy.simplify(kretschmann - 2 * ricci_squared + scalar ** 2 / 3)
    return Geometry(
        dimension=n,
        metric=sympy.ImmutableMatrix(metric),
        inverse_metric=sympy.ImmutableMatrix(inv),
        christoffel={(a, b, c): gamma[a][b][c] for a in range(n) for b in range(n)
                     for c in range(b, n) if gamma[a][b][c] != 0},
        riemann={k: v for k, v in low.items() if v != 0 and k[0] < k[1] and k[2] < k[3]
                 and (k[0], k[1]) <= (k[2], k[3])},
        ricci=sympy.ImmutableMatrix(ricci),
        ricci_scalar=scalar,
        einstein=sympy.ImmutableMatrix(einstein),
        einstein_mixed=sympy.ImmutableMatrix(mixed),
        weyl=None,
        kretschmann=kretschmann,
        ricci_squared=ricci_squared,
        weyl_squared=weyl_squared,
        engine="demo",
    )


@functools.cache
def lantern_geometry() -> Geometry:
    t, r, theta, phi = sympy.symbols("t r theta phi", real=True)
    m, q = sympy.symbols("m q", positive=True)
    f = 1 - 2 * m / r + q**2 / r**2
    return curvature(sympy.diag(-f, 1 / f, r**2, r**2 * sympy.sin(theta) ** 2), (t, r, theta, phi))


@functools.cache
def tide_geometry() -> Geometry:
    t, x, y, z = sympy.symbols("t x y z", real=True)
    a = sympy.Function("a")
    return curvature(sympy.diag(-1, a(t) ** 2, a(t) ** 2, a(t) ** 2), (t, x, y, z))


def build_demo_site(out: Path, reports: list[EntryReport] | None = None) -> Path:
    """Render the demo catalog (or the given reports) into ``out``."""
    from generator.site.writer import render_site

    render_site(demo_reports() if reports is None else reports, demo_meta(), out)
    return out


def demo_meta() -> CatalogMeta:
    return CatalogMeta(
        version="0.0.1-demo",
        generator_version="0.0.1-demo",
        sympy_version=sympy.__version__,
        families=(
            Family("black-holes", "Black holes", "Demo family of static black holes."),
            Family("cosmology", "Cosmological models", "Demo family of universes."),
        ),
        tags=(
            Tag("black-hole", "Contains an event horizon."),
            Tag("charged", "Carries electric charge."),
            Tag("cosmology", "Used as a model of the universe."),
            Tag("static", "Has a hypersurface-orthogonal timelike Killing vector."),
        ),
        contributing_markdown="# Contributing\n\nAdd one YAML file per entry, then run "
                              "`python -m generator check`.\n",
        publication=Publication(site_address="https://almanac.example/"),
        revisions={"demo-harbour-lantern": (
            Revision("0" * 40, "2026-11-30", "ab" * 32, "Demo: first version of the lantern.",
                     source="id: demo-harbour-lantern\n# the demo text of this revision\n"),
        )},
    )


def lantern_report(title: str = "Harbour lantern (demo)", **text: str) -> EntryReport:
    """A static, charged-looking demo black hole: f = 1 - 2m/r + q**2/r**2 (invented)."""
    file = "catalog/black-holes/demo-harbour-lantern.yaml"
    t, r, theta, phi = sympy.symbols("t r theta phi", real=True)
    m, q = sympy.symbols("m q", positive=True)
    f = 1 - 2 * m / r + q**2 / r**2
    metric = sympy.diag(-f, 1 / f, r**2, r**2 * sympy.sin(theta) ** 2)
    coords = (t, r, theta, phi)
    geometry = lantern_geometry()
    spacetime = Spacetime(
        coordinates=coords, parameters=(m, q), functions=(),
        metric=sympy.ImmutableMatrix(metric), signature="-+++", sign=1,
        domain=(sympy.StrictGreaterThan(r, 2 * m), sympy.And(sympy.StrictLessThan(0, theta),
                                                            sympy.StrictLessThan(theta, sympy.pi)),
                sympy.StrictLessThan(q, m)),
        symbols={"t": t, "r": r, "theta": theta, "phi": phi, "m": m, "q": q},
    )
    entry = Entry(
        id="demo-harbour-lantern", file=file, family="black-holes", title=title,
        chart=text.get("chart", "Lantern-keeper coordinates"),
        summary=text.get("summary", "Invented demo spacetime the observatory club uses to test "
                                    "its notebook; looks like a charged black hole."),
        notes=text.get("notes", "The club's *favourite* toy.\n\n- horizon where `f = 0`\n"),
        tags=("black-hole", "charged", "static"),
        coordinates=("t", "r", "theta", "phi"), signature="-+++",
        parameters=(Parameter("m", "positive", text.get("meaning", "lantern mass"), pos(file)),
                    Parameter("q", "positive", "lantern charge", pos(file))),
        functions=(),
        domain=(math("r > 2*m"), math("0 < theta < pi"), math("q < m")),
        line_element=math("-(1 - 2*m/r + q**2/r**2)*dt**2 + ..."),
        components=(),
        matter=Matter("electrovacuum"),
        claims=Claims(
            scalars=(Claim("ricci_scalar", math("0"), "original", "eq. (2)", pos(file)),
                     Claim("kretschmann", math(str(geometry.kretschmann)), "computed-here", None,
                           pos(file))),
            petrov_type="D",
            killing_vectors=(VectorClaim((("t", math("1")),), pos(file)),
                             VectorClaim((("theta", math("sin(phi)")),
                                          ("phi", math("cos(phi)*cos(theta)/sin(theta)"))),
                                         pos(file))),
        ),
        references=(Reference(
            role="original", authors=(text.get("author", "A. Keeper"), "B. Tide"),
            title=text.get("ref_title", "Notes on a lantern"), venue="Harbour Club Notes 1, 1",
            year=2026, doi=text.get("doi", "10.9999/demo.lantern"),
            arxiv=text.get("arxiv", "2601.00001"), isbn=None, locator="eq. (1)",
            unconfirmed=("venue",), pos=pos(file)),),
        curation=Curation("2026-11-30", text.get("curator", "Demo curator")),
        related=(RelatedChart("demo-tide-cosmos", (("t", math("t")),), pos(file)),
                 RelatedChart("demo-broken-buoy", (("t", math("t")),), pos(file))),
    )
    verdicts = (
        Verdict("claims.ricci_scalar", True, "exact", "both sides reduce to 0", "0", "0",
                "original"),
        Verdict("claims.kretschmann", True, "sampled", text.get("detail", "agree at 12 points"),
                "", ""),
        Verdict("claims.petrov_type", True, "exact", "Weyl scalars of type D", "D", "D"),
        Verdict("matter.kind", True, "exact", "Maxwell field fits", "electrovacuum",
                "electrovacuum"),
    )
    classification = Classification(
        matter_kind="electrovacuum", cosmological_constant=None,
        stress_energy_mixed=sympy.ImmutableMatrix(geometry.einstein_mixed / (8 * sympy.pi)),
        hawking_ellis_type="I", energy_density=q**2 / (8 * sympy.pi * r**4),
        principal_pressures=None,
        energy_conditions=tuple(EnergyCondition(n, "holds", "proved symbolically")
                                for n in ("null", "weak", "strong", "dominant")),
        petrov_type="D", weyl_scalars=None,
        killing_vectors_checked=(Verdict("claims.killing_vectors.0", True, "exact",
                                         "Lie derivative of g vanishes"),),
        related_checked=(Verdict("related.0", True, "exact", "demo map", "", "equal"),),
        geodesic_equations=(),
        symmetry=SymmetryResult(
            IsometryAlgebra(4, 3, 1, ((("t", sympy.Integer(1)),),), False,
                            "demo: integrability conditions", None),
            (), InvariantCount(1, ("R_abcd R^abcd",), "demo relation", True)),
    )
    return EntryReport(entry, file, spacetime, geometry, classification, verdicts, (),
                       content_hash="c0ffee" * 10 + "abcd", seconds=0.5)


def tide_report() -> EntryReport:
    """A demo universe with a free scale factor: no radial coordinate, so no plots."""
    file = "catalog/cosmology/demo-tide-cosmos.yaml"
    t, x, y, z = sympy.symbols("t x y z", real=True)
    a = sympy.Function("a")
    metric = sympy.diag(-1, a(t) ** 2, a(t) ** 2, a(t) ** 2)
    coords = (t, x, y, z)
    geometry = tide_geometry()
    spacetime = Spacetime(
        coordinates=coords, parameters=(), functions=(a(t),),
        metric=sympy.ImmutableMatrix(metric), signature="+---", sign=-1, domain=(),
        symbols={"t": t, "x": x, "y": y, "z": z, "a": a(t)},
    )
    entry = Entry(
        id="demo-tide-cosmos", file=file, family="cosmology", title="Tide-pool cosmos (demo)",
        chart="Comoving tide coordinates", summary="Invented demo universe with a free scale "
        "factor, written by the club in signature +---.", notes="", tags=("cosmology",),
        coordinates=("t", "x", "y", "z"), signature="+---", parameters=(),
        functions=(FreeFunction("a", ("t",), "positive", "tide factor", pos(file)),),
        domain=(), line_element=math("dt**2 - a(t)**2*(dx**2 + dy**2 + dz**2)"), components=(),
        matter=Matter("perfect-fluid"), claims=Claims(),
        references=(Reference("original", ("C. Pool",), "A cosmos in a tide pool",
                              "Harbour Club Notes 2, 7", 2026, None, None, None, None, (),
                              pos(file)),),
        curation=Curation("2026-11-30", "Demo curator"),
        related=(),
    )
    classification = Classification(
        matter_kind="perfect-fluid", cosmological_constant=None, stress_energy_mixed=None,
        hawking_ellis_type="I", energy_density=None, principal_pressures=None,
        energy_conditions=(EnergyCondition("weak", "undecided", "depends on a(t)"),),
        petrov_type="O", weyl_scalars=None, killing_vectors_checked=(), related_checked=(),
        geodesic_equations=(), reasons={"energy_conditions": "depend on the free function a(t)"},
    )
    verdicts = (Verdict("matter.kind", True, "exact", "perfect fluid at rest", "", ""),)
    return EntryReport(entry, file, spacetime, geometry, classification, verdicts, (),
                       content_hash="beef" * 16)


def refused_report() -> EntryReport:
    """A report with an error: must not be published."""
    base = tide_report()
    entry = base.entry
    assert entry is not None
    broken = replace(entry, id="demo-broken-buoy", title="Broken buoy (demo)")
    error = Diagnostic("catalog/cosmology/demo-broken-buoy.yaml", 3, 1, "error",
                       "claimed Ricci scalar disagrees", "claim-mismatch")
    return replace(base, entry=broken, file=error.file, diagnostics=(error,))


def demo_reports() -> list[EntryReport]:
    return [tide_report(), lantern_report(), refused_report()]


HOSTILE = "<script>alert('x')</script><img src=x onerror=alert(1)>{{ 7*7 }}{% raw %}"


def hostile_reports() -> list[EntryReport]:
    """One entry whose every free-text field is hostile."""
    report = lantern_report(
        title=f"Lantern {HOSTILE}",
        chart=f"chart {HOSTILE}",
        summary=f"summary {HOSTILE}",
        notes=f"notes {HOSTILE}\n\n[click](javascript:alert(2)) <a href=\"javascript:alert(3)\">"
              f"x</a> <iframe src=\"https://evil.example\"></iframe>\n",
        meaning=f"meaning {HOSTILE}",
        author=f"Author {HOSTILE}",
        ref_title=f"Ref {HOSTILE}",
        doi="javascript:alert(4)",
        arxiv="javascript:alert(5)",
        curator=f"curator {HOSTILE}",
        detail=f"detail {HOSTILE}",
    )
    return [report]
