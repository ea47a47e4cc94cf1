"""element/*: whether the element technology suits the material it carries.

Uses the element-technology catalogue (``ctx.catalogue``, ``linter/data/elements.yaml``) for
the volumetric-locking grade of each element type, and the usage graph
(``linter.usage``) for the element types and counts each material is used on.
"""
from __future__ import annotations

import math

from linter.findings import SEVERITY_RANK
from linter.physics.elastic import k_over_g
from linter.registry import rule
from linter.usage import element_types_of

from ._text import listing, num, plural



def locking_ratio(ctx) -> float:
    """K/G above which locking is considered: the threshold, or K/G at elastic.near_incompressible_nu."""
    explicit = ctx.threshold("element.locking_ratio")
    if explicit is not None:
        return float(explicit)
    return float(k_over_g(float(ctx.threshold("elastic.near_incompressible_nu"))))


def _hyper_ratio(mat):
    h = mat.derived.get("hyper")
    if isinstance(h, list):
        vals = [r.get("K0_over_mu0") for r in h if isinstance(r, dict)]
    elif isinstance(h, dict):
        vals = [h.get("K0_over_mu0")]
    else:
        vals = []
    # an infinite ratio (D = 0 read as incompressible outside CalculiX) is the worst case, not "no data"
    vals = [float(v) for v in vals if v is not None and not math.isnan(float(v))]
    return max(vals) if vals else None


def _stiffness_cause(mat, ctx):
    """(kind, value, is_error, text) for a nearly incompressible material, or None."""
    near_nu = float(ctx.threshold("elastic.near_incompressible_nu"))
    ratio_limit = locking_ratio(ctx)
    nus = [r["nu"] for r in mat.derived.get("elastic", ()) if r["nu"] is not None and math.isfinite(r["nu"])
           and r["nu"] < 0.5]
    if nus:
        nu = max(nus)
        kg = float(k_over_g(nu))
        if nu >= near_nu or kg >= ratio_limit:
            err = nu >= float(ctx.threshold("element.locking_error_nu"))
            return {"kind": "isotropic", "nu": nu, "K_over_G": kg, "error": err,
                    "text": f"nu = {num(nu)}, K/G = {num(kg)}"}
    hr = _hyper_ratio(mat)
    if hr is not None and hr >= ratio_limit:
        err = hr >= float(ctx.threshold("element.locking_error_ratio"))
        return {"kind": "hyperelastic", "K0_over_mu0": hr, "error": err,
                "text": (f"hyperelastic K0/mu0 = {num(hr)}" if math.isfinite(hr)
                         else "hyperelastic with D = 0 (incompressible, K0/mu0 infinite)")}
    return None


@rule("element/volumetric-locking", severity="warning",
      escalation="error when the material is incompressible enough to stop the solve on severely locking elements; "
                 "note on mildly locking elements or for plastic flow alone",
      title="Nearly incompressible or plastic material on elements that lock",
      rationale="Fully integrated low-order displacement elements cannot deform at constant volume without "
                "spurious stiffness: with nu near 0.5 (K/G large), a nearly incompressible hyperelastic "
                "material, or isochoric plastic flow they lock and give far too stiff results and wrong "
                "stresses. The catalogue grades each element type: severe (C3D8, C3D4, C3D6 and the 2D "
                "elements expanded into them) gives a warning (an error beyond element.locking_error_nu or "
                "element.locking_error_ratio), mild (fully integrated quadratic) a note, plastic material on "
                "severe elements a note. Bulk solids are graded unknown: there the dialect and the element "
                "integration options decide, so at most a warning.",
      references=("CCX-UM Element Types: C3D8 'behave badly for isochoric material behavior, i.e. for high values "
                  "of Poisson's coefficient or plastic behavior'; C3D20R 'performs well' (CalculiX CrunchiX User's "
                  "Manual, Element Types)",
                  "Hughes, The Finite Element Method (2000) ch. 4 (locking of low-order displacement elements; cures)",
                  "MYSTRAN user's manual PSOLID: ISOP=REDUCED is reduced shear integration"),
      data="cause: isotropic | hyperelastic | plastic; nu, K_over_G or K0_over_mu0; types: {type: {count, grade}}; "
           "alternatives: {type: [non-locking types of the same family]}",
      thresholds=("element.locking_ratio", "elastic.near_incompressible_nu", "element.locking_error_nu",
                  "element.locking_error_ratio"))
def volumetric_locking(model, ctx):
    cat = ctx.catalogue
    for mat in model.all_materials():
        types = element_types_of(model, mat.key)
        if not types:
            continue
        cause = _stiffness_cause(mat, ctx)
        plastic = mat.has("plastic") or mat.has("deformation_plasticity")
        if cause is None and not plastic:
            continue
        affected, severity = {}, None
        for etype, count in sorted(types.items()):
            tech = cat.get(etype, model.dialect)
            if tech is None or count <= 0:
                continue
            if cause is not None:
                sev = {"severe": "error" if cause["error"] else "warning", "mild": "note",
                       "unknown": "warning"}.get(tech.locking)
            else:
                sev = "note" if tech.locking == "severe" else None
            if sev is None:
                continue
            affected[etype] = (count, tech, sev)
            if severity is None or SEVERITY_RANK[sev] > SEVERITY_RANK[severity]:
                severity = sev
        if not affected:
            continue
        parts, alts, unknown = [], {}, False
        grade_rank = {"severe": 0, "unknown": 1, "mild": 2}
        affected = dict(sorted(affected.items(), key=lambda kv: (grade_rank.get(kv[1][1].locking, 3), -kv[1][0])))
        for etype, (count, tech, _sev) in affected.items():
            parts.append(f"{plural(count, etype + ' element')} ({tech.locking} locking)")
            alts[etype] = cat.alternatives(tech, model.dialect)
            unknown = unknown or tech.locking == "unknown"
        if cause is not None:
            why = f"nearly incompressible ({cause['text']})" + (" and plastic" if plastic else "")
            effect = "these elements lock volumetrically and give too stiff displacements and wrong stresses"
        else:
            why = "plastic (isochoric plastic flow)"
            effect = "isochoric plastic flow locks these fully integrated low-order elements too"
        if model.format == "mesh" and all(tech.locking == "unknown" for _c, tech, _s in affected.values()):
            effect = "whether these cells lock depends on their formulation"
        msg = f"material {mat.name} is {why} and is used on {listing(parts)}: {effect}"
        suggestions = _ordered(alts)
        if model.format == "mesh":
            msg += mesh_route_advice(model, mat, affected, suggestions, unknown, data_out := {})
        elif suggestions:
            msg += f"; use {', '.join(suggestions)} instead"
        if unknown and model.format == "bulk":
            msg += ("; for these bulk solids the dialect and the element's integration options (PSOLID IN/ISOP) "
                    "decide whether they lock: ISOP=REDUCED is reduced shear integration, not a volumetric cure")
        elif unknown and model.format != "mesh":
            msg += "; for the elements of unknown grade (user elements) their own formulation decides"
        data = {"cause": cause["kind"] if cause else "plastic", "plastic": plastic,
                "types": {t: {"count": c, "grade": tech.locking} for t, (c, tech, _s) in affected.items()},
                "alternatives": alts}
        if cause:
            data.update({k: v for k, v in cause.items() if k not in ("kind", "text", "error")})
        if model.format == "mesh":
            data.update(data_out)
        yield ctx.finding(msg, mat.loc, material=mat.name, data=data, severity=severity)


def mesh_route_advice(model, mat, affected: dict, suggestions: list[str], unknown: bool, data: dict) -> str:
    """Mesh route: cell types are graded by the region's formulation; name what to write in the material file."""
    forms = []
    for s in suggestions:
        base, _, form = s.partition(":")
        if form and any(t.partition(":")[0] == base for t in affected) and form.lower() not in forms:
            forms.append(form.lower())
    text = f"; give the region a formulation that does not lock ({', '.join(forms)})" if forms else ""
    if unknown:
        lines = sorted({sec.loc.line for sec in model.sections for ref in sec.materials
                        if ref.key == mat.key and not sec.options.get("formulation")})
        data["regions_without_formulation"] = lines
        where = f"the region at line{'s' if len(lines) > 1 else ''} {', '.join(map(str, lines))} gives" if lines \
            else "a region gives"
        text += (f"; {where} no formulation the catalogue grades, so the locking check cannot decide whether "
                 "these cells lock")
    return text


def _ordered(alts: dict) -> list[str]:
    out: list[str] = []
    for v in alts.values():
        for a in v:
            if a not in out:
                out.append(a)
    return out
