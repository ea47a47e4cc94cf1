"""Initial moduli and Drucker stability of hyperelastic and hyperfoam materials.

Fills ``Material.derived["hyper"]`` (for the block the solver uses, i.e. the last
``hyperelastic``/``hyperfoam`` block)::

    {"model": "mooney-rivlin", "kind": "hyperelastic", "line": 12,
     # summary = the row with the largest K0/mu0 (the worst for volumetric locking):
     "mu0": .., "K0": .., "nu0": .., "K0_over_mu0": .., "D_defaulted": bool (any row),
     "worst_row": <index into rows>,
     "rows": [{"line", "temperature", "model", "mu0", "K0", "nu0", "K0_over_mu0", "D", "D_defaulted",
               "incompressible", ["D_used"], ["beta"],
               "stability": {"UT"|"ET"|"PS": {"stable": [[lo, hi], ..], "unstable": [[lo, hi], ..]}}}]}

K0 is inf for an incompressible row (D = 0 outside the CalculiX dialect); with the CalculiX
dialect a |D_i| < 1e-10 is replaced as the solver does, (0.1/mu0)^i, and ``D_defaulted`` is set.
Van der Waals rows (not implemented by ccx) get ``"skipped"`` and no moduli. Stability is scanned
over ``hyper.stretch_range`` with ``hyper.stretch_points`` points for incompressible hyperelastic
forms only (not for hyperfoam, which is compressible by design).
"""
from __future__ import annotations

import math

from linter.derived import derivation
from linter.physics import hyper_models as HM
from linter.physics import hyper_stability as HS


def analyse_row(form: str, values, ccx_default: bool, stretch_range, points: int) -> dict:
    if form == "van-der-waals":
        return {"model": form, "skipped": "the Van der Waals model is not implemented by the solver"}
    if not all(math.isfinite(float(v)) for v in values):
        return {"model": form, "skipped": "a constant is not a finite number"}
    hr = HM.from_row(form, values)
    if hr is None:
        return {"model": form, "skipped": "unknown hyperelastic form"}
    out = HM.initial_moduli(hr, ccx_default=ccx_default)
    if form == "arruda-boyce" and hr.model is None:
        out["invalid"] = f"the locking stretch lambda_m = {float(values[1]) if len(values) > 1 else 0.0:g} is not positive"
    if hr.model is not None and not hr.foam_mu and math.isfinite(out["mu0"]):
        res = HS.scan(hr.model, stretch_range, points)
        out["stability"] = {m: {"stable": [list(iv) for iv in r["stable"]],
                                "unstable": [list(iv) for iv in r["unstable"]]} for m, r in res.items()}
        out["criterion"] = HS.CRITERION
    return out


def _ratio_key(row: dict) -> float:
    r = row.get("K0_over_mu0", math.nan)
    return -math.inf if r is None or (isinstance(r, float) and math.isnan(r)) else r


@derivation("hyperelastic initial moduli", order=20)
def derive_hyper(model, config) -> None:
    ccx = model.dialect == "calculix"
    srange = tuple(float(x) for x in config.threshold("hyper.stretch_range"))
    points = int(config.threshold("hyper.stretch_points"))
    for mat in list(model.materials.values()) + list(model.duplicate_materials):
        blocks = [b for b in mat.blocks if b.kind in ("hyperelastic", "hyperfoam")]
        if not blocks:
            continue
        block = blocks[-1]
        rows, seen = [], {}
        for r in block.rows:
            key = tuple(r.values)
            if key not in seen:      # temperature tables often repeat a row: analyse it once
                seen[key] = analyse_row(block.form, r.values, ccx, srange, points)
            row = dict(seen[key])
            row["line"], row["temperature"] = r.loc.line, r.temperature
            rows.append(row)
        entry = {"model": block.form, "kind": block.kind, "line": block.loc.line, "rows": rows,
                 "D_defaulted": any(r.get("D_defaulted") for r in rows)}
        usable = [i for i, r in enumerate(rows) if "mu0" in r]
        if usable:
            worst = max(usable, key=lambda i: _ratio_key(rows[i]))
            entry["worst_row"] = worst
            for k in ("mu0", "K0", "nu0", "K0_over_mu0"):
                entry[k] = rows[worst][k]
        mat.derived["hyper"] = entry
