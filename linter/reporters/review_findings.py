"""The findings part of the reviewer's audit: findings by severity and material with the rule's rationale
and a remedy, the findings an inline suppression silenced (with the reason), and what was not checked."""
from __future__ import annotations

from collections import defaultdict

from . import sorted_findings, visible
from .review_doc import (SEVERITY_HEAD, Bullets, H, P, Section, Table, para, short, split_suppressed,
                         suppression_of, text, where)


# --------------------------------------------------------------------------- rule texts


def rule_texts() -> dict[str, tuple[str, str]]:
    """rule id -> (rationale, remedy); remedies are data (``linter/data/remedies.yaml``)."""
    import os

    from .. import registry
    from ..safe_yaml import load_package_yaml

    try:
        rules = registry.load()
    except Exception:  # the audit still renders without the rule texts
        rules = {}
    try:
        here = os.path.join(os.path.dirname(os.path.dirname(__file__)), "data", "remedies.yaml")
        with open(here, encoding="utf-8") as fh:
            remedies = load_package_yaml(fh.read()) or {}
    except Exception:
        remedies = {}
    out = {}
    for rid, r in rules.items():
        out[rid] = (r.rationale or "", str(remedies.get(rid) or remedies.get(r.family if hasattr(r, "family")
                                                                            else rid.split("/")[0]) or ""))
    return out


# --------------------------------------------------------------------------- findings


def findings_section(findings, anchor: str, title: str, texts: dict) -> Section:
    sec = Section(anchor, [H(3, title, anchor)])
    active, silenced = split_suppressed(sorted_findings(findings))
    if not active:
        sec.children.append(para("No rule reported anything."))
    for sev in ("error", "warning", "note", None):
        of_sev = [f for f in active if (f.severity == sev if sev else f.severity not in SEVERITY_HEAD)]
        if not of_sev:
            continue
        sec.children.append(H(4, f"{SEVERITY_HEAD.get(sev, 'Other')} ({len(of_sev)})"))
        by_mat: dict[str, list] = defaultdict(list)
        for f in of_sev:
            by_mat["" if f.material is None else str(f.material)].append(f)
        for mat in sorted(by_mat, key=lambda k: (k == "", k)):
            sec.children.append(para(("b", f"Material {short(mat)}" if mat else "Not tied to one material")))
            for f in by_mat[mat]:
                rationale, remedy = texts.get(f.rule, ("", ""))
                tag = " (in the baseline)" if getattr(f, "baseline", False) else ""
                sec.children.append(P([("code", visible(f.rule)), text(f" at {where(f.path, f.line)}{tag}: "),
                                       text(f.message)], cls=f"finding {sev or 'other'}"))
                extra = []
                if rationale:
                    extra.append([("b", "Why:"), text(" " + rationale)])
                if remedy:
                    extra.append([("b", "Remedy:"), text(" " + remedy)])
                if extra:
                    sec.children.append(Bullets(extra))
    sec.children.append(H(4, f"Suppressed findings ({len(silenced)})"))
    if not silenced:
        sec.children.append(para("No finding was silenced by an inline suppression."))
    else:
        rows = []
        for f in silenced:
            s = suppression_of(f) or {}
            scope = s.get("scope")
            scope = " ".join(visible(x) for x in scope) if isinstance(scope, (list, tuple)) else visible(scope)
            at = where(s.get("path"), s.get("line")) if s.get("path") else ""
            rows.append([visible(f.severity), visible(f.rule), where(f.path, f.line), short(f.material or ""),
                         visible(f.message), visible(s.get("reason") or "(no reason given)"),
                         f"{at} ({scope})" if scope and at else at or scope])
        sec.children.append(Table(["Severity", "Rule", "At", "Material", "Finding", "Reason given",
                                   "Accepted by the comment at"], rows, cls="suppressed"))
    return sec


def unchecked_section(fr, anchor: str) -> Section:
    sec = Section(anchor, [H(3, "Not checked", anchor)])
    sec.children.append(para(f"Dialect assumed: {visible(fr.dialect or 'unknown')} (format "
                             f"{visible(fr.format or 'unknown')}); element types and option defaults are read "
                             "as this solver reads them."))
    groups: dict[tuple, list] = defaultdict(list)
    for u in fr.unchecked or ():
        if isinstance(u, dict):
            groups[(str(u.get("what", "")), str(u.get("reason") or ""))].append(u)
    if not groups:
        sec.children.append(para("Nothing was read and left unchecked."))
        return sec
    rows = []
    for (what, reason), items in sorted(groups.items()):
        places = ", ".join(where(u.get("path"), u.get("line")) for u in items[:5])
        more = f" and {len(items) - 5} more" if len(items) > 5 else ""
        rows.append([visible(what), visible(reason), str(len(items)), places + more])
    sec.children.append(Table(["What", "Why not checked", "Count", "Where"], rows))
    return sec
