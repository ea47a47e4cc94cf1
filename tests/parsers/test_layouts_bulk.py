"""Fixed-field bulk data read column-wise in run blocks gives what the card-by-card reader gives.

Every writing style of ``tests/bench/layouts.py`` (free field, small field with ``+`` or blank
continuations, large field ``GRID*``/``CHEXA*`` with ``*`` continuations, mixed, tabs) is read three
ways: the normal reader (run blocks of ~1 MB), the same with tiny run blocks (so that block edges fall
everywhere), and the card-by-card reader (no runs, no column-wise line table). The reference outside
the project is meshio 5.3 (``meshio.read``, its nastran reader) for the styles it reads.
"""
from __future__ import annotations

import io

import numpy as np
import pytest
from benchload import load

from linter.parsers import ParseOptions, buffers, sources
from linter.parsers.bulk import lines as bl
from linter.parsers.bulk import parser as B

L = load("layouts")
G = load("gen_decks")


def deck(style: str, dims=(30, 20, 12)) -> tuple[str, np.ndarray, int]:
    """A block of CHEXA (two PIDs), then 4- and 10-node CTETRA with a blank PID, in one style."""
    coords, conn = G.mesh(*dims)
    ne = len(conn)
    pid = np.where(np.arange(ne) < ne // 2, 1, 2)
    fh = io.StringIO()
    fh.write("SOL 101\nCEND\nBEGIN BULK\n$ layout test\n")
    L.bulk_mesh(fh, coords, conn, pid, style)
    rng = np.random.default_rng(3)
    for n, base in ((4, ne + 1), (10, ne + 1001)):
        tet = rng.integers(1, len(coords) + 1, (700, n))
        fh.write("$ tetrahedra\n")
        L.bulk_mesh(fh, np.zeros((0, 3)), tet, np.full(700, 3), style, card="CTETRA",
                    elem_ids=np.arange(base, base + 700))
    fh.write("PSOLID,1,1\nPSOLID,2,1\nPSOLID,3,1\nMAT1,1,210000.,,0.3,7.85e-9\nENDDATA\n")
    return fh.getvalue(), coords, ne + 1400


def read(path, how: str, monkeypatch):
    with monkeypatch.context() as mp:
        if how == "small-blocks":
            mp.setattr(bl, "BLOCK", 4096)
            mp.setattr(bl, "SMALL", 512)
            mp.setattr(sources, "READ_BLOCK", 37)   # TABs replaced while reading: block edges everywhere
        elif how == "mapped":            # every file memory-mapped, as decks above 16 MB are
            mp.setattr(buffers, "MAP_ABOVE", 0)
        elif how == "cards":             # no run block, no column-wise line table: one Card per entry
            mp.setattr(B, "accept_run", lambda *a: None)
            mp.setattr(B, "read_fast", lambda st, name, lines, idx, heads, nl, large, display: np.arange(heads.size))
        m = B.parse(str(path), ParseOptions())
        blocks = [(b.type, b.elset, b.count, b.loc.line, b.ids.get(), b.conn.get()) for b in m.element_blocks]
        nodes = m.geometry.nodes.get()
    return m, blocks, nodes


def same(a, b):
    (ma, ba, na), (mb, bb, nb) = a, b
    assert [x[:4] for x in ba] == [x[:4] for x in bb]
    for x, y in zip(ba, bb):
        np.testing.assert_array_equal(x[4], y[4])
        np.testing.assert_array_equal(x[5], y[5])
    np.testing.assert_array_equal(na[0], nb[0])
    np.testing.assert_array_equal(na[1], nb[1])
    assert ma.geometry.node_count == mb.geometry.node_count
    assert sorted(i.code for i in ma.issues) == sorted(i.code for i in mb.issues)


@pytest.mark.parametrize("style", L.BULK_STYLES)
def test_every_bulk_layout_reads_like_the_card_reader(write_deck, monkeypatch, style):
    text, coords, ne = deck(style)
    p = write_deck(f"{style}.bdf", text)
    normal = read(p, "normal", monkeypatch)
    m, blocks, (gid, xyz) = normal
    assert sum(b[2] for b in blocks) == ne
    assert {(b[0], b[1]) for b in blocks} == {("CHEXA8", "PID 1"), ("CHEXA8", "PID 2"),
                                              ("CTETRA4", "PID 3"), ("CTETRA10", "PID 3")}
    np.testing.assert_allclose(xyz, coords)
    np.testing.assert_allclose(m.geometry.bbox_max, coords.max(axis=0))
    same(normal, read(p, "cards", monkeypatch))
    same(normal, read(p, "small-blocks", monkeypatch))
    same(normal, read(p, "mapped", monkeypatch))


@pytest.mark.parametrize("style", L.MESHIO_BULK)
def test_bulk_layouts_agree_with_meshio(write_deck, monkeypatch, style):
    meshio = pytest.importorskip("meshio")
    text, coords, ne = deck(style, (12, 10, 8))
    p = write_deck(f"{style}.bdf", text)
    ref = meshio.read(str(p), file_format="nastran")     # reference: meshio 5.3 nastran reader
    m, blocks, (gid, xyz) = read(p, "normal", monkeypatch)
    np.testing.assert_allclose(xyz, ref.points)
    hexa = np.concatenate([c.data for c in ref.cells if c.type == "hexahedron"])
    got = np.concatenate([b[5][:, :8] for b in blocks if b[0] == "CHEXA8"])
    np.testing.assert_array_equal(gid[hexa], got)      # meshio: indices into the GRIDs in file order
    assert sum(len(c.data) for c in ref.cells) == sum(b[2] for b in blocks)


def test_corpus_decks_read_the_same_with_small_run_blocks(corpus_dir, monkeypatch):
    files = sorted((corpus_dir / "bulk").glob("*.DAT"))
    if not files:
        pytest.skip("no bulk decks in the corpus")
    for path in files:
        same(read(path, "normal", monkeypatch), read(path, "cards", monkeypatch))
        same(read(path, "normal", monkeypatch), read(path, "small-blocks", monkeypatch))
        same(read(path, "normal", monkeypatch), read(path, "mapped", monkeypatch))


def test_coordinate_system_on_grids_of_fixed_field_runs(write_deck, monkeypatch):
    # CORD1R on three GRIDs inside a small-field run block that the box sample does not cover: they are
    # looked up in the block (CORD1R by three points: origin, a point on z, a point in the x-z plane; here a
    # pure translation by (0, 0, 1000))
    from linter.parsers import sampling

    monkeypatch.setattr(sampling, "EXACT_NODES_LIMIT", 100)
    monkeypatch.setattr(sampling, "sample_size", lambda n: 1)
    coords, conn = G.mesh(30, 20, 12)
    coords[-3:] = [[0.0, 0.0, 1000.0], [0.0, 0.0, 1001.0], [1.0, 0.0, 1000.0]]
    fh = io.StringIO()
    fh.write("SOL 101\nCEND\nBEGIN BULK\n")
    L.bulk_mesh(fh, coords, conn, np.ones(len(conn), dtype=int), "small")
    n = len(coords)
    fh.write(f"CORD1R  5       {n - 2:<8d}{n - 1:<8d}{n:<8d}\n")
    fh.write(f"GRID    {n + 1:<8d}5       1.      2.      3.\n")
    fh.write("PSOLID,1,1\nMAT1,1,210000.,,0.3,7.85e-9\nENDDATA\n")
    m = B.parse(str(write_deck("c.bdf", fh.getvalue())), ParseOptions())
    assert not m.geometry.exact
    assert m.geometry.bbox_max[2] == pytest.approx(1003.0)     # the CP 5 node, moved by the system
    gid, xyz = m.geometry.nodes.get()
    np.testing.assert_allclose(xyz[gid == n + 1][0], [1.0, 2.0, 1003.0])


def test_tab_deck_is_read_once_with_its_tabs_made_commas(write_deck, monkeypatch):
    # a TAB separates fields as a comma does (MYSTRAN User Manual, Bulk Data format): a deck and its include
    # that hold TABs are each read once, with the TABs replaced while reading, and give the free-field model;
    # mapped (as above 16 MB) the same: a file with a TAB is read, not mapped
    text, _coords, _ne = deck("tab", (4, 3, 2))
    assert "\t" in text
    inc = write_deck("mesh.bdf", text.split("BEGIN BULK\n", 1)[1])
    top = write_deck("top.bdf", "SOL 101\nCEND\nBEGIN BULK\nINCLUDE 'mesh.bdf'\nENDDATA\n")
    free = write_deck("free.bdf", deck("free", (4, 3, 2))[0])
    want = read(free, "normal", monkeypatch)
    for how in ("normal", "mapped"):
        with monkeypatch.context() as mp:
            real, calls = buffers.read_deck_bytes, []
            mp.setattr(buffers, "read_deck_bytes", lambda p, m, t=None: calls.append((p, t)) or real(p, m, t))
            got = read(top, how, monkeypatch)
        # mapped: the top deck has no TAB and is mapped; only the include is read
        expected = [(str(top), b","), (str(inc), b",")] if how == "normal" else [(str(inc), b",")]
        assert sorted(calls) == sorted(expected), how
        assert [b[:3] for b in got[1]] == [b[:3] for b in want[1]]
        for x, y in zip(got[1], want[1]):
            np.testing.assert_array_equal(x[5], y[5])
        np.testing.assert_array_equal(got[2][1], want[2][1])
