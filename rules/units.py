"""units/*: one consistent unit system for every number of the model.

The unit system is inferred from the whole model (or declared with ``--units`` / config ``units``)
by ``linter.derived.units``; see ``linter.derived.units.infer`` for the score and confidence, and
``linter.derived.units.diagnose`` for how a disagreement is attributed to a quantity.
"""
from dataclasses import replace

from linter.registry import rule

REFS = ("dimensional analysis (standard); handbook values: EN 1993-1-1 3.2.6, EN 1992-1-1 Table 3.1, ASM Handbook, "
        "CRC Handbook",
        "CalculiX CrunchiX User's Manual, section Units")


def _problems(model, kind, ctx=None):
    """The diagnosed problems of one kind. When the system was inferred with low confidence, the finding
    says which system it assumed and how sure that is; when the runner-up system would not raise it (the
    guess decides the finding), an error becomes a warning: a guess is not firm enough to fail a gate."""
    us = model.derived.get("unit_system") or {}
    floor = float(ctx.threshold("units.min_confidence")) if ctx is not None else 0.0
    conf = us.get("inferred_confidence", 0.0)
    guess = not us.get("declared") and us.get("name") and conf < floor
    for p in model.derived.get("units_problems", ()):
        if p.kind != kind:
            continue
        if guess:
            name = us["name"]
            decided = bool(p.data.get("decided_by_guess"))
            p = replace(p, severity="warning" if p.severity == "error" and decided else p.severity,
                        message=f"{p.message} [assumed unit system {name}, inferred with confidence {conf:.2f}; "
                                f"declare it with --units {name} or 'units: {name}' in deckwarden.yaml]",
                        data={**p.data, "assumed": name, "confidence": conf})
        yield p


@rule("units/mismatch", severity="error",
      thresholds=("units.min_confidence",),
      escalation="warning when the unit system was inferred with low confidence (the finding names the system "
                 "assumed); note when no element uses the material or no analysis of the deck reads the quantity",
      title="Values of one model written in different unit systems",
      rationale="The solver has no units: a material whose moduli are in MPa and density in kg/m^3, or one "
                "material pasted in Pa into an MPa model, gives masses, frequencies or stiffness wrong by "
                "powers of ten without any message. The quantity that no single system explains is named "
                "with the system in which it would make sense and the value to write instead. A quantity "
                "that no analysis of the deck reads (a stray specific heat in a static model) is a note.",
      references=REFS,
      data="quantities: the disagreeing quantities; fits: system in which they make sense; model: the "
           "reference system; class: material class judged from the values; write: value per quantity in "
           "the reference system")
def mismatch(model, ctx):
    for p in _problems(model, "mismatch", ctx):
        yield ctx.finding(p.message, p.loc, material=p.material, data=p.data, severity=p.severity,
                          defect=("units", p.material, tuple(p.data.get("quantities", ()))))


@rule("units/implausible", severity="warning",
      thresholds=("units.min_confidence",),
      escalation="note when no element uses the material or no analysis of the deck reads the value", title="A value outside every plausible range in the unit system",
      rationale="Judged against the bands of the material's best-fitting class (metal, mineral, polymer, "
                "composite, elastomer, foam, fluid) in the inferred or declared system, the value is "
                "implausible, and no other unit system explains it either: a typing slip, a percent "
                "instead of a fraction, or a wrong power of ten.",
      references=REFS,
      data="quantity; value_si; band (SI); class; system; decades outside the band")
def implausible(model, ctx):
    for p in _problems(model, "implausible", ctx):
        yield ctx.finding(p.message, p.loc, material=p.material, data=p.data, severity=p.severity)


@rule("units/gravity", severity="warning",
      thresholds=("units.min_confidence",), title="Gravity magnitude that does not fit the unit system",
      rationale="Standard gravity is 9.80665 m/s^2: 9806.65 in mm/s^2, 9.80665e-3 in mm/ms^2, 386.09 in "
                "in/s^2. 9.81 in a millimetre-tonne-second model is a thousand times too weak.",
      references=REFS + ("standard gravity 9.80665 m/s^2 (ISO 80000-3; CGPM 1901) fixes L/T^2",),
      data="value; fits: systems it fits; model: reference system; expected: value to write")
def gravity(model, ctx):
    for p in _problems(model, "gravity", ctx):
        yield ctx.finding(p.message, p.loc, data=p.data, severity=p.severity)



def _declared_at(model, name):
    """Where a model file declared its unit system (a material file's units: line), or None."""
    loc = model.extras.get("declared_units_loc")
    return loc if loc is not None and model.extras.get("declared_units") == name else None


@rule("units/undetermined", severity="note",
      escalation="error when the declared system is unknown", title="Too little evidence to tell the unit system",
      rationale="The values of the model fit more than one unit system about equally well (for example only "
                "E and nu, with no density, gravity or thermal data), so unit slips cannot be checked with "
                "confidence. Declare the system (--units, config key units) to check against it. A declared "
                "name that is not a known system is an error.",
      references=REFS,
      data="inferred; runner_up; confidence; margin; evidence (dimensions seen); known (for an unknown name)",
      thresholds=("units.min_confidence",))
def undetermined(model, ctx):
    us = model.derived.get("unit_system")
    if not us:
        return
    if us.get("declared_unknown"):
        yield ctx.finding(f"unknown unit system {us['declared_unknown']!r} declared; known systems: "
                          f"{', '.join(us.get('known', ()))}; the system was inferred instead",
                          _declared_at(model, us["declared_unknown"]), severity="error",
                          data={"declared": us["declared_unknown"],
                                "known": us.get("known", [])})
    if us.get("declared") and not us.get("declared_unknown"):
        return
    if not us.get("evidence"):
        if model.materials:
            yield ctx.finding("no value in the model depends on the unit system (no moduli, density, thermal "
                              "data, gravity or mesh): the unit system cannot be inferred", None,
                              data={"evidence": []})
        return
    if any(True for _ in _problems(model, "mismatch")):
        return  # the mismatch findings say why no single system fits
    conf, floor = us.get("inferred_confidence", 0.0), float(ctx.threshold("units.min_confidence"))
    if conf < floor:
        yield ctx.finding(
            f"the unit system is uncertain: {us.get('inferred')} fits best, {us.get('runner_up')} nearly as "
            f"well (confidence {conf:.2f} < {floor}); evidence: {', '.join(us.get('evidence', ()))}. "
            f"Declare it to check against it: --units {us.get('inferred')} on the command line or "
            f"'units: {us.get('inferred')}' in deckwarden.yaml (known systems: deckwarden explain units/undetermined)",
            None,
            data={k: us.get(k) for k in ("inferred", "runner_up", "margin", "evidence")} | {"confidence": conf})
