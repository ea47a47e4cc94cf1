"""The benchmark's deck generator, at tiny sizes: counts, lines, geometry and planted findings."""
from __future__ import annotations

import io
import json
import re
from pathlib import Path

import numpy as np
import pytest



from benchload import load as _load  # noqa: E402


gen = _load("gen_decks")


def _hex_volumes(coords, conn):
    """Volumes of 8-node hexahedra by splitting each into 5 tetrahedra (signed)."""
    x = coords[conn - 1]                       # (e, 8, 3)
    tets = [(0, 1, 3, 4), (1, 2, 3, 6), (1, 4, 5, 6), (3, 4, 6, 7), (1, 3, 4, 6)]
    vol = 0.0
    for a, b, c, d in tets:
        vol = vol + np.einsum("ij,ij->i", x[:, b] - x[:, a], np.cross(x[:, c] - x[:, a], x[:, d] - x[:, a])) / 6
    return vol


def test_mesh_is_valid_structured_block():
    coords, conn = gen.mesh(3, 2, 2)
    assert coords.shape == (4 * 3 * 3, 3) and conn.shape == (12, 8)
    vol = _hex_volumes(coords, conn)
    # every hexahedron a positive cube of edge 2.5 (right-handed ccx/bulk node order, common practice)
    np.testing.assert_allclose(vol, 2.5 ** 3)
    assert np.unique(conn).size == len(coords)


@pytest.mark.parametrize("fmt", ["keyword", "bulk"])
def test_counts_and_lines(tmp_path, fmt):
    man = gen.generate(tmp_path, "1k", fmt)
    text = Path(man.path).read_text(encoding="ascii")
    lines = text.split("\n")[:-1]
    assert man.lines == len(lines)
    assert man.size_bytes == Path(man.path).stat().st_size
    assert (man.elements, man.nodes) == (1000, 11 ** 3)
    if fmt == "keyword":
        assert sum(1 for ln in lines if re.match(r"^\d+(, \d+){8}$", ln)) == 1000
        assert sum(1 for ln in lines if re.match(r"^\d+(, [-\d.]+){3}$", ln)) == 11 ** 3
        assert lines[man.material_lines["SEAL"] - 1] == "*MATERIAL, NAME=SEAL"
        assert lines[man.elastic_lines["SEAL"] - 1].endswith("0.4995")
        assert man.planted == {"SEAL": list(gen.PLANTED)} and man.clean == ["STEEL"]
    else:
        assert sum(1 for ln in lines if ln.startswith("CHEXA,")) == 1000
        assert sum(1 for ln in lines if ln.startswith("GRID,")) == 11 ** 3
        assert lines[man.material_lines["2"] - 1].startswith("MAT1,2,")
        assert ",0.4995," in lines[man.material_lines["2"] - 1]
        assert lines[-1] == "ENDDATA" and "BEGIN BULK" in lines
        assert man.planted == {"2": list(gen.PLANTED)}
    # manifest written beside the deck, and reused
    again = gen.generate(tmp_path, "1k", fmt)
    assert again == man


@pytest.mark.parametrize("fmt,mfmt", [("keyword", "abaqus"), ("bulk", "nastran")])
def test_meshio_reads_same_counts(tmp_path, fmt, mfmt):
    meshio = pytest.importorskip("meshio")
    man = gen.generate(tmp_path, "tiny", fmt)
    mesh = meshio.read(man.path, file_format=mfmt)      # independent reader: meshio
    assert len(mesh.points) == man.nodes
    assert sum(len(c.data) for c in mesh.cells) == man.elements
    assert all(c.type == "hexahedron" for c in mesh.cells)


@pytest.mark.parametrize("fmt", ["keyword", "bulk"])
def test_planted_findings(tmp_path, fmt):
    from linter import parsers
    from linter.check import check_paths

    try:
        parsers.get(fmt)
    except ImportError:
        pytest.skip(f"the {fmt} parser is not there yet")
    man = gen.generate(tmp_path, "tiny", fmt)
    result = check_paths([man.path])
    from linter import reporters

    if not hasattr(reporters, "get"):
        pytest.skip("reporters not there yet")
    buf = io.StringIO()
    reporters.get("json")(result, buf, {})
    bench = _load("run_bench")
    assert bench.check_findings(man, buf.getvalue().encode()) == []
    # and the checker itself sees a wrong deck: drop the seal's planted finding
    rep = json.loads(buf.getvalue())
    rep["findings"] = [f for f in rep["findings"] if f["rule"] != "element/volumetric-locking"]
    problems = bench.check_findings(man, json.dumps(rep).encode())
    assert any("element/volumetric-locking" in p for p in problems)
