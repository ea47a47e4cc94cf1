"""Run-level stage: the same material defined with different constants in different decks of one run.

The rules of the engine see one model at a time; this stage sees the per-deck material summaries
(``FileReport.materials``: name, where, and every property block as written) after all decks were
checked, and adds ``model/material-drift`` findings to the report of each deck whose definition differs
from the most common one. Reporters still see findings only.

Two definitions are compared property by property (same kind and form, present in both): a different
number of rows, or any constant or temperature whose relative difference exceeds
``model.drift_rel_tol`` (thresholds.yaml) makes them differ. A property given in one deck only is not
drift (one analysis may need a density the other does not). Materials are matched by name, normalised
(upper case; blanks, underscores, hyphens and dots dropped), within one unit system: decks whose unit systems differ or
are unknown are not compared. Bulk-data materials are named by a number (MID): numbers are not names,
so they are left out.
"""
from __future__ import annotations

import math
from typing import Any, Optional

RULE = "model/material-drift"


def _key(name: Any) -> Optional[str]:
    """The name compared: upper case, without blanks, underscores, hyphens and dots (None: a number)."""
    key = "".join(ch for ch in str(name or "").upper() if not ch.isspace() and ch not in "_-.")
    return None if not key or key.isdigit() else key


def _props(entry: dict) -> dict[tuple[str, str], dict]:
    """(kind, form) -> the last block of that kind and form (the one the solver uses)."""
    out = {}
    for b in entry.get("blocks") or ():
        if isinstance(b, dict) and b.get("rows"):
            out[(str(b.get("kind")), str(b.get("form")))] = b
    return out


def _differs(a: Optional[float], b: Optional[float], tol: float) -> bool:
    if a is None or b is None:
        return (a is None) != (b is None)
    if a == b:
        return False
    return abs(a - b) > tol * max(abs(a), abs(b))


def compare(ref: dict, other: dict, tol: float) -> list[dict[str, Any]]:
    """The differences between two material summaries (empty: they agree within ``tol``)."""
    out: list[dict[str, Any]] = []
    pa, pb = _props(ref), _props(other)
    for kf in sorted(set(pa) & set(pb)):
        ra, rb = pa[kf]["rows"], pb[kf]["rows"]
        label = kf[0] if kf[1] == "iso" else f"{kf[0]}:{kf[1]}"
        if len(ra) != len(rb):
            out.append({"property": label, "column": "rows", "value": len(rb), "reference": len(ra)})
            continue
        cols = pa[kf].get("columns") or []
        for i, (x, y) in enumerate(zip(ra, rb)):
            if _differs(x.get("T"), y.get("T"), tol):
                out.append({"property": label, "column": "T", "row": i + 1, "value": y.get("T"),
                            "reference": x.get("T")})
            vx, vy = x.get("values") or [], y.get("values") or []
            for j in range(max(len(vx), len(vy))):
                a = vx[j] if j < len(vx) else None
                b = vy[j] if j < len(vy) else None
                if _differs(a, b, tol):
                    out.append({"property": label, "column": cols[j] if j < len(cols) else f"value {j + 1}",
                                "row": i + 1, "value": b, "reference": a})
    return out


def _fmt(v: Any) -> str:
    if isinstance(v, float) and math.isfinite(v):
        return f"{v:.6g}"
    return "blank" if v is None else str(v)


def material_drift(result, config) -> int:
    """Add ``model/material-drift`` findings to the decks whose materials differ; return how many."""
    from .findings import Finding

    if len(result.files) < 2 or not config.rule_enabled(RULE):
        return 0
    tol = float(config.threshold("model.drift_rel_tol"))
    groups: dict[tuple[str, str], list[tuple[Any, dict]]] = {}
    for fr in result.files:
        us = fr.unit_system.get("name") if isinstance(fr.unit_system, dict) else None
        if not us:
            continue
        seen = set()
        for m in fr.materials or ():
            key = _key(m.get("name")) if isinstance(m, dict) else None
            if key and key not in seen:   # a deck's own duplicates are model/duplicate-material's business
                seen.add(key)
                groups.setdefault((key, us), []).append((fr, m))
    added = 0
    sev = config.severity_override(RULE) or "warning"
    for (key, us), defs in sorted(groups.items()):
        if len({id(fr) for fr, _m in defs}) < 2:
            continue
        # reference: the definition most others agree with (first in path order on a tie)
        agree = [sum(1 for _f, o in defs if not compare(m, o, tol)) for _fr, m in defs]
        ref_fr, ref = defs[max(range(len(defs)), key=lambda i: (agree[i], -i))]
        decks = sorted({fr.path for fr, _m in defs})
        for fr, m in defs:
            if fr is ref_fr:
                continue
            diff = compare(ref, m, tol)
            if not diff:
                continue
            shown = "; ".join(f"{d['property']} {d['column']}" + (f" row {d['row']}" if d.get("row", 1) != 1 else "")
                              + f" {_fmt(d['value'])} (there {_fmt(d['reference'])})" for d in diff[:4])
            more = f"; {len(diff) - 4} more" if len(diff) > 4 else ""
            fr.findings.append(Finding(
                rule=RULE, severity=sev, path=m.get("path") or fr.path, line=m.get("line"),
                material=str(m.get("name")),
                message=(f"material {m.get('name')} differs from its definition in "
                         f"{ref.get('path')}:{ref.get('line')}: {shown}{more} (relative tolerance {tol:g}; "
                         f"{len(decks)} decks define it)"),
                data={"material_key": key, "unit_system": us, "decks": decks,
                      "reference": {"path": ref.get("path"), "line": ref.get("line")},
                      "differences": diff}))
            added += 1
    return added
