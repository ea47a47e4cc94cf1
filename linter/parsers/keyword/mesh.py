"""Mesh cards of keyword decks, read as byte ranges: ``*NODE``, ``*ELEMENT``, ``*ELSET``.

Nothing here makes one Python object per node or element: counts come from
``bytes.count``; ids, connectivity and coordinates are parsed with numpy, lazily.
"""
from __future__ import annotations

import re
import numpy as np

from ...model import ElementBlock, ElementSet, Lazy, Loc, norm_key
from .. import sampling
from .lex import KeywordLine, Reader, is_int

#: nodes per element for types with more than 15 nodes (their elements span two lines);
#: used when the element catalogue is not available
LONG_TYPES = {"C3D20": 20, "C3D20R": 20, "C3D20RI": 20, "DC3D20": 20, "C3D20T": 20, "C3D20RT": 20,
              "C3D15": 15, "DC3D15": 15, "F3D20": 20}
MAX_INT_DIGITS = 10
MAX_GENERATE = 50_000_000
_COMMENT_LINE = re.compile(rb"(?m)^[ \t]*\*\*.*\n?")
_BLANK_LINE = re.compile(rb"(?m)^[ \t,]*\n")
_HAS_BLANK_LINE = re.compile(rb"(?:^|\n)[ \t,]*\n")
_TRAILING = re.compile(rb",[ \t]*(?=\n)")
_HAS_TRAILING = re.compile(rb",[ \t]*\n")


def _clean(chunk: bytes) -> bytes:
    """Comments, blank lines and trailing commas removed; D exponents as E; newline at the end."""
    if b"**" in chunk:
        chunk = _COMMENT_LINE.sub(b"", chunk)
    if not chunk.endswith(b"\n"):
        chunk += b"\n"
    if _HAS_BLANK_LINE.search(chunk):           # the searches are fast scans; the substitutions are not
        chunk = _BLANK_LINE.sub(b"", chunk)
    if _HAS_TRAILING.search(chunk):
        chunk = _TRAILING.sub(b"", chunk)
    return chunk


def _fast(chunk: bytes, dtype) -> "np.ndarray | None":
    """The numbers of a chunk with no comment, blank line or trailing comma (None when it has any)."""
    if b"*" in chunk or len(chunk) < 4096:
        return None
    flat = chunk.rstrip(b"\n").replace(b"\n", b",")
    if dtype is float and (b"d" in flat or b"D" in flat):
        return None
    import warnings

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        try:
            arr = np.fromstring(flat, dtype=dtype, sep=",")
        except ValueError:
            return None
    return arr if arr.size == flat.count(b",") + 1 else None


def integers(chunk: bytes) -> np.ndarray:
    """All comma/line separated integers of a chunk (int64; a field that is not an integer reads as 0)."""
    arr = _fast(chunk, np.int64)
    if arr is None:
        arr = _fast(_clean(chunk), np.int64)
    if arr is None:
        arr = _to_int(numbers(chunk))
    return arr


def _to_int(arr: np.ndarray) -> np.ndarray:
    """Floats as int64; nan and out-of-range values (not element or node numbers anyway) become 0."""
    arr = np.where(np.isfinite(arr) & (np.abs(arr) < 2.0 ** 62), arr, 0.0)
    return arr.astype(np.int64)


def numbers(chunk: bytes, cleaned: bool = False) -> np.ndarray:
    """All comma/line separated numbers of a chunk as float64 (nan where a field is not a number)."""
    arr = _fast(chunk, float)
    if arr is not None:
        return arr
    if not cleaned:
        chunk = _clean(chunk)
    if not chunk.strip():
        return np.zeros(0)
    if b"d" in chunk or b"D" in chunk:
        chunk = chunk.replace(b"D", b"E").replace(b"d", b"e")
    flat = chunk.replace(b"\n", b",").rstrip(b",")
    arr = None
    if len(flat) < 4096:
        try:
            arr = np.array(flat.split(b","), dtype=float)
        except ValueError:
            arr = None
    else:
        import warnings

        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            try:
                arr = np.fromstring(flat, dtype=float, sep=",")
            except ValueError:
                arr = None
        if arr is not None and arr.size != flat.count(b",") + 1:
            arr = None
    if arr is None:                                  # a field that is not a number: slow exact path
        out = []
        for f in flat.split(b","):
            try:
                out.append(float(f))
            except ValueError:
                out.append(np.nan)
        arr = np.array(out, dtype=float)
    return arr


def _ints(data: bytes, start: int, end: int, width: int, per_line: bool) -> np.ndarray:
    """(elements, width) int64 table: id and nodes. ``per_line``: one element per data line, as ccx reads
    types of up to 15 nodes (fields after the last node are not read)."""
    width = max(width, 1)
    chunk = data[start:end]
    arr = integers(chunk)
    lines = None
    if per_line:
        n_lines = chunk.count(b"\n") + (0 if chunk.endswith(b"\n") else 1)
        if n_lines * width != arr.size:
            lines = _clean(chunk)
            lines = lines if lines.count(b"\n") * width != arr.size else None
    if lines is not None:                     # ragged lines: the first ``width`` fields of each
        rows = [numbers(line) for line in lines.split(b"\n") if line.strip()]
        tab = np.zeros((len(rows), width))
        for i, r in enumerate(rows):
            tab[i, : min(width, r.size)] = r[:width]
        arr = _to_int(tab).ravel()
    arr = arr[: arr.size - arr.size % width]
    return arr.reshape(-1, width)


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
    first = next(rd.lines(start, min(end, start + 4096), first_line), None)
    spans = nodes > 15 or (first is not None and nodes and len(first.fields) < nodes + 1)
    if spans:                        # elements continue on the next line: count the numbers
        vals = numbers(rd.data[start:end])
        count = int(vals.size // (nodes + 1))
        if vals.size % (nodes + 1):
            rd.issue("truncated", f"*ELEMENT, TYPE={etype_w}: {vals.size} numbers are not a whole number of "
                     f"elements of {nodes} nodes", kw.loc.line, type=etype)
    else:
        count = nlines
        if not nodes and first is not None:
            nodes = max(0, len(first.fields) - 1)
    width = nodes + 1
    data = rd.data
    per_line = not spans
    table = Lazy(lambda: _ints(data, start, end, width, per_line))
    elset_w = kw.get("ELSET")
    blk = ElementBlock(type=etype, type_as_written=etype_w, count=count, loc=kw.loc,
                       elset=norm_key(elset_w) if elset_w else None, nodes=nodes,
                       ids=Lazy(lambda: table.get()[:, 0].copy()), conn=Lazy(lambda: table.get()[:, 1:]))
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
        geo.nodes = Lazy(lambda: _all_nodes(ranges))


def _node_table(chunk: bytes) -> np.ndarray:
    """(n, 4) array id, x, y, z (missing coordinates are 0, as ccx reads them)."""
    arr = _fast(chunk, float)                      # succeeds only on a chunk that needs no cleaning
    if arr is None:
        chunk = _clean(chunk)
        arr = numbers(chunk, cleaned=True)
    nl = chunk.find(b"\n")
    width = chunk[: nl if nl >= 0 else len(chunk)].count(b",") + 1
    n_lines = chunk.count(b"\n") + (0 if chunk.endswith(b"\n") or not chunk else 1)
    if width >= 2 and arr.size == n_lines * width:
        tab = arr.reshape(-1, width)
    else:                                            # ragged lines
        rows = [numbers(line) for line in chunk.split(b"\n") if line.strip()]
        tab = np.zeros((len(rows), max((len(r) for r in rows), default=1)))
        for i, r in enumerate(rows):
            tab[i, : len(r)] = r
    out = np.zeros((tab.shape[0], 4))
    out[:, : min(4, tab.shape[1])] = tab[:, :4]
    return out


def _node_sample(data: bytes, start: int, end: int, n_lines: int) -> np.ndarray:
    """The node table of a sample of the block's lines (``sampling``), parsed with numpy in one go."""
    want = sampling.sample_size(n_lines)
    return _node_table(sampling.line_pieces(data, start, end, n_lines, want))


def _all_nodes(ranges) -> tuple[np.ndarray, np.ndarray]:
    tabs = [_node_table(d[s:e]) for d, s, e in ranges]
    tab = np.concatenate(tabs) if tabs else np.zeros((0, 4))
    return _to_int(tab[:, 0]), tab[:, 1:]
