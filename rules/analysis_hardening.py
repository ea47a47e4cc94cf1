"""analysis/missing-hardening: a nonlinear step's behaviour needs hardening data the material lacks.

Reads ``Procedure.options["COMPORTEMENT"]`` (a list of ``{relation, groups, line}``, written by the code_aster
reader for STAT_NON_LINE / DYNA_NON_LINE) and ``Procedure.options["materials"]`` (the step's own materials).
"""
from __future__ import annotations

from linter.model import norm_key
from linter.registry import rule
from linter.usage import material_usage

#: relation -> (what it needs, DEFI_MATERIAU keywords that give it)
NEEDS = {
    "VMIS_ISOT_LINE": ("linear isotropic hardening", ("ECRO_LINE", "ECRO_LINE_FO")),
    "VMIS_CINE_LINE": ("linear kinematic hardening", ("ECRO_LINE", "ECRO_LINE_FO")),
    "VMIS_ECMI_LINE": ("linear mixed hardening", ("ECRO_LINE", "ECRO_LINE_FO")),
    "VMIS_ISOT_TRAC": ("a tensile curve", ("TRACTION",)),
    "VMIS_ECMI_TRAC": ("a tensile curve", ("TRACTION",)),
    "VISC_ISOT_TRAC": ("a tensile curve", ("TRACTION",)),
    "VMIS_ISOT_PUIS": ("power-law hardening", ("ECRO_PUIS", "ECRO_PUIS_FO")),
}
REF = ("code_aster STAT_NON_LINE COMPORTEMENT (U4.51.11): each RELATION reads its parameters from DEFI_MATERIAU "
       "(VMIS_*_LINE: ECRO_LINE, VMIS_*_TRAC: TRACTION; from memory); without them the solver stops when it reads "
       "the material")


def _cards(model, mat) -> set:
    """Behaviour keywords the material gives: read blocks, and the ones the reader listed as not checked."""
    out = {str(b.card).upper() for b in mat.blocks}
    for u in model.unchecked:
        if u.material == mat.name and u.loc.path == mat.loc.path:
            out.update(w for w in u.what.replace(",", " ").split() if w.isupper())
    return out


@rule("analysis/missing-hardening", severity="error",
      title="A plasticity relation of the analysis needs hardening data the material does not give",
      rationale="A nonlinear step names a constitutive relation per group of elements; a plasticity relation "
                "reads its hardening from the material (a linear slope and yield stress, or a tensile curve). "
                "Without that data the solver stops before the first increment.",
      references=(REF,), data="relation, needs, step, line, groups")
def missing_hardening(model, ctx):
    usage = material_usage(model)
    reported = set()
    for step, proc in model.procedures():
        rels = proc.options.get("COMPORTEMENT") or ()
        scope = proc.options.get("materials")
        for rel in rels:
            relation = str(rel.get("relation") or "").upper()
            if relation not in NEEDS:
                continue
            what, cards = NEEDS[relation]
            groups = {norm_key(g) for g in rel.get("groups") or ()}
            for mat in model.all_materials():
                if mat.key not in usage or (scope is not None and mat.key not in scope):
                    continue
                if groups and not any(u.section.elset_name == "TOUT='OUI'" or norm_key(u.section.elset_name) in groups
                                      for u in usage[mat.key]):
                    continue
                if _cards(model, mat) & set(cards):
                    continue
                if (mat.key, relation) in reported:
                    continue
                reported.add((mat.key, relation))
                yield ctx.finding(f"material {mat.name} gives no {' or '.join(cards)}, but relation {relation} "
                                  f"(line {rel.get('line')}) of step {step.name} needs {what}", mat.loc, material=mat.name,
                                  data={"relation": relation, "needs": list(cards), "step": step.name,
                                        "line": rel.get("line"), "groups": sorted(groups)})
