"""elastic/*: admissibility of isotropic elastic constants (E, nu and what follows from them).

The rules read ``Material.derived["elastic"]`` (``linter.derived.elastic``): one row per
isotropic elastic data line with E, nu, G, K, lambda, M and K/G. Findings for several
temperature rows of one property block are one finding that lists the rows.
"""
from __future__ import annotations

import math
from collections import defaultdict

from linter.registry import rule
from linter.usage import material_usage

from ._text import at_t, listing, num

CCX_ELASTICS = "ccx source, elastics.f: '*ERROR reading *ELASTIC: Poisson coefficient should be less than 0.5'"
MODULI_TABLE = ("Standard conversion table of isotropic moduli (Mavko, Mukerji & Dvorkin, The Rock Physics Handbook, "
                "2003)")
N95_MAT1 = "NASTRAN-95 user's manual MAT1 remark 8: solid elements must not have NU equal to 0.5"
MYS_SOLID = "MYSTRAN source MATERIAL_PROPS_3D.f90: *ERROR 1936 '1 - 2*NU is too close to zero' for solids"

DATA_ROWS = "rows: list of {T, line, E, nu, G, K, lambda, K_over_G} of the rows concerned"


def blocks_of(mat) -> dict[int, list[dict]]:
    """Derived isotropic rows grouped by property block (index into ``mat.blocks``), in deck order."""
    out: dict[int, list[dict]] = defaultdict(list)
    for r in mat.derived.get("elastic", ()):
        out[r["block"]].append(r)
    return dict(out)


def nu_defect(mat, block_index: int) -> tuple:
    return ("nu-range", mat.key, mat.blocks[block_index].loc.line)


def _row_data(r: dict) -> dict:
    return {k: r.get(k) for k in ("T", "line", "E", "nu", "G", "K", "lambda", "K_over_G")}


def _loc_of(mat, r: dict):
    blk = mat.blocks[r["block"]]
    for row in blk.rows:
        if row.loc.line == r["line"]:
            return row.loc
    return blk.loc


def _card(mat, bi: int) -> str:
    return mat.blocks[bi].card or "elastic card"


def _finite(x) -> bool:
    return x is not None and math.isfinite(x)


# --------------------------------------------------------------------------------------------- nu range


def _solid_use(model, ctx, key: str) -> bool:
    for use in material_usage(model).get(key, ()):
        if use.role == "solid":
            return True
        for etype, n in use.counts.items():
            tech = ctx.catalogue.get(etype, model.dialect)
            if n and tech is not None and tech.family == "solid-3d":
                return True
    return False


CONTINUUM = ("solid-3d", "plane-strain", "axisymmetric")
ASTER_ELAS = ("code_aster DEFI_MATERIAU catalogue (code_aster/Cata/Commands/defi_materiau.py): ELAS NU has "
              "val_min=-1, val_max=0.5, so 0.5 is accepted")


def _aster_use(model, ctx, key: str) -> str:
    """How code_aster elements use a material: "displacement" continuum, only "mixed" continuum, or "other"."""
    kinds = set()
    for use in material_usage(model).get(key, ()):
        for etype, n in use.counts.items():
            tech = ctx.catalogue.get(etype, model.dialect)
            if n and tech is not None and tech.family in CONTINUUM:
                kinds.add("mixed" if tech.integration == "mixed" else "displacement")
    return "displacement" if "displacement" in kinds else "mixed" if kinds else "other"


def _aster_tail(bad, use: str) -> str:
    if any(r["nu"] > 0.5 for r in bad):
        return "; code_aster refuses NU > 0.5 when it reads DEFI_MATERIAU"
    return {"displacement": "; code_aster accepts NU = 0.5, but its displacement formulations then have an infinite "
                            "bulk modulus: use a mixed formulation (3D_INCO_*, D_PLAN_INCO_*, AXIS_INCO_*)",
            "mixed": "; the mixed (INCO) formulations it is used on admit the incompressible limit",
            "other": "; only structural elements (beams, shells, bars, discrete) or no element use it, where nu "
                     "enters the shear modulus only"}[use]


@rule("elastic/poisson-out-of-range", severity="error",
      escalation="warning for a bulk NU = 0.5 on plates and shells only (accepted there, fatal in solids)",
      title="Poisson's ratio outside (-1, 0.5)",
      rationale="An isotropic solid is stable only for -1 < nu < 0.5. At nu = 0.5 the bulk modulus "
                "K = E/(3(1-2nu)) is infinite (the incompressible limit): a displacement-based solver cannot "
                "represent it, and CalculiX refuses nu >= 0.5 while reading *ELASTIC. Above 0.5 K is negative; "
                "at nu <= -1 the shear modulus G = E/(2(1+nu)) is infinite or negative. Bulk decks: nu = 0.5 on "
                "MAT1 passes the input stage and is fatal only in solid elements, so it is an error where a solid "
                "property uses the material and a warning on plates and shells. code_aster accepts NU = 0.5: an "
                "error on displacement continuum elements, a note on mixed (INCO) formulations, a warning elsewhere.",
      references=(CCX_ELASTICS, MODULI_TABLE, N95_MAT1, MYS_SOLID, ASTER_ELAS),
      data=DATA_ROWS + "; solid_use: whether solid elements use it (bulk decks)")
def poisson_out_of_range(model, ctx):
    for mat in model.all_materials():
        for bi, rows in blocks_of(mat).items():
            bad = [r for r in rows if _finite(r["nu"]) and (r["nu"] >= 0.5 or r["nu"] <= -1.0)]
            if not bad:
                continue
            severity, solid = "error", None
            if model.format == "bulk" and all(r["nu"] == 0.5 for r in bad):
                solid = _solid_use(model, ctx, mat.key)
                severity = "error" if solid else "warning"
            aster_use = _aster_use(model, ctx, mat.key) if model.format == "aster" else None
            if aster_use and all(r["nu"] == 0.5 for r in bad):
                severity = {"displacement": "error", "mixed": "note", "other": "warning"}[aster_use]
            parts = []
            for r in bad:
                if r["nu"] >= 0.5:
                    why = "the incompressible limit, K infinite" if r["nu"] == 0.5 else f"K = {num(r['K'])} < 0"
                else:
                    why = "G infinite" if r["nu"] == -1.0 else f"G = {num(r['G'])} < 0"
                parts.append(f"nu = {num(r['nu'])}{at_t(r['T'])} on line {r['line']} ({why})")
            if aster_use:
                tail = _aster_tail(bad, aster_use)
            elif model.format == "bulk":
                tail = ("; NU = 0.5 is fatal in solid elements" if solid else
                        "; NU = 0.5 is accepted on plates and shells but is fatal in solids") \
                    if all(r["nu"] == 0.5 for r in bad) else "; NU > 0.5 is refused for solids and plates"
            else:
                tail = "; CalculiX refuses nu >= 0.5 when it reads *ELASTIC" if any(r["nu"] >= 0.5 for r in bad) \
                    else ""
            msg = (f"material {mat.name}: Poisson's ratio outside the admissible range -1 < nu < 0.5: "
                   f"{listing(parts)}{tail}")
            data = {"rows": [_row_data(r) for r in bad]}
            if solid is not None:
                data["solid_use"] = solid
            yield ctx.finding(msg, _loc_of(mat, bad[0]), material=mat.name, data=data, severity=severity,
                              defect=nu_defect(mat, bi))


# --------------------------------------------------------------------------------------------- moduli


@rule("elastic/modulus-nonpositive", severity="error",
      title="Young's, shear or bulk modulus not positive",
      rationale="The strain energy is positive for every strain only when G > 0 and K > 0 (E > 0 and "
                "-1 < nu < 0.5). A zero or negative modulus makes the stiffness matrix singular or "
                "indefinite; CalculiX refuses E <= 0 while reading *ELASTIC. When K <= 0 or G <= 0 follows "
                "only from a Poisson's ratio out of range, that finding is not repeated here.",
      references=(MODULI_TABLE, CCX_ELASTICS),
      data=DATA_ROWS + "; which: the moduli that are not positive on each row")
def modulus_nonpositive(model, ctx):
    for mat in model.all_materials():
        for bi, rows in blocks_of(mat).items():
            bad = []
            for r in rows:
                which = [k for k in ("E", "G", "K") if _finite(r[k]) and r[k] <= 0]
                if which:
                    bad.append((r, which))
            if not bad:
                continue
            own = [(r, w) for r, w in bad if "E" in w]
            from_nu = [(r, w) for r, w in bad if "E" not in w]
            for group, is_own in ((own, True), (from_nu, False)):
                if not group:
                    continue
                parts = []
                for r, which in group:
                    vals = ", ".join(f"{k} = {num(r[k])}" for k in which)
                    parts.append(f"{vals}{at_t(r['T'])} on line {r['line']} (E = {num(r['E'])}, "
                                 f"nu = {num(r['nu'])})")
                refuse = "; CalculiX refuses E <= 0" if is_own and model.format == "keyword" else ""
                msg = (f"material {mat.name}: elastic modulus not positive: {listing(parts)}; the stiffness is "
                       f"singular or indefinite{refuse}")
                data = {"rows": [dict(_row_data(r), which=w) for r, w in group]}
                yield ctx.finding(msg, _loc_of(mat, group[0][0]), material=mat.name, data=data,
                                  defect=("modulus", mat.key, mat.blocks[bi].loc.line, is_own),
                                  restates=() if is_own else (nu_defect(mat, bi),))


# --------------------------------------------------------------------------------------------- notes


@rule("elastic/poisson-negative", severity="note",
      title="Negative Poisson's ratio (auxetic)",
      rationale="-1 < nu < 0 is admissible but rare (auxetic foams and lattices); for an ordinary material it "
                "usually is a sign error or a value typed into the wrong field.",
      references=(MODULI_TABLE, "typical Poisson's ratios by material class: EN 1993-1-1 3.2.6 (steel 0.3), "
                                "EN 1992-1-1 3.1.3 (concrete 0.2), ASM Handbook data sheets"),
      data=DATA_ROWS)
def poisson_negative(model, ctx):
    for mat in model.all_materials():
        for _bi, rows in blocks_of(mat).items():
            bad = [r for r in rows if _finite(r["nu"]) and -1.0 < r["nu"] < 0.0]
            if bad:
                parts = [f"nu = {num(r['nu'])}{at_t(r['T'])} on line {r['line']}" for r in bad]
                yield ctx.finding(f"material {mat.name}: negative Poisson's ratio ({listing(parts)}): admissible "
                                  "but rare (auxetic material); confirm that this is intended",
                                  _loc_of(mat, bad[0]), material=mat.name, data={"rows": [_row_data(r) for r in bad]})


@rule("elastic/near-incompressible", severity="note",
      title="Nearly incompressible isotropic material",
      rationale="As nu approaches 0.5 the bulk modulus grows without bound relative to the shear modulus "
                "(K/G = 2(1+nu)/(3(1-2nu)): 24.7 at nu = 0.48, 500 at 0.499). Fully integrated low-order "
                "elements then lock and the system becomes ill-conditioned; check the element choice "
                "(see element/volumetric-locking).",
      references=(MODULI_TABLE,
                  "Hughes, The Finite Element Method (2000) ch. 4 (onset of trouble nu = 0.45-0.49, from memory)"),
      data=DATA_ROWS + "; threshold: elastic.near_incompressible_nu",
      thresholds=("elastic.near_incompressible_nu",))
def near_incompressible(model, ctx):
    limit = float(ctx.threshold("elastic.near_incompressible_nu"))
    for mat in model.all_materials():
        for _bi, rows in blocks_of(mat).items():
            bad = [r for r in rows if _finite(r["nu"]) and limit <= r["nu"] < 0.5]
            if bad:
                parts = [f"nu = {num(r['nu'])}{at_t(r['T'])} on line {r['line']}: K/G = {num(r['K_over_G'])}, "
                         f"lambda = {num(r['lambda'])}" for r in bad]
                yield ctx.finding(f"material {mat.name} is nearly incompressible ({listing(parts)}); "
                                  f"nu >= {num(limit)} needs elements that do not lock volumetrically",
                                  _loc_of(mat, bad[0]), material=mat.name,
                                  data={"rows": [_row_data(r) for r in bad], "threshold": limit})
