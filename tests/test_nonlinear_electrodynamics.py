"""The nonlinear-electrodynamics matter kind, checked against published solutions and mutants.

Convention: action ∫ √−g (R/16π − L(F)/4π) with F = ¼ F_ab F^ab, so that
T_ab = (L_F F_ac F_b^c − g_ab L)/4π and ∇_a(L_F F^ab) = 0; L = F is Maxwell's theory.
Sources:
- E. Ayón-Beato, A. García, "The Bardeen model as a nonlinear magnetic monopole", Phys. Lett.
  B 493, 149 (2000), arXiv:gr-qc/0009077: the Bardeen metric with A = g cos θ dφ and
  L(F) = (3/(2sg²)) (√(2g²F)/(1 + √(2g²F)))^(5/2), s = g/2M (from memory); along the field
  F = g²/2r⁴, so L = 3Mg²/(r² + g²)^(5/2) and L_F = 15Mr⁶/(2(r² + g²)^(7/2)) (derived here).
- Reissner–Nordström as the Maxwell case L = F, L_F = 1, A = −Q/r dt (common practice).
"""

from __future__ import annotations

import re
import shutil
from pathlib import Path

import pytest

from generator.cli import main

ROOT = Path(__file__).resolve().parents[1]
FAMILY = ROOT / "catalog" / "isolated-objects"
BARDEEN = (FAMILY / "bardeen.yaml").read_text(encoding="utf-8")
RN = (FAMILY / "reissner-nordstrom.yaml").read_text(encoding="utf-8")


@pytest.fixture
def catalog(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> Path:
    folder = tmp_path / "catalog"
    (folder / "isolated-objects").mkdir(parents=True)
    for name in ("tags.yaml", "families.yaml"):
        shutil.copyfile(ROOT / "catalog" / name, folder / name)
    monkeypatch.chdir(tmp_path)
    return folder


def check(catalog: Path, entry_id: str, text: str,
          capsys: pytest.CaptureFixture[str]) -> tuple[int, str]:
    path = catalog / "isolated-objects" / f"{entry_id}.yaml"
    path.write_text(text, encoding="utf-8")
    status = main(["check", str(path.relative_to(catalog.parent)), "--no-cache", "--jobs", "1"])
    return status, capsys.readouterr().err


def test_the_shipped_bardeen_entry_is_the_nonlinear_monopole() -> None:
    assert "kind: nonlinear-electrodynamics" in BARDEEN
    assert "lagrangian_derivative: 15*M*r**6/(2*(r**2 + g**2)**(7/2))" in BARDEEN


@pytest.mark.slow
@pytest.mark.parametrize(("old", "new", "code"), [
    ("15*M*r**6/(2*", "14*M*r**6/(2*", "matter.lagrangian"),  # dL/dF that is not L's slope
    ("3*M*g**2/(r**2 + g**2)**(5/2)", "3*M*g**2/(r**2 + g**2)**(3/2)", "matter."),  # wrong L
    ("{phi: g*cos(theta)}", "{phi: 2*g*cos(theta)}", "matter."),  # twice the charge
])
def test_a_wrong_lagrangian_or_field_is_rejected(catalog: Path, old: str, new: str, code: str,
                                                 capsys: pytest.CaptureFixture[str]) -> None:
    assert old in BARDEEN
    status, err = check(catalog, "bardeen", BARDEEN.replace(old, new), capsys)
    assert status == 1
    assert f"[{code}" in err


@pytest.mark.slow
def test_maxwell_theory_is_the_linear_case(catalog: Path,
                                           capsys: pytest.CaptureFixture[str]) -> None:
    """Reissner–Nordström read as L = F: F = ¼ F_ab F^ab = −Q²/(2r⁴) for A = −Q/r dt."""
    text = re.sub(r"related:.*?(?=\n\S|\Z)", "", RN, flags=re.S)  # no other entries here
    text = text.replace("  kind: electrovacuum\n", "  kind: nonlinear-electrodynamics\n"
                        "  lagrangian: -Q**2/(2*r**4)\n  lagrangian_derivative: 1\n")
    status, err = check(catalog, "reissner-nordstrom", text, capsys)
    assert status == 0, err
    wrong = text.replace("  lagrangian_derivative: 1\n", "  lagrangian_derivative: 2\n")
    status, err = check(catalog, "reissner-nordstrom", wrong, capsys)
    assert status == 1 and "[matter.lagrangian]" in err
