"""Pure helpers for hardening tables: conversions and the checks behind ``plastic/*``.

All functions take numpy arrays (or scalars) and do no I/O. Formulas (standard continuum mechanics):

* engineering -> true (valid up to necking): sigma_t = sigma_e (1 + eps_e), eps_t = ln(1 + eps_e);
* plastic strain from total strain: eps_p = eps - sigma / E;
* tangent and plastic modulus: E_t = E H / (E + H), H = E E_t / (E - E_t).
"""
from __future__ import annotations

import numpy as np

#: a largest strain above this in a hardening table suggests percent instead of a fraction (common practice)
PERCENT_STRAIN_LIMIT = 2.0

def eng_to_true(stress_eng, strain_eng):
    """(true stress, true (logarithmic) strain) from an engineering curve."""
    s = np.asarray(stress_eng, dtype=float)
    e = np.asarray(strain_eng, dtype=float)
    return s * (1.0 + e), np.log1p(e)


def plastic_from_total(strain_total, stress, E):
    """Plastic strain eps - sigma/E (total strain and stress of the same measure, true or engineering)."""
    return np.asarray(strain_total, dtype=float) - np.asarray(stress, dtype=float) / E


def eng_to_plastic_table(stress_eng, strain_eng, E):
    """A hardening table (true stress, true plastic strain) from an engineering curve up to necking."""
    st, et = eng_to_true(stress_eng, strain_eng)
    return st, plastic_from_total(et, st, E)


def tangent_from_plastic(E, H):
    """Tangent modulus of the stress-total strain curve from the plastic modulus H."""
    E, H = np.asarray(E, dtype=float), np.asarray(H, dtype=float)
    return E * H / (E + H)


def plastic_from_tangent(E, Et):
    """Plastic modulus H from the tangent modulus E_t (infinite for E_t = E)."""
    E, Et = np.asarray(E, dtype=float), np.asarray(Et, dtype=float)
    with np.errstate(divide="ignore"):
        return E * Et / (E - Et)


def temperature_groups(temps) -> list[np.ndarray]:
    """Index arrays of consecutive rows with the same temperature (nan = no temperature, one group)."""
    t = np.asarray(temps, dtype=float)
    if t.size == 0:
        return []
    same = (t[1:] == t[:-1]) | (np.isnan(t[1:]) & np.isnan(t[:-1]))
    starts = np.flatnonzero(np.concatenate(([True], ~same)))
    return np.split(np.arange(t.size), starts[1:])


def hardening_slopes(stress, strain):
    """H_k = d(sigma)/d(eps) between consecutive points (inf/nan where the strain does not advance)."""
    s, e = np.asarray(stress, dtype=float), np.asarray(strain, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.diff(s) / np.diff(e)


def not_increasing(strain) -> np.ndarray:
    """Indices k (of the later point) where strain[k] <= strain[k-1]."""
    e = np.asarray(strain, dtype=float)
    return np.flatnonzero(np.diff(e) <= 0) + 1


def softening(stress) -> np.ndarray:
    """Indices k (of the later point) where stress[k] < stress[k-1]."""
    s = np.asarray(stress, dtype=float)
    return np.flatnonzero(np.diff(s) < 0) + 1


def elastic_strain_match(stress, strain, E, rel_tol: float) -> np.ndarray:
    """Boolean per point: strain is within rel_tol of sigma/E (the point looks like a total strain)."""
    s, e = np.asarray(stress, dtype=float), np.asarray(strain, dtype=float)
    el = s / E
    with np.errstate(invalid="ignore"):
        return (e > 0) & (el > 0) & (np.abs(e - el) <= rel_tol * np.abs(el))


def material_class(E, rho, stress_scales, density_scales, bands) -> str:
    """"metal", "polymer" (any class of ``bands``) or "unknown": the class that E (and density when known)
    fit in some unit system.

    ``stress_scales`` / ``density_scales``: factors to SI (Pa, kg/m^3) of a stress and a density in each
    unit system (same order); ``bands``: class -> {"E": (lo, hi), "rho": (lo, hi)} in SI. Without a
    density only E is used, which is ambiguous across unit systems more often than not; the answer is
    "unknown" whenever the systems disagree.
    """
    if E is None or not np.isfinite(E) or E <= 0:
        return "unknown"
    e_si = E * np.asarray(stress_scales, dtype=float)
    has_rho = rho is not None and rho > 0
    r_si = rho * np.asarray(density_scales, dtype=float) if has_rho else None
    found = set()
    for name, band in bands.items():
        ok = (band["E"][0] <= e_si) & (e_si <= band["E"][1])
        if has_rho:
            ok &= (band["rho"][0] <= r_si) & (r_si <= band["rho"][1])
        if ok.any():
            found.add(name)
    return found.pop() if len(found) == 1 else "unknown"
