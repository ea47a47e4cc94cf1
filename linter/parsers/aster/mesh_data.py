"""The in-memory form of a code_aster mesh: cells by type, groups, and the token helpers that pack names.

Used by the native reader (``mail.py``) and the MED reader (``med.py``). Sections are kept as byte ranges;
cell names are packed into one uint64 each (8 bytes, upper case) only when a group has to be resolved.
No Python object is made per node or cell.
"""
from __future__ import annotations

import re
from dataclasses import dataclass, field
from typing import Optional

import numpy as np

from .. import buffers
from .mapped import drop

CHUNK = 1 << 20
#: topological dimension of the cell types by their name
_DIMS = (("POI", 0), ("SEG", 1), ("TRIA", 2), ("QUAD", 2), ("TETRA", 3), ("PENTA", 3), ("HEXA", 3), ("PYRAM", 3))
_CELL = re.compile(r"(POI|SEG|TRIA|QUAD|TETRA|PENTA|HEXA|PYRAM)(\d+)\Z")


def cell_dim(cell_type: str) -> int:
    for prefix, d in _DIMS:
        if cell_type.startswith(prefix):
            return d
    return -1


def cell_nodes(cell_type: str) -> int:
    m = _CELL.match(cell_type)
    return int(m.group(2)) if m else 0


@dataclass
class Cells:
    """One cell section: ``count`` cells of ``type`` with ``nodes`` nodes; global indices ``first``...
    (``line``, here and in :class:`Group`, is the byte offset of the section; ``Mesh.line_at`` converts it)."""

    type: str
    nodes: int
    buf: bytes
    start: int
    end: int
    line: int
    count: int = 0
    first: int = 0
    keys: Optional[np.ndarray] = None      # packed cell names, when the reading pass made them


@dataclass
class Group:
    kind: str            # GROUP_MA | GROUP_NO
    name: str
    buf: bytes
    start: int
    end: int
    line: int


@dataclass
class MeshIssue:
    code: str
    message: str
    line: int


@dataclass
class Mesh:
    path: str
    dim: int = 0
    node_count: int = 0
    cells: list[Cells] = field(default_factory=list)
    groups: dict[str, list[Group]] = field(default_factory=dict)     # GROUP_MA by name
    node_groups: dict[str, list[Group]] = field(default_factory=dict)
    issues: list[MeshIssue] = field(default_factory=list)
    bbox: Optional[tuple[np.ndarray, np.ndarray]] = None
    bbox_exact: bool = True
    _index: Optional[tuple[np.ndarray, np.ndarray]] = None
    _keys: Optional[np.ndarray] = None
    _data: object = None
    #: GROUP_MA given as index arrays (MED meshes), consulted before the sections of a native mesh
    group_index: dict = field(default_factory=dict)
    _line_cache: tuple = (0, 1)

    def line_at(self, offset: int) -> int:
        """The 1-based line of a byte offset of the file (counted on demand, forward from the last one asked)."""
        last, line = self._line_cache if offset >= self._line_cache[0] else (0, 1)
        if self._data is None:
            return line
        line += buffers.count(self._data, b"\n", last, offset)
        self._line_cache = (offset, line)
        return line

    @property
    def cell_count(self) -> int:
        return sum(c.count for c in self.cells)

    def group_cells(self, name: str) -> Optional[np.ndarray]:
        """Global indices of the cells of GROUP_MA ``name``, sorted (None when the mesh has no such group)."""
        if name in self.group_index:
            return self.group_index[name]
        parts = self.groups.get(name)
        if parts is None:
            return None
        out = []
        for g in parts:
            names = _names(g.buf, g.start, g.end, 1, 0)
            run = self._run_of(names)
            if run is not None:
                out.append(run)
                continue
            keys, order = self._cell_index()
            pos = np.minimum(np.searchsorted(keys, names), max(len(keys) - 1, 0))
            ok = keys[pos] == names if len(keys) else np.zeros(len(names), bool)
            if not ok.all():
                self.issues.append(MeshIssue("malformed-data", f"GROUP_MA {name} names {int((~ok).sum())} cell(s) "
                                             "that the mesh does not define", self.line_at(g.line)))
            out.append(order[pos[ok]])
        return sorted_unique(np.concatenate(out) if len(out) > 1 else out[0])

    def _run_of(self, names: np.ndarray) -> Optional[np.ndarray]:
        """The indices when the group lists a run of consecutive cells in file order (the usual layout)."""
        allk = self._cell_keys()
        if not len(names) or not len(allk):
            return None
        first = np.flatnonzero(allk == names[0])
        if len(first) != 1 or first[0] + len(names) > len(allk):
            return None
        p = int(first[0])
        return np.arange(p, p + len(names), dtype=np.int64) if np.array_equal(allk[p:p + len(names)], names) else None

    def _cell_keys(self) -> np.ndarray:
        if self._keys is None:
            keys = [c.keys if c.keys is not None else _names(c.buf, c.start, c.end, c.nodes + 1, 0)
                    for c in self.cells]
            self._keys = np.concatenate(keys) if keys else np.zeros(0, np.uint64)
        return self._keys

    def cells_named(self, cell_names: list[str]) -> Optional[np.ndarray]:
        """Global indices of the cells named (None when one of them is not in the mesh)."""
        if not any(c.end > c.start for c in self.cells):
            return None          # cells without names (MED)
        raw = " ".join(cell_names).upper().encode("latin-1", "replace")
        wanted = _names(raw, 0, len(raw), 1, 0)
        keys, order = self._cell_index()
        if not len(keys):
            return None
        pos = np.minimum(np.searchsorted(keys, wanted), len(keys) - 1)
        if not (keys[pos] == wanted).all():
            return None
        return sorted_unique(order[pos])

    def _cell_index(self) -> tuple[np.ndarray, np.ndarray]:
        """Sorted packed cell names and the global index of each."""
        if self._index is None:
            allk = self._cell_keys()
            order = np.argsort(allk, kind="stable")
            self._index = (allk[order], order.astype(np.int64))
        return self._index


# ------------------------------------------------------------------------------------ tokens


def sorted_unique(a: np.ndarray) -> np.ndarray:
    """``np.unique`` of an index array, without the work when it is already strictly increasing."""
    if a.size < 2 or bool((a[1:] > a[:-1]).all()):
        return a
    a = np.sort(a)
    return a[np.concatenate(([True], a[1:] != a[:-1]))]


def _chunks(buf: bytes, start: int, end: int):
    pos = start
    while pos < end:
        stop = min(end, pos + CHUNK)
        if stop < end:
            nl = buf.rfind(b"\n", pos, stop)
            stop = nl + 1 if nl > pos else stop
        yield pos, stop
        drop(buf, pos, stop)
        pos = stop


def count_tokens(buf: bytes, start: int, end: int, special: Optional[list] = None) -> int:
    """Whitespace-separated tokens of buf[start:end]; ``special`` (a list) gets True appended when the range
    holds a '%' (comment) or '=' (``NAME = nodes``), which the caller must clean first."""
    total, seen = 0, False
    for a, b in _chunks(buf, start, end):
        arr = np.frombuffer(buf, np.uint8, b - a, a)
        ws = arr <= 32
        total += int(np.count_nonzero(ws[:-1] > ws[1:])) + (0 if ws.size == 0 or ws[0] else 1)
        if special is not None and not seen:
            seen = bool(((arr == 37) | (arr == 61)).any())
    if special is not None:
        special.append(seen)
    return total


def _names(buf: bytes, start: int, end: int, every: int, phase: int) -> np.ndarray:
    """Tokens number phase, phase+every, ... of buf[start:end], each packed into a uint64 (8 bytes, zero-padded,
    in upper case). A name longer than 8 characters is cut to 8, as the native format allows no more."""
    out, seen = [], 0
    for a, b in _chunks(buf, start, end):
        arr = np.frombuffer(buf, np.uint8, b - a, a)
        ws = arr <= 32
        s = np.flatnonzero(ws[:-1] > ws[1:]) + 1          # whitespace followed by a token
        if arr.size and not ws[0]:
            s = np.concatenate(([0], s))
        first = (phase - seen) % every
        seen += len(s)
        out.append(_pack(arr, s[first::every]))
    return np.concatenate(out) if out else np.zeros(0, np.uint64)


def _pack(arr: np.ndarray, s: np.ndarray) -> np.ndarray:
    """The tokens starting at offsets ``s`` of ``arr``, each packed into a uint64 (8 bytes, upper case).

    Eight bytes are read at each start as one little-endian word (an overlapping view of a padded
    copy), cut at the first byte <= 32 with a bit trick on the word, then the letters a-z are raised."""
    if not len(s):
        return np.zeros(0, np.uint64)
    n = len(arr)
    buf = np.empty(n + 8, np.uint8)
    buf[:n] = arr
    buf[n:] = 32
    w = np.ndarray((n,), "<u8", buf, 0, (1,))[s]
    # high bit of each byte below 0x21 (exact for the lowest such byte, which is the one used)
    flags = (w - np.uint64(0x2121212121212121)) & ~w & np.uint64(0x8080808080808080)
    lowest = flags & (~flags + np.uint64(1))
    w &= (lowest >> np.uint64(7)) - np.uint64(1)       # keep the bytes before it (all when there is none)
    v = w.view(np.uint8)
    v -= np.uint8(32) * ((v - np.uint8(97)) < 26)      # names in upper case
    return w
