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

The scan is generic: it reads the bytes of every file of a deck (top file and includes) in blocks,
looks for the word ``deckwarden`` and keeps the lines where it follows a comment marker. Card starts
come from the neutral model (every item carries a file and line), so a new format needs no code here.
"""
from __future__ import annotations

import re
from dataclasses import dataclass, field
from typing import Any, Iterable, Optional

BLOCK = 1 << 20
MARKERS = (b"deckwarden", b"DECKWARDEN", b"Deckwarden")
_ONE_BYTE = (b"w", b"W")          # every marker holds one of these: a block without them has no marker
assert all(any(c in m for c in _ONE_BYTE) for m in MARKERS)
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


def has_marker(path: str, prefixes: tuple[str, ...]) -> bool:
    """Does a comment of the file (a line part from a comment marker on) hold "deckwarden" and "accept"?

    One pass of block reads into one reused buffer; each comment marker is found by its first byte
    (a one-byte search runs at memory speed) and only the lines that hold a marker are looked at, so the
    usual case, a deck without suppressions, costs little more than reading it."""
    firsts = sorted({p.encode()[:1] for p in prefixes if p})
    full = [p.encode() for p in prefixes if p]
    buf = bytearray(BLOCK)
    view = memoryview(buf)
    carry = 0
    try:
        with open(path, "rb", buffering=0) as fh:
            while True:
                if carry >= len(buf):                      # keep room to read into
                    view.release()
                    buf.extend(bytes(len(buf)))
                    view = memoryview(buf)
                n = fh.readinto(view[carry:])
                end = carry + n
                last = end if not n else buf.rfind(b"\n", 0, end) + 1
                if n and last == 0:                    # a line longer than the buffer: grow it
                    view.release()
                    buf.extend(bytes(len(buf)))
                    view = memoryview(buf)
                    carry = end
                    continue
                for first in firsts:
                    pos = buf.find(first, 0, last)
                    while pos >= 0:
                        stop = buf.find(b"\n", pos, last)
                        stop = last if stop < 0 else stop
                        if any(buf.startswith(p, pos) for p in full):
                            low = bytes(buf[pos:stop]).lower()
                            if b"deckwarden" in low and b"accept" in low:
                                return True
                        pos = buf.find(first, stop, last)
                if not n:
                    return False
                rest = end - last
                buf[:rest] = buf[last:end]
                carry = rest
    except OSError:
        return False


def scan_file(path: str, prefixes: tuple[str, ...]) -> list[Suppression]:
    """The suppression comments of one file, each with the line of the next code line (``target``).

    Reads the file in blocks of 1 MiB; memory does not grow with the file. A file without the word
    deckwarden is only searched (:func:`has_marker`), not split into lines.
    """
    if not has_marker(path, prefixes):
        return []
    bprefixes = tuple(p.encode() for p in prefixes)
    found: list[Suppression] = []
    pending: list[Suppression] = []       # waiting for their next code line
    line_no = 0                           # lines before the current block
    rest = b""
    try:
        fh = open(path, "rb")
    except OSError:
        return found
    with fh:
        while True:
            chunk = fh.read(BLOCK)
            data = rest + chunk
            if not chunk:
                end = len(data)
            else:
                end = data.rfind(b"\n") + 1
                if end == 0:
                    rest = data
                    continue
            block, rest = data[:end], data[end:]
            pos = 0
            while pending and pos < len(block):       # the next code line of a comment in an earlier block
                nl = block.find(b"\n", pos)
                nl = len(block) if nl < 0 else nl
                if _is_code(block[pos:nl], bprefixes):
                    n = line_no + block.count(b"\n", 0, pos) + 1
                    for s in pending:
                        s.target = n
                    pending = []
                pos = nl + 1
            maybe = any(c in block for c in _ONE_BYTE)        # one-byte searches rule out most blocks
            hits = sorted({i for m in MARKERS for i in _find_all(block, m)}) if maybe else []
            last_line_start = -1
            for at in hits:
                start = block.rfind(b"\n", 0, at) + 1
                if start == last_line_start:
                    continue
                last_line_start = start
                stop = block.find(b"\n", at)
                stop = len(block) if stop < 0 else stop
                line = block[start:stop].decode("utf-8", "replace")
                text, trailing = _comment_text(line, prefixes)
                if text is None:
                    continue
                m = _HEAD.match(text)
                if not m:
                    continue
                n = line_no + block.count(b"\n", 0, start) + 1
                sup = parse_directive(m.group("rest"), path, n)
                found.append(sup)
                if trailing:
                    sup.target = n
                    continue
                pos = stop + 1
                while pos < len(block):
                    nl = block.find(b"\n", pos)
                    nl = len(block) if nl < 0 else nl
                    if _is_code(block[pos:nl], bprefixes):
                        sup.target = line_no + block.count(b"\n", 0, pos) + 1
                        break
                    pos = nl + 1
                else:
                    pending.append(sup)
            line_no += block.count(b"\n")
            if not chunk:
                break
    return found


def _find_all(data: bytes, word: bytes) -> Iterable[int]:
    i = data.find(word)
    while i >= 0:
        yield i
        i = data.find(word, i + 1)


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
    if not any(r == f.rule or r == f.rule.split("/", 1)[0] for r in s.rules):
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
    for path in dict.fromkeys(model.extras.get("commented_files") or model.files or [model.path]):
        sups.extend(scan_file(path, prefixes))
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
    for f in findings:
        if f.suppression is not None or any(f.rule == n or f.rule.startswith(n + "/") for n in NEVER):
            continue
        if registry.makes_incomplete([f]):
            continue
        for s in live:
            if _covers(s, f):
                f.suppression = s.describe()
                s.used += 1
                break
    run_level = {r.id for r in rules.values() if r.run_level}
    for s in sups:
        if deferred is not None and s.rules and any(_names(r, rid) for r in s.rules for rid in run_level):
            deferred.append(s)
            continue
        if s.rules and not s.used:
            extra.append(_unused(s))
    return extra


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
        for f in fr.findings:
            if f.suppression is not None:
                continue
            for s in sups:
                if _covers(s, f):
                    f.suppression = s.describe()
                    s.used += 1
                    break
        for s in sups:
            if not s.used and config.rule_enabled(UNUSED_RULE):
                added.append(_unused(s))
        fr.deferred = []
        if added:
            fr.findings.extend(added)
