"""elastic/* rules that only bulk decks need: the MAT1 E/G/NU relations.

MAT1 takes any two of E, G and NU and computes the third; all three may be given, and
blanks follow fixed rules (from the NASTRAN-95 User's Manual MAT1 remarks
and the MYSTRAN User Manual / source BD_MAT1.f90). The parser keeps what was given in
``PropertyBlock.options`` (``given``, ``defaulted``, ``E``, ``G``, ``NU``).
"""
from __future__ import annotations

import math

from linter.registry import rule
from linter.usage import material_usage

from ._text import listing, num

N95 = "NASTRAN-95 User's Manual, MAT1 remarks (blank fields; G = E/(2(1+NU)))"
MYS = "MYSTRAN User Manual MAT1; MYSTRAN source BD_MAT1.f90, MATERIAL_PROPS_3D.f90"
USE_NOTE = ("Element use of MAT1 constants: rods, bars, beams E and G; plates E, NU and G (NASTRAN-95 User's Manual "
            "MAT1 remarks)")

#: what each section kind takes from MAT1 (NASTRAN-95 User's Manual MAT1 remarks)
USES = {
    "solid": "solids (PSOLID) take E and NU for the normal terms and G directly for the shear terms, so the "
             "stiffness matrix is not isotropic",
    "shell": "shells (PSHELL) take E and NU for membrane and bending and G for transverse shear",
    "composite-shell": "composite plies take E and NU in plane and G for transverse shear",
    "beam": "bars and beams take E for axial and bending stiffness and G for torsion and shear",
    "rod": "rods take E for axial stiffness and G for torsion",
    "shear": "shear panels (PSHEAR) take G",
}


def _mat1_blocks(mat):
    for blk in mat.blocks:
        if blk.kind == "elastic" and blk.form == "iso" and blk.options.get("card") == "MAT1":
            yield blk


def _uses(model, key):
    return material_usage(model).get(key, [])


def _use_label(use) -> str:
    return f"{use.section.card} {use.section.elset} ({use.role})"


@rule("elastic/inconsistent-constants", severity="warning", formats=("bulk",),
      title="MAT1 gives E, G and NU that do not agree",
      rationale="For an isotropic material G = E/(2(1+NU)). When MAT1 gives all three and they disagree, "
                "the solver does not fix them: each element uses the constants it needs as given, so the "
                "same material is stiffer in shear in one element kind than in another, and MYSTRAN solids "
                "get a matrix that is not isotropic. MYSTRAN warns at |1 - E/(2(1+NU)G)| >= 1 %; give only "
                "two of the three.",
      references=(N95, MYS, USE_NOTE),
      data="E, G, NU as given; G_from_E_nu = E/(2(1+NU)); relative_difference = |1 - G_from_E_nu/G|; "
           "used_by: sections using the material",
      thresholds=("elastic.mat1_consistency_tol",))
def inconsistent_constants(model, ctx):
    tol = float(ctx.threshold("elastic.mat1_consistency_tol"))
    for mat in list(model.all_materials()) + list(model.duplicate_materials):
        for blk in _mat1_blocks(mat):
            o = blk.options
            if set(o.get("given", ())) != {"E", "G", "NU"}:
                continue
            e, g, nu = o["E"], o["G"], o["NU"]
            if not all(isinstance(x, float) and math.isfinite(x) for x in (e, g, nu)) or g == 0 or nu == -1.0:
                continue
            g_calc = e / (2.0 * (1.0 + nu))
            rel = abs(1.0 - g_calc / g)
            if rel <= tol:
                continue
            uses = _uses(model, mat.key)
            kinds = sorted({u.section.kind for u in uses if u.section.kind in USES})
            said = [USES[k] for k in kinds] or [USES["solid"], USES["shell"], USES["beam"]]
            msg = (f"material {mat.name}: MAT1 gives E = {num(e)}, G = {num(g)} and NU = {num(nu)}, but "
                   f"E/(2(1+NU)) = {num(g_calc)} differs from G by {rel * 100:.1f} % (tolerance "
                   f"{tol * 100:g} %); the solver uses them as given: {listing(said)}. Give only two of them.")
            yield ctx.finding(msg, blk.loc, material=mat.name,
                              data={"E": e, "G": g, "NU": nu, "G_from_E_nu": g_calc, "relative_difference": rel,
                                    "used_by": [_use_label(u) for u in uses]})


def _victims(uses, defaulted_e: bool):
    """(use, what goes wrong) for each section that needs a constant the blank rules set to zero."""
    out = []
    for u in uses:
        kind, role = u.section.kind, u.role
        if defaulted_e:   # only G given: E = 0 and NU = 0
            if kind == "shear":
                continue   # a shear panel needs only G: legitimate
            if role == "transverse-shear":
                continue   # MID3 takes G only
            out.append((u, "E = 0 (no axial, membrane or bending stiffness)"))
        else:             # only E given: G = 0 and NU = 0
            if kind == "solid":
                out.append((u, "NU = 0 and G = 0 (solids take G for the shear terms)"))
            elif role in ("membrane", "bending", "ply"):
                out.append((u, "NU = 0 (no lateral contraction)"))
            elif role == "transverse-shear":
                out.append((u, "G = 0 (no transverse-shear stiffness)"))
            elif kind == "shear":
                out.append((u, "G = 0 (a shear panel has no stiffness)"))
            elif kind in ("beam", "rod"):
                out.append((u, "G = 0 (no torsional stiffness)"))
    return out


@rule("elastic/defaulted-constants", severity="warning", formats=("bulk",),
      title="MAT1 blank fields silently set NU = 0, G = 0 or E = 0",
      rationale="MAT1 computes a blank constant from the other two only when two are given. With only E, "
                "the solver sets G = 0 and NU = 0: solids lose their lateral contraction, shells their "
                "transverse-shear stiffness, bars their torsional stiffness. With only G it sets E = 0, which "
                "is right only for shear panels (PSHEAR). No message is printed by most solvers.",
      references=(N95, MYS, USE_NOTE),
      data="given: fields given; defaulted: fields set by the blank rules; used_by: sections affected and how")
def defaulted_constants(model, ctx):
    for mat in list(model.all_materials()) + list(model.duplicate_materials):
        for blk in _mat1_blocks(mat):
            given = tuple(blk.options.get("given", ()))
            if given not in (("E",), ("G",)):
                continue
            defaulted_e = given == ("G",)
            hits = _victims(_uses(model, mat.key), defaulted_e)
            if not hits:
                continue
            what = "G and NU blank: the solver sets G = 0 and NU = 0" if not defaulted_e else \
                "E and NU blank: the solver sets E = 0 and NU = 0"
            parts = [f"{_use_label(u)} gets {why}" for u, why in hits]
            msg = (f"material {mat.name}: MAT1 gives only {given[0]}; {what}; {listing(parts)}. "
                   f"Give {'NU (or G)' if not defaulted_e else 'E or NU'} explicitly.")
            yield ctx.finding(msg, blk.loc, material=mat.name,
                              data={"given": list(given), "defaulted": ["G", "NU"] if not defaulted_e else ["E", "NU"],
                                    "used_by": [f"{_use_label(u)}: {why}" for u, why in hits]})
