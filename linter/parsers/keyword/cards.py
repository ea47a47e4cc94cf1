"""Model and step cards of keyword decks: sections, orientations, steps, loads, masses, constants."""
from __future__ import annotations

import math
from typing import Optional

from ...model import Load, MassSource, MaterialRef, Orientation, Section, Step, norm_key
from .lex import KeywordLine, Reader, is_int, to_float

SECTION_CARDS = {"SOLIDSECTION": ("solid", "solid"), "SHELLSECTION": ("shell", "shell"),
                 "MEMBRANESECTION": ("membrane", "membrane"), "BEAMSECTION": ("beam", "beam"),
                 "BEAMGENERALSECTION": ("beam", "beam"), "FLUIDSECTION": ("fluid", "fluid")}

#: procedure keyword -> kind (some depend on parameters, see :func:`procedure_kind`)
PROCEDURE_CARDS = {
    "STATIC": "static", "BUCKLE": "buckle", "FREQUENCY": "frequency", "COMPLEXFREQUENCY": "complex-frequency",
    "MODALDYNAMIC": "modal-dynamic", "STEADYSTATEDYNAMICS": "steady-state-dynamics", "DYNAMIC": "dynamic-implicit",
    "HEATTRANSFER": "heat-transient", "COUPLEDTEMPERATURE-DISPLACEMENT": "coupled-transient",
    "UNCOUPLEDTEMPERATURE-DISPLACEMENT": "uncoupled-transient", "VISCO": "visco",
    "ELECTROMAGNETICS": "other", "SENSITIVITY": "other", "GREEN": "other", "CRACKPROPAGATION": "other",
    "FEASIBLEDIRECTION": "other", "SUBSTRUCTUREGENERATE": "other", "NOANALYSIS": "other",
    "ROBUSTDESIGN": "other",
}


#: procedure kinds whose first data line is "initial increment, step period, ..." (CCX-UM *DYNAMIC,
#: *HEAT TRANSFER, *COUPLED TEMPERATURE-DISPLACEMENT)
TIMED_KINDS = ("dynamic-explicit", "dynamic-implicit", "heat-transient", "coupled-transient")


def step_times(rd, start: int, end: int, first_line: int) -> dict:
    """``{"increment", "period"}`` from the first data line of a timed procedure (what is readable)."""
    for ln in rd.lines(start, end, first_line):
        out = {}
        for name, f in zip(("increment", "period"), ln.fields[:2]):
            v = to_float(f)
            if v is not None and math.isfinite(v) and v > 0:
                out[name] = v
        return out
    return {}


def procedure_kind(kw: KeywordLine) -> str:
    kind = PROCEDURE_CARDS[kw.key]
    steady = "STEADYSTATE" in kw.params
    if kw.key == "DYNAMIC" and "EXPLICIT" in kw.params:
        return "dynamic-explicit"
    if kw.key == "HEATTRANSFER" and "FREQUENCY" in kw.params:
        return "heat-frequency"
    if kw.key == "HEATTRANSFER" and steady:
        return "heat-steady"
    if kw.key == "COUPLEDTEMPERATURE-DISPLACEMENT" and steady:
        return "coupled-steady"
    return kind


def _target(f: str) -> str:
    return f if is_int(f) else norm_key(f)


def read_section(rd: Reader, kw: KeywordLine, start: int, end: int, first_line: int, model) -> None:
    kind, role = SECTION_CARDS[kw.key]
    elset_w = kw.get("ELSET")
    if not elset_w:
        rd.issue("malformed-data", f"{kw.written} without ELSET= (the element set is required)", kw.loc.line)
    opts = {k: kw.params[k] for k in kw.order if k not in ("ELSET", "MATERIAL", "ORIENTATION")}
    mats: list[MaterialRef] = []
    lines = list(rd.lines(start, end, first_line))
    composite = "COMPOSITE" in kw.params and kw.key in ("SHELLSECTION", "MEMBRANESECTION")
    mat_w = kw.get("MATERIAL")
    if composite:
        kind = "composite-" + kind
        if mat_w:
            rd.issue("malformed-data", f"{kw.written}: COMPOSITE and MATERIAL are mutually exclusive",
                     kw.loc.line)
        plies = []
        for line in lines:
            f = line.fields
            if len(f) < 3 or not f[2]:
                rd.issue("malformed-data", f"{kw.written}, COMPOSITE: a layer line needs 'thickness, , material"
                         f"[, orientation]': {line.raw.strip()}", line.loc.line)
                continue
            t = rd.real(f[0], line, "layer thickness", empty_is_issue=False)
            mats.append(MaterialRef("ply", f[2], norm_key(f[2]), line.loc))
            plies.append({"thickness": t, "material": norm_key(f[2]),
                          "orientation": norm_key(f[3]) if len(f) > 3 and f[3] else None})
        opts["plies"] = plies
        if not plies:
            rd.issue("malformed-data", f"{kw.written}, COMPOSITE has no layer line", kw.loc.line)
    else:
        if not mat_w:
            rd.issue("malformed-data", f"{kw.written} without MATERIAL= (the material is required)", kw.loc.line)
        else:
            mats.append(MaterialRef(role, mat_w.strip(), norm_key(mat_w), kw.loc))
        if lines and kind == "fluid":
            opts["data"] = tuple(lines[0].fields)
        elif lines:
            vals = []
            for f in lines[0].fields:
                v = rd.real(f, lines[0], "section dimension", empty_is_issue=False) if f else 0.0
                vals.append(v)
            opts["dimensions"] = tuple(vals)
            if kind == "shell" and vals and vals[0] is not None:
                opts["thickness"] = vals[0]
        elif kind in ("shell", "membrane") or kw.key in ("BEAMSECTION", "BEAMGENERALSECTION"):
            rd.issue("malformed-data", f"{kw.written} has no data line (the thickness / dimensions are required)",
                     kw.loc.line)
    orient = kw.get("ORIENTATION")
    model.sections.append(Section(kind=kind, card=kw.written, elset=norm_key(elset_w or ""),
                                  elset_name=(elset_w or "").strip(), materials=mats, loc=kw.loc,
                                  orientation=norm_key(orient) if orient else None, options=opts))


def read_orientation(rd: Reader, kw: KeywordLine, start: int, end: int, first_line: int, model) -> None:
    name = kw.get("NAME")
    if not name:
        rd.issue("malformed-data", "*ORIENTATION without NAME=", kw.loc.line)
        return
    lines = list(rd.lines(start, end, first_line))
    # a *DISTRIBUTION name may stand in for the six numbers (CCX-UM *ORIENTATION): no values then
    by_name = bool(lines and lines[0].fields and to_float(lines[0].fields[0]) is None)
    vals: list[float] = []
    if not lines:
        rd.issue("malformed-data", "*ORIENTATION has no data line (the six coordinates are required)", kw.loc.line)
    for line in [] if by_name else lines:
        for f in line.fields:
            v = rd.real(f, line, "orientation value", empty_is_issue=False)
            if v is not None:
                vals.append(v)
    model.orientations[norm_key(name)] = Orientation(name=name.strip(), key=norm_key(name), loc=kw.loc,
                                                     system=kw.upper("SYSTEM", "RECTANGULAR"), values=tuple(vals))


def open_step(kw: KeywordLine, model) -> Step:
    nl = kw.upper("NLGEOM", "")
    step = Step(name=(kw.get("NAME") or f"Step {len(model.steps) + 1}").strip(), loc=kw.loc,
                nlgeom="NLGEOM" in kw.params and nl not in ("NO",))
    model.steps.append(step)
    if model.first_step is None:
        model.first_step = kw.loc
    return step


def read_dload(rd: Reader, kw: KeywordLine, start: int, end: int, first_line: int, step: Step) -> None:
    for line in rd.lines(start, end, first_line):
        f = line.fields
        if len(f) < 2:
            continue
        typ = f[1].upper()
        if typ not in ("GRAV", "CENTRIF"):
            continue
        nums = []
        for x in f[2:]:
            v = rd.real(x, line, f"{typ} value", empty_is_issue=False)
            if v is None:
                break
            nums.append(v)
        else:
            if not nums:
                rd.issue("malformed-data", f"*DLOAD {typ} without a magnitude", line.loc.line)
                continue
            target = _target(f[0]) if f[0] else None
            if typ == "GRAV":
                # ccx 2.20 run: the direction is normalised (0,0,-2 gives the same result as 0,0,-1),
                # so the magnitude is the acceleration as written
                vec = tuple(nums[1:4])
                norm = math.sqrt(sum(v * v for v in vec)) if vec else 0.0
                if norm:
                    vec = tuple(v / norm for v in vec)
                step.loads.append(Load("gravity", nums[0], line.loc, target, vec))
            else:
                step.loads.append(Load("centrifugal", nums[0], line.loc, target, tuple(nums[1:7])))


def read_temperatures(rd: Reader, kw: KeywordLine, start: int, end: int, first_line: int,
                      out: list) -> None:
    for line in rd.lines(start, end, first_line):
        f = line.fields
        if not f or not f[0]:
            rd.issue("malformed-data", f"{kw.written}: a line needs 'node or node set, temperature'", line.loc.line)
            continue
        v = rd.real(f[1], line, "temperature", empty_is_issue=False) if len(f) > 1 else 0.0
        if v is None:
            continue
        out.append(Load("temperature", v, line.loc, _target(f[0])))


def read_mass(rd: Reader, kw: KeywordLine, start: int, end: int, first_line: int, model) -> None:
    elset = kw.get("ELSET")
    if not elset:
        rd.issue("malformed-data", "*MASS without ELSET=", kw.loc.line)
    value: Optional[float] = None
    for line in rd.lines(start, end, first_line):
        if line.fields:
            value = rd.real(line.fields[0], line, "mass", empty_is_issue=True)
        break
    else:
        rd.issue("malformed-data", "*MASS has no data line (the mass is required)", kw.loc.line)
    model.mass_sources.append(MassSource("point-mass", kw.loc, norm_key(elset) if elset else None, value))


def read_physical_constants(rd: Reader, kw: KeywordLine, model) -> None:
    from .lex import to_float

    for name, key in (("ABSOLUTEZERO", "ABSOLUTE_ZERO"), ("STEFANBOLTZMANN", "STEFAN_BOLTZMANN"),
                      ("NEWTONGRAVITY", "NEWTON_GRAVITY")):
        if name in kw.params:
            v = to_float(kw.upper(name))
            if v is None or not math.isfinite(v):
                rd.issue("malformed-data", f"*PHYSICAL CONSTANTS, {name}={kw.get(name)} is not a number",
                         kw.loc.line)
            else:
                model.params[key] = v
