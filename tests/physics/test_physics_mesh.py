"""Smallest edge of every element topology against a brute-force reading of the solvers' node numbering.

The oracle here knows nothing of ``linter.physics.mesh``'s tables: the corner edges of a reference element are
found from its geometry (a box: corners that differ in one coordinate; a triangle or tetrahedron: every pair of
corners; a wedge: the pairs inside each triangle and the vertical pairs), and every mid-side node is placed on
the corner edge the solver's manual gives for its position. The smallest edge segment is then the minimum over
these segments. Each element is also deformed by pulling one node close to another, once for every pair of its
nodes: an edge pair then gives a short segment, any other pair must not.

Node numbering (1-based, as in the manuals):
- CalculiX User's Manual, section 6.2 (element types C3D8/C3D20, C3D4/C3D10, C3D6/C3D15, S4/S8, S3/S6):
  mid-side nodes edge by edge, for the hexahedron bottom face, top face, then the vertical edges;
- Nastran CHEXA/CPENTA: bottom face, then the vertical edges, then the top face, as read by meshio 5.3
  (``meshio/nastran/_nastran.py``, ``_convert_to_vtk_ordering`` swaps these two groups into the VTK order,
  which is the CalculiX one); the Nastran manuals' CHEXA/CPENTA figures agree (from memory). CTETRA10, CQUAD8
  and CTRIA6 number as CalculiX does.
"""
from __future__ import annotations

from itertools import combinations

import numpy as np
import pytest

from linter.physics import mesh as M

# reference corners with three different side lengths, so that a mix-up of x, y and z shows
BOX = np.array([[0, 0, 0], [1, 0, 0], [1, 2, 0], [0, 2, 0], [0, 0, 3], [1, 0, 3], [1, 2, 3], [0, 2, 3]], float)
TET = np.array([[0, 0, 0], [2, 0, 0], [0.5, 1.5, 0], [0.6, 0.5, 1.7]])
WEDGE = np.array([[0, 0, 0], [2, 0, 0], [0.5, 1.5, 0], [0, 0, 3], [2, 0, 3], [0.5, 1.5, 3]], float)
RECT = BOX[:4, :2]
TRI = TET[:3, :2]

# mid-side nodes: (node, corner a, corner b), 1-based as printed in the manuals
C3D20_MID = [(9, 1, 2), (10, 2, 3), (11, 3, 4), (12, 4, 1), (13, 5, 6), (14, 6, 7), (15, 7, 8), (16, 8, 5),
             (17, 1, 5), (18, 2, 6), (19, 3, 7), (20, 4, 8)]
CHEXA20_MID = [(9, 1, 2), (10, 2, 3), (11, 3, 4), (12, 4, 1), (13, 1, 5), (14, 2, 6), (15, 3, 7), (16, 4, 8),
               (17, 5, 6), (18, 6, 7), (19, 7, 8), (20, 8, 5)]
TET10_MID = [(5, 1, 2), (6, 2, 3), (7, 3, 1), (8, 1, 4), (9, 2, 4), (10, 3, 4)]
C3D15_MID = [(7, 1, 2), (8, 2, 3), (9, 3, 1), (10, 4, 5), (11, 5, 6), (12, 6, 4), (13, 1, 4), (14, 2, 5),
             (15, 3, 6)]
CPENTA15_MID = [(7, 1, 2), (8, 2, 3), (9, 3, 1), (10, 1, 4), (11, 2, 5), (12, 3, 6), (13, 4, 5), (14, 5, 6),
                (15, 6, 4)]
QUAD8_MID = [(5, 1, 2), (6, 2, 3), (7, 3, 4), (8, 4, 1)]
TRI6_MID = [(4, 1, 2), (5, 2, 3), (6, 3, 1)]


def _box_edges(corners):
    return [(i, j) for i, j in combinations(range(len(corners)), 2)
            if np.count_nonzero(corners[i] != corners[j]) == 1]


def _all_pairs(corners):
    return list(combinations(range(len(corners)), 2))


def _wedge_edges(corners):
    tri = [(0, 1), (1, 2), (0, 2)]
    return tri + [(i + 3, j + 3) for i, j in tri] + [(k, k + 3) for k in range(3)]


def _quadratic(corners, mids):
    """Corner coordinates plus mid-side nodes, and the edge segments a-m, m-b."""
    coords = np.vstack([corners] + [(corners[a - 1] + corners[b - 1]) / 2 for _m, a, b in mids])
    assert [m for m, _a, _b in mids] == list(range(len(corners) + 1, len(coords) + 1))
    segments = [(a - 1, m - 1) for m, a, _b in mids] + [(m - 1, b - 1) for m, _a, b in mids]
    return coords, segments


ELEMENTS = {   # type -> (reference coordinates, edge segments of the oracle)
    "C3D8": (BOX, _box_edges(BOX)), "CHEXA8": (BOX, _box_edges(BOX)),
    "C3D4": (TET, _all_pairs(TET)), "CTETRA4": (TET, _all_pairs(TET)),
    "C3D6": (WEDGE, _wedge_edges(WEDGE)), "CPENTA6": (WEDGE, _wedge_edges(WEDGE)),
    "C3D20R": _quadratic(BOX, C3D20_MID), "CHEXA20": _quadratic(BOX, CHEXA20_MID),
    "C3D10": _quadratic(TET, TET10_MID), "CTETRA10": _quadratic(TET, TET10_MID),
    "C3D15": _quadratic(WEDGE, C3D15_MID), "CPENTA15": _quadratic(WEDGE, CPENTA15_MID),
    "S4R": (RECT, _box_edges(RECT)), "CQUAD4": (RECT, _box_edges(RECT)), "CPS4": (RECT, _box_edges(RECT)),
    "S8R": _quadratic(RECT, QUAD8_MID), "CQUAD8": _quadratic(RECT, QUAD8_MID), "CPE8": _quadratic(RECT, QUAD8_MID),
    "S3": (TRI, _all_pairs(TRI)), "CTRIA3": (TRI, _all_pairs(TRI)), "M3D3": (TRI, _all_pairs(TRI)),
    "S6": _quadratic(TRI, TRI6_MID), "CTRIA6": _quadratic(TRI, TRI6_MID), "CAX6": _quadratic(TRI, TRI6_MID),
    "B31": (BOX[[0, 6]], [(0, 1)]), "CBAR": (BOX[[0, 6]], [(0, 1)]), "T3D2": (BOX[[0, 6]], [(0, 1)]),
}


def _variants(ref):
    """The reference element, and one copy per ordered node pair (i, j) with node j pulled to 5 % of the
    way from node i (so that the pair is 0.05 times as long as before)."""
    out = [ref]
    for i in range(len(ref)):
        for j in range(len(ref)):
            if i != j:
                c = ref.copy()
                c[j] = ref[i] + 0.05 * (ref[j] - ref[i])
                out.append(c)
    return out


def _oracle(coords, segments):
    return min(float(np.linalg.norm(coords[a] - coords[b])) for a, b in segments)


@pytest.mark.parametrize("etype", sorted(ELEMENTS))
def test_smallest_edge_segment_of_every_topology(etype):
    ref, segments = ELEMENTS[etype]
    variants = _variants(ref)
    n = len(ref)
    # every element has its own nodes, numbered with a gap (ids 3, 6, 9, ...): the sorted look-up
    ids = 3 * np.arange(1, n * len(variants) + 1)
    conn = ids.reshape(len(variants), n)
    coords = np.vstack(variants)
    got = M.min_edge_lengths(conn, ids, coords, etype)
    want = [_oracle(c, segments) for c in variants]
    np.testing.assert_allclose(got, want, rtol=1e-12)
    if len(segments) < n * (n - 1) // 2:
        # some variant makes a non-edge pair short and no segment: a table that took every pair (or the
        # wrong pairs) differs there
        assert any(w > 0.5 * want[0] for w in want[1:])
    assert M.smallest_edge(conn, ids, coords, etype) == pytest.approx(min(want), rel=1e-12)


def test_nastran_numbers_hexa_and_penta_mid_nodes_differently():
    # the same 20-node brick read with the Nastran numbering: node 13 sits on the vertical edge 1-5
    assert M.edge_pairs("CHEXA20", 20) != M.edge_pairs("C3D20", 20)
    assert (0, 12) in M.edge_pairs("CHEXA20", 20) and (12, 4) in M.edge_pairs("CHEXA20", 20)
    assert (0, 16) in M.edge_pairs("C3D20", 20) and (16, 4) in M.edge_pairs("C3D20", 20)


def test_unknown_topologies_take_every_pair_of_nodes():
    # a 5-node pyramid (not in the tables) and a 3-node beam: the smallest distance between any two nodes
    pyr = np.array([[0, 0, 0], [2, 0, 0], [2, 2, 0], [0, 2, 0], [1, 1, 0.3]])
    ids = np.arange(1, 6)
    assert M.min_edge_lengths(ids[None, :], ids, pyr, "C3D5")[0] == pytest.approx(np.sqrt(2 + 0.09))
    beam = np.array([[0, 0, 0], [0.75, 0, 0], [1, 0, 0.0]])       # end, middle, end (CalculiX B32)
    assert M.min_edge_lengths(np.array([[1, 2, 3]]), ids[:3], beam, "B32")[0] == pytest.approx(0.25)
    assert M.edge_pairs("XYZ4", 4) == ((0, 1), (0, 2), (0, 3), (1, 2), (1, 3), (2, 3))


def test_consecutive_ids_are_looked_up_by_offset():
    # the usual numbering 1..n (or k..k+n-1) maps id -> row by subtraction; anything else is searched
    assert M.NodeLookup(np.array([1, 2, 3, 4])).first == 1
    assert M.NodeLookup(np.array([7, 8, 9])).first == 7
    assert M.NodeLookup(np.array([5])).first == 5
    for ids in ([1, 5, 2, 4], [4, 3, 2, 1], [1, 2, 4, 5], [1, 3, 3, 3], [2, 1]):
        assert M.NodeLookup(np.array(ids)).first is None, ids
    assert M.NodeLookup(np.zeros(0, dtype=np.int64)).first is None


@pytest.mark.parametrize("ids", [[7, 8, 9, 10], [10, 8, 9, 7], [7, 10, 8, 9], [10, 9, 8, 7]])
def test_node_index_for_any_numbering(ids):
    ids = np.array(ids)
    wanted = np.array([[7, 8, 9, 10], [6, 11, 0, -3], [10, 10, 7, 12]])
    want = np.array([[list(ids).index(w) if w in ids else -1 for w in row] for row in wanted])
    got = M.node_index(ids, wanted)
    np.testing.assert_array_equal(got, want)
    np.testing.assert_array_equal(M.node_index(M.NodeLookup(ids), wanted), want)


def test_node_index_with_gaps_and_without_nodes():
    ids = np.array([10, 20, 30])
    np.testing.assert_array_equal(M.node_index(ids, np.array([5, 10, 15, 20, 30, 35, 40])),
                                  [-1, 0, -1, 1, 2, -1, -1])
    np.testing.assert_array_equal(M.node_index(np.zeros(0, dtype=np.int64), np.array([1, 2])), [-1, -1])


def test_columns_of_two_and_three_dimensional_coordinates():
    xyz = np.array([[1.0, 2.0, 3.0], [4.0, 5.0, 6.0]])
    x, y, z = M.columns(xyz)
    assert x.tolist() == [1, 4] and y.tolist() == [2, 5] and z.tolist() == [3, 6]
    x, y, z = M.columns(xyz[:, :2])
    assert x.tolist() == [1, 4] and y.tolist() == [2, 5] and z.tolist() == [0, 0]


def test_missing_nodes_degenerate_and_empty_elements():
    coords = np.array([[0, 0, 0], [0.5, 0, 0], [0.5, 0, 0], [3, 0, 0]], float)
    ids = np.array([1, 2, 3, 4])
    # elements 1-2 (0.5 long), 2-3 (coincident nodes: 0), 3-4 (2.5 long)
    conn = np.array([[1, 2], [2, 3], [3, 4]])
    assert M.min_edge_lengths(conn, ids, coords, "B31").tolist() == pytest.approx([0.5, 0.0, 2.5])
    # a zero-length element is no length to report: the smallest measurable one is 0.5
    assert M.smallest_edge(conn, ids, coords, "B31") == pytest.approx(0.5)
    assert M.smallest_edge(conn[1:2], ids, coords, "B31") is None
    # the first element is the smallest; measured one element at a time (chunk 1) or with a chunk of 0
    for chunk in (1, 0, 2):
        assert M.smallest_edge(conn, ids, coords, "B31", chunk=chunk) == pytest.approx(0.5), chunk
    assert M.smallest_edge(conn, ids, coords, "B31", mask=np.array([False, True, True])) == pytest.approx(2.5)
    # more elements than nodes per element, the smallest last, one element at a time
    assert M.smallest_edge(conn[::-1], ids, coords, "B31", chunk=1) == pytest.approx(0.5)
    # one model with a single node: an element that names a second, undefined node has no length
    one = M.min_edge_lengths(np.array([[1, 99]]), np.array([1]), np.zeros((1, 3)), "B31")
    assert one.shape == (1,) and np.isnan(one[0])
    # a missing node anywhere in the element (first, middle, last position)
    for row in ([99, 2], [1, 99]):
        assert np.isnan(M.min_edge_lengths(np.array([row]), ids, coords, "B31")[0])
    assert M.min_edge_lengths(np.array([[1, 2]]), ids, coords, "B31")[0] == pytest.approx(0.5)
    # no elements, or connectivity that is not a table: nothing to measure
    assert M.min_edge_lengths(np.zeros((0, 2), dtype=np.int64), ids, coords, "B31").shape == (0,)
    assert M.min_edge_lengths(np.array([1, 2]), ids, coords, "B31").shape == (0,)
    assert M.smallest_edge(np.array([1, 2]), ids, coords, "B31") is None
    assert M.smallest_edge(np.zeros((0, 2), dtype=np.int64), ids, coords, "B31") is None
