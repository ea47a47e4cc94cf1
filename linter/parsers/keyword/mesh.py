"""Mesh cards of keyword decks, read as byte ranges: ``*NODE``, ``*ELEMENT``, ``*ELSET``.

Nothing here makes one Python object per node or element: counts come from
``bytes.count``; ids, connectivity and coordinates are parsed with numpy, lazily.
"""
from __future__ import annotations

import io
import warnings
from typing import Optional

import numpy as np

from ...model import ElementBlock, ElementSet, Lazy, Loc, norm_key
from .. import aligned, buffers, sampling
from . import rows
from .lex import KeywordLine, Reader, is_int

#: nodes per element for types with more than 15 nodes (their elements span two lines);
#: used when the element catalogue is not available
LONG_TYPES = {"C3D20": 20, "C3D20R": 20, "C3D20RI": 20, "DC3D20": 20, "C3D20T": 20, "C3D20RT": 20,
              "C3D15": 15, "DC3D15": 15, "F3D20": 20}
MAX_INT_DIGITS = 10
#: bytes of element lines per piece when a rule goes over a block piece by piece (bounded memory)
STREAM_PIECE = 2 << 20
MAX_GENERATE = 50_000_000
#: node lines above this many bytes may be read by a helper process (``Lazy.start``)
BACKGROUND_NODE_BYTES = 8 << 20


def numbers(chunk: bytes) -> np.ndarray:
    """All comma/line separated numbers of a chunk as float64 (``rows``: any separator style;
    blank fields read 0, a field that is not a number nan)."""
    return rows.values(rows.compact(chunk))


def _ints(data: bytes, start: int, end: int, width: int, per_line: bool) -> np.ndarray:
    """(elements, width) int64 table: number and nodes, grouped into elements as CalculiX does (``rows``);
    ``per_line``: one element per data line (the usual layouts; fields after the last node are not read)."""
    width = max(width, 1)
    tabs = [t for t, _inc in rows.element_tables(data, start, end, width, per_line=per_line)]
    return np.concatenate(tabs) if len(tabs) > 1 else tabs[0] if tabs else np.zeros((0, width), dtype=np.int64)


def _pieces(table: Lazy, data: bytes, start: int, end: int, width: int, per_line: bool):
    """(ids, connectivity) of a block piece by piece (the whole table when it is loaded already)."""
    if table.loaded:
        tab = table.get()
        yield tab[:, 0], tab[:, 1:]
        return
    for tab, _inc in rows.element_tables(data, start, end, max(width, 1), STREAM_PIECE, per_line):
        yield tab[:, 0], tab[:, 1:]


def read_element(rd: Reader, kw: KeywordLine, start: int, end: int, first_line: int, dialect: str,
                 catalogue, model, nlines: int) -> None:
    etype_w = (kw.get("TYPE") or "").strip()
    etype = "".join(etype_w.split()).upper()
    if not etype:
        rd.issue("malformed-data", "*ELEMENT without TYPE= (CalculiX: element type is lacking)", kw.loc.line)
    nodes = 0
    if catalogue is not None and etype:
        entry = catalogue.get(etype, dialect)
        if entry is None:
            rd.issue("unknown-element-type", f"element type {etype_w} is not a {dialect} element type "
                     "(the solver refuses it)", kw.loc.line, type=etype)
        else:
            nodes = int(getattr(entry, "nodes", 0) or 0)
    if not nodes:
        nodes = LONG_TYPES.get(etype, 0)
    first = rows.first_fields(rd.data, start, min(end, start + 4096))
    spans = bool(nodes) and first is not None and first < nodes + 1
    count = nlines
    if not spans:
        if not nodes and first is not None:
            nodes = max(0, first - 1)
        # the usual layouts (one element per line, with or without a trailing comma) pass this test;
        # otherwise some line is not one element: group the lines as CalculiX does
        spans = bool(nodes) and buffers.count(rd.data, b",", start, end) not in (nlines * nodes,
                                                                                nlines * (nodes + 1))
    if spans:                        # elements continue on the next lines (grouped as CalculiX does)
        count, incomplete = rows.element_count(rd.data, start, end, nodes + 1, STREAM_PIECE)
        if incomplete:
            rd.issue("truncated", f"*ELEMENT, TYPE={etype_w}: the last element of the block has fewer than "
                     f"{nodes} nodes (CalculiX: element definition incomplete)", kw.loc.line, type=etype)
    width = nodes + 1
    data = rd.data
    per_line = not spans
    table = Lazy(lambda: _ints(data, start, end, width, per_line))
    elset_w = kw.get("ELSET")
    blk = ElementBlock(type=etype, type_as_written=etype_w, count=count, loc=kw.loc,
                       elset=norm_key(elset_w) if elset_w else None, nodes=nodes,
                       ids=Lazy(lambda: table.get()[:, 0].copy()), conn=Lazy(lambda: table.get()[:, 1:]),
                       pieces=lambda: _pieces(table, data, start, end, width, per_line))
    model.element_blocks.append(blk)
    if elset_w:
        es = _set(model, elset_w, kw.loc)
        es.blocks.append(len(model.element_blocks) - 1)


def _set(model, name: str, loc: Loc) -> ElementSet:
    key = norm_key(name)
    es = model.element_sets.get(key)
    if es is None:
        es = model.element_sets[key] = ElementSet(name=name.strip(), key=key, loc=loc)
    es.defined_at.append(loc)
    return es


def read_elset(rd: Reader, kw: KeywordLine, start: int, end: int, first_line: int, model,
               card_defined: set) -> None:
    name = kw.get("ELSET")
    if not name:
        rd.issue("malformed-data", "*ELSET without ELSET= (the set name is required)", kw.loc.line)
        return
    key = norm_key(name)
    if key in card_defined:
        first = model.element_sets[key].defined_at[0] if key in model.element_sets else kw.loc
        rd.issue("duplicate-set", f"element set {name.strip()} is defined again (first at {first}); "
                 "CalculiX adds the elements to it", kw.loc.line, set=key)
    card_defined.add(key)
    es = _set(model, name, kw.loc)
    generate = "GENERATE" in kw.params
    if not generate and end - start > 1 << 20:      # big explicit set: numpy, no per-line Python
        vals = numbers(rd.data[start:end])
        if np.isfinite(vals).all() and (vals.size == 0 or np.abs(vals).max() < 1e10):
            es.ids.append(vals.astype(np.int64))
            return
    for line in rd.lines(start, end, first_line):
        if generate:
            f = [x for x in line.fields]
            if len(f) < 2 or not f[0] or not f[1] or not all(is_int(x) for x in f[:3] if x != ""):
                rd.issue("malformed-data", f"*ELSET, GENERATE needs 'first, last[, increment]': {line.raw.strip()}",
                         line.loc.line)
                continue
            if any(len(x.lstrip("+-")) > MAX_INT_DIGITS for x in f[:3]):
                rd.issue("malformed-data", f"*ELSET, GENERATE: a number has more than {MAX_INT_DIGITS} digits "
                         "(CalculiX reads integers with i10)", line.loc.line)
                continue
            a, b = int(f[0]), int(f[1])
            inc = int(f[2]) if len(f) > 2 and f[2] else 1
            if inc <= 0:
                rd.issue("malformed-data", f"*ELSET, GENERATE increment {inc} is not positive", line.loc.line)
                continue
            if (b - a) // inc > MAX_GENERATE:
                rd.issue("malformed-data", f"*ELSET, GENERATE {a}..{b} would make more than {MAX_GENERATE} ids; "
                         "not expanded", line.loc.line)
                continue
            es.ids.append(np.arange(a, b + 1, inc, dtype=np.int64))
            continue
        ids = []
        for f in line.fields:
            if not f:
                continue
            if is_int(f):
                if len(f.lstrip("+-")) > MAX_INT_DIGITS:
                    rd.issue("malformed-data", f"element number {f} has more than {MAX_INT_DIGITS} digits "
                             "(CalculiX reads integers with i10)", line.loc.line)
                    continue
                ids.append(int(f))
            else:
                es.nested.append(norm_key(f))
        if ids:
            es.ids.append(np.array(ids, dtype=np.int64))


def read_node(rd: Reader, kw: KeywordLine, start: int, end: int, model, nlines: int) -> None:
    n = nlines
    geo = model.geometry
    geo.node_count += n
    if n == 0:
        return
    data = rd.data
    if n <= sampling.EXACT_NODES_LIMIT:
        table = _node_table(data[start:end])
        exact = True
    else:
        table = _node_sample(data, start, end, n)
        exact = False
        sampled = table.shape[0]
    table = table[np.isfinite(table).all(axis=1)]
    if table.size:
        lo, hi = table[:, 1:].min(axis=0), table[:, 1:].max(axis=0)
        if geo.bbox_min is None:
            geo.bbox_min, geo.bbox_max = lo, hi
        else:
            geo.bbox_min, geo.bbox_max = np.minimum(geo.bbox_min, lo), np.maximum(geo.bbox_max, hi)
    if not exact:
        geo.exact = False
        geo.note = (f"bounding box estimated from a sample of {sampled} of the {n} node lines "
                    f"of the *NODE card at line {kw.loc.line}")
    parts = model.extras.setdefault("_node_ranges", [])
    parts.append((data, start, end))
    if geo.nodes is None:
        ranges = parts
        geo.nodes = Lazy(lambda: _all_nodes(ranges), early=lambda: _nodes_early(ranges))


def _node_table(chunk: bytes) -> np.ndarray:
    """(n, 4) array id, x, y, z (missing coordinates are 0, as ccx reads them)."""
    return rows.node_table(rows.compact(chunk))


def _node_sample(data: bytes, start: int, end: int, n_lines: int) -> np.ndarray:
    """The node table of a sample of the block's lines (``sampling``), parsed with numpy in one go."""
    want = sampling.sample_size(n_lines)
    sample = sampling.line_pieces(data, start, end, n_lines, want)
    buffers.release(data, start, end)                   # a mapped file: the sampled pages go back
    return _node_table(sample)


def _nodes_early(ranges):
    """The node table read by a helper process while the caller reads elements (``linter.background``);
    None (read when asked) for a small table."""
    if sum(e - s for _d, s, e in ranges) < BACKGROUND_NODE_BYTES:
        return None
    from ... import background

    return background.start(lambda: _all_nodes(ranges))


def _all_nodes(ranges) -> tuple[np.ndarray, np.ndarray]:
    """(ids, coordinates) of every node line; the coordinates column by column in memory (x, y, z each
    contiguous), as the mesh measures use them."""
    total = sum(buffers.count(d, b"\n", s, e) + 1 for d, s, e in ranges)     # at least the data lines
    gid, xyz, n = np.zeros(total, dtype=np.int64), np.zeros((3, total)).T, 0
    for d, s, e in ranges:                  # filled piece by piece: no full-size temporary
        for piece, _last in rows.pieces(d, s, e, raw=True):
            tab = aligned.rows(piece, 4)
            if tab is None:
                tab = plain_rows(piece, 4)
            if tab is None:
                tab = rows.node_table(rows.compact(piece))
            gid[n:n + tab.shape[0]], xyz[n:n + tab.shape[0]] = rows.to_int(tab[:, 0]), tab[:, 1:]
            n += tab.shape[0]
    return gid[:n], xyz[:n]


def plain_rows(chunk: bytes, width: int) -> Optional[np.ndarray]:
    """(lines, width) float64 table of data lines that all hold the same number of plain numbers separated
    by commas (blanks around them allowed; missing fields 0, fields after ``width`` not kept), read by
    numpy's C text reader; None for anything else (blank fields, trailing commas, comment lines, Fortran
    ``D`` exponents, a blank inside a number, a value that is not finite ...), which ``rows`` reads as CalculiX
    does. Where it gives a table, it is the one ``rows.node_table(rows.compact(chunk))`` gives: both
    convert each field with a correctly rounding decimal-to-double conversion (``tests/parsers/
    test_keyword_nodes.py`` compares them bit for bit)."""
    if not chunk or chunk.isspace() or b"*" in chunk or b"\x0b" in chunk or b"\x0c" in chunk:
        return None
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            tab = np.loadtxt(io.BytesIO(chunk), delimiter=",", dtype=np.float64, comments=None, ndmin=2,
                             encoding="latin-1")
    except (ValueError, TypeError, UnicodeError):
        return None
    if not np.isfinite(tab).all():
        return None
    if tab.shape[1] >= width:
        return tab[:, :width] if tab.shape[1] > width else tab
    out = np.zeros((tab.shape[0], width))
    out[:, :tab.shape[1]] = tab
    return out
