"""analysis/temperature-outside-table and analysis/expansion-reference: material tables against the
temperatures the analysis applies (initial conditions and temperature loads)."""
from __future__ import annotations

import math

import numpy as np

from linter.registry import rule
from linter.rules.analysis import has_expansion, initial_values, used_materials
from ._text import short

CCX_T = "CalculiX User's Manual *MATERIAL: outside the table the value is held constant"
NAS_T = "Nastran TABLEM/TABLES1: linear extrapolation in some dialects"
CCX_EXP = "CalculiX User's Manual *EXPANSION, ZERO="
NAS_EXP = "Nastran MAT1 TREF"
TABLE_KINDS = ("elastic", "expansion", "conductivity", "specific_heat", "density", "plastic")
WORDS = {"elastic": "elastic", "expansion": "expansion", "conductivity": "conductivity",
         "specific_heat": "specific heat", "density": "density", "plastic": "hardening"}


def analysis_temperatures(model) -> list[tuple[float, str, object]]:
    """(value, where, loc) of every initial temperature and every temperature load."""
    out = [(ld.value, "initial temperature", ld.loc) for ld in model.initial_temperatures if ld.value is not None]
    for step in model.steps:
        out += [(ld.value, f"temperature load of step {step.name}", ld.loc)
                for ld in step.loads if ld.kind == "temperature" and ld.value is not None]
    return out


def table_range(blk):
    t = blk.temperatures()
    t = t[np.isfinite(t)]
    if np.unique(t).size < 2:
        return None  # one temperature: the values hold for all temperatures
    return float(t.min()), float(t.max())


def extrapolated_E(blk, temperature: float):
    """E extrapolated linearly from the two end rows of an isotropic elastic table, or None."""
    if blk.kind != "elastic" or blk.form != "iso":
        return None
    t, e = blk.temperatures(), blk.column("E")
    ok = np.isfinite(t) & np.isfinite(e)
    t, e = t[ok], e[ok]
    order = np.argsort(t, kind="stable")
    t, e = t[order], e[order]
    if np.unique(t).size < 2:
        return None
    if temperature < t[0]:
        t0, t1, e0, e1 = t[0], t[1], e[0], e[1]
        if t1 == t0:
            return None
    else:
        t0, t1, e0, e1 = t[-2], t[-1], e[-2], e[-1]
        if t1 == t0:
            return None
    return float(e0 + (e1 - e0) * (temperature - t0) / (t1 - t0))


@rule("analysis/temperature-outside-table", severity="warning",
      title="An analysis temperature lies outside a material's temperature table",
      rationale="Outside its table a property is held constant (CalculiX, with a warning) or extrapolated "
                "linearly (some Nastran dialects), which can drive E to zero or below; either way the data "
                "does not describe the material there.",
      references=(CCX_T, NAS_T), data="kind, line, table_min, table_max, temperature, where, extrapolated_E")
def temperature_outside_table(model, ctx):
    temps = analysis_temperatures(model)
    if not temps:
        return
    values = np.array([t for t, _w, _l in temps], dtype=float)
    loads = any(w != "initial temperature" for _t, w, _l in temps)
    for mat in used_materials(model):
        for kind in TABLE_KINDS:
            blk = mat.first(kind)
            rng = table_range(blk) if blk is not None else None
            if rng is None:
                continue
            out = (values < rng[0]) | (values > rng[1])
            if not out.any():
                continue
            k = int(np.argmax(np.where(out, np.maximum(rng[0] - values, values - rng[1]), -np.inf)))
            val, where, _loc = temps[k]
            msg = (f"material {mat.name}: {where} = {short(val)} is outside the {WORDS[kind]} table "
                   f"({short(rng[0])}..{short(rng[1])}, line {blk.loc.line})")
            e_ext = extrapolated_E(blk, val)
            if e_ext is not None:
                if e_ext <= 0:
                    msg += f"; linear extrapolation would give E = {short(e_ext)} <= 0"
                else:
                    msg += f"; linear extrapolation gives E = {short(e_ext)}"
                if model.dialect == "calculix":
                    msg += " (CalculiX holds the end value instead)"
            if loads:
                msg += "; temperature loads act on node sets, so every material of the model is compared"
            yield ctx.finding(msg, blk.loc, material=mat.name,
                              data={"kind": kind, "line": blk.loc.line, "table_min": rng[0], "table_max": rng[1],
                                    "temperature": val, "where": where, "extrapolated_E": e_ext})


def defaulted_reference(model, blk):
    """True when the expansion block's reference temperature is the dialect's default 0."""
    if model.format == "bulk":
        tref = blk.options.get("TREF")
        return tref is None or (isinstance(tref, float) and math.isnan(tref))
    return "ZERO" not in blk.options


@rule("analysis/expansion-reference", severity="note",
      title="Thermal expansion uses the default reference temperature 0 while the initial temperature differs",
      rationale="Expansion coefficients are measured from a reference temperature (keyword ZERO=, bulk TREF), "
                "which defaults to 0. With secant coefficients that depend on temperature (keyword decks), or "
                "with TREF (bulk decks, where the thermal strain is alpha (T - TREF)), a forgotten reference "
                "shifts the thermal strain.",
      references=(CCX_EXP, NAS_EXP), data="line, initial, temperature_dependent")
def expansion_reference(model, ctx):
    init = [t for t in initial_values(model) if t != 0]
    if not init:
        return
    for mat in used_materials(model):
        blk = mat.first("expansion")
        if blk is None or not has_expansion(mat) or not defaulted_reference(model, blk):
            continue
        dependent = table_range(blk) is not None
        if model.format != "bulk" and not dependent:
            continue  # constant alpha: eps = alpha (T - T0) whatever the reference
        card = "TREF is blank" if model.format == "bulk" else "*EXPANSION has no ZERO="
        yield ctx.finding(f"material {mat.name}: {card}, so the expansion reference temperature is 0 while the "
                          f"initial temperature is {short(init[0])}", blk.loc, material=mat.name,
                          data={"line": blk.loc.line, "initial": init[0], "temperature_dependent": dependent})
