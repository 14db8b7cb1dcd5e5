"""Claimed hidden and conformal symmetries, verified like Killing vectors.

* A rank-2 Killing tensor K_ab (symmetric, lower indices) satisfies ∇_(a K_bc) = 0, checked
  component by component for a ≤ b ≤ c as ∇_a K_bc + ∇_b K_ca + ∇_c K_ab = 0 with
  ∇_a K_bc = ∂_a K_bc − Γ^d_ab K_dc − Γ^d_ac K_bd (Carter's tensor of Kerr is the example of
  the trade; Walker & Penrose 1970).
* A conformal Killing vector with factor ψ satisfies L_ξ g_ab = 2ψ g_ab; a homothety is one
  with a constant ψ. The claimed ψ is checked, not just the existence of one, so a wrong factor
  is an error.

Every component goes through the project's zero test (``exactvalues.vanishes``); a failure
names the offending components.
"""

from __future__ import annotations

from collections.abc import Sequence

import sympy

from generator.entry.mathparse import parse_math
from generator.errors import Diagnostic, MathSyntaxError
from generator.geometry.exactvalues import coordinate_names, index_label, vanishes
from generator.model import ConformalClaim, Entry, Geometry, Spacetime, TensorClaim, Verdict
from generator.physics.exact_sources import killing_tensor_vanishes
from generator.physics.symmetry import (
    Unreadable,
    lie_derivative_metric,
    parse_components,
    tally_symmetric,
)


def christoffel_table(geometry: Geometry, n: int) -> list[list[list[sympy.Expr]]]:
    """Γ^a_bc for all index orders from the engine's stored b ≤ c components."""
    table = [[[sympy.Integer(0)] * n for _ in range(n)] for _ in range(n)]
    for (a, b, c), value in geometry.christoffel.items():
        table[a][b][c] = table[a][c][b] = value
    return table


def killing_tensor_residual(components: Sequence[Sequence[sympy.Expr]], geometry: Geometry,
                            coordinates: Sequence[sympy.Symbol]
                            ) -> dict[tuple[int, int, int], sympy.Expr]:
    """∇_a K_bc + ∇_b K_ca + ∇_c K_ab for a ≤ b ≤ c."""
    n = len(coordinates)
    gamma = christoffel_table(geometry, n)
    k = components

    def nabla(a: int, b: int, c: int) -> sympy.Expr:
        return (sympy.diff(k[b][c], coordinates[a])
                - sum(gamma[d][a][b] * k[d][c] + gamma[d][a][c] * k[b][d] for d in range(n)))

    return {(a, b, c): nabla(a, b, c) + nabla(b, c, a) + nabla(c, a, b)
            for a in range(n) for b in range(a, n) for c in range(b, n)}


def check_killing_tensor(entry: Entry, spacetime: Spacetime, geometry: Geometry, index: int,
                         claim: TensorClaim) -> tuple[Verdict, Diagnostic | None]:
    subject = f"claims.killing_tensors.{index}"
    names = coordinate_names(spacetime)
    shown = claim.name or "Killing tensor"
    n = len(names)
    k = [[sympy.Integer(0)] * n for _ in range(n)]
    for (first, second), text in claim.components:
        if first not in names or second not in names:
            bad = first if first not in names else second
            problem = Diagnostic.at(claim.pos, "error", f"'{bad}' is not a coordinate here",
                                    "claim.killing-tensor",
                                    f"use the coordinate names {', '.join(names)}")
            return Verdict(subject, False, "failed", problem.message, shown), problem
        try:
            value = parse_math(text, spacetime.symbols)
        except MathSyntaxError as exc:
            problem = Diagnostic.at(text.pos_at(exc.offset), "error", exc.message,
                                    "math.syntax", exc.hint)
            return Verdict(subject, False, "failed", exc.message, shown), problem
        i, j = names.index(first), names.index(second)
        k[i][j] = k[j][i] = value
    if killing_tensor_vanishes(spacetime, k):
        return _verdict(subject, shown, claim.pos, "Killing tensor", "∇_(a K_bc) = 0", [], [],
                        "exact", "claim.killing-tensor", "")
    residual = killing_tensor_residual(k, geometry, spacetime.coordinates)
    failing, undecided, method = [], [], "exact"
    for key, value in residual.items():
        decision = vanishes(value, spacetime)
        label = f"(∇K)_{index_label(names, key)}"
        if decision.equal is False:
            failing.append(label)
        elif decision.equal is None:
            undecided.append(label)
        elif decision.method == "sampled":
            method = "sampled"
    return _verdict(subject, shown, claim.pos, "Killing tensor", "∇_(a K_bc) = 0", failing,
                    undecided, method, "claim.killing-tensor",
                    "components are K_ab with lower indices; a multiple of the metric by a "
                    "non-constant function is not a Killing tensor")


def check_conformal(entry: Entry, spacetime: Spacetime, key: str, index: int,
                    claim: ConformalClaim) -> tuple[Verdict, Diagnostic | None]:
    """``key``: conformal_killing_vectors or homotheties (whose factor must be constant)."""
    subject = f"claims.{key}.{index}"
    names = coordinate_names(spacetime)
    kind = "homothety" if key == "homotheties" else "conformal Killing vector"
    shown = ("{" + ", ".join(f"{k}: {v.text}" for k, v in claim.vector) + "}, ψ = "
             + claim.factor.text)
    template = Diagnostic.at(claim.pos, "error", "", "claim." + key.replace("_", "-"))
    try:
        xi = parse_components(claim.vector, names, spacetime.symbols, template)
        factor = parse_math(claim.factor, spacetime.symbols)
    except Unreadable as exc:
        return Verdict(subject, False, "failed", exc.diagnostic.message, shown), exc.diagnostic
    except MathSyntaxError as exc:
        problem = Diagnostic.at(claim.factor.pos_at(exc.offset), "error", exc.message,
                                "math.syntax", exc.hint)
        return Verdict(subject, False, "failed", exc.message, shown), problem
    if kind == "homothety" and (factor.free_symbols & set(spacetime.coordinates)
                                or factor.atoms(sympy.Function) & set(spacetime.functions)):
        problem = Diagnostic.at(claim.pos, "error", f"the factor of a homothety must be "
                                f"constant, not {claim.factor.text}", "claim.homotheties",
                                "list it under conformal_killing_vectors instead")
        return Verdict(subject, False, "exact", problem.message, shown), problem
    lie = lie_derivative_metric(xi, spacetime.metric, spacetime.coordinates)
    failing, undecided, method = tally_symmetric(
        len(names), lambda a, b: vanishes(lie[a, b] - 2 * factor * spacetime.metric[a, b],
                                          spacetime),
        lambda a, b: f"(L_ξ g − 2ψ g)_{index_label(names, (a, b))}")
    return _verdict(subject, shown, claim.pos, kind, "L_ξ g_ab = 2ψ g_ab", failing, undecided,
                    method, "claim." + key.replace("_", "-"),
                    "components are contravariant (ξ^a) and ψ is half the factor of g in L_ξ g")


def _verdict(subject: str, shown: str, pos, kind: str, holds: str, failing: list[str],
             undecided: list[str], method: str, code: str, hint: str
             ) -> tuple[Verdict, Diagnostic | None]:
    if not failing and not undecided:
        return Verdict(subject, True, method, holds, shown, kind), None
    detail = (", ".join(failing) + " ≠ 0") if failing else ""
    if undecided:
        detail += ("; " if detail else "") + "undecided: " + ", ".join(undecided)
    message = (f"claimed {kind} {shown} fails {holds}: {detail}" if failing
               else f"claimed {kind} {shown} could not be verified: {detail}")
    return (Verdict(subject, False, "exact" if failing else "failed", detail, shown,
                    f"not a {kind}" if failing else "undecided"),
            Diagnostic.at(pos, "error", message, code, hint))


def check_all(entry: Entry, spacetime: Spacetime, geometry: Geometry
              ) -> tuple[list[Verdict], list[Diagnostic]]:
    results = [check_killing_tensor(entry, spacetime, geometry, i, claim)
               for i, claim in enumerate(entry.claims.killing_tensors)]
    results += [check_conformal(entry, spacetime, "conformal_killing_vectors", i, claim)
                for i, claim in enumerate(entry.claims.conformal_killing_vectors)]
    results += [check_conformal(entry, spacetime, "homotheties", i, claim)
                for i, claim in enumerate(entry.claims.homotheties)]
    return [v for v, _ in results], [d for _, d in results if d is not None]
