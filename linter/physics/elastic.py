"""Isotropic linear elasticity: conversions between E, nu, G, K, lambda and M, wave speeds, admissibility.

Pure functions without I/O; every argument may be a scalar or a numpy array
(broadcast). Singular inputs (nu = 0.5, where K and lambda are infinite) give
``inf``/``nan`` without warnings; callers decide how to store them.

Relations: the standard conversion table of isotropic elastic moduli (Mavko, Mukerji & Dvorkin,
The Rock Physics Handbook, 2003):

* from (E, nu): G = E/(2(1+nu)), K = E/(3(1-2nu)), lambda = E nu/((1+nu)(1-2nu)), M = lambda + 2G
* from (E, G):  nu = E/(2G) - 1, K = EG/(3(3G-E)), lambda = G(E-2G)/(3G-E), M = G(4G-E)/(3G-E)
* from (K, G):  E = 9KG/(3K+G), nu = (3K-2G)/(2(3K+G)), lambda = K - 2G/3, M = K + 4G/3

Admissibility (positive-definite strain energy): K > 0 and G > 0, i.e. E > 0 and -1 < nu < 0.5.
"""
from __future__ import annotations

import numpy as np

KEYS = ("E", "nu", "G", "K", "lambda", "M", "K_over_G")


def _arr(x) -> np.ndarray:
    return np.asarray(x, dtype=float)


def _pack(E, nu, G, K, lam, M) -> dict[str, np.ndarray]:
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = K / G
    return {"E": E, "nu": nu, "G": G, "K": K, "lambda": lam, "M": M, "K_over_G": ratio}


def from_E_nu(E, nu) -> dict[str, np.ndarray]:
    """All isotropic constants (and K/G) from Young's modulus and Poisson's ratio."""
    E, nu = np.broadcast_arrays(_arr(E), _arr(nu))
    with np.errstate(divide="ignore", invalid="ignore"):
        G = E / (2.0 * (1.0 + nu))
        K = E / (3.0 * (1.0 - 2.0 * nu))
        lam = E * nu / ((1.0 + nu) * (1.0 - 2.0 * nu))
        M = E * (1.0 - nu) / ((1.0 + nu) * (1.0 - 2.0 * nu))
    return _pack(E, nu, G, K, lam, M)


def from_E_G(E, G) -> dict[str, np.ndarray]:
    """All isotropic constants from Young's and shear modulus (E = 3G is the incompressible limit)."""
    E, G = np.broadcast_arrays(_arr(E), _arr(G))
    with np.errstate(divide="ignore", invalid="ignore"):
        nu = E / (2.0 * G) - 1.0
        K = E * G / (3.0 * (3.0 * G - E))
        lam = G * (E - 2.0 * G) / (3.0 * G - E)
        M = G * (4.0 * G - E) / (3.0 * G - E)
    return _pack(E, nu, G, K, lam, M)


def from_K_G(K, G) -> dict[str, np.ndarray]:
    """All isotropic constants from bulk and shear modulus."""
    K, G = np.broadcast_arrays(_arr(K), _arr(G))
    with np.errstate(divide="ignore", invalid="ignore"):
        E = 9.0 * K * G / (3.0 * K + G)
        nu = (3.0 * K - 2.0 * G) / (2.0 * (3.0 * K + G))
    return _pack(E, nu, G, K, K - 2.0 * G / 3.0, K + 4.0 * G / 3.0)


def from_G_nu(G, nu) -> dict[str, np.ndarray]:
    """All isotropic constants from shear modulus and Poisson's ratio."""
    G, nu = np.broadcast_arrays(_arr(G), _arr(nu))
    return from_E_nu(2.0 * G * (1.0 + nu), nu)


def k_over_g(nu) -> np.ndarray:
    """K/G = 2(1+nu)/(3(1-2nu)) (standard moduli conversion); infinite at nu = 0.5."""
    nu = _arr(nu)
    with np.errstate(divide="ignore", invalid="ignore"):
        return 2.0 * (1.0 + nu) / (3.0 * (1.0 - 2.0 * nu))


def nu_from_k_over_g(ratio) -> np.ndarray:
    """The Poisson's ratio that gives K/G = ``ratio`` (inverse of :func:`k_over_g`)."""
    r = _arr(ratio)
    with np.errstate(divide="ignore", invalid="ignore"):
        return (3.0 * r - 2.0) / (2.0 * (3.0 * r + 1.0))


def wave_speeds(E, G, M, rho) -> dict[str, np.ndarray]:
    """Bar speed c0 = sqrt(E/rho), dilatational cd = sqrt(M/rho), shear cs = sqrt(G/rho).

    nan where a modulus or the density is not positive or not finite.
    """
    E, G, M, rho = np.broadcast_arrays(_arr(E), _arr(G), _arr(M), _arr(rho))

    def speed(mod):
        ok = np.isfinite(mod) & np.isfinite(rho) & (mod > 0) & (rho > 0)
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.where(ok, np.sqrt(np.where(ok, mod / rho, 1.0)), np.nan)

    return {"c0": speed(E), "cd": speed(M), "cs": speed(G)}


def poisson_in_range(nu) -> np.ndarray:
    """True where -1 < nu < 0.5 (the admissible open interval for an isotropic solid)."""
    nu = _arr(nu)
    return (nu > -1.0) & (nu < 0.5)


def admissible(E, nu) -> np.ndarray:
    """True where the strain energy is positive definite: K > 0 and G > 0 (E > 0, -1 < nu < 0.5)."""
    c = from_E_nu(E, nu)
    with np.errstate(invalid="ignore"):
        return np.isfinite(c["K"]) & np.isfinite(c["G"]) & (c["K"] > 0) & (c["G"] > 0)


def interpolate_table(t_query, t_table, values) -> np.ndarray:
    """Linear interpolation in a temperature table, held constant beyond its ends.

    A single-row table (or one without temperatures, ``t_table`` all nan) gives its first value.
    """
    tq = _arr(t_query)
    tt, vv = _arr(t_table), _arr(values)
    ok = np.isfinite(tt) & np.isfinite(vv)
    if vv.size == 0:
        return np.full(tq.shape, np.nan)
    if ok.sum() <= 1:
        return np.full(tq.shape, vv[ok][0] if ok.any() else vv[0])
    order = np.argsort(tt[ok], kind="stable")
    return np.interp(tq, tt[ok][order], vv[ok][order])
