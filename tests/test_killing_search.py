"""The search for Killing vectors an entry does not list: it completes the basis of flat space
in spherical and Rindler charts, of the round 2-sphere and of a conical-deficit string; every
vector it returns satisfies Killing's equation (cross-checked with SymPy's diffgeom), and a
corrupted candidate is never returned."""

from __future__ import annotations

import pytest
import sympy
from classify_cases import make_entry, prepared
from sympy.diffgeom import CoordSystem, Manifold, Patch, TensorProduct

from generator.model import Spacetime
from generator.physics import killing_search, lie_algebra
from generator.physics.killing_search import is_killing, search_killing_vectors
from generator.physics.lie_algebra import structure
from generator.physics.symmetry_stage import count_diagnostics

SPHERE = "r**2*(dtheta**2 + sin(theta)**2*dphi**2)"


def spacetime_of(coordinates: str, line: str, parameters: dict[str, str] | None = None,
                 domain: tuple[str, ...] = (), signature: str = "-+++") -> Spacetime:
    return prepared(make_entry(coordinates, line, parameters, domain,
                               signature=signature))[1]


def rotations(st: Spacetime) -> list[list[sympy.Expr]]:
    """∂_φ and the two other rotations of the round sphere in (θ, φ) (common practice, e.g.
    Carroll 2004 §3.8), padded with zeros for the other coordinates."""
    names = [str(x) for x in st.coordinates]
    theta, phi = st.coordinates[names.index("theta")], st.coordinates[names.index("phi")]
    vectors = [{phi: 1},
               {theta: sympy.sin(phi), phi: sympy.cos(phi) * sympy.cos(theta) / sympy.sin(theta)},
               {theta: sympy.cos(phi), phi: -sympy.sin(phi) * sympy.cos(theta)
                / sympy.sin(theta)}]
    return [[sympy.sympify(v.get(x, 0)) for x in st.coordinates] for v in vectors]


def minkowski_spherical() -> Spacetime:
    return spacetime_of("t r theta phi", f"-dt**2 + dr**2 + {SPHERE}", {},
                        ("r > 0", "0 < theta < pi"))


def test_minkowski_in_spherical_chart_gets_all_ten() -> None:
    # Minkowski space has the 10 Killing vectors of the Poincaré algebra (common practice);
    # listed: ∂_t and the three rotations, so the boosts and spatial translations are missing.
    st = minkowski_spherical()
    listed = [[sympy.Integer(1), 0, 0, 0], *rotations(st)]
    result = search_killing_vectors(st, listed, 10)
    assert result.complete and len(result.found) == 6
    assert "6 of the 6 missing Killing vectors found by the tool" in result.summary
    assert all(is_killing(xi, st) for xi in result.found)
    # The translation along z, ∂_z = cos θ ∂_r − sin θ/r ∂_θ (common practice), lies in the
    # span of what was found: it is among the found vectors up to sign.
    _t, r, theta, _phi = st.coordinates
    z_translation = (0, sympy.cos(theta), -sympy.sin(theta) / r, 0)
    assert any(all(sympy.simplify(a - s * b) == 0 for a, b in zip(xi, z_translation,
                                                                  strict=True))
               for xi in result.found for s in (1, -1))


PLAIN = sympy.symbols("t r theta phi", real=True)
CHART = CoordSystem("spherical", Patch("U", Manifold("flat", 4)), list(PLAIN))


def diffgeom_lie_derivative(xi: list[sympy.Expr]) -> list[list[sympy.Expr]]:
    """(L_ξ g)_ab = ξ^c ∂_c g_ab + g_cb ∂_a ξ^c + g_ac ∂_b ξ^c of flat space in spherical
    coordinates, with g_ab = g(e_a, e_b) evaluated by SymPy's diffgeom from the line element
    and the rest by plain SymPy differentiation and ``simplify`` (neither the project's
    rational-function engine nor its zero test takes part)."""
    scalars = CHART.base_scalars()
    dt, dr, dth, dph = CHART.base_oneforms()
    e = CHART.base_vectors()
    _, R, TH, _ = scalars
    metric = (-TensorProduct(dt, dt) + TensorProduct(dr, dr) + R**2 * TensorProduct(dth, dth)
              + R**2 * sympy.sin(TH) ** 2 * TensorProduct(dph, dph))
    back = dict(zip(scalars, PLAIN, strict=True))
    g = [[sympy.sympify(metric.rcall(e[a], e[b])).subs(back) for b in range(4)]
         for a in range(4)]
    x = PLAIN
    return [[sympy.simplify(sum(xi[c] * sympy.diff(g[a][b], x[c])
                                + g[c][b] * sympy.diff(xi[c], x[a])
                                + g[a][c] * sympy.diff(xi[c], x[b]) for c in range(4)))
             for b in range(4)] for a in range(4)]


def test_found_vectors_pass_sympy_diffgeom() -> None:
    st = minkowski_spherical()
    listed = [[sympy.Integer(1), 0, 0, 0], *rotations(st)]
    found = search_killing_vectors(st, listed, 10).found
    names = {str(x): x for x in PLAIN}
    for xi in found[:3]:
        # Re-read from the printed form (our own output, in a test), so that diffgeom sees
        # only its own symbols.
        plain = [sympy.sympify(str(c), locals=names) for c in xi]
        assert diffgeom_lie_derivative(plain) == [[0] * 4 for _ in range(4)]
    # The independent computation does notice a wrong vector: a boost with one sign flipped.
    t, r, theta, _phi = sympy.symbols("t r theta phi", real=True)
    wrong = [r * sympy.cos(theta), -t * sympy.cos(theta), t * sympy.sin(theta) / r, 0]
    assert diffgeom_lie_derivative(wrong) != [[0] * 4 for _ in range(4)]


def test_round_two_sphere_from_one_rotation() -> None:
    # S²: three Killing vectors, so(3) (common practice). Listed: ∂_φ only.
    st = spacetime_of("theta phi", "dtheta**2 + sin(theta)**2*dphi**2", {},
                      ("0 < theta < pi",), signature="++")
    result = search_killing_vectors(st, [[sympy.Integer(0), sympy.Integer(1)]], 3)
    assert result.complete and len(result.found) == 2
    basis = [[sympy.Integer(0), sympy.Integer(1)], *result.found]
    assert structure(st, basis, True)[1] == "so(3)"


def test_rindler_needs_exponentials_of_time() -> None:
    # Rindler's chart of flat space, −x² dt² + dx² + dy² + dz²: the translations in the
    # Minkowski time and x directions carry e^{±t} (W. Rindler, Am. J. Phys. 34 (1966) 1174;
    # common practice). Listed: ∂_t, ∂_y, ∂_z and the rotation in y, z.
    st = spacetime_of("t x y z", "-x**2*dt**2 + dx**2 + dy**2 + dz**2", {}, ("x > 0",))
    t, _x, y, z = st.coordinates
    listed = [[1, 0, 0, 0], [0, 0, 1, 0], [0, 0, 0, 1], [0, 0, -z, y]]
    listed = [[sympy.sympify(c) for c in v] for v in listed]
    result = search_killing_vectors(st, listed, 10)
    assert result.complete and len(result.found) == 6
    assert all(f.has(sympy.exp(t)) or f.has(sympy.exp(-t)) for xi in result.found
               for f in [sympy.Add(*xi)])


@pytest.mark.slow
def test_conical_deficit_rate_is_read_off_the_metric() -> None:
    # A straight cosmic string, −dt² + dr² + (1 − 4μ)² r² dφ² + dz², is locally flat
    # (A. Vilenkin, Phys. Rev. D 23 (1981) 852): 10 local Killing vectors, the missing six
    # depend on φ through cos((1 − 4μ)φ) and sin((1 − 4μ)φ) (from memory).
    st = spacetime_of("t r phi z", "-dt**2 + dr**2 + (1 - 4*mu)**2*r**2*dphi**2 + dz**2",
                      {"mu": "positive"}, ("r > 0", "mu < 1/4"))
    t, _r, phi, z = st.coordinates
    listed = [[1, 0, 0, 0], [0, 0, 0, 1], [0, 0, 1, 0], [z, 0, 0, t]]
    listed = [[sympy.sympify(c) for c in v] for v in listed]
    result = search_killing_vectors(st, listed, 10)
    assert result.complete and len(result.found) == 6
    assert any(xi[1].has(sympy.cos(phi * (1 - 4 * st.parameters[0]))) for xi in result.found)


# ------------------------------------------------------------------ mutations


def test_verification_rejects_a_wrong_coefficient_and_a_dropped_term() -> None:
    st = minkowski_spherical()
    t, r, theta, _phi = st.coordinates
    boost = [-r * sympy.cos(theta), -t * sympy.cos(theta), t * sympy.sin(theta) / r, 0]
    assert is_killing(boost, st)
    assert not is_killing([2 * boost[0], *boost[1:]], st)  # a wrong coefficient
    assert not is_killing([boost[0], boost[1], 0, 0], st)  # a dropped term


def test_a_corrupted_reconstruction_is_never_returned(monkeypatch) -> None:
    # Every rational the search rebuilds is off by a different amount (1, 2, 3, ...), so the
    # ratios between terms are wrong: no candidate may survive the check.
    real = killing_search.rational_reconstruction
    calls = []

    def corrupted(a: int, p: int) -> sympy.Rational | None:
        calls.append(a)
        value = real(a, p)
        return None if value is None else value + len(calls)

    monkeypatch.setattr(killing_search, "rational_reconstruction", corrupted)
    st = spacetime_of("theta phi", "dtheta**2 + sin(theta)**2*dphi**2", {},
                      ("0 < theta < pi",), signature="++")
    result = search_killing_vectors(st, [[sympy.Integer(0), sympy.Integer(1)]], 3)
    assert result.found == () and not result.complete and result.rejected > 0
    assert "0 of the 2 missing" in result.summary


def test_the_search_returns_only_what_the_check_accepts(monkeypatch) -> None:
    monkeypatch.setattr(killing_search, "is_killing", lambda xi, st: False)
    st = spacetime_of("theta phi", "dtheta**2 + sin(theta)**2*dphi**2", {},
                      ("0 < theta < pi",), signature="++")
    result = search_killing_vectors(st, [[sympy.Integer(0), sympy.Integer(1)]], 3)
    assert result.found == () and "the rest are not in the searched ansatz" in result.summary


def test_rational_reconstruction_round_trip() -> None:
    p = 2147483647
    for q in (sympy.Rational(1, 3), sympy.Rational(-7, 2), sympy.Integer(5)):
        a = int(q.p) * pow(int(q.q), -1, p) % p
        assert killing_search.rational_reconstruction(a, p) == q


def test_warning_says_what_the_tool_found() -> None:
    entry = make_entry("theta phi", "dtheta**2 + sin(theta)**2*dphi**2", {},
                       ("0 < theta < pi",), signature="++")
    from generator.physics.isometry import IsometryDimension
    computed = IsometryDimension(3, 2, 2, "", None)
    found = killing_search.SearchResult(((sympy.Integer(1), sympy.Integer(0)),), False,
                                        "1 of the 2 missing")
    [warning] = count_diagnostics(entry, computed, 1, 1, True, found, ["theta", "phi"])
    assert warning.severity == "warning" and "(2 missing)" in warning.message
    assert "the tool found 1 of them and the list is still incomplete" in warning.message
    assert "{theta: 1}" in warning.hint
    done = killing_search.SearchResult(((sympy.Integer(1), sympy.Integer(0)),) * 2, True, "")
    [warning] = count_diagnostics(entry, computed, 1, 1, True, done, ["theta", "phi"])
    assert "the tool found 2 of them, so its basis is complete" in warning.message


def einstein_de_sitter() -> Spacetime:
    """Flat dust FLRW, a ∝ t^{2/3} (Einstein & de Sitter 1932): its six isometries are the
    translations and rotations of the flat slices (common practice)."""
    return spacetime_of("t x y z", "-dt**2 + t**(4/3)*(dx**2 + dy**2 + dz**2)", {}, ("t > 0",))


def test_a_power_of_a_coordinate_gives_plain_translations_and_rotations() -> None:
    # √(g_xx) = t^{2/3} is a power of the atom t^{1/3}: no separate √(t^{4/3}) atom, so the
    # vectors come out as ∂_x, y∂_x − x∂_y, … with constant components.
    st = einstein_de_sitter()
    result = search_killing_vectors(st, [], 6)
    assert result.complete and len(result.found) == 6
    t = st.coordinates[0]
    assert all(not sympy.sympify(c).has(t) for xi in result.found for c in xi)
    table, _ = structure(st, list(result.found), True)
    assert len(table) > 0  # rotations do not commute: the table is not empty


def test_a_table_with_cube_roots_of_numbers_is_refused_not_solved() -> None:
    # The form the search used to give: √(t^{4/3})/t^{2/3} ∂_x. At rational sample points
    # the bracket equations hold numbers such as 2^{2/3}; the table is refused (no brackets,
    # no name) instead of handing SymPy's solver a number field.
    st = einstein_de_sitter()
    t, x, y, _z = st.coordinates
    unit = sympy.sqrt(t ** sympy.Rational(4, 3)) / t ** sympy.Rational(2, 3)
    zero = sympy.Integer(0)
    basis = [[zero, unit, zero, zero], [zero, y * unit, -x * unit, zero],
             [zero, zero, unit, zero]]
    assert lie_algebra.structure(st, basis, False) == ((), None)
    assert lie_algebra._higher_numeric_roots([sympy.Integer(2) ** sympy.Rational(2, 3) * x])
    assert not lie_algebra._higher_numeric_roots([sympy.sqrt(3) * x])
