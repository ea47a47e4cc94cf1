"""--format markdown (merge-request comment) and the progress bar on a terminal only."""
from __future__ import annotations

import io
import os

import pytest

from linter import CAUTION
from linter.findings import FileReport, Finding, RunResult
from linter.reporters.markdown import LIMIT, render

from decks import TET_MESH as MESH


def many(n: int) -> RunResult:
    fs = [Finding("elastic/poisson-out-of-range", "error", f"material M{i}: nu = 0.7 | see *ELASTIC <b>",
                  f"models/d{i // 10}.inp", i + 1, f"M{i}") for i in range(n)]
    fs[0].suppression = {"rules": ["elastic"], "scope": "next", "reason": "r", "path": "models/d0.inp", "line": 1}
    fs[1].baseline = True
    res = RunResult(files=[FileReport(path="models/d.inp", format="keyword", dialect="calculix", findings=fs)])
    res.fixed = [{"path": "models/old.inp", "rule": "units/mismatch", "material": "X", "fingerprint": "f", "text": ""}]
    return res


def test_counts_escaping_and_caution():
    text = render(many(3), {"exit_code": 1})
    assert "**1** error(s), **0** warning(s), **0** note(s) in 1 deck(s)" in text
    assert "1 in the baseline; 1 baseline entry fixed" in text and "1 suppressed by comments" in text
    row = [ln for ln in text.splitlines() if "models/d0.inp:3" in ln][0]
    assert "\\| see \\*ELASTIC &lt;b&gt;" in row and row.count(" | ") == 3    # the deck's | does not split the row
    assert CAUTION.split(".")[0].replace("deckwarden", "") in text.replace("\\", "")


def test_thousands_of_findings_stay_under_the_limit():
    text = render(many(5000), {"exit_code": 1})
    assert len(text) < 65000 and len(text) <= LIMIT
    shown = sum(1 for ln in text.splitlines() if ln.startswith("| models/"))
    assert f"{4998 - shown} more finding(s) not shown" in text and shown > 100


def test_cli_markdown(tmp_path, capsys):
    from linter.cli import main

    (tmp_path / "a.inp").write_text(MESH + "*MATERIAL,NAME=A\n*ELASTIC\n210000.,0.7\n*DENSITY\n7.85e-9\n"
                                    "*SOLID SECTION,ELSET=E1,MATERIAL=A\n*STEP\n*STATIC\n*END STEP\n")
    assert main(["check", str(tmp_path / "a.inp"), "--format", "markdown", "--units", "mm-tonne-s"]) == 1
    out = capsys.readouterr().out
    assert out.startswith("### deckwarden: ") and "elastic/poisson-out-of-range" in out


# --------------------------------------------------------------------------- progress


def decks(tmp_path, n):
    for i in range(n):
        (tmp_path / f"d{i}.inp").write_text(MESH + "*MATERIAL,NAME=A\n*ELASTIC\n210000.,0.3\n*DENSITY\n7.85e-9\n"
                                            "*SOLID SECTION,ELSET=E1,MATERIAL=A\n*STEP\n*STATIC\n*END STEP\n")


def test_no_bar_when_not_a_terminal(tmp_path):
    from linter.progress import for_terminal

    assert for_terminal(io.StringIO()) is None


@pytest.mark.skipif(not hasattr(os, "openpty"), reason="needs a pseudo-terminal")
@pytest.mark.parametrize("n, shown", [(8, True), (3, False)])
def test_bar_on_a_pseudo_terminal(tmp_path, n, shown):
    from linter.check import check_paths
    from linter.config import Config
    from linter.progress import for_terminal

    decks(tmp_path, n)
    master, slave = os.openpty()
    with os.fdopen(slave, "w", encoding="utf-8") as stream:
        progress = for_terminal(stream, no_color=True)
        assert progress is not None
        res = check_paths([str(tmp_path)], Config(), jobs=1, progress=progress)
    os.set_blocking(master, False)
    chunks = []
    while True:
        try:
            chunk = os.read(master, 1 << 16)
        except OSError:          # nothing left (EAGAIN), or the other end is closed (EIO on Linux)
            break
        if not chunk:
            break
        chunks.append(chunk)
    os.close(master)
    data = b"".join(chunks).decode("utf-8", "replace")
    assert len(res.files) == n
    assert ("checking decks" in data) is shown
    if shown:
        assert f"{n}/{n}" in data and "\x1b[3" not in data.replace("\x1b[3J", "")  # no colour with no_color
