"""Benchmark of ``deckwarden check`` against ``meshio.read`` and a plain Python line loop.

Generates the synthetic decks of ``gen_decks.py`` (10k, 100k and 1M hexahedra, keyword
and bulk) into a scratch folder, then measures, each in its own subprocess (started by a
small launcher, see ``LAUNCHER``), wall time and peak RSS (``os.wait4`` rusage) of:

* ``deckwarden check --format json`` on each deck (the findings are checked too: the
  planted ones must be there, on the right material; the run exits 1 if not);
* ``meshio.read`` of the same file;
* a loop that only finds keyword lines (``*``) or bulk card names (first field);
* ``python -c "import numpy"`` and ``deckwarden check`` on a tiny deck (start-up);
* the shared corpus with ``--jobs 1`` and ``--jobs 2`` (alternating, round by round).

``deckwarden check`` runs on the tiny deck and on every size in rounds (one run of each per
round: ``--small-repeat`` rounds (31), the 1M decks in the first ``--repeat`` of them), so that a
slow spell of the machine falls on all sizes alike; the scaling goal uses the median over
rounds of (deck time - tiny-deck time of the same round). Reports medians of the runs,
the ratios, and the goal checks. Exit code: 0 all goals met, 1 a finding check failed,
3 a speed/memory goal missed (use ``--no-goals`` to report goals without failing on them).

Usage: ``python tests/bench/run_bench.py [--out DIR] [--repeat 3] [--sizes 10k,100k,1M]``
"""
from __future__ import annotations

import argparse
import json
import os
import statistics
import subprocess
import sys
import tempfile
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
import gen_decks  # noqa: E402

REPO = HERE.parents[1]
PY = sys.executable


def deckwarden_cmd() -> list[str]:
    exe = Path(PY).with_name("deckwarden")
    return [str(exe)] if exe.exists() else [PY, "-m", "linter"]


KEYWORD_LOOP = """
import sys
n = 0
for line in open(sys.argv[1], 'rb'):
    if line.startswith(b'*'):
        n += 1
print(n)
"""

BULK_LOOP = """
import sys
names = {}
for line in open(sys.argv[1], 'rb'):
    if line[:1] in b'$+* \\n':
        continue
    name = line.split(b',', 1)[0][:8].strip()
    names[name] = names.get(name, 0) + 1
print(len(names))
"""

MESHIO_READ = """
import sys, meshio
m = meshio.read(sys.argv[1], file_format=sys.argv[2])
print(sum(len(c.data) for c in m.cells))
"""


#: runs the measured command and reports its wall time and peak RSS. A child's peak RSS (``ru_maxrss``)
#: counts the memory of the process it was forked from until its exec, so the benchmark, which grows
#: while it generates decks, does not fork the measured commands itself: this small launcher does.
#: ``ru_maxrss`` of a process tree is the peak of its largest process, not of the tree: a command that
#: starts a helper process (``linter.background``) is also sampled every 5 ms, the resident memory of the
#: process and its children summed (pages they share counted twice), and the larger figure reported.
LAUNCHER = """
import os, subprocess, sys, threading, time
def rss(pid):
    try:
        with open(f"/proc/{pid}/statm") as f:
            return int(f.read().split()[1]) * os.sysconf("SC_PAGE_SIZE")
    except (OSError, ValueError, IndexError):
        return 0
def tree(pid):
    try:
        with open(f"/proc/{pid}/task/{pid}/children") as f:
            kids = [int(k) for k in f.read().split()]
    except (OSError, ValueError):
        kids = []
    return rss(pid) + sum(tree(k) for k in kids)
peak, done = [0], threading.Event()
def watch(pid):
    while not done.wait(0.005):
        peak[0] = max(peak[0], tree(pid))
t0 = time.perf_counter()
p = subprocess.Popen(sys.argv[2:])
w = threading.Thread(target=watch, args=(p.pid,), daemon=True)
w.start()
_pid, status, ru = os.wait4(p.pid, 0)
wall = time.perf_counter() - t0
done.set()
w.join()
with open(sys.argv[1], "w") as f:
    f.write(f"{wall} {max(ru.ru_maxrss * 1024, peak[0])} {os.waitstatus_to_exitcode(status)}")
"""


def run(cmd: list[str], cwd=None) -> tuple[float, int, int, bytes]:
    """(wall seconds, peak RSS bytes, exit code, stdout) of one child process."""
    with tempfile.TemporaryFile() as out, tempfile.TemporaryFile() as err, \
            tempfile.NamedTemporaryFile("r", suffix=".txt") as res:
        p = subprocess.run([PY, "-c", LAUNCHER, res.name] + cmd, stdout=out, stderr=err, cwd=cwd)
        out.seek(0)
        err.seek(0)
        stdout, stderr = out.read(), err.read()
        text = Path(res.name).read_text()
    if p.returncode != 0 or not text:
        sys.stderr.write(f"  ! launcher for {' '.join(cmd)} exited {p.returncode}: {stderr[-2000:].decode(errors='replace')}\n")
        return float("nan"), 0, p.returncode or 2, stdout
    wall_s, rss_s, rc_s = text.split()
    rc = int(rc_s)
    if rc not in (0, 1):
        sys.stderr.write(f"  ! {' '.join(cmd)} exited {rc}: {stderr[-2000:].decode(errors='replace')}\n")
    return float(wall_s), int(rss_s), rc, stdout


def measure(cmd: list[str], repeat: int, cwd=None) -> dict:
    return summarize([run(cmd, cwd) for _ in range(repeat)])


def summarize(runs: list) -> dict:
    return {"wall": statistics.median(r[0] for r in runs), "rss": statistics.median(r[1] for r in runs),
            "rc": runs[-1][2], "stdout": runs[-1][3], "walls": [r[0] for r in runs]}


def check_findings(man: gen_decks.Manifest, report_json: bytes) -> list[str]:
    """Problems with the findings of ``deckwarden check --format json`` on a generated deck."""
    try:
        rep = json.loads(report_json)
    except ValueError as exc:
        return [f"output is not JSON ({exc})"]
    problems = []
    files = rep.get("files", [])
    if len(files) != 1:
        return [f"expected one file in the report, got {len(files)}"]
    summary = files[0].get("summary", {})
    if summary.get("elements") != man.elements:
        problems.append(f"summary.elements = {summary.get('elements')}, expected {man.elements}")
    if summary.get("nodes") not in (None, man.nodes) and summary.get("nodes") != man.nodes:
        problems.append(f"summary.nodes = {summary.get('nodes')}, expected {man.nodes}")
    # material names as the parser reports them, matched by the line of their card
    by_line = {m.get("line"): m.get("name") for m in files[0].get("materials", [])}
    names = {}
    for written, ln in man.material_lines.items():
        got = by_line.get(ln) or by_line.get(man.elastic_lines[written])
        if got is None:
            problems.append(f"material {written} (line {ln}) missing from the report's materials")
        names[written] = got
    findings = rep.get("findings", [])
    bad = [f for f in findings if f["rule"].split("/")[0] in ("parse", "internal")]
    for f in bad:
        problems.append(f"unexpected {f['rule']} at line {f.get('line')}: {f['message']}")
    for written, rules in man.planted.items():
        for rid in rules:
            hits = [f for f in findings if f["rule"] == rid and f.get("material") == names.get(written)]
            if len(hits) != 1:
                problems.append(f"{rid} on {written}: {len(hits)} findings, expected 1")
    for written in man.clean:
        for rid in gen_decks.PLANTED:
            hits = [f for f in findings if f["rule"] == rid and f.get("material") == names.get(written)]
            if hits:
                problems.append(f"{rid} on the clean material {written}: {hits[0]['message']}")
    for f in findings:
        if f.get("line") is not None and not (1 <= f["line"] <= man.lines):
            problems.append(f"{f['rule']} at line {f['line']}, outside 1..{man.lines}")
    return problems


def fmt_row(cells, widths):
    return "  ".join(str(c).rjust(w) if i else str(c).ljust(w) for i, (c, w) in enumerate(zip(cells, widths)))


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n", 1)[0])
    ap.add_argument("--out", type=Path, default=gen_decks.default_out())
    ap.add_argument("--sizes", default="10k,100k,1M")
    ap.add_argument("--formats", default="keyword,bulk")
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--small-repeat", type=int, default=31,
                    help="repeats of deckwarden on the decks below 1M elements (their time over start-up is small "
                         "beside the run-to-run noise; default 31, never fewer than --repeat)")
    ap.add_argument("--meshio-repeat", type=int, default=None, help="repeats of meshio.read (default: --repeat)")
    ap.add_argument("--corpus", type=Path, default=Path(os.environ.get("DECKWARDEN_CORPUS", REPO.parent / "shared" / "corpus")))
    ap.add_argument("--corpus-repeat", type=int, default=7, help="rounds of --jobs 1 / --jobs 2 on the corpus")
    ap.add_argument("--no-corpus", action="store_true")
    ap.add_argument("--no-goals", action="store_true", help="report goal checks but do not fail on them")
    args = ap.parse_args(argv)
    mrep = args.meshio_repeat or args.repeat
    dw = deckwarden_cmd()
    sizes = [x for x in args.sizes.split(",") if x and x != "tiny"]     # the tiny deck is always measured
    small = max(args.repeat, args.small_repeat)
    formats = args.formats.split(",")
    print(f"# deckwarden benchmark: repeat={args.repeat} (decks below 1M: {small}), python {sys.version.split()[0]}, "
          f"{os.cpu_count()} CPUs, decks in {args.out}")

    finding_problems: list[str] = []
    rows = []
    t = {}
    numpy_start = measure([PY, "-c", "import numpy"], small)
    for fmt in formats:
        tiny = gen_decks.generate(args.out, "tiny", fmt)
        mans = {size: gen_decks.generate(args.out, size, fmt) for size in sizes}
        # deckwarden on the tiny deck and on every size, interleaved round by round, so that a slow spell
        # of the machine falls on all of them alike; the scaling goal uses per-round differences
        decks = [("tiny", tiny)] + list(mans.items())
        runs: dict = {name: [] for name, _m in decks}
        for k in range(small):
            for name, man in decks:
                if name == "1M" and k >= args.repeat:
                    continue
                runs[name].append(run(dw + ["check", "--format", "json", man.path]))
        dws = {name: summarize(rs) for name, rs in runs.items()}
        for name, man in decks:
            finding_problems += [f"{name} {fmt}: {p}" for p in check_findings(man, dws[name]["stdout"])]
        t[(fmt, "tiny")] = dws["tiny"]
        for size, man in mans.items():
            m_dw = dws[size]
            m_dw["over_tiny"] = statistics.median(a[0] - b[0] for a, b in zip(runs[size], runs["tiny"]))
            m_dw["best_over_tiny"] = min(a[0] for a in runs[size]) - min(b[0] for b in runs["tiny"])
            m_io = measure([PY, "-c", MESHIO_READ, man.path, "abaqus" if fmt == "keyword" else "nastran"], mrep)
            m_loop = measure([PY, "-c", KEYWORD_LOOP if fmt == "keyword" else BULK_LOOP, man.path], args.repeat)
            t[(fmt, size)] = {"dw": m_dw, "meshio": m_io, "loop": m_loop, "man": man}
            rows.append((fmt, size, f"{man.size_bytes / 1e6:.1f}", f"{m_dw['wall']:.2f}", f"{m_dw['rss'] / 1e6:.0f}",
                         f"{m_io['wall']:.2f}", f"{m_io['rss'] / 1e6:.0f}", f"{m_loop['wall']:.2f}",
                         f"{m_io['wall'] / m_dw['wall']:.1f}", f"{m_dw['rss'] / man.size_bytes:.2f}"))
            print(f"  measured {fmt} {size}", flush=True)

    head = ("format", "size", "MB", "dw s", "dw RSS MB", "meshio s", "meshio RSS MB", "loop s",
            "meshio/dw", "dwRSS/file")
    widths = [max(len(str(r[i])) for r in rows + [head]) for i in range(len(head))]
    print()
    print(fmt_row(head, widths))
    for r in rows:
        print(fmt_row(r, widths))
    print()
    print(f"python -c 'import numpy': {numpy_start['wall']:.3f} s")
    for fmt in formats:
        print(f"deckwarden check on the tiny {fmt} deck: {t[(fmt, 'tiny')]['wall']:.3f} s "
              f"({t[(fmt, 'tiny')]['wall'] / numpy_start['wall']:.2f}x import numpy)")

    goals: list[tuple[str, bool, str]] = []
    for fmt, limit in (("keyword", 20), ("bulk", 15)):
        if (fmt, "1M") in t:
            r = t[(fmt, "1M")]
            ratio = r["meshio"]["wall"] / r["dw"]["wall"]
            goals.append((f"1M {fmt}: deckwarden <= 1/{limit} of meshio.read", ratio >= limit,
                          f"{r['dw']['wall']:.2f} s vs {r['meshio']['wall']:.2f} s ({ratio:.1f}x)"))
    for key, r in t.items():
        # the interpreter alone takes ~30 MB: the memory goal is about large decks (the 1M ones)
        if key[1] != "1M":
            continue
        ratio = r["dw"]["rss"] / r["man"].size_bytes
        goals.append((f"{key[1]} {key[0]}: peak RSS <= 1.5x file size", ratio <= 1.5,
                      f"{r['dw']['rss'] / 1e6:.0f} MB for {r['man'].size_bytes / 1e6:.0f} MB ({ratio:.2f}x)"))
    for fmt in formats:
        if (fmt, "100k") in t and (fmt, "1M") in t:
            # median over rounds of (deck time - tiny-deck time in the same round), per element
            per = [t[(fmt, s)]["dw"]["over_tiny"] / t[(fmt, s)]["man"].elements for s in ("100k", "1M")]
            dev = per[1] / per[0] - 1 if per[0] > 0 else float("inf")
            goals.append((f"{fmt}: linear scaling 100k -> 1M within +-25 %", abs(dev) <= 0.25,
                          f"{per[0] * 1e9:.0f} vs {per[1] * 1e9:.0f} ns/element ({dev:+.0%}"
                          + (", sub-linear: the cost per element falls)" if dev < -0.25 else ")")))
            best = [t[(fmt, s)]["dw"]["best_over_tiny"] / t[(fmt, s)]["man"].elements for s in ("100k", "1M")]
            print(f"{fmt}: time per element over start-up, best runs (for information): "
                  f"{best[0] * 1e9:.0f} ns at 100k, {best[1] * 1e9:.0f} ns at 1M")
        ratio = t[(fmt, "tiny")]["wall"] / numpy_start["wall"]
        goals.append((f"{fmt}: start-up <= 3x import numpy", ratio <= 3,
                      f"{t[(fmt, 'tiny')]['wall']:.3f} s vs {numpy_start['wall']:.3f} s ({ratio:.2f}x)"))
    if not args.no_corpus and args.corpus.is_dir():
        # --jobs 1 and --jobs 2 alternate, round by round; the goal uses the median of the per-round ratios
        r1, r2 = [], []
        for _ in range(args.corpus_repeat):
            r1.append(run(dw + ["check", "--format", "json", "--jobs", "1", str(args.corpus)]))
            r2.append(run(dw + ["check", "--format", "json", "--jobs", "2", str(args.corpus)]))
        j1, j2 = summarize(r1), summarize(r2)
        sp = statistics.median(a[0] / b[0] for a, b in zip(r1, r2))
        goals.append(("corpus: --jobs 2 >= 1.7x faster than --jobs 1", sp >= 1.7,
                      f"{j1['wall']:.2f} s vs {j2['wall']:.2f} s (median of per-round ratios {sp:.2f}x)"))
        try:
            nfiles = len(json.loads(j1["stdout"]).get("files", []))
            print(f"corpus: {nfiles} decks checked")
        except ValueError:
            finding_problems.append("corpus run: output is not JSON")

    print()
    for name, ok, detail in goals:
        print(f"[{'met' if ok else 'MISSED'}] {name}: {detail}")
    if finding_problems:
        print("\nFINDINGS NOT AS EXPECTED:")
        for p in finding_problems:
            print("  " + p)
        return 1
    print("\nfindings on the generated decks: as expected")
    if not args.no_goals and not all(ok for _n, ok, _d in goals):
        return 3
    return 0


if __name__ == "__main__":
    sys.exit(main())
