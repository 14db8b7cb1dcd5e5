"""Published metrics built by hand as ``Spacetime`` objects (no YAML loader involved).

Each builder names the solution's original publication; the line elements are the standard
textbook forms (recalled from memory, and checked here against their known invariants rather
than trusted). Used by the geometry tests and by bench/benchmark.py.
"""

from __future__ import annotations

import sympy as sp

from generator.model import Spacetime

t, r, theta, phi = sp.symbols("t r theta phi", real=True)
x, y, z = sp.symbols("x y z", real=True)
M, Q, a, Lam, rho = sp.symbols("M Q a Lambda rho", positive=True)
SPHERICAL = (t, r, theta, phi)
ANGLES_DOMAIN = (sp.Gt(theta, 0), sp.Lt(theta, sp.pi))


def spacetime(
    coords: tuple,
    params: tuple,
    metric: sp.Matrix,
    domain: tuple = (),
    functions: tuple = (),
    signature: str = "-+++",
) -> Spacetime:
    return Spacetime(
        coordinates=tuple(coords),
        parameters=tuple(params),
        functions=tuple(functions),
        metric=sp.ImmutableMatrix(metric),
        signature=signature,
        sign=1,
        domain=tuple(domain),
    )


def static_spherical(f: sp.Expr, params: tuple, domain: tuple) -> Spacetime:
    """-f dt^2 + dr^2/f + r^2 dOmega^2."""
    metric = sp.diag(-f, 1 / f, r**2, r**2 * sp.sin(theta) ** 2)
    return spacetime(SPHERICAL, params, metric, domain + ANGLES_DOMAIN)


def schwarzschild() -> Spacetime:
    """K. Schwarzschild, Sitzungsber. Preuss. Akad. Wiss. (1916) 189."""
    return static_spherical(1 - 2 * M / r, (M,), (sp.Gt(r, 2 * M),))


def reissner_nordstrom() -> Spacetime:
    """H. Reissner, Ann. Phys. 50 (1916) 106; G. Nordström, Proc. KNAW 20 (1918) 1238."""
    return static_spherical(1 - 2 * M / r + Q**2 / r**2, (M, Q), (sp.Gt(r, 2 * M + Q),))


def de_sitter_static() -> Spacetime:
    """W. de Sitter, MNRAS 78 (1917) 3; static chart inside the cosmological horizon."""
    return static_spherical(1 - Lam * r**2 / 3, (Lam,), (sp.Gt(r, 0), sp.Lt(Lam * r**2, 3)))


def round_sphere() -> Spacetime:
    """Two-sphere of radius rho (Riemannian)."""
    metric = sp.diag(rho**2, rho**2 * sp.sin(theta) ** 2)
    return spacetime((theta, phi), (rho,), metric, ANGLES_DOMAIN, signature="++")


def flrw_flat() -> Spacetime:
    """Spatially flat Friedmann–Lemaître–Robertson–Walker metric with a free scale factor."""
    scale = sp.Function("a", positive=True)(t)
    metric = sp.diag(-1, scale**2, scale**2, scale**2)
    return spacetime((t, x, y, z), (), metric, functions=(scale,))


def kerr_like(delta: sp.Expr, params: tuple, domain: tuple) -> Spacetime:
    """Boyer–Lindquist form shared by Kerr and Kerr–Newman (Delta differs)."""
    sigma = r**2 + a**2 * sp.cos(theta) ** 2
    s2 = sp.sin(theta) ** 2
    g = sp.zeros(4)
    g[0, 0] = -(delta - a**2 * s2) / sigma
    g[0, 3] = g[3, 0] = -a * s2 * (r**2 + a**2 - delta) / sigma
    g[1, 1] = sigma / delta
    g[2, 2] = sigma
    g[3, 3] = ((r**2 + a**2) ** 2 - delta * a**2 * s2) * s2 / sigma
    return spacetime(SPHERICAL, params, g, domain + ANGLES_DOMAIN)


def kerr() -> Spacetime:
    """R. P. Kerr, Phys. Rev. Lett. 11 (1963) 237; Boyer–Lindquist coordinates."""
    return kerr_like(r**2 - 2 * M * r + a**2, (M, a), (sp.Gt(r, 2 * M + a),))


def kerr_newman() -> Spacetime:
    """E. T. Newman et al., J. Math. Phys. 6 (1965) 918; Boyer–Lindquist coordinates."""
    return kerr_like(r**2 - 2 * M * r + a**2 + Q**2, (M, a, Q), (sp.Gt(r, 2 * M + a + Q),))


def kerr_de_sitter() -> Spacetime:
    """B. Carter, Commun. Math. Phys. 10 (1968) 280; Boyer–Lindquist-type coordinates."""
    sigma = r**2 + a**2 * sp.cos(theta) ** 2
    delta_r = (r**2 + a**2) * (1 - Lam * r**2 / 3) - 2 * M * r
    delta_t = 1 + Lam * a**2 * sp.cos(theta) ** 2 / 3
    xi = 1 + Lam * a**2 / 3
    s2 = sp.sin(theta) ** 2
    g = sp.zeros(4)
    # -Delta_r/(Xi^2 Sigma) (dt - a s2 dphi)^2 + Delta_t s2/(Xi^2 Sigma) (a dt - (r^2+a^2) dphi)^2
    g[0, 0] = (-delta_r + delta_t * s2 * a**2) / (xi**2 * sigma)
    g[0, 3] = g[3, 0] = (delta_r * a * s2 - delta_t * s2 * a * (r**2 + a**2)) / (xi**2 * sigma)
    g[3, 3] = (-delta_r * a**2 * s2**2 + delta_t * s2 * (r**2 + a**2) ** 2) / (xi**2 * sigma)
    g[1, 1] = sigma / delta_r
    g[2, 2] = sigma / delta_t
    domain = (sp.Gt(r, 2 * M + a), sp.Gt(delta_r, 0), sp.Lt(Lam * a**2, 3))
    return spacetime(SPHERICAL, (M, a, Lam), g, domain + ANGLES_DOMAIN)


def painleve_gullstrand() -> Spacetime:
    """Schwarzschild in Painlevé–Gullstrand coordinates (P. Painlevé, C. R. Acad. Sci. 173
    (1921) 677; A. Gullstrand, Ark. Mat. Astron. Fys. 16 (1922) 1): square roots in g."""
    v = sp.sqrt(2 * M / r)
    g = sp.zeros(4)
    g[0, 0] = -(1 - 2 * M / r)
    g[0, 1] = g[1, 0] = v
    g[1, 1] = 1
    g[2, 2] = r**2
    g[3, 3] = r**2 * sp.sin(theta) ** 2
    return spacetime(SPHERICAL, (M,), g, (sp.Gt(r, 0), *ANGLES_DOMAIN))


def kasner() -> Spacetime:
    """E. Kasner, Am. J. Math. 43 (1921) 217: symbolic exponents t**(2*p_i)."""
    p1, p2, p3 = sp.symbols("p1 p2 p3", real=True)
    g = sp.diag(-1, t ** (2 * p1), t ** (2 * p2), t ** (2 * p3))
    return spacetime((t, x, y, z), (p1, p2, p3), g, (sp.Gt(t, 0),))


def kruskal() -> Spacetime:
    """Schwarzschild in Kruskal–Szekeres coordinates (M. D. Kruskal, Phys. Rev. 119 (1960)
    1743; G. Szekeres, Publ. Math. Debrecen 7 (1960) 285), r through the Lambert W function."""
    T, X = sp.symbols("T X", real=True)
    radius = 2 * M * (1 + sp.LambertW((X**2 - T**2) / sp.E))
    conformal = 32 * M**3 / radius * sp.exp(-radius / (2 * M))
    g = sp.diag(-conformal, conformal, radius**2, radius**2 * sp.sin(theta) ** 2)
    domain = (sp.Gt(X, sp.Abs(T)), *ANGLES_DOMAIN)
    return spacetime((T, X, theta, phi), (M,), g, domain)


def btz() -> Spacetime:
    """Non-rotating BTZ black hole (M. Bañados, C. Teitelboim, J. Zanelli, Phys. Rev. Lett. 69
    (1992) 1849), three dimensions, AdS radius ell."""
    ell = sp.Symbol("ell", positive=True)
    f = -M + r**2 / ell**2
    return spacetime(
        (t, r, phi), (M, ell), sp.diag(-f, 1 / f, r**2), (sp.Gt(r**2, M * ell**2),), signature="-++"
    )
