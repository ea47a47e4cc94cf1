"""Byte-level line table of one bulk file: where lines start and end, which begin an entry, and card names.

Everything here is numpy (no Python object per line). ``carve`` first takes runs of plain
GRID/element lines out of the bulk section a block at a time (C-speed byte searches and
1 MB numpy passes), so that the line table only covers the other lines. Facts:
NASTRAN-95 User's Manual 2.4.1 and MYSTRAN User Manual, Bulk Data format (name in columns 1-8, ``*`` for
large field; continuations start with ``+``, ``*``, a comma or a blank first field; ``$`` starts a comment).
"""
from __future__ import annotations

import re
from dataclasses import dataclass
from typing import Callable, Optional

import numpy as np

from .. import buffers
from .fields import PAD, gather

COMMA, SPACE, STAR, PLUS, DOLLAR, NEWLINE = 44, 32, 42, 43, 36, 10


@dataclass
class Lines:
    buf: np.ndarray          # uint8 view of the file bytes
    ls: np.ndarray           # start offset of every physical line
    le: np.ndarray           # end offset (exclusive), comment cut off
    data: bytes = b""        # the file bytes (for C-speed substring searches)
    no: Optional[np.ndarray] = None   # 0-based line number in the file of every line (None: the same as its index)

    def line(self, i) -> int:
        """1-based file line number of line ``i`` of this table."""
        return int(i if self.no is None else self.no[i]) + 1

    def lines(self, rows: np.ndarray) -> np.ndarray:
        """1-based file line numbers of many lines of this table."""
        return (rows if self.no is None else self.no[rows]) + 1


def line_table(data: bytes, pieces: Optional[list] = None) -> Lines:
    """Line table of ``data``, or of only its byte ranges ``pieces`` [(start, end, first line index)] (whole lines)."""
    if pieces is not None and not (len(pieces) == 1 and pieces[0][0] == 0 and pieces[0][1] == len(data)):
        lines = line_table(b"".join(data[a:b] for a, b, _l in pieces))
        starts = np.cumsum([0] + [b - a for a, b, _l in pieces[:-1]])
        k = np.searchsorted(starts, lines.ls, side="right") - 1
        first = np.searchsorted(lines.ls, starts)
        lines.no = np.asarray([l0 for _a, _b, l0 in pieces], dtype=np.int64)[k] + (np.arange(lines.ls.size) - first[k])
        return lines
    padded = b"".join((data, b" " * PAD))      # one copy, of bytes or of a mapped file
    buf = np.frombuffer(padded, dtype=np.uint8)
    nl = np.flatnonzero(buf == 10)
    ls = np.concatenate(([0], nl + 1)).astype(np.int64)
    le = np.concatenate((nl, [len(data)])).astype(np.int64)
    nd = padded.count(b"$")
    if nd < 20000:   # few comments: find them at C speed instead of a pass over the whole buffer
        pos, at = [], padded.find(b"$")
        while at >= 0:
            pos.append(at)
            at = padded.find(b"$", at + 1)
        dollars = np.asarray(pos, dtype=np.int64)
    else:
        dollars = np.flatnonzero(buf == DOLLAR)
    if dollars.size:
        k = np.searchsorted(dollars, ls)
        kk = np.minimum(k, dollars.size - 1)
        cut = (k < dollars.size) & (dollars[kk] < le)
        le = np.where(cut, dollars[kk], le)
    return Lines(buf, ls, le, padded)   # callers use .data (the same text, padded) and drop theirs


def classify(lines: Lines, lo: int, hi: int):
    """For physical lines lo..hi-1: (kept line indices, head mask over kept, names of heads (S8), large mask of heads).

    Kept lines are the non-blank ones; a head starts an entry, the others continue it.
    Names are upper-cased, cut at the first comma or blank, without the large-field ``*`` (NUL-padded,
    so ``names == b"GRID"`` works).
    """
    idx = np.arange(lo, hi, dtype=np.int64)
    ls, le = lines.ls[idx], lines.le[idx]
    first8 = gather(lines.buf, ls, le, 8)
    blank8 = (first8 == SPACE).all(axis=1)
    length = le - ls
    empty = blank8 & (length <= 8)
    maybe = np.flatnonzero(blank8 & (length > 8))
    if maybe.size:
        rest = gather(lines.buf, ls[maybe] + 8, le[maybe], 72)
        empty[maybe[(rest == SPACE).all(axis=1)]] = True
    keep = ~empty
    idx, first8, blank8 = idx[keep], first8[keep], blank8[keep]
    c0 = first8[:, 0]
    cont = blank8 | (c0 == PLUS) | (c0 == STAR) | (c0 == COMMA) | (c0 == SPACE)
    # an indented free-field entry ("  PARAM, POST,-1"): a word, then a comma
    indented = np.flatnonzero((c0 == SPACE) & ~blank8)
    shifted = {}
    for i in indented:
        raw = bytes(lines.buf[lines.ls[idx[i]]:lines.le[idx[i]]])
        word = raw.lstrip()[:9]
        name = word.split(b",")[0].strip()
        if name[:1].isalpha() and b"," in word and len(name) <= 8:
            cont[i] = False
            shifted[i] = name.upper()
    head = ~cont
    f8 = first8[head].copy()
    if shifted:
        pos = np.cumsum(head) - 1
        for i, name in shifted.items():
            f8[pos[i]] = np.frombuffer(name.ljust(8), dtype=np.uint8)
    delim = (f8 == COMMA) | (f8 == SPACE)
    stop = np.where(delim.any(axis=1), delim.argmax(axis=1), 8)
    f8[np.arange(8)[None, :] >= stop[:, None]] = 0
    large = (f8 == STAR).any(axis=1)
    f8[f8 == STAR] = 0
    low = (f8 >= 97) & (f8 <= 122)
    f8[low] -= 32
    names = np.ascontiguousarray(f8).view("S8").ravel()
    return idx, head, names, large


def _commas(lines: Lines, ls: np.ndarray, le: np.ndarray) -> np.ndarray:
    """Offsets of the commas between the first start and the last end (rows are in file order)."""
    if ls.size == 0:
        return np.zeros(0, dtype=np.int64)
    a, b = int(ls.min()), int(le.max())
    return np.flatnonzero(lines.buf[a:b] == COMMA) + a


def data_fields(lines: Lines, rows: np.ndarray, free: bool, nf: int = 8) -> tuple[np.ndarray, np.ndarray]:
    """Start/end offsets (n, nf) of the first nf small-field data fields (2-9) of physical lines ``rows``."""
    ls, le = lines.ls[rows], lines.le[rows]
    if not free:
        st = ls[:, None] + 8 + 8 * np.arange(nf, dtype=np.int64)[None, :]
        en = np.minimum(st + 8, le[:, None])
        st = np.minimum(st, le[:, None])
        return st, en
    commas = _commas(lines, ls, le)
    c0 = np.searchsorted(commas, ls)
    cn = np.searchsorted(commas, le) - c0
    j = np.arange(nf + 1, dtype=np.int64)[None, :]
    if commas.size == 0:
        pos = np.broadcast_to(le[:, None], (ls.size, nf + 1))
    else:
        ci = np.minimum(c0[:, None] + j, commas.size - 1)
        pos = np.where(j < cn[:, None], commas[ci], le[:, None])
    st = np.minimum(pos[:, :nf] + 1, le[:, None])
    en = pos[:, 1:]
    return st, en


def comma_counts(lines: Lines, rows: np.ndarray) -> np.ndarray:
    """Number of commas on each physical line ``rows`` (> 0 means free field)."""
    ls, le = lines.ls[rows], lines.le[rows]
    commas = _commas(lines, ls, le)
    return np.searchsorted(commas, le) - np.searchsorted(commas, ls)


def is_free(lines: Lines, rows: np.ndarray) -> np.ndarray:
    return comma_counts(lines, rows) > 0


def free_counts(lines: Lines, rows: np.ndarray, cn: np.ndarray) -> "np.ndarray | None":
    """Non-blank data fields per physical line of free-field ``rows`` (n, m), when no field can be blank.

    Fast path for element cards: when the byte range holds no ``,,`` and no blank, and no
    line ends with a comma, every field between commas is non-blank and a line has min(commas, 8)
    data fields (``cn``: commas per line); otherwise None (the caller looks at every field).
    """
    ls, le = lines.ls[rows], lines.le[rows]
    a, b = int(ls.min()), int(le.max())
    d = lines.data
    if d.find(b",,", a, b) >= 0 or d.find(b" ", a, b) >= 0 or (lines.buf[np.maximum(le - 1, 0)] == COMMA).any():
        return None
    return np.minimum(cn, 8)


# --------------------------------------------------------------------------- runs of one mesh card

#: bytes per block tried as a run (whole lines; a block never ends before a continuation line)
BLOCK = 1 << 20
#: bytes given to the line table where no run fits; also the shortest run cut before an odd line
SMALL = 1 << 16
#: first characters of a continuation line (NASTRAN-95 User's Manual, continuations); a block never starts with one
CONTINUATION = b"+*, "
_ENDDATA = re.compile(rb"(?i)enddata")


@dataclass
class Run:
    """A block of whole lines that holds only free-field cards of one GRID/element name (read by ``mesh``)."""

    name: str
    start: int          # byte range [start, end) in the file
    end: int
    line: int           # 0-based line index of its first line
    nlines: int
    summary: object = None
    kind: str = "free"  # or "fixed" (small/large field: ``fixed``)
    count: int = 0      # entries (set by the summary; 0: one per line)


def carve(data: bytes, lo: int, line0: int, accept: Callable) -> tuple[list, list]:
    """Split data[lo:] into runs of one mesh card (blocks of up to ~BLOCK bytes) and generic pieces.

    ``data`` holds no CR and no TAB (the reader normalises line ends and reads TABs as commas). A run holds
    no ``$`` (a fixed-field run no comma either; a free-field run no ``*`` nor blank): a block is cut
    before the first line that has one. ``accept(name, data, run)`` returns a summary (not None) after
    checking that every line starts with ``NAME,`` (GRID or an element card) or, for elements, with ``+`` (a
    continuation); it sets ``run.nlines`` and may end the run earlier, before a line that starts
    another entry. Where no run fits, SMALL bytes go to the generic pieces. Everything after a
    generic piece that mentions ENDDATA, and the last PAD bytes of the file, stay generic.
    Returns (pieces, runs); pieces are (start, end, first line index) and cover all but the runs.
    """
    n = len(data)
    pieces: list = []
    runs: list = []
    p, line, gen, gen_line = lo, line0, lo, line0
    limit = n - PAD
    while p < limit:
        q = _boundary(data, p + BLOCK, limit)
        if q < 0:
            q = _boundary_before(data, p, limit)
        run = _run(data, p, q, line, accept) if q > p else None
        if run is not None:
            if gen < p:
                pieces.append((gen, p, gen_line))
            runs.append(run)
            p, line = run.end, line + run.nlines
            gen, gen_line = p, line
            continue
        g = _boundary(data, p + SMALL, limit)
        if g < 0 or g > q:
            g = q
        if g <= p or _ENDDATA.search(data, p, g):
            break
        line += buffers.count(data, b"\n", p, g)
        p = g
    pieces.append((gen, n, gen_line))
    return pieces, runs


def _boundary(data: bytes, pos: int, limit: int) -> int:
    """Start of the first line at or after ``pos`` that does not continue an entry (``+``); -1 when none before limit."""
    q = data.find(b"\n", pos - 1, limit)
    while q >= 0 and q + 1 < limit and data[q + 1] in CONTINUATION:
        q = data.find(b"\n", q + 1, limit)
    return q + 1 if 0 <= q and q + 1 < limit else -1


def _boundary_before(data: bytes, p: int, limit: int) -> int:
    """Start of the last line after p and before limit that does not continue an entry; -1 when none."""
    r = data.rfind(b"\n", p, limit)
    while r >= p and data[r + 1] in CONTINUATION:
        r = data.rfind(b"\n", p, r)
    return r + 1 if r >= p else -1


def _run(data: bytes, p: int, q: int, line: int, accept: Callable) -> "Run | None":
    head = data[p:p + 9]
    c = head.find(b",")
    fixed = c < 0
    name = (head[:8].split(b"*")[0].rstrip(b" ") if fixed else head[:c]).decode("latin-1")
    if c == 0 or not name.isupper() or not name.isalnum():
        return None
    end = q
    for ch in ((b",", b"$") if fixed else (b"$", b"*", b" ")):
        f = data.find(ch, p, end)
        if f >= 0:                              # end before the entry that holds it
            end = data.rfind(b"\n", p, f) + 1
            while p < end and data[end] in (CONTINUATION if fixed else b"+"):
                end = data.rfind(b"\n", p, end - 1) + 1
    if end <= p or (end < q and end - p < SMALL):
        return None
    run = Run(name, p, end, line, 0, kind="fixed" if fixed else "free")
    run.summary = accept(name, data, run)      # checks every line, sets run.nlines, may move run.end back
    return run if run.summary is not None else None
