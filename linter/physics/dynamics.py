"""Wave speeds and the explicit stable time increment (Belytschko, Liu & Moran 2000 ch. 6).

c0 = sqrt(E/rho) (bar), cd = sqrt((lambda + 2 mu)/rho) = sqrt(M/rho) (dilatational), cs = sqrt(mu/rho)
(shear); hyperelastic: cd = sqrt((K0 + 4 mu0/3)/rho). The element-by-element bound of the central
difference method is dt ~ L_e / cd (Belytschko, Liu & Moran 2000 ch. 6).
"""
from __future__ import annotations

import numpy as np

from linter.physics.elastic import from_E_nu


def shear_modulus(E, nu):
    """G = E / (2 (1 + nu)) (standard moduli conversion, via ``linter.physics.elastic``)."""
    return from_E_nu(E, nu)["G"]


def p_wave_modulus(E, nu):
    """M = lambda + 2 mu = E (1 - nu) / ((1 + nu)(1 - 2 nu)) (inf at nu = 0.5)."""
    return from_E_nu(E, nu)["M"]


def _speed(modulus, rho):
    m, r = np.asarray(modulus, dtype=float), np.asarray(rho, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.sqrt(m / r)


def bar_speed(E, rho):
    return _speed(E, rho)


def dilatational_speed(E, nu, rho):
    return _speed(p_wave_modulus(E, nu), rho)


def shear_speed(E, nu, rho):
    return _speed(shear_modulus(E, nu), rho)


def hyper_dilatational_speed(K0, mu0, rho):
    K0, mu0 = np.asarray(K0, dtype=float), np.asarray(mu0, dtype=float)
    return _speed(K0 + 4.0 * mu0 / 3.0, rho)


def hyper_shear_speed(mu0, rho):
    return _speed(mu0, rho)


def stable_time_step(length, speed):
    """dt ~ L_e / c (0 for an infinite speed, i.e. an incompressible material)."""
    L, c = np.asarray(length, dtype=float), np.asarray(speed, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(np.isinf(c), 0.0, L / c)


def estimated_length(bbox_min, bbox_max, count: int):
    """(volume / count)^(1/d) over the non-degenerate dimensions d of the bounding box; None if unknown."""
    if bbox_min is None or bbox_max is None or count <= 0:
        return None
    ext = np.abs(np.asarray(bbox_max, dtype=float) - np.asarray(bbox_min, dtype=float))
    if not np.all(np.isfinite(ext)) or ext.max() <= 0:
        return None
    ext = ext[ext > 1e-9 * ext.max()]
    return float((np.prod(ext) / count) ** (1.0 / ext.size))
