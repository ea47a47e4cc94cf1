"""A Markdown review report, for an engineer reviewing a model someone else built.

Sections: the caution, scope (decks, formats, dialects, unit systems, files read), the
materials and where they are used, findings by severity then material, what was not
checked, and the caution again. Every deck string is escaped (:func:`md`): it renders
literally and cannot open a heading, a link, a table cell or an HTML tag.
"""
from __future__ import annotations

import re
from collections import defaultdict
from typing import Any

from . import (as_options, key_numbers, run_exit_code, severity_counts, sorted_findings, visible,
               where)

#: characters that act anywhere in a line (emphasis, code, links, headings, table cells, strikethrough)
_PUNCT = re.compile(r"([\\`*_\[\]#|~])")
#: what acts only at the start of a line or list item (bullets, numbered items, setext underlines)
_LEADING = re.compile(r"^([-+=]|\d+[.)])")
_HEAD = {"error": "Errors", "warning": "Warnings", "note": "Notes"}


def md(value: Any) -> str:
    """Deck text as literal Markdown: one line, HTML specials as entities, markup escaped."""
    s = visible(value)
    s = s.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
    s = _PUNCT.sub(r"\\\1", s)
    m = _LEADING.match(s)
    if m:
        s = s[:m.end() - 1] + "\\" + s[m.end() - 1:]
    return s


def _unit_text(us: Any) -> str:
    if not isinstance(us, dict):
        return "not determined"
    name = md(us.get("name") or us.get("system") or "unknown")
    conf = us.get("confidence")
    how = us.get("source") or us.get("how")
    extra = []
    if how:
        extra.append(md(how))
    if isinstance(conf, (int, float)) and not isinstance(conf, bool):
        extra.append(f"confidence {conf:.2f}")
    return name + (f" ({', '.join(extra)})" if extra else "")


def _usage(mat: dict) -> str:
    for key in ("used_by", "usage", "elements"):
        val = mat.get(key)
        if isinstance(val, dict) and val:
            return ", ".join(f"{md(k)} × {md(v)}" for k, v in val.items())
        if isinstance(val, (list, tuple)) and val:
            return ", ".join(md(v) for v in val)
        if isinstance(val, str) and val:
            return md(val)
    return "no elements"


def _scope(out: list[str], result) -> None:
    out += ["## What was read", ""]
    if not result.files:
        out += ["No deck was checked.", ""]
        return
    out += ["| Deck | Format | Dialect | Unit system | Materials | Elements by type |",
            "| --- | --- | --- | --- | --- | --- |"]
    for fr in result.files:
        summ = fr.summary if isinstance(fr.summary, dict) else {}
        types = summ.get("element_types")
        types_text = ", ".join(f"{md(k)} × {md(v)}" for k, v in types.items()) if isinstance(types, dict) and types \
            else "none read"
        out.append(f"| {md(fr.path)} | {md(fr.format or 'unknown')} | {md(fr.dialect or 'unknown')} | "
                   f"{_unit_text(fr.unit_system)} | {len(fr.materials or ())} | {types_text} |")
    out.append("")
    extra = []
    for fr in result.files:
        summ = fr.summary if isinstance(fr.summary, dict) else {}
        for f in summ.get("files_read") or ():
            if f != fr.path and f not in extra:
                extra.append(f)
    if extra:
        out += ["Included files read: " + ", ".join(md(f) for f in extra), ""]


def _materials(out: list[str], result) -> None:
    out += ["## Materials", ""]
    rows = [(fr, m) for fr in result.files for m in (fr.materials or ()) if isinstance(m, dict)]
    if not rows:
        out += ["No material definitions were found.", ""]
        return
    out += ["| Material | Deck | Defined at | Properties | Key derived values | Used by |",
            "| --- | --- | --- | --- | --- | --- |"]
    for fr, m in rows:
        props = ", ".join(md(p) for p in m.get("properties") or ()) or "none"
        nums = ", ".join(f"{md(k)} = {v}" for k, v in key_numbers(m.get("derived") or {})) or "none"
        out.append(f"| {md(m.get('name'))} | {md(fr.path)} | {md(where(m.get('path'), m.get('line')))} | "
                   f"{props} | {nums} | {_usage(m)} |")
    out.append("")


def _findings(out: list[str], result) -> None:
    findings = sorted_findings(result.general) + [f for fr in result.files for f in sorted_findings(fr.findings)]
    out += ["## Findings", ""]
    if not findings:
        out += ["No rule reported anything.", ""]
        return
    for sev in ("error", "warning", "note"):
        of_sev = [f for f in findings if f.severity == sev]
        if not of_sev:
            continue
        out += [f"### {_HEAD[sev]} ({len(of_sev)})", ""]
        by_mat: dict[str, list] = defaultdict(list)
        for f in of_sev:
            by_mat["" if f.material is None else str(f.material)].append(f)
        for mat in sorted(by_mat, key=lambda k: (k == "", k)):
            title = f"Material {md(mat)}" if mat else "Not tied to one material"
            out += [f"**{title}**", ""]
            for f in by_mat[mat]:
                out.append(f"- {md(where(f.path, f.line))}, {md(f.rule)}: {md(f.message)}")
            out.append("")
    others = [f for f in findings if f.severity not in _HEAD]
    if others:
        out += ["### Other", ""]
        out += [f"- {md(where(f.path, f.line))}, {md(f.rule)} ({md(f.severity)}): {md(f.message)}"
                for f in others]
        out.append("")


def _unchecked(out: list[str], result) -> None:
    out += ["## Not checked", ""]
    groups: dict[tuple, list] = defaultdict(list)
    for fr in result.files:
        for u in fr.unchecked or ():
            if isinstance(u, dict):
                groups[(str(u.get("what", "")), str(u.get("reason") or ""))].append(u)
    if not groups:
        out += ["The decks hold nothing that was read and left unchecked.", ""]
        return
    for (what, reason), items in sorted(groups.items()):
        places = ", ".join(md(where(u.get("path"), u.get("line"))) for u in items[:5])
        more = f" and {len(items) - 5} more" if len(items) > 5 else ""
        why = f" ({md(reason)})" if reason else ""
        out.append(f"- {md(what)}{why}: {len(items)} at {places}{more}")
    out.append("")


def report(result, stream, options=None) -> None:
    from .. import CAUTION, __version__

    opts = as_options(options)
    counts = severity_counts(result.findings)
    caution = f"> **Caution.** {md(CAUTION)}"
    out = [f"# Material review: {len(result.files)} deck(s)", "", caution, ""]
    _scope(out, result)
    _materials(out, result)
    _findings(out, result)
    _unchecked(out, result)
    state = "incomplete: some input could not be checked" if result.incomplete else "complete"
    out += ["## Outcome", "",
            f"{counts['error']} error(s), {counts['warning']} warning(s), {counts['note']} note(s). "
            f"The check is {state} (exit code {run_exit_code(result, opts)}, deckwarden {__version__}).", "",
            caution, ""]
    stream.write("\n".join(out))
