"""Benchmark of the FEBio reader: ``deckwarden check`` of a 1M-hexahedron ``.feb`` against
``xml.etree.ElementTree.parse`` of the same file.

Writes a structured block of 8-node hexahedra (``--cells``, 1M by default: 100 x 100 x 100) as an
FEBio 4.0 model: an invented PV40 coupling insert, half an uncoupled Mooney-Rivlin elastomer
(k/mu0 = 1000, on the solver's default three-field hex8), half a coupled neo-Hookean with nu = 0.495
on plain hex8. Then, in rounds, each in its own process through the launcher of ``run_bench.py``
(wall time, peak RSS):

* ``deckwarden check --format json model.feb`` (findings checked: every element counted, the
  neo-Hookean half gets ``element/volumetric-locking`` and ``elastic/near-incompressible``, no error);
* ``python -c "import xml.etree.ElementTree as ET; ET.parse(model)"`` (the tree alone, no checks).

Goals: deckwarden at least 10x faster than ``ET.parse`` (median of the per-round ratios), peak RSS
at most 1.5x the file. Exit code 0 met, 1 a finding check failed, 3 a goal missed.

Usage: ``python tests/bench/run_febio_bench.py [--out DIR] [--rounds 3] [--cells 1000000]``
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

ET_PARSE = """
import sys
import xml.etree.ElementTree as ET
root = ET.parse(sys.argv[1]).getroot()
print(root.tag)
"""

HEAD = """<?xml version="1.0" encoding="ISO-8859-1"?>
<!-- PV40 irrigation pump: elastomer coupling insert between motor and pump shaft (invented benchmark model) -->
<febio_spec version="4.0">
\t<Module type="solid"/>
\t<Control>
\t\t<analysis>STATIC</analysis>
\t\t<time_steps>10</time_steps>
\t\t<step_size>0.1</step_size>
\t</Control>
\t<Material>
\t\t<material id="1" name="PV40_INSERT_NBR" type="Mooney-Rivlin">
\t\t\t<density>1.2e-9</density>
\t\t\t<c1>0.4</c1>
\t\t\t<c2>0.1</c2>
\t\t\t<k>1000</k>
\t\t</material>
\t\t<material id="2" name="PV40_INSERT_TPU" type="neo-Hookean">
\t\t\t<density>1.15e-9</density>
\t\t\t<E>25</E>
\t\t\t<v>0.495</v>
\t\t</material>
\t</Material>
\t<Mesh>
"""

TAIL = """\t<MeshDomains>
\t\t<SolidDomain name="InsertA" mat="PV40_INSERT_NBR"/>
\t\t<SolidDomain name="InsertB" mat="PV40_INSERT_TPU"/>
\t</MeshDomains>
</febio_spec>
"""


def _lines(fh, fmt_rows, tag, ids, values, chunk=200_000):
    for a in range(0, len(ids), chunk):
        rows = values[a:a + chunk]
        fh.write("".join(f'\t\t\t<{tag} id="{i}">{r}</{tag}>\n'
                         for i, r in zip(ids[a:a + chunk].tolist(), fmt_rows(rows))).encode("latin-1"))


def write_model(path: Path, cells: int) -> int:
    import numpy as np

    n = round(cells ** (1 / 3))
    g = np.arange(n + 1, dtype=float) * 2.0          # 2 mm spacing
    z, y, x = np.meshgrid(g, g, g, indexing="ij")
    pts = np.stack([x.ravel(), y.ravel(), z.ravel()], axis=1)
    i, j, k = np.meshgrid(np.arange(n), np.arange(n), np.arange(n), indexing="ij")
    base = (i * (n + 1) + j) * (n + 1) + k
    dx, dy, dz = 1, n + 1, (n + 1) ** 2
    hexes = np.stack([base, base + dx, base + dx + dy, base + dy, base + dz, base + dz + dx,
                      base + dz + dx + dy, base + dz + dy], axis=-1).reshape(-1, 8) + 1
    half = len(hexes) // 2
    with open(path, "wb") as fh:
        fh.write(HEAD.encode())
        fh.write(b'\t\t<Nodes name="Insert">\n')
        _lines(fh, lambda rows: (f"{a:g},{b:g},{c:g}" for a, b, c in rows.tolist()), "node",
               np.arange(1, len(pts) + 1), pts)
        fh.write(b"\t\t</Nodes>\n")
        for name, sl, first in (("InsertA", slice(0, half), 1), ("InsertB", slice(half, None), half + 1)):
            fh.write(f'\t\t<Elements type="hex8" name="{name}">\n'.encode())
            part = hexes[sl]
            _lines(fh, lambda rows: (",".join(map(str, r)) for r in rows.tolist()), "elem",
                   np.arange(first, first + len(part)), part)
            fh.write(b"\t\t</Elements>\n")
        fh.write(b"\t</Mesh>\n")
        fh.write(TAIL.encode())
    return len(hexes)


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
    for want in (("element/volumetric-locking", "PV40_INSERT_TPU"), ("elastic/near-incompressible", "PV40_INSERT_TPU")):
        if want not in rules:
            problems.append(f"no {want[0]} on {want[1]}")
    if any(m == "PV40_INSERT_NBR" and r.startswith(("element/", "hyper/")) for r, m in rules):
        problems.append("a locking or hyper finding on the three-field Mooney-Rivlin half")
    errors = [x for x in doc["findings"] if x["severity"] == "error"]
    if errors:
        problems.append(f"unexpected errors: {[(x['rule'], x['message']) for x in errors]}")
    return problems


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--out", default=os.path.join(tempfile.gettempdir(), "deckwarden-febio-bench"))
    ap.add_argument("--rounds", type=int, default=3)
    ap.add_argument("--cells", type=int, default=1_000_000)
    ap.add_argument("--speed-goal", type=float, default=10.0)
    ap.add_argument("--memory-goal", type=float, default=1.5)
    args = ap.parse_args(argv)
    out = Path(args.out)
    out.mkdir(parents=True, exist_ok=True)
    path = out / f"pv40_insert_{args.cells}.feb"
    cells = round(args.cells ** (1 / 3)) ** 3
    if not path.exists():
        print(f"writing {path} ...", flush=True)
        write_model(path, args.cells)
    size = path.stat().st_size
    dw = deckwarden_cmd()
    d_runs, e_runs, ratios, rc = [], [], [], 0
    for r in range(args.rounds):
        d = run(dw + ["check", "--format", "json", str(path)], cwd=out)
        e = run([PY, "-c", ET_PARSE, str(path)], cwd=out)
        if r == 0:
            problems = check_report(d[3], cells)
            for p in problems:
                print(f"  ! {p}")
            rc = 1 if problems else 0
        d_runs.append(d)
        e_runs.append(e)
        ratios.append(e[0] / d[0])
        print(f"  round {r + 1}: deckwarden {d[0]:.2f} s ({d[1] / 1e6:.0f} MB), ET.parse {e[0]:.2f} s "
              f"({e[1] / 1e6:.0f} MB): {e[0] / d[0]:.1f}x", flush=True)
    dws, ets = statistics.median(x[0] for x in d_runs), statistics.median(x[0] for x in e_runs)
    rss = statistics.median(x[1] for x in d_runs)
    speed, mem = statistics.median(ratios), rss / size
    print(f"\nfile {size / 1e6:.1f} MB, {cells} hexahedra; medians of {args.rounds} rounds")
    print(f"deckwarden check: {dws:.2f} s (best {min(x[0] for x in d_runs):.2f} s), peak RSS {rss / 1e6:.0f} MB "
          f"({mem:.2f}x the file)")
    print(f"ET.parse alone:   {ets:.2f} s (best {min(x[0] for x in e_runs):.2f} s), peak RSS "
          f"{statistics.median(x[1] for x in e_runs) / 1e6:.0f} MB")
    ok_speed, ok_mem = speed >= args.speed_goal, mem <= args.memory_goal
    print(f"goal: ET.parse / deckwarden >= {args.speed_goal:g}: {'met' if ok_speed else 'MISSED'} ({speed:.1f}x, "
          "median of the per-round ratios)")
    print(f"goal: peak RSS <= {args.memory_goal:g}x the file: {'met' if ok_mem else 'MISSED'} ({mem:.2f}x)")
    return rc or (0 if ok_speed and ok_mem else 3)


if __name__ == "__main__":
    sys.exit(main())
