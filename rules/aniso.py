"""aniso/*: admissibility of anisotropic elastic constants and of anisotropic conductivity.

The rules read ``Material.derived["aniso"]`` / ``["conductivity"]`` (``linter.derived.aniso``).
Temperature tables give one finding per block, listing the failing rows.
"""
from __future__ import annotations

import math

from linter.model import Loc
from linter.registry import rule
from ._text import row_label, rows_text, short

LEMPRIERE = "Lempriere 1968, Poisson's ratio in orthotropic materials"
JONES = "Jones 1999, Mechanics of Composite Materials, 2.2 (orthotropic compliance)"
CCX_EL = "CalculiX User's Manual *ELASTIC (TYPE=ORTHO, ENGINEERING CONSTANTS, ANISO)"
NAS = "Nastran bulk data MAT2, MAT8, MAT9"
FORM_WORDS = {"ortho": "orthotropic (D values)", "engineering": "engineering constants",
              "aniso": "anisotropic (21 D values)", "mat9": "MAT9 anisotropic", "mat2": "MAT2 2D anisotropic",
              "lamina": "MAT8 orthotropic lamina"}


def _entries(model):
    for mat in list(model.materials.values()) + list(model.duplicate_materials):
        for entry in mat.derived.get("aniso", ()):
            if entry["part"] != "coupling":     # a coupling matrix (PSHELL MID4) may be indefinite
                yield mat, entry


def _where(mat, entry) -> str:
    part = " (as transverse-shear material: 2x2 part)" if entry["part"] == "transverse-shear" else ""
    return f"material {mat.name}, {FORM_WORDS.get(entry['form'], entry['form'])}{part}"


def _bounds_defect(mat, entry) -> tuple:
    return ("aniso-bounds", mat.key, entry["line"], entry["part"])


def bound_failures(row: dict, part: str) -> list[str]:
    """Engineering words for every failed bound of one row (empty list: the bounds hold)."""
    out = []
    for name, v in row.get("moduli", {}).items():
        if name in ("G1Z", "G2Z"):
            if not math.isnan(v) and v <= 0:
                out.append(f"{name} = {short(v)} <= 0 (leave it blank for rigid transverse shear)")
        elif part != "transverse-shear" and not (v > 0):
            out.append(f"{name} = {short(v)} <= 0")
    if part != "transverse-shear":
        for name, v in row.get("pairs", {}).items():
            if v >= 1:
                nu, rest = name.split("^2*")
                ej, ei = rest.split("/")
                mod = row.get("moduli", {})
                lim = ""
                if mod.get(ei, 0) > 0 and mod.get(ej, 0) > 0:
                    lim = f" = {math.sqrt(mod[ei] / mod[ej]):.4g}"
                out.append(f"{name.replace('*', ' * ')} = {v:.4g} >= 1 (|{nu}| must be below sqrt({ei}/{ej}){lim})")
    return out


@rule("aniso/constant-bounds", severity="error",
      title="Orthotropic constants outside the stability bounds",
      rationale="A positive-definite strain energy needs every E_i and G_ij positive and |nu_ij| < "
                "sqrt(E_i/E_j) (1 - nu_ij nu_ji > 0). CalculiX checks none of this for ENGINEERING "
                "CONSTANTS; bulk solvers stop on some cases only. A Poisson ratio past the bound is "
                "usually the minor ratio nu21 typed where the major nu12 belongs, or swapped E1/E2.",
      references=(LEMPRIERE, CCX_EL, NAS),
      data="rows: [{line, temperature, failures: [text]}]; form; part")
def constant_bounds(model, ctx):
    for mat, entry in _entries(model):
        if entry["form"] not in ("engineering", "lamina"):
            continue
        bad = []
        for row in entry["rows"]:
            fails = bound_failures(row, entry["part"])
            if fails:
                bad.append((row, fails))
        if not bad:
            continue
        text = rows_text([f"{row_label(r)}: " + ", ".join(f) for r, f in bad])
        yield ctx.finding(
            f"{_where(mat, entry)}: the constants violate the stability bounds: {text}",
            Loc(_row_path(mat, entry), entry["line"]), material=mat.name,
            data={"form": entry["form"], "part": entry["part"],
                  "rows": [{"line": r["line"], "temperature": r["temperature"], "failures": f} for r, f in bad]},
            defect=_bounds_defect(mat, entry))


def _row_path(mat, entry) -> str:
    block = mat.blocks[entry["block"]]
    return block.loc.path


@rule("aniso/not-positive-definite", severity="error",
      escalation="warning for a fluid written as an orthotropic solid (six equal normal terms: acoustic analogies)",
      title="Anisotropic stiffness not positive definite",
      rationale="The strain energy of a linear elastic material must be positive for every strain: the 6x6 "
                "(shell: 3x3 or 2x2) stiffness must be positive definite. For engineering constants that "
                "pass the pairwise Poisson bounds this is the determinant condition 1 - nu12 nu21 - "
                "nu23 nu32 - nu31 nu13 - 2 nu21 nu32 nu13 > 0. The solver does not check it; the model "
                "may run and give meaningless results or fail to converge.",
      references=(LEMPRIERE, JONES, CCX_EL, NAS),
      data="rows: [{line, temperature, eig_min, eig_max, determinant?}]; form; part",
      thresholds=("aniso.eigen_rel_tol",))
def not_positive_definite(model, ctx):
    for mat, entry in _entries(model):
        plain, after_bounds = [], []
        for row in entry["rows"]:
            if row["positive_definite"] or not row.get("complete", True):
                continue
            (after_bounds if bound_failures(row, entry["part"]) else plain).append(row)
        for rows, restates in ((plain, ()), (after_bounds, (_bounds_defect(mat, entry),))):
            if not rows:
                continue
            items = []
            for r in rows:
                s = f"{row_label(r)}: smallest eigenvalue {short(r['eig_min'])} (largest {short(r['eig_max'])})"
                if "determinant" in r and "E1" in r.get("moduli", {}):
                    s = (f"{row_label(r)}: 1 - nu12 nu21 - nu23 nu32 - nu31 nu13 - 2 nu21 nu32 nu13 = "
                         f"{r['determinant']:.4g} <= 0")
                items.append(s)
            data = {"form": entry["form"], "part": entry["part"],
                    "rows": [{k: r.get(k) for k in ("line", "temperature", "eig_min", "eig_max", "determinant")}
                             for r in rows]}
            msg = f"{_where(mat, entry)}: the stiffness is not positive definite: {rows_text(items)}"
            sev = None
            if _fluid_like(mat, entry):
                # equal normal terms: the bulk stiffness of a fluid written as an orthotropic solid (the
                # acoustic analogy of the solver's examples); singular on purpose, wrong for a structure
                sev = "warning"
                data["fluid_like"] = True
                msg += ("; the six normal terms are equal: the bulk stiffness of a fluid written as an orthotropic "
                        "solid, as in acoustic analogies; a solid part would have no stiffness against "
                        "volume-preserving normal strain")
            yield ctx.finding(msg, Loc(_row_path(mat, entry), entry["line"]), material=mat.name, data=data,
                              restates=restates, severity=sev)


def _fluid_like(mat, entry) -> bool:
    """An orthotropic D-value block whose every row has six equal normal terms (D1111 = D1122 = ... = K > 0:
    the hydrostatic stiffness of a fluid) and no negative shear term."""
    if entry.get("form") != "ortho":
        return False
    blk = mat.blocks[entry["block"]]          # the *ELASTIC,TYPE=ORTHO block (layout of linter.model)
    lay = list(blk.layout)
    normal = [lay.index(k) for k in ("D1111", "D1122", "D2222", "D1133", "D2233", "D3333")]
    shear = [lay.index(k) for k in ("D1212", "D1313", "D2323")]
    for r in blk.rows:
        v = r.values
        n = [v[i] for i in normal]
        # a bulk stiffness K > 0; equal to round-off: within 1e-9 of the largest term
        if any(v[i] < 0 for i in shear) or min(n) <= 0 or max(n) - min(n) > 1e-9 * max(n):
            return False
    return True


@rule("aniso/ill-conditioned", severity="warning",
      title="Anisotropic stiffness badly conditioned",
      rationale="A positive-definite stiffness whose largest and smallest eigenvalues differ by many orders "
                "of magnitude (a typo in one constant, mixed units, a 'rigid' direction faked with a huge "
                "modulus) makes the stiffness matrix ill-conditioned and the solution sensitive to round-off.",
      references=("lambda_min/lambda_max < 1e-8 suggested (common practice, from memory)",),
      data="rows: [{line, temperature, condition}]; limit",
      thresholds=("aniso.condition_limit", "aniso.eigen_rel_tol"))
def ill_conditioned(model, ctx):
    limit = float(ctx.threshold("aniso.condition_limit"))
    for mat, entry in _entries(model):
        if entry["form"] == "lamina" and entry["part"] == "transverse-shear":
            continue
        rows = [r for r in entry["rows"] if r["positive_definite"] and r["condition"] > limit]
        if rows:
            text = rows_text([f"{row_label(r)}: condition number {r['condition']:.3g}" for r in rows])
            yield ctx.finding(f"{_where(mat, entry)}: stiffness eigenvalues span more than {limit:.3g}: {text}",
                              Loc(_row_path(mat, entry), entry["line"]), material=mat.name,
                              data={"limit": limit, "rows": [{"line": r["line"], "temperature": r["temperature"],
                                                              "condition": r["condition"]} for r in rows]})


def _is_directional(mat) -> bool:
    """The elastic block the solver uses is orthotropic/anisotropic (and not isotropic in disguise)."""
    block = mat.first("elastic")
    if block is None or block.form not in ("ortho", "engineering", "aniso", "mat9"):
        return False
    for entry in mat.derived.get("aniso", ()):
        if mat.blocks[entry["block"]] is block:
            return not all(r.get("isotropic") for r in entry["rows"])
    return True


@rule("aniso/missing-orientation", severity="note",
      title="Orthotropic or anisotropic material on a solid section without an orientation",
      rationale="Without an orientation the material axes are the global axes. That is right only when the "
                "part is built along them; for a rotated or curved part the stiff direction ends up where it "
                "was not meant to be. Keyword decks: the solid section has no ORIENTATION=. Bulk decks: "
                "PSOLID CORDM is blank (it defaults to the basic system); an explicit CORDM, 0 included, is "
                "taken as a deliberate choice and not reported.",
      references=("CalculiX User's Manual *SOLID SECTION, *ORIENTATION",
                  "Nastran PSOLID CORDM"),
      data="section: card; elset")
def missing_orientation(model, ctx):
    seen = set()
    for sec in model.sections:
        if sec.kind != "solid" or sec.orientation:
            continue
        cordm = sec.options.get("CORDM")
        if cordm is not None and str(cordm).strip() != "":   # bulk parsers keep a blank field as ""
            continue
        for ref in sec.materials:
            mat = model.materials.get(ref.key)
            if mat is None or (ref.key, sec.elset) in seen or not _is_directional(mat):
                continue
            seen.add((ref.key, sec.elset))
            where = "PSOLID CORDM is blank (basic system)" if model.format == "bulk" else "no ORIENTATION is given"
            yield ctx.finding(
                f"material {mat.name} is {FORM_WORDS[mat.first('elastic').form]} and is used on solid section "
                f"{sec.card} ({sec.elset_name}), but {where}: its axes are the global axes",
                sec.loc, material=mat.name, data={"section": sec.card, "elset": sec.elset_name})


@rule("aniso/conductivity-not-positive-definite", severity="error",
      title="Anisotropic conductivity not positive definite",
      rationale="The second law requires the conductivity tensor to be positive definite (heat flows from hot "
                "to cold in every direction). An orthotropic value <= 0 or off-diagonal terms too large "
                "for the diagonal give a tensor that is not.",
      references=("CalculiX User's Manual *CONDUCTIVITY; Nastran MAT5",),
      data="rows: [{line, temperature, eig_min, eig_max}]",
      thresholds=("aniso.eigen_rel_tol",))
def conductivity_not_pd(model, ctx):
    for mat in list(model.materials.values()) + list(model.duplicate_materials):
        for entry in mat.derived.get("conductivity", ()):
            rows = [r for r in entry["rows"] if not r["positive_definite"] and math.isfinite(r["eig_min"])]
            if rows:
                blk = mat.blocks[entry["block"]]
                text = rows_text([f"{row_label(r)}: smallest eigenvalue {short(r['eig_min'])}" for r in rows])
                # a non-positive diagonal term is reported by property/nonpositive: not twice
                yield ctx.finding(
                    f"material {mat.name}: the {entry['form']} conductivity is not positive definite: {text}",
                    Loc(blk.loc.path, entry["line"]), material=mat.name,
                    data={"rows": [{k: r[k] for k in ("line", "temperature", "eig_min", "eig_max")} for r in rows]},
                    restates=(("nonpositive", blk.kind, mat.key, blk.loc.line),))
