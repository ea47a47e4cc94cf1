"""Command files are programs: they are read as data, never run, within time and memory bounds.

Every hostile construct below must be read without running anything, give a clear finding with
file and line, and leave the rest of the file checked. Sources: Python language reference (what
``ast.parse`` accepts); the bounds are the reader's own (linter/parsers/aster/evaluate.py).
"""
from __future__ import annotations

import ast
import time

import pytest

from linter.check import check_paths
from linter.config import Config
from linter.parsers.aster.commands import read_program
from linter.parsers.aster.evaluate import Command, Evaluator, Keywords, Opaque


def ev(src: str):
    return Evaluator().value(ast.parse(src, mode="eval").body)


def test_literals_and_arithmetic():
    # Python language reference: operator precedence and unary minus
    assert ev("-2.1E5 * 2 + 1") == pytest.approx(-419999.0)
    assert ev("(1, 2.5, 'A')") == (1, 2.5, "A")
    assert ev("2 ** 10") == 1024
    assert ev("pi") == pytest.approx(3.141592653589793)


def test_keyword_calls_keep_the_line_of_each_keyword():
    kw = ev("_F(E=1.,\n  NU=0.3)")
    assert isinstance(kw, Keywords) and kw.values == {"E": 1.0, "NU": 0.3} and kw.lines == {"E": 1, "NU": 2}
    cmd = ev("DEFI_MATERIAU(ELAS=_F(E=1., NU=0.3))")
    assert isinstance(cmd, Command) and cmd.name == "DEFI_MATERIAU"


@pytest.mark.parametrize("src, why", [
    ("__import__('os').system('touch /tmp/deckwarden-pwned')", "does not run"),
    ("open('/etc/passwd').read()", "does not run"),
    ("9 ** 9 ** 9", "exponent"),
    ("10 ** 400 * 10.0", "too large"),
    ("'A' * 10 ** 9", "limit"),
    ("(1,) * 10 ** 9", "limit"),
    ("[x for x in range(10)]", "not read"),
    ("lambda: 0", "not read"),
])
def test_hostile_expressions_are_opaque(src, why):
    t0 = time.perf_counter()
    v = ev(src)
    assert isinstance(v, Opaque) and why in v.why
    assert time.perf_counter() - t0 < 1.0


def test_deep_nesting_is_cut():
    v = ev("(" * 150 + "1" + ")" * 150)       # the parser accepts 150 levels of parentheses
    assert v == 1                              # parentheses are not nodes
    v = ev("-" * 300 + "1")                   # 300 nested unary minus: beyond the evaluator's depth
    assert isinstance(v, Opaque) and "nested" in v.why


def _check(tmp_path, text: str):
    p = tmp_path / "x.comm"
    p.write_text(text, encoding="utf-8")
    res = check_paths([str(p)], Config())
    return res.files[0]


def test_command_file_that_would_run_code_is_not_run(tmp_path):
    marker = tmp_path / "pwned"
    rep = _check(tmp_path, "DEBUT()\n"
                           f"__import__('os').system('touch {marker}')\n"
                           f"X = open('{marker}', 'w')\n"
                           "S = DEFI_MATERIAU(ELAS=_F(E=210000., NU=0.7))\n")
    assert not marker.exists()
    runs = [f for f in rep.findings if f.rule == "parse/code-not-run"]
    assert {f.line for f in runs} == {2, 3} and all(f.path.endswith("x.comm") for f in runs)
    # the rest of the file is still checked
    assert any(f.rule == "elastic/poisson-out-of-range" and f.line == 4 for f in rep.findings)
    assert not any(f.rule.startswith("internal/") for f in rep.findings)


def test_huge_power_is_a_finding_not_a_hang(tmp_path):
    t0 = time.perf_counter()
    rep = _check(tmp_path, "DEBUT()\nBIG = 9 ** 9 ** 9\nS = DEFI_MATERIAU(ELAS=_F(E=BIG, NU=0.3))\n")
    assert time.perf_counter() - t0 < 10
    lim = [f for f in rep.findings if f.rule == "parse/evaluation-limit"]
    assert lim and lim[0].line == 2
    assert any(u["what"].startswith("ELAS") and u["line"] == 3 for u in rep.unchecked)


def test_deeply_nested_file_gives_a_finding(tmp_path):
    rep = _check(tmp_path, "DEBUT()\nX = " + "[" * 100_000 + "]" * 100_000 + "\n")
    assert any(f.rule in ("parse/syntax-error", "parse/evaluation-limit") for f in rep.findings)
    assert not any(f.rule.startswith("internal/") for f in rep.findings)


def test_python2_syntax_is_a_finding_and_the_rest_is_read(tmp_path):
    rep = _check(tmp_path, "DEBUT()\nprint 'hello'\nS = DEFI_MATERIAU(ELAS=_F(E=-1., NU=0.3))\n")
    syn = [f for f in rep.findings if f.rule == "parse/syntax-error"]
    assert syn and syn[0].line == 2 and syn[0].severity == "error"
    assert any(f.rule == "elastic/modulus-nonpositive" and f.line == 3 for f in rep.findings)


def test_giant_command_file_is_refused(tmp_path):
    p = tmp_path / "big.comm"
    p.write_bytes(b"DEBUT()\n" + b"# " + b"x" * (9 << 20) + b"\n")
    res = check_paths([str(p)], Config())
    assert [f.rule for f in res.files[0].findings] == ["parse/file-too-large"]


def test_loops_and_functions_are_listed_with_their_materials():
    prog = read_program("for i in range(3):\n    M = DEFI_MATERIAU(ELAS=_F(E=1., NU=0.3))\n"
                        "def f():\n    return DEFI_MATERIAU(ELAS=_F(E=1., NU=0.3))\n")
    assert [line for line, _why in prog.skipped_materials] == [2, 4]
    assert {n.what for n in prog.notes if n.code == "unchecked"} == {"for loop", "function"}
