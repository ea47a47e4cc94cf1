"""Runs of fixed-field GRID or element cards (small field, large field, mixed), read column-wise per block.

The fixed-field counterpart of ``runs``: a run block (``lines.carve``, ~1 MB of whole
lines, no comma, ``$``, tab or carriage return) holds entries of one card name whose head line
starts with the name in columns 1-8 (``NAME`` for small field, ``NAME*`` for large field) and whose
continuation lines start with ``+``, ``*`` or a blank (NASTRAN-95 User's Manual 2.4.1; MYSTRAN User Manual,
Bulk Data format). A small-field line has
eight 8-column data fields (columns 9-72), a large-field line (a ``NAME*`` head or a continuation
starting with ``*``) four 16-column fields (columns 9-72); columns 73-80 (continuation id) are not
read. The data fields of an entry are those of its lines in order, as the card-by-card reader
(``fields.split_line``) joins them, so both readers give the same ids, PIDs, node counts,
connectivity and coordinates.

Per block only numpy arrays of a few entries per line are made; ids, connectivity and coordinates
are parsed from the file bytes again on demand.
"""
from __future__ import annotations

from typing import Optional

import numpy as np

from .fields import PAD, vec_int, vec_real

NEWLINE, SPACE, STAR, PLUS = 10, 32, 42, 43


class Layout:
    """Where the data fields of the entries of a fixed-field run block are: ``cols(slots, sel)`` gives their
    start/end offsets (entries, slots) into the file bytes (empty past the entry's last field)."""

    def __init__(self, ls, le, head, large, hl):
        self.hl = hl                              # 0-based index (in the block) of each entry's head line
        n, k = hl.size, (ls.size // hl.size if hl.size else 0)
        nf = np.where(large, 4, 8)
        self.uniform = bool(n) and k * n == ls.size and bool((hl == np.arange(n) * k).all()) and \
            bool((large.reshape(n, k) == large[:k]).all())
        if self.uniform:                          # every entry has the same lines: slots by arithmetic
            self.ls, self.le = ls.reshape(n, k), le.reshape(n, k)
            self.where = [(r, j, 16 if large[r] else 8) for r in range(k) for j in range(int(nf[r]))]
        else:
            ent = np.cumsum(head) - 1
            csum = np.cumsum(nf) - nf
            self.ls, self.le, self.ent, self.nf = ls, le, ent, nf
            self.off = csum - csum[hl][ent]       # first slot of each line within its entry
            self.width = np.where(large, 16, 8)

    def present(self) -> np.ndarray:
        """Data fields each entry's lines reach (an upper bound of its non-blank fields)."""
        if self.uniform:
            out = np.zeros(self.hl.size, dtype=np.int64)
            for r in range(self.ls.shape[1]):
                w = 16 if any(x[0] == r and x[2] == 16 for x in self.where) else 8
                nf = sum(1 for x in self.where if x[0] == r)
                out += np.clip(-((8 - (self.le[:, r] - self.ls[:, r])) // w), 0, nf)
            return out
        per = np.clip(-((8 - (self.le - self.ls)) // self.width), 0, self.nf)
        return np.bincount(self.ent, weights=per, minlength=self.hl.size).astype(np.int64)

    def cols(self, slots, sel=slice(None)) -> tuple[np.ndarray, np.ndarray]:
        slots = list(slots)
        if self.uniform:
            ls, le = self.ls[sel], self.le[sel]
            S = np.zeros((ls.shape[0], len(slots)), dtype=np.int64)
            E = np.zeros_like(S)
            for c, j in enumerate(slots):
                if j < len(self.where):
                    r, f, w = self.where[j]
                    st = np.minimum(ls[:, r] + 8 + w * f, le[:, r])
                    S[:, c], E[:, c] = st, np.minimum(st + w, le[:, r])
            return S, E
        n = self.hl.size
        S = np.zeros((n, len(slots)), dtype=np.int64)
        E = np.zeros_like(S)
        for c, j in enumerate(slots):
            f = j - self.off
            ok = (f >= 0) & (f < self.nf)
            st = np.minimum(self.ls[ok] + 8 + self.width[ok] * f[ok], self.le[ok])
            S[self.ent[ok], c] = st
            E[self.ent[ok], c] = np.minimum(st + self.width[ok], self.le[ok])
        return S[sel], E[sel]


def _lines(data: bytes, start: int, end: int) -> tuple[np.ndarray, np.ndarray]:
    b = np.frombuffer(data, np.uint8, count=end - start, offset=start)
    le = np.flatnonzero(b == NEWLINE) + start
    ls = np.concatenate(([start], le[:-1] + 1))
    return ls, le


def layout(data: bytes, run) -> Optional[Layout]:
    """The field layout of the entries of a run block; None when the block is not plain.

    May end the run earlier (``run.end``), before a head line of another card name; sets ``run.nlines``.
    """
    buf = np.frombuffer(data, np.uint8)
    ls, le = _lines(data, run.start, run.end)
    if ls.size == 0:
        return None
    c0 = buf[ls]
    head = (c0 >= 65) & (c0 <= 90)
    if not head[0] or not (head | (c0 == PLUS) | (c0 == STAR) | (c0 == SPACE)).all():
        return None
    # a line with no data and a blank first field would be dropped by the line table: not plain
    if ((c0 == SPACE) & (le - ls <= 8)).any():
        return None
    hl = np.flatnonzero(head)
    w8 = _u64(buf)[ls[hl]]
    small = np.frombuffer(run.name.encode().ljust(8), np.uint64)[0]
    large_name = np.frombuffer((run.name + "*").encode().ljust(8), np.uint64)[0]
    is_large = w8 == large_name
    bad = np.flatnonzero(~((w8 == small) | is_large))
    if bad.size:                      # another card starts here: the run ends before it
        if bad[0] == 0:
            return None
        cut = int(hl[bad[0]])
        run.end = int(ls[cut])
        ls, le, head, c0 = ls[:cut], le[:cut], head[:cut], c0[:cut]
        hl, is_large = hl[:bad[0]], is_large[:bad[0]]
    run.nlines = int(ls.size)
    large = c0 == STAR
    large[hl] = is_large
    return Layout(ls, le, head, large, hl)


def _u64(buf: np.ndarray) -> np.ndarray:
    """The 8 bytes at every offset of ``buf`` as one little-endian uint64 (an overlapping view, no copy)."""
    return np.ndarray((buf.size - 7,), dtype="<u8", buffer=buf, strides=(1,))


_SPACES = np.uint64(0x2020202020202020)
#: low-byte masks: _MASKS[w] keeps the first w bytes of a little-endian uint64
_MASKS = np.array([(1 << (8 * w)) - 1 for w in range(8)] + [(1 << 64) - 1], dtype=np.uint64)


def _blank(buf: np.ndarray, s: np.ndarray, e: np.ndarray) -> np.ndarray:
    """Which fields buf[s:e] are empty or all blanks (widths at most 16; any shape)."""
    u = _u64(buf)
    w = (e - s).ravel()
    out = w <= 0
    idx = np.flatnonzero(~out)
    if idx.size:
        ss, ws = s.ravel()[idx], w[idx]
        bl = ((u[ss] ^ _SPACES) & _MASKS[np.minimum(ws, 8)]) == 0
        two = np.flatnonzero(ws > 8)
        if two.size:
            bl[two] &= ((u[ss[two] + 8] ^ _SPACES) & _MASKS[ws[two] - 8]) == 0
        out[idx] = bl
    return out.reshape(s.shape)


# --------------------------------------------------------------------------- GRID


def grid_plain(data: bytes, run) -> Optional[bool]:
    """True when the block holds GRID entries with blank CP (their coordinates need no system); sets run.count."""
    lay = layout(data, run)
    if lay is None:
        return None
    buf = np.frombuffer(data, np.uint8)
    S, E = lay.cols((0, 1))
    if not _blank(buf, S[:, 1], E[:, 1]).all() or _blank(buf, S[:, 0], E[:, 0]).any():
        return None
    run.count = int(lay.hl.size)
    return True


def grid_cols(data: bytes, run, sample: tuple = ()) -> dict:
    """GRID columns (gid, cp, cpblank, xyz, line) of a fixed-field run block, or of ``sample`` = (want, pieces)
    runs of consecutive entries spread over it (``sampling``)."""
    lay = layout(data, run)
    n = lay.hl.size
    sel = np.arange(n)
    if sample:
        want, pieces = sample
        if want < n:
            per = max(1, want // max(1, pieces))
            starts = np.linspace(0, n - per, max(1, min(pieces, want)), dtype=np.int64)
            sel = np.unique((starts[:, None] + np.arange(per)[None, :]).ravel())
    s, e = lay.cols(range(5), sel)
    buf = np.frombuffer(data, np.uint8)
    gid = _ints(buf, s[:, 0], e[:, 0])[0]
    cp, cpblank, _bad = _ints(buf, s[:, 1], e[:, 1])
    xyz = np.column_stack([vec_real(buf, s[:, k], e[:, k])[0] for k in (2, 3, 4)])
    return {"gid": gid, "cp": cp, "cpblank": cpblank, "xyz": np.where(np.isnan(xyz), 0.0, xyz),
            "line": run.line + 1 + lay.hl[sel]}


def grid_sample(data: bytes, run, want: int, pieces: int):
    """A small copy of about ``want`` whole GRID entries of a fixed-field run block, as its own run: the
    first entry, then ``pieces`` runs of consecutive entries spread evenly over the block (cut before head
    lines, so that no entry loses a continuation line); None when the block is too small to sample.
    Only the sampled bytes are split into lines. Their line numbers are not known: never reported."""
    span, n = run.end - run.start, max(1, run.count or run.nlines)
    pieces = max(1, min(pieces, want))
    piece_bytes = max(256, int(span / n * max(1, want // pieces)))
    if want >= n or pieces * piece_bytes >= span:
        return None
    head = b"\n" + run.name.encode()
    first = data.find(head, run.start, run.end)
    parts = [data[run.start:first + 1]] if first >= 0 else []
    for k in range(pieces):
        pos = run.start + ((span - piece_bytes) * k) // max(1, pieces - 1)
        a = data.find(head, max(pos, first), run.end)
        if a < 0:
            break
        b = data.rfind(head, a + 1, min(run.end, a + 1 + piece_bytes))
        if b > a:
            parts.append(data[a + 1:b + 1])
    chunk = b"".join(parts)
    if not chunk:
        return None
    srun = type(run)(run.name, 0, len(chunk), run.line, 0, kind="fixed")
    return chunk + b" " * PAD, srun


# --------------------------------------------------------------------------- elements


def _ints(buf: np.ndarray, s: np.ndarray, e: np.ndarray, values: bool = True
          ) -> tuple[Optional[np.ndarray], np.ndarray, np.ndarray]:
    """Integers of fields buf[s:e] (1-d): (values, blank, bad) as ``fields.vec_int`` gives them,
    with the field bytes taken as one or two 8-byte words per field (no per-byte index).

    Fields that are all the same bytes (a block's PIDs, often) are read once. ``values=False``: only
    (None, blank, bad) are wanted; fields of blanks and digits alone are judged without reading them."""
    n = s.size
    w = e - s
    if n == 0 or w.max() > 16:
        return vec_int(buf, s, e)
    words = 1 if w.max() <= 8 else 2
    u = _u64(buf)
    m = np.empty((n, words), dtype=np.uint64)
    m[:, 0] = u[s]
    if words == 2:
        m[:, 1] = u[np.minimum(s + 8, u.size - 1)]
    m = m.view(np.uint8).reshape(n, 8 * words)
    if not bool((w == 8 * words).all()):      # blanks past the field's end (most fields fill the words)
        m[np.arange(8 * words)[None, :] >= w[:, None]] = SPACE
    if not values:
        digit = (m - np.uint8(48)) <= 9
        ok = digit | (m == SPACE)
        # one run of digits: a digit whose left neighbour is not a digit starts a run
        runs = digit[:, 0].astype(np.int8) + (digit[:, 1:] & ~digit[:, :-1]).sum(axis=1, dtype=np.int8)
        if ok.all() and (runs <= 1).all():
            return None, runs == 0, np.zeros(n, dtype=bool)
    wide = m.view(np.uint64)                  # (n, words): one compare per word, not per byte
    same = n > 1 and bool((wide == wide[:1]).all())
    blank = (m == SPACE).all(axis=1)
    m[blank, 0] = 48
    try:
        cells = m[:1] if same else m
        vals = cells.view(f"S{8 * words}").ravel().astype(np.int64)
    except (ValueError, OverflowError):
        return vec_int(buf, s, e)
    if same:
        vals = np.full(n, vals[0], dtype=np.int64)
    vals[blank] = 0
    return vals, blank, np.zeros(n, dtype=bool)


def _keys(elements: dict, name: str, data: bytes, lay: Layout, ids: bool = True) -> Optional[tuple]:
    """(eid, key = pid * 4 + type code) of every entry; None when an id is blank or not an integer.
    ``ids=False``: the element ids are only checked, and read only when a PID is blank (eid is then None)."""
    maxn, types = elements[name]
    buf = np.frombuffer(data, np.uint8)
    S, E = lay.cols((0, 1))
    pid, pblank, pbad = _ints(buf, S[:, 1], E[:, 1])
    eid, eblank, ebad = _ints(buf, S[:, 0], E[:, 0], values=ids or bool(pblank.any()))
    if eblank.any() or ebad.any() or pbad.any():
        return None                    # reported by the line-table reader
    if eid is not None:
        pid = np.where(pblank, eid, pid)   # blank PID defaults to the EID (MYSTRAN element tables)
    tcode = np.zeros(pid.size, dtype=np.int64)
    if len(types) > 1:                 # the type follows the number of non-blank node fields
        need = np.flatnonzero(lay.present() - 2 > types[0][0])
        if need.size:
            Sn, En = lay.cols(range(2, 2 + maxn), need)
            count = (~_blank(buf, Sn, En)).sum(axis=1)
            tc = np.zeros(need.size, dtype=np.int64)
            for t, (limit, _ty) in enumerate(types[:-1]):
                tc[count > limit] = t + 1
            tcode[need] = tc
    return eid, pid * 4 + tcode


def element_summary(elements: dict, name: str, data: bytes, run) -> Optional[dict]:
    """{key = pid * 4 + type code: (count, 1-based line of the first entry)} of a fixed-field element block."""
    lay = layout(data, run)
    got = None if lay is None else _keys(elements, name, data, lay, ids=False)
    if got is None:
        return None
    run.count = int(lay.hl.size)
    uk, first, counts = np.unique(got[1], return_index=True, return_counts=True)
    return {int(k): (int(c), run.line + int(lay.hl[f]) + 1) for k, f, c in zip(uk, first, counts)}


def element_arrays(elements: dict, name: str, data: bytes, run, key: int
                   ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(ids, connectivity (n, most node fields), 1-based lines) of the entries of one key of a block."""
    lay = layout(data, run)
    eid, keys = _keys(elements, name, data, lay)
    sel = np.flatnonzero(keys == key)
    s, e = lay.cols(range(2, 2 + elements[name][0]), sel)
    vals = _ints(np.frombuffer(data, np.uint8), s.ravel(), e.ravel())[0].reshape(s.shape)
    return eid[sel], vals, run.line + lay.hl[sel] + 1


def find_grid(runs: list, gid: int) -> Optional[np.ndarray]:
    """Coordinates of GRID ``gid`` in the fixed-field GRID run blocks [(data, run, path)] (None when absent)."""
    for data, r, _path in runs:
        if r.kind != "fixed":
            continue
        cols = grid_cols(data, r)
        hit = np.flatnonzero(cols["gid"] == gid)
        if hit.size:
            return cols["xyz"][hit[0]]
    return None
