"""Runs of GRID or element cards of a bulk deck (``lines.carve``), read block by block without a line table.

A run block holds only free-field lines ``NAME,...`` (and ``+`` continuation lines for
elements) with no comment, blank or empty field. Eagerly only what rules need is read:
for elements the count per (type, PID) from the 2nd/3rd comma of each entry and its number
of fields (MYSTRAN User Manual, Bulk Data format and element cards); for GRID the number of lines. Ids, connectivity and
coordinates are parsed again from the file bytes on demand (``Lazy`` in the model), one
block (~1 MB) at a time, so that no full-size temporary is made.
"""
from __future__ import annotations

import warnings
from typing import Optional

import numpy as np

from .. import sampling
from .fields import vec_int
from .lines import COMMA, NEWLINE, PLUS, Lines, Run



def block_lines(data: bytes, run: Run) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(line starts, line ends, comma offsets) of a run block, as offsets into the file bytes."""
    b = np.frombuffer(data, np.uint8, count=run.end - run.start, offset=run.start)
    nl = np.flatnonzero(b == NEWLINE) + run.start
    ls = np.concatenate(([run.start], nl[:-1] + 1))
    com = np.flatnonzero(b == COMMA) + run.start
    return ls, nl, com


def _digits(buf: np.ndarray, s: np.ndarray, e: np.ndarray, values: bool = True) -> Optional[np.ndarray]:
    """Unsigned integers of the fields buf[s:e] (None when one is empty, too long or not all digits).

    Fields lie inside a run block, so ``s + 18`` never passes the end of the file bytes.
    ``values=False``: only check (returns the field widths).
    """
    w = e - s
    if w.size == 0 or w.min() < 1 or w.max() > 18:
        return None
    width = int(w.max())
    d = np.lib.stride_tricks.sliding_window_view(buf, width)[s] - np.uint8(48)     # uint8: not a digit -> > 9
    used = np.arange(width)[None, :] < w[:, None]
    if (d > 9)[used].any():
        return None
    if not values:
        return w
    vals = d[:, 0].astype(np.int64)
    for j in range(1, width):
        vals = np.where(used[:, j], vals * 10 + d[:, j], vals)
    return vals


def _prefixed(buf: np.ndarray, ls: np.ndarray, prefix: bytes) -> np.ndarray:
    """Which lines (starts ``ls``) begin with ``prefix``."""
    ok = np.ones(ls.size, dtype=bool)
    for j, ch in enumerate(prefix):
        ok &= buf[ls + j] == ch
    return ok


def _shorten(buf: np.ndarray, run: Run, ls: np.ndarray, i: int) -> bool:
    """End the run before line i when that line starts a new entry (a capital letter); False when it cannot."""
    if i == 0 or not 65 <= buf[ls[i]] <= 90:
        return False
    run.end = int(ls[i])
    return True


def _first_nondigit(buf: np.ndarray, s: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(20-byte windows at s, offset of the first byte that is not a digit; 0 when none in the window)."""
    win = np.lib.stride_tricks.sliding_window_view(buf, 20)[s]
    return win, ((win - np.uint8(48)) > 9).argmax(axis=1)


def grid_plain(data: bytes, run: Run) -> Optional[bool]:
    """True when every line of the block is ``GRID,id,,...`` with a plain integer id (blank CP); sets run.nlines."""
    buf = np.frombuffer(data, np.uint8)
    b = np.frombuffer(data, np.uint8, count=run.end - run.start, offset=run.start)
    ls = np.concatenate(([run.start], np.flatnonzero(b == NEWLINE)[:-1] + 1 + run.start))
    run.nlines = ls.size
    bad = np.flatnonzero(~_prefixed(buf, ls, b"GRID,"))
    if bad.size:
        return grid_plain(data, run) if _shorten(buf, run, ls, int(bad[0])) else None
    # the id (1 to 18 digits), its comma, then a comma at once (blank CP)
    win, f = _first_nondigit(buf, ls + 5)
    ar = np.arange(ls.size)
    if f.min() < 1 or f.max() > 18 or not ((win[ar, f] == COMMA) & (win[ar, f + 1] == COMMA)).all():
        return None
    return True


def _cards(data: bytes, run: Run, maxn: int, types):
    """Per entry of an element run block: (pid, type code, head line index, line starts, ends, commas per line).

    None when the block is not plain (and cannot end before the odd entry). Reads no comma offsets:
    commas per line by a segment sum, EID and PID from 20-byte windows after the name.
    """
    buf = np.frombuffer(data, np.uint8)
    b = np.frombuffer(data, np.uint8, count=run.end - run.start, offset=run.start)
    le = np.flatnonzero(b == NEWLINE) + run.start
    ls = np.concatenate(([run.start], le[:-1] + 1))
    run.nlines = ls.size
    hi = np.flatnonzero(buf[ls] != PLUS)
    if hi.size == 0 or hi[0] != 0:
        return None
    prefix = run.name.encode() + b","
    bad = np.flatnonzero(~_prefixed(buf, ls[hi], prefix))
    if bad.size:
        return _cards(data, run, maxn, types) if _shorten(buf, run, ls, int(hi[bad[0]])) else None
    # every field non-blank (lines.free_counts): no ",," and no line ending with a comma
    odd = buf[le - 1] == COMMA
    cm = b == COMMA
    pair = cm[1:] & cm[:-1]
    if pair.any():
        odd[np.searchsorted(ls, run.start + int(pair.argmax()), side="right") - 1] = True
    if odd.any():
        i = int(np.flatnonzero(odd)[0])
        h = int(hi[np.searchsorted(hi, i, side="right") - 1])
        return _cards(data, run, maxn, types) if _shorten(buf, run, ls, h) else None
    cn = np.add.reduceat(cm.view(np.uint8), ls - run.start, dtype=np.int32).astype(np.int64)
    if (cn[hi] < 3).any():
        return None
    ar = np.arange(hi.size)
    _w1, f1 = _first_nondigit(buf, ls[hi] + len(prefix))            # EID: digits, then the comma
    if f1.min() < 1 or f1.max() > 18 or not (_w1[ar, f1] == COMMA).all():
        return None
    w2, f2 = _first_nondigit(buf, ls[hi] + len(prefix) + f1 + 1)     # PID: digits, then the 3rd comma
    if f2.min() < 1 or f2.max() > 18 or not (w2[ar, f2] == COMMA).all():
        return None
    pid = (w2[:, 0] - np.uint8(48)).astype(np.int64)
    for j in range(1, int(f2.max())):
        pid = np.where(f2 > j, pid * 10 + (w2[:, j] - np.uint8(48)), pid)
    count = np.minimum(np.add.reduceat(np.minimum(cn, 8), hi) - 2, maxn)
    tcode = np.zeros(hi.size, dtype=np.int64)
    for t, (limit, _ty) in enumerate(types[:-1]):
        tcode[count > limit] = t + 1
    return pid, tcode, hi, ls, le, cn


def element_summary(elements: dict, name: str, data: bytes, run: Run) -> Optional[dict]:
    """{key = pid * 4 + type code: (count, 1-based line of the first entry)} of an element run block."""
    maxn, types = elements[name]
    got = _cards(data, run, maxn, types)
    if got is None:
        return None
    pid, tcode, hi = got[:3]
    uk, first, counts = np.unique(pid * 4 + tcode, return_index=True, return_counts=True)
    return {int(k): (int(c), run.line + int(hi[f]) + 1) for k, f, c in zip(uk, first, counts)}


def element_arrays(elements: dict, name: str, data: bytes, run: Run, key: int
                   ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(ids, connectivity (n, most node fields), 1-based lines) of the entries of one key of an element run block.

    Node slots follow the line layout of the one-by-one reader: 8 data fields per physical line.
    """
    maxn, types = elements[name]
    pid, tcode, hi, ls, le, cn = _cards(data, run, maxn, types)
    sel = np.flatnonzero(pid * 4 + tcode == key)
    b = np.frombuffer(data, np.uint8, count=run.end - run.start, offset=run.start)
    com = np.flatnonzero(b == COMMA) + run.start
    c0 = np.searchsorted(com, ls)
    k = c0[hi]
    eid = _digits(np.frombuffer(data, np.uint8), com[k] + 1, com[k + 1])
    nf = np.minimum(cn, 8)
    line = np.repeat(np.arange(ls.size), nf)
    kk = np.arange(line.size) - (np.cumsum(nf) - nf)[line]
    fs = com[c0[line] + kk] + 1
    nxt = np.minimum(c0[line] + kk + 1, com.size - 1)
    fe = np.where(kk + 1 < cn[line], com[nxt], le[line])
    head = np.zeros(ls.size, dtype=bool)
    head[hi] = True
    card = np.cumsum(head) - 1
    slot = (line - hi[card[line]]) * 8 + kk - 2
    ok = (slot >= 0) & (slot < maxn)
    vals = vec_int(np.frombuffer(data, np.uint8), fs[ok], fe[ok])[0]
    conn = np.zeros((hi.size, maxn), dtype=np.int64)
    conn[card[line][ok], slot[ok]] = vals
    return eid[sel], conn[sel], run.line + hi[sel] + 1


def grid_lines(data: bytes, run: Run) -> Lines:
    """Line table (over the file bytes, no copy) of all lines of a GRID run block."""
    ls, le, _com = block_lines(data, run)
    return Lines(np.frombuffer(data, np.uint8), ls, le, data, np.arange(run.nlines, dtype=np.int64) + run.line)


def grid_sample(data: bytes, run: Run, want: int, pieces: int) -> tuple[bytes, Run]:
    """A small copy of about ``want`` lines of a GRID run block (``sampling.line_pieces``), as its own run.

    The sampled lines' numbers are not known without counting: they are never reported.
    """
    chunk = sampling.line_pieces(data, run.start, run.end, run.nlines, want, pieces) + b"\n"
    return chunk, Run(run.name, 0, len(chunk), run.line, chunk.count(b"\n"))


def grid_fast(data: bytes, run: Run) -> Optional[dict]:
    """GRID columns of a run block whose lines are all ``GRID,id,,x,y,z`` (5 commas), parsed in one C pass.

    None when a line has other fields or a coordinate is not a plain number (the caller then reads
    the block field by field); blank/NaN coordinates read 0 as there.
    """
    chunk = data[run.start:run.end]
    n = run.nlines
    if chunk.count(b",") != 5 * n:
        return None
    flat = chunk.replace(b"GRID,", b"").replace(b",,", b",").replace(b"\n", b",")[:-1]
    del chunk
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        try:
            arr = np.fromstring(flat, sep=",")
        except ValueError:
            return None
    if arr.size != 4 * n or flat.count(b",") != 4 * n - 1:
        return None
    tab = arr.reshape(n, 4)
    if not (np.abs(tab[:, 0]) < 2.0 ** 53).all():
        return None
    xyz = tab[:, 1:]
    return {"gid": tab[:, 0].astype(np.int64), "cp": np.zeros(n, dtype=np.int64), "cpblank": np.ones(n, dtype=bool),
            "xyz": np.where(np.isnan(xyz), 0.0, xyz), "line": run.line + 1 + np.arange(n)}


def find_grid(runs: list, gid: int) -> Optional[Lines]:
    """Line table of the line ``GRID,gid,...`` in the GRID run blocks [(data, run, path)] (None when absent)."""
    tag = b"\nGRID,%d," % gid
    for data, r, _path in runs:
        at = data.find(tag, r.start - 1, r.end)
        if at >= 0:
            end = data.find(b"\n", at + 1, r.end)
            return Lines(np.frombuffer(data, np.uint8), np.array([at + 1]), np.array([end]), data,
                         np.array([r.line]))
    return None
