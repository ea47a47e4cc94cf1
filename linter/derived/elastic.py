"""Derived isotropic elastic constants (and wave speeds) for every isotropic elastic row.

Fills ``Material.derived["elastic"]`` with one dict per row of every isotropic
elastic block (all blocks, in deck order; the solver uses the last one)::

    {"T", "E", "nu", "G", "K", "lambda", "M", "K_over_G",   # always (nan where infinite or undefined)
     "line", "path", "block",                                 # where the row is; block = index in Material.blocks
     "rho", "c0", "cd", "cs"}                                 # when the material has a density

Density: with a tabulated density and a tabulated elastic block, the density of the
same temperature is used (linear interpolation between rows, constant beyond the
ends); otherwise the single density. The density block already holds the mass density
the solver uses (bulk parsers store RHO times ``PARAM,WTMASS``, Nastran PARAM WTMASS definition), so no
factor is applied here.
"""
from __future__ import annotations

import math

import numpy as np

from ..derived import derivation
from ..physics import elastic as el


def _f(x) -> float:
    x = float(x)
    return x if math.isfinite(x) else math.nan


def density_at(mat, temps: np.ndarray):
    """Density at the temperatures ``temps`` (nan for rows without temperature), or None without density."""
    blk = mat.first("density")
    if blk is None or not blk.rows:
        return None
    rho = blk.column("rho")
    tt = blk.temperatures()
    if len(rho) == 1 or not np.isfinite(tt).any():
        return np.full(temps.shape, rho[0])
    out = el.interpolate_table(np.where(np.isfinite(temps), temps, tt[np.isfinite(tt)][0]), tt, rho)
    return np.asarray(out, dtype=float)


@derivation("elastic constants", order=10)
def derive_elastic(model, config) -> None:
    for mat in model.all_materials():
        rows_out = []
        for bi, blk in enumerate(mat.blocks):
            if blk.kind != "elastic" or blk.form != "iso" or not blk.rows:
                continue
            E, nu, T = blk.column("E"), blk.column("nu"), blk.temperatures()
            c = el.from_E_nu(E, nu)
            rho = density_at(mat, T)
            waves = el.wave_speeds(c["E"], c["G"], c["M"], rho) if rho is not None else None
            for i, row in enumerate(blk.rows):
                out = {"T": row.temperature, "line": row.loc.line, "path": row.loc.path, "block": bi}
                for k in el.KEYS:
                    out[k] = _f(c[k][i])
                if waves is not None:
                    out["rho"] = _f(rho[i])
                    for k in ("c0", "cd", "cs"):
                        out[k] = _f(waves[k][i])
                rows_out.append(out)
        if rows_out:
            mat.derived["elastic"] = rows_out
