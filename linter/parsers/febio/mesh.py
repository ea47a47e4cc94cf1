"""Nodes and elements of an FEBio model from their byte ranges (numpy, on demand).

An item line is ``<elem id="7">1,2,3,4</elem>`` (``<node id="1">x,y,z</node>``). The tags are removed
with ``bytes.replace`` and the numbers read by one ``numpy.fromstring`` call; a block with other
attributes or a stray line falls back to a regular expression over its lines.
"""
from __future__ import annotations

import re

import numpy as np

from ..sampling import EXACT_NODES_LIMIT, line_pieces, sample_size
from .scan import Block

#: FEBio element type -> node count (FEBio User's Manual 4.0, 3.8.2 "Elements")
NODES = {"hex8": 8, "hex20": 20, "hex27": 27, "penta6": 6, "penta15": 15, "pyra5": 5, "pyra13": 13,
         "tet4": 4, "tet5": 5, "tet10": 10, "tet15": 15, "tet20": 20, "quad4": 4, "quad8": 8, "quad9": 9,
         "tri3": 3, "tri6": 6, "tri7": 7, "tri10": 10, "line2": 2, "line3": 3}
#: integration-rule variants written as the element type (e.g. HEX20G8: hex20 with 8 points)
VARIANT = re.compile(r"(?i)^(hex8|hex20|hex27|tet4|tet10|tet15|tet20|penta15|quad8|tri6)(g\d+(ri\d+)?)$")
SHELLS = {"quad4", "quad8", "quad9", "tri3", "tri6", "tri7", "tri10"}
SOLIDS = {"hex8", "hex20", "hex27", "penta6", "penta15", "pyra5", "pyra13", "tet4", "tet5", "tet10", "tet15",
          "tet20"}


def base_type(written: str) -> tuple[str, str]:
    """(shape, variant) of a written element type: ``HEX20G8`` -> ("hex20", "G8"), ``hex8`` -> ("hex8", "")."""
    w = written.strip()
    if w.lower() in NODES:
        return w.lower(), ""
    m = VARIANT.match(w)
    if m:
        return m.group(1).lower(), m.group(2).upper()
    return w.lower(), ""


def _numbers(data: bytes, blk: Block, item: bytes, width: int, dtype) -> tuple[np.ndarray, np.ndarray]:
    """(ids, values (n, width)) of the items of one block."""
    chunk = data[blk.start:blk.end]
    n = blk.count
    if n == 0:
        return np.zeros(0, np.int64), np.zeros((0, width), dtype)
    flat = (chunk.replace(b"</" + item + b">", b",").replace(b"<" + item + b" id=\"", b"")
            .replace(b"\">", b",").strip().rstrip(b","))
    try:
        arr = np.fromstring(flat, dtype=float, sep=",")
    except Exception:
        arr = np.zeros(0)
    if arr.size == n * (width + 1):
        arr = arr.reshape(n, width + 1)
        return arr[:, 0].astype(np.int64), arr[:, 1:].astype(dtype)
    return _numbers_slow(chunk, item, width, dtype)


def _numbers_slow(chunk: bytes, item: bytes, width: int, dtype):
    rx = re.compile(rb"<" + item + rb"\b[^>]*?\bid\s*=\s*\"\s*(\d+)\s*\"[^>]*>([^<]*)<")
    ids, rows = [], []
    for m in rx.finditer(chunk):
        vals = [v for v in m.group(2).replace(b",", b" ").split()]
        if len(vals) != width:
            continue
        try:
            rows.append([float(v) for v in vals])
        except ValueError:
            continue
        ids.append(int(m.group(1)))
    return np.asarray(ids, np.int64), np.asarray(rows, dtype).reshape(-1, width)


def element_arrays(data: bytes, blk: Block, nodes: int):
    ids, conn = _numbers(data, blk, b"elem", nodes, np.int64)
    return ids, conn


def node_arrays(data: bytes, blocks: list[Block]):
    parts = [_numbers(data, b, b"node", 3, float) for b in blocks]
    if not parts:
        return np.zeros(0, np.int64), np.zeros((0, 3))
    return np.concatenate([p[0] for p in parts]), np.concatenate([p[1] for p in parts])


def bounding_box(data: bytes, blocks: list[Block]):
    """(min, max, exact) over the node blocks; a 2 % sample of the lines above the exact limit."""
    total = sum(b.count for b in blocks)
    if total == 0:
        return None, None, True
    if total <= EXACT_NODES_LIMIT:
        _ids, xyz = node_arrays(data, blocks)
        exact = True
    else:
        rows = []
        for b in blocks:
            if b.count == 0:
                continue
            want = sample_size(b.count)
            piece = line_pieces(data, b.start, b.end, b.count, want)
            sub = Block(b.tag, b.attrib, b.line, 0, len(piece), piece.count(b"<node"))
            rows.append(_numbers(piece, sub, b"node", 3, float)[1])
        xyz = np.concatenate(rows) if rows else np.zeros((0, 3))
        exact = False
    xyz = xyz[np.all(np.isfinite(xyz), axis=1)] if xyz.size else xyz
    if not xyz.size:
        return None, None, exact
    return xyz.min(axis=0), xyz.max(axis=0), exact
