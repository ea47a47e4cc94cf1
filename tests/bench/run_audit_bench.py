"""Benchmark of the reviewer's audit: ``deckwarden audit -o x.html`` against ``deckwarden check`` on the same deck.

Goal: the audit of a 1M-element deck takes less than 3x the time of its check (figures are drawn per
material, not per element; the extra work is the file hash and the drawing). The decks are the generated
blocks of ``gen_decks.py`` (reused when present). The two commands run alternately, round by round, each in
its own process; the goal uses the median of the per-round ratios (this machine's load changes from minute
to minute). Exits 3 when the goal is missed (``--no-goals``: report only).

    python tests/bench/run_audit_bench.py --sizes 1M --rounds 5
"""
from __future__ import annotations

import argparse
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
import gen_decks  # noqa: E402
from run_bench import deckwarden_cmd  # noqa: E402

GOAL = 3.0


def timed(cmd: list[str]) -> float:
    t0 = time.perf_counter()
    proc = subprocess.run(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    dt = time.perf_counter() - t0
    if proc.returncode not in (0, 1):
        raise SystemExit(f"{' '.join(cmd)} failed ({proc.returncode}): {proc.stderr.decode()[-500:]}")
    return dt


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n", 1)[0])
    ap.add_argument("--out", type=Path, default=gen_decks.default_out())
    ap.add_argument("--sizes", default="1M")
    ap.add_argument("--formats", default="keyword,bulk")
    ap.add_argument("--rounds", type=int, default=5)
    ap.add_argument("--no-goals", action="store_true")
    args = ap.parse_args(argv)
    dw = deckwarden_cmd()
    missed = False
    with tempfile.TemporaryDirectory() as tmp:
        html = os.path.join(tmp, "audit.html")
        for size in args.sizes.split(","):
            for fmt in args.formats.split(","):
                man = gen_decks.generate(args.out, size, fmt)
                deck = str(man.path)
                check_t, audit_t, ratios = [], [], []
                for _ in range(args.rounds):
                    c = timed(dw + ["check", deck, "--format", "json", "-o", os.path.join(tmp, "c.json")])
                    a = timed(dw + ["audit", deck, "-o", html])
                    check_t.append(c)
                    audit_t.append(a)
                    ratios.append(a / c)
                ratio = statistics.median(ratios)
                size_kb = os.path.getsize(html) / 1e3
                ok = ratio < GOAL
                missed |= not ok
                print(f"{fmt:7s} {size:>4s} ({man.elements} elements, {man.size_bytes / 1e6:.1f} MB): "
                      f"check {statistics.median(check_t):.2f} s, audit {statistics.median(audit_t):.2f} s "
                      f"(best {min(check_t):.2f} / {min(audit_t):.2f}), median ratio {ratio:.2f}x "
                      f"[goal < {GOAL:g}x: {'met' if ok else 'MISSED'}], audit file {size_kb:.0f} kB, "
                      f"{args.rounds} rounds")
    print("load average:", " ".join(f"{x:.2f}" for x in os.getloadavg()))
    return 3 if missed and not args.no_goals else 0


if __name__ == "__main__":
    sys.exit(main())
