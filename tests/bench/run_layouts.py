"""Layout matrix: ``deckwarden check`` on the same block written in every style, beside meshio and a line loop.

For each deck of ``gen_layouts.decks()`` (keyword: seven separator/line styles, an explicit-step deck,
C3D20 and C3D10 decks; bulk: free, small, large, mixed, tab, blank continuations) and each size, measures
in its own subprocess (``run_bench.run``: wall time, peak RSS): ``deckwarden check --format json``
(findings checked as in ``run_bench``), ``meshio.read`` (its cell count is compared with the deck's:
a style meshio does not read is shown as such, not timed as a success) and the plain line loop.
deckwarden runs in rounds over all decks (``--repeat``), so that a slow spell of the shared machine
falls on every style alike; medians are reported. Prints a table and the goal checks; ``--readme``
writes the table into README.md between the ``perf-layouts`` markers.

Goals (1M decks): every bulk style >= 15x faster than meshio.read where it reads the style and within
1.5x of the free-field time; every keyword style >= 20x meshio.read; peak RSS <= 1.5x the file; the
explicit-step deck <= 2x the time of the same deck with a static step and RSS <= 2x the file.
Exit code: 0 all met, 1 findings not as expected, 3 a goal missed (``--no-goals``: report only).

Usage: ``python tests/bench/run_layouts.py [--out DIR] [--sizes 100k,1M] [--repeat 3]``
"""
from __future__ import annotations

import argparse
import os
import re
import statistics
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
import gen_decks  # noqa: E402
import gen_layouts as GL  # noqa: E402
import run_bench as RB  # noqa: E402

MESHIO_READ = """
import sys, meshio
m = meshio.read(sys.argv[1], file_format=sys.argv[2])
print(sum(len(c.data) for c in m.cells), sorted({c.data.shape[1] for c in m.cells}))
"""

#: decks measured at 100k only unless named in --big (their 1M files are 4-6x the hexahedron decks)
SMALL_ONLY = ("keyword-C3D20", "keyword-C3D10")


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n", 1)[0])
    ap.add_argument("--out", type=Path, default=gen_decks.default_out())
    ap.add_argument("--sizes", default="100k,1M")
    ap.add_argument("--decks", default=",".join(d[0] for d in GL.decks()))
    ap.add_argument("--big", default="", help="decks of " + ", ".join(SMALL_ONLY) + " to measure at 1M too")
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--meshio-repeat", type=int, default=1)
    ap.add_argument("--readme", type=Path, help="write the table into this README between the perf-layouts markers")
    ap.add_argument("--no-goals", action="store_true")
    args = ap.parse_args(argv)
    dw = RB.deckwarden_cmd()
    names = [n for n in args.decks.split(",") if n]
    sizes = [s for s in args.sizes.split(",") if s]
    todo = [(n, s) for s in sizes for n in names if s != "1M" or n not in SMALL_ONLY or n in args.big.split(",")]
    load0 = os.getloadavg()
    print(f"# layout matrix: repeat={args.repeat}, meshio repeat={args.meshio_repeat}, {os.cpu_count()} CPUs, "
          f"load {load0[0]:.2f} {load0[1]:.2f} {load0[2]:.2f}, decks in {args.out}", flush=True)
    mans = {}
    for n, s in todo:
        t0 = time.perf_counter()
        mans[(n, s)] = GL.generate(args.out, s, n)
        if time.perf_counter() - t0 > 1:
            print(f"  wrote {mans[(n, s)].path}", flush=True)
    runs: dict = {k: [] for k in todo}
    for _ in range(args.repeat):
        for k in todo:
            runs[k].append(RB.run(dw + ["check", "--format", "json", mans[k].path]))
    res, problems = {}, []
    for k in todo:
        n, s = k
        man = mans[k]
        m_dw = RB.summarize(runs[k])
        problems += [f"{n} {s}: {p}" for p in RB.check_findings(man, m_dw["stdout"])]
        fmt = man.format
        m_io = RB.measure([RB.PY, "-c", MESHIO_READ, man.path, "abaqus" if fmt == "keyword" else "nastran"],
                          args.meshio_repeat)
        out = m_io["stdout"].decode(errors="replace").split(None, 1)
        width = "[20]" if "C3D20" in n else "[10]" if "C3D10" in n else "[8]"
        if m_io["rc"] != 0 or len(out) != 2 or not out[0].isdigit():
            m_io["status"] = "fails"
        elif int(out[0]) != man.elements or out[1].strip() != width:
            m_io["status"] = f"misreads ({out[0]} cells of {out[1].strip()} nodes)"
        else:
            m_io["status"] = "ok"
        m_loop = RB.measure([RB.PY, "-c", RB.KEYWORD_LOOP if fmt == "keyword" else RB.BULK_LOOP, man.path], 1)
        res[k] = {"dw": m_dw, "meshio": m_io, "loop": m_loop, "man": man}
        print(f"  measured {n} {s}", flush=True)
    load1 = os.getloadavg()
    rows = [table_row(n, s, res[(n, s)]) for n, s in todo]
    head = ("deck", "size", "file MB", "deckwarden s", "peak RSS MB (x file)", "meshio.read s", "meshio / deckwarden",
            "line loop s")
    md = ["| " + " | ".join(head) + " |", "|" + " --- |" * len(head)] + ["| " + " | ".join(r) + " |" for r in rows]
    print()
    print("\n".join(md))
    goals = check_goals(res, sizes)
    print(f"\nload average before {load0[0]:.2f}, after {load1[0]:.2f} (1 min)")
    for name, ok, detail in goals:
        print(f"[{'met' if ok else 'MISSED'}] {name}: {detail}")
    if args.readme:
        write_readme(args.readme, md, goals, args, load0, load1)
    if problems:
        print("\nFINDINGS NOT AS EXPECTED:\n  " + "\n  ".join(problems))
        return 1
    print("\nfindings on the layout decks: as expected")
    return 3 if goals and not args.no_goals and not all(ok for _n, ok, _d in goals) else 0


def table_row(name: str, size: str, r: dict) -> tuple:
    man, d, io, lp = r["man"], r["dw"], r["meshio"], r["loop"]
    if io["status"] == "ok":
        mio, ratio = f"{io['wall']:.2f}", f"{io['wall'] / d['wall']:.1f}x"
    else:
        mio, ratio = io["status"], "-"
    return (name, size, f"{man.size_bytes / 1e6:.1f}", f"{d['wall']:.2f}",
            f"{d['rss'] / 1e6:.0f} ({d['rss'] / man.size_bytes:.2f}x)", mio, ratio, f"{lp['wall']:.2f}")


def check_goals(res: dict, sizes: list) -> list:
    goals = []
    if "1M" not in sizes:
        return goals
    free = res.get(("bulk-free", "1M"))
    static = res.get(("keyword-comma-blank", "1M"))
    for (n, s), r in res.items():
        if s != "1M":
            continue
        d, io, man = r["dw"], r["meshio"], r["man"]
        rss = d["rss"] / man.size_bytes
        if n == "keyword-explicit":
            if static:
                ratio = d["wall"] / static["dw"]["wall"]
                goals.append((f"{n}: <= 2x the static-step deck", ratio <= 2,
                              f"{d['wall']:.2f} s vs {static['dw']['wall']:.2f} s ({ratio:.2f}x)"))
            goals.append((f"{n}: peak RSS <= 2x file", rss <= 2, f"{rss:.2f}x"))
            continue
        limit = 20 if man.format == "keyword" else 15
        if io["status"] == "ok":
            sp = io["wall"] / d["wall"]
            goals.append((f"{n}: >= {limit}x meshio.read", sp >= limit,
                          f"{d['wall']:.2f} s vs {io['wall']:.2f} s ({sp:.1f}x)"))
        if man.format == "bulk" and free and n != "bulk-free":
            ratio = d["wall"] / free["dw"]["wall"]
            goals.append((f"{n}: within 1.5x of bulk-free", ratio <= 1.5,
                          f"{d['wall']:.2f} s vs {free['dw']['wall']:.2f} s ({ratio:.2f}x; file "
                          f"{man.size_bytes / free['man'].size_bytes:.2f}x the free-field one)"))
        goals.append((f"{n}: peak RSS <= 1.5x file", rss <= 1.5, f"{rss:.2f}x"))
    return goals


def write_readme(path: Path, md: list, goals: list, args, load0, load1) -> None:
    missed = [f"{n} ({d})" for n, ok, d in goals if not ok]
    text = [f"Measured by `python tests/bench/run_layouts.py --sizes {args.sizes} --repeat {args.repeat}` on "
            f"{time.strftime('%Y-%m-%d', time.gmtime())}, 1-minute load average {load0[0]:.1f} before and "
            f"{load1[0]:.1f} after the run (a shared 2-core machine; medians of {args.repeat} deckwarden runs, "
            f"{args.meshio_repeat} of meshio {_meshio_version()}):", "", *md, ""]
    text.append("Goals missed in this run: " + "; ".join(missed) + "." if missed else
                "All layout goals were met in this run.")
    body = "\n".join(text) + "\n"
    old = path.read_text(encoding="utf-8")
    new, n = re.subn(r"(<!-- perf-layouts:start -->\n).*?(<!-- perf-layouts:end -->)",
                     lambda m: m.group(1) + body + m.group(2), old, flags=re.S)
    if n:
        path.write_text(new, encoding="utf-8")
    else:
        print(f"no perf-layouts markers in {path}")


def _meshio_version() -> str:
    try:
        import importlib.metadata as md
        return md.version("meshio")
    except Exception:       # noqa: BLE001 - only for the report line
        return "?"


if __name__ == "__main__":
    sys.exit(main())
