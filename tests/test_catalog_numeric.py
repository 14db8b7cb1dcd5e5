"""Every shipped entry against an independent numeric evaluation of its curvature.

For each catalog entry, the Ricci and Kretschmann scalars computed by the exact engine are
compared, at a sample point inside the entry's domain, with values obtained from the metric
functions alone by mpmath finite differences (the evaluator in test_against_diffgeom.py works
from the definitions, sharing no code with the engine). Free functions are replaced by concrete
smooth functions (with the sign their assumption asks for) on both sides.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import replace
from pathlib import Path

import mpmath
import pytest
import sympy as sp
from test_against_diffgeom import DIGITS, close, engine_value, numeric_curvature

from generator.entry.catalog import entry_files, vocabulary
from generator.entry.loader import load_entry
from generator.geometry.curvature import compute_geometry
from generator.geometry.sampling import sample_points
from generator.model import Geometry

CATALOG = Path(__file__).resolve().parent.parent / "catalog"
ENTRIES = entry_files([CATALOG])
# Charts whose metric functions are too costly for 40-digit nested finite differences.
HEAVY = {"c-metric", "kerr-de-sitter", "kerr-newman", "kerr-kerr-schild", "plebanski-demianski"}


def concrete_function(applied: sp.Expr, seed: int) -> sp.Lambda:
    """A smooth stand-in for a free function, with the sign its assumption asks for (a merely
    real one is mostly negative, so that e.g. a bang time tB(r) lies before sampled times)."""
    args = [sp.Dummy(f"x{i}") for i in range(len(applied.args))]
    exponent = sum(sp.Rational(k + seed + 1, 11 + k) * x for k, x in enumerate(args))
    body = sp.Rational(3, 2) * sp.exp(exponent / 5)
    if applied.is_negative:
        body = -body
    elif not applied.is_nonnegative:  # a merely real function: let it take negative values
        body = body / 15 - 1
    return sp.Lambda(tuple(args), body)


@pytest.mark.slow
@pytest.mark.parametrize("path", ENTRIES, ids=[p.stem for p in ENTRIES])
def test_engine_matches_finite_differences(path: Path) -> None:
    if path.stem in HEAVY:
        pytest.skip("covered by the symbolic cross-checks; finite differences too costly here")
    loaded = load_entry(path, path.name, vocabulary(CATALOG))
    assert loaded.spacetime is not None, [d.format_text() for d in loaded.diagnostics]
    st = loaded.spacetime
    if st.dimension > 5:
        pytest.skip("finite differences in more than five dimensions are too costly here")
    geometry = compute_geometry(st)
    replacements = {f.func: concrete_function(f, i) for i, f in enumerate(st.functions)}

    def concrete(expr: sp.Expr) -> sp.Expr:
        for head, stand_in in replacements.items():
            expr = expr.replace(head, stand_in)
        return expr.doit()

    metric = concrete(st.metric) if replacements else st.metric
    if replacements:
        geometry = _with_concrete_functions(geometry, concrete)
    # The domain cannot say everything about stand-in functions (e.g. t > tB(r) in LTB):
    # use the first sample point where the concrete metric is real.
    candidates = sample_points(st, 6, seed=11)
    assert candidates, "no sample point in the entry's domain (check reports domain.empty)"
    values = next((v for v in map(_symbols_only, candidates) if _real_at(metric, v)), None)
    assert values is not None, "the concrete metric is complex at every sample point"
    assert_matches_numerics(st.coordinates, geometry, values, metric)


def assert_matches_numerics(coordinates: tuple[sp.Symbol, ...], geometry: Geometry,
                            values: dict, metric: sp.Matrix) -> None:
    with mpmath.workdps(DIGITS):
        point = [mpmath.mpf(sp.N(values[x], DIGITS)) for x in coordinates]
        # parameters as high-precision floats, for the same reason as in engine_value
        concrete = metric.xreplace({k: sp.Float(v, DIGITS + 10) for k, v in values.items()
                                    if k not in coordinates})
        numeric = numeric_curvature(concrete, coordinates, point)
        exact = (engine_value(geometry.ricci_scalar, values),
                 engine_value(geometry.kretschmann, values))
        for name, found, expected in zip(("R", "K"), numeric, exact, strict=True):
            assert close(found, expected), (name, found, expected)
            # the comparison can fail: a value off by one part in a million is told apart
            assert not close(found + mpmath.mpf("1e-6") * max(1, abs(found)), expected)


def _symbols_only(point: dict) -> dict:
    return {k: v for k, v in point.items() if isinstance(k, sp.Symbol)}


def _real_at(metric: sp.Matrix, values: dict) -> bool:
    # Numerically (evalf with subs): an exact substitution of a large rational sample value
    # into a rational power made SymPy test huge integers for perfect powers, for minutes.
    numbers = [sp.N(c, 30, subs=values) for c in metric if c != 0]
    return all(n.is_real for n in numbers)


def _with_concrete_functions(geometry: Geometry, concrete: Callable[[sp.Expr], sp.Expr]
                             ) -> Geometry:
    return replace(geometry, ricci_scalar=concrete(geometry.ricci_scalar),
                   kretschmann=concrete(geometry.kretschmann))
