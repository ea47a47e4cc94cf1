"""One random mesh written in every keyword layout reads the same: ids, connectivity, counts, box.

The reference outside the project is meshio 5.3 (``meshio.read``, its abaqus reader) for the layouts it
reads; how CalculiX groups the lines of an element comes from its source (``elements.f``: the element
number and up to ``nodes`` nodes on the first line, the missing nodes from the next lines, each line read
only up to the nodes still missing).
"""
from __future__ import annotations

import io

import numpy as np
import pytest
from benchload import load
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from linter.parsers import ParseOptions
from linter.parsers.keyword import parser as K
from linter.parsers.keyword import rows

L = load("layouts")

#: CalculiX type -> (nodes, meshio cell type)
TYPES = {"C3D8": (8, "hexahedron"), "C3D20": (20, "hexahedron20"), "C3D10": (10, "tetra10"),
         "C3D15": (15, "wedge15"), "S8": (8, "quad8"), "S8R": (8, "quad8"), "C3D4": (4, "tetra")}
#: types meshio 5.3 reads (C3D15 -> wedge15 fails in its mesh constructor, S8 is not in its table: seen here)
MESHIO_TYPES = ("C3D4", "C3D8", "C3D10", "C3D20", "S8R")


@st.composite
def meshes(draw, types=tuple(TYPES)):
    etype = draw(st.sampled_from(types))
    nodes = TYPES[etype][0]
    nn = draw(st.integers(nodes, 60))
    ne = draw(st.integers(1, 40))
    seed = draw(st.integers(0, 2 ** 32 - 1))
    rng = np.random.default_rng(seed)
    node_ids = rng.choice(np.arange(1, 10 * nn + 1), nn, replace=False)
    coords = np.round(rng.uniform(-1e3, 1e3, (nn, 3)), 3)
    coords[rng.random((nn, 3)) < 0.1] = 0.0
    conn = np.stack([node_ids[rng.choice(nn, nodes, replace=False)] for _ in range(ne)])
    elem_ids = np.sort(rng.choice(np.arange(1, 5 * ne + 1), ne, replace=False))
    return etype, node_ids, coords, conn, elem_ids


def deck_text(mesh, style: str) -> str:
    etype, node_ids, coords, conn, elem_ids = mesh
    fh = io.StringIO()
    half = len(conn) // 2
    L.keyword_mesh(fh, coords, conn, etype, style, node_ids, elem_ids,
                   elsets=[("A", 0, half), ("B", half, len(conn))] if half else None)
    return fh.getvalue()


def read(path):
    m = K.parse(str(path), ParseOptions())
    ids = np.concatenate([b.ids.get() for b in m.element_blocks])
    conn = np.concatenate([b.conn.get() for b in m.element_blocks])
    gid, xyz = m.geometry.nodes.get()
    return m, ids, conn, gid, xyz


def check_same(mesh, path):
    etype, node_ids, coords, conn, elem_ids = mesh
    m, ids, got, gid, xyz = read(path)
    assert not [i for i in m.issues if i.code in ("truncated", "malformed-data")], m.issues
    assert sum(b.count for b in m.element_blocks) == len(conn)
    np.testing.assert_array_equal(ids, elem_ids)
    np.testing.assert_array_equal(got, conn)
    np.testing.assert_array_equal(gid, node_ids)
    np.testing.assert_allclose(xyz, coords, rtol=1e-9)
    np.testing.assert_allclose(m.geometry.bbox_min, coords.min(axis=0), rtol=1e-9)
    np.testing.assert_allclose(m.geometry.bbox_max, coords.max(axis=0), rtol=1e-9)


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(mesh=meshes(), style=st.sampled_from(L.KEYWORD_STYLES), piece=st.sampled_from([0, 64, 300]))
def test_every_layout_reads_the_written_mesh(write_deck, monkeypatch, mesh, style, piece):
    if piece:                       # small pieces: elements and nodes cross piece boundaries
        monkeypatch.setattr(rows, "PIECE", piece)
    check_same(mesh, write_deck("m.inp", deck_text(mesh, style)))


@settings(max_examples=15, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(mesh=meshes(MESHIO_TYPES), style=st.sampled_from(L.MESHIO_KEYWORD))
def test_layouts_agree_with_meshio(write_deck, mesh, style):
    meshio = pytest.importorskip("meshio")
    etype, node_ids, coords, conn, elem_ids = mesh
    p = write_deck("m.inp", deck_text(mesh, style))
    ref = meshio.read(str(p), file_format="abaqus")       # reference: meshio 5.3 abaqus reader
    cells = np.concatenate([c.data for c in ref.cells if c.type == TYPES[etype][1]])
    np.testing.assert_allclose(ref.points, coords, rtol=1e-9)
    _m, ids, got, gid, xyz = read(p)
    np.testing.assert_array_equal(gid[cells], got)     # meshio: indices into the nodes in file order
    assert got.shape[0] == cells.shape[0]


@pytest.mark.parametrize("n", [125, 2000])
def test_c3d20_comma_blank_trailing_comma_large_block(write_deck, n):
    # 16 entries, trailing comma, the last 5 nodes on the next line, ', ' separators: the same reading
    # for small and large blocks (it once gave 22 numbers per element above ~100 elements)
    rng = np.random.default_rng(1)
    coords = np.round(rng.uniform(0, 100, (40, 3)), 3)
    conn = rng.integers(1, 41, (n, 20))
    mesh = ("C3D20", np.arange(1, 41), coords, conn, np.arange(1, n + 1))
    p = write_deck("c20.inp", deck_text(mesh, "comma-blank"))
    block = [ln for ln in p.read_text().split("*ELEMENT", 1)[1].splitlines()[1:] if not ln.startswith("*")]
    assert len(block) == 2 * n and all(ln.endswith(",") and ln.count(",") == 16 for ln in block[::2])
    check_same(mesh, p)


def test_short_line_pulls_the_missing_nodes_from_the_next_line(write_deck):
    # CalculiX elements.f: a C3D8 line with 5 entries takes the other 4 nodes from the next line
    text = "*NODE\n" + "".join(f"{i},{i}.,0,0\n" for i in range(1, 9)) + \
        "*ELEMENT, TYPE=C3D8\n1, 1, 2, 3, 4, 5, 6, 7, 8\n2, 1, 2, 3, 4,\n 5, 6, 7, 8\n3,1,2,3,4,5,6,7,8\n"
    m = K.parse(str(write_deck("s.inp", text)), ParseOptions())
    blk = m.element_blocks[0]
    assert blk.count == 3
    np.testing.assert_array_equal(blk.ids.get(), [1, 2, 3])
    np.testing.assert_array_equal(blk.conn.get(), [list(range(1, 9))] * 3)


def test_incomplete_last_element_is_reported(write_deck):
    text = "*NODE\n1,0,0,0\n*ELEMENT, TYPE=C3D20\n1," + ",".join(["1"] * 15) + ",\n1,1,1\n"
    m = K.parse(str(write_deck("t.inp", text)), ParseOptions())
    hit = [i for i in m.issues if i.code == "truncated"]
    assert hit and hit[0].loc.line == 3 and "incomplete" in hit[0].message


def test_blank_fields_and_comment_lines_inside_a_block(write_deck):
    # a blank field reads 0 (Fortran list read of a blank field; ccx reads coordinates with f20.0)
    text = "*NODE\n1, 1.5, , 2.\n** note\n\n2,\t3., 4., 5.,  \n*ELEMENT, TYPE=T3D2\n** c\n7, 1, 2\n"
    m = K.parse(str(write_deck("b.inp", text)), ParseOptions())
    gid, xyz = m.geometry.nodes.get()
    np.testing.assert_array_equal(gid, [1, 2])
    np.testing.assert_array_equal(xyz, [[1.5, 0.0, 2.0], [3.0, 4.0, 5.0]])
    np.testing.assert_array_equal(m.element_blocks[0].conn.get(), [[1, 2]])


@pytest.mark.parametrize("piece", [0, 300])
def test_explicit_step_smallest_edge_read_piece_by_piece(write_deck, monkeypatch, piece):
    # the explicit time-step rule goes over the element blocks piece by piece; the smallest edge must be
    # the one computed here with numpy from the written mesh
    from linter.check import check_paths
    from linter.parsers.keyword import mesh as KM

    if piece:
        monkeypatch.setattr(KM, "STREAM_PIECE", piece)
    G = load("gen_decks")
    coords, conn = G.mesh(8, 6, 5)
    coords = coords + np.random.default_rng(5).uniform(-0.4, 0.4, coords.shape)
    edges = [(0, 1), (1, 2), (2, 3), (3, 0), (4, 5), (5, 6), (6, 7), (7, 4), (0, 4), (1, 5), (2, 6), (3, 7)]
    half = len(conn) // 2
    want = [min(np.linalg.norm(coords[c[:, a] - 1] - coords[c[:, b] - 1], axis=1).min() for a, b in edges)
            for c in (conn[:half], conn[half:])]
    fh = io.StringIO()
    L.keyword_mesh(fh, coords, conn, "C3D8", "comma-blank", elsets=[("A", 0, half), ("B", half, len(conn))])
    for name, e in (("M1", 210000.0), ("M2", 70000.0)):
        fh.write(f"*MATERIAL, NAME={name}\n*ELASTIC\n{e}, 0.3\n*DENSITY\n7.85e-9\n")
    fh.write("*SOLID SECTION, ELSET=A, MATERIAL=M1\n*SOLID SECTION, ELSET=B, MATERIAL=M2\n"
             "*STEP\n*DYNAMIC, EXPLICIT\n1.e-7, 1.e-4\n*END STEP\n")
    res = check_paths([str(write_deck("x.inp", fh.getvalue()))])
    got = {f.material: f.data["length"] for f in res.findings if f.rule == "analysis/explicit-time-step"}
    assert got["M1"] == pytest.approx(want[0], rel=1e-6) and got["M2"] == pytest.approx(want[1], rel=1e-6)
