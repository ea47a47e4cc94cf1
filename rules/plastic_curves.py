"""plastic/* for hardening given as a tensile curve or a linear slope (code_aster TRACTION and ECRO_LINE).

The parser keeps a TRACTION curve as total strain -> stress in ``block.options["curve"]`` (and the
material's constant E in ``options["E"]``), and an ECRO_LINE slope per temperature in
``options["D_SIGM_EPSI"]`` beside the one-point table (SY at zero plastic strain) that the other
plastic rules check.
"""
from __future__ import annotations

import math

import numpy as np

from linter.registry import rule
from ._text import short

from .plastic import elastic_modulus

CA_VERIF = ("code_aster source bibfor/modelisa/rcstoc_verif.F90 (messages MODELISA9_59, 60, 61): first point with "
            "positive strain and stress, increasing strains, no slope above the initial slope sigma_1/eps_1")
CA_RCTRAC = ("code_aster source bibfor/modelisa/rctrac.F90: the hardening function R(p) of a TRACTION curve is built "
             "with E = sigma_1/eps_1 of its first point (e = vale(n+1)/vale(1)), not with the E of ELAS")
CA_ECRO = ("code_aster messages COMPOR1_53/54 (code_aster/Messages/compor1.py), raised by bibfor/comport/nmcine.F90 "
           "and lcpima.F90: the hardening slope H must be strictly below E")


def _curves(model):
    for mat in list(model.materials.values()) + list(model.duplicate_materials):
        for blk in mat.find("plastic"):
            curve = blk.options.get("curve")
            if curve and len(curve[0]) > 0:
                yield mat, blk, np.asarray(curve[0], float), np.asarray(curve[1], float)


@rule("plastic/first-point-off-elastic-line", severity="warning",
      title="The first point of a tensile curve is not on the elastic line",
      rationale="A tensile curve (code_aster TRACTION) starts at the elastic limit: its first point must have a "
                "positive strain and stress (the solver stops otherwise: an error) and lie on the elastic line, "
                "sigma_1 / eps_1 = E of the material. code_aster builds the hardening function with "
                "E = sigma_1/eps_1 of the curve, while the elastic response uses the E of ELAS: a first point "
                "off the line makes the two disagree (a warning). Usually the curve was measured with another "
                "modulus, or plastic strain was written where total strain is expected.",
      references=(CA_VERIF, CA_RCTRAC),
      data="line, strain, stress, ratio (stress/strain), E, tolerance",
      thresholds=("plastic.first_point_rel_tol",))
def first_point_off_elastic_line(model, ctx):
    tol = float(ctx.threshold("plastic.first_point_rel_tol"))
    for mat, blk, eps, sig in _curves(model):
        e_mod = blk.options.get("E")
        where = f"material {mat.name}: the first point of the {blk.card or 'tensile'} curve"
        data = {"line": blk.loc.line, "strain": float(eps[0]), "stress": float(sig[0]), "E": e_mod,
                "tolerance": tol}
        if eps[0] <= 0 or sig[0] <= 0:
            yield ctx.finding(f"{where} has strain {short(eps[0])} and stress {short(sig[0])}: both must be positive "
                              "(the solver stops)", blk.loc, material=mat.name, data={**data, "ratio": None},
                              severity="error")
            continue
        ratio = sig[0] / eps[0]
        if e_mod is None or not math.isfinite(e_mod) or e_mod <= 0:
            continue
        if abs(ratio - e_mod) > tol * e_mod:
            yield ctx.finding(f"{where} ({short(eps[0])}, {short(sig[0])}) gives stress/strain = {short(ratio)}, but E = "
                              f"{short(e_mod)}: the curve does not start on the elastic line, and the solver builds the "
                              "hardening from the curve's own slope", blk.loc,
                              material=mat.name, data={**data, "ratio": ratio})


@rule("plastic/curve-slope-above-initial", severity="error",
      title="A tensile curve rises faster than its initial elastic slope",
      rationale="Past the first point the slope of a tensile curve is the tangent modulus after yield; it must "
                "stay below the initial slope sigma_1/eps_1 and the strains must increase. A steeper segment or a "
                "strain that goes back is refused by the solver and is usually a typing error in the table.",
      references=(CA_VERIF,), data="line, initial_slope, segments: [{strain, slope}]")
def curve_slope_above_initial(model, ctx):
    for mat, blk, eps, sig in _curves(model):
        if len(eps) < 2 or eps[0] <= 0:
            continue
        d_eps, d_sig = np.diff(eps), np.diff(sig)
        e1 = sig[0] / eps[0]
        back = d_eps <= 0
        with np.errstate(divide="ignore", invalid="ignore"):
            slope = np.where(back, np.nan, d_sig / np.where(back, 1.0, d_eps))
        steep = ~back & (slope > e1)
        if not (back.any() or steep.any()):
            continue
        parts = [f"strain {short(eps[i + 1])} does not increase" for i in np.flatnonzero(back)[:3]]
        parts += [f"slope {short(slope[i])} up to strain {short(eps[i + 1])}" for i in np.flatnonzero(steep)[:3]]
        yield ctx.finding(f"material {mat.name}: the {blk.card or 'tensile'} curve (initial slope {short(e1)}) has "
                          + "; ".join(parts), blk.loc, material=mat.name,
                          data={"line": blk.loc.line, "initial_slope": e1,
                                "segments": [{"strain": float(eps[i + 1]), "slope": None if back[i] else
                                              float(slope[i])} for i in np.flatnonzero(back | steep)]})


@rule("plastic/tangent-modulus-too-high", severity="error",
      title="A linear hardening slope is not below Young's modulus",
      rationale="With linear hardening (code_aster ECRO_LINE) the slope of the tensile curve after yield, "
                "D_SIGM_EPSI = E_T, must be below E: the plastic modulus H = E E_T / (E - E_T) is infinite at "
                "E_T = E and negative beyond, and the solver stops. A negative slope is softening, which the "
                "kinematic laws refuse (a warning).",
      references=(CA_ECRO,), data="line, rows: [{T, slope, E}]")
def tangent_modulus_not_below_e(model, ctx):
    for mat in list(model.materials.values()) + list(model.duplicate_materials):
        for blk in mat.find("plastic"):
            slopes = blk.options.get("D_SIGM_EPSI")
            if not slopes:
                continue
            high, low = [], []
            for t, et in slopes:
                e_mod = elastic_modulus(mat, t)
                if e_mod is not None and math.isfinite(e_mod) and e_mod > 0 and et >= e_mod:
                    high.append({"T": t, "slope": et, "E": e_mod})
                elif et < 0:
                    low.append({"T": t, "slope": et, "E": e_mod})
            line = blk.options.get("slope_line", blk.loc.line)
            loc = type(blk.loc)(blk.loc.path, line)
            for rows, sev, what in ((high, "error", "not below E"), (low, "warning", "negative (softening)")):
                if not rows:
                    continue
                listed = ", ".join(f"D_SIGM_EPSI = {short(r['slope'])}" + (f" at T = {short(r['T'])}" if r["T"] is not None
                                                                         else "") + f" (E = {short(r['E'])})"
                                   for r in rows[:4])
                yield ctx.finding(f"material {mat.name}: the {blk.card or 'linear hardening'} slope is {what}: "
                                  f"{listed}", loc, material=mat.name, severity=sev,
                                  data={"line": line, "rows": rows})
