"""Large native meshes read through a read-only memory map, with the pages already scanned given back.

A mesh file above ``MAP_ABOVE`` bytes is mapped instead of read into one bytes object; the scans
(section ends, token counts, cell names) walk it in windows and drop each window from the process
with ``madvise(MADV_DONTNEED)`` once done, so the peak memory stays near one window plus the arrays
kept. A later scan of the same range reads it again from the page cache. Nothing is ever written.
"""
from __future__ import annotations

import mmap
import os

from ..buffers import release as drop  # noqa: F401 (the readers of this package call it drop)
from ..sources import SourceError, looks_binary, read_deck_bytes

MAP_ABOVE = 16 << 20
WINDOW = 4 << 20
_DONTNEED = getattr(mmap, "MADV_DONTNEED", None)


def open_mesh(path: str, max_size: int):
    """The mesh as bytes (small files, or files that need decoding) or as a read-only ``mmap``."""
    try:
        size = os.stat(path).st_size
    except OSError:
        size = 0
    if size <= MAP_ABOVE or size > max_size or _DONTNEED is None:
        return read_deck_bytes(path, max_size).data
    try:
        with open(path, "rb") as fh:
            mm = mmap.mmap(fh.fileno(), 0, access=mmap.ACCESS_READ)
    except (OSError, ValueError):
        return read_deck_bytes(path, max_size).data
    head = mm[:65536]
    if looks_binary(head) or b"\r" in head or head.startswith((b"\xef\xbb\xbf", b"\xff\xfe", b"\xfe\xff")):
        mm.close()
        return read_deck_bytes(path, max_size).data     # decoding or line-end normalisation needed
    return mm


def find(data, sub: bytes, a: int, b: int) -> int:
    """``data.find(sub, a, b)``, by windows on a mapped file (each window given back after the search)."""
    if not isinstance(data, mmap.mmap) or b - a <= WINDOW:
        return data.find(sub, a, b)
    pos = a
    while pos < b:
        stop = min(b, pos + WINDOW + len(sub) - 1)
        p = data.find(sub, pos, stop)
        drop(data, pos, min(stop, pos + WINDOW))
        if p >= 0:
            return p
        pos += WINDOW
    return -1


__all__ = ["open_mesh", "drop", "find", "SourceError"]
