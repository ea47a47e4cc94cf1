"""Large keyword decks are memory-mapped (``linter/parsers/buffers.py``): the model must be the one the
bytes path gives, for every layout, and a file that needs decoding or line-end normalisation is read
as before. The keyword-line scan (``scan.special_lines``) is compared with a line-by-line reading of its
own definition (a keyword line starts, after blanks and tabs, with one ``*``; ``**`` lines and blank
lines are counted apart), whatever the chunk size."""
from __future__ import annotations

import io
import os

import numpy as np
import pytest
from benchload import load
from hypothesis import given, settings
from hypothesis import strategies as st

from linter.parsers import ParseOptions, buffers
from linter.parsers.keyword import parser as K
from linter.parsers.keyword import scan as KS

L = load("layouts")


def deck(style: str) -> str:
    rng = np.random.default_rng(7)
    coords = np.round(rng.uniform(-50, 50, (30, 3)), 4)
    conn = rng.integers(1, 31, (24, 8))
    fh = io.StringIO()
    fh.write("** pv40 impeller block\n*HEADING\npv40\n")
    L.keyword_mesh(fh, coords, conn, "C3D8", style, elsets=[("A", 0, 12), ("B", 12, 24)])
    fh.write("  *MATERIAL, NAME=PV40_STEEL\n*ELASTIC\n210000., 0.7\n   \n*DENSITY\n7.85e-9\n"
             "*SOLID SECTION, ELSET=A, MATERIAL=PV40_STEEL\n*SOLID SECTION, ELSET=B, MATERIAL=PV40_STEEL\n"
             "*STEP\n*STATIC\n*END STEP\n")
    return fh.getvalue()


def summary(m):
    blocks = [(b.type, b.count, b.ids.get().tolist(), b.conn.get().tolist()) for b in m.element_blocks]
    gid, xyz = m.geometry.nodes.get()
    return (sorted((i.code, i.loc.line) for i in m.issues), blocks, gid.tolist(), xyz.tolist(),
            m.geometry.bbox_min.tolist(), m.geometry.bbox_max.tolist(),
            [(x.name, x.loc.line, [(b.kind, b.loc.line) for b in x.blocks]) for x in m.materials.values()],
            [(s.loc.line, [p.kind for p in s.procedures]) for s in m.steps], m.extras["encoding"],
            m.extras["line_ends"], m.geometry.node_count)


def parse(path, monkeypatch, mapped: bool, chunk: int = 0):
    monkeypatch.setattr(buffers, "MAP_ABOVE", 0 if mapped else 1 << 40)
    monkeypatch.setattr(KS, "CHUNK", chunk or 1 << 21)
    m = K.parse(str(path), ParseOptions())
    return m, summary(m)


@pytest.mark.parametrize("style", L.KEYWORD_STYLES)
@pytest.mark.parametrize("chunk", [0, 64])
def test_mapped_deck_reads_as_the_bytes(write_deck, monkeypatch, style, chunk):
    p = write_deck(f"pv40_{style}.inp", deck(style).replace("*DENSITY", "** deckwarden accept elastic\n*DENSITY"))
    m, got = parse(p, monkeypatch, True, chunk)
    assert buffers.is_mapped(m.texts[str(p)])
    m2, want = parse(p, monkeypatch, False)
    assert got == want
    text = p.read_bytes()
    assert m.extras["mark_bytes"][str(p)] == m2.extras["mark_bytes"][str(p)] == [
        i for i, c in enumerate(text) if c in b"wW"]
    from linter import suppressions

    line = text[:text.index(b"** deckwarden")].count(b"\n") + 1
    for anchors in (None, m.extras["line_anchors"][str(p)]):
        (sup,) = suppressions.scan_text(m.texts[str(p)], str(p), ("**",), m.extras["mark_bytes"][str(p)], anchors)
        assert (sup.line, sup.target, sup.rules) == (line, line + 1, ["elastic"])
    assert [i.code for i in m.issues if i.code in ("truncated", "malformed-data")] == []


@pytest.mark.parametrize("change", ["crlf", "latin-1", "no final line end", "utf-16"])
def test_text_that_needs_normalising_is_read_not_mapped(write_deck, monkeypatch, change):
    text = deck("padded")
    raw = {"crlf": text.replace("\n", "\r\n").encode(),
           "latin-1": text.replace("pv40\n", "pv40 \xe9t\xe9\n", 1).encode("latin-1"),
           "no final line end": text.rstrip("\n").encode(),
           "utf-16": text.encode("utf-16")}[change]
    p = write_deck("pv40_n.inp", raw)
    m, got = parse(p, monkeypatch, True, 64)
    assert not buffers.is_mapped(m.texts[str(p)])
    _, want = parse(p, monkeypatch, False)
    assert got == want


def reference(data: bytes):
    """Keyword lines (offset, line), skipped-line counts and line ends, by splitting the text into lines."""
    positions, linenos, skips, n_skip = [], [], [], 0
    lines = data.split(b"\n")
    pos = len(lines[0]) + 1
    for i, ln in enumerate(lines[1:], start=2):
        if pos >= len(data):
            break
        s = ln.lstrip(b" \t")
        if s.startswith(b"*") and not s.startswith(b"**"):
            positions.append(pos)
            linenos.append(i)
            skips.append(n_skip)
        elif s.startswith(b"**") or (s == b"" and i < len(lines)):     # a blank line needs its line end
            n_skip += 1
        pos += len(ln) + 1
    return positions, linenos, skips + [n_skip], data.count(b"\n")


LINES = st.sampled_from(["*NODE", "  *ELEMENT, TYPE=C3D8", "\t*STEP", "** note", "   ** x", "", "   ", "\t \t",
                         "** deckwarden accept elastic", "*MATERIAL, NAME=PV40_WEAR_RING", "w",
                         "1,2,3", "         1,   0.00000000e+00,   2.5", "   7, 8*", " 5, 6 ", "* ", "2*3, 4"])


@settings(max_examples=150, deadline=None)
@given(lines=st.lists(LINES, max_size=40), end=st.sampled_from(["\n", ""]), chunk=st.sampled_from([8, 31, 4096]))
def test_keyword_line_scan_matches_a_line_by_line_reading(lines, end, chunk):
    data = ("\n".join(lines) + end).encode()
    saved = KS.CHUNK
    KS.CHUNK = chunk
    marks: list = []
    try:
        positions, linenos, before, total = KS.special_lines(data, marks=marks)
    finally:
        KS.CHUNK = saved
    assert (positions, linenos, before.tolist(), total) == reference(data)
    assert sorted(marks) == [i for i, c in enumerate(data) if c in b"wW"]     # for the suppression scan


@settings(max_examples=300, deadline=None)
@given(text=st.text(alphabet="12,\n \t\r*.e-", max_size=80))
def test_field_counts_without_compacting_match_the_compacted_lines(text):
    from linter.parsers.keyword import rows

    chunk = text.encode()
    assert rows.line_fields(chunk).tolist() == rows.fields_per_line(rows.compact(chunk)).tolist()


@pytest.mark.parametrize("window", [64, 4096, 1 << 22])
def test_include_scan_of_a_mapped_deck(write_deck, monkeypatch, window):
    """``includes_of`` (the folder walk's cheap scan) finds the same includes in a mapped deck walked in
    windows as in the bytes: at the start, indented, in lower case, after long data blocks."""
    from linter.parsers import ParseOptions

    for name in ("pv40_a.inp", "pv40_b.inp", "pv40_c.inp", "pv40_d.inp"):
        write_deck(name, "*NODE\n1,0,0,0\n")
    filler = "".join(f"{i}, 0.0, 0.0, 0.0\n" for i in range(1, 400))
    text = ("*INCLUDE, INPUT=pv40_a.inp\n" + filler + "  *include, input=pv40_b.inp\n" + filler +
            "** *INCLUDE, INPUT=pv40_x.inp\n*Include,Input=pv40_c.inp\n" + filler + "\t*INCLUDE, INPUT=pv40_d.inp\n")
    p = write_deck("pv40_top.inp", text)
    want = [str(p.parent / n) for n in ("pv40_a.inp", "pv40_b.inp", "pv40_c.inp", "pv40_d.inp")]
    monkeypatch.setattr(buffers, "WINDOW", window)
    for above in (0, 1 << 40):
        monkeypatch.setattr(buffers, "MAP_ABOVE", above)
        got = K.includes_of(str(p), ParseOptions())
        assert [os.path.realpath(g) for g in got] == [os.path.realpath(w) for w in want]
