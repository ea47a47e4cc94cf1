"""Whole node tables of keyword decks: the plain-number fast path reads exactly what the general reader reads.

``mesh.plain_rows`` (numpy's C text reader) must give, bit for bit, the table ``rows.node_table`` gives on
the compacted lines (the reader that follows CalculiX's line rules), or decline. The reference outside the
project is Python's ``float()`` on each written field (a correctly rounded decimal-to-double conversion,
Python Language Reference, "Floating-point literals" / ``float``).
"""
from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from linter.parsers.keyword import mesh as KM
from linter.parsers.keyword import rows

FORMATS = ("{:15.8e}", "{:.16g}", "{!r}", "{:12.6f}", "{:g}", "{:.3E}", "{:+.10e}")
SEPARATORS = (",", ", ", " ,  ", ",\t")


def general(chunk: bytes) -> np.ndarray:
    return rows.node_table(rows.compact(chunk))


def bits(a: np.ndarray) -> np.ndarray:
    return np.ascontiguousarray(a, dtype=np.float64).view(np.int64)


def node_lines(ids, xyz, fmt: str, sep: str, id_width: int = 0) -> bytes:
    return "".join(f"{int(i):>{id_width}d}{sep}" + sep.join(fmt.format(float(v)) for v in row) + "\n"
                   for i, row in zip(ids, xyz)).encode()


@settings(max_examples=60, deadline=None)
@given(seed=st.integers(0, 2 ** 32 - 1), fmt=st.sampled_from(FORMATS), sep=st.sampled_from(SEPARATORS),
       n=st.integers(1, 80), scale=st.sampled_from([1e-9, 1e-3, 1.0, 1e3, 1e7]), id_width=st.sampled_from([0, 8]))
def test_plain_rows_equal_the_general_reader_bit_for_bit(seed, fmt, sep, n, scale, id_width):
    rng = np.random.default_rng(seed)
    ids = rng.choice(np.arange(1, 10 * n + 1), n, replace=False)
    xyz = rng.uniform(-1, 1, (n, 3)) * scale
    xyz[rng.random((n, 3)) < 0.1] = 0.0
    raw = node_lines(ids, xyz, fmt, sep, id_width)
    got = KM.plain_rows(raw, 4)
    assert got is not None
    ref = general(raw)
    np.testing.assert_array_equal(bits(got), bits(ref))
    # outside reference: Python's float() of every written field
    written = [[float(f) for f in line.replace(b"\t", b"").split(b",")] for line in raw.splitlines()]
    np.testing.assert_array_equal(bits(got), bits(np.array(written)))


@pytest.mark.parametrize("text", [
    b"1, 1.0, 2.0\n2, 3.0, 4.0\n",                 # no z: read as 0 (ccx reads missing coordinates as 0)
    b"1, 1.0, 2.0, 3.0, 9, 9\n2, 3.0, 4.0, 5.0, 9, 9\n",   # fields after the 4th not kept
    b"\n1,1,2,3\n\n2,4,5,6\n",                     # empty lines skipped
    b"7,-0.0,+1.5,.5\n",                           # signs, bare point
])
def test_plain_rows_layouts_it_reads(text):
    got = KM.plain_rows(text, 4)
    assert got is not None and got.shape == (text.strip().count(b"\n") - text.count(b"\n\n") + 1, 4)
    np.testing.assert_array_equal(bits(got), bits(general(text)))


@pytest.mark.parametrize("text", [
    b"1,1.,2.,3.,\n",                              # trailing comma
    b"1,,2.,3.\n",                                 # blank field (reads 0 in ccx)
    b"1,1.,2.,3.\n** a comment\n2,1.,2.,3.\n",     # comment line
    b"1,1.5D3,2.,3.\n",                            # Fortran D exponent
    b"1,1 .5,2.,3.\n",                             # blank inside a number (ccx removes it: 1.5)
    b"1,1.,2.,3.\n2,1.,2.\n",                      # lines with different numbers of fields
    b"1,nan,2.,3.\n",                              # not finite
    b"1,1.,2.,3.\n   \n2,1.,2.,3.\n",              # a blank line of spaces
    b"1,1_0,2.,3.\n",                              # a digit separator
    b"",
])
def test_plain_rows_declines_what_the_general_reader_must_read(text):
    assert KM.plain_rows(text, 4) is None


@pytest.mark.parametrize("piece", [64, 1 << 20])
def test_all_nodes_mixes_both_readers_in_file_order(monkeypatch, piece):
    # pieces that the fast path reads and pieces it declines (comments, trailing commas) in one block
    monkeypatch.setattr(rows, "PIECE", piece)
    rng = np.random.default_rng(1)
    parts, want = [], []
    for k in range(6):
        ids = np.arange(1 + 100 * k, 1 + 100 * k + 40)
        xyz = rng.uniform(-50, 50, (40, 3))
        text = node_lines(ids, xyz, "{:15.8e}", ", ")
        if k % 3 == 1:
            text = text.replace(b"\n", b",\n")
        if k % 3 == 2:
            text = b"** part %d\n" % k + text
        parts.append(text)
        want.append(np.column_stack([ids, xyz]))
    data = b"".join(parts)
    gid, xyz = KM._all_nodes([(data, 0, len(data))])
    want = np.concatenate(want)
    np.testing.assert_array_equal(gid, want[:, 0].astype(np.int64))
    np.testing.assert_array_equal(bits(xyz), bits(general(data)[:, 1:]))
    np.testing.assert_allclose(xyz, want[:, 1:], rtol=1e-8)     # %15.8e keeps 9 significant digits


def test_lines_of_unequal_length_are_read_line_by_line():
    # 4 + 3 + 5 fields hold as many numbers as three lines of 4, yet each data line of *NODE is one node
    # (CalculiX User's Manual, *NODE: one line per node); a missing coordinate reads 0 and fields after the
    # 4th are not read, as rows.node_table documents
    chunk = b"1,2,3,4\n5,6,7\n8,9,10,11,12\n"
    got = general(chunk)
    assert got.tolist() == [[1, 2, 3, 4], [5, 6, 7, 0], [8, 9, 10, 11]]
    assert KM.plain_rows(chunk, 4) is None       # the fast path declines uneven lines
