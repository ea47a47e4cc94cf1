"""A deck's text held once per check: bytes, or a read-only memory map of a large plain file.

:func:`open_text` maps a file above ``MAP_ABOVE`` bytes when it needs no decoding and no line-end
normalisation (no byte-order mark, plain ASCII, ``\\n`` line ends, a final line end); anything else
is read into bytes by :func:`linter.parsers.sources.read_deck_bytes`, as before. Mapping spares the
copy of the whole file and lets the scans give the pages they have walked back to the system
(``madvise(MADV_DONTNEED)``, :func:`release`), so the peak memory stays near the arrays kept plus one
window; a later scan of the same range reads it again from the page cache. Nothing is ever written.

The helpers below (count, find, the text of given lines) accept both kinds, so a parser, the
suppression scan and the fingerprints read the same text without opening the file again.
"""
from __future__ import annotations

import mmap
import os
from typing import Iterable, Iterator, Optional

import numpy as np

from .sources import Source, SourceError, checked_size, looks_binary, read_deck_bytes

MAP_ABOVE = 16 << 20
WINDOW = 4 << 20
_DONTNEED = getattr(mmap, "MADV_DONTNEED", None)


def is_mapped(data) -> bool:
    return isinstance(data, mmap.mmap)


def open_text(path: str, max_size: int, checked: bool = True, keep: bool = False,
              tabs_to: Optional[bytes] = None) -> Source:
    """The file as :class:`Source`; ``data`` is a read-only ``mmap`` for a large plain file, else bytes.

    ``keep``: the pages the check walked stay mapped (for a caller that walks the whole text next and
    keeps it, as the bulk reader does; giving them back would only make it fault them in again).
    ``tabs_to``: the caller reads a TAB as this one byte; a file that holds a TAB is then not mapped but
    read once with its TABs replaced (``read_deck_bytes(tabs_to=)``).

    ``checked=False``: only the head and the last byte of a large file are looked at before it is mapped;
    the caller checks the rest (ASCII, no CR) in its own first pass and reads the file with
    ``read_deck_bytes`` when that fails (the keyword parser does, to spare a pass)."""
    size = checked_size(path, max_size)
    if size <= MAP_ABOVE or _DONTNEED is None:
        return read_deck_bytes(path, max_size, tabs_to)
    try:
        with open(path, "rb") as fh:
            mm = mmap.mmap(fh.fileno(), 0, access=mmap.ACCESS_READ)
    except (OSError, ValueError):
        return read_deck_bytes(path, max_size, tabs_to)
    if not _plain(mm, checked, not keep, b"\t" if tabs_to is not None else b""):
        mm.close()
        return read_deck_bytes(path, max_size, tabs_to)   # decoding, line-end normalisation or TABs
    return Source(path=path, data=mm, encoding="utf-8", line_ends="lf")


def _plain(mm: mmap.mmap, whole: bool = True, give_back: bool = True, refuse: bytes = b"") -> bool:
    """ASCII text with ``\\n`` line ends and a final line end (what ``read_deck_bytes`` would leave as is)
    and no ``refuse`` byte (one byte, or none); not ``whole``: the head and the last byte only."""
    n = len(mm)
    head = mm[:65536]
    if not n or mm[n - 1:n] != b"\n" or looks_binary(head) or head.startswith((b"\xef\xbb\xbf", b"\xff\xfe",
                                                                                b"\xfe\xff")):
        return False
    if not whole:
        return True
    arr = np.frombuffer(mm, dtype=np.uint8)
    try:
        for lo in range(0, n, WINDOW):
            hi = min(n, lo + WINDOW)
            bad = (mm.find(b"\r", lo, hi) >= 0 or (bool(refuse) and mm.find(refuse, lo, hi) >= 0)
                   or int(arr[lo:hi].max()) >= 128)
            if give_back:
                release(mm, lo, hi)
            if bad:
                return False
    finally:
        del arr
    return True


def release(data, a: int, b: int) -> None:
    """Give the pages of ``data[a:b]`` back to the system (mapped text only; a no-op for bytes)."""
    if not isinstance(data, mmap.mmap) or b <= a:
        return
    a0 = a - a % mmap.PAGESIZE
    b0 = min(len(data), b)
    if b0 > a0:
        try:
            data.madvise(_DONTNEED, a0, b0 - a0)
        except (OSError, ValueError):
            pass


def count(data, byte: bytes, a: int = 0, b: Optional[int] = None) -> int:
    """``data.count(byte, a, b)`` for one byte, window by window with numpy (faster than ``bytes.count``)."""
    b = len(data) if b is None else min(b, len(data))
    if b - a < 1 << 16:
        return bytes(data[a:b]).count(byte) if a < b else 0
    arr = np.frombuffer(data, dtype=np.uint8)
    code, total = byte[0], 0
    for lo in range(a, b, WINDOW):
        hi = min(b, lo + WINDOW)
        total += int(np.count_nonzero(arr[lo:hi] == code))
        release(data, lo, hi)
    return total


def find_all(data, *words: bytes, a: int = 0, b: Optional[int] = None) -> Iterator[int]:
    """Every start of each of ``words`` in ``data[a:b]``, in order within each window (mapped text: window by
    window, every word searched while the window's pages are in, then given back)."""
    b = len(data) if b is None else min(b, len(data))
    step = WINDOW if isinstance(data, mmap.mmap) else max(1, b - a)
    longest = max(len(w) for w in words)
    for lo in range(a, b, step):
        hi = min(b, lo + step)
        stop = min(b, hi + longest - 1)
        found = []
        for word in words:
            i = data.find(word, lo, min(stop, hi + len(word) - 1))
            while i >= 0:
                found.append(i)
                i = data.find(word, i + 1, min(stop, hi + len(word) - 1))
        yield from sorted(found)
        release(data, lo, hi)


def line_number(data, pos: int, known: tuple[int, int] = (0, 1)) -> int:
    """The 1-based line of byte ``pos``; ``known`` = (an earlier byte offset that starts a line, its line)."""
    at, line = known
    return line + count(data, b"\n", at, pos)


def line_texts(data, wanted: Iterable[int], anchors: Iterable[tuple[int, int]] = (),
               reach: Optional[int] = None) -> dict[int, str]:
    """The text of the wanted 1-based lines (UTF-8, undecodable bytes replaced), without the line end.

    ``anchors``: known (line, byte offset of its start) pairs, e.g. the keyword lines a parser found;
    each wanted line is reached from the nearest anchor before it. ``reach``: lines more than this many
    lines after their anchor are left out (the answer then costs a few searches per line, never a scan)."""
    todo = sorted({int(w) for w in wanted if int(w) >= 1})
    known = sorted(set(anchors) | {(1, 0)})
    out: dict[int, str] = {}
    n = len(data)
    line, at, k = 1, 0, 0                 # ``at`` starts line ``line``
    for w in todo:
        while k < len(known) and known[k][0] <= w:
            if known[k][0] > line:
                line, at = known[k]
            k += 1
        if reach is not None and w - line > reach:
            continue
        if w - line > 64:                 # far: count line ends window by window
            at, line = _skip_lines(data, at, w - line), w
        while line < w and at < n:
            nl = data.find(b"\n", at)
            at, line = (n, w + 1) if nl < 0 else (nl + 1, line + 1)
        if line != w or at > n:
            break                         # past the last line
        stop = data.find(b"\n", at)
        stop = n if stop < 0 else stop
        out[w] = bytes(data[at:stop]).decode("utf-8", "replace")
    return out


def _skip_lines(data, at: int, lines: int) -> int:
    """The offset just after the ``lines``-th line end from ``at`` (the end of ``data`` when there are fewer)."""
    arr = np.frombuffer(data, dtype=np.uint8)
    n = len(data)
    for lo in range(at, n, WINDOW):
        hi = min(n, lo + WINDOW)
        nl = np.flatnonzero(arr[lo:hi] == 10)
        release(data, lo, hi)
        if nl.size >= lines:
            return lo + int(nl[lines - 1]) + 1
        lines -= nl.size
    return n + 1                          # fewer lines than asked


__all__ = ["open_text", "is_mapped", "release", "count", "find_all", "line_number", "line_texts",
           "SourceError", "MAP_ABOVE", "WINDOW"]
