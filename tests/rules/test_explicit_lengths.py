"""The explicit time-step rule's smallest element edge per material, on decks with several materials and types.

The rule reads element blocks piece by piece (bounded memory) and measures edges in chunks with a fast row
look-up for consecutive node ids. Pinned here: the same length per material (bit for bit) whether blocks
are loaded whole or read in tiny pieces, whatever the layout of the element lines (C3D20 wrapped after 16
entries, C3D10 over two lines, tabs, trailing commas, comment lines), and the value of a brute-force loop
over the element edges taken from the node numbering of the CalculiX User's Manual (section 6.2, C3D20:
corners 1-8, mid-side nodes 9-20 on edges 1-2, 2-3, 3-4, 4-1, 5-6, 6-7, 7-8, 8-5, 1-5, 2-6, 3-7, 4-8;
C3D10: corners 1-4, mid-side nodes 5-10 on edges 1-2, 2-3, 3-1, 1-4, 2-4, 3-4).
"""
from __future__ import annotations

import io
import math

import numpy as np
import pytest
from benchload import load

from linter.check import check_paths
from linter.parsers import ParseOptions
from linter.parsers.keyword import parser as K
from linter.parsers.keyword import mesh as KM
from linter.physics import mesh as M

L = load("layouts")

#: (corner a, mid-side m, corner b) of each edge, 1-based, as numbered in the CalculiX User's Manual
HEX20 = ((1, 9, 2), (2, 10, 3), (3, 11, 4), (4, 12, 1), (5, 13, 6), (6, 14, 7), (7, 15, 8), (8, 16, 5),
         (1, 17, 5), (2, 18, 6), (3, 19, 7), (4, 20, 8))
TET10 = ((1, 5, 2), (2, 6, 3), (3, 7, 1), (1, 8, 4), (2, 9, 4), (3, 10, 4))
TOPOLOGY = {"C3D20": HEX20, "C3D10": TET10}


def brute_force(conn, pos) -> float:
    """Smallest segment a-m or m-b over every element, one Python loop per element."""
    best = math.inf
    for row in conn:
        for a, m, b in TOPOLOGY[len_type(row)]:
            for p, q in ((a, m), (m, b)):
                best = min(best, math.dist(pos[row[p - 1]], pos[row[q - 1]]))
    return best


def len_type(row) -> str:
    return {20: "C3D20", 10: "C3D10"}[len(row)]


def deck(style: str, scattered: bool = True, seed: int = 4) -> tuple[str, dict]:
    """Nodes 1..n (consecutive: rows found without a look-up) and, when ``scattered``, a second *NODE card
    with scattered ids that the C3D10 use; C3D20 in two sets for M1 and M2, C3D10 for M1 and M3."""
    rng = np.random.default_rng(seed)
    n1, n2 = 300, 200
    ids1 = np.arange(1, n1 + 1)
    ids2 = rng.choice(np.arange(10_000, 90_000), n2, replace=False)
    xyz1, xyz2 = rng.uniform(-40, 40, (n1, 3)), rng.uniform(-40, 40, (n2, 3))
    hexa = np.stack([rng.choice(ids1, 20, replace=False) for _ in range(120)])
    tets = np.stack([rng.choice(np.concatenate([ids1, ids2]) if scattered else ids1, 10, replace=False)
                     for _ in range(90)])
    fh = io.StringIO()
    L.keyword_mesh(fh, xyz1, hexa, "C3D20", style, ids1, np.arange(1, 121),
                   elsets=[("HA", 0, 60), ("HB", 60, 120)])
    L.keyword_mesh(fh, xyz2 if scattered else np.zeros((0, 3)), tets, "C3D10", style,
                   ids2 if scattered else np.zeros(0, dtype=int), np.arange(1001, 1091),
                   elsets=[("TA", 0, 45), ("TB", 45, 90)])
    for name, e in (("M1", 210000.0), ("M2", 70000.0), ("M3", 3000.0)):
        fh.write(f"*MATERIAL, NAME={name}\n*ELASTIC\n{e}, 0.3\n*DENSITY\n7.85e-9\n")
    for elset, mat in (("HA", "M1"), ("HB", "M2"), ("TA", "M1"), ("TB", "M3")):
        fh.write(f"*SOLID SECTION, ELSET={elset}, MATERIAL={mat}\n")
    fh.write("*STEP\n*DYNAMIC, EXPLICIT\n1.e-7, 1.e-4\n*END STEP\n")
    return fh.getvalue(), {"hexa": hexa, "tets": tets}


def lengths(path) -> dict:
    res = check_paths([str(path)])
    return {f.material: f.data["length"] for f in res.findings if f.rule == "analysis/explicit-time-step"}


@pytest.mark.parametrize("scattered", [False, True])
@pytest.mark.parametrize("style", ["comma-blank", "wrap8", "tab", "trailing", "comments"])
def test_smallest_length_per_material_the_same_in_pieces_and_whole(write_deck, monkeypatch, style, scattered):
    text, _mesh = deck(style, scattered)
    path = write_deck(f"x-{style}.inp", text)
    whole = lengths(path)
    assert set(whole) == {"M1", "M2", "M3"}
    with monkeypatch.context() as mp:
        mp.setattr(KM, "STREAM_PIECE", 97)                         # pieces of a few lines
        real = M.smallest_edge
        mp.setattr(M, "smallest_edge", lambda *a, **k: real(*a, **{**k, "chunk": 7}))
        pieces = lengths(path)
    assert pieces == whole                                          # bit for bit


@pytest.mark.parametrize("scattered", [False, True])
def test_smallest_length_per_material_equals_a_brute_force_loop(write_deck, scattered):
    text, mesh = deck("comma-blank", scattered)
    path = write_deck("x.inp", text)
    got = lengths(path)
    m = K.parse(str(path), ParseOptions())
    gid, xyz = m.geometry.nodes.get()
    pos = dict(zip(gid.tolist(), xyz.tolist()))               # coordinates as read from the deck
    hexa, tets = mesh["hexa"], mesh["tets"]
    want = {"M1": min(brute_force(hexa[:60], pos), brute_force(tets[:45], pos)),
            "M2": brute_force(hexa[60:], pos), "M3": brute_force(tets[45:], pos)}
    for name, value in want.items():
        assert got[name] == pytest.approx(value, rel=1e-12), name


@pytest.mark.parametrize("etype, k", [("C3D8", 8), ("C3D20", 20), ("C3D10", 10), ("S4", 4), ("CPS3", 3)])
def test_consecutive_ids_read_without_look_up_give_the_sorted_look_up_answer(etype, k):
    # node ids 5..404 in order take the row = id - 5 path; the same nodes listed in shuffled order take the
    # sorted look-up: the lengths must agree bit for bit, and an undefined node still gives nan
    rng = np.random.default_rng(k)
    ids = np.arange(5, 405)
    xyz = rng.uniform(-3, 3, (ids.size, 3))
    conn = rng.choice(ids, (250, k))
    perm = rng.permutation(ids.size)
    fast = M.min_edge_lengths(conn, M.NodeLookup(ids), M.columns(xyz), etype)
    looked = M.min_edge_lengths(conn, ids[perm], xyz[perm], etype)
    assert M.NodeLookup(ids).first == 5 and M.NodeLookup(ids[perm]).first is None
    np.testing.assert_array_equal(fast, looked)
    assert np.isfinite(fast).all()
    conn[7, 1] = 999                                # undefined: nan for that element only
    missing = M.min_edge_lengths(conn, M.NodeLookup(ids), M.columns(xyz), etype)
    assert np.isnan(missing[7]) and np.array_equal(np.delete(missing, 7), np.delete(fast, 7))


@pytest.mark.parametrize("scattered", [False, True])
def test_nodes_read_by_a_helper_process_give_the_same_lengths(write_deck, monkeypatch, scattered):
    """With two jobs a large node table is read by a forked helper (``linter.background``) while the rule
    reads the connectivity: the lengths are bit for bit those of the one-process run, and the helper ran."""
    from linter import background

    text, _mesh = deck("comma-blank", scattered)
    path = write_deck("x-helper.inp", text)
    one = lengths(path)
    monkeypatch.setattr(KM, "BACKGROUND_NODE_BYTES", 0)
    monkeypatch.setattr(background, "_cpus", lambda: 2)
    started = []
    real = background.start
    monkeypatch.setattr(background, "start", lambda fn: started.append(real(fn)) or started[-1])
    res = check_paths([str(path)], jobs=2)
    two = {f.material: f.data["length"] for f in res.findings if f.rule == "analysis/explicit-time-step"}
    assert two == one and set(one) == {"M1", "M2", "M3"}
    assert len(started) == 1 and started[0] is not None
