"""The keyword-line scan of a keyword deck: where the lines start that begin (after blanks) with a keyword,
found with numpy in chunks of ``CHUNK`` bytes, with the comment and blank lines counted, and on the way the
plain-text check of a mapped file and the bytes the suppression scan looks for.

A keyword line starts, after blanks and tabs, with one ``*``; ``**`` starts a comment line (CalculiX User's
Manual, input deck format).
"""
from __future__ import annotations

import re
from typing import Optional

import numpy as np

from .. import buffers
from ...suppressions import MARK_BYTES

#: a newline followed by a keyword, comment or blank line (the match ends where that line starts)
SPECIAL = re.compile(rb"\n(?=[ \t]*[*\n])")
SPECIAL_AT_START = re.compile(rb"[ \t]*[*\n]")
CHUNK = 1 << 21


def special_lines(data: bytes, plain: bool = False, marks: Optional[list] = None
                  ) -> Optional[tuple[list[int], list[int], np.ndarray, int]]:
    """Where the lines start that begin (after blanks) with a keyword (``*`` but not ``**``), their 1-based line
    numbers, the number of comment and blank lines before each of them (cumulative, then the total), and the
    number of newlines in ``data``: the matches of ``SPECIAL``, found with numpy in chunks (a few MB of
    temporaries at a time) instead of a regular-expression scan; only keyword lines become Python ints.

    ``plain``: also check, on the way, that the text is plain (ASCII, no CR: what ``buffers.open_text(...,
    checked=False)`` has not checked); None when it is not. ``marks``: a list that gets the offsets of the
    bytes the suppression scan looks for (``suppressions.MARK_BYTES``), found while each chunk is at hand."""
    arr = np.frombuffer(data, dtype=np.uint8)
    n = arr.size
    positions: list[int] = []
    lines: list[int] = []
    skips: list[np.ndarray] = []
    n_skip = 0
    seen = 0
    for lo in range(0, n, CHUNK):
        if plain and (int(arr[lo:lo + CHUNK].max()) >= 128 or data.find(b"\r", lo, lo + CHUNK) >= 0):
            return None
        if marks is not None:
            for one in MARK_BYTES:
                i = data.find(one, lo, lo + CHUNK)
                while i >= 0:
                    marks.append(i)
                    i = data.find(one, i + 1, lo + CHUNK)
        nl = np.flatnonzero(arr[lo:lo + CHUNK] == 10) + lo
        if not nl.size:
            continue
        head = nl + 1                                   # where each following line starts
        first = np.minimum(head, n - 1)                 # where each line's first non-blank is
        nxt = arr[first]
        if head[-1] >= n:                               # a line end closes the data: no line follows it
            nxt[-1] = 0
        special = (nxt == 42) | (nxt == 10)
        blank = np.flatnonzero((nxt == 32) | (nxt == 9))
        if blank.size:      # only a blank-led line that holds a '*' or ends in a blank can be special
            keep = np.zeros(nl.size, dtype=bool)
            keep[-1] = True                             # the last line may go on in the next chunk
            # most chunks of a large deck hold no '*' at all: one byte search spares the comparison
            stars = (np.flatnonzero(arr[lo:lo + CHUNK] == 42) + lo if data.find(b"*", lo, lo + CHUNK) >= 0
                     else np.zeros(0, dtype=np.int64))
            if stars.size:
                k = np.searchsorted(nl, stars)          # a star after line end k-1 is on the line head[k-1]
                keep[k[k > 0] - 1] = True
            last = arr[nl[1:] - 1]
            keep[:-1] |= (last == 32) | (last == 9)
            blank = blank[keep[blank]]
        if blank.size:                                  # skip leading blanks, then look again
            idx = head[blank] + 1
            for _ in range(256):
                c = arr[np.minimum(idx, n - 1)]
                more = ((c == 32) | (c == 9)) & (idx < n)
                if not more.any():
                    break
                idx[more] += 1
            c = arr[np.minimum(idx, n - 1)]
            special[blank] = ((c == 42) | (c == 10)) & (idx < n)
            first[blank] = np.minimum(idx, n - 1)
        hit = np.flatnonzero(special)
        f = first[hit]
        kw = (arr[f] == 42) & ((f + 1 >= n) | (arr[np.minimum(f + 1, n - 1)] != 42)) & (head[hit] < n)
        before = np.cumsum(~kw) - ~kw + n_skip         # comment/blank lines before each keyword line
        positions.extend(head[hit[kw]].tolist())
        lines.extend((hit[kw] + seen + 2).tolist())
        skips.append(before[kw])
        n_skip += int((~kw).sum())
        seen += nl.size
        buffers.release(data, lo, lo + CHUNK)          # a mapped file: the scanned pages go back
    skipped = np.concatenate(skips + [np.array([n_skip])]) if skips else np.array([0])
    return positions, lines, skipped, seen
