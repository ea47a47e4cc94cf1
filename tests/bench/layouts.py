"""Mesh cards written the ways pre-processors write them: one mesh, many layouts.

Used by the benchmark's layout matrix (``gen_layouts.py``) and by the layout tests
(``tests/parsers/test_layouts_*.py``), which check that every layout reads the same.

Keyword (``*NODE`` / ``*ELEMENT``) styles:

* ``comma``: ``1,2,3`` (no blanks); ``comma-blank``: ``1, 2, 3`` with ``%15.8e`` coordinates;
* ``tab``: a tab after each comma; ``trailing``: a trailing comma and blanks after every line;
* ``padded``: right-aligned fields ``%10d,`` / ``%16.8e,``; ``wrap8``: at most 8 entries per line, a
  trailing comma before each break (long elements go on over several lines);
* ``comments``: a ``**`` comment line and a blank line every 7 lines inside the blocks.

Elements of more than 15 nodes always go on over a second line after 16 entries (CalculiX reads at
most 16 fields of a line). Bulk styles (``free``, ``small``, ``large``, ``mixed``, ``tab``,
``blank-cont``) are described at :func:`bulk_mesh`.
"""
from __future__ import annotations

import numpy as np

KEYWORD_STYLES = ("comma", "comma-blank", "tab", "trailing", "padded", "wrap8", "comments")
#: styles meshio 5.3's abaqus reader reads (it ends a block at any line starting with "*", and a trailing
#: comma on a node line stops it: both seen here)
MESHIO_KEYWORD = ("comma", "comma-blank", "tab", "padded", "wrap8")
ROWS = 100_000


def _fmt_int(style: str) -> str:
    return "%10d" if style == "padded" else "%d"


def _fmt_real(style: str) -> str:
    return {"comma-blank": "%15.8e", "padded": "%16.8e"}.get(style, "%.10g")


def _sep(style: str) -> str:
    return {"comma": ",", "tab": ",\t", "comments": ","}.get(style, ", ")


def _split(n: int, style: str) -> list[int]:
    """Entries per physical line of a row of n entries."""
    per = 8 if style == "wrap8" else 16
    out = []
    while n > 0:
        out.append(min(per, n))
        n -= per
    return out


def row_format(n: int, style: str, real: bool = False) -> str:
    """printf format of one row of n entries (an id then n-1 ints or reals), newline(s) included."""
    fi = _fmt_int(style)
    fr = _fmt_real(style) if real else fi
    items = [fi] + [fr] * (n - 1)
    sep = _sep(style)
    lines, at = [], 0
    for k in _split(n, style):
        lines.append(sep.join(items[at:at + k]))
        at += k
    end = ",  \n" if style == "trailing" else "\n"
    return (sep.rstrip() + "\n").join(lines) + end if len(lines) > 1 else lines[0] + end


def write_rows(fh, fmt: str, columns: list, style: str) -> None:
    """Rows ``fmt % row`` in chunks; ``comments`` style: a comment and a blank line every 7 rows."""
    n = len(columns[0])
    for s in range(0, n, ROWS):
        rows = zip(*(np.asarray(c[s:s + ROWS]).tolist() for c in columns))
        if style == "comments":
            fh.write("".join((fmt % r) + ("** seven more\n\n" if (s + i) % 7 == 6 else "")
                             for i, r in enumerate(rows)))
        else:
            fh.write("".join(fmt % r for r in rows))


def keyword_mesh(fh, coords, conn, etype: str, style: str, node_ids=None, elem_ids=None,
                 elsets=None) -> None:
    """``*NODE`` and ``*ELEMENT`` cards of one mesh (``elsets``: [(name, lo, hi)] split of the elements)."""
    nn, ne = len(coords), len(conn)
    node_ids = np.arange(1, nn + 1) if node_ids is None else node_ids
    elem_ids = np.arange(1, ne + 1) if elem_ids is None else elem_ids
    fh.write("*NODE, NSET=NALL\n")
    write_rows(fh, row_format(4, style, real=True), [node_ids, *np.asarray(coords, dtype=float).T], style)
    width = conn.shape[1] + 1
    for name, lo, hi in elsets or [("EALL", 0, ne)]:
        fh.write(f"*ELEMENT, TYPE={etype}, ELSET={name}\n")
        write_rows(fh, row_format(width, style), [elem_ids[lo:hi], *conn[lo:hi].T], style)


# --------------------------------------------------------------------------- bulk data

BULK_STYLES = ("free", "small", "large", "mixed", "tab", "blank-cont")
#: styles meshio 5.3's nastran reader reads (seen here: of a large-field deck it reads the GRID* entries but
#: no CHEXA* element; it takes a blank-continuation CHEXA for 6 nodes; a tab-separated deck stops it)
MESHIO_BULK = ("free", "small", "mixed")


def _f8(x: np.ndarray) -> list[str]:
    """8-character real fields (a plain decimal when it fits, else a compact exponent)."""
    out = []
    for v in np.asarray(x, dtype=float).tolist():
        s = "%.8g" % v
        if "e" not in s and "." not in s:
            s += "."
        if len(s) > 8:
            s = ("%.2e" % v).replace("e+0", "+").replace("e-0", "-").replace("e+", "+").replace("e", "")
        out.append(s.rjust(8))
    return out


def bulk_mesh(fh, coords, conn, pid, style: str, card: str = "CHEXA", node_ids=None, elem_ids=None) -> None:
    """GRID and element cards.

    * ``free``: ``GRID,id,,x,y,z`` and ``CHEXA,...,+`` / ``+,n7,n8``;
    * ``small``: 8-character fields, ``+Cn`` continuation ids in field 10 / field 1;
    * ``large``: ``GRID*`` / ``CHEXA*`` with 16-character fields, ``*Cn`` continuations;
    * ``mixed``: large-field GRID, small-field elements;
    * ``tab``: fields separated by tabs (no commas);
    * ``blank-cont``: small field with blank continuation markers (field 10 and field 1 empty).
    """
    nn, ne = len(coords), len(conn)
    node_ids = np.arange(1, nn + 1) if node_ids is None else node_ids
    elem_ids = np.arange(1, ne + 1) if elem_ids is None else elem_ids
    grid_style = "large" if style == "mixed" else style
    elem_style = "small" if style == "mixed" else style
    for s in range(0, nn, ROWS):
        ids = node_ids[s:s + ROWS].tolist()
        xyz = np.asarray(coords[s:s + ROWS], dtype=float)
        fh.write("".join(_grid_lines(grid_style, ids, xyz)))
    for s in range(0, ne, ROWS):
        fh.write("".join(_elem_lines(elem_style, card, elem_ids[s:s + ROWS].tolist(),
                                     np.asarray(pid[s:s + ROWS]).tolist(), conn[s:s + ROWS].tolist())))


def _grid_lines(style, ids, xyz):
    if style == "free":
        return ["GRID,%d,,%.10g,%.10g,%.10g\n" % (i, *p) for i, p in zip(ids, xyz.tolist())]
    if style == "tab":
        return ["GRID\t%d\t\t%.6g\t%.6g\t%.6g\n" % (i, *p) for i, p in zip(ids, xyz.tolist())]
    if style == "large":
        return ["GRID*   %16d%16s%16.9e%16.9e*G%d\n*G%-6d%16.9e\n" % (i, "", p[0], p[1], i, i, p[2])
                for i, p in zip(ids, xyz.tolist())]
    x, y, z = (_f8(xyz[:, k]) for k in range(3))
    return ["GRID    %8d        %s%s%s\n" % (i, a, b, c) for i, a, b, c in zip(ids, x, y, z)]


def _elem_lines(style, card, eids, pids, conn):
    out = []
    for e, p, c in zip(eids, pids, conn):
        f = [e, p, *c]
        if style in ("free", "tab"):
            sep = "," if style == "free" else "\t"
            lines = [sep.join([card] + ["%d" % v for v in f[:8]])]
            for k in range(8, len(f), 8):
                lines.append(sep.join(["+"] + ["%d" % v for v in f[k:k + 8]]))
            out.append((sep + "+\n" if style == "free" else "\n").join(lines) + "\n")
        elif style == "large":
            head = "%-8s" % (card + "*")
            lines = [head + "".join("%16d" % v for v in f[:4])]
            for k in range(4, len(f), 4):
                lines.append("%-8s" % ("*C%d" % (k // 4)) + "".join("%16d" % v for v in f[k:k + 4]))
            out.append("".join(ln + ("*C%d" % (j + 1) if j + 1 < len(lines) else "") + "\n"
                               for j, ln in enumerate(lines)))
        else:
            blank = style == "blank-cont"
            lines = ["%-8s" % card + "".join("%8d" % v for v in f[:8])]
            for k in range(8, len(f), 8):
                lines.append(("        " if blank else "%-8s" % ("+C%d" % (k // 8)))
                             + "".join("%8d" % v for v in f[k:k + 8]))
            out.append("".join(ln + ("" if blank or j + 1 == len(lines) else "+C%d" % (j + 1)) + "\n"
                               for j, ln in enumerate(lines)))
    return out
