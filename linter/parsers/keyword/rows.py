"""Data lines of a keyword block read as CalculiX reads them, vectorised: one answer for every writing style.

CalculiX removes every blank and tab of a line before it splits it at commas, skips blank and
``**`` comment lines, and a trailing comma adds no field (CalculiX User's Manual, input deck
format; ccx source splitline.f).
An ``*ELEMENT`` line
holds the element number and up to ``nodes`` node numbers; when it holds fewer, the next lines give
the rest, each line read only up to the nodes still missing (CalculiX ``elements.f``, the loop after
"element definition incomplete"). So ``1,2,...,16,`` + ``17,...,21`` (C3D20), ``1,...,10`` + ``11``
(C3D10 over two lines) and one element per line all read the same, whatever the separators.

Blocks are read in pieces of about ``PIECE`` bytes (an element that spans a piece boundary is carried
into the next piece), so temporaries stay bounded on large decks. Blank fields read as 0 (Fortran
list reads of a blank field); a field that is not a number reads as nan (as 0 for node numbers).
"""
from __future__ import annotations

import re
import warnings
from typing import Iterator, Optional

import numpy as np

from ..buffers import release

MAX_FIELDS = 16                 # CalculiX keeps at most 16 fields of a line
PIECE = 8 << 20
_ONLY_COMMAS = re.compile(rb"(?m)^,+\n")
_NOT_COMMA_OR_LINE_END = bytes(i for i in range(256) if i not in (10, 44))


def compact(chunk: bytes) -> bytes:
    """The data lines of a chunk as CalculiX sees them: no blanks or tabs, no comment, blank or comma-only
    line, one trailing comma per line removed; every line ends with a newline (b"" when there is none)."""
    c = _stripped(chunk)
    b = np.frombuffer(c, np.uint8)
    comma, nl = b == 44, b == 10
    lead = bool(comma[:1].any()) or bool((nl[:-1] & comma[1:]).any())      # a line starts with a comma
    trail = bool((comma[:-1] & nl[1:]).any())                              # ... ends with one
    empty = bool(nl[:1].any()) or bool((nl[:-1] & nl[1:]).any())         # an empty line
    del b, comma, nl
    if lead:
        c = _ONLY_COMMAS.sub(b"", c)
    if trail:
        c = c.replace(b",\n", b"\n")
    if empty or lead:
        while b"\n\n" in c:
            c = c.replace(b"\n\n", b"\n")
        c = c[1:] if c.startswith(b"\n") else c
    return c


def _stripped(chunk: bytes) -> bytes:
    """The chunk without blanks, tabs, CRs and ``**`` lines; every line ends with a newline."""
    c = chunk.translate(None, b" \t\r")
    if not c.endswith(b"\n"):
        c += b"\n"
    if b"*" in c:                                 # one-byte searches are the fast ones
        c = _drop_comments(c)
    return c


def _drop_comments(c: bytes) -> bytes:
    """``c`` without its ``**`` lines (blanks already removed, every line ends with a newline)."""
    b = np.frombuffer(c, np.uint8)
    ls = np.concatenate(([0], np.flatnonzero(b[:-1] == 10) + 1))
    star = ls[(b[ls] == 42) & (b[np.minimum(ls + 1, b.size - 1)] == 42)]
    if star.size == 0:
        return c
    ends = np.searchsorted(ls, star, side="right")                 # the next line start (or the end)
    stop = np.append(ls, b.size)[ends]
    delta = np.zeros(b.size + 1, dtype=np.int8)       # -1 where a comment line starts, +1 after it
    np.add.at(delta, star, -1)
    np.add.at(delta, stop, 1)
    return b[np.cumsum(delta[:-1], dtype=np.int8) == 0].tobytes()


def line_fields(chunk: bytes) -> np.ndarray:
    """``fields_per_line(compact(chunk))`` without building the compacted text's trailing-comma copy: the
    fields of each data line counted from its commas (one trailing comma not counted; empty, comment and
    comma-only lines left out)."""
    c = _stripped(chunk)
    b = np.frombuffer(c, np.uint8)
    nl = np.flatnonzero(b == 10)                  # c ends with a line end: every line holds its own
    if not nl.size:
        return np.zeros(0, dtype=np.int64)
    # the commas of each line: the text cut down to its commas and line ends, where line i is what lies
    # between line ends i-1 and i (one C pass; a per-line sum over the whole text took twice as long)
    ends = np.flatnonzero(np.frombuffer(c.translate(None, _NOT_COMMA_OR_LINE_END), np.uint8) == 10)
    commas = np.diff(ends, prepend=-1) - 1
    length = np.diff(nl, prepend=-1) - 1
    trailing = (length > 0) & (b[nl - 1] == 44)
    keep = (length > 0) & (commas < length)
    return (commas + 1 - trailing)[keep]


def fields_per_line(c: bytes) -> np.ndarray:
    """Number of fields of each line of a compacted chunk (int64)."""
    b = np.frombuffer(c, np.uint8)
    sep = np.flatnonzero((b == 44) | (b == 10))
    nl = np.flatnonzero(b[sep] == 10)
    return np.diff(nl, prepend=-1)


def values(c: bytes, integer: bool = False) -> np.ndarray:
    """All fields of a compacted chunk in order: float64 (nan for a field that is not a number), or int64."""
    if not c:
        return np.zeros(0, dtype=np.int64 if integer else float)
    flat = c[:-1].replace(b"\n", b",")
    n = flat.count(b",") + 1
    arr = _parse(flat, n, integer)              # a blank field makes it fail (no blanks are left to misread)
    if arr is None and (b",," in flat or flat.startswith(b",") or flat.endswith(b",")):
        flat = flat.replace(b",,", b",0,").replace(b",,", b",0,")          # blank fields read as 0
        flat = (b"0" if flat.startswith(b",") else b"") + flat + (b"0" if flat.endswith(b",") else b"")
        arr = _parse(flat, n, integer)
    if arr is None:
        arr = _one_by_one(flat)
        arr = to_int(arr) if integer else arr
    return arr


def _parse(flat: bytes, n: int, integer: bool) -> Optional[np.ndarray]:
    if b"d" in flat or b"D" in flat:                                    # Fortran D exponents
        flat = flat.replace(b"D", b"E").replace(b"d", b"e")
    for dtype in ((np.int64, float) if integer else (float,)):
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            try:
                arr = np.fromstring(flat, dtype=dtype, sep=",")
            except ValueError:
                continue
        if arr.size == n:
            return to_int(arr) if integer and dtype is float else arr
    return None


def _one_by_one(flat: bytes) -> np.ndarray:
    from .lex import to_float

    out = []
    for f in flat.split(b","):
        v = to_float(f.decode("latin-1"))
        out.append(np.nan if v is None else v)
    return np.array(out, dtype=float)


def to_int(arr: np.ndarray) -> np.ndarray:
    """Floats as int64; nan and out-of-range values (not element or node numbers anyway) become 0."""
    arr = np.where(np.isfinite(arr) & (np.abs(arr) < 2.0 ** 62), arr, 0.0)
    return arr.astype(np.int64)


def group(cnt: np.ndarray, width: int, final: bool = True) -> tuple[np.ndarray, np.ndarray, np.ndarray, int]:
    """How CalculiX groups lines into elements of ``width`` fields (number + nodes).

    Returns (element of each used line, fields taken from each used line, position of the first taken field
    within its element, number of lines used). Lines after the last complete element are not used
    unless ``final`` (then they make an incomplete last element, which the caller reports).
    """
    take = np.minimum(cnt, MAX_FIELDS)
    n = take.size
    if n == 0:
        z = np.zeros(0, dtype=np.int64)
        return z, z, z, 0
    if take.min() >= width:                              # one element per line
        return np.arange(n), np.full(n, width), np.zeros(n, dtype=np.int64), n
    k, got = 0, 0                                        # lines of the first element
    while k < n and got < width:
        got += int(take[k])
        k += 1
    pattern = take[:k]
    if got >= width and (pattern[:-1] < width).all() and n >= k:
        m = n // k
        tab = take[: m * k].reshape(m, k)
        if (tab[:, :-1] == pattern[:-1]).all() and (tab[:, -1] >= width - int(pattern[:-1].sum())).all():
            if m * k == n or not final:
                t = np.minimum(np.cumsum(pattern), width)
                t = np.diff(t, prepend=0)
                pos = np.cumsum(t) - t
                return (np.repeat(np.arange(m), k), np.tile(t, m), np.tile(pos, m), m * k)
    return _group_loop(take.tolist(), width, final)


def _group_loop(take: list, width: int, final: bool):
    elem, used, pos = [], [], []
    e, need, last_start = -1, 0, 0
    for i, t in enumerate(take):
        if need == 0:
            e += 1
            last_start = i
            u = min(t, width)
            elem.append(e), used.append(u), pos.append(0)
            need = width - u
        else:
            u = min(t, need)
            elem.append(e), used.append(u), pos.append(width - need)
            need -= u
    n_used = len(take)
    if need and not final:                               # the last element goes on in the next piece
        n_used = last_start
        del elem[n_used:], used[n_used:], pos[n_used:]
    return (np.array(elem, dtype=np.int64), np.array(used, dtype=np.int64), np.array(pos, dtype=np.int64),
            n_used)


def table(c: bytes, width: int, final: bool = True, integer: bool = True) -> tuple[np.ndarray, int, bool]:
    """(elements, width) table of a compacted chunk, the number of its lines used, and whether the last
    element is incomplete (its missing fields read 0)."""
    cnt = fields_per_line(c)
    elem, used, pos, n_used = group(cnt, width, final)
    vals = values(c, integer)
    m = int(elem[-1]) + 1 if elem.size else 0
    out = np.zeros((m, width), dtype=vals.dtype)
    if m:
        if (used == width).all() and (cnt[:n_used] == width).all():
            out[:] = vals[: m * width].reshape(m, width)
        else:
            start = np.cumsum(cnt[:n_used]) - cnt[:n_used]
            rep = np.repeat(np.arange(n_used), used)
            inner = np.arange(rep.size) - np.repeat(np.cumsum(used) - used, used)
            out[elem[rep], pos[rep] + inner] = vals[start[rep] + inner]
    incomplete = bool(m) and int(pos[-1] + used[-1]) < width if n_used else False
    return out, n_used, incomplete


def pieces(data: bytes, start: int, end: int, size: int = 0, raw: bool = False) -> Iterator[tuple[bytes, bool]]:
    """Compacted pieces of ``data[start:end]`` cut at line ends (``raw``: as written), and whether each is
    the last one."""
    size = size or PIECE
    at = start
    while at < end:
        stop = end if end - at <= size else data.rfind(b"\n", at, at + size) + 1
        if stop <= at:
            stop = data.find(b"\n", at + size, end) + 1 or end
        piece = data[at:stop] if raw else compact(data[at:stop])
        release(data, at, stop)                          # a mapped file: the piece's pages go back
        yield piece, stop >= end
        at = stop


def line_rows(c: bytes, width: int) -> np.ndarray:
    """One element per line of a compacted chunk: the first ``width`` fields of each line (missing ones 0)."""
    cnt = fields_per_line(c)
    vals = values(c, integer=True)
    if (cnt == width).all():
        return vals.reshape(-1, width)
    first = np.cumsum(cnt) - cnt
    tab = np.zeros((cnt.size, width), dtype=np.int64)
    for j in range(width):
        has = cnt > j
        tab[has, j] = vals[first[has] + j]
    return tab


#: a number put at every line end by :func:`plain_int_rows` (any value: it is counted, see there)
_MARK = -1


def plain_int_rows(raw: bytes, width: int) -> Optional[np.ndarray]:
    """(lines, width) int64 table of raw data lines that each hold exactly ``width`` integers separated
    by commas (blanks, tabs and CRs around the numbers); None for anything else (a line with another field
    count, a trailing comma, a blank field, a blank inside a number, a comment or empty line, a number that
    is not an integer), which :func:`compact` and :func:`line_rows` then read as CalculiX does.

    The line ends become a marker number, the whole text is read by numpy's C parser in one call, and
    the table is exact only if the marker closes every row and appears nowhere else: ``lines`` markers in
    the last column and ``lines`` in all (a data field equal to the marker gives one more: None)."""
    flat = raw if raw.endswith(b"\n") else raw + b"\n"
    lines = flat.count(b"\n")
    if not lines or b"*" in flat or b"\x0b" in flat or b"\x0c" in flat:
        return None
    # blanks, tabs and CRs stay: numpy skips them around a number and stops at one inside a number
    # ("1 2", which CalculiX reads as 12), and a field of blanks only is an empty field: both decline
    flat = flat.replace(b"\n", b",%d," % _MARK)[:-1]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        try:
            vals = np.fromstring(flat, dtype=np.int64, sep=",")
        except ValueError:
            return None
    if vals.size != lines * (width + 1):
        return None
    tab = vals.reshape(lines, width + 1)
    if not (tab[:, width] == _MARK).all() or int(np.count_nonzero(vals == _MARK)) != lines:
        return None
    return tab[:, :width]


def element_tables(data: bytes, start: int, end: int, width: int, size: int = 0, per_line: bool = False
                   ) -> Iterator[tuple[np.ndarray, bool]]:
    """(table piece, last element incomplete) of an ``*ELEMENT`` block, piece by piece.

    ``per_line``: one element per line (the block's layout was found to be so), no grouping; lines that
    all hold the element's fields are read in one numpy call (:func:`plain_int_rows`)."""
    carry = b""
    for c, last in pieces(data, start, end, size, raw=per_line):
        if per_line:
            tab = plain_int_rows(c, width)
            yield (line_rows(compact(c), width) if tab is None else tab), False
            continue
        c = carry + c
        tab, n_used, incomplete = table(c, width, final=last)
        carry = c[_tail(c, n_used):] if not last else b""
        yield tab, incomplete and last


def _tail(c: bytes, n_used: int) -> int:
    """Offset of line ``n_used`` of a compacted chunk (from the end when it is near the end)."""
    total = c.count(b"\n")
    if n_used >= total:
        return len(c)
    at = len(c)
    for _ in range(total - n_used):
        at = c.rfind(b"\n", 0, at - 1) + 1
    return at


def element_count(data: bytes, start: int, end: int, width: int, size: int = 0) -> tuple[int, bool]:
    """(number of elements, last one incomplete) of an ``*ELEMENT`` block, without reading the numbers."""
    total, carry, incomplete = 0, np.zeros(0, dtype=np.int64), False
    for c, last in pieces(data, start, end, size, raw=True):
        cnt = np.concatenate((carry, line_fields(c)))
        elem, used, pos, n_used = group(cnt, width, final=last)
        m = int(elem[-1]) + 1 if elem.size else 0
        total += m
        carry = cnt[n_used:]
        if last and m:
            incomplete = int(pos[-1] + used[-1]) < width
    return total, incomplete


def node_table(c: bytes) -> np.ndarray:
    """(n, 4) id, x, y, z of the compacted lines of a ``*NODE`` block (missing coordinates read 0; fields
    after the 4th are not read)."""
    if not c:
        return np.zeros((0, 4))
    vals = values(c)
    n_lines = c.count(b"\n")
    width = c[: c.index(b"\n")].count(b",") + 1
    # the quick reshape only when every line has the first line's fields: equal totals are not enough
    # (4, 3 and 5 fields hold as many numbers as three lines of 4)
    cnt = fields_per_line(c) if width * n_lines == vals.size else None
    if cnt is not None and bool((cnt == width).all()):
        tab = vals.reshape(n_lines, width)
        out = np.zeros((n_lines, 4))
        out[:, : min(4, width)] = tab[:, :4]
        return out
    if cnt is None:
        cnt = fields_per_line(c)
    start = np.cumsum(cnt) - cnt
    out = np.zeros((n_lines, 4))
    for j in range(4):
        has = cnt > j
        out[has, j] = vals[start[has] + j]
    return out


def first_fields(data: bytes, start: int, end: int) -> Optional[int]:
    """Number of fields of the first data line of a range (None when it has none)."""
    at = start
    while at < end:
        stop = data.find(b"\n", at, end)
        stop = end if stop < 0 else stop
        c = compact(data[at:stop])
        if c:
            return min(c.count(b",") + 1, MAX_FIELDS)
        at = stop + 1
    return None
