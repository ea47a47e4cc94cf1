"""Node-line samples for the bounding box of large meshes, shared by the keyword and bulk parsers.

Up to EXACT_NODES_LIMIT nodes the box is exact. Above it, the box is estimated from a fixed
fraction of the node lines, so that its cost per node stays the same as the deck grows (a
fixed-size sample would be a cost per deck: the time per element would then fall with size
and a 100k deck would pay as much for its box as a 10M deck). The box only serves
plausibility checks (model size against the unit system); every node is still counted, and
the full coordinates are parsed on demand.
"""
from __future__ import annotations

import math

EXACT_NODES_LIMIT = 50_000
#: share of the node lines read for the box above the exact limit
SAMPLE_FRACTION = 0.02
#: never fewer sampled lines than this (nor more than there are)
MIN_SAMPLE = 1_000
#: the sample is taken as this many runs of consecutive lines, spread evenly over the block
PIECES = 64


def sample_size(n_lines: int) -> int:
    """How many of ``n_lines`` node lines to read for an estimated box."""
    return min(n_lines, max(MIN_SAMPLE, math.ceil(SAMPLE_FRACTION * n_lines)))


def line_pieces(data: bytes, start: int, end: int, n_lines: int, want: int, pieces: int = PIECES) -> bytes:
    """About ``want`` whole lines of data[start:end] (which holds ``n_lines`` lines), joined by newlines.

    The first line, then ``pieces`` runs of consecutive lines spread evenly over the range (the
    last run ends at the end of the range): a few hundred ``find`` calls, not one per line.
    """
    span = end - start
    pieces = max(1, min(pieces, want))
    per_piece = max(1, want // pieces)
    piece_bytes = max(256, int(span / max(1, n_lines) * per_piece))
    if want >= n_lines or pieces * piece_bytes >= span:      # the pieces would overlap: the whole block
        return data[start:end].rstrip(b"\n")
    first_end = data.find(b"\n", start, end)
    parts = [data[start: first_end if first_end >= 0 else end]]
    for k in range(pieces):
        pos = start + (max(0, span - piece_bytes) * k) // max(1, pieces - 1)
        a = data.find(b"\n", pos, end)
        if a < 0:
            break
        b = data.rfind(b"\n", a + 1, min(end, a + 1 + piece_bytes))
        if b > a + 1:
            parts.append(data[a + 1: b])
    return b"\n".join(parts)
