"""Parser of Nastran-style bulk-data decks (MYSTRAN dialect by default) into the neutral model.

Streaming design: the file is read once. Blocks of about 1 MB that hold only plain
free-field GRID or element lines are taken out first as runs (``lines.carve``,
read without a line table by ``runs``: counts per (type, PID), node count, a sampled
box above 50k nodes). The rest gets a line table whose lines are classified by their first
8 bytes with numpy (``lines``); its GRID and element cards are read column-wise per
card name (``fields.vec_*``), everything else that matters (materials, properties,
loads, parameters) card by card (``cards``); executive and case control in ``case``.
Element ids and connectivity stay :class:`Lazy`. Syntax facts:
NASTRAN-95 User's Manual (BULK.TXT), MYSTRAN User Manual and source.

``DeckModel.extras`` documented keys: ``"params"`` (every PARAM as written, name -> value
text), ``"skipped_cards"`` (card name -> count of entries read but not used).
"""
from __future__ import annotations

import os
import re
from dataclasses import dataclass, field
from typing import Optional

import numpy as np

from ..includes import IncludeTracker
from ...suppressions import MARK_BYTES
from ...model import DeckModel, ElementBlock, ElementSet, Include, Issue, Lazy, Load, Loc, MassSource
from . import DEFAULT_DIALECT, FORMAT
from .. import buffers
from ..sources import SourceError, read_deck_bytes, text
from . import case as bc
from .cards import OTHER_MATS, PROPERTY_CARDS, SLOW_CARDS, THERMAL_MATS, Builder, Card, tables_of
from .fields import FieldError, continuation_marker, real, split_line
from .lines import Lines, carve, classify, line_table
from .mesh import ELEMENTS, FAST, accept_run, build_elements, read_fast, build_geometry, read_slow_elements  # noqa: F401 (ELEMENTS re-exported)


_BEGIN = re.compile(rb"(?im)^[ \t]*BEGIN[ \t]+BULK")
_INCLUDE_ANY = re.compile(rb"(?im)^INCLUDE")
_NAMES = rb"GRID|CQUAD4|CQUAD8|CTRIA3|CTRIA6|CHEXA|CPENTA|CTETRA|CBAR|CBEAM|CROD|CONROD|MAT1|MAT2|MAT8|MAT9|" \
         rb"PSHELL|PSOLID|PCOMP|PBAR|PBEAM|PROD|SPC1|SPC|FORCE|MOMENT|EIGRL|EIGR|PARAM|CORD2R|RBE2|CONM2|GRDSET"
_CARD_AT_START = re.compile(rb"(?m)^(?:" + _NAMES + rb")\*?[ ,\t]")


def sniff(head: bytes) -> float:
    """How much the first bytes look like a bulk deck (0..1); CalculiX .dat result files score 0."""
    if head.startswith((b"\xff\xfe", b"\xfe\xff")):
        try:
            head = head.decode("utf-16").encode("utf-8", "replace")
        except UnicodeDecodeError:
            return 0.0
    up = head.upper().replace(b"\r", b"\n")
    score = 0.0
    if _BEGIN.search(up):
        score = 0.95
    elif re.search(rb"(?m)^[ \t]*CEND[ \t]*$", up):
        score = 0.8
    n = len(_CARD_AT_START.findall(up))
    if n >= 3:
        score = max(score, 0.75)
    elif n:
        score = max(score, 0.45)
    if score < 0.9 and re.search(rb"(?m)^\*(NODE|ELEMENT|MATERIAL|STEP|HEADING)", up):
        score = min(score, 0.2)
    return score


@dataclass
class _State:
    model: DeckModel
    tracker: IncludeTracker
    options: object
    cards: list = field(default_factory=list)
    parts: dict = field(default_factory=dict)      # card name -> [_Part]
    cc: bc.CaseControl = field(default_factory=bc.CaseControl)
    saw_bulk: bool = False
    saw_end: bool = False
    skipped: dict = field(default_factory=dict)
    runs: dict = field(default_factory=dict)       # card name -> [(file bytes, lines.Run, path)]
    nlines: Optional[int] = None                   # newlines in the top file


def parse(path: str, options) -> DeckModel:
    display = getattr(options, "display_path", None) or path
    model = DeckModel(path=display, format=FORMAT, dialect=getattr(options, "dialect", None) or DEFAULT_DIALECT)
    st = _State(model, IncludeTracker(options.include), options)
    # SourceError for an unreadable top file; a TAB separates fields as a comma does (as MYSTRAN reads them)
    src = buffers.open_text(path, options.max_file_size, keep=True, tabs_to=b",")
    data = src.data
    mode = "exec"
    if not re.search(rb"(?m)^[ \t]*[^$\s]", data):
        model.issues.append(Issue("empty-file", f"{display} is empty or holds only comments", Loc(display, 1)))
        model.files.append(display)
        return model
    if not _BEGIN.search(data) and not re.search(rb"(?im)^[ \t]*CEND", data):
        mode = "bulk"     # (the search above found a non-blank byte)
        model.issues.append(Issue("no-bulk-section", "no BEGIN BULK (and no executive/case control): the file is "
                                  "read as bulk data; solvers need BEGIN BULK ... ENDDATA", Loc(display, 1)))
    del data
    _scan(st, path, display, src, mode)
    nlines = max(1, st.nlines or 0)
    if mode == "exec" and not st.saw_bulk:
        model.issues.append(Issue("no-bulk-section", "no BEGIN BULK line: the deck has no bulk data",
                                  Loc(display, 1)))
    elif st.saw_bulk and not st.saw_end:
        model.issues.append(Issue("no-bulk-section", "no ENDDATA: MYSTRAN stops with a fatal error when the file "
                                  "ends before ENDDATA", Loc(display, nlines)))
    _finish(st)
    return model


def includes_of(path: str, options) -> list[str]:
    """Resolved paths of the files this deck includes (nested), found by a scan of INCLUDE lines only."""
    tracker = IncludeTracker(options.include)
    out: list[str] = []

    def walk(p: str, display: str) -> None:
        try:
            data = read_deck_bytes(p, options.max_file_size).data
        except SourceError:
            return
        tracker.stack.append(os.path.realpath(p))
        for m in _INCLUDE_ANY.finditer(data):
            chunk = data[m.start():m.start() + 4096].split(b"\n")[:40]
            mini = line_table(b"\n".join(chunk))
            written, _used = _include_name(mini.data, mini, 0, len(chunk))
            res = tracker.resolve(written, os.path.dirname(display))
            if res.status == "ok" and res.path:
                out.append(res.path)
                walk(res.path, res.path)
        tracker.stack.pop()

    walk(path, getattr(options, "display_path", None) or path)
    return out


# --------------------------------------------------------------------------- one file


def _scan(st: _State, path: str, display: str, src, mode: str) -> None:
    model = st.model
    raw = src.data          # no TAB left: read with them made commas, or mapped because it has none
    src.data = b""
    model.files.append(display)
    st.tracker.stack.append(os.path.realpath(path))
    if src.encoding not in ("utf-8",):
        model.issues.append(Issue("encoding", f"{display} is read as {src.encoding}, not UTF-8", Loc(display, 1)))
    begin = _BEGIN.search(raw) if mode == "exec" else None
    lo_byte = 0
    if begin is not None:
        e = raw.find(b"\n", begin.start())
        lo_byte = e + 1 if e >= 0 else len(raw)
    runs: list = []
    if mode == "bulk" or begin is not None:
        pieces, runs = carve(raw, lo_byte, buffers.count(raw, b"\n", 0, lo_byte), lambda *a: accept_run(ELEMENTS, *a))
    if runs:
        for r in runs:
            st.runs.setdefault(r.name, []).append((raw, r, display))
        generic = ([(0, lo_byte, 0)] if lo_byte else []) + pieces
        if buffers.is_mapped(raw):
            _keep_text(model, display, raw, generic)
        lines = line_table(raw, generic)
    else:
        lines = line_table(raw)
    del raw
    data = lines.data
    n = lines.ls.size
    if st.nlines is None:       # the top file (its table is made before any include is read)
        st.nlines = lines.line(n - 1) - 1
    lo = 0
    if mode == "exec":
        m = begin
        end_exec = int(np.searchsorted(lines.ls, m.start(), side="right")) - 1 if m else n
        _exec_lines(st, data, lines, 0, end_exec, display, path)
        if m is None:
            st.tracker.stack.pop()
            return
        st.saw_bulk, lo = True, end_exec + 1
    _bulk_lines(st, lines, data, lo, n, display, path)
    st.tracker.stack.pop()


def _keep_text(model: DeckModel, display: str, raw, generic: list) -> None:
    """Keep a mapped file's text for the gate's passes (``DeckModel.texts``), with the places a suppression
    marker can be: a comment needs a ``$``, and run blocks hold none, so only the generic pieces are
    searched (``extras["mark_bytes"]``); their starts are the line anchors (``extras["line_anchors"]``)."""
    model.texts[display] = raw
    marks: list[int] = []
    for a, b, _line in generic:
        marks.extend(buffers.find_all(raw, *MARK_BYTES, a=a, b=b))
    model.extras.setdefault("mark_bytes", {})[display] = sorted(marks)
    model.extras.setdefault("line_anchors", {})[display] = [(line + 1, a) for a, _b, line in generic]


def _exec_lines(st, data, lines, lo, hi, display, path) -> None:
    i = lo
    while i < hi:
        t = text(data[lines.ls[i]:lines.le[i]])
        if t[:7].upper() == "INCLUDE":
            written, used = _include_name(data, lines, i, hi)
            _include(st, written, lines.line(i), display, path, "exec")
            i += used
            continue
        st.cc.line(t, Loc(display, lines.line(i)))
        i += 1


def _include_name(data: bytes, lines: Lines, i: int, hi: int) -> tuple[str, int]:
    """The file name of an INCLUDE at line i (quoted, possibly continued over lines inside the quotes)."""
    raw = data[lines.ls[i]:lines.le[i]]
    rest = text(raw)[7:].strip().lstrip(",").strip()
    if rest[:1] in ("'", '"'):
        q, body, used = rest[0], rest[1:], 1
        while q not in body and i + used < hi:
            body += text(data[lines.ls[i + used]:lines.le[i + used]]).strip()
            used += 1
        return (body.split(q, 1)[0] if q in body else "\0" + body), used
    return (rest.split()[0] if rest.split() else ""), 1


def _include(st: _State, written: str, line: int, display: str, path: str, mode: str) -> None:
    loc = Loc(display, line)
    model = st.model
    if written.startswith("\0"):
        model.issues.append(Issue("truncated", f"INCLUDE name '{written[1:]}' has no closing quote", loc,
                                  data={"include": written[1:]}))
        return
    base = os.path.dirname(display)
    res = st.tracker.resolve(written, base)
    real_base = os.path.dirname(path)
    if res.status != "ok" and res.status != "refused" and base != real_base:
        res = st.tracker.resolve(written, real_base)
    model.includes.append(Include(written, res.path, loc, res.status))
    codes = {"missing": "missing-include", "refused": "include-refused", "cycle": "include-cycle",
             "too-deep": "include-too-deep", "directory": "include-directory"}
    if res.status != "ok":
        model.issues.append(Issue(codes.get(res.status, "missing-include"), res.message, loc,
                                  data={"include": written}))
        return
    try:
        src = buffers.open_text(res.path, st.options.max_file_size, keep=True, tabs_to=b",")
    except SourceError as exc:
        model.issues.append(Issue("include-unreadable", f"included file '{written}': {exc.message}", loc,
                                  data={"include": written}))
        return
    if mode == "exec" and not _BEGIN.search(src.data):
        _scan(st, res.path, res.path, src, "exec")
    else:
        _scan(st, res.path, res.path, src, "exec" if mode == "exec" else "bulk")


def _bulk_lines(st: _State, lines: Lines, data: bytes, lo: int, hi: int, display: str, path: str) -> None:
    if hi <= lo:
        return
    idx, head, names, large = classify(lines, lo, hi)
    end = np.flatnonzero(names == b"ENDDATA")
    at_eof = end.size == 0
    if not at_eof:
        st.saw_end = True
        cut = np.flatnonzero(head)[end[0]]
        idx, head, names, large = idx[:cut], head[:cut], names[:end[0]], large[:end[0]]
    incs = np.flatnonzero(names == b"INCLUDE")
    if incs.size:
        consumed, found = set(), []
        for h in np.flatnonzero(head)[incs]:
            i = int(idx[h])
            written, used = _include_name(data, lines, i, hi)
            consumed.update(range(i, i + used))
            found.append((written, lines.line(i)))
        keep = ~np.isin(idx, np.fromiter(consumed, dtype=np.int64))
        hnames = np.zeros(idx.size, dtype="S8")
        hlarge = np.zeros(idx.size, dtype=bool)
        hnames[head], hlarge[head] = names, large
        idx, head, hnames, hlarge = idx[keep], head[keep], hnames[keep], hlarge[keep]
        names, large = hnames[head], hlarge[head]
        for written, line in found:
            _include(st, written, line, display, path, "bulk")
    if idx.size == 0:
        return
    heads = np.flatnonzero(head)
    if heads.size == 0 or heads[0] > 0:
        st.model.issues.append(Issue("malformed-data", "continuation line without an entry before it (ignored)",
                                     Loc(display, lines.line(idx[0]))))
    if heads.size == 0:
        return
    nl = np.diff(np.concatenate((heads, [idx.size])))
    # names are 8 bytes: sort them as 64-bit integers (much faster than strings)
    uniq, inv = np.unique(np.ascontiguousarray(names).view(np.uint64), return_inverse=True)
    order = np.argsort(inv, kind="stable")
    bounds = np.concatenate(([0], np.cumsum(np.bincount(inv, minlength=uniq.size))))
    for k, u in enumerate(uniq.view("S8")):
        name = u.decode("latin-1").strip()
        which = order[bounds[k]:bounds[k + 1]]
        if name in FAST:
            slow = read_fast(st, name, lines, idx, heads[which], nl[which], large[which], display)
            which = which[slow] if slow is not None else which[:0]
        elif name not in SLOW_CARDS:
            st.skipped[name] = st.skipped.get(name, 0) + which.size
            continue
        for c in which:
            rows = idx[heads[c]:heads[c] + nl[c]]
            _slow_card(st, data, lines, rows, display)
    if at_eof:
        last = int(idx[-1])
        t = text(data[lines.ls[last]:lines.le[last]])
        lone_large = nl[-1] == 1 and bool(large[-1])
        mark = continuation_marker(t, bool(large[-1]) and nl[-1] == 1)
        if lone_large or (mark[:1] in ("+", "*") and mark):
            st.model.issues.append(Issue("truncated", "the file ends in the middle of an entry (a continuation "
                                         "is announced but missing)", Loc(display, lines.line(idx[heads[-1]]))))


def _slow_card(st: _State, data, lines, rows, display) -> None:
    f: list[str] = []
    name, large = "", False
    for j, r in enumerate(rows):
        nm, d, lg = split_line(text(data[lines.ls[r]:lines.le[r]]))
        if j == 0:
            name, large = nm.replace("*", "").strip().upper(), lg
        f.extend(d)
    st.cards.append(Card(name, f, Loc(display, lines.line(rows[0])), large))


# --------------------------------------------------------------------------- assembling the model


def _finish(st: _State) -> None:
    model = st.model
    cards = st.cards
    slow_fast = [c for c in cards if c.name in FAST]
    cards = [c for c in cards if c.name not in FAST]
    if slow_fast:
        read_slow_elements(st, slow_fast)
    for c in cards:
        if c.name == "PARAM":
            pname = c.s(2)
            model.extras.setdefault("params", {})[pname] = c.s(3)
            if pname == "WTMASS":
                try:
                    model.params["WTMASS"] = real(c.s(3))
                except FieldError:
                    model.issues.append(Issue("malformed-data", f"PARAM,WTMASS value '{c.s(3)}' is not a number",
                                              c.loc))
    wtmass = model.params.get("WTMASS") or 1.0
    b = Builder(model, cards, tables_of(cards))
    conrods: dict = {}
    loads: dict[str, list[Load]] = {}
    temps: dict[str, list[Load]] = {}
    tempd: dict[str, list[Load]] = {}
    combos: dict[str, list[str]] = {}
    later = ("MATS1", "MATT1")
    for c in sorted(cards, key=lambda c: c.name in later):
        nm = c.name
        if nm == "MAT1":
            b.mat1(c, wtmass)
        elif nm in ("MAT2", "MAT8", "MAT9"):
            b.matn(c, wtmass)
        elif nm in THERMAL_MATS:
            b.thermal(c)
        elif nm in OTHER_MATS:
            b.other_material(c)
        elif nm == "MATS1":
            b.mats1(c)
        elif nm == "MATT1":
            b.matt1(c)
        elif nm in PROPERTY_CARDS:
            b.prop(c)
        elif nm == "CONROD":
            b.conrod(c, conrods)
        elif nm == "CONM2":
            model.mass_sources.append(MassSource("point-mass", c.loc, None, b.num(c, 5, "M")))
        elif nm in ("NSM", "NSM1"):
            b.nsm_card(c)
        elif nm in ("GRAV", "RFORCE"):
            _accel(b, c, loads)
        elif nm == "TEMP":
            _temp(b, c, temps, pairs_from=3, step=2, n=3)
        elif nm == "TEMPD":
            for k in range(4):
                sid, t = c.s(2 + 2 * k), b.num(c, 3 + 2 * k, "T")
                if sid and t is not None:
                    tempd.setdefault(str(int(float(sid))) if sid.isdigit() else sid, []).append(
                        Load("temperature", t, c.loc))
        elif nm == "LOAD":
            vals = c.f[2:]
            combos[c.s(2)] = [vals[i + 1].strip() for i in range(0, len(vals) - 1, 2) if vals[i + 1].strip()]
    _conrod_blocks(model, conrods)
    build_elements(st)
    build_geometry(st, cards)
    bc.build_steps(model, st.cc, loads, temps, tempd, combos)
    model.extras["skipped_cards"] = dict(st.skipped)
    model.extras.pop("_mat_kinds", None)


def _accel(b: Builder, c: Card, loads) -> None:
    sid = c.s(2)
    if c.name == "GRAV":
        a = b.num(c, 4, "A") or 0.0
        vec = np.array([b.num(c, n, "N") or 0.0 for n in (5, 6, 7)])
        val = abs(a) * float(np.linalg.norm(vec))
        loads.setdefault(sid, []).append(Load("gravity", val, c.loc, None, tuple(a * vec)))
    else:
        a = b.num(c, 5, "A") or 0.0
        vec = np.array([b.num(c, n, "R") or 0.0 for n in (6, 7, 8)])
        omega = 2 * np.pi * abs(a) * float(np.linalg.norm(vec))   # A in revolutions per unit time
        loads.setdefault(sid, []).append(Load("centrifugal", omega ** 2, c.loc, None, tuple(vec)))


def _temp(b: Builder, c: Card, temps, pairs_from: int, step: int, n: int) -> None:
    sid = c.s(2)
    lst = temps.setdefault(sid, [])
    seen = {ld.value for ld in lst}
    for k in range(n):
        if c.s(pairs_from + step * k):
            t = b.num(c, pairs_from + step * k + 1, "T")
            if t is not None and t not in seen:
                seen.add(t)
                lst.append(Load("temperature", t, c.loc))


def _conrod_blocks(model: DeckModel, conrods: dict) -> None:
    for key, (loc, count, eids) in conrods.items():
        ids = np.asarray(eids, dtype=np.int64)
        model.element_blocks.append(ElementBlock("CONROD", "CONROD", count, loc, key, 2, Lazy.of(ids), None))
        model.element_sets[key] = ElementSet(key, key, loc, [len(model.element_blocks) - 1], defined_at=[loc])
