"""Benchmark of the material-file route: ``deckwarden check model.yaml`` against ``meshio.read`` of its mesh.

Writes a structured block of hexahedra (``--cells``, 1M by default: 100 x 100 x 100) with meshio in
VTU (two regions by a cell-data array) and in Gmsh 4.1 ASCII (two physical volumes, one entity each,
plus the boundary quadrilaterals of one face as a physical surface), each with a material file
(a metal, reduced integration, and a nearly incompressible seal, hybrid). Then, in rounds, times in
separate processes (the launcher of ``run_bench.py``: wall time and peak RSS):

* ``deckwarden check --format json model.yaml`` (the findings are checked: the seal's
  ``elastic/near-incompressible`` note, no error, every cell counted);
* ``python -c "import meshio; meshio.read(mesh)"`` (meshio's read, the floor of this route).

Goal: deckwarden at most 1.3x meshio's time (median of the per-round ratios). Exit code 0 met,
1 a finding check failed, 3 the goal missed.

Usage: ``python tests/bench/run_mesh_bench.py [--out DIR] [--rounds 5] [--cells 1000000] [--formats vtu,gmsh]``
"""
from __future__ import annotations

import argparse
import json
import os
import statistics
import sys
import tempfile
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
from run_bench import PY, deckwarden_cmd, run  # noqa: E402

MESHIO_READ = """
import sys, meshio
m = meshio.read(sys.argv[1], file_format=sys.argv[2])
print(sum(len(c.data) for c in m.cells))
"""

MATERIALS = """\
deckwarden: 1
units: mm-tonne-s
mesh: {mesh}
materials:
  PV40_CASING:
    elastic: {{E: 90000, nu: 0.26}}
    density: 7.2e-9
  PV40_SEAL:
    elastic: {{E: 12, nu: 0.4995}}
    density: 1.1e-9
regions:
  - {{cells: {metal}, material: PV40_CASING, formulation: reduced}}
  - {{cells: {seal}, material: PV40_SEAL, formulation: hybrid}}
analysis:
  - {{kind: static, gravity: [0, 0, -9810]}}
"""


def block(n: int):
    """Points and hexahedra of an n x n x n block; region 1 for x < n/2, 2 for the rest; quads on x = 0."""
    import numpy as np

    g = np.arange(n + 1, dtype=float)
    z, y, x = np.meshgrid(g, g, g, indexing="ij")
    pts = np.stack([x.ravel(), y.ravel(), z.ravel()], axis=1)
    i, j, k = np.meshgrid(np.arange(n), np.arange(n), np.arange(n), indexing="ij")   # k: x, j: y, i: z
    base = (i * (n + 1) + j) * (n + 1) + k
    dx, dy, dz = 1, n + 1, (n + 1) ** 2
    hexes = np.stack([base, base + dx, base + dx + dy, base + dy,
                      base + dz, base + dz + dx, base + dz + dx + dy, base + dz + dy], axis=-1).reshape(-1, 8)
    region = np.where(k.ravel() < n // 2, 1, 2)
    qi, qj = np.meshgrid(np.arange(n), np.arange(n), indexing="ij")
    qb = (qi * (n + 1) + qj) * (n + 1)
    quads = np.stack([qb, qb + dy, qb + dy + dz, qb + dz], axis=-1).reshape(-1, 4)
    return pts, hexes, region, quads


def write_meshes(out: Path, cells: int, formats: list[str]) -> dict:
    import meshio
    import numpy as np

    n = round(cells ** (1 / 3))
    made = {}
    pts = None
    for fmt in formats:
        name = f"block_{n}.{'vtu' if fmt == 'vtu' else 'msh'}"
        mesh_path, yaml_path = out / name, out / f"model_{fmt}_{n}.yaml"
        if not mesh_path.exists():
            if pts is None:
                pts, hexes, region, quads = block(n)
            if fmt == "vtu":
                m = meshio.Mesh(pts, [("hexahedron", hexes)], cell_data={"region": [region]})
                meshio.write(mesh_path, m)
            else:
                a, b = hexes[region == 1], hexes[region == 2]
                dim_tags = np.zeros((len(pts), 2), dtype=int)
                dim_tags[np.unique(b)] = (3, 2)
                dim_tags[np.unique(a)] = (3, 1)
                dim_tags[np.unique(quads)] = (2, 1)
                cellsl = [("quad", quads), ("hexahedron", a), ("hexahedron", b)]
                m = meshio.Mesh(pts, cellsl, point_data={"gmsh:dim_tags": dim_tags},
                                cell_data={"gmsh:physical": [np.full(len(c), t) for (_n, c), t in zip(cellsl, (9, 1, 2))],
                                           "gmsh:geometrical": [np.full(len(c), t) for (_n, c), t in zip(cellsl, (1, 1, 2))]},
                                field_data={"casing": np.array([1, 3]), "seal": np.array([2, 3]),
                                            "inlet": np.array([9, 2])})
                meshio.write(mesh_path, m, file_format="gmsh", binary=False)
        sel = ({"metal": "{cell_data: region, value: 1}", "seal": "{cell_data: region, value: 2}"} if fmt == "vtu"
               else {"metal": "{physical: casing}", "seal": "{physical: seal}"})
        yaml_path.write_text(MATERIALS.format(mesh=name, **sel))
        made[fmt] = (mesh_path, yaml_path, "vtu" if fmt == "vtu" else "gmsh", n ** 3)
    return made


def check_report(stdout: bytes, cells: int) -> list[str]:
    try:
        doc = json.loads(stdout)
    except ValueError as exc:
        return [f"the report is not JSON ({exc})"]
    problems = []
    (f,) = doc["files"]
    if f["summary"]["elements"] != cells:
        problems.append(f"{f['summary']['elements']} elements counted, {cells} expected")
    rules = {(x["rule"], x.get("material")) for x in doc["findings"]}
    if ("elastic/near-incompressible", "PV40_SEAL") not in rules:
        problems.append("no elastic/near-incompressible note on PV40_SEAL")
    errors = [x for x in doc["findings"] if x["severity"] == "error"]
    if errors:
        problems.append(f"unexpected errors: {[(x['rule'], x['message']) for x in errors]}")
    return problems


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--out", default=os.path.join(tempfile.gettempdir(), "deckwarden-mesh-bench"))
    ap.add_argument("--rounds", type=int, default=5)
    ap.add_argument("--cells", type=int, default=1_000_000)
    ap.add_argument("--formats", default="vtu,gmsh")
    ap.add_argument("--goal", type=float, default=1.3)
    args = ap.parse_args(argv)
    out = Path(args.out)
    out.mkdir(parents=True, exist_ok=True)
    made = write_meshes(out, args.cells, args.formats.split(","))
    dw = deckwarden_cmd()
    rc = 0
    rows = []
    for fmt, (mesh_path, yaml_path, mfmt, cells) in made.items():
        d_runs, m_runs, ratios = [], [], []
        for r in range(args.rounds):
            d = run(dw + ["check", "--format", "json", str(yaml_path)], cwd=out)
            m = run([PY, "-c", MESHIO_READ, str(mesh_path), mfmt], cwd=out)
            if r == 0:
                problems = check_report(d[3], cells)
                for p in problems:
                    print(f"  ! {fmt}: {p}")
                rc = rc or (1 if problems else 0)
            d_runs.append(d)
            m_runs.append(m)
            ratios.append(d[0] / m[0])
            print(f"  {fmt} round {r + 1}: deckwarden {d[0]:.2f} s, meshio.read {m[0]:.2f} s ({d[0] / m[0]:.2f}x)",
                  flush=True)
        dw_s, io_s = statistics.median(x[0] for x in d_runs), statistics.median(x[0] for x in m_runs)
        rows.append((fmt, mesh_path.stat().st_size / 1e6, dw_s, statistics.median(x[1] for x in d_runs) / 1e6,
                     io_s, statistics.median(x[1] for x in m_runs) / 1e6, statistics.median(ratios),
                     min(x[0] for x in d_runs), min(x[0] for x in m_runs)))
    print(f"\n{'mesh':<6} {'MB':>7} {'dw s':>7} {'dw RSS':>8} {'meshio s':>9} {'io RSS':>8} {'dw/meshio':>10} "
          f"{'best dw s':>10} {'best io s':>10}")
    for fmt, mb, dws, dwr, ios, ior, ratio, dmin, imin in rows:
        print(f"{fmt:<6} {mb:7.1f} {dws:7.2f} {dwr:8.0f} {ios:9.2f} {ior:8.0f} {ratio:10.2f} {dmin:10.2f} {imin:10.2f}")
    missed = [r for r in rows if r[6] > args.goal]
    for r in rows:
        print(f"goal {r[0]}: deckwarden <= {args.goal}x meshio.read: {'met' if r[6] <= args.goal else 'MISSED'} "
              f"({r[6]:.2f}x, median of {args.rounds} per-round ratios)")
    return rc or (3 if missed else 0)


if __name__ == "__main__":
    sys.exit(main())
