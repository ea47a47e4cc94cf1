"""Diagnosis against the reference unit system (declared, else inferred): which quantity of which
material, or which gravity value, does not fit it, and in which system it would make sense.

A material that the reference system does not explain (misfit above ``material_tol``) may be read as:
a. its density, which fits no class as written, divided by g -> a weight density (the bulk-deck RHO
   without PARAM,WTMASS; Nastran PARAM WTMASS definition); a warning unless the system is declared;
b. a whole material in another system ("material pasted in Pa");
c. one or more quantity groups (moduli, yield, density, conductivity, specific heat, expansion) in
   another system, the rest staying in the reference.
Every reading that explains it is a candidate; they are ranked by how well all its numbers then fit
(class misfit plus the cost of the slip), and the best one is reported as a mismatch with the value to
write and its factor (the others in ``data["other_readings"]``). Otherwise -> implausible, naming the
quantities outside the bands of its best class.
A material that fits is still checked quantity by quantity (misfit above ``quantity_tol`` ->
implausible). Severity follows use: a quantity no analysis reads, or a material no element uses,
gives a note.
"""
from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import Optional

import numpy as np

from ...model import Loc
from ...physics import units as U
from .evidence import GROUPS, QUANTITY_DIMENSION, WORDS
from .infer import (DERIVED, Inference, MaterialScore, class_misfit, derived_quantities, equivalent, group_subsets,
                    si_values, slip_bad, weight_density_penalty)

SI_UNIT = {"E": "Pa", "K": "Pa", "yield": "Pa", "rho": "kg/m^3", "k": "W/(m K)", "c": "J/(kg K)",
           "alpha": "1/K", "c0": "m/s", "cd": "m/s", "a": "m^2/s", "rhoc": "J/(m^3 K)"}
DERIVED_WORDS = {"c0": "bar wave speed sqrt(E/rho)", "cd": "dilatational wave speed sqrt(M/rho)",
                 "a": "thermal diffusivity k/(rho c)", "rhoc": "volumetric heat capacity rho c"}


@dataclass
class Problem:
    kind: str                  # mismatch | implausible | gravity
    severity: str
    message: str
    loc: Optional[Loc]
    material: Optional[str] = None
    data: dict = field(default_factory=dict)


def _label(data, s: int, q: str) -> str:
    dim = QUANTITY_DIMENSION.get(q)
    sys = data.systems[s]
    return sys.label(dim) if dim else "(dimensionless)"


def _write(ev, q: str, src: int, dst: int, data) -> float:
    dim = QUANTITY_DIMENSION[q]
    return float(ev.values[q] * data.systems[src].scale(dim) / data.systems[dst].scale(dim))


def _sev(ev, qs) -> str:
    return "error" if ev.assigned and any(ev.used.get(q, True) for q in qs) else "note"


def diagnose_material(inf: Inference, ms: MaterialScore) -> list[Problem]:
    data, ref, ev = inf.data, inf.ref, ms.ev
    if ref is None or not ms.dims:
        return []
    tol = float(data.scoring["material_tol"])
    if ms.misfit[ref] <= tol:
        return _implausible(inf, ms, int(ms.best_class[ref]), ref)
    refname = data.systems[ref].name
    # every reading that explains the material is a candidate; the one that fits best wins
    candidates = []
    weight = _weight_density(inf, ms)
    if weight is not None:
        candidates.append(weight)
    gap = float(data.scoring["slip_min_decades"])
    alts = [s for s in range(len(data.systems))
            if ms.misfit[s] <= tol and ms.misfit[ref] - ms.misfit[s] >= gap and not equivalent(data, s, ref, ms.dims)]
    if alts:
        alt = min(alts, key=lambda s: (ms.misfit[s], data.systems[s].prior))
        cls = data.class_names[int(ms.best_class[alt])]
        dimq = [q for q in ev.values if QUANTITY_DIMENSION[q]]
        fits = ", ".join(f"{WORDS[q]} {ev.values[q]:.4g} as {_label(data, alt, q)}" for q in dimq)
        writes = ", ".join(f"{WORDS[q]} {_write(ev, q, alt, ref, data):.4g}" for q in dimq)
        msg = (f"material {ev.name}: its values fit {data.systems[alt].name} ({fits}: a {cls}) "
               f"but the model is in {refname}: in {refname} write {writes}")
        q0 = dimq[0]
        candidates.append((float(ms.misfit[alt]) + float(data.scoring["slip_penalty"]), Problem(
            "mismatch", _sev(ev, dimq), msg, ev.locs.get(q0, ev.loc), ev.name,
            {"quantities": dimq, "fits": data.systems[alt].name, "model": refname, "class": cls,
             "write": {q: _write(ev, q, alt, ref, data) for q in dimq}})))
    # the moduli may be the slipped group when they fit no class as written, or, loosely (more than
    # one decade off the class of the rest), when no other material's moduli fit the reference
    anchored = any(o.ev.key != ev.key and "E" in o.ev.values and o.misfit[ref] <= tol for o in inf.materials)
    found = _split(inf, ms, loose_moduli=not anchored)
    if found is not None:
        candidates.append(found)
    if candidates:
        return [_ranked(candidates, ev)]
    return _implausible(inf, ms, int(ms.best_class[ref]), ref)


def _ranked(candidates: list, ev) -> Problem:
    """The best-fitting reading (lowest cost), with its factor, and the others it was ranked against."""
    candidates.sort(key=lambda c: c[0])
    cost, best = candidates[0]
    factors = {q: v / ev.values[q] for q, v in best.data.get("write", {}).items() if ev.values.get(q)}
    if factors:
        best.message += " (" + ", ".join(f"{WORDS.get(q, q)} x {f:.4g}" for q, f in factors.items()) + ")"
    from .infer import load_data
    from .names import name_classes

    hinted = name_classes(ev.name)
    if hinted:
        names = " or ".join(load_data().class_names[c] for c in hinted)
        best.message += f"; the name {ev.name} says {names}"
    best.data["factor"] = factors
    best.data["fit"] = round(cost, 3)
    if len(candidates) > 1:
        best.data["other_readings"] = [{"fits": p.data.get("fits"), "write": p.data.get("write"), "fit": round(c, 3)}
                                       for c, p in candidates[1:]]
    return best


def _split(inf: Inference, ms: MaterialScore, loose_moduli: bool = False) -> Optional[tuple[float, Problem]]:
    data, ref, ev = inf.data, inf.ref, ms.ev
    tol = float(data.scoring["material_tol"])
    groups = [g for g in GROUPS if any(q in ev.values and QUANTITY_DIMENSION[q] for q in GROUPS[g])]
    # only a quantity that fits no class at all when read in the reference system can be the slipped one
    si = si_values(ev, data)
    bad = {q: bool(v[ref]) for q, v in slip_bad(ev, data).items()}
    best = None
    for subset in group_subsets(groups):
        if len(subset) == len(groups):
            continue
        qs = [q for g in subset for q in GROUPS[g] if q in ev.values and QUANTITY_DIMENSION[q]]
        groups_bad = _groups_bad(subset, bad, ev)
        may_loose = loose_moduli and "moduli" in subset
        if not (groups_bad or may_loose):        # no reading of this subset can be taken (see below)
            continue
        alts = set.intersection(*(set(data.slip_sources[g]) for g in subset))
        for alt in sorted(alts):
            if all(np.isclose(data.systems[alt].scale(QUANTITY_DIMENSION[q]),
                              data.systems[ref].scale(QUANTITY_DIMENSION[q])) for q in qs):
                continue
            pc = class_misfit(ev, data, {q: alt for q in qs})[:, ref]
            c = int(np.argmin(pc))
            if pc[c] > tol:
                continue
            loose = may_loose and all(
                bad[q] or q in ("E", "K") and float(U.decades_outside(si[q][ref], data.lo[q][c], data.hi[q][c])) > 1.0
                for q in qs)
            if not (groups_bad or loose):
                continue
            cost = pc[c] + 0.2 * (len(subset) - 1) + (0.1 if "moduli" in subset else 0.0) + \
                0.01 * data.systems[alt].prior
            if best is None or cost < best[0]:
                best = (cost, subset, qs, alt, c)
    if best is None:
        return None
    cost, subset, qs, alt, c = best
    refname, altname = data.systems[ref].name, data.systems[alt].name
    rest = [q for q in ev.values if QUANTITY_DIMENSION[q] and q not in qs]
    moduli_rest = any(q in ("E", "K") for q in rest)
    rest_words = "the moduli are" if moduli_rest else ("the " + ", ".join(WORDS[q] for q in rest) +
                                                       (" are" if len(rest) > 1 else " is"))
    parts = [f"{WORDS[q]} {ev.values[q]:.4g} fits {_label(data, alt, q)}" for q in qs]
    rq = rest[0]
    writes = ", ".join(f"{_write(ev, q, alt, ref, data):.4g}" if len(qs) == 1 else
                       f"{WORDS[q]} {_write(ev, q, alt, ref, data):.4g}" for q in qs)
    msg = (f"material {ev.name}: {' and '.join(parts)} ({altname}) but {rest_words} in "
           f"{_label(data, ref, rq)}: in {refname} write {writes}")
    if "E" in qs and ev.how.get("E", "").startswith("3 mu0"):
        f = data.systems[alt].scale("stress") / data.systems[ref].scale("stress")
        msg += f"; that is, multiply the stress-like constants (C, mu) by {f:.4g} and the D constants by {1 / f:.4g}"
    how = [f"{WORDS[q]} taken as {ev.how[q]}" for q in qs if ev.how.get(q) not in (None, q, WORDS[q], "density")]
    if how:
        msg += f" ({'; '.join(how)})"
    wtm = ev.notes.get("WTMASS")
    if "rho" in qs and wtm is not None and wtm != 1.0:
        msg += f" (density = RHO {ev.notes.get('RHO', float('nan')):.4g} x WTMASS {wtm:.4g})"
    # it matters when the analysis reads both sides of the disagreement
    sev = "error" if _sev(ev, qs) == "error" and _sev(ev, rest) == "error" else "note"
    return cost + float(data.scoring["slip_penalty"]), Problem(
        "mismatch", sev, msg, ev.locs.get(qs[0], ev.loc), ev.name,
        {"quantities": qs, "groups": list(subset), "fits": altname, "model": refname,
         "class": data.class_names[c], "write": {q: _write(ev, q, alt, ref, data) for q in qs}})


def _groups_bad(subset, bad: dict, ev) -> bool:
    """Every moved group holds a value that is far outside every band as written."""
    return all(any(bad.get(q, False) for q in GROUPS[g] if q in ev.values) for g in subset)


def _implausible(inf: Inference, ms: MaterialScore, c: int, ref: int) -> list[Problem]:
    data, ev = inf.data, ms.ev
    qtol = float(data.scoring["quantity_tol"])
    si = si_values(ev, data)
    si.update(derived_quantities(si))
    fit = np.all([~np.isnan(data.lo[q]) for q in ev.values], axis=0)
    if fit.any() and not fit[c]:   # judge against a class that has a band for every quantity given
        c = int(np.flatnonzero(fit)[np.argmin(ms.per_class[fit, ref])])
    cls = data.class_names[c]
    out, flagged_base = [], False
    for q in list(ev.values) + list(DERIVED):
        if q not in si or q == "nu":
            continue
        lo, hi = data.lo[q][c], data.hi[q][c]
        if np.isnan(lo):
            continue
        x = float(si[q][ref])
        d = float(U.decades_outside(x, lo, hi))
        if not (d > qtol) or (q in DERIVED and flagged_base):
            continue
        flagged_base = flagged_base or q not in DERIVED
        parts = (q,) if q not in DERIVED else tuple(p for p in ("E", "nu", "rho", "k", "c") if p in ev.values)
        name = WORDS.get(q) or DERIVED_WORDS[q]
        scaled = q in ev.values and not np.isclose(x, ev.values[q], rtol=1e-9)
        shown = f"{ev.values[q]:.4g} {_label(data, ref, q)} = " if scaled else ""
        msg = (f"material {ev.name}: {name} {shown}{x:.4g} {SI_UNIT[q]} is outside {lo:.3g}-{hi:.3g} "
               f"{SI_UNIT[q]} for a {cls} in {data.systems[ref].name}")
        if q in ev.how and ev.how[q] not in (q, WORDS[q], "density"):
            msg += f" ({WORDS[q]} taken as {ev.how[q]})"
        if q == "rho":
            msg += _weight_density_hint(inf, ev, ref, c)
        sev = "warning" if _sev(ev, parts) == "error" else "note"
        out.append(Problem("implausible", sev, msg, ev.locs.get(parts[0], ev.loc), ev.name,
                           {"quantity": q, "value_si": x, "band": [lo, hi], "class": cls,
                            "system": data.systems[ref].name, "decades": d}))
    return out


def diagnose_gravity(inf: Inference) -> list[Problem]:
    data = inf.data
    g0, tol = float(data.model["gravity"]), float(data.model["gravity_rel_tol"])
    acc = data.scales("acceleration")
    out = []
    for g, loc in inf.evidence.gravity:
        ok = np.abs(g * acc / g0 - 1.0) <= tol
        fits = [data.systems[i].name for i in np.flatnonzero(ok)]
        if inf.ref is not None and ok[inf.ref]:
            continue
        if inf.ref is None and fits:
            continue
        if not fits and inf.ref is not None:
            n = g * acc[inf.ref] / g0
            lf = data.model["load_factor"]
            if float(lf[0]) <= n <= float(lf[1]):
                continue         # standard gravity in no system: read as a load factor of n g
        if inf.ref is None:
            msg = f"gravity {g:.6g} fits no unit system (standard gravity is {g0} m/s^2)"
        else:
            r = data.systems[inf.ref]
            expect = g0 / acc[inf.ref]
            where = (f"fits {data.systems[int(np.flatnonzero(ok)[0])].label('acceleration')} ({', '.join(fits)})"
                     if fits else "fits no unit system")
            msg = (f"gravity {g:.6g} {where} but the model is in {r.name}: "
                   f"write {expect:.6g} {r.label('acceleration')}")
            if not fits:
                msg += f" (as written it is {g * acc[inf.ref] / g0:.3g} g)"
        out.append(Problem("gravity", "warning", msg, loc, None,
                           {"value": g, "fits": fits, "model": data.systems[inf.ref].name if inf.ref is not None
                            else None, "expected": (g0 / acc[inf.ref]) if inf.ref is not None else None}))
    return out


def diagnose(inf: Inference, floor: float = 0.0) -> list[Problem]:
    """The problems against the reference system. When the system was inferred with a confidence below
    ``floor``, a problem that the runner-up system would not raise is marked ``decided_by_guess``."""
    out = []
    guess = (not inf.declared and inf.ref is not None and inf.runner_up is not None and inf.confidence < floor)
    other = replace(inf, ref=inf.runner_up) if guess else None
    for ms in inf.materials:
        found = diagnose_material(inf, ms)
        if guess and found:
            kinds = {p.kind for p in diagnose_material(other, ms)}
            for p in found:
                if p.kind not in kinds:
                    p.data["decided_by_guess"] = True
        out.extend(found)
    out.extend(diagnose_gravity(inf))
    return out


def _weight_density(inf: Inference, ms: MaterialScore) -> Optional[tuple[float, Problem]]:
    """The material fits the reference once its density is divided by g: RHO is a weight density."""
    data, ref, ev = inf.data, inf.ref, ms.ev
    if "rho" not in ev.values or not slip_bad(ev, data)["rho"][ref]:
        return None      # only a density that fits no class as written
    g = float(data.model["gravity"]) / data.systems[ref].scale("acceleration")
    trial = replace(ev, values={**ev.values, "rho": ev.values["rho"] / g})
    pc = class_misfit(trial, data)[:, ref]
    c = int(np.argmin(pc))
    if pc[c] > float(data.scoring["material_tol"]):
        return None
    mass = ev.values["rho"] / g
    msg = (f"material {ev.name}: density {ev.values['rho']:.4g} fits as a weight density (force per volume), "
           f"not a mass density, in {data.systems[ref].name}: the mass density is {mass:.4g} (divided by "
           f"g = {g:.6g}); bulk decks: PARAM,WTMASS,{1 / g:.6g} converts RHO")
    # one number read as a weight density: an error only against a declared system (test decks often
    # carry a placeholder density); otherwise a warning
    sev = _sev(ev, ["rho"])
    if not inf.declared:
        sev = "warning" if sev == "error" else sev
    return float(pc[c]) + weight_density_penalty(ev, data), Problem(
        "mismatch", sev, msg, ev.locs.get("rho", ev.loc), ev.name,
        {"quantities": ["rho"], "fits": "weight density", "model": data.systems[ref].name,
         "class": data.class_names[c], "write": {"rho": mass}, "wtmass": 1 / g})


def _weight_density_hint(inf: Inference, ev, ref: int, c: int) -> str:
    """A density that fits once divided by g is a weight density (bulk decks: PARAM,WTMASS = 1/g)."""
    data = inf.data
    g = float(data.model["gravity"]) / data.systems[ref].scale("acceleration")
    mass = ev.values["rho"] / g * data.systems[ref].scale("density")
    if float(U.decades_outside(mass, data.lo["rho"][c], data.hi["rho"][c])) > 0:
        return ""
    return (f"; it fits as a weight density: the mass density is {ev.values['rho'] / g:.4g} "
            f"(divide by g = {g:.6g}; bulk decks: PARAM,WTMASS,{1 / g:.6g})")
