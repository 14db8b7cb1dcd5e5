"""The dilaton–Maxwell matter kind, checked against published solutions and their mutants.

Convention (Einstein frame): action ∫ √−g (R − 2(∇φ)² − e^(−2aφ) F_ab F^ab)/16π, so that
T_ab = [∇_aφ∇_bφ − ½ g_ab (∇φ)² + e^(−2aφ)(F_ac F_b^c − ¼ g_ab F_cd F^cd)]/4π, with the field
equations ∇_a(e^(−2aφ) F^ab) = 0 and □φ = −(a/2) e^(−2aφ) F_cd F^cd.

Sources:
- D. Garfinkle, G. T. Horowitz, A. Strominger, "Charged black holes in string theory",
  Phys. Rev. D 43, 3140 (1991): the magnetically charged solution for a = 1,
  ds² = −(1 − 2M/r) dt² + dr²/(1 − 2M/r) + r(r − Q² e^(−2φ₀)/M) dΩ²,
  e^(−2φ) = e^(−2φ₀)(1 − Q² e^(−2φ₀)/(M r)), F = Q sin θ dθ ∧ dφ; the electric one by
  φ → −φ, F → e^(−2φ) ⋆F (form and normalisation from memory; here φ₀ = 0).
- Reissner–Nordström as the case a = 0, φ = 0, where the kind is Maxwell's theory
  (common practice).
"""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest

from generator.cli import main

ROOT = Path(__file__).resolve().parents[1]

GHS = """\
id: ghs-test
title: Garfinkle–Horowitz–Strominger black hole
chart: Schwarzschild-like coordinates (Einstein frame)
summary: Static charged dilaton black hole.
coordinates: [t, r, theta, phi]
signature: "-+++"
parameters:
  M: {assume: positive, meaning: mass}
  Q: {assume: positive, meaning: charge}
domain:
  - Q**2 < 2*M**2
  - r > 2*M
  - 0 < theta < pi
metric:
  line_element: >-
    -(1 - 2*M/r)*dt**2 + dr**2/(1 - 2*M/r)
    + r*(r - Q**2/M)*(dtheta**2 + sin(theta)**2*dphi**2)
matter:
  kind: dilaton-maxwell
  coupling: COUPLING
  scalar: SCALAR
  potential: POTENTIAL
references:
  - role: original
    authors: [D. Garfinkle, G. T. Horowitz, A. Strominger]
    title: Charged black holes in string theory
    venue: Physical Review D 43, 3140
    year: 1991
curation:
  added: "2026-12-03"
  by: Metric Almanac tests
"""

MAGNETIC = {"COUPLING": "1", "SCALAR": "-log(1 - Q**2/(M*r))/2",
            "POTENTIAL": "{phi: -Q*cos(theta)}"}
ELECTRIC = {"COUPLING": "1", "SCALAR": "log(1 - Q**2/(M*r))/2", "POTENTIAL": "{t: -Q/r}"}

RN = """\
id: rn-test
title: Reissner–Nordström black hole
chart: Schwarzschild-like coordinates
summary: Static charged black hole.
coordinates: [t, r, theta, phi]
signature: "-+++"
parameters:
  M: {assume: positive, meaning: mass}
  Q: {assume: real, meaning: charge}
domain:
  - Q**2 < M**2
  - r > 2*M
  - 0 < theta < pi
metric:
  line_element: >-
    -(1 - 2*M/r + Q**2/r**2)*dt**2 + dr**2/(1 - 2*M/r + Q**2/r**2)
    + r**2*(dtheta**2 + sin(theta)**2*dphi**2)
matter:
  kind: dilaton-maxwell
  coupling: COUPLING
  scalar: "0"
  potential: {t: -Q/r}
references:
  - role: original
    authors: [H. Reissner]
    title: Über die Eigengravitation des elektrischen Feldes nach der Einsteinschen Theorie
    venue: Annalen der Physik 355, 106
    year: 1916
curation:
  added: "2026-12-03"
  by: Metric Almanac tests
"""


@pytest.fixture
def catalog(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> Path:
    folder = tmp_path / "catalog"
    (folder / "tests").mkdir(parents=True)
    for name in ("tags.yaml", "families.yaml"):
        shutil.copyfile(ROOT / "catalog" / name, folder / name)
    families = folder / "families.yaml"
    families.write_text(families.read_text(encoding="utf-8")
                        + "tests:\n  title: Tests\n  about: Test entries.\n", encoding="utf-8")
    monkeypatch.chdir(tmp_path)
    return folder


def fill(template: str, values: dict[str, str]) -> str:
    for key, value in values.items():
        template = template.replace(key, value)
    return template


def check(catalog: Path, text: str, capsys: pytest.CaptureFixture[str]) -> tuple[int, str]:
    entry_id = text.split("\n", 1)[0].removeprefix("id: ")
    path = catalog / "tests" / f"{entry_id}.yaml"
    path.write_text(text, encoding="utf-8")
    status = main(["check", str(path.relative_to(catalog.parent)), "--no-cache", "--jobs", "1"])
    captured = capsys.readouterr()
    return status, captured.err + captured.out


@pytest.mark.slow
@pytest.mark.parametrize("values", [MAGNETIC, ELECTRIC], ids=["magnetic", "electric"])
def test_the_published_dilaton_black_holes_pass(catalog: Path, values: dict[str, str],
                                                capsys: pytest.CaptureFixture[str]) -> None:
    status, out = check(catalog, fill(GHS, values), capsys)
    assert status == 0, out


@pytest.mark.slow
@pytest.mark.parametrize(("values", "key", "wrong", "code"), [
    # φ with the electric sign in the magnetic solution: the dilaton equation fails.
    (MAGNETIC, "SCALAR", "log(1 - Q**2/(M*r))/2", "matter.dilaton"),
    # the coupling of a different theory (a = √3, Kaluza–Klein) with the a = 1 fields
    (MAGNETIC, "COUPLING", "sqrt(3)", "matter."),
    # no coupling at all: Einstein–Maxwell plus a free scalar, which this metric does not solve
    (MAGNETIC, "COUPLING", "0", "matter."),
    # twice the magnetic charge
    (MAGNETIC, "POTENTIAL", "{phi: -2*Q*cos(theta)}", "matter."),
    # the electric field without its dilaton factor's partner: φ of the magnetic case
    (ELECTRIC, "SCALAR", "-log(1 - Q**2/(M*r))/2", "matter."),
    # a coupling that varies from place to place is refused outright
    (MAGNETIC, "COUPLING", "r/M", "matter.coupling"),
])
def test_a_wrong_dilaton_coupling_or_field_is_rejected(
        catalog: Path, values: dict[str, str], key: str, wrong: str, code: str,
        capsys: pytest.CaptureFixture[str]) -> None:
    status, out = check(catalog, fill(GHS, {**values, key: wrong}), capsys)
    assert status == 1
    assert f"[{code}" in out


@pytest.mark.slow
def test_without_dilaton_the_kind_is_maxwell_theory(catalog: Path,
                                                    capsys: pytest.CaptureFixture[str]) -> None:
    """a = 0 and φ = 0: Reissner–Nordström must pass; with a = 1 it still passes (φ = 0 makes
    the coupling 1) but the dilaton equation then demands F_cd F^cd = 0, which fails."""
    status, out = check(catalog, RN.replace("COUPLING", "0"), capsys)
    assert status == 0, out
    status, out = check(catalog, RN.replace("COUPLING", "1"), capsys)
    assert status == 1 and "[matter.dilaton]" in out
