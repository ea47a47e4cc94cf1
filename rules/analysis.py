"""analysis/*: what the analysis needs from the materials (density, conductivity, specific heat,
expansion, elastic behaviour).

A material is *used* when a section refers to it (``linter.usage.material_usage``); findings sit on
the material's definition and name the step that needs the data. Temperature ranges and the explicit
time step are in the sibling modules ``analysis_temperature`` and ``analysis_explicit``.
"""
from __future__ import annotations

from typing import Optional

from linter.model import DeckModel, Material, norm_key
from linter.registry import rule
from linter.usage import material_usage, resolve_set

CCX_MAT = "CalculiX User's Manual, Materials: data required by the analysis"
NAS_SOL = "Nastran solution sequences and the material data each needs"
MECHANICAL = ("elastic", "hyperelastic", "hyperfoam", "deformation_plasticity", "user")
THERMAL_ROLES = ("thermal",)
NON_STRUCTURAL = ("heat", "fluid", "network")


def used_materials(model: DeckModel) -> list[Material]:
    """Materials that some section refers to, in definition order."""
    usage = material_usage(model)
    return [m for k, m in model.materials.items() if k in usage]


def step_materials(model: DeckModel, proc) -> list[Material]:
    """The used materials a step works with: all of them, or the step's own material field when the parser
    names it (``Procedure.options["materials"]``: code_aster analyses take one CHAM_MATER each)."""
    mats = used_materials(model)
    scope = proc.options.get("materials") if proc is not None else None
    return mats if scope is None else [m for m in mats if m.key in set(scope)]


def massless_by_choice(model: DeckModel, mat: Material) -> bool:
    """code_aster writes RHO = 0 explicitly for a part meant to carry no mass (ELAS accepts it): not missing."""
    return model.format == "aster" and any(b.rows for b in mat.find("density"))


def volumetric_heat_capacity(mat: Material) -> bool:
    """The material gives rho*c itself (code_aster RHO_CP), so the heat capacity needs no density."""
    return any(b.form == "volumetric" and b.rows for b in mat.find("specific_heat"))


def element_count(model: DeckModel, key: str) -> int:
    return sum(sum(u.counts.values()) for u in material_usage(model).get(key, ()))


def families(model: DeckModel, ctx, key: str) -> set:
    """Catalogue families of the element types that use the material (None for a type not catalogued)."""
    out = set()
    for u in material_usage(model).get(key, ()):
        for t, n in u.counts.items():
            if n:
                tech = ctx.catalogue.get(t, model.dialect)
                out.add(tech.family if tech is not None else None)
    return out


def structural_use(model: DeckModel, ctx, key: str) -> bool:
    """Used in a structural role on elements that carry stress (not only heat, fluid or network elements)."""
    if not any(u.role not in THERMAL_ROLES for u in material_usage(model).get(key, ())):
        return False
    fams = families(model, ctx, key)
    return not fams or any(f not in NON_STRUCTURAL for f in fams)


def fluid_only(model: DeckModel, ctx, key: str) -> bool:
    """Used only on fluid or network elements (which take *FLUID CONSTANTS, not *SPECIFIC HEAT)."""
    fams = families(model, ctx, key)
    return bool(fams) and all(f in ("fluid", "network") for f in fams)


def has_positive(mat: Material, kind: str, column: str) -> bool:
    """The material has a block of that kind with some positive value (a zero density is no density)."""
    for blk in mat.find(kind):
        if not blk.rows:
            continue
        try:
            vals = blk.column(column) if column else None
        except ValueError:
            return True
        if vals is None or (vals > 0).any():
            return True
    return False


def _blocks_of(model: DeckModel, key: Optional[str]) -> Optional[set]:
    if key is None:
        return None
    sel = resolve_set(model, key)
    if sel is None and norm_key(key) != key:
        sel = resolve_set(model, norm_key(key))
    return set(sel.parts) if sel else set()


def materials_on(model: DeckModel, target: Optional[str]) -> set:
    """Keys of the used materials whose elements overlap the element set ``target`` (all when None)."""
    usage = material_usage(model)
    if target is None:
        return set(usage)
    blocks = _blocks_of(model, target)
    out = set()
    for key, uses in usage.items():
        for u in uses:
            same = norm_key(u.section.elset) == norm_key(target)
            if same or (blocks and blocks & (_blocks_of(model, u.section.elset) or set())):
                out.add(key)
    return out


def mass_cover(model: DeckModel, key: str) -> tuple[bool, list]:
    """(covered, other sources): a mass source on a set that overlaps the material's elements covers it.

    Sources without a target (e.g. CONM2 on a grid) or on other elements (keyword *MASS elements) give
    the model mass but not to this material's elements: they are returned so that the caller can say
    so and lower the severity (the analysis runs, but this material's elements have no inertia)."""
    others = []
    for ms in model.mass_sources:
        if ms.target is not None and key in materials_on(model, ms.target):
            return True, []
        others.append(ms)
    return False, others


def _steps_needing(model: DeckModel, need: str):
    for step, proc in model.procedures():
        if proc.needs.get(need):
            yield step, proc


def _step_words(step, proc) -> str:
    return f"step {step.name} ({proc.card or proc.kind}, line {proc.loc.line})"


@rule("analysis/missing-density", severity="error",
      title="The analysis needs a density the material does not have",
      rationale="Frequency, dynamic and transient heat-transfer analyses need mass (density); gravity and "
                "centrifugal loads need it to load the structure. Without it the solver stops, or the "
                "material's elements carry no mass or load. A body load on a material without density is a "
                "warning (a note when point masses carry it), and an error where CalculiX stops because no "
                "material has a density.",
      references=(CCX_MAT, NAS_SOL), data="need (mass|transient_thermal|body_load), step, line, "
           "other_mass_sources (count of mass sources not on these elements)")
def missing_density(model, ctx):
    reported = set()
    # CalculiX 2.20 (checked with ccx): a warning per material without density, and a stop ("no density
    # was assigned to any material") when none has one, for dynamics and for gravity/centrifugal loads alike
    none_has = not any(has_positive(m, "density", "rho") for m in used_materials(model))
    ccx_stop = (" (CalculiX stops: no material of the model has a density)"
                if none_has and model.dialect == "calculix" else "")
    for need in ("mass", "transient_thermal"):
        for step, proc in _steps_needing(model, need):
            for mat in step_materials(model, proc):
                if mat.key in reported or has_positive(mat, "density", "rho") or massless_by_choice(model, mat):
                    continue
                if need == "transient_thermal" and volumetric_heat_capacity(mat):
                    continue
                covered, others = mass_cover(model, mat.key) if need == "mass" else (False, [])
                if covered:
                    continue
                reported.add(mat.key)
                what = "mass for the dynamics" if need == "mass" else "a density for the heat capacity"
                sev, extra = None, ""
                if others:
                    sev = "warning"
                    extra = (f"; the model has {len(others)} other mass source(s) (point masses, non-structural "
                             "mass) not on these elements, so it runs, but this material's elements carry no mass")
                yield ctx.finding(
                    f"material {mat.name} has no density, but {_step_words(step, proc)} needs {what} "
                    f"({element_count(model, mat.key)} element(s) use it){extra}{ccx_stop if not others else ''}",
                    mat.loc, material=mat.name, severity=sev,
                    data={"need": need, "step": step.name, "line": proc.loc.line,
                          "other_mass_sources": len(others)})
    for step in model.steps:
        for load in step.loads:
            if load.kind not in ("gravity", "centrifugal"):
                continue
            for mat in step_materials(model, step.procedures[0] if step.procedures else None):
                if mat.key in reported or mat.key not in materials_on(model, load.target):
                    continue
                if has_positive(mat, "density", "rho"):
                    continue
                covered, others = mass_cover(model, mat.key)
                if covered:
                    continue
                reported.add(mat.key)
                sev, extra = ("error" if ccx_stop else "warning"), ccx_stop
                if others:  # lumped masses carry the load (a common modelling choice): a note
                    sev = "note"
                    extra = f"; the load acts on the model's {len(others)} other mass source(s) (point masses)"
                yield ctx.finding(
                    f"material {mat.name} has no density, so the {load.kind} load of step {step.name} (line "
                    f"{load.loc.line}) puts no load on its elements{extra}", mat.loc, material=mat.name,
                    severity=sev, data={"need": "body_load", "step": step.name, "line": load.loc.line,
                                        "other_mass_sources": len(others)})


def _simple_need(model, ctx, need: str, kind: str, column: str, words: str, skip=None):
    for step, proc in _steps_needing(model, need):
        for mat in step_materials(model, proc):
            if has_positive(mat, kind, column) or (skip and skip(model, ctx, mat.key)):
                continue
            yield ctx.finding(f"material {mat.name} has no {words}, but {_step_words(step, proc)} needs it",
                              mat.loc, material=mat.name, data={"step": step.name, "line": proc.loc.line})
        return  # one finding per material: the first step that needs it


@rule("analysis/missing-conductivity", severity="error",
      title="A heat-transfer step needs a conductivity the material does not have",
      rationale="Heat conduction needs the thermal conductivity of every material that conducts. Materials "
                "used only on fluid or network elements take their fluid properties from *FLUID CONSTANTS "
                "and are not checked.",
      references=(CCX_MAT, NAS_SOL), data="step, line")
def missing_conductivity(model, ctx):
    yield from _simple_need(model, ctx, "thermal", "conductivity", "", "thermal conductivity", skip=fluid_only)


@rule("analysis/missing-specific-heat", severity="error",
      title="A transient heat-transfer step needs a specific heat the material does not have",
      rationale="Transient heat transfer stores heat in rho*c; without a specific heat there is no heat capacity. "
                "Materials used only on fluid or network elements take their heat capacity from *FLUID "
                "CONSTANTS and are not checked.",
      references=(CCX_MAT, NAS_SOL), data="step, line")
def missing_specific_heat(model, ctx):
    yield from _simple_need(model, ctx, "transient_thermal", "specific_heat", "c", "specific heat", skip=fluid_only)


def has_expansion(mat: Material) -> bool:
    """Some nonzero expansion coefficient (a bulk MAT1 with A blank gives no expansion block)."""
    return any(v != 0 for blk in mat.find("expansion") for r in blk.rows for v in r.values)


def initial_values(model) -> list[float]:
    return [ld.value for ld in model.initial_temperatures if ld.value is not None]


@rule("analysis/missing-expansion", severity="warning",
      escalation="note when the deck gives the coefficient as 0 (a given value)",
      title="A temperature change is applied to a material without thermal expansion",
      rationale="A structural step with temperatures that differ from the initial ones strains only "
                "materials with an expansion coefficient; without one, the temperature load does nothing "
                "to that material (the solver does not check this).",
      references=(CCX_MAT, NAS_SOL), data="step, line, temperature, initial")
def missing_expansion(model, ctx):
    init = initial_values(model)
    for step in model.steps:
        if not any(p.needs.get("structural") for p in step.procedures):
            continue
        changed = [ld for ld in step.loads if ld.kind == "temperature" and ld.value is not None
                   and (not init or any(abs(ld.value - t0) > 0 for t0 in init))]
        if not changed:
            continue
        ld = changed[0]
        base = (f"initial temperature {min(init):.4g}" + (f"..{max(init):.4g}" if max(init) != min(init) else "")
                if init else "no initial temperature (the solver's default)")
        for mat in step_materials(model, step.procedures[0] if step.procedures else None):
            if has_expansion(mat) or not structural_use(model, ctx, mat.key):
                continue
            given = mat.find("expansion")
            if given:
                at = given[0].rows[0].loc if given[0].rows and given[0].rows[0].loc else given[0].loc      # a coefficient of 0 written in the deck is a given value: a note at most
                yield ctx.finding(
                    f"material {mat.name} gives a thermal expansion coefficient of 0 (line {at.line}), "
                    f"so the temperature {ld.value:.4g} of step {step.name} (line {ld.loc.line}) strains nothing in "
                    "it; fine if intended", at, material=mat.name, severity="note",
                    data={"step": step.name, "line": ld.loc.line, "temperature": ld.value,
                          "initial": init[0] if init else None, "given_zero": True})
                continue
            yield ctx.finding(
                f"material {mat.name} has no thermal expansion, but step {step.name} applies temperature "
                f"{ld.value:.4g} (line {ld.loc.line}) against {base}; temperature loads act on node sets, so "
                "every material of the model is compared", mat.loc, material=mat.name,
                data={"step": step.name, "line": ld.loc.line, "temperature": ld.value,
                      "initial": init[0] if init else None})
        return


@rule("analysis/missing-elastic", severity="error",
      title="A structural step uses a material without elastic behaviour",
      rationale="A mechanical analysis needs a stiffness for every material of the structure: *ELASTIC "
                "(or a hyperelastic, deformation-plasticity or user law), MAT1/MAT2/MAT8/MAT9.",
      references=(CCX_MAT, NAS_SOL), data="step, line")
def missing_elastic(model, ctx):
    for step, proc in _steps_needing(model, "structural"):
        for mat in step_materials(model, proc):
            if any(mat.has(k) for k in MECHANICAL) or not structural_use(model, ctx, mat.key):
                continue
            yield ctx.finding(f"material {mat.name} has no elastic behaviour, but {_step_words(step, proc)} "
                              "is a structural analysis", mat.loc, material=mat.name,
                              data={"step": step.name, "line": proc.loc.line},
                              restates=(("no-mechanical", mat.key),))
        return
