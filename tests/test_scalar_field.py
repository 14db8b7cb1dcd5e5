"""The scalar-field matter kind: T_ab = ∇_aφ∇_bφ − g_ab(½(∇φ)² + V) and □φ = V′(φ), checked
against published solutions and their mutants.

Sources:
- A. I. Janis, E. T. Newman, J. Winicour, "Reality of the Schwarzschild singularity",
  Phys. Rev. Lett. 20, 878 (1968); in the form ds² = −f^γ dt² + f^−γ dr² + f^(1−γ) r² dΩ²,
  f = 1 − b/r, φ = √(1 − γ²)/(4√π) ln f for G_ab = 8π T_ab (K. S. Virbhadra, "Janis–Newman–
  Winicour and Wyman solutions are the same", Int. J. Mod. Phys. A 12, 4831 (1997); the
  normalisation of φ from memory, confirmed here by the field equations at sample points).
- Power-law inflation: a(t) = t^p with φ = √(p/4π) ln t in an exponential potential,
  V = p(3p − 1)/(8π t²) along the solution (F. Lucchin, S. Matarrese, "Power-law inflation",
  Phys. Rev. D 32, 1316 (1985); the closed form here derived from the Friedmann equations,
  H² = (8π/3)(½φ̇² + V), Ḣ = −4πφ̇², common practice).
"""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest

from generator.cli import main

ROOT = Path(__file__).resolve().parents[1]

JNW = """\
id: jnw-test
title: Fisher–Janis–Newman–Winicour spacetime
chart: areal-type coordinates
summary: Static spherically symmetric massless scalar field.
coordinates: [t, r, theta, phi]
signature: "-+++"
parameters:
  b: {assume: positive, meaning: scale}
  gamma: {assume: positive, meaning: exponent}
domain:
  - r > b
  - 0 < gamma < 1
  - 0 < theta < pi
metric:
  line_element: >-
    -(1 - b/r)**gamma*dt**2 + (1 - b/r)**(-gamma)*dr**2
    + (1 - b/r)**(1 - gamma)*r**2*(dtheta**2 + sin(theta)**2*dphi**2)
matter:
  kind: scalar-field
  scalar: SCALAR
references:
  - role: original
    authors: [A. I. Janis, E. T. Newman, J. Winicour]
    title: Reality of the Schwarzschild singularity
    venue: Physical Review Letters 20, 878
    year: 1968
curation:
  added: "2026-12-03"
  by: Metric Almanac tests
"""

POWER_LAW = """\
id: power-law-test
title: Power-law inflation
chart: comoving coordinates
summary: Flat FLRW driven by a scalar field in an exponential potential.
coordinates: [t, x, y, z]
signature: "-+++"
parameters:
  p: {assume: positive, meaning: power of the scale factor}
domain:
  - t > 0
  - p > 1
metric:
  line_element: -dt**2 + t**(2*p)*(dx**2 + dy**2 + dz**2)
matter:
  kind: scalar-field
  scalar: sqrt(p/(4*pi))*log(t)
  scalar_potential: POTENTIAL
references:
  - role: original
    authors: [F. Lucchin, S. Matarrese]
    title: Power-law inflation
    venue: Physical Review D 32, 1316
    year: 1985
curation:
  added: "2026-12-03"
  by: Metric Almanac tests
"""

FLAT = """\
id: flat-field-test
title: A field on flat space (test)
chart: Cartesian coordinates
summary: Minkowski space with a test scalar field of negligible energy.
coordinates: [t, x, y, z]
signature: "-+++"
domain:
  - t > 0
metric:
  line_element: -dt**2 + dx**2 + dy**2 + dz**2
matter:
  kind: scalar-field
  scalar: FIELD
  scalar_potential: POTENTIAL
references:
  - role: original
    authors: [Metric Almanac tests]
    title: A field on flat space
    venue: Harbour Point Press
    year: 2026
curation:
  added: "2026-12-03"
  by: Metric Almanac tests
"""


@pytest.fixture
def catalog(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> Path:
    folder = tmp_path / "catalog"
    (folder / "universes").mkdir(parents=True)
    for name in ("tags.yaml", "families.yaml"):
        shutil.copyfile(ROOT / "catalog" / name, folder / name)
    monkeypatch.chdir(tmp_path)
    return folder


def check(catalog: Path, text: str, capsys: pytest.CaptureFixture[str]) -> tuple[int, str]:
    entry_id = text.split("\n", 1)[0].removeprefix("id: ")
    path = catalog / "universes" / f"{entry_id}.yaml"
    path.write_text(text, encoding="utf-8")
    status = main(["check", str(path.relative_to(catalog.parent)), "--no-cache", "--jobs", "1"])
    return status, capsys.readouterr().err


@pytest.mark.slow
def test_janis_newman_winicour_is_a_massless_scalar_field(
        catalog: Path, capsys: pytest.CaptureFixture[str]) -> None:
    status, err = check(catalog, JNW.replace("SCALAR", "sqrt(1 - gamma**2)/(4*sqrt(pi))*"
                                             "log(1 - b/r)"), capsys)
    assert status == 0, err


@pytest.mark.slow
@pytest.mark.parametrize("wrong", [
    "sqrt(1 - gamma**2)/(2*sqrt(pi))*log(1 - b/r)",  # twice the field
    "sqrt(1 - gamma**2)/(4*sqrt(pi))*log(1 - b/r) + r/b",  # not a solution of □φ = 0
    "sqrt(1 + gamma**2)/(4*sqrt(pi))*log(1 - b/r)",  # wrong charge for this γ
])
def test_a_wrong_scalar_field_is_rejected(catalog: Path, capsys: pytest.CaptureFixture[str],
                                          wrong: str) -> None:
    status, err = check(catalog, JNW.replace("SCALAR", wrong), capsys)
    assert status == 1
    assert "[matter." in err


@pytest.mark.slow
def test_power_law_inflation_solves_the_field_equations_with_its_potential(
        catalog: Path, capsys: pytest.CaptureFixture[str]) -> None:
    status, err = check(catalog, POWER_LAW.replace("POTENTIAL", "p*(3*p - 1)/(8*pi*t**2)"),
                        capsys)
    assert status == 0, err


@pytest.mark.slow
@pytest.mark.parametrize("wrong", ["p*(3*p + 1)/(8*pi*t**2)", "p*(3*p - 1)/(8*pi*t**3)"])
def test_a_wrong_potential_is_rejected(catalog: Path, capsys: pytest.CaptureFixture[str],
                                       wrong: str) -> None:
    status, err = check(catalog, POWER_LAW.replace("POTENTIAL", wrong), capsys)
    assert status == 1
    assert "[matter." in err


def test_the_field_equation_is_checked_apart_from_the_einstein_equations(
        catalog: Path, capsys: pytest.CaptureFixture[str]) -> None:
    """On flat space a field φ = t with V = −t has a T_ab that Minkowski space cannot carry,
    and □φ ∂_tφ − ∂_tV = 1 ≠ 0: both equations fail, each with its own message."""
    text = FLAT.replace("FIELD", "t").replace("POTENTIAL", "-t")
    status, err = check(catalog, text, capsys)
    assert status == 1
    assert "does not solve its field equation" in err and "[matter.scalar-field]" in err
    assert "[matter.field-equations]" in err
