"""The quick integer reading of fixed-field columns (``bulk.fixed._ints``) against the general one.

``fields.vec_int`` reads every field through numpy's string-to-integer cast (Python ``int`` rules:
leading and trailing blanks allowed, one sign, digits); ``_ints`` takes shortcuts (one read for a
column of identical fields; only blank/bad judged when the values are not wanted) that must give the
same blank and bad masks and, where values are read, the same values. Also: a plain large deck is
read through a memory map, and a deck that needs line-end normalisation is not.
"""
from __future__ import annotations

import numpy as np
import pytest
from hypothesis import example, given, settings
from hypothesis import strategies as st

from linter.parsers import ParseOptions, buffers
from linter.parsers.bulk import fixed
from linter.parsers.bulk import parser as B
from linter.parsers.bulk.fields import vec_int

FIELD = st.one_of(
    st.integers(-10**7, 10**8).map(str),
    st.just(""),
    st.sampled_from(["+12", "-0", "1 2", "12a", "1.", "007", " 5 ", "--1", "+", "9" * 16]),
)


def columns(cells: list[str], width: int, right: bool):
    """The cells written in ``width``-column fields, one per line (8 leading columns for the card name)."""
    text = b"".join(b"CHEXA   " + (c.rjust(width) if right else c.ljust(width))[:width].encode() + b"\n"
                    for c in cells)
    buf = np.frombuffer(text + b" " * 32, np.uint8)
    starts = np.arange(len(cells), dtype=np.int64) * (9 + width) + 8
    # a field ends where its line ends when trailing blanks were not written (as editors strip them)
    ends = starts + np.array([len((c.rjust(width) if right else c.ljust(width))[:width].rstrip()) for c in cells])
    return buf, starts, np.maximum(ends, starts)


@settings(max_examples=200, deadline=None)
@given(st.lists(FIELD, min_size=1, max_size=12), st.sampled_from([8, 16]), st.booleans(), st.booleans())
@example(["1 2", "3"], 8, True, False)
@example(["", ""], 16, False, False)
@example(["12", "12", "12"], 8, True, False)
def test_quick_ints_match_the_general_reader(cells, width, right, repeat):
    if repeat:
        cells = [cells[0]] * len(cells)         # a column of identical fields (one read)
    buf, s, e = columns(cells, width, right)
    want_vals, want_blank, want_bad = vec_int(buf, s, e)
    vals, blank, bad = fixed._ints(buf, s, e)
    np.testing.assert_array_equal(blank, want_blank)
    np.testing.assert_array_equal(bad, want_bad)
    np.testing.assert_array_equal(vals, want_vals)
    none, blank2, bad2 = fixed._ints(buf, s, e, values=False)
    np.testing.assert_array_equal(blank2, want_blank)
    np.testing.assert_array_equal(bad2, want_bad)
    if none is not None:
        np.testing.assert_array_equal(none, want_vals)


def test_digits_only_fields_are_judged_without_reading():
    buf, s, e = columns(["12", "", "7"], 8, True)
    vals, blank, bad = fixed._ints(buf, s, e, values=False)
    assert vals is None
    assert blank.tolist() == [False, True, False] and not bad.any()
    buf, s, e = columns(["1 2", "7"], 8, True)           # two runs of digits: read, and found bad
    vals, blank, bad = fixed._ints(buf, s, e, values=False)
    assert bad.tolist() == [True, False]


PLAIN = ("SOL 101\nCEND\nBEGIN BULK\nGRID,1,,0.,0.,0.\nGRID,2,,1.,0.,0.\nGRID,3,,0.,1.,0.\nGRID,4,,0.,0.,1.\n"
         "CTETRA,1,1,1,2,3,4\nPSOLID,1,1\nMAT1,1,210000.,,0.3,7.85e-9\nENDDATA\n")


def test_a_plain_deck_is_read_through_a_map(write_deck, monkeypatch):
    path = write_deck("pv40_mapped.bdf", PLAIN)
    monkeypatch.setattr(buffers, "MAP_ABOVE", 0)

    def no_copy(*a, **k):
        raise AssertionError("the plain deck was copied into memory")

    monkeypatch.setattr(buffers, "read_deck_bytes", no_copy)
    m = B.parse(str(path), ParseOptions())
    assert m.geometry.node_count == 4 and sum(b.count for b in m.element_blocks) == 1


@pytest.mark.parametrize("ends", ["\r\n", "\r"])
def test_a_deck_with_carriage_returns_is_read_normalised(write_deck, monkeypatch, ends):
    path = write_deck("pv40_crlf.bdf", PLAIN.replace("\n", ends))
    monkeypatch.setattr(buffers, "MAP_ABOVE", 0)
    m = B.parse(str(path), ParseOptions())
    assert m.geometry.node_count == 4 and sum(b.count for b in m.element_blocks) == 1
    assert [b.type for b in m.element_blocks] == ["CTETRA4"]
