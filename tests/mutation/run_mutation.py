"""Small ast-based mutation run over the core physics and rule modules.

    python tests/mutation/run_mutation.py                      # every module of targets.yaml
    python tests/mutation/run_mutation.py rules/elastic.py     # one module
    python tests/mutation/run_mutation.py --list rules/hyper.py  # only list the mutants

Each mutant changes one point of one module (a comparison operator, a number constant, an arithmetic operator,
and/or, a `not`). The mutated module is compiled in memory and served by an import hook placed first on
``sys.meta_path`` inside a forked child that runs pytest on the module's test files (``targets.yaml``) with
``-x -q -p no:cacheprovider``; the working tree is never written (``--jobs 2``: two children at a time).
A mutant is *killed* when that run fails (a failing test or an import/collection error), *survives* when it
passes, and is a *timeout* when it runs longer than ``--timeout`` (default: 5 x the unmutated run, at least 20 s). Equivalent mutants (no behaviour can tell them apart)
are listed with the reason in ``equivalent.yaml`` and excluded from the score.

Where ``os.fork`` is missing the children are started as subprocesses instead (slower, same result).
"""
from __future__ import annotations

import argparse
import ast
import importlib.abc
import importlib.util
import os
import signal
import subprocess
import sys
import tempfile
import time
from dataclasses import dataclass
from pathlib import Path

import yaml

REPO = Path(__file__).resolve().parents[2]
HERE = Path(__file__).resolve().parent
PYTEST_ARGS = ["-x", "-q", "-p", "no:cacheprovider", "--no-header", "-o", "addopts=--import-mode=importlib"]

CMP_SWAPS = {
    ast.Lt: (ast.LtE, ast.Gt), ast.LtE: (ast.Lt, ast.Gt), ast.Gt: (ast.GtE, ast.Lt),
    ast.GtE: (ast.Gt, ast.Lt), ast.Eq: (ast.NotEq,), ast.NotEq: (ast.Eq,),
}
BIN_SWAPS = {ast.Add: (ast.Sub,), ast.Sub: (ast.Add,), ast.Mult: (ast.Div,), ast.Div: (ast.Mult,)}
BOOL_SWAPS = {ast.And: ast.Or, ast.Or: ast.And}
SYMBOL = {
    ast.Lt: "<", ast.LtE: "<=", ast.Gt: ">", ast.GtE: ">=", ast.Eq: "==", ast.NotEq: "!=",
    ast.Add: "+", ast.Sub: "-", ast.Mult: "*", ast.Div: "/", ast.And: "and", ast.Or: "or",
}


@dataclass(frozen=True)
class Mutant:
    node_index: int   # position of the node in ast.walk order of the freshly parsed module
    kind: str         # cmp | const | binop | augop | bool | not
    arg: object       # operator index / new value / new operator class
    line: int
    col: int
    label: str        # printed and matched against equivalent.yaml

    def key(self) -> tuple:
        return (self.line, self.col, self.label)


def module_name(path: str) -> str:
    """Import name of a source file; rules/ is installed as linter.rules (see pyproject.toml)."""
    parts = list(Path(path).with_suffix("").parts)
    if parts[0] == "rules":
        parts = ["linter", *parts]
    if parts[-1] == "__init__":
        parts.pop()
    return ".".join(parts)


def _docstring_nodes(tree: ast.AST) -> set[int]:
    out = set()
    for node in ast.walk(tree):
        if isinstance(node, (ast.Module, ast.FunctionDef, ast.AsyncFunctionDef, ast.ClassDef)) and node.body:
            first = node.body[0]
            if isinstance(first, ast.Expr) and isinstance(first.value, ast.Constant):
                out.add(id(first.value))
    return out


def _number_variants(value):
    out = []
    for new in (value + 1, value - 1, value * 2, 0 if isinstance(value, int) else 0.0):
        if new != value and new not in out:
            out.append(type(value)(new))
    return out


def enumerate_mutants(source: str) -> list[Mutant]:
    tree = ast.parse(source)
    skip = _docstring_nodes(tree)
    annotations = {id(n) for a in ast.walk(tree) for n in ast.walk(getattr(a, "annotation", None) or ast.Pass())
                   if isinstance(a, (ast.arg, ast.AnnAssign))}
    out: list[Mutant] = []
    for idx, node in enumerate(ast.walk(tree)):
        line, col = getattr(node, "lineno", 0), getattr(node, "col_offset", 0)
        if isinstance(node, ast.Compare):
            for k, op in enumerate(node.ops):
                for new in CMP_SWAPS.get(type(op), ()):
                    out.append(Mutant(idx, "cmp", (k, new), line, col, f"{SYMBOL[type(op)]} -> {SYMBOL[new]}"))
        elif isinstance(node, ast.Constant) and id(node) not in skip and id(node) not in annotations:
            if isinstance(node.value, (int, float)) and not isinstance(node.value, bool):
                for new in _number_variants(node.value):
                    out.append(Mutant(idx, "const", new, line, col, f"{node.value!r} -> {new!r}"))
        elif isinstance(node, ast.BinOp) and type(node.op) in BIN_SWAPS:
            for new in BIN_SWAPS[type(node.op)]:
                out.append(Mutant(idx, "binop", new, line, col, f"{SYMBOL[type(node.op)]} -> {SYMBOL[new]}"))
        elif isinstance(node, ast.AugAssign) and type(node.op) in BIN_SWAPS:
            for new in BIN_SWAPS[type(node.op)]:
                out.append(Mutant(idx, "augop", new, line, col, f"{SYMBOL[type(node.op)]}= -> {SYMBOL[new]}="))
        elif isinstance(node, ast.BoolOp):
            new = BOOL_SWAPS[type(node.op)]
            out.append(Mutant(idx, "bool", new, line, col, f"{SYMBOL[type(node.op)]} -> {SYMBOL[new]}"))
        elif isinstance(node, ast.UnaryOp) and isinstance(node.op, ast.Not):
            out.append(Mutant(idx, "not", None, line, col, "not x -> x"))
    return out


class _DropNot(ast.NodeTransformer):
    def __init__(self, target):
        self.target = target

    def visit_UnaryOp(self, node):
        if node is self.target:
            return node.operand
        return self.generic_visit(node)


def apply_mutant(source: str, m: Mutant) -> ast.Module:
    tree = ast.parse(source)
    node = list(ast.walk(tree))[m.node_index]
    if m.kind == "cmp":
        k, new = m.arg
        node.ops[k] = new()
    elif m.kind == "const":
        node.value = m.arg
    elif m.kind in ("binop", "augop", "bool"):
        node.op = m.arg()
    elif m.kind == "not":
        tree = _DropNot(node).visit(tree)
    return ast.fix_missing_locations(tree)


class _MutantFinder(importlib.abc.MetaPathFinder, importlib.abc.Loader):
    """Serves the mutated code for one module name; every other import goes the usual way."""

    def __init__(self, name: str, path: str, code):
        self.name, self.path, self.code = name, path, code

    def find_spec(self, fullname, path=None, target=None):
        if fullname != self.name:
            return None
        return importlib.util.spec_from_loader(fullname, self, origin=self.path)

    def create_module(self, spec):
        return None

    def exec_module(self, module):
        module.__file__ = self.path
        exec(self.code, module.__dict__)  # the project's own module, mutated in memory


def _child_run(name: str, path: str, code, tests: list[str]) -> int:
    """Runs in the child: install the hook, run pytest quietly, return its exit code."""
    import pytest

    if code is not None:
        sys.meta_path.insert(0, _MutantFinder(name, path, code))
    devnull = os.open(os.devnull, os.O_WRONLY)
    os.dup2(devnull, 1)
    os.dup2(devnull, 2)
    os.chdir(REPO)
    return int(pytest.main([*PYTEST_ARGS, *tests]))


def _start(name: str, path: str, tree, tests: list[str]) -> int:
    """Fork a child that runs the tests against the mutant (tree None: the unmutated module); its pid."""
    code = compile(tree, str(REPO / path), "exec") if tree is not None else None
    pid = os.fork()
    if pid == 0:  # child
        rc = 3
        try:
            rc = _child_run(name, str(REPO / path), code, tests)
        finally:
            os._exit(rc)
    return pid


def _poll(pid: int, deadline: float):
    """None while running; else 'killed' | 'survived' | 'timeout' (a late child is killed)."""
    done, status = os.waitpid(pid, os.WNOHANG)
    if done:
        return "survived" if os.waitstatus_to_exitcode(status) == 0 else "killed"
    if time.monotonic() > deadline:
        os.kill(pid, signal.SIGKILL)
        os.waitpid(pid, 0)
        return "timeout"
    return None


def run_many(name: str, path: str, trees: list, tests: list[str], timeout: float, jobs: int = 1):
    """Outcomes of the mutants ``trees`` (in order), at most ``jobs`` children at a time."""
    if not hasattr(os, "fork"):
        out = []
        for tree in trees:
            rc = _subprocess_run(name, path, tree, tests, timeout)
            out.append("timeout" if rc is None else "survived" if rc == 0 else "killed")
        return out
    out = [None] * len(trees)
    running: dict[int, tuple[int, float]] = {}
    todo = list(range(len(trees)))
    try:
        while todo or running:
            while todo and len(running) < max(1, jobs):
                k = todo.pop(0)
                running[_start(name, path, trees[k], tests)] = (k, time.monotonic() + timeout)
            for pid, (k, deadline) in list(running.items()):
                res = _poll(pid, deadline)
                if res is not None:
                    out[k] = res
                    del running[pid]
            time.sleep(0.02)
    finally:
        for pid in running:       # interrupted: leave no child behind
            os.kill(pid, signal.SIGKILL)
            os.waitpid(pid, 0)
    return out


def _subprocess_run(name, path, tree, tests, timeout):
    with tempfile.TemporaryDirectory() as tmp:
        src = Path(tmp) / "mutant.py"
        src.write_text(ast.unparse(tree) if tree is not None else "", encoding="utf-8")
        boot = (
            "import sys; sys.path.insert(0, %r); from run_mutation import _MutantFinder, _child_run; "
            "src = open(%r, encoding='utf-8').read(); "
            "code = compile(src, %r, 'exec') if src else None; "
            "sys.exit(_child_run(%r, %r, code, %r))"
        ) % (str(HERE), str(src), str(REPO / path), name, str(REPO / path), tests)
        try:
            return subprocess.run([sys.executable, "-c", boot], timeout=timeout, cwd=REPO).returncode
        except subprocess.TimeoutExpired:
            return None


def load_equivalent() -> dict[str, dict[tuple, str]]:
    data = yaml.safe_load((HERE / "equivalent.yaml").read_text(encoding="utf-8")) or []
    out: dict[str, dict[tuple, str]] = {}
    for e in data:
        out.setdefault(e["module"], {})[(int(e["line"]), int(e["col"]), str(e["mutation"]))] = e["reason"]
    return out


def mutate_module(path: str, tests: list[str], equivalent: dict, timeout: float | None, verbose: bool,
                  jobs: int = 1) -> dict:
    source = (REPO / path).read_text(encoding="utf-8")
    name = module_name(path)
    mutants = enumerate_mutants(source)
    t0 = time.monotonic()
    if run_many(name, path, [None], tests, 600.0)[0] != "survived":
        raise SystemExit(f"{path}: the mapped tests fail without any mutation ({' '.join(tests)})")
    base = time.monotonic() - t0
    limit = timeout or max(20.0, 5.0 * base)
    counts = {"killed": 0, "survived": 0, "timeout": 0, "equivalent": 0}
    lines = source.splitlines()
    live = [m for m in mutants if m.key() not in equivalent]
    counts["equivalent"] = len(mutants) - len(live)
    outcomes = run_many(name, path, [apply_mutant(source, m) for m in live], tests, limit, jobs)
    survivors = []
    for m, outcome in zip(live, outcomes):
        counts[outcome] += 1
        if outcome == "survived":
            survivors.append(m)
        if verbose:
            print(f"  {outcome:8s} {path}:{m.line}:{m.col} {m.label}", flush=True)
    return {"path": path, "counts": counts, "total": len(mutants), "survivors": survivors, "lines": lines,
            "seconds": time.monotonic() - t0}


def score(counts: dict) -> float:
    scored = counts["killed"] + counts["survived"] + counts["timeout"]
    return 100.0 * (counts["killed"] + counts["timeout"]) / scored if scored else 100.0


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description="ast-based mutation run (see tests/mutation/README.md)")
    ap.add_argument("modules", nargs="*", help="source files as in targets.yaml (default: all of them)")
    ap.add_argument("--timeout", type=float, default=None, help="seconds per mutant (default 5x the clean run)")
    ap.add_argument("--list", action="store_true", help="list the mutants only")
    ap.add_argument("-j", "--jobs", type=int, default=1, help="mutants run at the same time (default 1)")
    ap.add_argument("-v", "--verbose", action="store_true", help="print every mutant's outcome")
    args = ap.parse_args(argv)
    targets = yaml.safe_load((HERE / "targets.yaml").read_text(encoding="utf-8"))
    modules = args.modules or list(targets)
    unknown = [m for m in modules if m not in targets]
    if unknown:
        ap.error(f"not in targets.yaml: {', '.join(unknown)}")
    if args.list:
        for path in modules:
            for m in enumerate_mutants((REPO / path).read_text(encoding="utf-8")):
                print(f"{path}:{m.line}:{m.col} {m.label}")
        return 0
    import numpy  # noqa: F401  (imported once in the parent, so forked children start faster)
    import pytest  # noqa: F401

    equivalent = load_equivalent()
    results = []
    for path in modules:
        res = mutate_module(path, targets[path], equivalent.get(path, {}), args.timeout, args.verbose, args.jobs)
        results.append(res)
        c = res["counts"]
        print(f"{path}: {c['killed']} killed, {c['survived']} survived, {c['timeout']} timeout, "
              f"{c['equivalent']} equivalent of {res['total']} -> {score(c):.1f} % ({res['seconds']:.0f} s)",
              flush=True)
        for m in res["survivors"]:
            print(f"    survived {path}:{m.line}:{m.col} {m.label}    | {res['lines'][m.line - 1].strip()}",
                  flush=True)
    total = {k: sum(r["counts"][k] for r in results) for k in ("killed", "survived", "timeout", "equivalent")}
    print(f"\n{'module':38s} {'killed':>6s} {'surv.':>6s} {'tmo':>4s} {'equiv':>5s} {'score':>7s}")
    for r in results:
        c = r["counts"]
        print(f"{r['path']:38s} {c['killed']:6d} {c['survived']:6d} {c['timeout']:4d} {c['equivalent']:5d} "
              f"{score(c):6.1f}%")
    print(f"{'total':38s} {total['killed']:6d} {total['survived']:6d} {total['timeout']:4d} "
          f"{total['equivalent']:5d} {score(total):6.1f}%")
    return 0


if __name__ == "__main__":
    sys.exit(main())
