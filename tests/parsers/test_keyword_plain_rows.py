"""The one-call reading of element lines that all hold the element's fields (``rows.plain_int_rows``)
gives the table the general reading gives (``rows.line_rows(rows.compact(...))``, which follows CalculiX's
``splitline.f``: blanks and tabs removed, ``**`` and empty lines skipped, a trailing comma adds no field),
or declines; it must never give another table.
"""
from __future__ import annotations

import numpy as np
from hypothesis import example, given, settings
from hypothesis import strategies as st

from linter.parsers.keyword import rows

WIDTH = 9          # C3D8: element number and 8 nodes

SEPARATORS = st.sampled_from([",", ", ", " ,", ",\t", " , ", "\t,  ", ",\r"])
NUMBER = st.one_of(st.integers(1, 10**7).map(str),
                   st.sampled_from(["-1", "0", "+7", "1 2", "1\t2", "- 3", "1.5", "", " ", "x", "\x0b4", "5\x0c"]))


@st.composite
def lines(draw):
    out = []
    for _ in range(draw(st.integers(1, 12))):
        kind = draw(st.sampled_from(["plain"] * 6 + ["short", "long", "trailing", "comment", "empty", "odd"]))
        sep = draw(SEPARATORS)
        n = {"short": WIDTH - 1, "long": WIDTH + 1}.get(kind, WIDTH)
        fields = [str(draw(st.integers(1, 10**6))) for _ in range(n)]
        if kind == "odd":
            fields[draw(st.integers(0, n - 1))] = draw(NUMBER)
        text = sep.join(fields) + ("," if kind == "trailing" else "")
        out.append({"comment": "** pv40 casing", "empty": ""}.get(kind, text) + draw(st.sampled_from(["", " ", "\t", "\r", " \r"])))
    return "\n".join(out) + draw(st.sampled_from(["\n", ""]))


@settings(max_examples=300, deadline=None)
@given(lines())
@example("1, 2, 3, 4, 5, 6, 7, 8, -1\n2, 2, 3, 4, 5, 6, 7, 8, 9\n")    # a node number equal to the line-end mark
@example("1,2,3,4,5,6,7,8\n2,2,3,4,5,6,7,8,9,10\n")                 # short and long lines, equal totals
@example("1,2,3,4,5,6,7,8,9")                                          # no final line end
@example("1, 2, 3, 4, 5, 6, 7, 8, 9 \r\n2 ,2 ,3 ,4 ,5 ,6 ,7 ,8 ,9\t\n")  # blanks, tabs, CRs around numbers
@example("1, 2, 3, 4, 5, 6, 7, 8, 9\n2, 2, 3, 4, 5, 6, 7, 8, \n")       # a blank last field
def test_one_call_reading_agrees_with_the_general_reading(text):
    raw = text.encode()
    got = rows.plain_int_rows(raw, WIDTH)
    if got is None:
        return
    want = rows.line_rows(rows.compact(raw), WIDTH)
    np.testing.assert_array_equal(got, want)
    # and it only answers where every data line holds exactly the element's fields
    data = [ln.replace(" ", "").replace("\t", "") for ln in text.split("\n")]
    assert all(ln.count(",") == WIDTH - 1 for ln in data if ln)


def test_one_call_reading_answers_for_plain_lines_and_declines_the_rest():
    plain = "1, 10, 11, 12, 13, 14, 15, 16, 17\n2,\t20, 21, 22, 23, 24, 25, 26, 27\n"
    np.testing.assert_array_equal(rows.plain_int_rows(plain.encode(), WIDTH)[:, 0], [1, 2])
    for bad in (plain.replace("17\n", "17,\n"), plain + "** note\n", plain.replace("\n2", "\n\n2"),
                plain.replace("17", "-1")):
        assert rows.plain_int_rows(bad.encode(), WIDTH) is None, bad
