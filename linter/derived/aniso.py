"""Derived quantities of anisotropic elastic (and conductivity) blocks: eigenvalues, conditioning, bounds.

Fills ``Material.derived["aniso"]``: a list with one entry per anisotropic elastic block::

    {"block": <index in Material.blocks>, "form": "engineering", "card": "*ELASTIC", "line": 12,
     "part": "full" | "transverse-shear" | "coupling" (used only as membrane-bending coupling: not checked),
     "rows": [{"line", "temperature", "eig_min", "eig_max", "condition", "positive_definite",
               # engineering / lamina only:
               "moduli": {"E1": .., ...}, "pairs": {"nu12^2*E2/E1": ..}, "determinant": ..}]}

Eigenvalues are those of the stiffness in the deck's unit (nan where it does not exist). For
engineering constants and MAT8 positive definiteness is decided on the compliance S, which stays
finite when C does not exist; its smallest eigenvalue is kept as ``compliance_eig_min``. ``Material.derived["conductivity"]`` holds the same eigen summary for ORTHO/ANISO
conductivity blocks.
"""
from __future__ import annotations

import numpy as np

from linter.derived import derivation
from linter.physics import aniso as A

ANISO_FORMS = ("ortho", "engineering", "aniso", "mat9", "mat2", "lamina")
_ENG_MODULI = ("E1", "E2", "E3", "G12", "G13", "G23")
_ENG_PAIRS = ("nu12^2*E2/E1", "nu13^2*E3/E1", "nu23^2*E3/E2")


def roles_of(model, key: str) -> set[str]:
    return {ref.role for sec in model.sections for ref in sec.materials if ref.key == key}


def _values(block, k: int) -> np.ndarray:
    out = np.full((len(block.rows), k), np.nan)
    for i, r in enumerate(block.rows):
        v = list(r.values)[:k]
        out[i, :len(v)] = v
    return out


def _from_compliance(s: np.ndarray, tol: float) -> dict:
    """Eigen summary of C = S^-1, with positive definiteness decided on S (which exists when C may not)."""
    es = A.eigen_summary(s, tol)
    ec = A.eigen_summary(A.safe_inv(s), tol)
    pd = es["positive_definite"]
    return {"min": ec["min"], "max": ec["max"], "condition": es["condition"], "positive_definite": pd,
            "compliance_min": es["min"], "finite": es["finite"]}


def analyse_block(block, part: str, tol: float) -> dict:
    """Eigen summary (and bounds) of every row of one anisotropic elastic block."""
    form = block.form
    extra: list[dict] = [{} for _ in block.rows]
    if form == "engineering":
        v = _values(block, 9)
        summ = _from_compliance(A.compliance_engineering(v), tol)
        b = A.engineering_bounds(v)
        for i, e in enumerate(extra):
            e["moduli"] = dict(zip(_ENG_MODULI, b["moduli"][i].tolist()))
            e["pairs"] = dict(zip(_ENG_PAIRS, b["pairs"][i].tolist()))
            e["determinant"] = float(b["determinant"][i])
    elif form == "lamina":
        v = _values(block, 6)
        if part == "transverse-shear":
            shear = A.lamina_shear(v)
            rigid = np.isnan(shear)
            summ = A.eigen_summary(np.where(rigid, 1.0, shear), tol)   # rigid entries do not limit PD
            summ["positive_definite"] = summ["positive_definite"] | np.all(rigid[:, [0, 1], [0, 1]], axis=1)
        else:
            summ = _from_compliance(A.lamina_s(v), tol)
            b = A.lamina_bounds(v)
            for i, e in enumerate(extra):
                e["moduli"] = dict(zip(("E1", "E2", "G12"), b["moduli"][i].tolist()))
                e["pairs"] = {"nu12^2*E2/E1": float(b["pairs"][i, 0])}
        for i, e in enumerate(extra):
            e.setdefault("moduli", {}).update({"G1Z": float(v[i, 4]), "G2Z": float(v[i, 5])})
    else:
        if form == "ortho":
            c = A.stiffness_ortho(_values(block, 9))
        elif form == "aniso":
            c = A.stiffness_aniso(_values(block, 21))
        elif form == "mat9":
            c = A.stiffness_mat9(_values(block, 21))
        else:  # mat2
            c = A.stiffness_mat2(_values(block, 6), transverse_shear=(part == "transverse-shear"))
        summ = A.eigen_summary(c, tol)
        if form in ("ortho", "aniso", "mat9"):
            iso = A.is_isotropic(c)
            for i, e in enumerate(extra):
                e["isotropic"] = bool(iso[i])
        if form == "ortho":
            eng = A.engineering_from_stiffness(c)
            for i, e in enumerate(extra):
                e["engineering"] = {k: float(val[i]) for k, val in eng.items()}
    rows = []
    for i, r in enumerate(block.rows):
        row = {"line": r.loc.line, "temperature": r.temperature,
               "eig_min": float(summ["min"][i]), "eig_max": float(summ["max"][i]),
               "condition": float(summ["condition"][i]),
               "positive_definite": bool(summ["positive_definite"][i]),
               "complete": bool(summ["finite"][i]) or form == "lamina"}
        if "compliance_min" in summ:
            row["compliance_eig_min"] = float(summ["compliance_min"][i])
        row.update(extra[i])
        rows.append(row)
    return {"form": form, "card": block.card, "line": block.loc.line, "part": part, "rows": rows}


@derivation("anisotropic stiffness", order=15)
def derive_aniso(model, config) -> None:
    tol = float(config.threshold("aniso.eigen_rel_tol"))
    for mat in list(model.materials.values()) + list(model.duplicate_materials):
        roles = roles_of(model, mat.key)
        entries, cond = [], []
        for bi, block in enumerate(mat.blocks):
            if block.kind == "elastic" and block.form in ANISO_FORMS:
                parts = ["full"]
                if block.form in ("mat2", "lamina") and "transverse-shear" in roles:
                    parts = ["transverse-shear"] if roles - {"coupling"} == {"transverse-shear"} \
                        else ["full", "transverse-shear"]
                elif roles == {"coupling"}:
                    # a shell's membrane-bending coupling matrix (PSHELL MID4) need not be positive definite
                    parts = ["coupling"]
                for part in parts:
                    entry = analyse_block(block, part, tol)
                    entry["block"] = bi
                    entries.append(entry)
            elif block.kind == "conductivity" and block.form in ("ortho", "aniso"):
                k = A.conductivity_matrix(block.form, _values(block, 3 if block.form == "ortho" else 6))
                summ = A.eigen_summary(k, tol)
                cond.append({"block": bi, "form": block.form, "card": block.card, "line": block.loc.line,
                             "rows": [{"line": r.loc.line, "temperature": r.temperature,
                                       "eig_min": float(summ["min"][i]), "eig_max": float(summ["max"][i]),
                                       "positive_definite": bool(summ["positive_definite"][i])}
                                      for i, r in enumerate(block.rows)]})
        if entries:
            mat.derived["aniso"] = entries
        if cond:
            mat.derived["conductivity"] = cond
