"""The node-line sampler behind the estimated bounding box of large meshes (``linter.parsers.sampling``)."""
from __future__ import annotations

import numpy as np

from linter.parsers import ParseOptions, bulk, sampling


def _lines(n: int) -> bytes:
    return b"".join(b"%d, %d.5, 0.0, 1.0\n" % (i, i) for i in range(1, n + 1))


def test_sample_size_is_a_share_of_the_lines_with_a_floor():
    assert sampling.sample_size(10) == 10                             # never more lines than there are
    assert sampling.sample_size(sampling.MIN_SAMPLE + 5) == sampling.MIN_SAMPLE
    n = 3_000_000
    assert sampling.sample_size(n) == round(sampling.SAMPLE_FRACTION * n)
    # the cost of the sample per node line does not fall with size (a fixed-size sample would)
    big, bigger = sampling.sample_size(1_000_000), sampling.sample_size(10_000_000)
    assert bigger == 10 * big


def test_line_pieces_are_whole_lines_spread_over_the_block():
    n = 20_000
    data = b"*HEAD\n" + _lines(n)
    start = len(b"*HEAD\n")
    got = sampling.line_pieces(data, start, len(data), n, want=640)
    rows = got.split(b"\n")
    ids = [int(r.split(b",")[0]) for r in rows]
    # every sampled line is a whole line of the block, in file order, none twice
    assert all(r == b"%d, %d.5, 0.0, 1.0" % (i, i) for r, i in zip(rows, ids))
    assert ids == sorted(set(ids))
    assert ids[0] == 1 and ids[-1] == n                              # the first and the last line
    assert 0.5 * 640 <= len(ids) <= 2 * 640
    # spread: every tenth of the block has sampled lines
    assert set(np.array(ids) * 10 // (n + 1)) == set(range(10))


def test_line_pieces_of_a_short_block():
    data = _lines(3)
    rows = sampling.line_pieces(data, 0, len(data), 3, want=1000).split(b"\n")
    assert [int(r.split(b",")[0]) for r in rows] == [1, 2, 3]


def test_bulk_sample_of_grid_lines_with_more_fields(write_deck, monkeypatch):
    """GRID lines with a PS field are not the 5-comma form read in one pass: the sample is read field by field."""
    from linter.parsers.bulk import lines as bulk_lines

    monkeypatch.setattr(bulk_lines, "BLOCK", 4096)
    monkeypatch.setattr(sampling, "EXACT_NODES_LIMIT", 500)
    monkeypatch.setattr(sampling, "MIN_SAMPLE", 100)
    n = 4000
    text = "SOL 101\nCEND\nBEGIN BULK\n" + "".join(f"GRID,{i},,{i * 0.25},{-(i % 7)}.,{i % 3}.,,123\n"
                                                  for i in range(1, n + 1)) + "ENDDATA\n"
    g = bulk.parse(str(write_deck("ps.bdf", text)), ParseOptions()).geometry
    assert g.node_count == n and not g.exact and "sampled" in g.note
    gid, xyz = g.nodes.get()                                      # numpy min/max of every node as the reference
    lo, hi = xyz.min(axis=0), xyz.max(axis=0)
    assert np.all(g.bbox_min >= lo) and np.all(g.bbox_max <= hi)
    assert g.bbox_max[0] - g.bbox_min[0] > 0.95 * (hi[0] - lo[0])
    assert np.allclose(g.bbox_min[1:], lo[1:]) and np.allclose(g.bbox_max[1:], hi[1:])
