"""Unit evidence read from the neutral model: the dimensional values of each material, and the
model-wide values (gravity, mesh size, absolute zero) whose plausibility depends on the unit system.

Only the neutral model is read, so this works for every deck format. Values are kept as written
in the deck (mass density already includes a bulk deck's WTMASS, as the parsers store it).
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Optional

import numpy as np

from ...model import DeckModel, Loc, Material

#: evidence quantity -> dimension name (linter.physics.units.DIMENSIONS); nu is dimensionless
QUANTITY_DIMENSION = {
    "E": "stress", "K": "stress", "yield": "stress", "nu": None,
    "rho": "density", "k": "conductivity", "c": "specific_heat", "alpha": "expansion",
}
#: groups of quantities a unit slip moves together (a block is usually copied as a whole)
GROUPS = {
    "moduli": ("E", "K", "nu"), "yield": ("yield",), "density": ("rho",),
    "conductivity": ("k",), "specific heat": ("c",), "expansion": ("alpha",),
}
GROUP_OF = {q: g for g, qs in GROUPS.items() for q in qs}
WORDS = {"E": "E", "K": "bulk modulus", "yield": "yield stress", "nu": "nu", "rho": "density",
         "k": "conductivity", "c": "specific heat", "alpha": "expansion"}


@dataclass
class MaterialEvidence:
    name: str
    key: str
    loc: Loc
    #: raw deck values by quantity
    values: dict[str, float] = field(default_factory=dict)
    #: where each value was read
    locs: dict[str, Loc] = field(default_factory=dict)
    #: how the value was obtained, for messages (e.g. "E", "3 mu0 (hyperelastic)", "max(E1, E2, E3)")
    how: dict[str, str] = field(default_factory=dict)
    #: whether the model's analyses read each quantity
    used: dict[str, bool] = field(default_factory=dict)
    #: the material is assigned to elements (or the deck has no sections at all)
    assigned: bool = True
    #: extra facts for messages (raw RHO / WTMASS of bulk decks)
    notes: dict[str, float] = field(default_factory=dict)

    def signature(self) -> tuple:
        return tuple(sorted((q, v, self.used.get(q, True)) for q, v in self.values.items())) + (
            self.assigned, self.name.lower(), tuple(sorted(self.notes.items())))


@dataclass
class ModelEvidence:
    materials: list[MaterialEvidence]
    gravity: list[tuple[float, Loc]]
    model_size: Optional[float]
    element_size: Optional[float]
    absolute_zero: Optional[float]
    temperatures: tuple[float, float] | None
    needs: dict[str, bool]


def _finite(x) -> bool:
    return isinstance(x, (int, float)) and math.isfinite(x)


def _first(block, col: str) -> Optional[float]:
    if block is None or col not in block.layout:
        return None
    vals = block.column(col)
    vals = vals[np.isfinite(vals)]
    return float(vals[0]) if vals.size else None


def _max_abs(block, cols) -> Optional[float]:
    vals = [_first(block, c) for c in cols if c in block.layout]
    vals = [abs(v) for v in vals if v is not None and v != 0]
    return max(vals) if vals else None


def _hyper_mu0(mat: Material, block) -> Optional[float]:
    """mu0 from ``Material.derived['hyper']`` when present, else from the first row of the block."""
    d = mat.derived.get("hyper")
    entries = d if isinstance(d, list) else [d] if isinstance(d, dict) else []
    for e in entries:
        if isinstance(e, dict):
            mu = e.get("mu0")
            if isinstance(mu, (int, float)) and math.isfinite(mu) and mu != 0:
                return float(mu)
            rows = e.get("rows")
            if isinstance(rows, list) and rows and isinstance(rows[0], dict):
                mu = rows[0].get("mu0")
                if isinstance(mu, (int, float)) and math.isfinite(mu) and mu != 0:
                    return float(mu)
    lay = block.layout
    if not block.rows or not lay:
        return None
    v = dict(zip(lay, block.rows[0].values))
    if "C10" in v:
        mu = 2.0 * (v.get("C10", 0.0) + v.get("C01", 0.0))
    elif "mu1" in v:
        mu = sum(x for k, x in v.items() if k.startswith("mu") and k[2:].isdigit())
    else:
        mu = v.get("mu")
    return float(mu) if mu else None


def _elastic(mat: Material, ev: MaterialEvidence) -> None:
    blk = mat.first("elastic")
    if blk is not None and blk.rows:
        row_loc = blk.rows[0].loc
        if blk.form == "iso":
            e, nu = _first(blk, "E"), _first(blk, "nu")
            how = "E"
            rows = [r for r in mat.derived.get("elastic") or () if isinstance(r, dict)
                    and r.get("block") == mat.blocks.index(blk)]
            if rows and _finite(rows[0].get("E")):     # the elastic derivation's rows, when present
                e = float(rows[0]["E"])
                nu = float(rows[0]["nu"]) if _finite(rows[0].get("nu")) else nu
        elif blk.form in ("engineering", "lamina"):
            e, nu, how = _max_abs(blk, ("E1", "E2", "E3")), None, "largest of E1, E2, E3"
        elif blk.form in ("ortho", "aniso"):
            e, nu, how = _max_abs(blk, ("D1111", "D2222", "D3333")), None, "largest of D1111, D2222, D3333"
        elif blk.form in ("mat9", "mat2"):
            e, nu, how = _max_abs(blk, ("G11", "G22", "G33")), None, "largest of G11, G22, G33"
        else:
            e, nu, how = None, None, ""
        if e:
            ev.values["E"], ev.locs["E"], ev.how["E"] = abs(e), row_loc, how
        if nu is not None and math.isfinite(nu):
            ev.values["nu"], ev.locs["nu"], ev.how["nu"] = nu, row_loc, "nu"
        return
    blk = mat.first("deformation_plasticity")
    if blk is not None and blk.rows:
        e, nu, s0 = _first(blk, "E"), _first(blk, "nu"), _first(blk, "sigma0")
        if e:
            ev.values["E"], ev.locs["E"], ev.how["E"] = abs(e), blk.rows[0].loc, "E"
        if nu is not None:
            ev.values["nu"], ev.locs["nu"], ev.how["nu"] = nu, blk.rows[0].loc, "nu"
        if s0:
            ev.values["yield"], ev.locs["yield"], ev.how["yield"] = abs(s0), blk.rows[0].loc, "sigma0"
        return
    for kind in ("hyperelastic", "hyperfoam"):
        blk = mat.first(kind)
        if blk is None or not blk.rows:
            continue
        mu0 = _hyper_mu0(mat, blk)
        if mu0:
            ev.values["E"], ev.locs["E"] = 3.0 * abs(mu0), blk.rows[0].loc
            ev.how["E"] = f"3 mu0 of the {kind} constants (mu0 = {mu0:.4g})"
        d1 = dict(zip(blk.layout, blk.rows[0].values)).get("D1", dict(zip(blk.layout, blk.rows[0].values)).get("D"))
        if d1 and d1 > 0 and kind == "hyperelastic":
            ev.values["K"], ev.locs["K"], ev.how["K"] = 2.0 / d1, blk.rows[0].loc, f"2/D1 (D1 = {d1:.4g})"
        return


def material_evidence(mat: Material, needs: dict[str, bool], assigned: bool = True) -> MaterialEvidence:
    ev = MaterialEvidence(mat.name, mat.key, mat.loc, assigned=assigned)
    _elastic(mat, ev)
    rho_blk = mat.first("density")
    rho = _first(rho_blk, "rho")
    if rho:
        ev.values["rho"], ev.locs["rho"], ev.how["rho"] = abs(rho), rho_blk.rows[0].loc, "density"
        for k, v in rho_blk.options.items():
            if str(k).upper() in ("RHO", "WTMASS") and isinstance(v, (int, float)):
                ev.notes[str(k).upper()] = float(v)
    for kind, q, cols in (("conductivity", "k", ("k", "k11", "k22", "k33")),
                          ("specific_heat", "c", ("c",)),
                          ("expansion", "alpha", ("alpha", "a11", "a22", "a33"))):
        blk = mat.first(kind)
        if blk is not None and blk.rows:
            v = _max_abs(blk, cols)
            if v:
                ev.values[q], ev.locs[q], ev.how[q] = v, blk.rows[0].loc, kind.replace("_", " ")
    blk = mat.first("plastic")
    if blk is not None and blk.rows and "stress" in blk.layout:
        s = _first(blk, "stress")
        if s:
            ev.values["yield"], ev.locs["yield"], ev.how["yield"] = abs(s), blk.rows[0].loc, "initial yield stress"
    for q in ev.values:
        ev.used[q] = _used(q, needs) and assigned
    return ev


def analysis_needs(model: DeckModel) -> dict[str, bool]:
    """Which material quantities the deck's analyses read (no steps: the structural ones)."""
    procs = [p for _s, p in model.procedures()]
    loads = [ld for s in model.steps for ld in s.loads]
    structural = any(p.needs["structural"] for p in procs) or not procs
    thermal = any(p.needs["thermal"] for p in procs)
    transient = any(p.needs["transient_thermal"] for p in procs)
    mass = any(p.needs["mass"] for p in procs) or any(ld.kind in ("gravity", "centrifugal") for ld in loads)
    temp_load = any(ld.kind == "temperature" for ld in loads)
    return {"structural": structural, "mass": mass, "thermal": thermal, "transient_thermal": transient,
            "expansion": structural and (thermal or temp_load)}


def _used(q: str, needs: dict[str, bool]) -> bool:
    if q in ("E", "K", "nu", "yield"):
        return needs["structural"]
    if q == "rho":
        return needs["mass"] or needs["transient_thermal"]
    if q == "k":
        return needs["thermal"]
    if q == "c":
        return needs["transient_thermal"]
    if q == "alpha":
        return needs["expansion"]
    return True


def model_evidence(model: DeckModel) -> ModelEvidence:
    from ...usage import material_usage

    needs = analysis_needs(model)
    assigned_keys = set(material_usage(model)) if model.sections else None
    mats = [material_evidence(m, needs, assigned_keys is None or m.key in assigned_keys)
            for m in model.all_materials()]
    gravity = [(abs(float(ld.value)), ld.loc) for s in model.steps for ld in s.loads
               if ld.kind == "gravity" and ld.value is not None and math.isfinite(ld.value) and ld.value != 0]
    size = model.geometry.size
    size = size if size and math.isfinite(size) and size > 0 else None
    n_el = sum(b.count for b in model.element_blocks)
    el_size = size / n_el ** (1.0 / 3.0) if size and n_el > 0 else None
    az = model.params.get("ABSOLUTE_ZERO")
    az = float(az) if isinstance(az, (int, float)) and math.isfinite(az) else None
    temps = [r.temperature for m in model.all_materials() for b in m.blocks for r in b.rows
             if r.temperature is not None and math.isfinite(r.temperature)]
    temps += [ld.value for ld in model.initial_temperatures if ld.value is not None and math.isfinite(ld.value)]
    trange = (float(min(temps)), float(max(temps))) if temps else None
    explicit = _explicit_period(model)
    if explicit and el_size:
        for ev in mats:
            if ev.assigned and "E" in ev.values and "rho" in ev.values:
                ev.notes["explicit_period"], ev.notes["explicit_length"] = explicit, el_size
    return ModelEvidence(mats, gravity, size, el_size, az, trange, needs)


def _explicit_period(model: DeckModel) -> Optional[float]:
    """The shortest period of the deck's explicit dynamic steps (deck time units), when written."""
    periods = [p.options.get("period") for _s, p in model.procedures() if p.kind == "dynamic-explicit"]
    periods = [float(t) for t in periods if _finite(t) and t > 0]
    return min(periods) if periods else None
