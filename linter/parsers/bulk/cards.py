"""Bulk cards read one by one (materials, properties, masses, loads) mapped into the neutral model.

Field layouts: NASTRAN-95 User's Manual (BULK.TXT) and MYSTRAN User Manual (MAT1 blank-field rules; MAT2/MAT8/MAT9;
MATS1/TABLES1/MATT1 5.3; MAT4/MAT5 5.4; PSOLID 5.5; PSHELL 5.6; PCOMP/PCOMPG/PBAR/PBEAM/PROD 5.7).
A :class:`Card` holds the logical fields of one entry: ``card.f[n - 2]`` is field ``n``
(field 2 is the first data field; continuation lines go on at 10, 11, ...).
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Optional

import numpy as np

from ...model import DeckModel, Issue, Loc, MassSource, Material, MaterialRef, PropertyBlock, Row, Section, Unchecked
from .fields import FieldError, integer, real

STRUCTURAL_MATS = ("MAT1", "MAT2", "MAT3", "MAT8", "MAT9", "MAT10", "MAT11", "MATHP", "MATHE")
THERMAL_MATS = ("MAT4", "MAT5")
OTHER_MATS = ("MAT3", "MAT10", "MAT11", "MATHP", "MATHE", "MATS8", "MAT2T")
PROPERTY_CARDS = ("PSOLID", "PSHELL", "PCOMP", "PCOMPG", "PCOMP1", "PBAR", "PBARL", "PBEAM", "PBEAML",
                  "PROD", "PTUBE", "PSHEAR")
#: cards read one by one (everything else but GRID/elements is skipped)
SLOW_CARDS = set(STRUCTURAL_MATS + THERMAL_MATS + OTHER_MATS + PROPERTY_CARDS) | {
    "MATS1", "MATT1", "TABLES1", "TABLEM1", "TABLEM2", "TABLEM3", "TABLEM4", "CONROD", "CONM2", "NSM", "NSM1",
    "CORD2R", "CORD2C", "CORD2S", "CORD1R", "GRAV", "RFORCE", "TEMP", "TEMPD", "LOAD", "PARAM", "GRDSET"}
SHELL_ROLES = ((3, "membrane"), (5, "bending"), (7, "transverse-shear"), (12, "coupling"))


@dataclass(slots=True)
class Card:
    name: str
    f: list[str]
    loc: Loc
    large: bool = False

    def s(self, n: int) -> str:
        i = n - 2
        return self.f[i].upper() if 0 <= i < len(self.f) else ""


@dataclass
class Builder:
    """Turns the collected slow cards into materials, sections, masses; loads are kept for the case control."""

    model: DeckModel
    cards: list[Card] = field(default_factory=list)
    tables: dict[str, Card] = field(default_factory=dict)

    # -- field readers that record problems instead of raising ------------------------------

    def issue(self, code: str, msg: str, card: Card, material: Optional[str] = None, **data) -> None:
        self.model.issues.append(Issue(code, msg, card.loc, material=material, data=data))

    def num(self, card: Card, n: int, what: str, material: Optional[str] = None) -> Optional[float]:
        text = card.s(n)
        try:
            v = real(text)
        except FieldError as exc:
            self.issue("malformed-data", f"{card.name} field {n} ({what}): {exc}; the entry is read without it",
                       card, material, field=what, value=text)
            return None
        if v is not None and not math.isfinite(v):
            self.issue("value-not-finite", f"{card.name} field {n} ({what}) is '{text}', not a finite number",
                       card, material, field=what, value=text)
            return None
        return v

    def ident(self, card: Card, n: int, what: str) -> Optional[str]:
        text = card.s(n)
        try:
            v = integer(text)
        except FieldError as exc:
            self.issue("malformed-data", f"{card.name} field {n} ({what}): {exc}", card, field=what, value=text)
            return None
        return None if v is None else str(v)

    # -- materials ----------------------------------------------------------------------------

    def material(self, card: Card, structural: bool) -> Optional[Material]:
        mid = self.ident(card, 2, "MID")
        if mid is None:
            if not card.s(2):
                self.issue("malformed-data", f"{card.name} without a material id (MID)", card)
            return None
        seen = self.model.extras.setdefault("_mat_kinds", {})
        kinds = seen.setdefault(mid, set())
        cls = "structural" if structural else "thermal"
        mat = self.model.materials.get(mid)
        if mat is None:
            mat = Material(name=mid, key=mid, loc=card.loc)
            self.model.materials[mid] = mat
        elif cls in kinds:
            mat = Material(name=mid, key=mid, loc=card.loc)
            self.model.duplicate_materials.append(mat)
        kinds.add(cls)
        return mat

    def mat1(self, card: Card, wtmass: float) -> None:
        mat = self.material(card, True)
        if mat is None:
            return
        m = mat.name
        E, G, NU = (self.num(card, n, k, m) for n, k in ((3, "E"), (4, "G"), (5, "NU")))
        given = tuple(k for k, v in (("E", E), ("G", G), ("NU", NU)) if v is not None)
        blanks: list[int] = []
        e, g, nu = E, G, NU
        if E is None and G is None:
            if not card.s(3) and not card.s(4):
                self.issue("malformed-data", f"MAT1 {m}: E and G are both blank; the solver stops "
                           "(one of E or G must be given)", card, m, field="E/G")
            e, g, nu, blanks = 0.0, 0.0, (NU or 0.0), [0, 1] if NU is None else [0]
        elif G is None and NU is None:
            g, nu, blanks = 0.0, 0.0, [1]
        elif E is None and NU is None:
            e, nu, blanks = 0.0, 0.0, [0, 1]
        elif G is None:
            g = E / (2.0 * (1.0 + NU)) if NU != -1.0 else math.inf
        elif E is None:
            e, blanks = 2.0 * (1.0 + NU) * G, [0]
        elif NU is None:
            nu, blanks = (E / (2.0 * G) - 1.0 if G else math.nan), [1]
        defaulted = tuple(k for k, v in (("E", E), ("G", G), ("NU", NU)) if v is None)
        opts = {"card": "MAT1", "E": e, "G": g, "NU": nu, "given": given, "defaulted": defaulted,
                "raw": {"E": card.s(3), "G": card.s(4), "NU": card.s(5)}}
        mat.blocks.append(PropertyBlock("elastic", "iso", [Row((e, nu), None, card.loc, tuple(blanks))],
                                        card.loc, card="MAT1", options=opts))
        self._rho_alpha(card, mat, wtmass, rho_n=6, alpha=(7,), tref_n=8, form="iso")

    def _rho_alpha(self, card: Card, mat: Material, wtmass: float, rho_n: int, alpha: tuple, tref_n: int,
                   form: str) -> None:
        m = mat.name
        rho = self.num(card, rho_n, "RHO", m)
        if rho is not None:
            mat.blocks.append(PropertyBlock("density", "iso", [Row((rho * wtmass,), None, card.loc)], card.loc,
                                            card=card.name, options={"card": card.name, "RHO": rho,
                                                                     "WTMASS": wtmass}))
        a = [self.num(card, n, f"A{i + 1}", m) for i, n in enumerate(alpha)]
        if any(v is not None for v in a):
            tref = self.num(card, tref_n, "TREF", m)
            vals = tuple(0.0 if v is None else v for v in a)
            if form == "ortho" and len(vals) < 3:
                vals = vals + (math.nan,) * (3 - len(vals))
            mat.blocks.append(PropertyBlock("expansion", form, [Row(vals, None, card.loc)], card.loc,
                                            card=card.name, options={"card": card.name, "TREF": tref}))

    def matn(self, card: Card, wtmass: float) -> None:
        """MAT2, MAT8, MAT9 (the anisotropic structural cards)."""
        mat = self.material(card, True)
        if mat is None:
            return
        m, name = mat.name, card.name
        if name == "MAT2":
            names = ("G11", "G12", "G13", "G22", "G23", "G33")
            vals = [self.num(card, 3 + i, k, m) for i, k in enumerate(names)]
            blanks = tuple(i for i, v in enumerate(vals) if v is None)
            row = tuple(0.0 if v is None else v for v in vals)
            mat.blocks.append(PropertyBlock("elastic", "mat2", [Row(row, None, card.loc, blanks)], card.loc,
                                            card=name, options={"card": name}))
            a = [self.num(card, n, k, m) for n, k in ((10, "A1"), (11, "A2"), (12, "A3"))]
            rho = self.num(card, 9, "RHO", m)
            if rho is not None:
                mat.blocks.append(PropertyBlock("density", "iso", [Row((rho * wtmass,), None, card.loc)], card.loc,
                                                card=name, options={"card": name, "RHO": rho, "WTMASS": wtmass}))
            if any(v is not None for v in a):
                a1, a2, a12 = (0.0 if v is None else v for v in a)
                mat.blocks.append(PropertyBlock(
                    "expansion", "aniso", [Row((a1, a2, 0.0, a12, 0.0, 0.0), None, card.loc)], card.loc, card=name,
                    options={"card": name, "TREF": self.num(card, 13, "TREF", m), "note": "2D: A1, A2, A12"}))
        elif name == "MAT8":
            names = ("E1", "E2", "NU12", "G12", "G1Z", "G2Z")
            vals = [self.num(card, 3 + i, k, m) for i, k in enumerate(names)]
            blanks = tuple(i for i, v in enumerate(vals) if v is None)
            row = tuple((math.nan if i >= 4 else 0.0) if v is None else v for i, v in enumerate(vals))
            mat.blocks.append(PropertyBlock("elastic", "lamina", [Row(row, None, card.loc, blanks)], card.loc,
                                            card=name, options={"card": name, "blank G1Z/G2Z": "blank means rigid"}))
            self._rho_alpha(card, mat, wtmass, rho_n=9, alpha=(10, 11), tref_n=12, form="ortho")
        else:  # MAT9: 21 terms, fields 3..23; RHO 24; A1..A6 25..30; TREF 31
            vals = [self.num(card, 3 + i, f"G{i}", m) for i in range(21)]
            blanks = tuple(i for i, v in enumerate(vals) if v is None)
            row = tuple(0.0 if v is None else v for v in vals)
            mat.blocks.append(PropertyBlock("elastic", "mat9", [Row(row, None, card.loc, blanks)], card.loc,
                                            card=name, options={"card": name}))
            self._rho_alpha(card, mat, wtmass, rho_n=24, alpha=tuple(range(25, 31)), tref_n=31, form="aniso")

    def thermal(self, card: Card) -> None:
        mat = self.material(card, False)
        if mat is None:
            return
        m = mat.name
        if card.name == "MAT4":
            k, cp = self.num(card, 3, "K", m), self.num(card, 4, "CP", m)
            ks = (k,) if k is not None else None
            form, cp_n = "iso", 4
        else:
            vals = [self.num(card, n, key, m) for n, key in ((3, "KXX"), (4, "KXY"), (5, "KXZ"), (6, "KYY"),
                                                             (7, "KYZ"), (8, "KZZ"))]
            kxx, kxy, kxz, kyy, kyz, kzz = (0.0 if v is None else v for v in vals)
            ks = (kxx, kyy, kzz, kxy, kxz, kyz) if any(v is not None for v in vals) else None
            cp, form = self.num(card, 9, "CP", m), "aniso"
        if ks is not None:
            mat.blocks.append(PropertyBlock("conductivity", form, [Row(ks, None, card.loc)], card.loc,
                                            card=card.name, options={"card": card.name}))
        if cp is not None:
            mat.blocks.append(PropertyBlock("specific_heat", "iso", [Row((cp,), None, card.loc)], card.loc,
                                            card=card.name, options={"card": card.name}))

    def other_material(self, card: Card) -> None:
        mat = self.material(card, card.name in STRUCTURAL_MATS)
        if mat is None:
            return
        mat.blocks.append(PropertyBlock("other", card.name.lower(), [], card.loc, card=card.name,
                                        options={"card": card.name, "fields": tuple(card.f)}))
        self.model.unchecked.append(Unchecked(f"{card.name} {mat.name}", card.loc,
                                              f"{card.name} is read but not checked", material=mat.name))

    def table_points(self, tid: str) -> Optional[list[tuple[float, float]]]:
        tab = self.tables.get(tid)
        if tab is None:
            return None
        pts, vals = [], tab.f[8:]
        for i in range(0, len(vals) - 1, 2):
            x, y = vals[i].upper(), vals[i + 1].upper()
            if x == "ENDT" or y == "ENDT":
                break
            if x == "SKIP" or y == "SKIP" or not x and not y:
                continue
            try:
                px, py = real(x), real(y)
            except FieldError:
                self.issue("malformed-data", f"{tab.name} {tid}: point ({x}, {y}) is not a number pair", tab)
                continue
            if px is not None and py is not None:
                pts.append((px, py))
        return pts

    def mats1(self, card: Card) -> None:
        mid = self.ident(card, 2, "MID")
        mat = self.model.materials.get(mid) if mid else None
        if mat is None:
            self.issue("malformed-data", f"MATS1 refers to material {card.s(2)}, which has no MAT1/MAT2/MAT8/MAT9",
                       card, mid)
            return
        m = mat.name
        tid, typ = self.ident(card, 3, "TID"), card.s(4) or "NLELAST"
        h, limit1 = self.num(card, 5, "H", m), self.num(card, 8, "LIMIT1", m)
        opts = {"card": "MATS1", "TID": tid, "TYPE": typ, "H": h, "YF": card.s(6) or "1", "HR": card.s(7) or "1",
                "LIMIT1": limit1, "LIMIT2": self.num(card, 9, "LIMIT2", m)}
        rows: list[Row] = []
        if tid and tid != "0":
            pts = self.table_points(tid)
            if pts is None:
                self.issue("malformed-data", f"MATS1 {m}: table TABLES1 {tid} is not defined", card, m)
            else:
                opts["points"] = tuple(pts)
        if typ == "PLASTIC":
            el = mat.first("elastic")
            e = el.options.get("E") if el is not None and el.form == "iso" else None
            pts = opts.get("points")
            if pts:
                opts["x_axis_total_strain"] = True
                opts["x_axis"] = "total strain (converted to plastic strain with the MAT1 E)" if e else \
                    "total strain (not converted: no MAT1 E)"
                for x, y in pts:
                    if x == 0.0 and y == 0.0:
                        continue
                    ep = x - y / e if e else x
                    rows.append(Row((y, max(ep, 0.0) if e else ep), None, card.loc))
            elif limit1 is not None:
                rows.append(Row((limit1, 0.0), None, card.loc))
            mat.blocks.append(PropertyBlock("plastic", "iso", rows, card.loc, card="MATS1", options=opts))
        else:
            mat.blocks.append(PropertyBlock("other", "mats1", [], card.loc, card="MATS1", options=opts))
            self.model.unchecked.append(Unchecked(f"MATS1 {m} TYPE={typ}", card.loc,
                                                  "nonlinear-elastic stress-strain tables are not checked", m))

    def matt1(self, card: Card) -> None:
        mid = self.ident(card, 2, "MID")
        mat = self.model.materials.get(mid) if mid else None
        names = ("E", "G", "NU", "RHO", "A", None, "GE", "ST", "SC", "SS")
        tabs = {k: card.s(3 + i) for i, k in enumerate(names) if k and card.s(3 + i) not in ("", "0")}
        if mat is None:
            self.issue("malformed-data", f"MATT1 refers to material {card.s(2)}, which has no MAT1", card, mid)
            return
        el = mat.first("elastic")
        if el is not None:
            el.options["MATT1"] = tabs
            el.options["MATT1_points"] = {k: self.table_points(t) for k, t in tabs.items()}
        self.model.unchecked.append(Unchecked(f"MATT1 {mat.name}", card.loc,
                                              "temperature tables of MAT1 constants are recorded, not checked",
                                              mat.name))

    # -- properties -----------------------------------------------------------------------------

    def ref(self, role: str, mid: str, card: Card) -> MaterialRef:
        return MaterialRef(role, mid, mid, card.loc)

    def nsm(self, card: Card, n: int, pid: str) -> None:
        v = self.num(card, n, "NSM")
        if v:
            self.model.mass_sources.append(MassSource("nonstructural-mass", card.loc, f"PID {pid}", v))

    def prop(self, card: Card) -> None:
        pid = self.ident(card, 2, "PID")
        if pid is None:
            return
        name, refs, opts = card.name, [], {"card": card.name}
        if name == "PSOLID":
            kind = "solid"
            mid = self.ident(card, 3, "MID")
            if mid:
                refs.append(self.ref("solid", mid, card))
            opts.update(CORDM=card.s(4), IN=card.s(5), STRESS=card.s(6), ISOP=card.s(7), FCTN=card.s(8))
        elif name == "PSHELL":
            kind = "shell"
            for n, role in SHELL_ROLES:
                mid = self.ident(card, n, f"MID{n}")
                if mid and mid != "0":
                    refs.append(self.ref(role, mid, card))
            opts.update(T=self.num(card, 4, "T"), Z1=self.num(card, 10, "Z1"), Z2=self.num(card, 11, "Z2"),
                        **{"12I/T3": self.num(card, 6, "12I/T3"), "TS/T": self.num(card, 8, "TS/T")})
            self.nsm(card, 9, pid)
        elif name in ("PCOMP", "PCOMPG", "PCOMP1"):
            kind = "composite-shell"
            self.nsm(card, 4, pid)
            opts.update(Z0=card.s(3), FT=card.s(6), LAM=card.s(9))
            plies, last = [], None
            if name == "PCOMP1":
                mid = self.ident(card, 7, "MID")
                plies = [(mid, card.s(8))] if mid else []
            elif name == "PCOMP":
                for j in range((len(card.f) - 8 + 3) // 4):
                    mid, t = self.ident(card, 10 + 4 * j, "MIDi"), card.s(11 + 4 * j)
                    if mid is None and not t:
                        continue
                    last = mid or last
                    plies.append((last, t))
            else:
                for k in range(1, (len(card.f) + 7) // 8):
                    if not any(card.s(8 * k + n) for n in (2, 3, 4)):
                        continue
                    mid = self.ident(card, 8 * k + 3, "MIDi")
                    last = mid or last
                    plies.append((last, card.s(8 * k + 4)))
            opts["plies"] = len(plies)
            refs = [self.ref("ply", mid, card) for mid, _t in plies if mid]
        elif name in ("PBAR", "PBARL", "PBEAM", "PBEAML", "PROD", "PTUBE", "PSHEAR"):
            kind, role = {"PROD": ("rod", "rod"), "PTUBE": ("rod", "rod"),
                          "PSHEAR": ("shear", "shear-panel")}.get(name, ("beam", "beam"))
            mid = self.ident(card, 3, "MID")
            if mid:
                refs.append(self.ref(role, mid, card))
            n_nsm = {"PBAR": 8, "PBEAM": 9, "PROD": 7, "PTUBE": 6, "PSHEAR": 5}.get(name)
            if n_nsm:
                self.nsm(card, n_nsm, pid)
        else:  # pragma: no cover - PROPERTY_CARDS is exhaustive
            return
        self.model.sections.append(Section(kind, name, f"PID {pid}", f"PID {pid}", refs, card.loc, options=opts))

    def conrod(self, card: Card, conrod_counts: dict[str, list]) -> None:
        mid = self.ident(card, 5, "MID")
        key = f"CONROD MID {mid}"
        if mid is None:
            self.issue("malformed-data", "CONROD without a material id (MID, field 5)", card)
            return
        entry = conrod_counts.setdefault(key, [card.loc, 0, []])
        entry[1] += 1
        eid = self.ident(card, 2, "EID")
        entry[2].append(int(eid) if eid else 0)
        if entry[1] == 1:
            self.model.sections.append(Section("rod", "CONROD", key, key, [self.ref("rod", mid, card)], card.loc,
                                               options={"card": "CONROD"}))
        v = self.num(card, 9, "NSM")
        if v:
            self.model.mass_sources.append(MassSource("nonstructural-mass", card.loc, key, v))

    def nsm_card(self, card: Card) -> None:
        typ = card.s(3)
        vals = card.f[2:]
        pairs = []
        if card.name == "NSM":
            pairs = [(vals[i], vals[i + 1]) for i in range(0, len(vals) - 1, 2) if vals[i].strip()]
        else:  # NSM1: SID TYPE VALUE ID ID ...
            v = vals[0] if vals else ""
            pairs = [(i, v) for i in vals[1:] if i.strip()]
        for ident, value in pairs:
            try:
                v = real(value)
            except FieldError:
                v = None
            target = f"PID {ident.strip()}" if typ.startswith("P") else f"{typ} {ident.strip()}"
            self.model.mass_sources.append(MassSource("nonstructural-mass", card.loc, target, v))


def tables_of(cards: list[Card]) -> dict[str, Card]:
    out: dict[str, Card] = {}
    for c in cards:
        if c.name.startswith("TABLE"):
            out[c.s(2).strip()] = c
    return out


def as_array(values) -> np.ndarray:
    return np.asarray(values, dtype=np.int64)
