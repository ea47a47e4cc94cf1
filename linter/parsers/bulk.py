"""Parser of Nastran-style bulk-data decks (MYSTRAN dialect by default) into the neutral model.

Streaming design: the file is read once; lines are classified by their first 8 bytes
with numpy (``bulk_lines``); GRID and element cards are read column-wise per card name
(``bulk_fields.vec_*``), everything else that matters (materials, properties, loads,
parameters) card by card (``bulk_cards``); executive and case control in ``bulk_case``.
Element ids and connectivity stay :class:`Lazy`. Syntax facts: formats.md sections 4-5.

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
from ..model import DeckModel, ElementBlock, ElementSet, Geometry, Include, Issue, Lazy, Load, Loc, MassSource
from ..sources import SourceError, read_deck_bytes, text
from . import bulk_case as bc
from .bulk_cards import OTHER_MATS, PROPERTY_CARDS, SLOW_CARDS, STRUCTURAL_MATS, THERMAL_MATS, Builder, Card, tables_of
from .bulk_fields import FieldError, continuation_marker, gather, real, split_line, vec_int, vec_real
from .bulk_lines import Lines, classify, comma_counts, data_fields, free_counts, line_table

FORMAT = "bulk"
EXTENSIONS = (".bdf", ".dat", ".nas", ".blk", ".bulk")
DEFAULT_DIALECT = "mystran"

#: element card -> (most node fields, {node count threshold: type}) ; the type is the first whose limit fits
ELEMENTS = {
    "CHEXA": (20, ((8, "CHEXA8"), (20, "CHEXA20"))), "CPENTA": (15, ((6, "CPENTA6"), (15, "CPENTA15"))),
    "CTETRA": (10, ((4, "CTETRA4"), (10, "CTETRA10"))), "CPYRAM": (13, ((5, "CPYRAM5"), (13, "CPYRAM13"))),
    "CQUAD4": (4, ()), "CQUAD4K": (4, ()), "CTRIA3K": (3, ()), "CQUAD8": (8, ()), "CQUADR": (4, ()), "CTRIA3": (3, ()), "CTRIA6": (6, ()),
    "CTRIAR": (3, ()), "CBAR": (2, ()), "CBEAM": (2, ()), "CROD": (2, ()), "CSHEAR": (4, ()),
}
FAST = set(ELEMENTS) | {"GRID"}
#: cards read column-wise at a time
CHUNK = 200_000
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
class _Part:
    """Cards of one element/GRID name from one file, read column-wise (or one by one)."""

    lines: Optional[Lines]
    rows: Optional[np.ndarray]      # (n, m) physical line indices (vectorised parts)
    free: bool
    path: str
    cols: dict = field(default_factory=dict)   # parsed columns (pid, tcode, eid, line, ...)
    cn: Optional[np.ndarray] = None            # commas per physical line (free field)


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


def parse(path: str, options) -> DeckModel:
    display = getattr(options, "display_path", None) or path
    model = DeckModel(path=display, format=FORMAT, dialect=getattr(options, "dialect", None) or DEFAULT_DIALECT)
    st = _State(model, IncludeTracker(options.include), options)
    src = read_deck_bytes(path, options.max_file_size)   # SourceError for an unreadable top file
    data = src.data
    mode = "exec"
    if not re.search(rb"(?m)^[ \t]*[^$\s]", data):
        model.issues.append(Issue("empty-file", f"{display} is empty or holds only comments", Loc(display, 1)))
        model.files.append(display)
        return model
    if not _BEGIN.search(data) and not re.search(rb"(?im)^[ \t]*CEND", data):
        mode = "bulk"
        if data.strip():
            model.issues.append(Issue("no-bulk-section", "no BEGIN BULK (and no executive/case control): the file is "
                                      "read as bulk data; solvers need BEGIN BULK ... ENDDATA", Loc(display, 1)))
    nlines = max(1, data.count(b"\n"))
    del data
    _scan(st, path, display, src, mode)
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
    model.files.append(display)
    st.tracker.stack.append(os.path.realpath(path))
    if src.encoding not in ("utf-8",):
        model.issues.append(Issue("encoding", f"{display} is read as {src.encoding}, not UTF-8", Loc(display, 1)))
    lines = line_table(src.data.replace(b"\t", b",") if b"\t" in src.data else src.data)
    src.data = b""          # keep one copy of the file in memory (lines.data)
    data = lines.data
    n = lines.ls.size
    lo = 0
    if mode == "exec":
        m = _BEGIN.search(data)
        end_exec = int(np.searchsorted(lines.ls, m.start(), side="right")) - 1 if m else n
        _exec_lines(st, data, lines, 0, end_exec, display, path)
        if m is None:
            st.tracker.stack.pop()
            return
        st.saw_bulk, lo = True, end_exec + 1
    _bulk_lines(st, lines, data, lo, n, display, path)
    st.tracker.stack.pop()


def _exec_lines(st, data, lines, lo, hi, display, path) -> None:
    i = lo
    while i < hi:
        t = text(data[lines.ls[i]:lines.le[i]])
        if t[:7].upper() == "INCLUDE":
            written, used = _include_name(data, lines, i, hi)
            _include(st, written, i + 1, display, path, "exec")
            i += used
            continue
        st.cc.line(t, Loc(display, i + 1))
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
        src = read_deck_bytes(res.path, st.options.max_file_size)
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
            found.append((written, i + 1))
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
                                     Loc(display, int(idx[0]) + 1)))
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
            slow = _fast(st, name, lines, idx, heads[which], nl[which], large[which], display)
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
                                         "is announced but missing)", Loc(display, int(idx[heads[-1]]) + 1)))


def _slow_card(st: _State, data, lines, rows, display) -> None:
    f: list[str] = []
    name, large = "", False
    for j, r in enumerate(rows):
        nm, d, lg = split_line(text(data[lines.ls[r]:lines.le[r]]))
        if j == 0:
            name, large = nm.replace("*", "").strip().upper(), lg
        f.extend(d)
    st.cards.append(Card(name, f, Loc(display, int(rows[0]) + 1), large))


# --------------------------------------------------------------------------- GRID and elements column-wise


def _fast(st, name, lines, idx, heads, nl, large, display) -> Optional[np.ndarray]:
    """Read the cards of one element/GRID name column-wise; return the indices (into heads) left for one-by-one."""
    slow = np.zeros(heads.size, dtype=bool)
    slow |= large
    for m in np.unique(nl):
        allsel = np.flatnonzero((nl == m) & ~large)
        for c0 in range(0, allsel.size, CHUNK):     # bounded temporaries on large decks
            sel = allsel[c0:c0 + CHUNK]
            rows = idx[heads[sel][:, None] + np.arange(m)]
            star = lines.buf[np.minimum(lines.ls[rows[:, 1:]], lines.buf.size - 1)] == 42 if m > 1 else None
            cn = comma_counts(lines, rows.ravel()).reshape(rows.shape)
            free = cn > 0
            nostar = ~star.any(axis=1) if star is not None else np.ones(sel.size, dtype=bool)
            handled = np.zeros(sel.size, dtype=bool)
            for fr in (True, False):
                ok = (free.all(axis=1) if fr else ~free.any(axis=1)) & nostar
                if ok.any():
                    part = _Part(lines, rows[ok], fr, display, cn=cn[ok])
                    (_grid_cols if name == "GRID" else _elem_cols)(st, name, part)
                    st.parts.setdefault(name, []).append(part)
                handled |= ok
            slow[sel[~handled]] = True
    return np.flatnonzero(slow)


def _fields(part: _Part, rows: Optional[np.ndarray] = None, nf: int = 8):
    r = part.rows if rows is None else part.rows[rows]
    s, e = data_fields(part.lines, r.ravel(), part.free, nf if r.shape[1] == 1 else 8)
    n = r.shape[0]
    return s.reshape(n, -1), e.reshape(n, -1)


def _bad(st, part, bad, what):
    if bad.any():
        i = int(np.flatnonzero(bad)[0])
        st.model.issues.append(Issue("malformed-data", f"{what} is not an integer ({int(bad.sum())} entries); "
                                     "they are counted with id 0", Loc(part.path, int(part.rows[i, 0]) + 1)))


def _elem_cols(st, name, part: _Part) -> None:
    counts = free_counts(part.lines, part.rows, part.cn) if part.free else None
    s, e = _fields(part) if counts is None else data_fields(part.lines, part.rows[:, 0], True, 2)
    eid, _b, bad = vec_int(part.lines.buf, s[:, 0], e[:, 0])
    _bad(st, part, bad, f"{name} element id")
    pid, pblank, bad2 = vec_int(part.lines.buf, s[:, 1], e[:, 1])
    _bad(st, part, bad2, f"{name} property id")
    pid = np.where(pblank, eid, pid)   # blank PID defaults to the EID (MYSTRAN element tables)
    maxn, types = ELEMENTS[name]
    if counts is not None:
        count = np.minimum(counts.sum(axis=1) - 2, maxn)
    else:
        ns, ne = s[:, 2:2 + maxn], e[:, 2:2 + maxn]
        blank = ne <= ns
        amb = ~blank & (part.lines.buf[np.minimum(ns, part.lines.buf.size - 1)] == 32)
        if amb.any():
            _v, b3, _x = vec_int(part.lines.buf, ns[amb], ne[amb])
            blank[amb] = b3
        count = (~blank).sum(axis=1)
    tcode = np.zeros(eid.size, dtype=np.int64)
    for t, (limit, _ty) in enumerate(types[:-1]):
        tcode[count > limit] = t + 1
    part.cols = {"eid": eid, "pid": pid, "tcode": tcode}


def _grid_cols(st, name, part: _Part) -> None:
    s, e = _fields(part, nf=5)
    buf = part.lines.buf
    gid, _b, bad = vec_int(buf, s[:, 0], e[:, 0])
    _bad(st, part, bad, "GRID id")
    cp, cpblank, _bad2 = vec_int(buf, s[:, 1], e[:, 1])
    xyz = np.column_stack([vec_real(buf, s[:, k], e[:, k])[0] for k in (2, 3, 4)])
    xyz = np.where(np.isnan(xyz), 0.0, xyz)   # blank coordinates are 0
    part.cols = {"gid": gid, "cp": cp, "cpblank": cpblank, "xyz": xyz}


def _slow_elements(st, cards: list[Card]) -> None:
    """Element and GRID cards that were not read column-wise (large field, mixed formats)."""
    by: dict[str, list[Card]] = {}
    for c in cards:
        by.setdefault(c.name, []).append(c)
    for name, cs in by.items():
        part = _Part(None, None, False, cs[0].loc.path)
        ints = lambda n, c: int(real(c.s(n)) or 0) if c.s(n) else None  # noqa: E731
        try_int = lambda n, c: _safe(ints, n, c)  # noqa: E731
        if name == "GRID":
            part.cols = {"gid": np.array([try_int(2, c) or 0 for c in cs]),
                         "cp": np.array([try_int(3, c) or 0 for c in cs]),
                         "cpblank": np.array([not c.s(3) for c in cs]),
                         "xyz": np.array([[_safe_real(c.s(n)) for n in (4, 5, 6)] for c in cs], dtype=float)}
        else:
            maxn, types = ELEMENTS[name]
            eid = np.array([try_int(2, c) or 0 for c in cs])
            pid = np.array([try_int(3, c) if c.s(3) else try_int(2, c) or 0 for c in cs])
            conn = np.array([[try_int(4 + j, c) or 0 for j in range(maxn)] for c in cs], dtype=np.int64)
            count = (conn != 0).sum(axis=1)
            tcode = np.zeros(len(cs), dtype=np.int64)
            for t, (limit, _ty) in enumerate(types[:-1]):
                tcode[count > limit] = t + 1
            part.cols = {"eid": eid, "pid": pid, "tcode": tcode, "conn": conn}
        part.cols["line"] = np.array([c.loc.line for c in cs])
        part.cols["paths"] = [c.loc.path for c in cs]
        st.parts.setdefault(name, []).append(part)


def _safe(fn, n, c):
    try:
        v = fn(n, c)
    except (FieldError, ValueError, OverflowError):
        return 0
    return v if v is None or abs(v) < 2 ** 62 else 0


def _safe_real(t: str) -> float:
    try:
        v = real(t)
    except FieldError:
        return 0.0
    return 0.0 if v is None else v


def _lines_of(part: _Part) -> np.ndarray:
    return part.cols["line"] if "line" in part.cols else part.rows[:, 0] + 1


def _block_getters(name: str, pieces: list, ncols: int):
    maxn = ELEMENTS[name][0]

    def ids():
        return np.concatenate([p.cols["eid"][sel] for p, sel in pieces]).astype(np.int64)

    def conn():
        out = []
        for p, sel in pieces:
            if "conn" in p.cols:
                out.append(p.cols["conn"][sel])
                continue
            s, e = _fields(p, sel)
            ns, ne = s[:, 2:2 + maxn], e[:, 2:2 + maxn]
            v, _b, _x = vec_int(p.lines.buf, ns.ravel(), ne.ravel())
            c = v.reshape(ns.shape)
            if c.shape[1] < maxn:
                c = np.pad(c, ((0, 0), (0, maxn - c.shape[1])))
            out.append(c)
        return np.concatenate(out).astype(np.int64)[:, :ncols]

    return ids, conn


def _elements(st: _State) -> None:
    model = st.model
    for name in sorted(n for n in st.parts if n != "GRID"):
        parts = st.parts[name]
        types = ELEMENTS[name][1] or ((0, name),)
        keys = np.concatenate([p.cols["pid"] * 4 + p.cols["tcode"] for p in parts])
        pidx = np.concatenate([np.full(p.cols["pid"].size, i) for i, p in enumerate(parts)])
        local = np.concatenate([np.arange(p.cols["pid"].size) for p in parts])
        uk, first, inv = np.unique(keys, return_index=True, return_inverse=True)
        order = np.argsort(inv, kind="stable")
        bounds = np.concatenate(([0], np.cumsum(np.bincount(inv, minlength=uk.size))))
        for g, key in enumerate(uk):
            members = order[bounds[g]:bounds[g + 1]]
            pid, tcode = int(key) // 4, int(key) % 4
            pieces = [(parts[i], local[members[pidx[members] == i]]) for i in np.unique(pidx[members])]
            p0, i0 = parts[pidx[first[g]]], local[first[g]]
            path = p0.cols["paths"][i0] if "paths" in p0.cols else p0.path
            loc = Loc(path, int(_lines_of(p0)[i0]))
            etype = types[tcode][1]
            nodes = types[tcode][0] or ELEMENTS[name][0]
            ids, conn = _block_getters(name, pieces, nodes)
            elset = f"PID {pid}"
            model.element_blocks.append(ElementBlock(etype, name, int(members.size), loc, elset, nodes,
                                                     Lazy(ids), Lazy(conn)))
            es = model.element_sets.get(elset)
            if es is None:
                es = model.element_sets[elset] = ElementSet(elset, elset, loc, defined_at=[loc])
            es.blocks.append(len(model.element_blocks) - 1)


def _geometry(st: _State, builder_cards: list[Card]) -> None:
    parts = st.parts.get("GRID", [])
    model = st.model
    if not parts:
        return
    gid = np.concatenate([p.cols["gid"] for p in parts])
    cp = np.concatenate([p.cols["cp"] for p in parts])
    cpblank = np.concatenate([p.cols["cpblank"] for p in parts])
    xyz = np.concatenate([p.cols["xyz"] for p in parts])
    grdset = [c for c in builder_cards if c.name == "GRDSET" and c.s(3)]
    if grdset:
        cp = np.where(cpblank, int(_safe_real(grdset[-1].s(3)) or 0), cp)
    geo = Geometry(node_count=int(gid.size))
    cords = [c for c in builder_cards if c.name.startswith("CORD")]
    note = []
    if np.any(cp != 0) or cords:
        basic_mask = cp == 0
        order = np.argsort(gid[basic_mask])
        gb, xb = gid[basic_mask][order], xyz[basic_mask][order]

        def lookup(g: str):
            try:
                gi = int(g)
            except ValueError:
                return None
            k = np.searchsorted(gb, gi)
            return xb[k] if k < gb.size and gb[k] == gi else None

        systems, failed = bc.cord_systems(cords, lookup)
        xyz, missing = bc.apply_systems(cp, xyz, systems)
        if missing:
            geo.exact = False
            note.append("coordinate systems CP " + ", ".join(map(str, missing)) + " were not applied "
                        "(not defined or not resolved)")
    geo.bbox_min, geo.bbox_max = xyz.min(axis=0), xyz.max(axis=0)
    geo.note = "; ".join(note)
    geo.nodes = Lazy.of((gid.astype(np.int64), xyz))
    model.geometry = geo


# --------------------------------------------------------------------------- assembling the model


def _finish(st: _State) -> None:
    model = st.model
    cards = st.cards
    slow_fast = [c for c in cards if c.name in FAST]
    cards = [c for c in cards if c.name not in FAST]
    if slow_fast:
        _slow_elements(st, slow_fast)
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
    _elements(st)
    _geometry(st, cards)
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
