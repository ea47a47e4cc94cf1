"""Inline suppressions: a comment in a deck that accepts findings the team has judged.

Syntax (after the format's own comment marker, ``COMMENT_PREFIXES`` of its parser package)::

    deckwarden accept RULES [for next | for material NAME | for file] [because REASON]

``RULES`` are rule ids or families, separated by commas or blanks. The scope:

* ``for next`` (the default): the next card, the first line after the comment that is neither blank
  nor a comment (a trailing comment: the card on its own line), up to the next card the model
  records; when that card opens a material, the whole material;
* ``for material NAME``: every finding on that material (name compared as the solver does), in any
  file of the deck;
* ``for file``: every finding located in the file that holds the comment.

The scan is generic: it reads the text of every file of a deck (top file and includes), the one the
parser kept (``DeckModel.texts``) or else the file, looks for the word ``deckwarden`` and keeps the
lines where it follows a comment marker. Card starts
come from the neutral model (every item carries a file and line), so a new format needs no code here.
"""
from __future__ import annotations

import re
from dataclasses import dataclass, field
from typing import Any, Optional

MARKERS = (b"deckwarden", b"DECKWARDEN", b"Deckwarden")
MARK_BYTES = (b"w", b"W")         # every marker holds one of these: text without them has no marker
assert all(any(c in m for c in MARK_BYTES) for m in MARKERS)
_HEAD = re.compile(r"^\s*deckwarden\s+accept\b(?P<rest>.*)$", re.I)
_TAIL = re.compile(r"^(?P<ids>.*?)(?:\s+for\s+(?P<scope>.*?))?(?:\s+because\b\s*(?P<reason>.*))?\s*$", re.I | re.S)
#: findings no comment can accept
NEVER = ("internal", "parse/bad-suppression", "parse/unused-suppression")
BAD_RULE, UNUSED_RULE = "parse/bad-suppression", "parse/unused-suppression"


@dataclass
class Suppression:
    path: str
    line: int
    rules: list[str]
    scope: str                      # next | material | file
    material: Optional[str] = None
    reason: Optional[str] = None
    #: lines [first, last] of the next card ("next" scope), filled from the model
    target: Optional[int] = None
    extent: tuple[int, int] = (0, 0)
    material_key: Optional[str] = None
    used: int = 0
    problems: list[str] = field(default_factory=list)

    def describe(self) -> dict[str, Any]:
        scope = f"material {self.material}" if self.scope == "material" else self.scope
        return {"rules": list(self.rules), "scope": scope, "reason": self.reason, "path": self.path,
                "line": self.line}


# --------------------------------------------------------------------------- scanning


def _comment_text(line: str, prefixes: tuple[str, ...]) -> tuple[Optional[str], bool]:
    """(text after the comment marker, trailing?) of a line with a comment before the word deckwarden."""
    low = line.lower()
    at = low.find("deckwarden")
    best = None
    for p in prefixes:
        i = line.find(p)
        if 0 <= i < at and (best is None or i < best[0]):
            best = (i, p)
    if best is None:
        return None, False
    i, p = best
    text = line[i + len(p):]
    if p == "<!--":
        text = text.split("-->", 1)[0]
    return text, bool(line[:i].strip())


def _is_code(line: bytes, prefixes: tuple[bytes, ...]) -> bool:
    s = line.strip()
    return bool(s) and not any(s.startswith(p) for p in prefixes)


def scan_file(path: str, prefixes: tuple[str, ...]) -> list[Suppression]:
    """The suppression comments of one file (read through :func:`linter.parsers.buffers.open_text`: a large
    plain file is mapped, not copied), for formats whose parser keeps no text (``DeckModel.texts``)."""
    from .parsers import buffers

    try:
        data = buffers.open_text(path, 1 << 62).data
    except buffers.SourceError:
        return []
    return scan_text(data, path, prefixes)


def scan_text(data, path: str, prefixes: tuple[str, ...], marks: Optional[list[int]] = None,
              anchors: Optional[list[tuple[int, int]]] = None) -> list[Suppression]:
    """The suppression comments of a file's text (bytes or a mapped file), each with the line of the next
    code line (``target``).

    Only the places of a marker word are looked at: they are found by one-byte searches for the ``w`` of
    ``deckwarden`` (a search at memory speed; numbers never hold it), so the usual deck, without
    suppressions, costs one pass over its text and is never split into lines. ``marks``: the offsets of
    those bytes when the parser found them already (``extras["mark_bytes"]``): no pass at all; ``anchors``:
    (line, offset) of lines the parser recorded (``extras["line_anchors"]``), so a comment's line number is
    counted from the nearest one before it."""
    from bisect import bisect_right
    from .parsers import buffers

    bprefixes = tuple(p.encode() for p in prefixes)
    found: list[Suppression] = []
    at_line = (0, 1)                      # (offset of a line start, its line): line numbers counted onwards
    anchors = sorted(anchors or (), key=lambda a: a[1])
    anchor_at = [a[1] for a in anchors]
    last_start = -1
    for at in _marker_places(data, buffers, marks):
        start = data.rfind(b"\n", 0, at) + 1
        if start == last_start:
            continue
        last_start = start
        stop = data.find(b"\n", at)
        stop = len(data) if stop < 0 else stop
        line = bytes(data[start:stop]).decode("utf-8", "replace")
        text, trailing = _comment_text(line, prefixes)
        if text is None:
            continue
        m = _HEAD.match(text)
        if not m:
            continue
        if anchors:
            k = bisect_right(anchor_at, start) - 1
            if k >= 0 and anchor_at[k] > at_line[0]:
                at_line = (anchor_at[k], anchors[k][0])
        n = buffers.line_number(data, start, at_line)
        at_line = (start, n)
        sup = parse_directive(m.group("rest"), path, n)
        found.append(sup)
        if trailing:
            sup.target = n
            continue
        pos, k = stop + 1, n + 1
        while pos < len(data):
            nl = data.find(b"\n", pos)
            nl = len(data) if nl < 0 else nl
            if _is_code(bytes(data[pos:nl]), bprefixes):
                sup.target = k
                break
            pos, k = nl + 1, k + 1
    return found


def _marker_places(data, buffers, marks: Optional[list[int]] = None) -> list[int]:
    """Where one of ``MARKERS`` starts in ``data``, in order (``marks``: where the bytes of ``MARK_BYTES`` are)."""
    out = set()
    spellings = [(m, m.find(one)) for one in MARK_BYTES for m in MARKERS if one in m]
    for i in (buffers.find_all(data, *MARK_BYTES) if marks is None else marks):
        for m, k in spellings:
            if i >= k and m[k] == data[i] and data[i - k:i - k + len(m)] == m:
                out.add(i - k)
    return sorted(out)


def parse_directive(rest: str, path: str, line: int) -> Suppression:
    """The part after ``deckwarden accept``; problems are kept on the suppression (reported as warnings)."""
    m = _TAIL.match(rest)
    ids_text, scope_text, reason = m.group("ids"), m.group("scope"), m.group("reason")
    rules = [t for t in re.split(r"[\s,]+", ids_text.strip()) if t]
    sup = Suppression(path=path, line=line, rules=rules, scope="next",
                      reason=(reason or "").strip() or None)
    if not rules:
        sup.problems.append("names no rule id or family")
    if scope_text is not None:
        words = scope_text.strip().split(None, 1)
        kind = words[0].lower() if words else ""
        if kind == "next" and len(words) == 1:
            sup.scope = "next"
        elif kind == "file" and len(words) == 1:
            sup.scope = "file"
        elif kind == "material" and len(words) == 2:
            sup.scope, sup.material = "material", words[1].strip().strip("'\"")
        else:
            sup.problems.append(f"scope 'for {scope_text.strip()}' is not one of: for next, for file, "
                                "for material NAME")
    return sup


# --------------------------------------------------------------------------- applying


def card_starts(model) -> dict[str, list[int]]:
    """file -> sorted lines where the model records an item (material, property block, section, ...)."""
    out: dict[str, set[int]] = {}

    def add(loc) -> None:
        if loc is not None and getattr(loc, "line", None):
            out.setdefault(loc.path, set()).add(int(loc.line))

    for m in list(model.materials.values()) + list(model.duplicate_materials):
        add(m.loc)
        for b in m.blocks:
            add(b.loc)
    for seq in (model.sections, model.element_blocks, model.orientations.values(), model.includes,
                model.mass_sources, model.initial_temperatures):
        for item in seq:
            add(item.loc)
    for es in model.element_sets.values():
        for loc in es.defined_at or (es.loc,):
            add(loc)
    for step in model.steps:
        add(step.loc)
        for p in step.procedures:
            add(p.loc)
        for ld in step.loads:
            add(ld.loc)
    return {p: sorted(v) for p, v in out.items()}


def _resolve(sups: list[Suppression], model) -> None:
    from bisect import bisect_right

    from .model import norm_key

    starts = card_starts(model)
    mat_at = {}
    for m in list(model.materials.values()) + list(model.duplicate_materials):
        mat_at[(m.loc.path, m.loc.line)] = m.key
    for s in sups:
        if s.scope == "material":
            s.material_key = norm_key(s.material or "")
        elif s.scope == "next" and s.target is not None:
            lines = starts.get(s.path, [])
            i = bisect_right(lines, s.target)
            s.extent = (s.target, lines[i] - 1 if i < len(lines) else 1 << 62)
            s.material_key = mat_at.get((s.path, s.target))


def _covers(s: Suppression, f) -> bool:
    if not any(_names(r, f.rule) for r in s.rules):
        return False
    if s.scope == "file":
        return f.path == s.path
    if s.scope == "material":
        return f.material is not None and _key(f.material) == s.material_key
    if s.material_key is not None and f.material is not None and _key(f.material) == s.material_key:
        return True
    line = f.line or 0
    return f.path == s.path and s.extent[0] <= line <= s.extent[1]


def _key(name: str) -> str:
    from .model import norm_key

    return norm_key(str(name))


def apply(model, findings: list, prefixes: tuple[str, ...], deferred: Optional[list] = None) -> list:
    """Mark the findings accepted by comments (``Finding.suppression``); return the findings about the
    comments themselves (unknown rule ids, bad syntax: warnings; comments that accept nothing: notes).

    With a ``deferred`` list, the comments that name a run-level rule (one reported after every deck was
    checked, ``Rule.run_level``) or its family are appended to it, and their "accepts nothing" note waits
    for :func:`settle_run_level`."""
    from . import registry
    from .configfile import closest
    from .findings import Finding

    if not prefixes:
        return []
    sups: list[Suppression] = []
    # a format whose files include data without comments (the meshes of the material-file route) lists
    # the files that carry its comments in extras["commented_files"]
    texts = getattr(model, "texts", None) or {}
    marks = model.extras.get("mark_bytes") or {}
    anchors = model.extras.get("line_anchors") or {}
    for path in dict.fromkeys(model.extras.get("commented_files") or model.files or [model.path]):
        text = texts.get(path)           # the text the parser read: no second read of the file
        sups.extend(scan_file(path, prefixes) if text is None else
                    scan_text(text, path, prefixes, marks.get(path), anchors.get(path)))
    if not sups:
        return []
    _resolve(sups, model)
    rules = registry.load()
    known = set(rules) | {r.split("/", 1)[0] for r in rules} | set(registry.FAMILIES)
    extra: list = []
    for s in sups:
        good = []
        for r in s.rules:
            if r in known and not any(r == n or r.startswith(n + "/") for n in NEVER):
                good.append(r)
            elif r in known:
                s.problems.append(f"{r} cannot be accepted by a comment")
            else:
                s.problems.append(f"unknown rule or family {r!r}{closest(r, known)}")
        s.rules = good
        for text in s.problems:
            extra.append(Finding(rule=BAD_RULE, severity="warning", path=s.path, line=s.line,
                                 message=f"suppression comment: {text}",
                                 data={"rules": list(s.rules), "problem": text}))
    live = [s for s in sups if s.rules and (s.scope != "next" or s.target is not None)]
    _mark([f for f in findings if not any(f.rule == n or f.rule.startswith(n + "/") for n in NEVER)
           and not registry.makes_incomplete([f])], live)
    run_level = {r.id for r in rules.values() if r.run_level}
    for s in sups:
        if deferred is not None and s.rules and any(_names(r, rid) for r in s.rules for rid in run_level):
            deferred.append(s)
            continue
        if s.rules and not s.used:
            extra.append(_unused(s))
    return extra


def _mark(findings: list, sups: list[Suppression]) -> None:
    """Give each finding not yet accepted the first comment that covers it, and count the comment's use."""
    for f in findings:
        if f.suppression is not None:
            continue
        for s in sups:
            if _covers(s, f):
                f.suppression = s.describe()
                s.used += 1
                break


def _names(entry: str, rule_id: str) -> bool:
    """Whether a suppression's entry (a rule id or a family) names ``rule_id``."""
    return entry == rule_id or entry == rule_id.split("/", 1)[0]


def _unused(s: Suppression):
    from .findings import Finding

    where = {"next": "the next card", "file": "this file"}.get(s.scope, f"material {s.material}")
    return Finding(rule=UNUSED_RULE, severity="note", path=s.path, line=s.line,
                   message=f"suppression of {', '.join(s.rules)} for {where} accepts no finding; "
                           "remove it if the problem is gone",
                   data={"rules": list(s.rules), "scope": s.describe()["scope"]})


def settle_run_level(result, config) -> None:
    """After the run-level stages: mark their findings accepted by the decks' deferred comments
    (``FileReport.deferred``) and add the "accepts nothing" note for each comment that accepted nothing."""
    for fr in result.files:
        sups = getattr(fr, "deferred", None) or []
        if not sups:
            continue
        added = []
        _mark(fr.findings, sups)
        for s in sups:
            if not s.used and config.rule_enabled(UNUSED_RULE):
                added.append(_unused(s))
        fr.deferred = []
        if added:
            fr.findings.extend(added)
