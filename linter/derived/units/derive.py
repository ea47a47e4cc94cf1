"""The unit system of a deck: inferred from the whole model, or declared (``config.units``).

Fills ``model.derived["unit_system"]`` (summary, copied into the report as ``files[].unit_system``),
``Material.derived["unit_system"] = {"name", "confidence"}`` per material, and for the ``units/*``
rules ``model.derived["units_problems"]`` (diagnosed problems) and ``model.derived["units_inference"]``.

An unknown declared name does not stop the check: inference is used instead, and
``unit_system["declared_unknown"]`` holds the name; ``units/undetermined`` reports it as an error
listing the known systems.
"""
from __future__ import annotations

from .diagnose import diagnose
from .evidence import model_evidence
from .infer import infer, load_data, material_system
from .. import derivation


def _r(x: float) -> float:
    """Scale factor rounded to 12 significant digits (1e12, not 999999999999.9999)."""
    return float(f"{x:.12g}")


def summary(inf) -> dict:
    data = inf.data
    out = {"name": None, "confidence": 0.0, "declared": inf.declared}
    if inf.ref is not None:
        s = data.systems[inf.ref]
        out.update({
            "name": s.name,
            "confidence": 1.0 if inf.declared else round(inf.confidence, 3),
            "stress_scale_to_pa": _r(s.scale("stress")),
            "length_scale_to_m": _r(s.scale("length")),
            "density_scale_to_kg_m3": _r(s.scale("density")),
            "time_scale_to_s": _r(s.scale("time")),
            "mass_scale_to_kg": _r(s.scale("mass")),
            "temperature_interval_to_k": _r(s.scale("temperature")),
            "temperature_scale": s.temperature_scale,
        })
    if inf.best is not None:
        out["inferred"] = data.systems[inf.best].name
        out["inferred_confidence"] = round(inf.confidence, 3)
        out["margin"] = None if inf.margin == float("inf") else round(inf.margin, 3)
        out["runner_up"] = data.systems[inf.runner_up].name if inf.runner_up is not None else None
        out["equivalent"] = [s.name for j, s in enumerate(data.systems)
                             if j != inf.best and _equiv(inf, j)]
    out["evidence"] = sorted(inf.dims)
    clues = clues_of(inf)
    if clues:
        out["clues"] = clues
    if inf.evidence.temperatures:
        out["temperatures"] = list(inf.evidence.temperatures)
    if inf.evidence.absolute_zero is not None:
        out["absolute_zero"] = inf.evidence.absolute_zero
    if inf.declared_unknown:
        out["declared_unknown"] = inf.declared_unknown
        out["known"] = [s.name for s in data.systems]
    return out


def clues_of(inf) -> list[str]:
    """The evidence beyond the material numbers that weighed in, in words (for the report)."""
    from .names import name_classes

    data, ev = inf.data, inf.evidence
    out = []
    for ms in inf.materials:
        cls = name_classes(ms.ev.name)
        if cls:
            out.append(f"material name {ms.ev.name}: {' or '.join(data.class_names[c] for c in cls)}")
        period = ms.ev.notes.get("explicit_period")
        if period and not any(x.startswith("explicit step period") for x in out):
            out.append(f"explicit step period {period:.4g} (deck time units) against the stable increment")
    for g, loc in ev.gravity[:3]:
        out.append(f"gravity {g:.6g} (line {loc.line})" if loc is not None else f"gravity {g:.6g}")
    if ev.model_size:
        out.append(f"model size {ev.model_size:.4g} (deck length units)")
    if ev.temperatures:
        out.append(f"temperatures {ev.temperatures[0]:.4g}..{ev.temperatures[1]:.4g}")
    return out


def _equiv(inf, j) -> bool:
    from .infer import equivalent

    return equivalent(inf.data, inf.best, j, inf.dims)


@derivation("unit system", order=80)
def derive_units(model, config) -> None:
    declared = getattr(config, "units", None) if config is not None else None
    # a material file declares its own system (units:); the command line or configuration wins
    declared = declared or model.extras.get("declared_units")
    inf = infer(model_evidence(model), declared)
    model.derived["units_inference"] = inf
    model.derived["unit_system"] = summary(inf)
    data = load_data()
    for ms in inf.materials:
        mat = model.materials.get(ms.ev.key)
        if mat is None:
            continue
        idx, conf = material_system(ms, data, inf.ref)
        mat.derived["unit_system"] = {"name": data.systems[idx].name if idx is not None else None,
                                      "confidence": round(conf, 3)}
    floor = 0.2
    try:
        floor = float(config.threshold("units.min_confidence")) if config is not None else floor
    except Exception:   # a configuration without the threshold: the default of thresholds.yaml
        pass
    model.derived["units_problems"] = diagnose(inf, floor)
