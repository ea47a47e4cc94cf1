"""``DEFI_MATERIAU`` read into the neutral model (keywords as in the solver's DEFI_MATERIAU catalogue).

Each behaviour keyword becomes property blocks in the layouts of ``linter.model.BLOCK_LAYOUTS``:
``ELAS``/``ELAS_FO`` -> elastic iso (E, nu), density, expansion; ``ELAS_ORTH`` -> elastic
engineering with L, T, N as 1, 2, 3; ``ELAS_ISTR`` -> engineering (plane L-T isotropic);
``ELAS_HYPER`` -> polynomial hyperelastic (C10, C01, C20, D1 = 2/K); ``THER``/``THER_FO``/
``THER_NL``/``THER_ORTH`` -> conductivity and volumetric heat capacity; ``ECRO_LINE`` -> a one-point
hardening table (SY at zero plastic strain) with the tangent modulus kept in the options;
``TRACTION`` -> the stress-strain curve, converted to a hardening table with the elastic E.
Functions of temperature (``DEFI_FONCTION``/``DEFI_CONSTANTE`` with literal values) give one row
per abscissa, interpolated linearly. Everything else is listed as unchecked with a reason.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Optional

import numpy as np

from ...model import Loc, Material, PropertyBlock, Row, Unchecked, norm_key
from .evaluate import Command, Keywords, Opaque, number

#: behaviours read here; every other keyword of DEFI_MATERIAU is listed as unchecked
READ = ("ELAS", "ELAS_FO", "ELAS_FLUI", "ELAS_ORTH", "ELAS_ORTH_FO", "ELAS_ISTR", "ELAS_ISTR_FO", "ELAS_HYPER", "THER",
        "THER_FO", "THER_NL", "THER_ORTH", "ECRO_LINE", "ECRO_LINE_FO", "TRACTION")
IGNORED = ("INFO", "reuse", "MATER")
#: unread behaviours that give a stiffness of their own (elasticity the reader does not check, discrete,
#: joint, cable and external laws; slip systems of polycrystals, whose elasticity DEFI_COMPOR brings)
STIFFNESS_PREFIXES = ("ELAS_", "DIS_", "JOINT_", "MFRONT", "UMAT", "CZM_", "THM_", "MONO_")
STIFFNESS = ("CABLE", "FLUIDE", "RUPT_FRAG", "GLRC_DM", "DHRC", "KIT_DDI", "ARME")


@dataclass
class Fn:
    """A function of one parameter given as literal points (a constant has one point and param None)."""

    param: Optional[str]
    xs: np.ndarray
    ys: np.ndarray
    line: int


def function(value, env_line: int) -> "Fn | str":
    """A :class:`Fn` from an evaluated keyword value, or the reason it cannot be read."""
    n = number(value)
    if n is not None:
        return Fn(None, np.zeros(1), np.array([n]), env_line)
    if isinstance(value, Opaque):
        return value.why
    if not isinstance(value, Command):
        return "not a number or a function"
    kw = value.keywords
    if value.name == "DEFI_CONSTANTE":
        c = number(kw.get("VALE"))
        return Fn(None, np.zeros(1), np.array([c]), value.line) if c is not None else "DEFI_CONSTANTE not read"
    if value.name != "DEFI_FONCTION":
        return f"a {value.name} (line {value.line}), not read as a table"
    param = kw.get("NOM_PARA")
    if "VALE" in kw.values:
        vals = kw.get("VALE")
        flat = [number(v) for v in vals] if isinstance(vals, tuple) else []
        if not flat or None in flat or len(flat) % 2:
            return f"DEFI_FONCTION (line {value.line}) VALE is not a literal list of pairs"
        xs, ys = np.array(flat[0::2]), np.array(flat[1::2])
    elif "VALE_PARA" in kw.values and "VALE_FONC" in kw.values:
        px, py = kw.get("VALE_PARA"), kw.get("VALE_FONC")
        xs_l = [number(v) for v in px] if isinstance(px, tuple) else []
        ys_l = [number(v) for v in py] if isinstance(py, tuple) else []
        if not xs_l or None in xs_l or None in ys_l or len(xs_l) != len(ys_l):
            return f"DEFI_FONCTION (line {value.line}) VALE_PARA/VALE_FONC are not literal lists of one length"
        xs, ys = np.array(xs_l), np.array(ys_l)
    else:
        return f"DEFI_FONCTION (line {value.line}) without literal values"
    return Fn(param if isinstance(param, str) else None, xs, ys, value.line)


class MaterialReader:
    def __init__(self, path: str, unchecked: list[Unchecked]):
        self.path = path
        self.unchecked = unchecked

    def loc(self, line: int) -> Loc:
        return Loc(self.path, line)

    def skip(self, what: str, line: int, reason: str, mat: str) -> None:
        self.unchecked.append(Unchecked(what, self.loc(line), reason, mat))

    def read(self, cmd: Command, name: str, key: str) -> Material:
        mat = Material(name=name, key=key, loc=self.loc(cmd.line))
        for kwname, value in cmd.keywords.values.items():
            line = cmd.keywords.line_of(kwname)
            if kwname in IGNORED:
                continue
            occ = value if isinstance(value, Keywords) else value[0] if isinstance(value, tuple) and value and \
                isinstance(value[0], Keywords) else None
            if kwname not in READ:
                self.skip(f"DEFI_MATERIAU {kwname}", line, "behaviour not checked by deckwarden", name)
                if kwname.startswith(STIFFNESS_PREFIXES) or kwname in STIFFNESS:
                    # a stiffness the reader does not check: the material is not without mechanical behaviour
                    mat.blocks.append(PropertyBlock("user", "unread", [], self.loc(line), card=kwname))
                if kwname == "FLUIDE" and isinstance(occ, Keywords) and "RHO" in occ.values:
                    self._extras(mat, occ, kwname, (("RHO", "density"),))
                continue
            if occ is None:
                self.skip(f"DEFI_MATERIAU {kwname}", line, getattr(value, "why", "not a _F(...) of literal values"),
                          name)
                continue
            getattr(self, "_" + kwname.lower().replace("_fo", "").replace("_nl", ""), self._other)(mat, occ, kwname)
        return mat

    def _other(self, mat, occ, kwname):  # pragma: no cover - READ and the methods are kept in step
        self.skip(f"DEFI_MATERIAU {kwname}", occ.line, "not read", mat.name)

    # -------------------------------------------------------------------------------- helpers

    def _table(self, mat, occ: Keywords, keys: tuple[str, ...], kwname: str, optional: tuple[str, ...] = ()):
        """Rows (temperature, values) of the keywords ``keys`` (all functions or numbers)."""
        fns = {}
        for k in keys + optional:
            if k not in occ.values:
                if k in keys:
                    self.skip(f"{kwname} {k}", occ.line, "not given", mat.name)
                    return None
                continue
            f = function(occ.get(k), occ.line_of(k))
            if isinstance(f, str):
                self.skip(f"{kwname} {k}", occ.line_of(k), f, mat.name)
                return None
            fns[k] = f
        params = {f.param for f in fns.values() if f.param is not None}
        temp = [f for f in fns.values() if f.param == "TEMP"]
        if params - {"TEMP"}:
            self.skip(f"{kwname}", occ.line, f"depends on {', '.join(sorted(params - {'TEMP'}))}: read at the "
                      "function's points without that parameter", mat.name)
        grid = np.unique(np.concatenate([f.xs for f in temp])) if temp else np.array([np.nan])
        rows = []
        for t in grid:
            vals = {}
            for k, f in fns.items():
                vals[k] = float(f.ys[0]) if f.param is None or len(f.xs) == 1 else \
                    float(np.interp(t, f.xs, f.ys)) if f.param == "TEMP" else float(f.ys[0])
            rows.append((None if math.isnan(t) else float(t), vals))
        return rows

    def _block(self, mat, kind, form, rows, cols, loc_key, occ, kwname, options=None):
        line = occ.line_of(loc_key)
        mat.blocks.append(PropertyBlock(kind, form, [Row(tuple(v[c] if c in v else math.nan for c in cols), t,
                                                         self.loc(line)) for t, v in rows],
                                        self.loc(occ.line_of(cols[0]) if cols[0] in occ.values else occ.line),
                                        card=kwname, options=dict(options or {})))

    # -------------------------------------------------------------------------------- behaviours

    def _elas(self, mat, occ, kwname):
        rows = self._table(mat, occ, ("E", "NU"), kwname)
        if rows is not None:
            self._block(mat, "elastic", "iso", rows, ("E", "NU"), "NU", occ, kwname)
        else:   # elasticity the reader cannot tabulate (a FORMULE, a name bound in a loop): present, unchecked
            mat.blocks.append(PropertyBlock("user", "unread", [], self.loc(occ.line), card=kwname))
        self._extras(mat, occ, kwname, (("RHO", "density"), ("ALPHA", "expansion")))

    _elas_flui = _elas   # ELAS_FLUI: E, NU, RHO of a tube in a fluid (the added-mass data are not checked)

    def _extras(self, mat, occ, kwname, pairs):
        for key, kind in pairs:
            if key in occ.values:
                rows = self._table(mat, occ, (key,), kwname)
                if rows is not None:
                    self._block(mat, kind, "iso", rows, (key,), key, occ, kwname,
                                {"TEMP_DEF_ALPHA": number(occ.get("TEMP_DEF_ALPHA"))} if key == "ALPHA" else None)

    def _elas_orth(self, mat, occ, kwname):
        keys = ("E_L", "E_T", "NU_LT", "G_LT")
        rows = self._table(mat, occ, keys, kwname, ("E_N", "NU_LN", "NU_TN", "G_LN", "G_TN"))
        if rows is not None:
            cols = ("E_L", "E_T", "E_N", "NU_LT", "NU_LN", "NU_TN", "G_LT", "G_LN", "G_TN")
            missing = [c for c in cols if c not in occ.values]
            self._block(mat, "elastic", "engineering", rows, cols, "E_L", occ, kwname,
                        {"naming": "L,T,N = 1,2,3", "not_given": missing})
        self._extras(mat, occ, kwname, (("RHO", "density"),))
        self._alpha_ortho(mat, occ, kwname, ("ALPHA_L", "ALPHA_T", "ALPHA_N"))

    def _alpha_ortho(self, mat, occ, kwname, keys):
        """ALPHA_L, ALPHA_T (, ALPHA_N): orthotropic expansion; the catalogue's default is 0."""
        given = [k for k in keys if k in occ.values]
        if not given:
            return
        rows = self._table(mat, occ, tuple(given), kwname)
        if rows is not None:
            for _t, v in rows:
                for k in keys:
                    v.setdefault(k, 0.0)
            full = keys if len(keys) == 3 else (keys[0], keys[0], keys[1])   # ELAS_ISTR: L, L, N
            rows = [(t, {"a11": v[full[0]], "a22": v[full[1]], "a33": v[full[2]]}) for t, v in rows]
            self._block(mat, "expansion", "ortho", rows, ("a11", "a22", "a33"), given[0], occ, kwname)

    def _elas_istr(self, mat, occ, kwname):
        rows = self._table(mat, occ, ("E_L", "E_N", "NU_LT", "NU_LN", "G_LN"), kwname)
        if rows is not None:
            for _t, v in rows:   # transversely isotropic in the L-T plane: E_T = E_L, G_LT = E_L / (2 (1 + NU_LT))
                v.update({"E_T": v["E_L"], "NU_TN": v["NU_LN"], "G_TN": v["G_LN"],
                          "G_LT": v["E_L"] / (2.0 * (1.0 + v["NU_LT"])) if v["NU_LT"] != -1 else math.nan})
            cols = ("E_L", "E_T", "E_N", "NU_LT", "NU_LN", "NU_TN", "G_LT", "G_LN", "G_TN")
            self._block(mat, "elastic", "engineering", rows, cols, "E_L", occ, kwname,
                        {"naming": "L,T,N = 1,2,3", "isotropic_plane": "LT"})
        self._extras(mat, occ, kwname, (("RHO", "density"),))
        self._alpha_ortho(mat, occ, kwname, ("ALPHA_L", "ALPHA_N"))

    def _elas_hyper(self, mat, occ, kwname):
        c = {k: number(occ.get(k, 0.0)) for k in ("C10", "C01", "C20")}
        if "C10" not in occ.values or None in c.values():
            self.skip(f"{kwname} C10/C01/C20", occ.line, "not literal numbers", mat.name)
            return
        k_bulk, nu = number(occ.get("K")), number(occ.get("NU"))
        mu0 = 2.0 * (c["C10"] + c["C01"])
        if k_bulk is None and nu is not None and nu < 0.5:
            k_bulk = 2.0 * mu0 * (1.0 + nu) / (3.0 * (1.0 - 2.0 * nu))
        d1 = 2.0 / k_bulk if k_bulk else 0.0
        form, vals = ("polynomial-1", (c["C10"], c["C01"], d1)) if c["C20"] == 0 else \
            ("polynomial-2", (c["C10"], c["C01"], c["C20"], 0.0, 0.0, d1, 0.0))
        line = occ.line_of("K" if "K" in occ.values else "NU" if "NU" in occ.values else "C10")
        mat.blocks.append(PropertyBlock("hyperelastic", form, [Row(vals, None, self.loc(line))], self.loc(occ.line),
                                        card=kwname, options={"K": k_bulk, "NU": nu, "D1_from": "2/K"}))
        self._extras(mat, occ, kwname, (("RHO", "density"),))

    def _ther(self, mat, occ, kwname):
        rows = self._table(mat, occ, ("LAMBDA",), kwname)
        if rows is not None:
            self._block(mat, "conductivity", "iso", rows, ("LAMBDA",), "LAMBDA", occ, kwname)
        if "RHO_CP" in occ.values:
            rows = self._table(mat, occ, ("RHO_CP",), kwname)
            if rows is not None:
                self._block(mat, "specific_heat", "volumetric", rows, ("RHO_CP",), "RHO_CP", occ, kwname)
        elif "BETA" in occ.values:
            mat.blocks.append(PropertyBlock("specific_heat", "enthalpy", [], self.loc(occ.line_of("BETA")),
                                            card=kwname))
            self.skip(f"{kwname} BETA", occ.line_of("BETA"), "enthalpy function not checked", mat.name)

    def _ther_orth(self, mat, occ, kwname):
        rows = self._table(mat, occ, ("LAMBDA_L", "LAMBDA_T"), kwname, ("LAMBDA_N",))
        if rows is not None:
            for _t, v in rows:
                v.setdefault("LAMBDA_N", v["LAMBDA_T"])
            self._block(mat, "conductivity", "ortho", rows, ("LAMBDA_L", "LAMBDA_T", "LAMBDA_N"), "LAMBDA_L", occ,
                        kwname)
        if "RHO_CP" in occ.values:
            rows = self._table(mat, occ, ("RHO_CP",), kwname)
            if rows is not None:
                self._block(mat, "specific_heat", "volumetric", rows, ("RHO_CP",), "RHO_CP", occ, kwname)

    def _ecro_line(self, mat, occ, kwname):
        rows = self._table(mat, occ, ("SY", "D_SIGM_EPSI"), kwname)
        if rows is None:
            return
        line = occ.line_of("SY")
        mat.blocks.append(PropertyBlock(
            "plastic", "iso", [Row((v["SY"], 0.0), t, self.loc(line)) for t, v in rows], self.loc(occ.line),
            card=kwname, options={"HARDENING": "", "linear": True,
                                  "D_SIGM_EPSI": [(t, v["D_SIGM_EPSI"]) for t, v in rows],
                                  "slope_line": occ.line_of("D_SIGM_EPSI")}))

    def _traction(self, mat, occ, kwname):
        f = function(occ.get("SIGM"), occ.line_of("SIGM"))
        if isinstance(f, str) or f.param is None:
            self.skip(f"{kwname} SIGM", occ.line_of("SIGM"), f if isinstance(f, str) else "a constant", mat.name)
            return
        # the curve is total strain -> stress; rows are filled later, once E is known (see finish_traction)
        mat.blocks.append(PropertyBlock("plastic", "iso", [], self.loc(occ.line_of("SIGM")), card=kwname,
                                        options={"HARDENING": "", "curve": (f.xs.tolist(), f.ys.tolist()),
                                                 "curve_line": f.line, "param": f.param}))


def finish_traction(mat: Material) -> None:
    """Convert TRACTION curves to (stress, plastic strain) rows with the material's constant E.

    The solver takes the first point of the curve as the elastic limit: it must lie on the
    elastic line (stress / strain = E). When it does not, or E is unknown, the rows stay empty and
    the curve is checked by its own rule only.
    """
    el = mat.first("elastic")
    e_mod = None
    if el is not None and el.form == "iso" and len(el.rows) == 1:
        e_mod = el.rows[0].values[0]
    for blk in mat.find("plastic"):
        curve = blk.options.get("curve")
        if not curve or blk.rows:
            continue
        blk.options["E"] = e_mod
        eps, sig = np.asarray(curve[0], float), np.asarray(curve[1], float)
        if e_mod is None or not math.isfinite(e_mod) or e_mod <= 0 or eps.size == 0 or eps[0] <= 0:
            continue
        if abs(sig[0] / eps[0] - e_mod) > 1e-2 * e_mod:   # off the elastic line: plastic/first-point-off-elastic-line
            continue
        ep = eps - sig / e_mod
        ep[0] = 0.0
        blk.rows = [Row((float(s), float(p)), None, Loc(blk.loc.path, blk.options.get("curve_line", blk.loc.line)))
                    for s, p in zip(sig, ep)]


def material_key(name: str, taken: set) -> str:
    key = norm_key(name)
    n = 2
    while key in taken:
        key, n = f"{norm_key(name)}#{n}", n + 1
    return key
