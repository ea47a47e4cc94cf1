"""GRID and element cards of a bulk deck, read column-wise with numpy (or one by one when few).

Element counts per (type, PID), blocks and ``PID <n>`` element sets, lazily loaded ids and
connectivity, node count and bounding box with CP coordinate systems applied. Element
cards and node counts: formats.md 5.8; blank PID defaults to the EID (MYSTRAN element tables).
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Optional

import numpy as np

from ..model import ElementBlock, ElementSet, Geometry, Issue, Lazy, Loc
from . import bulk_case as bc
from .bulk_cards import Card
from .bulk_fields import FieldError, real, vec_int, vec_real
from .bulk_lines import Lines, comma_counts, data_fields, free_counts

#: element card -> (most node fields, {node count threshold: type}) ; the type is the first whose limit fits
ELEMENTS = {
    "CHEXA": (20, ((8, "CHEXA8"), (20, "CHEXA20"))), "CPENTA": (15, ((6, "CPENTA6"), (15, "CPENTA15"))),
    "CTETRA": (10, ((4, "CTETRA4"), (10, "CTETRA10"))), "CPYRAM": (13, ((5, "CPYRAM5"), (13, "CPYRAM13"))),
    "CQUAD4": (4, ()), "CQUAD4K": (4, ()), "CTRIA3K": (3, ()), "CQUAD8": (8, ()), "CQUADR": (4, ()),
    "CTRIA3": (3, ()), "CTRIA6": (6, ()), "CTRIAR": (3, ()), "CBAR": (2, ()), "CBEAM": (2, ()), "CROD": (2, ()), "CSHEAR": (4, ()),
}
FAST = set(ELEMENTS) | {"GRID"}
#: cards read column-wise at a time
CHUNK = 200_000


@dataclass
class _Part:
    """Cards of one element/GRID name from one file, read column-wise (or one by one)."""

    lines: Optional[Lines]
    rows: Optional[np.ndarray]      # (n, m) physical line indices (vectorised parts)
    free: bool
    path: str
    cols: dict = field(default_factory=dict)   # parsed columns (pid, tcode, eid, line, ...)
    cn: Optional[np.ndarray] = None            # commas per physical line (free field)


def read_fast(st, name, lines, idx, heads, nl, large, display) -> Optional[np.ndarray]:
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


def read_slow_elements(st, cards: list[Card]) -> None:
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


def build_elements(st) -> None:
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


def build_geometry(st, builder_cards: list[Card]) -> None:
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
