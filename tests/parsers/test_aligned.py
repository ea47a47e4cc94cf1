"""Node lines in aligned columns (``linter.parsers.aligned``): read without a text parser, bit for bit the
values a correctly rounding decimal-to-double conversion gives, or declined.

The reference outside the project is Python's ``float()`` on each written field (correctly rounded,
Python Language Reference, "Floating-point literals"); the reader's exactness argument is Clinger's fast
path (W. D. Clinger, "How to read floating point numbers accurately", PLDI 1990): an integer below 2^53
times or divided by 10^k, |k| <= 22, is rounded once. Inside the project, the reader must also agree with
the general keyword reader (``rows.node_table(rows.compact(...))``) wherever it answers.
"""
from __future__ import annotations

from unittest import mock

import numpy as np
import pytest
from hypothesis import example, given, settings
from hypothesis import strategies as st

from linter.parsers import aligned
from linter.parsers.keyword import rows

#: formats that write every value of a column with its point and exponent in the same place
FIXED = ("{:15.8e}", "{:16.7E}", "{:12.6f}", "{:+.5e}", "{:10.3f}", "{:13.1e}")
#: formats the reader declines or answers only in part (variable width, more than 8 fraction digits)
LOOSE = ("{:.16g}", "{!r}", "{:g}", "{:+.10e}")
SEPARATORS = (",", ", ", " , ", ",  ")


def lines(ids, xyz, fmt: str, sep: str, id_fmt: str) -> bytes:
    return "".join(id_fmt.format(int(i)) + sep + sep.join(fmt.format(float(v)) for v in row) + "\n"
                   for i, row in zip(ids, xyz)).encode()


def by_float(raw: bytes) -> np.ndarray:
    """The reference: float() of every field (blanks stripped), id, x, y, z."""
    return np.array([[float(f) for f in ln.split(b",")] for ln in raw.splitlines()], dtype=np.float64)


def bits(a) -> np.ndarray:
    return np.ascontiguousarray(a, dtype=np.float64).view(np.int64)


def coordinates(seed: int, n: int, scale: float) -> np.ndarray:
    rng = np.random.default_rng(seed)
    xyz = rng.normal(size=(n, 3)) * scale
    xyz[rng.random((n, 3)) < 0.1] = 0.0
    xyz[rng.random((n, 3)) < 0.05] = -0.0
    return xyz


@settings(max_examples=120, deadline=None)
@given(seed=st.integers(0, 2 ** 32 - 1), fmt=st.sampled_from(FIXED + LOOSE), sep=st.sampled_from(SEPARATORS),
       n=st.integers(1, 300), scale=st.sampled_from([1e-12, 1e-4, 1.0, 3e2, 1e5, 1e15]),
       id_fmt=st.sampled_from(["{:d}", "{:8d}", "{:<8d}", "{:>10d}"]), block=st.sampled_from([7, 4096]))
def test_aligned_reading_is_float_bit_for_bit_or_declines(seed, fmt, sep, n, scale, id_fmt, block):
    rng = np.random.default_rng(seed)
    ids = np.sort(rng.choice(np.arange(1, 1000 * n + 1), n, replace=False))
    raw = lines(ids, coordinates(seed, n, scale), fmt, sep, id_fmt)
    with mock.patch.object(aligned, "BLOCK", block):       # blocks of a run: also a short last block
        got = aligned.rows(raw, 4)
    if got is None:
        return
    np.testing.assert_array_equal(bits(got), bits(by_float(raw)))
    np.testing.assert_array_equal(bits(got), bits(rows.node_table(rows.compact(raw))))


@pytest.mark.parametrize("fmt", ["{:15.8e}", "{:16.7E}", "{:12.6f}", "{:+.5e}"])
def test_aligned_formats_are_read_by_the_fast_path(fmt):
    """Not a vacuous property: the usual pre-processor layouts are answered, not declined."""
    xyz = coordinates(7, 500, 250.0)
    raw = lines(np.arange(1, 501), xyz, fmt, ", ", "{:8d}")
    got = aligned.rows(raw, 4)
    assert got is not None
    np.testing.assert_array_equal(bits(got), bits(by_float(raw)))
    # ids of varying width (no padding): one run per id width, still answered
    raw = lines(np.arange(1, 501), xyz, fmt, ", ", "{:d}")
    assert aligned.rows(raw, 4) is not None


MUTANTS = b"0123456789 +-.eEdD,x\t*"


@settings(max_examples=300, deadline=None)
@given(pos=st.integers(0, 10 ** 6), byte=st.sampled_from(list(MUTANTS)), fmt=st.sampled_from(FIXED))
@example(pos=3, byte=ord(" "), fmt="{:15.8e}")
@example(pos=160, byte=ord("1"), fmt="{:16.7E}")     # the exponent letter of line 3 made a digit
def test_one_changed_byte_is_read_as_the_general_reader_reads_it_or_declined(pos, byte, fmt):
    xyz = coordinates(3, 40, 10.0)
    raw = bytearray(lines(np.arange(1, 41), xyz, fmt, ", ", "{:6d}"))
    at = pos % len(raw)
    if raw[at] == 10:                                     # keep the line structure
        return
    raw[at] = byte
    raw = bytes(raw)
    got = aligned.rows(raw, 4)
    if got is None:
        return
    np.testing.assert_array_equal(bits(got), bits(rows.node_table(rows.compact(raw))))
    np.testing.assert_array_equal(bits(got), bits(by_float(raw)))


@pytest.mark.parametrize("text, why", [
    (b"1, 1.0e+25, 0.0e+00, 0.0e+00\n", "exponent outside the exact fast path"),
    (b"1, 1.0D+00, 0.0D+00, 0.0D+00\n", "Fortran D exponent"),
    (b"1, 1.0e+00, 0.0e+00, 0.0e+00\r\n", "CR line end"),
    (b"1, 1.0e+00, 0.0e+00, 0.0e+00", "no final line end"),
    (b"1, 1.0e+00,, 0.0e+00\n", "blank field"),
    (b"123456789, 1.0, 2.0, 3.0\n", "nine digits"),
    (b"1, 1.123456789, 2.0, 3.0\n", "nine fraction digits"),
    (b"1, nan, 2.0, 3.0\n", "not a number"),
    (b"1, 1 .5, 2.0, 3.0\n", "a blank inside a number"),
    (b"1, -1.5, 2.0, 3.0\n2, 1-1.5, 2.0, 3.0\n", "a sign inside a number"),
    (b"1, 1.5, 2.0, 3.0\n2, 1.5.,2.0, 3.0\n", "a point and a comma moved"),
    (b"1, 1.5e+1, 2.0, 3.0\n2, 1.5e 1, 2.0, 3.0\n", "an exponent without its sign"),
    (b"".join(b"%d, %s, 0.0, 0.0\n" % (i, b"1." + b"0" * (i % 70)) for i in range(200)), "too many line lengths"),
])
def test_aligned_reading_declines(text, why):
    assert aligned.rows(text, 4) is None, why


def test_negative_zero_signs_and_exponent_letters_in_one_run():
    raw = (b"     1,  -0.00000000e+00,   1.50000000E-03,  -2.25000000e+02\n"
           b"     2,  +0.00000000e+00,  -1.50000000E+03,   2.25000000e-14\n")
    got = aligned.rows(raw, 4)
    assert got is not None
    np.testing.assert_array_equal(bits(got), bits(by_float(raw)))
    assert np.signbit(got[0, 1]) and not np.signbit(got[1, 1])


def test_fields_beyond_the_width_are_checked_and_missing_ones_read_zero():
    raw = b"1, 1.5, 2.5\n2, 3.5, 4.5\n"
    got = aligned.rows(raw, 4)
    np.testing.assert_array_equal(got, [[1, 1.5, 2.5, 0], [2, 3.5, 4.5, 0]])
    assert aligned.rows(b"1, 1.5, 2.5, 3.5, x\n", 4) is None


def test_node_blocks_of_the_corpus_are_read_as_the_general_reader_reads_them(corpus_dir):
    """Real decks written by others: every node block piece the reader answers is the general reader's table,
    bit for bit, and it answers for some (on 2026-12-05: 103 of the 170 pieces, 0 differences)."""
    import warnings

    from linter.parsers import ParseOptions
    from linter.parsers.keyword import parser as K

    decks = sorted((corpus_dir / "keyword").glob("*.inp"))
    if not decks:
        pytest.skip("no keyword decks in the corpus")
    answered = 0
    for path in decks:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            model = K.parse(str(path), ParseOptions())
        for data, start, end in model.extras.get("_node_ranges", []):
            for piece, _last in rows.pieces(data, start, end, raw=True):
                got = aligned.rows(piece, 4)
                if got is None:
                    continue
                answered += 1
                np.testing.assert_array_equal(bits(got), bits(rows.node_table(rows.compact(piece))), str(path))
    assert answered > 0
