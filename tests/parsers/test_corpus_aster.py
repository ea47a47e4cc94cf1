"""Sweep over the real code_aster verification studies of the shared corpus (test data only, never copied).

Every study is read without an internal finding, and every DEFI_MATERIAU call found by an independent
scan (a regular expression over the command file, not the ast reader) is in the model as a material
defined on that line, or listed as unchecked on that line with a reason.
"""
from __future__ import annotations

import re
from pathlib import Path

import pytest

from linter.check import check_paths
from linter.config import Config
from linter.parsers import ParseOptions, aster

DEFI = re.compile(r"DEFI_MATERIAU\s*\(")


def _studies(corpus_dir: Path) -> list[Path]:
    folder = corpus_dir / "aster"
    if not folder.is_dir():
        pytest.skip("no aster folder in the corpus")
    return sorted(folder.glob("*/*.export"))


def _code_lines(text: str) -> list[int]:
    """Lines of DEFI_MATERIAU( calls outside comments and strings (a line-based scan)."""
    out = []
    for i, line in enumerate(text.split("\n"), start=1):
        code = line.split("#", 1)[0]
        for m in DEFI.finditer(code):
            before = code[:m.start()]
            if before.count("'") % 2 == 0 and before.count('"') % 2 == 0:
                out.append(i)
    return out


def test_every_study_reads_without_internal_finding(corpus_dir):
    studies = _studies(corpus_dir)
    res = check_paths([str(corpus_dir / "aster")], Config(), jobs=2)
    assert len(res.files) == len(studies)
    internal = [(f.path, x.rule, x.message) for f in res.files for x in f.findings if x.rule.startswith("internal/")]
    assert internal == []
    assert not [g for g in res.general if g.rule.startswith("internal/")]


def test_every_material_is_read_or_listed(corpus_dir):
    missing, total = [], 0
    for export in _studies(corpus_dir):
        model = aster.parse(str(export), ParseOptions())
        comm = next((p for p in model.files if p.endswith(".comm")), None)
        if comm is None:
            continue
        text = Path(comm).read_text(encoding="utf-8", errors="replace")
        lines = _code_lines(text)
        total += len(lines)
        read = {m.loc.line for m in model.materials.values()} | {m.loc.line for m in model.duplicate_materials}
        listed = {u.loc.line for u in model.unchecked if u.what.startswith("DEFI_MATERIAU") and u.reason}
        missing += [(comm, ln) for ln in lines if ln not in read and ln not in listed]
    assert total > 400          # the corpus holds several hundred DEFI_MATERIAU calls
    assert missing == []
