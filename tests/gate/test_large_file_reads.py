"""Offending-line texts and suppression comments read block by block give the answers of a whole-file read,
whatever the block size (blocks without a wanted line or a marker are skipped quickly)."""
from __future__ import annotations

import pytest

from linter import fingerprint, suppressions

LINES = ([f"{i}, {i + 1}, {i + 2}" for i in range(1, 40)]
         + ["** deckwarden accept elastic/poisson-range because the seal is nearly incompressible",
            "*ELASTIC", "1e3, 0.7"]
         + [f"{i}, 0.0" for i in range(40)]
         + ["*MATERIAL, NAME=PV40_SEAL ** DECKWARDEN accept material/density-missing", "*END STEP"])


@pytest.mark.parametrize("block", [7, 13, 64, 1 << 20])
@pytest.mark.parametrize("final_newline", [True, False])
def test_line_texts_match_a_whole_file_read(tmp_path, monkeypatch, block, final_newline):
    path = tmp_path / "pv40_block.inp"
    path.write_bytes(("\n".join(LINES) + ("\n" if final_newline else "")).encode())
    monkeypatch.setattr(fingerprint, "BLOCK", block)
    whole = path.read_bytes().split(b"\n")             # reference: Python's own split of the whole file
    wanted = {1, 2, 17, 40, 41, len(LINES) - 1, len(LINES), len(whole)}
    got = fingerprint.line_texts(str(path), wanted)
    assert got == {n: whole[n - 1].decode() for n in wanted}


@pytest.mark.parametrize("block", [7, 13, 64, 1 << 20])
def test_suppression_scan_does_not_depend_on_the_block_size(tmp_path, monkeypatch, block):
    path = tmp_path / "pv40_block.inp"
    path.write_text("\n".join(LINES) + "\n")
    monkeypatch.setattr(suppressions, "BLOCK", 1 << 20)
    whole = [(s.line, s.rules, s.target, s.scope) for s in suppressions.scan_file(str(path), ("**",))]
    monkeypatch.setattr(suppressions, "BLOCK", block)
    got = [(s.line, s.rules, s.target, s.scope) for s in suppressions.scan_file(str(path), ("**",))]
    assert got == whole
    assert [(line, target) for line, _r, target, _s in whole] == [(40, 41), (len(LINES) - 1, len(LINES) - 1)]
