"""Decks of the layout matrix: the benchmark's block and materials, mesh cards in every writing style.

Same mesh, materials and planted findings as ``gen_decks.py``; only the way the mesh cards are written
changes (``layouts.py``). Also a keyword deck with a ``*DYNAMIC, EXPLICIT`` step instead of the static
one, and C3D20 / C3D10 decks of the same block (20-node hexahedra on a doubled grid; 10-node
tetrahedra, six per hexahedron).

Usage: ``python tests/bench/gen_layouts.py --out DIR [--sizes 100k,1M]``.
"""
from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
import gen_decks as G  # noqa: E402
import layouts as L  # noqa: E402

LAYOUT_VERSION = 1
#: element count -> block dimensions for the C3D10 decks (six tetrahedra per hexahedron)
TET_SIZES = {"tiny": (1, 1, 1), "1k": (6, 6, 5), "10k": (12, 12, 12), "100k": (26, 26, 25), "1M": (55, 55, 55)}


class _Counted:
    """A text file that counts the lines written to it."""

    def __init__(self, fh):
        self.fh, self.lines = fh, 0

    def write(self, s: str) -> None:
        self.lines += s.count("\n")
        self.fh.write(s)


def hex20(nx: int, ny: int, nz: int) -> tuple[np.ndarray, np.ndarray]:
    """Coordinates and connectivity (CalculiX C3D20 node order) of the block as 20-node hexahedra."""
    gx, gy, gz = 2 * nx + 1, 2 * ny + 1, 2 * nz + 1

    def did(a, b, c):          # node of the doubled grid
        return (a * gy + b) * gz + c

    a, b, c = np.meshgrid(np.arange(nx), np.arange(ny), np.arange(nz), indexing="ij")
    a, b, c = 2 * a.ravel(), 2 * b.ravel(), 2 * c.ravel()
    corner = [(0, 0, 0), (2, 0, 0), (2, 2, 0), (0, 2, 0), (0, 0, 2), (2, 0, 2), (2, 2, 2), (0, 2, 2)]
    edges = [(0, 1), (1, 2), (2, 3), (3, 0), (4, 5), (5, 6), (6, 7), (7, 4), (0, 4), (1, 5), (2, 6), (3, 7)]
    pts = corner + [tuple((np.array(corner[i]) + np.array(corner[j])) // 2) for i, j in edges]
    conn = np.stack([did(a + dx, b + dy, c + dz) for dx, dy, dz in pts], axis=1)
    return _compact(conn, (gx, gy, gz), 1.25)


def tet10(nx: int, ny: int, nz: int) -> tuple[np.ndarray, np.ndarray]:
    """Coordinates and connectivity (CalculiX C3D10 node order) of the block, six tetrahedra per hexahedron."""
    gx, gy, gz = 2 * nx + 1, 2 * ny + 1, 2 * nz + 1
    corner = np.array([(0, 0, 0), (2, 0, 0), (2, 2, 0), (0, 2, 0), (0, 0, 2), (2, 0, 2), (2, 2, 2), (0, 2, 2)])
    tets = []
    for t in ((0, 1, 2, 6), (0, 2, 3, 6), (0, 3, 7, 6), (0, 7, 4, 6), (0, 4, 5, 6), (0, 5, 1, 6)):
        p = corner[list(t)]
        if np.linalg.det(np.stack([p[1] - p[0], p[2] - p[0], p[3] - p[0]])) < 0:
            t = (t[0], t[2], t[1], t[3])
        tets.append(t)
    a, b, c = np.meshgrid(np.arange(nx), np.arange(ny), np.arange(nz), indexing="ij")
    a, b, c = 2 * a.ravel(), 2 * b.ravel(), 2 * c.ravel()
    mids = ((0, 1), (1, 2), (2, 0), (0, 3), (1, 3), (2, 3))
    out = []
    for t in tets:
        pts = [corner[i] for i in t] + [(corner[t[i]] + corner[t[j]]) // 2 for i, j in mids]
        out.append(np.stack([(a + dx) * gy * gz + (b + dy) * gz + (c + dz) for dx, dy, dz in pts], axis=1))
    conn = np.stack(out, axis=1).reshape(-1, 10)
    return _compact(conn, (gx, gy, gz), 1.25)


def _compact(conn: np.ndarray, dims, step: float) -> tuple[np.ndarray, np.ndarray]:
    used, inv = np.unique(conn, return_inverse=True)
    gx, gy, gz = dims
    ijk = np.stack([used // (gy * gz), (used // gz) % gy, used % gz], axis=1).astype(float) * step
    return ijk, (inv.reshape(conn.shape) + 1).astype(np.int64)


def write_keyword(path: Path, size: str, style: str, etype: str = "C3D8", step: str = "static") -> G.Manifest:
    if etype == "C3D20":
        dims = G.SIZES[size]
        coords, conn = hex20(*dims)
    elif etype == "C3D10":
        dims = TET_SIZES[size]
        coords, conn = tet10(*dims)
    else:
        dims = G.SIZES[size]
        coords, conn = G.mesh(*dims)
    ne, nn = len(conn), len(coords)
    half = ne // 2
    man = G.Manifest(str(path), "keyword", ne, nn, dims)
    with open(path, "w", encoding="ascii", newline="\n") as raw:
        fh = _Counted(raw)
        fh.write(f"** deckwarden layout deck: {etype}, {style}, {step} step\n*HEADING\nlayout block\n")
        L.keyword_mesh(fh, coords, conn, etype, style, elsets=[("METAL", 0, half), ("SEALS", half, ne)])
        for mat in (G.METAL, G.SEAL):
            man.material_lines[mat["name"]] = fh.lines + 1
            fh.write(f"*MATERIAL, NAME={mat['name']}\n*ELASTIC\n")
            man.elastic_lines[mat["name"]] = fh.lines + 1
            fh.write(f"{mat['E']:.6g}, {mat['nu']}\n*DENSITY\n{mat['rho']:.6g}\n")
        fh.write(f"*SOLID SECTION, ELSET=METAL, MATERIAL={G.METAL['name']}\n\n")
        fh.write(f"*SOLID SECTION, ELSET=SEALS, MATERIAL={G.SEAL['name']}\n\n")
        fh.write("*BOUNDARY\n1, 1, 3\n*STEP\n")
        fh.write("*DYNAMIC, EXPLICIT\n1.e-7, 1.e-4\n" if step == "explicit" else "*STATIC\n")
        fh.write("*CLOAD\n%d, 3, -1.0\n*NODE PRINT, NSET=NALL\nU\n*END STEP\n" % nn)
        man.lines = fh.lines
    _finish(man, path, etype)
    return man


def write_bulk(path: Path, size: str, style: str) -> G.Manifest:
    dims = G.SIZES[size]
    coords, conn = G.mesh(*dims)
    ne, nn = len(conn), len(coords)
    pid = np.where(np.arange(ne) < ne // 2, 1, 2)
    man = G.Manifest(str(path), "bulk", ne, nn, dims)
    with open(path, "w", encoding="ascii", newline="\n") as raw:
        fh = _Counted(raw)
        fh.write("ID LAYOUT,BLOCK\nSOL 101\nCEND\nTITLE = deckwarden layout block\n"
                 "SUBCASE 1\n  SPC = 1\n  LOAD = 1\n  DISP = ALL\nBEGIN BULK\n")
        fh.write(f"$ structured block of CHEXA, two materials, {style} layout\n")
        L.bulk_mesh(fh, coords, conn, pid, style)
        fh.write("PSOLID,1,1\nPSOLID,2,2\n")
        for mid, mat in ((1, G.METAL), (2, G.SEAL)):
            man.material_lines[str(mid)] = fh.lines + 1
            man.elastic_lines[str(mid)] = fh.lines + 1
            fh.write(f"MAT1,{mid},{mat['E']:.1f},,{mat['nu']},{mat['rho']:.3e}\n")
        fh.write("SPC1,1,123456,1\nFORCE,1,%d,,1.0,0.,0.,-1.\nENDDATA\n" % nn)
        man.lines = fh.lines
    _finish(man, path, "CHEXA")
    return man


def _finish(man: G.Manifest, path: Path, etype: str) -> None:
    G._finish(man, path)
    if etype == "C3D10":             # quadratic tetrahedra do not lock: only the material finding is planted
        man.planted = {k: ["elastic/near-incompressible"] for k in man.planted}
    man.layout = LAYOUT_VERSION
    path.with_suffix(path.suffix + ".json").write_text(man.to_json(), encoding="utf-8")


def decks() -> list[tuple[str, str, str, str, str]]:
    """The matrix: (name, format, style, element type, step)."""
    out = [(f"keyword-{s}", "keyword", s, "C3D8", "static") for s in L.KEYWORD_STYLES]
    out.append(("keyword-explicit", "keyword", "comma-blank", "C3D8", "explicit"))
    out.append(("keyword-C3D20", "keyword", "comma-blank", "C3D20", "static"))
    out.append(("keyword-C3D10", "keyword", "comma-blank", "C3D10", "static"))
    out += [(f"bulk-{s}", "bulk", s, "CHEXA", "static") for s in L.BULK_STYLES]
    return out


def generate(out: Path, size: str, name: str, reuse: bool = True) -> G.Manifest:
    _n, fmt, style, etype, step = next(d for d in decks() if d[0] == name)
    path = out / f"layout_{size}_{name}{'.inp' if fmt == 'keyword' else '.bdf'}"
    mpath = path.with_suffix(path.suffix + ".json")
    if reuse and path.is_file() and mpath.is_file():
        try:
            old = json.loads(mpath.read_text(encoding="utf-8"))
            if old["size_bytes"] == path.stat().st_size and old.get("layout") == LAYOUT_VERSION:
                old["dims"] = tuple(old["dims"])
                return G.Manifest(**old)
        except (ValueError, KeyError, TypeError):
            pass
    out.mkdir(parents=True, exist_ok=True)
    if fmt == "keyword":
        return write_keyword(path, size, style, etype, step)
    return write_bulk(path, size, style)


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n", 1)[0])
    ap.add_argument("--out", type=Path, default=G.default_out())
    ap.add_argument("--sizes", default="100k,1M")
    ap.add_argument("--decks", default=",".join(d[0] for d in decks()))
    args = ap.parse_args(argv)
    for size in args.sizes.split(","):
        for name in args.decks.split(","):
            man = generate(args.out, size, name)
            print(f"{man.path}: {man.elements} elements, {man.nodes} nodes, {man.size_bytes / 1e6:.1f} MB", flush=True)
    return 0


if __name__ == "__main__":
    sys.exit(main())
