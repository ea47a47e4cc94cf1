"""GRID and element cards of a bulk deck, read column-wise with numpy (or one by one when few).

Element counts per (type, PID), blocks and ``PID <n>`` element sets, lazily loaded ids and
connectivity, node count and bounding box with CP coordinate systems applied. Element
cards and node counts: MYSTRAN User Manual (element cards); blank PID defaults to the EID (MYSTRAN element tables).
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Optional

import numpy as np

from ...model import ElementBlock, ElementSet, Geometry, Issue, Lazy, Loc
from . import coords
from .cards import Card
from .fields import FieldError, real, vec_int, vec_real
from .lines import Lines, comma_counts, data_fields, free_counts, line_table
from . import runs as br
from . import fixed as bf
from .. import sampling

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


def accept_run(elements, name, data, run):
    """Summary of a run block of one mesh card (``lines.carve``), None when it must be read line by line."""
    mod = bf if run.kind == "fixed" else br
    if name == "GRID":
        return mod.grid_plain(data, run)
    if name in elements:
        return mod.element_summary(elements, name, data, run)
    return None


def _entries(run) -> int:
    """Entries of a run block (one per line unless the summary counted them)."""
    return run.count or run.nlines


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
    if st is not None and bad.any():
        i = int(np.flatnonzero(bad)[0])
        st.model.issues.append(Issue("malformed-data", f"{what} is not an integer ({int(bad.sum())} entries); "
                                     "they are counted with id 0", Loc(part.path, part.lines.line(part.rows[i, 0]))))


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
        try_int = lambda n, c: _int_field(c.f[n - 2]) if 0 <= n - 2 < len(c.f) else 0  # noqa: E731
        if name == "GRID":
            part.cols = {"gid": np.array([try_int(2, c) for c in cs]),
                         "cp": np.array([try_int(3, c) for c in cs]),
                         "cpblank": np.array([not c.s(3) for c in cs]),
                         "xyz": np.array([[_safe_real(c.s(n)) for n in (4, 5, 6)] for c in cs], dtype=float)}
        else:
            maxn, types = ELEMENTS[name]
            eid = np.array([try_int(2, c) for c in cs])
            pid = np.array([try_int(3, c) if c.s(3) else try_int(2, c) for c in cs])
            conn = np.array([[_int_field(x) for x in c.f[2:2 + maxn]] + [0] * (maxn - len(c.f[2:2 + maxn]))
                             for c in cs], dtype=np.int64)
            count = (conn != 0).sum(axis=1)
            tcode = np.zeros(len(cs), dtype=np.int64)
            for t, (limit, _ty) in enumerate(types[:-1]):
                tcode[count > limit] = t + 1
            part.cols = {"eid": eid, "pid": pid, "tcode": tcode, "conn": conn}
        part.cols["line"] = np.array([c.loc.line for c in cs])
        part.cols["paths"] = [c.loc.path for c in cs]
        st.parts.setdefault(name, []).append(part)


def _int_field(text: str) -> int:
    """An integer field of a mesh card read one by one: 0 when blank, not a number, or too large."""
    if not text or text.isspace():
        return 0
    try:
        v = int(text)
    except ValueError:
        try:
            v = int(real(text) or 0)
        except (FieldError, ValueError, OverflowError):
            return 0
    return v if abs(v) < 2 ** 62 else 0


def _safe_real(t: str) -> float:
    try:
        v = real(t)
    except FieldError:
        return 0.0
    return 0.0 if v is None else v


def _lines_of(part: _Part) -> np.ndarray:
    return part.cols["line"] if "line" in part.cols else part.lines.lines(part.rows[:, 0])


def _block_getters(name: str, pieces: list, ncols: int, rpieces: list = (), key: int = 0):
    maxn = ELEMENTS[name][0]

    def in_file_order(arrays: list, runs: list) -> np.ndarray:
        """Generic pieces' arrays, then run blocks' arrays; sorted by (file, line) when there is more than one."""
        out = np.concatenate(arrays + [r[1] for r in runs]).astype(np.int64)
        if not runs and len(pieces) < 2:
            return out
        paths = [[p.cols["paths"][i] for i in sel] if "paths" in p.cols else [p.path] * sel.size for p, sel in pieces]
        paths = [x for ps in paths for x in ps] + [path for (_d, _r, path), r in zip(rpieces, runs)
                                                   for _i in range(r[0].size)]
        rank = {}
        prank = np.array([rank.setdefault(x, len(rank)) for x in paths], dtype=np.int64)
        line = np.concatenate([_lines_of(p)[sel] for p, sel in pieces] + [r[0] for r in runs])
        return out[np.lexsort((line, prank))]

    def from_runs(i: int) -> list:
        got = [(bf if r.kind == "fixed" else br).element_arrays(ELEMENTS, name, d, r, key) for d, r, _path in rpieces]
        return [(g[2], g[i]) for g in got]

    def ids():
        return in_file_order([p.cols["eid"][sel] for p, sel in pieces], from_runs(0))

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
            out.append(c[:, :maxn])
        return in_file_order(out, from_runs(1))[:, :ncols]

    return ids, conn


def _generic_groups(name: str, parts: list) -> dict:
    """key (pid * 4 + type code) -> [count, loc, pieces] of the element parts read through the line table."""
    out: dict = {}
    if not parts:
        return out
    keys = np.concatenate([p.cols["pid"] * 4 + p.cols["tcode"] for p in parts])
    pidx = np.concatenate([np.full(p.cols["pid"].size, i) for i, p in enumerate(parts)])
    local = np.concatenate([np.arange(p.cols["pid"].size) for p in parts])
    uk, first, inv = np.unique(keys, return_index=True, return_inverse=True)
    order = np.argsort(inv, kind="stable")
    bounds = np.concatenate(([0], np.cumsum(np.bincount(inv, minlength=uk.size))))
    for g, key in enumerate(uk):
        members = order[bounds[g]:bounds[g + 1]]
        pieces = [(parts[i], local[members[pidx[members] == i]]) for i in np.unique(pidx[members])]
        p0, i0 = parts[pidx[first[g]]], local[first[g]]
        path = p0.cols["paths"][i0] if "paths" in p0.cols else p0.path
        out[int(key)] = [int(members.size), Loc(path, int(_lines_of(p0)[i0])), pieces]
    return out


def build_elements(st) -> None:
    model = st.model
    runs = getattr(st, "runs", {})
    for name in sorted((set(st.parts) | set(runs)) - {"GRID"}):
        types = ELEMENTS[name][1] or ((0, name),)
        groups = _generic_groups(name, st.parts.get(name, []))
        run_groups: dict = {}
        for data, run, path in runs.get(name, []):
            for key, (count, line) in run.summary.items():
                g = run_groups.setdefault(key, [0, Loc(path, line), []])
                g[0] += count
                g[2].append((data, run, path))
        for key in sorted(set(groups) | set(run_groups)):
            count, loc, pieces = groups.get(key, [0, None, []])
            rcount, rloc, rpieces = run_groups.get(key, [0, None, []])
            if loc is None or (rloc is not None and rloc.path == loc.path and rloc.line < loc.line):
                loc = rloc
            pid, tcode = key // 4, key % 4
            etype = types[tcode][1]
            nodes = types[tcode][0] or ELEMENTS[name][0]
            ids, conn = _block_getters(name, pieces, nodes, rpieces, key)
            elset = f"PID {pid}"
            model.element_blocks.append(ElementBlock(etype, name, count + rcount, loc, elset, nodes,
                                                     Lazy(ids), Lazy(conn)))
            es = model.element_sets.get(elset)
            if es is None:
                es = model.element_sets[elset] = ElementSet(elset, elset, loc, defined_at=[loc])
            es.blocks.append(len(model.element_blocks) - 1)


def _grid_run_part(st, data, run, path, sample: tuple = (), report: bool = True) -> _Part:
    """GRID columns of a run block, or of a sample (want, pieces) of its lines (``sampling``)."""
    if run.kind == "fixed":
        part = _Part(None, None, False, path)
        got = bf.grid_sample(data, run, *sample) if sample else None
        part.cols = bf.grid_cols(data, run, sample) if got is None else bf.grid_cols(*got)
        return part
    if sample:
        chunk, srun = br.grid_sample(data, run, *sample)
        cols = br.grid_fast(chunk, srun)
    else:
        cols = br.grid_fast(data, run)
    if cols is not None:
        part = _Part(None, None, True, path)
        part.cols = cols
        return part
    if sample:       # a padded line table of the copy; the sampled lines are never reported
        lines = line_table(chunk[:-1])
        lines.no = np.full(lines.ls.size, run.line, dtype=np.int64)
    else:
        lines = br.grid_lines(data, run)
    part = _Part(lines, np.arange(lines.ls.size)[:, None], True, path)
    _grid_cols(st if report else None, "GRID", part)
    return part


def build_geometry(st, builder_cards: list[Card]) -> None:
    parts = st.parts.get("GRID", [])
    runs = getattr(st, "runs", {}).get("GRID", [])
    if not parts and not runs:
        return
    total = sum(p.cols["gid"].size for p in parts) + sum(_entries(r) for _d, r, _p in runs)
    if total <= sampling.EXACT_NODES_LIMIT or not runs:
        full = parts + [_grid_run_part(st, d, r, path) for d, r, path in runs]
        geo, gid, xyz = _geometry(full, builder_cards, total, [], sort=bool(runs))
        geo.nodes = Lazy.of((gid, xyz))
        st.model.geometry = geo
        return
    exact, plain = [], list(runs)     # run blocks hold plain GRID entries only (runs/fixed.grid_plain)
    n_plain = sum(_entries(r) for _d, r, _p in plain)
    want = sampling.sample_size(n_plain)
    sampled = [_grid_run_part(st, d, r, path, (max(1, round(want * _entries(r) / n_plain)),
                                               max(1, round(sampling.PIECES * _entries(r) / n_plain))), False)
               for d, r, path in plain]
    geo, _gid, _xyz = _geometry(parts + exact + sampled, builder_cards, total, plain)
    if sampled:
        n_s = sum(p.cols["gid"].size for p in sampled)
        geo.exact = False
        geo.note = "; ".join(x for x in (f"bounding box estimated from {n_s} sampled of the {n_plain} nodes "
                                         f"of plain GRID lines (all {total - n_plain} other nodes read)", geo.note) if x)

    def nodes():
        allp = parts + exact + [_grid_run_part(st, d, r, path, (), False) for d, r, path in plain]
        _g, gid, xyz = _geometry(allp, builder_cards, total, [], sort=True)
        return gid, xyz

    geo.nodes = Lazy(nodes)
    st.model.geometry = geo


def _geometry(parts: list, builder_cards: list[Card], total: int, runs: list, sort: bool = False):
    """(Geometry with count and box, gid, xyz with CP systems applied) of GRID parts."""
    gid, cp, cpblank, xyz = (np.concatenate([p.cols[k] for p in parts]) for k in ("gid", "cp", "cpblank", "xyz"))
    if sort:            # parts from run blocks: put the nodes in file order
        rank: dict = {}
        prank = np.concatenate([np.array([rank.setdefault(x, len(rank)) for x in p.cols["paths"]], dtype=np.int64)
                                if "paths" in p.cols else np.full(p.cols["gid"].size, rank.setdefault(p.path, len(rank)))
                                for p in parts])
        order = np.lexsort((np.concatenate([_lines_of(p) for p in parts]), prank))
        gid, cp, cpblank, xyz = gid[order], cp[order], cpblank[order], xyz[order]
    grdset = [c for c in builder_cards if c.name == "GRDSET" and c.s(3)]
    if grdset:
        cp = np.where(cpblank, int(_safe_real(grdset[-1].s(3)) or 0), cp)
    geo = Geometry(node_count=int(total))
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
            if k < gb.size and gb[k] == gi:
                return xb[k]
            one = br.find_grid(runs, gi) if runs else None     # a node that was not sampled
            if one is None:
                return bf.find_grid(runs, gi) if runs else None
            part = _Part(one, np.zeros((1, 1), dtype=np.int64), True, "")
            _grid_cols(None, "GRID", part)
            return part.cols["xyz"][0] if not grdset or int(_safe_real(grdset[-1].s(3)) or 0) == 0 else None

        systems, failed = coords.cord_systems(cords, lookup)
        xyz, missing = coords.apply_systems(cp, xyz, systems)
        if missing:
            geo.exact = False
            note.append("coordinate systems CP " + ", ".join(map(str, missing)) + " were not applied "
                        "(not defined or not resolved)")
    geo.bbox_min, geo.bbox_max = xyz.min(axis=0), xyz.max(axis=0)
    geo.note = "; ".join(note)
    return geo, gid.astype(np.int64), xyz
