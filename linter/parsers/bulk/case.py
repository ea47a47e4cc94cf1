"""Executive and case control of a bulk deck (SOL, SUBCASE, TEMP/LOAD/METHOD selections) and
the steps and loads built from them (coordinate systems: ``coords``).

SOL numbers and names: MYSTRAN User Manual (solution sequences), NASTRAN-95 User's Manual (rigid formats),
later dialects.
"""
from __future__ import annotations

import re
from dataclasses import dataclass, field
from typing import Optional

from ...model import DeckModel, Load, Loc, Procedure, Step

SOL_NUMBERS = {
    "101": "static", "103": "frequency", "104": "static", "105": "buckle", "106": "static",
    "129": "dynamic-implicit", "108": "frequency-response", "111": "frequency-response",
    "109": "dynamic-implicit", "112": "modal-dynamic", "107": "complex-frequency", "110": "complex-frequency",
    "153": "heat-steady", "159": "heat-transient", "31": "frequency",
    # NASTRAN-95 rigid formats (displacement approach)
    "1": "static", "2": "static", "3": "frequency", "4": "static", "5": "buckle", "6": "static",
    "7": "complex-frequency", "10": "complex-frequency", "8": "frequency-response", "11": "frequency-response",
    "9": "dynamic-implicit", "12": "modal-dynamic",
}
HEAT_RIGID = {"1": "heat-steady", "3": "heat-steady", "9": "heat-transient"}
SOL_NAMES = {"STATICS": "static", "STATIC": "static", "SESTATIC": "static", "MODES": "frequency",
             "SEMODES": "frequency", "NORMAL": "frequency", "BUCKLING": "buckle", "SEBUCKL": "buckle",
             "DIFFEREN": "static", "NLSTATIC": "static", "NLTRAN": "dynamic-implicit", "GEN": "frequency",
             "SEDFREQ": "frequency-response", "SEMFREQ": "frequency-response", "SEDTRAN": "dynamic-implicit",
             "SEMTRAN": "modal-dynamic"}
_ASSIGN = re.compile(r"^\s*([A-Z][A-Z0-9]*(?:\s*\([^)]*\))?)\s*=\s*([^\s,]*)")


@dataclass
class CaseControl:
    sol: Optional[str] = None
    sol_loc: Optional[Loc] = None
    heat: bool = False
    cend: bool = False
    #: [(name, loc, {key: value})]; the first entry (name None) holds the global settings
    subcases: list = field(default_factory=list)

    def line(self, text: str, loc: Loc) -> None:
        up = text.split("$", 1)[0].upper().rstrip()
        s = up.strip()
        if not s:
            return
        if not self.cend:
            if s.startswith("CEND"):
                self.cend = True
            elif re.match(r"SOL\b", s):
                tok = s[3:].strip().replace(",", " ").split()
                if tok:
                    self.sol, self.sol_loc = tok[0], loc
            elif re.match(r"APP\b", s) and "HEAT" in s:
                self.heat = True
            return
        if not self.subcases:
            self.subcases.append([None, loc, {}])
        m = re.match(r"SUBCASE\s+(\d+)", s)
        if m:
            self.subcases.append([f"SUBCASE {m.group(1)}", loc, {}])
            return
        m = _ASSIGN.match(s)
        if m:
            key = re.sub(r"\s+", "", m.group(1))
            if key == "TEMPERATURE" or key.startswith("TEMPERATURE("):
                key = "TEMP" + key[len("TEMPERATURE"):]
            self.subcases[-1][2][key] = m.group(2)

    def kind(self) -> str:
        if self.sol is None:
            return "other"
        if self.heat and self.sol in HEAT_RIGID:
            return HEAT_RIGID[self.sol]
        return SOL_NUMBERS.get(self.sol) or SOL_NAMES.get(self.sol, "other")


def _sid(v: str) -> Optional[str]:
    v = v.strip()
    return str(int(v)) if v.lstrip("+-").isdigit() else None


def build_steps(model: DeckModel, cc: CaseControl, loads: dict[str, list[Load]], temps: dict[str, list[Load]],
                tempd: dict[str, list[Load]], combos: dict[str, list[str]]) -> None:
    """Steps from the subcases; loads and temperatures selected by LOAD=/TEMP(LOAD)=/TEMP=/TEMP(INIT)=."""
    if cc.sol is not None:
        model.params["SOL"] = cc.sol
    glob = cc.subcases[0][2] if cc.subcases else {}
    subs = cc.subcases[1:] or ([[None, cc.sol_loc, {}]] if cc.sol is not None else [])
    init_sids: set[str] = set()
    any_temp_selection = False
    for name, loc, settings in subs:
        merged = {**glob, **settings}
        loc = loc or cc.sol_loc or Loc(model.path, 1)
        kind = cc.kind()
        opts = {"SOL": cc.sol}
        for k in ("METHOD", "LOAD", "SPC", "TEMP", "TEMP(LOAD)", "TEMP(INIT)", "TEMP(BOTH)", "TEMP(MATERIAL)"):
            if k in merged:
                opts[k] = merged[k]
        proc = Procedure(kind, "SOL", cc.sol_loc or loc, options=opts)
        step = Step(name or f"SOL {cc.sol}", loc, [proc])
        lsid = _sid(merged.get("LOAD", ""))
        if lsid:
            for sid in [lsid] + combos.get(lsid, []):
                step.loads.extend(loads.get(sid, ()))
        for key in ("TEMP(LOAD)", "TEMP", "TEMP(BOTH)"):
            tsid = _sid(merged.get(key, ""))
            if tsid:
                any_temp_selection = True
                step.loads.extend(temps.get(tsid, []) + tempd.get(tsid, []))
                break
        for key in ("TEMP(INIT)", "TEMP(BOTH)", "TEMP(MATERIAL)"):
            isid = _sid(merged.get(key, ""))
            if isid:
                any_temp_selection = True
                init_sids.add(isid)
        model.steps.append(step)
    for sid in init_sids:
        model.initial_temperatures.extend(temps.get(sid, []) + tempd.get(sid, []))
    if not any_temp_selection:
        for lst in tempd.values():
            model.initial_temperatures.extend(lst)
