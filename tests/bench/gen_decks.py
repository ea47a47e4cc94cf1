"""Synthetic decks for the benchmark: a structured block of 8-node hexahedra, two materials.

The block is ``nx x ny x nz`` hexahedra. The first half of the elements (by id) is a
stiff metal, the second half a nearly incompressible seal (nu = 0.4995) on fully
integrated 8-node hexahedra, which must give ``elastic/near-incompressible`` and
``element/volumetric-locking`` on the seal and neither on the metal.

Both formats are written:

* keyword (``.inp``): ``*NODE``, two ``*ELEMENT, TYPE=C3D8`` blocks, two
  ``*SOLID SECTION`` cards, two materials, one static step;
* bulk (``.bdf``): free field, ``SOL 101``, ``CEND``, ``BEGIN BULK`` ... ``ENDDATA``,
  ``GRID`` / ``CHEXA`` (with a ``+`` continuation) / ``PSOLID`` / ``MAT1``.

Each deck comes with a manifest (what was written and which findings are planted)
that ``run_bench.py`` and ``tests/test_bench_generator.py`` check against.

Usage: ``python tests/bench/gen_decks.py --out DIR [--sizes 10k,100k,1M]``.
Nothing here is written into the repository unless ``--out`` points there.
"""
from __future__ import annotations

import argparse
import json
import os
import sys
import tempfile
from dataclasses import asdict, dataclass, field
from pathlib import Path

import numpy as np

#: element count -> block dimensions (nx, ny, nz)
SIZES = {
    "tiny": (2, 1, 1),
    "1k": (10, 10, 10),
    "10k": (100, 10, 10),
    "100k": (100, 100, 10),
    "1M": (100, 100, 100),
}

#: the two materials (consistent mm-tonne-s: MPa, tonne/mm^3)
METAL = {"name": "STEEL", "E": 210000.0, "nu": 0.3, "rho": 7.85e-9}
SEAL = {"name": "SEAL", "E": 12.0, "nu": 0.4995, "rho": 1.2e-9}
#: findings that must be present on the seal and absent on the metal
PLANTED = ("elastic/near-incompressible", "element/volumetric-locking")

ROWS_PER_CHUNK = 200_000
#: bumped whenever the layout of the decks changes (older decks in the scratch folder are rewritten)
LAYOUT_VERSION = 2


@dataclass
class Manifest:
    path: str
    format: str
    elements: int
    nodes: int
    dims: tuple[int, int, int]
    #: material name as written -> 1-based line of its defining card (*MATERIAL / MAT1)
    material_lines: dict[str, int] = field(default_factory=dict)
    #: material name as written -> 1-based line of its elastic constants (data line / MAT1)
    elastic_lines: dict[str, int] = field(default_factory=dict)
    planted: dict[str, list[str]] = field(default_factory=dict)
    #: the material without any planted finding
    clean: list[str] = field(default_factory=list)
    lines: int = 0
    size_bytes: int = 0
    layout: int = LAYOUT_VERSION

    def to_json(self) -> str:
        return json.dumps(asdict(self), indent=1)


def mesh(nx: int, ny: int, nz: int) -> tuple[np.ndarray, np.ndarray]:
    """Node coordinates (n, 3) and 1-based hexahedron connectivity (e, 8), ccx/bulk node order."""
    i, j, k = np.meshgrid(np.arange(nx + 1), np.arange(ny + 1), np.arange(nz + 1), indexing="ij")
    coords = np.stack([i.ravel(), j.ravel(), k.ravel()], axis=1).astype(float) * 2.5

    def nid(a, b, c):
        return (a * (ny + 1) + b) * (nz + 1) + c + 1

    a, b, c = np.meshgrid(np.arange(nx), np.arange(ny), np.arange(nz), indexing="ij")
    a, b, c = a.ravel(), b.ravel(), c.ravel()
    conn = np.stack([nid(a, b, c), nid(a + 1, b, c), nid(a + 1, b + 1, c), nid(a, b + 1, c),
                     nid(a, b, c + 1), nid(a + 1, b, c + 1), nid(a + 1, b + 1, c + 1), nid(a, b + 1, c + 1)],
                    axis=1)
    return coords, conn.astype(np.int64)


def _write_rows(fh, fmt: str, columns: list[np.ndarray]) -> int:
    """Write rows ``fmt % row`` in chunks; returns the number of lines written."""
    n = len(columns[0])
    for s in range(0, n, ROWS_PER_CHUNK):
        rows = zip(*(c[s:s + ROWS_PER_CHUNK].tolist() for c in columns))
        fh.write("".join(fmt % r for r in rows))
    return n * fmt.count("\n")


def write_keyword(path: Path, dims: tuple[int, int, int]) -> Manifest:
    coords, conn = mesh(*dims)
    ne, nn = len(conn), len(coords)
    half = ne // 2
    eid = np.arange(1, ne + 1)
    man = Manifest(str(path), "keyword", ne, nn, dims)
    line = 0
    with open(path, "w", encoding="ascii", newline="\n") as fh:
        def put(text: str) -> None:
            nonlocal line
            fh.write(text)
            line += text.count("\n")

        put("** deckwarden benchmark deck: structured block of C3D8, two materials\n")
        put("*HEADING\nbenchmark block\n*NODE, NSET=NALL\n")
        line += _write_rows(fh, "%d, %.1f, %.1f, %.1f\n", [np.arange(1, nn + 1), *coords.T])
        for name, lo, hi in (("METAL", 0, half), ("SEALS", half, ne)):
            put(f"*ELEMENT, TYPE=C3D8, ELSET={name}\n")
            line += _write_rows(fh, "%d, " + ", ".join(["%d"] * 8) + "\n",
                                [eid[lo:hi], *conn[lo:hi].T])
        for mat in (METAL, SEAL):
            man.material_lines[mat["name"]] = line + 1
            put(f"*MATERIAL, NAME={mat['name']}\n*ELASTIC\n")
            man.elastic_lines[mat["name"]] = line + 1
            put(f"{mat['E']:.6g}, {mat['nu']}\n*DENSITY\n{mat['rho']:.6g}\n")
        put(f"*SOLID SECTION, ELSET=METAL, MATERIAL={METAL['name']}\n\n")
        put(f"*SOLID SECTION, ELSET=SEALS, MATERIAL={SEAL['name']}\n\n")
        put("*BOUNDARY\n1, 1, 3\n")
        put("*STEP\n*STATIC\n*CLOAD\n%d, 3, -1.0\n*NODE PRINT, NSET=NALL\nU\n*END STEP\n" % nn)
    man.lines = line
    _finish(man, path)
    return man


def write_bulk(path: Path, dims: tuple[int, int, int]) -> Manifest:
    coords, conn = mesh(*dims)
    ne, nn = len(conn), len(coords)
    half = ne // 2
    eid = np.arange(1, ne + 1)
    pid = np.where(eid <= half, 1, 2)
    man = Manifest(str(path), "bulk", ne, nn, dims)
    line = 0
    with open(path, "w", encoding="ascii", newline="\n") as fh:
        def put(text: str) -> None:
            nonlocal line
            fh.write(text)
            line += text.count("\n")

        put("ID BENCH,BLOCK\nSOL 101\nCEND\nTITLE = deckwarden benchmark block\n"
            "SUBCASE 1\n  SPC = 1\n  LOAD = 1\n  DISP = ALL\nBEGIN BULK\n")
        put("$ structured block of CHEXA, two materials\n")
        line += _write_rows(fh, "GRID,%d,,%.1f,%.1f,%.1f\n", [np.arange(1, nn + 1), *coords.T])
        line += _write_rows(fh, "CHEXA,%d,%d,%d,%d,%d,%d,%d,%d,+\n+,%d,%d\n", [eid, pid, *conn.T])
        put("PSOLID,1,1\nPSOLID,2,2\n")
        for mid, mat in ((1, METAL), (2, SEAL)):
            man.material_lines[str(mid)] = line + 1
            man.elastic_lines[str(mid)] = line + 1
            put(f"MAT1,{mid},{mat['E']:.1f},,{mat['nu']},{mat['rho']:.3e}\n")
        put("SPC1,1,123456,1\nFORCE,1,%d,,1.0,0.,0.,-1.\nENDDATA\n" % nn)
    man.lines = line
    _finish(man, path)
    return man


def _finish(man: Manifest, path: Path) -> None:
    man.size_bytes = path.stat().st_size
    names = list(man.material_lines)
    man.clean = [names[0]]
    man.planted = {names[1]: list(PLANTED)}
    path.with_suffix(path.suffix + ".json").write_text(man.to_json(), encoding="utf-8")


WRITERS = {"keyword": (write_keyword, ".inp"), "bulk": (write_bulk, ".bdf")}


def generate(out: Path, size: str, fmt: str, reuse: bool = True) -> Manifest:
    """Write (or reuse, when its manifest matches) the deck of ``size`` in format ``fmt``."""
    writer, ext = WRITERS[fmt]
    dims = SIZES[size]
    path = out / f"block_{size}_{fmt}{ext}"
    mpath = path.with_suffix(path.suffix + ".json")
    if reuse and path.is_file() and mpath.is_file():
        try:
            old = json.loads(mpath.read_text(encoding="utf-8"))
            if (tuple(old["dims"]) == dims and old["size_bytes"] == path.stat().st_size
                    and old.get("layout") == LAYOUT_VERSION):
                old["dims"] = tuple(old["dims"])
                return Manifest(**old)
        except (ValueError, KeyError, TypeError):
            pass
    out.mkdir(parents=True, exist_ok=True)
    return writer(path, dims)


def default_out() -> Path:
    return Path(tempfile.gettempdir()) / "deckwarden-bench"


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n", 1)[0])
    ap.add_argument("--out", type=Path, default=default_out(), help="scratch folder (default: %(default)s)")
    ap.add_argument("--sizes", default="tiny,10k,100k,1M", help="comma list of " + ", ".join(SIZES))
    ap.add_argument("--formats", default="keyword,bulk")
    ap.add_argument("--force", action="store_true", help="rewrite decks even when present")
    args = ap.parse_args(argv)
    for size in args.sizes.split(","):
        for fmt in args.formats.split(","):
            man = generate(args.out, size, fmt, reuse=not args.force)
            print(f"{man.path}: {man.elements} elements, {man.nodes} nodes, {man.size_bytes / 1e6:.1f} MB")
    return 0


if __name__ == "__main__":
    sys.exit(main())
