"""Reading files: encodings, line ends, binary detection, size limit, includes policy, usage graph."""
from __future__ import annotations

import numpy as np
import pytest

from linter.parsers.includes import IncludePolicy, IncludeTracker
from linter.model import DeckModel, ElementBlock, ElementSet, Lazy, Loc, MaterialRef, Section
from linter.parsers import sources
from linter.parsers.sources import SourceError, read_deck_bytes
from linter.usage import element_types_of, material_usage, resolve_set, unassigned


def test_utf8_bom_crlf(write_deck):
    p = write_deck("a.inp", b"\xef\xbb\xbf*NODE\r\n1,0,0,0\r\n")
    src = read_deck_bytes(str(p), 1 << 20)
    assert src.data == b"*NODE\n1,0,0,0\n" and src.encoding == "utf-8-sig" and src.line_ends == "crlf"


def test_utf16_and_latin1_and_mixed_line_ends(write_deck):
    p = write_deck("b.inp", "*MATERIAL, NAME=Stahl_\u00e4\n".encode("utf-16"))
    src = read_deck_bytes(str(p), 1 << 20)
    assert src.encoding.startswith("utf-16") and "Stahl_\u00e4".encode() in src.data
    p = write_deck("c.inp", "*MATERIAL, NAME=Stahl_\u00e4\r\n**x\r*NODE\n".encode("latin-1"))
    src = read_deck_bytes(str(p), 1 << 20)
    assert src.encoding == "latin-1" and src.line_ends == "mixed" and src.data.count(b"\n") == 3


def test_binary_and_size_limit(write_deck):
    p = write_deck("d.inp", bytes(range(256)) * 4)
    with pytest.raises(SourceError) as err:
        read_deck_bytes(str(p), 1 << 20)
    assert err.value.code == "binary-file"
    p = write_deck("e.inp", "*NODE\n" * 1000)
    with pytest.raises(SourceError) as err:
        read_deck_bytes(str(p), 100)
    assert err.value.code == "file-too-large"
    with pytest.raises(SourceError) as err:
        read_deck_bytes(str(p.parent / "missing.inp"), 100)
    assert err.value.code == "file-unreadable"


@pytest.mark.parametrize("block", [1, 3, 64, 1 << 20])
def test_tabs_replaced_while_reading_equal_replace_after_reading(write_deck, monkeypatch, block):
    # the block-wise replacement must give exactly what bytes.replace gives on the whole file, whatever
    # the block edges, byte-order mark, line ends or encoding (U+0109 is the bytes 09 01 in UTF-16-LE:
    # not a TAB, so UTF-16 files are replaced after decoding)
    monkeypatch.setattr(sources, "READ_BLOCK", block)
    bodies = {
        "plain.bdf": b"GRID\t1\t\t0.\t0.\t0.\nCHEXA\t1\t1\t1\t2\t3\t4\t5\t6\t+\n+\t7\t8\n\t\t\n",
        "bom-crlf.bdf": b"\xef\xbb\xbfGRID\t1\t\t0.\r\n\tSOL\t101\r\n",
        "latin1.bdf": "$ Stahl_\u00e4\tx\nGRID\t2\t\t1.\n".encode("latin-1"),
        "utf16.bdf": "GRID\t3\t\t\u0109.\n\t\n".encode("utf-16"),
        "no-tab.bdf": b"GRID,1,,0.,0.,0.\n",
        "empty.bdf": b"",
    }
    for name, body in bodies.items():
        p = write_deck(name, body)
        plain = read_deck_bytes(str(p), 1 << 20)
        got = read_deck_bytes(str(p), 1 << 20, tabs_to=b",")
        assert got.data == plain.data.replace(b"\t", b","), name
        assert (got.encoding, got.line_ends) == (plain.encoding, plain.line_ends), name
    assert b"\t" not in got.data


def test_reading_never_asks_for_a_buffer_of_the_size_limit(write_deck, monkeypatch):
    # the limit may be far larger than memory (the default is 4 GiB): no single read may ask for it, with or
    # without TABs replaced, and a file that grew since it was stat'ed is still read up to the limit
    p = write_deck("tabbed.bdf", b"GRID\t1\t\t0.\t0.\t0.\n")
    asked = []
    real_open = open

    class Spy:
        def __init__(self, fh):
            self.fh = fh

        def read(self, n=-1):
            asked.append(n)
            return self.fh.read(n)

        def __getattr__(self, name):
            return getattr(self.fh, name)

        def __enter__(self):
            return self

        def __exit__(self, *exc):
            self.fh.close()

    monkeypatch.setattr("builtins.open", lambda *a, **k: Spy(real_open(*a, **k)))
    limit = 1 << 40
    for tabs in (None, b","):
        got = read_deck_bytes(str(p), limit, tabs_to=tabs)
        assert got.data == (b"GRID,1,,0.,0.,0.\n" if tabs else b"GRID\t1\t\t0.\t0.\t0.\n")
    assert asked and max(asked) <= sources.READ_BLOCK


def test_include_policy(tmp_path):
    root = tmp_path / "repo"
    (root / "model").mkdir(parents=True)
    (root / "materials").mkdir()
    (root / "materials" / "steel.inp").write_text("*MATERIAL, NAME=S\n")
    top = root / "model" / "top.inp"
    top.write_text("")
    tr = IncludeTracker(IncludePolicy(root=str(root), max_depth=2), stack=[str(top.resolve())])
    assert tr.resolve("../materials/steel.inp", str(top.parent)).status == "ok"
    assert tr.resolve("/etc/passwd", str(top.parent)).status == "refused"
    assert tr.resolve("../../outside.inp", str(top.parent)).status == "refused"
    assert tr.resolve("nothere.inp", str(top.parent)).status == "missing"
    assert tr.resolve("../materials", str(top.parent)).status == "directory"
    assert tr.resolve("top.inp", str(top.parent)).status == "cycle"
    open_ = IncludeTracker(IncludePolicy(root=str(root), allow_outside=True), stack=[])
    assert open_.resolve("/etc/hostname", "/").status in ("ok", "missing")


def _model():
    m = DeckModel(path="d.inp", format="keyword", dialect="calculix")
    loc = Loc("d.inp", 1)
    m.element_blocks = [
        ElementBlock("C3D8", "C3D8", 4, loc, elset="A", nodes=8, ids=Lazy.of(np.array([1, 2, 3, 4]))),
        ElementBlock("C3D20R", "C3D20R", 3, loc, elset="B", nodes=20, ids=Lazy(lambda: np.array([10, 11, 12]))),
    ]
    m.element_sets = {
        "A": ElementSet("A", "A", loc, blocks=[0]),
        "B": ElementSet("B", "B", loc, blocks=[1]),
        "PICK": ElementSet("pick", "PICK", loc, ids=[np.array([2, 11, 99])]),
        "BOTH": ElementSet("both", "BOTH", loc, nested=["PICK", "A"]),
    }
    return m


def test_set_resolution_and_usage():
    m = _model()
    assert resolve_set(m, "PICK").counts(m) == {"C3D8": 1, "C3D20R": 1}
    assert resolve_set(m, "BOTH").counts(m) == {"C3D8": 4, "C3D20R": 1}
    assert resolve_set(m, "NOPE") is None
    loc = Loc("d.inp", 9)
    m.sections = [Section("solid", "*SOLID SECTION", "PICK", "pick", [MaterialRef("solid", "Steel", "STEEL", loc)], loc)]
    use = material_usage(m)["STEEL"]
    assert use[0].counts == {"C3D8": 1, "C3D20R": 1}
    assert unassigned(m) == {0: 3, 1: 2}
    # one section using the material in several roles counts its elements once
    m.sections[0].materials.append(MaterialRef("bending", "Steel", "STEEL", loc))
    m.derived.pop("usage", None)
    assert element_types_of(m, "STEEL") == {"C3D8": 1, "C3D20R": 1}
