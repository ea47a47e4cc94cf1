"""Offending-line texts and suppression comments give the answers of a whole-file read, whatever the block
or window size, from bytes or from a memory-mapped file."""
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


@pytest.mark.parametrize("window", [4096, 1 << 22])
@pytest.mark.parametrize("mapped", [True, False])
def test_suppression_scan_of_mapped_and_read_text(tmp_path, monkeypatch, window, mapped):
    """The same suppressions whether the text is bytes or a memory map walked in windows (pages given back)."""
    from linter.parsers import buffers

    path = tmp_path / "pv40_block.inp"
    filler = [f"{i}, 0.0, 0.0, 0.0" for i in range(1, 3000)]        # ~60 kB: several 4 kB windows
    path.write_text("\n".join(filler + LINES) + "\n")
    monkeypatch.setattr(buffers, "MAP_ABOVE", 0 if mapped else 1 << 40)
    monkeypatch.setattr(buffers, "WINDOW", window)
    data = buffers.open_text(str(path), 1 << 30).data
    assert buffers.is_mapped(data) == mapped
    got = [(s.line, s.rules, s.target, s.scope) for s in suppressions.scan_text(data, str(path), ("**",))]
    assert got == [(s.line, s.rules, s.target, s.scope) for s in suppressions.scan_file(str(path), ("**",))]
    # counted by hand: the comment is line 40 of LINES, its card line 41; the trailing one is on its own line
    n = len(filler)
    assert [(line, target) for line, _r, target, _s in got] == [(n + 40, n + 41),
                                                                (n + len(LINES) - 1, n + len(LINES) - 1)]
    assert got[1][1] == ["material/density-missing"]


@pytest.mark.parametrize("mapped", [True, False])
@pytest.mark.parametrize("final_newline", [True, False])
@pytest.mark.parametrize("anchors", [(), ((40, None), (41, None)), ((3, None), (90, None))])
def test_buffer_line_texts_match_a_whole_file_read(tmp_path, monkeypatch, mapped, final_newline, anchors):
    from linter.parsers import buffers

    path = tmp_path / "pv40_block.inp"
    filler = [f"{i}, 0.0, 0.0" for i in range(1, 500)]              # far lines: counted window by window
    path.write_bytes(("\n".join(LINES + filler) + ("\n" if final_newline else "")).encode())
    monkeypatch.setattr(buffers, "MAP_ABOVE", 0 if mapped else 1 << 40)
    monkeypatch.setattr(buffers, "WINDOW", 4096)
    data = buffers.open_text(str(path), 1 << 30).data
    whole = path.read_bytes().split(b"\n")             # reference: Python's own split of the whole file
    starts = [0]
    for ln in whole[:-1]:
        starts.append(starts[-1] + len(ln) + 1)
    known = [(line, starts[line - 1]) for line, _ in anchors]
    wanted = {1, 2, 17, 40, 41, len(LINES), len(LINES) + 300, len(whole) - 1, len(whole), len(whole) + 5}
    got = buffers.line_texts(data, wanted, known)
    assert got == {n: whole[n - 1].decode() for n in wanted if n <= len(whole)}
    near = buffers.line_texts(data, wanted, known, reach=5)       # only lines close after a known one
    near_lines = {n for n in wanted if n <= len(whole) and any(0 <= n - a <= 5 for a in [1] + [a for a, _ in known])}
    assert near == {n: whole[n - 1].decode() for n in near_lines}
