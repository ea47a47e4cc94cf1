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
from .mapped import drop, find
from .mesh_data import (_CELL, CHUNK, Cells, Group, Mesh, MeshIssue, _chunks, _names, _pack,  # noqa: F401
                        cell_dim, cell_nodes, count_tokens, sorted_unique)
#: the reading pass over coordinates and cells (fewer, larger numpy calls)
SCAN_CHUNK = 4 << 20
_WORD = re.compile(rb"[A-Za-z_][A-Za-z0-9_]*")
_COMMENT = re.compile(rb"%[^\n]*")
# ------------------------------------------------------------------------------------ reading


def _section_end(data: bytes, pos: int, end: int) -> tuple[int, Optional[bytes]]:
    """Offset of the FINSF line that closes the section after ``pos`` (or of a FIN line when no FINSF
    follows: the file then ends inside the section), and which word it is."""
    while True:
        p = find(data, b"FINSF", pos, end)
        if p < 0:
            break
        ls = data.rfind(b"\n", 0, p) + 1
        after = data[p + 5: p + 6]
        if not data[ls:p].strip() and (not after or after in b" \t\r\n%"):
            return p, b"FINSF"
        pos = p + 5
    for m in re.finditer(rb"(?m)^[ \t]*FIN[ \t\r%]*$", bytes(data[pos:end])) if end - pos < (64 << 20) else ():
        return pos + m.start() + m.group().index(b"FIN"), b"FIN"
    return end, None


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


def read_mail(data, path: str) -> Mesh:
    """Sections of a ``.mail`` file held in ``data`` (bytes or a read-only mmap; ASCII, ``\\n`` line ends).

    Line numbers are counted only for the places a message names (``Mesh.line_at``)."""
    mesh = Mesh(path)
    head = data[: 1 << 20]
    if head.find(b"finsf") >= 0 or head.find(b"Finsf") >= 0:   # lower-case keywords: names read in upper case
        data = bytes(data[:]).upper()
    mesh._data = data
    pos, end = 0, len(data)
    node_ranges = []
    while pos < end:
        m = _WORD.search(data, pos)
        if m is None:
            break
        line = m.start()                   # an offset: Mesh.line_at turns it into a line number when needed
        if data.rfind(b"%", data.rfind(b"\n", 0, m.start()) + 1, m.start()) >= 0:   # word inside a comment
            nl = data.find(b"\n", m.start())
            pos = end if nl < 0 else nl + 1
            continue
        word = m.group().decode("ascii").upper()
        if word == "FIN":
            break
        bulk = (word.startswith("COOR_") and word[5:6] in "123") or bool(_CELL.match(word))
        if bulk:    # coordinates and cells: one pass finds the end, counts and packs the cell names
            words, body, _hl = _header(data, m.start(), end)
            every = cell_nodes(word) + 1 if _CELL.match(word) else 0
            stop, closed, n, keys, special = _scan(data, body, end, every)
        if bulk and not special:
            _counted(mesh, word, data, body, stop, line, n, keys, node_ranges)
        else:
            if not bulk:
                stop, closed = _section_end(data, m.end(), end)
            words, body, _hl = _header(data, m.start(), stop)
            _section(mesh, word, words, data, body, stop, line, node_ranges)
        if closed is None:
            mesh.issues.append(MeshIssue("truncated", f"section {word} has no FINSF: the file ends inside it", line))
        if closed == b"FIN":
            break
        pos = stop + 5
    if not node_ranges and not mesh.cells:
        mesh.issues = [MeshIssue("malformed-data", "the file holds no COOR_1D/2D/3D section and no cells: it is not a "
                                 "native code_aster mesh", 1)]
    for issue in sorted(mesh.issues, key=lambda i: i.line):   # offsets so far: now line numbers
        issue.line = mesh.line_at(issue.line)
    first = 0
    for c in mesh.cells:
        c.first = first
        first += c.count
    _box(mesh, node_ranges)
    return mesh


def _finsf_in(data, a: int, b: int, end: int, by_letter: bool = False) -> int:
    """Offset of the first FINSF at a line start in data[a:b] (it may run past b up to end), or -1.
    ``by_letter``: look at each 'F' (a one-byte search, fast; 'F' is rare in coordinates and cells)."""
    if by_letter:
        p = data.find(b"F", a, b)
        while p >= 0:
            if data[p:p + 5] == b"FINSF" and _finsf_in(data, p, p + 1, end) >= 0:
                return p
            p = data.find(b"F", p + 1, b)
        return -1
    while True:
        p = data.find(b"FINSF", a, min(end, b + 4))
        if p < 0 or p >= b:
            return -1
        ls = data.rfind(b"\n", 0, p) + 1
        after = data[p + 5: p + 6]
        if not bytes(data[ls:p]).strip() and (not after or after in b" \t\r\n%"):
            return p
        a = p + 5


def _scan(data, body: int, end: int, every: int) -> tuple:
    """One pass over a coordinate or cell section from ``body``: (end offset, "FINSF" or None, token count,
    packed names of tokens 0, every, 2 every ... (cells; None for coordinates), whether it holds '%' or '=')."""
    keys, total, special = [], 0, False
    pos, closed = body, None
    while pos < end:
        stop = min(end, pos + SCAN_CHUNK)
        if stop < end:
            nl = data.rfind(b"\n", pos, stop)
            stop = nl + 1 if nl > pos else stop
        p = _finsf_in(data, pos, stop, end, by_letter=True)
        if p >= 0:
            stop, closed = p, b"FINSF"
        arr = np.frombuffer(data, np.uint8, stop - pos, pos)
        ws = arr <= 32
        if not special:   # one-byte searches (memchr): comments or "NAME = nodes" need a cleaned copy
            special = data.find(b"%", pos, stop) >= 0 or data.find(b"=", pos, stop) >= 0
        if every and not special:
            starts = np.flatnonzero(ws[:-1] > ws[1:]) + 1
            if arr.size and not ws[0]:
                starts = np.concatenate(([0], starts))
            keys.append(_pack(arr, starts[(-total) % every::every]))
            total += len(starts)
        else:
            total += int(np.count_nonzero(ws[:-1] > ws[1:])) + (0 if ws.size == 0 or ws[0] else 1)
        drop(data, pos, stop)
        pos = stop
        if closed:
            break
    if closed is None:
        stop = end
        fin, word = _section_end(data, body, end)      # no FINSF: a FIN line may end the file inside the section
        if word == b"FIN":
            stop, _c, total, packed, special = _scan(data, body, fin, every)
            return stop, b"FIN", total, packed, special
    packed = (np.concatenate(keys) if keys else np.zeros(0, np.uint64)) if every and not special else None
    return stop, closed, total, packed, special


def _counted(mesh: Mesh, word: str, data, b0: int, b1: int, line: int, n: int, keys, node_ranges: list) -> None:
    if keys is None:
        dim = int(word[5])
        mesh.dim = max(mesh.dim, dim)
        if n % (dim + 1):
            mesh.issues.append(MeshIssue("malformed-data", f"{word}: {n} fields are not whole lines of a name and "
                                         f"{dim} coordinates", line))
        mesh.node_count += n // (dim + 1)
        node_ranges.append((data, b0, b1, dim, n // (dim + 1)))
        return
    nodes = cell_nodes(word)
    if n % (nodes + 1):
        mesh.issues.append(MeshIssue("malformed-data", f"{word}: {n} fields are not whole cells of a name and "
                                     f"{nodes} nodes", line))
    cells = Cells(word, nodes, data, b0, b1, line, n // (nodes + 1))
    cells.keys = keys[:cells.count]
    mesh.cells.append(cells)


def _clean(buf, b0: int, b1: int) -> tuple[bytes, int, int]:
    """The range without comments and with '=' read as a blank (``NAME = nodes``): a copy."""
    out = _COMMENT.sub(b"", bytes(buf[b0:b1])).replace(b"=", b" ")
    return out, 0, len(out)


def _tokens(buf, b0: int, b1: int) -> tuple:
    """(token count, buffer, start, end): counted in one pass, and again on a cleaned copy when needed."""
    special: list = []
    n = count_tokens(buf, b0, b1, special)
    if special[0]:
        buf, b0, b1 = _clean(buf, b0, b1)
        n = count_tokens(buf, b0, b1)
    return n, buf, b0, b1


def _section(mesh: Mesh, word: str, words: list[bytes], buf: bytes, b0: int, b1: int, line: int,
             node_ranges: list) -> None:
    if word.startswith("COOR_") and word[5:6] in "123":
        dim = int(word[5])
        mesh.dim = max(mesh.dim, dim)
        n, buf, b0, b1 = _tokens(buf, b0, b1)
        if n % (dim + 1):
            mesh.issues.append(MeshIssue("malformed-data", f"{word}: {n} fields are not whole lines of a name and "
                                         f"{dim} coordinates", line))
        mesh.node_count += n // (dim + 1)
        node_ranges.append((buf, b0, b1, dim, n // (dim + 1)))
    elif word in ("GROUP_MA", "GROUP_NO"):
        if find(buf, b"%", b0, b1) >= 0 or find(buf, b"=", b0, b1) >= 0:
            buf, b0, b1 = _clean(buf, b0, b1)
        named = re.search(rb"\bNOM\s*=\s*(\S+)", b" ".join(words), re.IGNORECASE)
        name = named.group(1) if named else None
        if name is None:
            toks = bytes(buf[b0:min(b1, b0 + 4096)]).split(None, 1)
            if not toks:
                mesh.issues.append(MeshIssue("malformed-data", f"{word} without a name", line))
                return
            name = toks[0]
            b0 = buf.find(name, b0, b1) + len(name)
        key = name.decode("latin-1")
        target = mesh.groups if word == "GROUP_MA" else mesh.node_groups
        target.setdefault(key, []).append(Group(word, key, buf, b0, b1, line))
    elif _CELL.match(word):
        nodes = cell_nodes(word)
        n, buf, b0, b1 = _tokens(buf, b0, b1)
        if n % (nodes + 1):
            mesh.issues.append(MeshIssue("malformed-data", f"{word}: {n} fields are not whole cells of a name and "
                                         f"{nodes} nodes", line))
        mesh.cells.append(Cells(word, nodes, buf, b0, b1, line, n // (nodes + 1)))
    elif word not in ("TITRE", "FINSF"):
        mesh.issues.append(MeshIssue("unknown-option", f"section {word} is not read", line))


def _floats(chunk: bytes, dim: int) -> np.ndarray:
    toks = chunk.split()
    if toks and len(toks) % (dim + 1) == 0:
        try:
            return np.array(toks).reshape(-1, dim + 1)[:, 1:].astype(float)
        except ValueError:          # a line with another field count, or Fortran D exponents: line by line
            pass
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
