"""Benchmark of ``deckwarden check`` on a code_aster study with a large native mesh (``.mail``).

Writes a study (``.export`` + ``.comm`` + ``.mail``) of a structured block of HEXA8 cells (n x n x n;
n = 100 gives 1M cells and 1.03M nodes) with two groups: a metal (the lower 90 % of the layers) and a
nearly incompressible seal (nu = 0.4995, the top layers) on the fully integrated '3D' formulation. Then
measures, each in its own subprocess through the launcher of ``run_bench.py`` (wall time, peak RSS):

* ``deckwarden check --format json`` on the ``.export`` (the findings are checked: locking and near-
  incompressible on the seal, nothing on the metal);
* a pure-Python line loop that parses the mesh's coordinates (floats) and cells (node names mapped to
  indices through a dict), the reference the goal compares with.

Goals: deckwarden at least 10x faster than the loop; its peak RSS at most 1.5x the size of the files.
Usage: ``python tests/bench/bench_aster.py [--out DIR] [--n 100] [--repeat 3]``
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
from run_bench import deckwarden_cmd, run  # noqa: E402

PY = sys.executable

LOOP = """
import sys
coords, names, cells = [], {}, []
section, nodes = None, 0
for line in open(sys.argv[1], 'rb'):
    parts = line.split()
    if not parts or parts[0].startswith(b'%'):
        continue
    word = parts[0]
    if len(parts) == 1 and word.isupper() and not word[-1:].isdigit() or word in (b'COOR_3D', b'HEXA8', b'QUAD4'):
        section = word
        continue
    if word == b'FINSF':
        section = None
        continue
    if section == b'COOR_3D':
        names[word] = len(coords)
        coords.append((float(parts[1]), float(parts[2]), float(parts[3])))
    elif section == b'HEXA8':
        cells.append([names[p] for p in parts[1:]])
print(len(coords), len(cells))
"""

COMM = """\
DEBUT()
MESH = LIRE_MAILLAGE(FORMAT='ASTER', UNITE=20)
MODEL = AFFE_MODELE(MAILLAGE=MESH, AFFE=_F(TOUT='OUI', PHENOMENE='MECANIQUE', MODELISATION='3D'))
METAL = DEFI_MATERIAU(ELAS=_F(E=210000.0, NU=0.3, RHO=7.85e-9))
SEAL = DEFI_MATERIAU(ELAS=_F(E=6.0, NU=0.4995, RHO=1.2e-9))
FIELD = AFFE_MATERIAU(MAILLAGE=MESH, AFFE=(_F(GROUP_MA='METAL', MATER=METAL), _F(GROUP_MA='SEAL', MATER=SEAL)))
RES = MECA_STATIQUE(MODELE=MODEL, CHAM_MATER=FIELD)
FIN()
"""


def write_study(folder: Path, n: int) -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    mail = folder / f"block{n}.mail"
    if not mail.exists():
        p = n + 1
        with open(mail, "w") as fh:
            fh.write("TITRE\n generated block\nFINSF\nCOOR_3D\n")
            for k in range(p):
                for j in range(p):
                    base = (k * p + j) * p
                    fh.write("".join(f"N{base + i + 1} {i * 1.0:.1f} {j * 1.0:.1f} {k * 1.0:.1f}\n" for i in range(p)))
            fh.write("FINSF\nHEXA8\n")
            m = 0
            for k in range(n):
                rows = []
                for j in range(n):
                    for i in range(n):
                        a = (k * p + j) * p + i + 1
                        b, c, d = a + 1, a + p + 1, a + p
                        m += 1
                        rows.append(f"M{m} N{a} N{b} N{c} N{d} N{a + p * p} N{b + p * p} N{c + p * p} N{d + p * p}\n")
                fh.write("".join(rows))
            fh.write("FINSF\n")
            split = int(n * 0.9) * n * n
            for name, lo, hi in (("METAL", 1, split), ("SEAL", split + 1, n ** 3)):
                fh.write(f"GROUP_MA\n {name}\n")
                for s in range(lo, hi + 1, 10):
                    fh.write(" " + " ".join(f"M{x}" for x in range(s, min(hi, s + 9) + 1)) + "\n")
                fh.write("FINSF\n")
            fh.write("FIN\n")
    (folder / f"block{n}.comm").write_text(COMM)
    export = folder / f"block{n}.export"
    export.write_text(f"P time_limit 600\nF comm block{n}.comm D 1\nF mail block{n}.mail D 20\n")
    return export


def check_findings(report: bytes) -> list[str]:
    rep = json.loads(report)
    got = {(x["rule"], x.get("material")) for x in rep["findings"]}
    problems = []
    for want in (("element/volumetric-locking", "SEAL"), ("elastic/near-incompressible", "SEAL")):
        if want not in got:
            problems.append(f"missing {want}")
    problems += [f"unexpected {r} on METAL" for r, m in got if m == "METAL"]
    problems += [f"{r}" for r, _m in got if r.startswith("internal/")]
    return problems


def main(argv=None) -> int:
    ap = argparse.ArgumentParser()
    ap.add_argument("--out", default=os.path.join(tempfile.gettempdir(), "deckwarden-bench-aster"))
    ap.add_argument("--n", type=int, default=100)
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--loop-repeat", type=int, default=1)
    args = ap.parse_args(argv)
    export = write_study(Path(args.out), args.n)
    mail = export.with_suffix(".mail")
    size = sum(p.stat().st_size for p in (export, export.with_suffix(".comm"), mail))
    print(f"study {export} ({args.n ** 3} cells, {size / 1e6:.1f} MB); load: {os.getloadavg()}")
    dw = [run(deckwarden_cmd() + ["check", str(export), "--format", "json"]) for _ in range(args.repeat)]
    problems = check_findings(dw[-1][3])
    loop = [run([PY, "-c", LOOP, str(mail)]) for _ in range(args.loop_repeat)]
    t_dw, rss_dw = statistics.median(r[0] for r in dw), statistics.median(r[1] for r in dw)
    t_loop, rss_loop = statistics.median(r[0] for r in loop), statistics.median(r[1] for r in loop)
    print(f"deckwarden check: {t_dw:.2f} s (runs {', '.join(f'{r[0]:.2f}' for r in dw)}), "
          f"peak RSS {rss_dw / 1e6:.0f} MB ({rss_dw / size:.2f}x the files)")
    print(f"Python line loop: {t_loop:.2f} s, peak RSS {rss_loop / 1e6:.0f} MB -> {t_loop / t_dw:.1f}x deckwarden")
    print(f"load after: {os.getloadavg()}")
    goals = [("10x faster than the loop", t_loop / t_dw >= 10), ("peak RSS <= 1.5x the files", rss_dw <= 1.5 * size)]
    for name, ok in goals:
        print(f"  goal {name}: {'met' if ok else 'MISSED'}")
    for p in problems:
        print(f"  findings: {p}")
    return 1 if problems else (0 if all(ok for _n, ok in goals) else 3)


if __name__ == "__main__":
    sys.exit(main())
