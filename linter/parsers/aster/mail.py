"""The code_aster native mesh (``.mail``): sections of coordinates, cells by type and groups.

The file is a sequence of sections, each opened by a keyword line (``COOR_3D``, ``HEXA8``,
``GROUP_MA`` ...; header items such as ``NOM=G1`` may follow on that line and on lines that start
with ``NAME=``) and closed by ``FINSF``; ``FIN`` ends the file and ``%`` starts a comment. Node and
cell names have at most 8 characters. Sections are kept as byte ranges: counts come from a numpy
scan of the token boundaries, cell names are packed into one uint64 each (8 bytes) only when a
group has to be resolved, and the bounding box above 50k nodes is estimated from a sample of the
node lines (``linter/parsers/sampling.py``). No Python object is made per node or cell.
"""
from __future__ import annotations

import re
from dataclasses import dataclass, field
from typing import Optional

import numpy as np

from .. import sampling

CHUNK = 8 << 20
_WORD = re.compile(rb"[A-Za-z_][A-Za-z0-9_]*")
_COMMENT = re.compile(rb"%[^\n]*")
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
    """One cell section: ``count`` cells of ``type`` with ``nodes`` nodes; global indices ``first``..."""

    type: str
    nodes: int
    buf: bytes
    start: int
    end: int
    line: int
    count: int = 0
    first: int = 0


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

    @property
    def cell_count(self) -> int:
        return sum(c.count for c in self.cells)

    def group_cells(self, name: str) -> Optional[np.ndarray]:
        """Global indices of the cells of GROUP_MA ``name`` (None when the mesh has no such group)."""
        parts = self.groups.get(name)
        if parts is None:
            return None
        keys, order = self._cell_index()
        out = []
        for g in parts:
            names = _names(g.buf, g.start, g.end, 1, 0)
            pos = np.searchsorted(keys, names)
            pos = np.minimum(pos, max(len(keys) - 1, 0))
            ok = keys[pos] == names if len(keys) else np.zeros(len(names), bool)
            if not ok.all():
                self.issues.append(MeshIssue("malformed-data", f"GROUP_MA {name} names {int((~ok).sum())} cell(s) "
                                             "that the mesh does not define", g.line))
            out.append(order[pos[ok]])
        return np.unique(np.concatenate(out)) if out else np.zeros(0, np.int64)

    def cells_named(self, cell_names: list[str]) -> Optional[np.ndarray]:
        """Global indices of the cells named (None when one of them is not in the mesh)."""
        raw = " ".join(cell_names).upper().encode("latin-1", "replace")
        wanted = _names(raw, 0, len(raw), 1, 0)
        keys, order = self._cell_index()
        if not len(keys):
            return None
        pos = np.minimum(np.searchsorted(keys, wanted), len(keys) - 1)
        if not (keys[pos] == wanted).all():
            return None
        return np.unique(order[pos])

    def _cell_index(self) -> tuple[np.ndarray, np.ndarray]:
        """Sorted packed cell names and the global index of each."""
        if self._index is None:
            keys = [_names(c.buf, c.start, c.end, c.nodes + 1, 0) for c in self.cells]
            allk = np.concatenate(keys) if keys else np.zeros(0, np.uint64)
            order = np.argsort(allk, kind="stable")
            self._index = (allk[order], order.astype(np.int64))
        return self._index


# ------------------------------------------------------------------------------------ tokens


def _chunks(buf: bytes, start: int, end: int):
    pos = start
    while pos < end:
        stop = min(end, pos + CHUNK)
        if stop < end:
            nl = buf.rfind(b"\n", pos, stop)
            stop = nl + 1 if nl > pos else stop
        yield pos, stop
        pos = stop


def _bounds(arr: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    ws = arr <= 32
    edge = np.diff(ws.view(np.int8), prepend=np.int8(1), append=np.int8(1))
    return np.flatnonzero(edge == -1), np.flatnonzero(edge == 1)


def count_tokens(buf: bytes, start: int, end: int) -> int:
    total = 0
    for a, b in _chunks(buf, start, end):
        ws = np.frombuffer(buf, np.uint8, b - a, a) <= 32
        total += int(np.count_nonzero(ws[:-1] > ws[1:])) + (0 if ws.size == 0 or ws[0] else 1)
    return total


def _names(buf: bytes, start: int, end: int, every: int, phase: int) -> np.ndarray:
    """Tokens number phase, phase+every, ... of buf[start:end], each packed into a uint64 (8 bytes, zero-padded)."""
    out, seen = [], 0
    for a, b in _chunks(buf, start, end):
        arr = np.frombuffer(buf, np.uint8, b - a, a)
        s, e = _bounds(arr)
        idx = np.arange(seen, seen + len(s))
        pick = (idx - phase) % every == 0
        seen += len(s)
        s, e = s[pick], e[pick]
        key = np.zeros(len(s), np.uint64)
        for j in range(8):
            inside = s + j < e
            byte = arr[np.minimum(s + j, len(arr) - 1)]
            byte = np.where((byte >= 97) & (byte <= 122), byte - 32, byte).astype(np.uint64)   # names in upper case
            key |= np.where(inside, byte, 0).astype(np.uint64) << np.uint64(8 * j)
        out.append(key)
    return np.concatenate(out) if out else np.zeros(0, np.uint64)


# ------------------------------------------------------------------------------------ reading


def _section_end(data: bytes, pos: int, end: int) -> tuple[int, Optional[bytes]]:
    """Offset of the FINSF (or FIN) line that closes the section after ``pos``, and which word it is."""
    while True:
        p = data.find(b"FIN", pos, end)
        if p < 0:
            return end, None
        ls = data.rfind(b"\n", 0, p) + 1
        word = b"FINSF" if data.startswith(b"FINSF", p) else b"FIN"
        after = data[p + len(word): p + len(word) + 1]
        if not data[ls:p].strip() and (not after or after in b" \t\r\n%"):
            return p, word
        pos = p + 3


def _header(data: bytes, pos: int, end: int) -> tuple[list[bytes], int, int]:
    """Header words of the section starting at ``pos`` and the offset and line count of its body."""
    nl = data.find(b"\n", pos, end)
    nl = end if nl < 0 else nl
    words = _COMMENT.sub(b"", data[pos:nl]).split()
    body, lines = min(nl + 1, end), 1
    while body < end:                      # header continuation lines: NAME=VALUE items
        nxt = data.find(b"\n", body, end)
        nxt = end if nxt < 0 else nxt
        first = data[body:nxt].split(None, 1)
        if first and (b"=" in first[0] or first[0].startswith(b"%")):
            if not first[0].startswith(b"%"):
                words += _COMMENT.sub(b"", data[body:nxt]).split()
            body, lines = min(nxt + 1, end), lines + 1
            continue
        break
    return words, body, lines


def read_mail(data: bytes, path: str) -> Mesh:
    """Sections of a ``.mail`` file held in ``data`` (ASCII, ``\\n`` line ends)."""
    mesh = Mesh(path)
    if data.find(b"finsf") >= 0 or data.find(b"Finsf") >= 0:   # keywords and names are read in upper case
        data = data.upper()
    pos, line, end = 0, 1, len(data)
    node_ranges = []
    while pos < end:
        m = _WORD.search(data, pos)
        if m is None:
            break
        line += data.count(b"\n", pos, m.start())
        if data.rfind(b"%", data.rfind(b"\n", 0, m.start()) + 1, m.start()) >= 0:   # word inside a comment
            nl = data.find(b"\n", m.start())
            line += 0 if nl < 0 else 1
            pos = end if nl < 0 else nl + 1
            continue
        word = m.group().decode("ascii").upper()
        if word == "FIN":
            break
        stop, closed = _section_end(data, m.end(), end)
        words, body, hlines = _header(data, m.start(), stop)
        buf, b0, b1 = data, body, stop
        if data.find(b"%", body, stop) >= 0 or data.find(b"=", body, stop) >= 0:   # comments, "NAME = nodes"
            buf = _COMMENT.sub(b"", data[body:stop]).replace(b"=", b" ")
            b0, b1 = 0, len(buf)
        _section(mesh, word, words, buf, b0, b1, line, node_ranges)
        if closed is None:
            mesh.issues.append(MeshIssue("truncated", f"section {word} has no FINSF: the file ends inside it", line))
        line += data.count(b"\n", m.start(), stop)
        if closed == b"FIN":
            break
        pos = stop + 5
    if not node_ranges and not mesh.cells:
        mesh.issues = [MeshIssue("malformed-data", "the file holds no COOR_1D/2D/3D section and no cells: it is not a "
                                 "native code_aster mesh", 1)]
    first = 0
    for c in mesh.cells:
        c.first = first
        first += c.count
    _box(mesh, node_ranges)
    return mesh


def _section(mesh: Mesh, word: str, words: list[bytes], buf: bytes, b0: int, b1: int, line: int,
             node_ranges: list) -> None:
    if word.startswith("COOR_") and word[5:6] in "123":
        dim = int(word[5])
        mesh.dim = max(mesh.dim, dim)
        n = count_tokens(buf, b0, b1)
        if n % (dim + 1):
            mesh.issues.append(MeshIssue("malformed-data", f"{word}: {n} fields are not whole lines of a name and "
                                         f"{dim} coordinates", line))
        mesh.node_count += n // (dim + 1)
        node_ranges.append((buf, b0, b1, dim, n // (dim + 1)))
    elif word in ("GROUP_MA", "GROUP_NO"):
        named = re.search(rb"\bNOM\s*=\s*(\S+)", b" ".join(words), re.IGNORECASE)
        name = named.group(1) if named else None
        if name is None:
            toks = buf[b0:b1].split(None, 1)
            if not toks:
                mesh.issues.append(MeshIssue("malformed-data", f"{word} without a name", line))
                return
            name = toks[0]
            b0 = buf.index(name, b0) + len(name)
        key = name.decode("latin-1")
        target = mesh.groups if word == "GROUP_MA" else mesh.node_groups
        target.setdefault(key, []).append(Group(word, key, buf, b0, b1, line))
    elif _CELL.match(word):
        nodes = cell_nodes(word)
        n = count_tokens(buf, b0, b1)
        if n % (nodes + 1):
            mesh.issues.append(MeshIssue("malformed-data", f"{word}: {n} fields are not whole cells of a name and "
                                         f"{nodes} nodes", line))
        mesh.cells.append(Cells(word, nodes, buf, b0, b1, line, n // (nodes + 1)))
    elif word not in ("TITRE", "FINSF"):
        mesh.issues.append(MeshIssue("unknown-option", f"section {word} is not read", line))


def _floats(chunk: bytes, dim: int) -> np.ndarray:
    rows = []
    for ln in chunk.split(b"\n"):
        parts = ln.split()
        if len(parts) == dim + 1:
            try:
                rows.append([float(p.replace(b"D", b"E").replace(b"d", b"e")) for p in parts[1:]])
            except ValueError:
                continue
    return np.array(rows, dtype=float).reshape(-1, dim)


def _box(mesh: Mesh, ranges) -> None:
    lo, hi = [], []
    for buf, a, b, dim, n in ranges:
        if n == 0:
            continue
        if n <= sampling.EXACT_NODES_LIMIT:
            pts = _floats(buf[a:b], dim)
        else:
            mesh.bbox_exact = False
            pts = _floats(sampling.line_pieces(buf, a, b, n, sampling.sample_size(n)), dim)
        pts = pts[np.isfinite(pts).all(axis=1)] if pts.size else pts
        if pts.size:
            full = np.zeros((len(pts), 3))
            full[:, :dim] = pts
            lo.append(full.min(axis=0))
            hi.append(full.max(axis=0))
    if lo:
        mesh.bbox = (np.min(lo, axis=0), np.max(hi, axis=0))
