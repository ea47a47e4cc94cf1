"""Plain-data facts of one model for the reviewer's audit (the driver's side; reporters never see the model).

:func:`block_facts` gives a property block as written (every row, the layout's column names and the
physical quantity of each column). :func:`model_details` gives what the audit adds to a
:class:`linter.findings.FileReport` as ``details``::

    {"files": [{"path", "role": "deck"|"include", "sha256", "bytes"}],
     "includes": [{"written", "resolved", "path", "line", "status"}],
     "element_types": [{"type", "count", "family", "order", "integration", "locking"}],
     "steps": [{"name", "path", "line", "nlgeom", "procedures": [{"kind", "card", "line"}]}],
     "usage": [{"material", "sections": [{"kind", "card", "path", "line", "elset", "role", "counts"}]}],
     "unused_materials": [name, ...],
     "units": {"system", "labels": {quantity: label in the deck's system}, "si_labels": {...},
               "to_si": {quantity: factor}}}

Everything is plain data (str, int, float, lists, dicts), so it pickles for ``--jobs`` and goes to JSON.
"""
from __future__ import annotations

import hashlib
import math
from typing import Any, Optional

#: the physical quantity of each column of a property block, by (kind, column); columns not listed
#: are dimensionless (Poisson's ratios, Ogden exponents, plastic strain, locking stretch, ...)
_STRESS_KINDS = ("elastic", "hyperelastic", "hyperfoam", "deformation_plasticity")
_QUANTITY_BY_KIND = {"density": "density", "expansion": "expansion", "conductivity": "conductivity",
                     "specific_heat": "specific_heat"}
#: SI labels of the quantities the audit shows
SI_LABELS = {"stress": "Pa", "compliance": "1/Pa", "density": "kg/m^3", "expansion": "1/K",
             "conductivity": "W/(m K)", "specific_heat": "J/(kg K)", "speed": "m/s", "length": "m",
             "acceleration": "m/s^2", "time": "s", "mass": "kg"}


def column_quantity(kind: str, column: str) -> str:
    """``stress``, ``compliance``, ``density``, ... or ``dimensionless`` for one column of a block."""
    if kind in _QUANTITY_BY_KIND:
        return _QUANTITY_BY_KIND[kind]
    if kind == "plastic":
        return "stress" if column == "stress" else "dimensionless"
    if kind in _STRESS_KINDS:
        c = column.lower()
        if kind == "hyperelastic" and c in ("d", "d1", "d2", "d3"):
            return "compliance"
        if c.startswith(("nu", "alpha", "lambda", "beta")) or c in ("n", "a"):
            return "dimensionless"
        return "stress"
    return "dimensionless"


def _num(x: Any) -> Optional[float]:
    try:
        f = float(x)
    except (TypeError, ValueError):
        return None
    return f if math.isfinite(f) else None


def block_facts(block) -> dict[str, Any]:
    """One property block as written: columns, their quantities, every row with its temperature and line."""
    cols = list(block.layout)
    width = max((len(r.values) for r in block.rows), default=0)
    if len(cols) < width:
        cols += [f"value {i + 1}" for i in range(len(cols), width)]
    return {
        "kind": block.kind, "form": block.form, "card": block.card,
        "path": block.loc.path, "line": block.loc.line,
        "columns": cols[:max(width, len(block.layout))],
        "quantities": [column_quantity(block.kind, c) for c in cols],
        "rows": [{"T": _num(r.temperature), "line": r.loc.line, "values": [_num(v) for v in r.values],
                  "blanks": list(r.blanks)} for r in block.rows],
    }


def sha256_of(path: str) -> tuple[Optional[str], Optional[int]]:
    """Hex SHA-256 and size of a file (None, None when it cannot be read)."""
    h = hashlib.sha256()
    size = 0
    try:
        with open(path, "rb") as fh:
            while True:
                chunk = fh.read(1 << 22)
                if not chunk:
                    break
                size += len(chunk)
                h.update(chunk)
    except OSError:
        return None, None
    return h.hexdigest(), size


def _units(model) -> dict[str, Any]:
    from .derived.units.infer import load_data
    from .physics.units import DIMENSIONS

    us = model.derived.get("unit_system") or {}
    name = us.get("name")
    out: dict[str, Any] = {"system": name, "si_labels": dict(SI_LABELS), "labels": {}, "to_si": {}}
    if not name:
        return out
    system = next((s for s in load_data().systems if s.name == name), None)
    if system is None:
        return out
    labels = dict(system.labels)
    parts = name.split("-")
    length, time = labels.get("length", parts[0]), parts[-1] if len(parts) >= 3 else "s"
    labels.setdefault("speed", f"{length}/{time}")
    labels.setdefault("time", time)
    if "stress" in labels:
        labels.setdefault("compliance", f"1/{labels['stress']}")
    out["labels"] = {q: labels.get(q, f"{name} units") for q in SI_LABELS}
    out["to_si"] = {q: float(f"{system.scale(q):.12g}") for q in SI_LABELS if q in DIMENSIONS}
    return out


def model_details(model, hash_files: bool = True) -> dict[str, Any]:
    from .catalogue import Catalogue
    from .usage import material_usage

    files = []
    for i, p in enumerate(model.files):
        digest, size = sha256_of(p) if hash_files else (None, None)
        files.append({"path": p, "role": "deck" if i == 0 else "include", "sha256": digest, "bytes": size})
    includes = [{"written": inc.path, "resolved": inc.resolved, "path": inc.loc.path, "line": inc.loc.line,
                 "status": inc.status} for inc in model.includes]
    counts: dict[str, int] = {}
    for b in model.element_blocks:
        counts[b.type] = counts.get(b.type, 0) + b.count
    try:
        cat = Catalogue.load()
    except Exception:  # a broken catalogue is reported by the rules; the audit just omits the grades
        cat = None
    types = []
    for t, n in counts.items():
        tech = cat.get(t, model.dialect) if cat is not None else None
        types.append({"type": t, "count": n, "family": getattr(tech, "family", None),
                      "order": getattr(tech, "order", None), "integration": getattr(tech, "integration", None),
                      "locking": getattr(tech, "locking", None)})
    steps = [{"name": s.name, "path": s.loc.path, "line": s.loc.line, "nlgeom": bool(s.nlgeom),
              "procedures": [{"kind": p.kind, "card": p.card, "line": p.loc.line} for p in s.procedures]}
             for s in model.steps]
    usage_of = material_usage(model)
    usage, unused = [], []
    for m in model.materials.values():
        uses = usage_of.get(m.key, [])
        if not uses:
            unused.append(m.name)
        usage.append({"material": m.name, "sections": [
            {"kind": u.section.kind, "card": u.section.card, "path": u.section.loc.path,
             "line": u.section.loc.line, "elset": u.section.elset_name, "role": u.role,
             "counts": dict(u.counts)} for u in uses]})
    return {"files": files, "includes": includes, "element_types": types, "steps": steps,
            "usage": usage, "unused_materials": unused, "units": _units(model)}
