"""The reviewer's audit as a small document tree, rendered to HTML (``review_html``) or Markdown (``audit``).

Both renderers walk the same nodes, so both show the same numbers. Nodes hold plain text; the
renderers escape every string (deck strings are untrusted). Figures are SVG made from numbers only
(``review_figures``). Reporters see the :class:`linter.findings.RunResult` only, never the model.

Number formatting (one rule each, used by tables and tests alike): :func:`given` shows a constant as
written (shortest round-trip form of the float); :func:`derived` shows a computed value to 6
significant digits.
"""
from __future__ import annotations

import math
import re
from dataclasses import dataclass, field
from typing import Any, Optional

from . import line_of, severity_counts, visible

SEVERITY_HEAD = {"error": "Errors", "warning": "Warnings", "note": "Notes"}
#: what the number formatters (and unit labels) produce: a table cell that holds a number, nothing else
NUMERIC = re.compile(r"[-+0-9.eE]+( [A-Za-z0-9/^()]+( [A-Za-z0-9/^()]+)?)?|n/a|infinite|yes|no|-")


# --------------------------------------------------------------------------- nodes


@dataclass
class H:
    level: int
    text: str
    anchor: Optional[str] = None


@dataclass
class P:
    """A paragraph of spans: (style, text) with style "", "b" (bold), "code", "muted"."""

    spans: list[tuple[str, str]]
    cls: str = ""


@dataclass
class Table:
    head: list[str]
    rows: list[list[Any]]  # a cell is text, or (text, si_text) for a value with its SI conversion
    cls: str = ""
    caption: str = ""


@dataclass
class Bullets:
    items: list[list[tuple[str, str]]]


@dataclass
class Figure:
    svg: str
    caption: str


@dataclass
class Box:
    kind: str  # caution | skipped
    spans: list[tuple[str, str]]


@dataclass
class Section:
    anchor: str
    children: list[Any] = field(default_factory=list)
    cls: str = ""


def text(s: Any) -> tuple[str, str]:
    return ("", visible(s))


def para(*parts: Any, cls: str = "") -> P:
    return P([p if isinstance(p, tuple) else text(p) for p in parts], cls)


# --------------------------------------------------------------------------- numbers


def _number_or_text(value: Any, absent: str) -> tuple[Optional[float], str]:
    """(the float, "") for a number; (None, what to show) for anything else."""
    if value is None:
        return None, absent
    if isinstance(value, bool):
        return None, "yes" if value else "no"
    try:
        return float(value), ""
    except (TypeError, ValueError):
        return None, visible(value)


def given(value: Any) -> str:
    """A constant as written: the shortest form that reads back as the same float ('(blank)' when absent)."""
    f, shown = _number_or_text(value, "(blank)")
    if f is None:
        return shown
    if not math.isfinite(f):
        return str(f)
    s = repr(f)
    return s[:-2] if s.endswith(".0") else s


def derived(value: Any) -> str:
    """A computed value, 6 significant digits; 'n/a' when not defined (infinite or missing)."""
    f, shown = _number_or_text(value, "n/a")
    if f is None:
        return shown
    if math.isinf(f):
        return "infinite"
    if not math.isfinite(f):
        return "n/a"
    return f"{f:.6g}"


#: names longer than this are cut in headings and tables (the material's section shows the whole name once)
NAME_LIMIT = 64


def short(value: Any, limit: int = NAME_LIMIT) -> str:
    """A deck name for headings and table cells: visible, and cut with its length noted when very long."""
    v = visible(value)
    return v if len(v) <= limit else f"{v[:limit - 16]}... ({len(v)} characters)"


def where(path: Any, line: Any) -> str:
    p = visible(path) if path else "(no file)"
    n = line_of(line)
    return f"{p}:{n}" if n is not None else p


# --------------------------------------------------------------------------- suppressions


def suppression_of(f) -> Optional[dict]:
    """The inline suppression that silenced a finding, as {reason, path, line}, or None.

    Read from the finding's ``suppression`` attribute (object or mapping) or ``data["suppression"]``.
    """
    sup = getattr(f, "suppression", None)
    if sup is None and isinstance(getattr(f, "data", None), dict):
        sup = f.data.get("suppression")
    if not sup:
        return None
    if isinstance(sup, dict):
        get = sup.get
    else:
        def get(k, default=None):
            return getattr(sup, k, default)
    return {"reason": get("reason") or get("justification") or "", "path": get("path"),
            "line": get("line"), "rules": get("rules") or get("ids") or (), "scope": get("scope") or ""}


def split_suppressed(findings) -> tuple[list, list]:
    active, silenced = [], []
    for f in findings:
        (silenced if suppression_of(f) else active).append(f)
    return active, silenced


# --------------------------------------------------------------------------- verdict and summary


def verdict(fr) -> str:
    active, silenced = split_suppressed(fr.findings)
    c = severity_counts(active)
    parts = [f"{c['error']} error(s)", f"{c['warning']} warning(s)", f"{c['note']} note(s)"]
    if silenced:
        parts.append(f"{len(silenced)} suppressed")
    in_baseline = sum(1 for f in active if getattr(f, "baseline", False))
    if in_baseline:
        parts.append(f"{in_baseline} in the baseline (listed, not counted)")
    state = "incomplete: some input could not be checked" if fr.incomplete else "complete"
    return ", ".join(parts) + f"; check {state}"


def summary_section(result, anchors: list[tuple[str, str, list[tuple[str, str]]]]) -> Section:
    sec = Section("summary", [H(2, "Summary", "summary")])
    if result.files:
        rows = [[visible(fr.path), visible(fr.format or "unknown"), verdict(fr)] for fr in result.files]
        sec.children.append(Table(["Deck", "Format", "Verdict"], rows, cls="verdicts"))
    else:
        sec.children.append(para("No deck was checked."))
    if result.general:
        c = severity_counts(result.general)
        sec.children.append(para(f"Not tied to a deck: {c['error']} error(s), {c['warning']} warning(s), "
                                 f"{c['note']} note(s) (see the end of the report)."))
    items = []
    for anchor, title, subs in anchors:
        item = [("link:" + anchor, title)]
        if subs:
            item.append(("", ": "))
            for k, (a, t) in enumerate(subs):
                if k:
                    item.append(("", ", "))
                item.append(("link:" + a, t))
        items.append(item)
    sec.children += [H(3, "Contents"), Bullets(items)]
    return sec


# --------------------------------------------------------------------------- the model


def _evidence(key: Any, item: Any, keyed: bool) -> str:
    """One piece of unit evidence as text, whatever its shape (a quantity name, or a mapping of facts)."""
    if isinstance(item, dict):
        body = ", ".join(f"{visible(k)} {given(v) if isinstance(v, (int, float)) else visible(v)}"
                         for k, v in item.items() if not str(k).startswith("_"))
    elif isinstance(item, (list, tuple)):
        body = ", ".join(given(v) if isinstance(v, (int, float)) else visible(v) for v in item)
    else:
        body = given(item) if isinstance(item, (int, float)) and not isinstance(item, bool) else visible(item)
    return f"{visible(key)}: {body}" if keyed else body


def unit_confident(us: Any, floor: float) -> bool:
    """True when the unit system is declared, or inferred with a confidence at or above ``floor``."""
    if not isinstance(us, dict) or not us.get("name"):
        return False
    if us.get("declared"):
        return True
    try:
        return float(us.get("confidence")) >= floor
    except (TypeError, ValueError):
        return False


def _unit_paragraphs(us: Any, sure: bool = True) -> list:
    if not isinstance(us, dict) or not us:
        return [para("Unit system: not determined (no unit evidence in the deck).")]
    name = us.get("name")
    how = "declared" if us.get("declared") else "inferred"
    out = []
    if name and not sure:
        conf = us.get("confidence")
        out.append(P([text("Unit system: "), ("b", "not determined with confidence"),
                      text(f" (best guess {visible(name)}, confidence "
                           f"{float(conf) if isinstance(conf, (int, float)) else 0.0:.2f}). The SI values in this "
                           "report assume this guess and may be off by powers of ten; declare the system "
                           "(--units) to be sure.")]))
    elif name:
        conf = us.get("confidence")
        shown = isinstance(conf, (int, float)) and how == "inferred"
        line = [("b", visible(name)), text(f" ({how}" + (f", confidence {float(conf):.2f}" if shown else "") + ")")]
        out.append(P([text("Unit system: ")] + line))
    else:
        out.append(para("Unit system: not determined (too little evidence for a confident choice)."))
    facts = []
    if us.get("inferred") and (us.get("declared") or us.get("inferred") != name):
        facts.append(f"inferred from the values: {visible(us['inferred'])} "
                     f"(confidence {derived(us.get('inferred_confidence'))})")
    if us.get("runner_up"):
        facts.append(f"next best system: {visible(us['runner_up'])} (score margin {derived(us.get('margin'))})")
    if us.get("equivalent"):
        facts.append("systems that read these values alike: " + ", ".join(visible(x) for x in us["equivalent"]))
    if us.get("evidence"):
        ev = us["evidence"]
        items = ev.items() if isinstance(ev, dict) else enumerate(ev if isinstance(ev, (list, tuple)) else [ev])
        if isinstance(ev, (list, tuple)) and all(isinstance(x, str) for x in ev):
            facts.append("evidence: the values of " + ", ".join(visible(x) for x in ev))
        else:
            facts.append("evidence: " + "; ".join(_evidence(k, x, isinstance(ev, dict)) for k, x in items))
    if us.get("temperatures"):
        facts.append("temperature evidence: " + ", ".join(visible(x) for x in us["temperatures"]))
    if us.get("absolute_zero") is not None:
        facts.append(f"absolute zero given as {given(us['absolute_zero'])}")
    if us.get("declared_unknown"):
        facts.append(f"the declared name {visible(us['declared_unknown'])} is unknown")
    if facts:
        out.append(Bullets([[text(f)] for f in facts]))
    return out


def model_section(fr, anchor: str, sure: bool = True) -> Section:
    d = fr.details or {}
    summ = fr.summary if isinstance(fr.summary, dict) else {}
    sec = Section(anchor, [H(3, "The model", anchor)])
    sec.children.append(para(f"Format {visible(fr.format or 'unknown')}, dialect assumed "
                             f"{visible(fr.dialect or 'unknown')}; {summ.get('nodes', 0)} node(s), "
                             f"{summ.get('elements', 0)} element(s), {summ.get('sections', 0)} section(s), "
                             f"{summ.get('materials', 0)} material(s)."))
    files = d.get("files") or [{"path": p, "role": "deck" if i == 0 else "include"}
                               for i, p in enumerate(summ.get("files_read") or ())]
    if files:
        rows = [[visible(f.get("path")), visible(f.get("role")), "" if f.get("bytes") is None else str(f["bytes"]),
                 visible(f.get("sha256") or "not computed")] for f in files]
        sec.children += [H(4, "Files read"), Table(["File", "Role", "Bytes", "SHA-256"], rows, cls="files")]
    if d.get("includes"):
        rows = [[visible(i.get("written")), visible(i.get("resolved") or "(not resolved)"),
                 where(i.get("path"), i.get("line")), visible(i.get("status"))] for i in d["includes"]]
        sec.children += [H(4, "Includes"), Table(["As written", "Resolved to", "At", "Status"], rows)]
    types = d.get("element_types")
    if types:
        rows = [[visible(t.get("type")), str(t.get("count")), visible(t.get("family") or "not in the catalogue"),
                 visible(t.get("order") or ""), visible(t.get("integration") or ""),
                 visible(t.get("locking") or "unknown")] for t in types]
        sec.children += [H(4, "Elements"), Table(["Type", "Count", "Family", "Order", "Integration",
                                                  "Volumetric locking"], rows)]
    elif isinstance(summ.get("element_types"), dict) and summ["element_types"]:
        rows = [[visible(k), str(v)] for k, v in summ["element_types"].items()]
        sec.children += [H(4, "Elements"), Table(["Type", "Count"], rows)]
    steps = d.get("steps")
    if steps:
        rows = []
        for s in steps:
            procs = ", ".join(f"{visible(p.get('kind'))} ({visible(p.get('card'))})" for p in s.get("procedures") or ())
            rows.append([visible(s.get("name")), where(s.get("path"), s.get("line")), procs or "none",
                         "yes" if s.get("nlgeom") else "no"])
        sec.children += [H(4, "Analysis steps"), Table(["Step", "At", "Procedures", "Geometric nonlinearity"], rows)]
    elif summ.get("steps"):
        sec.children.append(para("Analysis steps: " + ", ".join(visible(s) for s in summ["steps"])))
    else:
        sec.children.append(para("Analysis steps: none found."))
    sec.children += [H(4, "Unit system")] + _unit_paragraphs(fr.unit_system, sure)
    return sec


def usage_section(fr, anchor: str) -> Section:
    sec = Section(anchor, [H(3, "Usage map", anchor)])
    usage = (fr.details or {}).get("usage")
    if usage is None:
        rows = []
        for m in fr.materials or ():
            used = m.get("used_by") if isinstance(m, dict) else None
            rows.append([short(m.get("name")), ", ".join(f"{visible(k)} x {v}" for k, v in (used or {}).items())
                         or "no elements"])
        sec.children.append(Table(["Material", "Element types and counts"], rows))
        return sec
    rows: list[list[str]] = []
    seen: dict[tuple, list] = {}
    for u in usage:
        for s in u.get("sections") or ():
            counts = ", ".join(f"{visible(k)} x {v}" for k, v in (s.get("counts") or {}).items()) or "no elements"
            row = [short(u.get("material")), f"{visible(s.get('card'))} at {where(s.get('path'), s.get('line'))}",
                   visible(s.get("elset")), visible(s.get("role")), counts]
            key = tuple(row)
            if key in seen:  # the same material in several layers of one section: one row, counted
                seen[key][1] += 1
                seen[key][0][3] = f"{row[3]} ({seen[key][1]} times)"
                continue
            seen[key] = [row, 1]
            rows.append(row)
    if rows:
        sec.children.append(Table(["Material", "Section", "Element set", "Role", "Element types and counts"], rows))
    unused = (fr.details or {}).get("unused_materials") or []
    sec.children.append(para("Materials no section uses: " + (", ".join(short(n) for n in unused)
                                                              if unused else "none.")))
    return sec
