"""model/*: the material <-> section <-> element graph is complete and unambiguous.

Uses the usage graph (``linter.usage``) and the element catalogue (families whose
elements take no material: springs, dashpots, masses, gaps).
"""
from __future__ import annotations

import difflib

from linter.registry import rule
from linter.usage import material_usage, resolve_set, unassigned

from ._text import include_restates, listing

CCX_MAT = "CalculiX User's Manual, *MATERIAL and Materials"
CCX_SECTIONS = "CalculiX User's Manual, *SOLID SECTION / *SHELL SECTION; ccx source solidsections.f"
CCX_CALINPUT = "ccx source calinput.f: 'no material was assigned to element N'"
BULK_GRAPH = "element -> property -> material (MYSTRAN User Manual, element and property cards)"

MECHANICAL_KINDS = ("elastic", "hyperelastic", "hyperfoam", "deformation_plasticity", "user")


def _where(loc) -> str:
    return f"{loc.path}:{loc.line}"


def _suggest(name_key: str, keys) -> str:
    close = difflib.get_close_matches(name_key, list(keys), n=1, cutoff=0.75)
    return f" (did you mean {close[0]}?)" if close else ""


@rule("model/undefined-material", severity="error",
      title="A section names a material that is not defined",
      rationale="The solver stops when a section (or property card) refers to a material that does not exist "
                "('nonexistent material'). When the deck has an include that could not be read, the material "
                "may be defined there: that is reported once, as the include problem.",
      references=(CCX_SECTIONS, BULK_GRAPH),
      data="material: the name as written; section: the card; known: number of materials defined")
def undefined_material(model, ctx):
    restates = include_restates(model)
    for sec in model.sections:
        for ref in sec.materials:
            if ref.key in model.materials:
                continue
            hint = _suggest(ref.key, model.materials)
            yield ctx.finding(f"{sec.card} for {sec.elset_name} names material {ref.name}, which is not defined"
                              f"{hint}", ref.loc or sec.loc, material=ref.name,
                              data={"material": ref.name, "section": sec.card, "role": ref.role,
                                    "known": len(model.materials)},
                              defect=("undefined-material", ref.key), restates=restates)


@rule("model/duplicate-material", severity="error",
      title="A material is defined twice",
      rationale="Two materials with the same name (after upper-casing and removing blanks, as the solver "
                "compares them) or the same material id: which one a section gets depends on the solver, and "
                "a copy-paste left-over is the usual cause.",
      references=(CCX_MAT, "NASTRAN-95 user's manual MAT1 remark 3: MID unique among structural materials "
                           "(MYSTRAN User Manual MAT1)"),
      data="first: path:line of the first definition; again: path:line of this one")
def duplicate_material(model, ctx):
    for dup in model.duplicate_materials:
        first = model.materials.get(dup.key)
        where = _where(first.loc) if first else "earlier"
        yield ctx.finding(f"material {dup.name} is defined again here; it was first defined at {where}",
                          dup.loc, material=dup.name,
                          data={"first": where, "again": _where(dup.loc)})


@rule("model/undefined-set", severity="error",
      title="A section refers to an element set that does not exist or is empty",
      rationale="A section on a missing set stops the solver ('element set ... has not yet been defined'); on "
                "an empty set it assigns nothing, so the elements meant are left without material. In bulk "
                "decks a property card that no element uses is common and harmless: a note.",
      references=(CCX_SECTIONS, BULK_GRAPH),
      data="set: the set name; state: missing | empty")
def undefined_set(model, ctx):
    restates = include_restates(model)
    bulk = model.format == "bulk"
    for sec in model.sections:
        es = model.element_sets.get(sec.elset)
        sel = resolve_set(model, sec.elset) if es is not None else None
        if es is not None and sel is not None and sel.counts(model):
            continue
        state = "missing" if es is None else "empty"
        if bulk:
            msg = f"{sec.card} {sec.elset_name} is used by no element"
            yield ctx.finding(msg, sec.loc, data={"set": sec.elset_name, "state": state}, severity="note")
            continue
        msg = (f"{sec.card} refers to element set {sec.elset_name}, which is "
               + ("not defined" + _suggest(sec.elset, model.element_sets) if es is None else "empty")
               + ": no element gets this section")
        yield ctx.finding(msg, sec.loc, data={"set": sec.elset_name, "state": state},
                          restates=restates if es is None else ())


@rule("model/unassigned-elements", severity="error",
      title="Elements without a section or property",
      rationale="Every continuum, shell, beam and truss element needs a section that gives it a material; "
                "the solver stops with 'no material was assigned to element N'. Springs, dashpots, masses and "
                "gaps take their properties from their own cards, and network (D) elements from *FLUID SECTION "
                "(entry and exit elements need none): they are not checked.",
      references=(CCX_CALINPUT, BULK_GRAPH),
      data="type, count (elements without section), total (elements in the block), elset")
def unassigned_elements(model, ctx):
    cat = ctx.catalogue
    restates = include_restates(model)
    for i, n in sorted(unassigned(model).items()):
        blk = model.element_blocks[i]
        tech = cat.get(blk.type, model.dialect)
        if tech is not None and (not tech.takes_material or tech.family == "network"):
            # network (D) elements: entry and exit elements carry no section by design (node 0),
            # the others take theirs from *FLUID SECTION
            continue
        some = "all " if n == blk.count and n > 1 else ""
        where = f" (set {blk.elset})" if blk.elset else ""
        what = "property card" if model.format == "bulk" else "section"
        yield ctx.finding(f"{some}{n} {blk.type_as_written or blk.type} element{'s' if n != 1 else ''} of this "
                          f"block{where} {'have' if n != 1 else 'has'} no {what}, so no material",
                          blk.loc, data={"type": blk.type, "count": n, "total": blk.count, "elset": blk.elset},
                          restates=restates)


@rule("model/unused-material", severity="note",
      title="A material that no section uses",
      rationale="A material that no section refers to is not checked against elements or analyses and may be "
                "a left-over, or a section was meant to use it.",
      references=(CCX_MAT,), data="material")
def unused_material(model, ctx):
    used = material_usage(model)
    unused = [m for m in model.all_materials() if m.key not in used]
    if not unused:
        return
    # a misspelt material name on a section leaves the intended material unused: one defect, one finding
    misspelt: dict[str, list] = {}
    names = [m.key for m in unused]
    for sec in model.sections:
        for ref in sec.materials:
            if ref.key not in model.materials:
                for close in difflib.get_close_matches(ref.key, names, n=1, cutoff=0.75):
                    misspelt.setdefault(close, []).append(("undefined-material", ref.key))
    for mat in unused:
        yield ctx.finding(f"material {mat.name} is not used by any section", mat.loc, material=mat.name,
                          data={"material": mat.name},
                          restates=tuple(misspelt.get(mat.key, ())) + include_restates(model))


@rule("model/property-repeated", severity="warning",
      title="The same property given twice in one material",
      rationale="When a property card appears twice in one material the solver keeps the last one and "
                "silently drops the first: usually an edit that was meant to replace it, or a copy-paste "
                "error.",
      references=(CCX_MAT + ": 'if a property is defined twice in one material, the last definition wins'",),
      data="kind; lines: the lines of the cards; kept: the line of the card the solver uses")
def property_repeated(model, ctx):
    if model.format == "aster":
        return  # a DEFI_MATERIAU call cannot repeat a keyword (Python refuses it); its behaviours may coexist
    for mat in model.all_materials():
        by_kind: dict[str, list] = {}
        for blk in mat.blocks:
            if blk.kind != "other":
                by_kind.setdefault(blk.kind, []).append(blk)
        for kind, blocks in by_kind.items():
            if len(blocks) < 2:
                continue
            lines = [b.loc.line for b in blocks]
            card = blocks[-1].card or kind
            yield ctx.finding(f"material {mat.name} gives {card} {len(blocks)} times (lines "
                              f"{', '.join(map(str, lines))}): the solver keeps only the last one, line {lines[-1]}",
                              blocks[0].loc, material=mat.name,
                              data={"kind": kind, "lines": lines, "kept": lines[-1]})


@rule("model/plastic-without-elastic", severity="error",
      title="Plasticity without elasticity",
      rationale="A plastic hardening table describes the response beyond yield; the elastic part must be "
                "given too, and in CalculiX before it ('*PLASTIC should be preceded by an *ELASTIC card').",
      references=(CCX_MAT + "; ccx source plastics.f",),
      data="plastic_line; elastic_line (None when there is no elastic card)")
def plastic_without_elastic(model, ctx):
    for mat in model.all_materials():
        plastic = mat.find("plastic")
        if not plastic:
            continue
        elastic = [b for b in mat.blocks if b.kind == "elastic"]
        first_p = plastic[0]
        if elastic:
            if model.format != "keyword" or mat.blocks.index(elastic[0]) < mat.blocks.index(first_p):
                continue
            msg = (f"material {mat.name}: {first_p.card or 'the plastic card'} comes before the elastic card "
                   f"(line {elastic[0].loc.line}); CalculiX needs the elastic card first")
        else:
            msg = f"material {mat.name} has a plastic hardening table but no elastic constants"
        # with no elastic card at all, a material without other mechanical behaviour is reported once,
        # by model/no-mechanical-behaviour (which names what the material does give)
        yield ctx.finding(msg, first_p.loc, material=mat.name,
                          data={"plastic_line": first_p.loc.line,
                                "elastic_line": elastic[0].loc.line if elastic else None},
                          restates=() if elastic else (("no-mechanical", mat.key),))


@rule("model/material-after-step", severity="error",
      title="A material defined after the first step",
      rationale="Materials belong to the model definition; CalculiX refuses material cards after the first "
                "*STEP.",
      references=(CCX_MAT,), data="first_step: path:line of the first step")
def material_after_step(model, ctx):
    for mat in model.all_materials():
        if mat.after_step:
            where = _where(model.first_step) if model.first_step else "earlier"
            yield ctx.finding(f"material {mat.name} is defined after the first step (at {where}); the solver "
                              "refuses material cards in a step", mat.loc, material=mat.name,
                              data={"first_step": where})


@rule("model/no-mechanical-behaviour", severity="error",
      title="A material without mechanical behaviour in a structural analysis",
      rationale="A structural step needs a stiffness for every element: the material must have one of "
                "elastic, hyperelastic, hyperfoam, deformation plasticity or a user material.",
      references=(CCX_MAT + ": exactly one of *ELASTIC, *HYPERELASTIC, *HYPERFOAM, *DEFORMATION PLASTICITY, "
                            "*USER MATERIAL is required",),
      data="material; has: the property kinds it does have; steps: the structural procedures")
def no_mechanical_behaviour(model, ctx):
    structural = [p for _s, p in model.procedures() if p.needs.get("structural")]
    if not structural:
        return
    cat = ctx.catalogue
    usage = material_usage(model)
    for mat in model.all_materials():
        if any(mat.has(k) for k in MECHANICAL_KINDS):
            continue
        uses = [u for u in usage.get(mat.key, ()) if u.role != "thermal"]
        if not uses:
            continue
        types = {t for u in uses for t, n in u.counts.items() if n}
        mechanical = [t for t in types
                      if (cat.get(t, model.dialect) is None
                          or cat.get(t, model.dialect).family not in ("heat", "fluid", "network"))]
        if types and not mechanical:
            continue
        kinds = sorted({b.kind for b in mat.blocks})
        procs = sorted({p.card or p.kind for p in structural})
        yield ctx.finding(f"material {mat.name} has no mechanical behaviour (it gives only "
                          f"{listing(kinds) or 'nothing'}) but the deck has a structural step "
                          f"({', '.join(procs)}): its elements have no stiffness", mat.loc, material=mat.name,
                          data={"material": mat.name, "has": kinds, "steps": procs},
                          defect=("no-mechanical", mat.key))
