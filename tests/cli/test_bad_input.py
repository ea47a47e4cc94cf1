"""Bad input: names that are not UTF-8, special files, folder links, and the text layout at 100 columns."""
from __future__ import annotations

import json
import os
import re
import threading

import pytest

from linter.cli import main

from decks import TET_MESH as MESH

DECK = (MESH + "*MATERIAL,NAME=PV40_HOUSING\n*ELASTIC\n210000.,0.7\n*DENSITY\n7.85e-9\n"
        "*SOLID SECTION,ELSET=E1,MATERIAL=PV40_HOUSING\n*STEP\n*STATIC\n*END STEP\n")


def run(args, capsys):
    code = main(args)
    out, err = capsys.readouterr()
    return code, out, err


@pytest.fixture
def latin1_deck(tmp_path, monkeypatch):
    """A deck whose file name holds the byte 0xFF (not valid UTF-8)."""
    name = os.fsdecode(b"pv40_pump\xff.inp")
    try:
        (tmp_path / name).write_text(DECK, encoding="utf-8")
    except (OSError, UnicodeEncodeError):
        pytest.skip("file system refuses a name that is not UTF-8")
    monkeypatch.chdir(tmp_path)
    return name


@pytest.mark.parametrize("fmt", ["sarif", "json", "text", "line", "audit"])
def test_non_utf8_name_written_escaped_to_a_file(latin1_deck, capsys, fmt):
    code, out, err = run(["check", latin1_deck, "--format", fmt, "-o", "report.out"], capsys)
    assert code == 1, err                    # the nu = 0.7 error, not an internal failure (2)
    text = open("report.out", encoding="utf-8").read()
    assert "Traceback" not in err and "internal" not in err
    assert re.search(r"pv40\\?_pump", text)     # markdown may escape the underscore
    if fmt == "json":
        doc = json.loads(text)
        assert doc["files"][0]["path"] == "pv40_pump\\xff.inp"
        assert {f["rule"] for f in doc["findings"]} >= {"elastic/poisson-out-of-range"}
    elif fmt == "sarif":
        doc = json.loads(text)
        uris = {r["locations"][0]["physicalLocation"]["artifactLocation"]["uri"] for r in doc["runs"][0]["results"]}
        assert uris == {"pv40_pump%FF.inp"}     # RFC 3986 percent-encoding of the byte
    else:
        assert "\\xff" in text or "\\udcff" in text


def test_fifo_given_is_refused_without_hanging(tmp_path, capsys, monkeypatch):
    if not hasattr(os, "mkfifo"):
        pytest.skip("no named pipes here")
    fifo = tmp_path / "pv40_pipe.inp"
    os.mkfifo(fifo)
    monkeypatch.chdir(tmp_path)
    box = {}
    t = threading.Thread(target=lambda: box.setdefault("r", run(["check", "pv40_pipe.inp", "--format", "json"],
                                                                 capsys)), daemon=True)
    t.start()
    t.join(60)
    if t.is_alive():   # unblock the reader so the test run can end, then fail
        with open(fifo, "wb"):
            pass
        pytest.fail("the check hung on a named pipe")
    code, out, err = box["r"]
    assert code == 2
    doc = json.loads(out)
    f = doc["findings"][0]
    assert f["rule"] == "parse/file-unreadable" and f["path"] == "pv40_pipe.inp"
    assert "named pipe" in f["message"]


def test_fifo_included_is_refused_with_file_and_line(tmp_path, capsys, monkeypatch):
    if not hasattr(os, "mkfifo"):
        pytest.skip("no named pipes here")
    os.mkfifo(tmp_path / "pv40_mesh.inp")
    (tmp_path / "pv40_main.inp").write_text("*HEADING\nPV40 pump\n*INCLUDE, INPUT=pv40_mesh.inp\n" + DECK)
    monkeypatch.chdir(tmp_path)
    box = {}
    t = threading.Thread(target=lambda: box.setdefault("r", run(["check", "pv40_main.inp", "--format", "json"],
                                                                 capsys)), daemon=True)
    t.start()
    t.join(60)
    if t.is_alive():
        with open(tmp_path / "pv40_mesh.inp", "wb"):
            pass
        pytest.fail("the check hung on an included named pipe")
    code, out, err = box["r"]
    doc = json.loads(out)
    hits = [f for f in doc["findings"] if "named pipe" in f["message"]]
    assert hits and hits[0]["path"] == "pv40_main.inp" and hits[0]["line"] == 3
    assert hits[0]["severity"] == "error"


def test_walk_does_not_leave_the_folder_nor_loop(tmp_path, capsys, monkeypatch):
    outside = tmp_path / "outside"
    outside.mkdir()
    (outside / "pv40_other.inp").write_text(DECK)
    top = tmp_path / "models"
    (top / "sub").mkdir(parents=True)
    (top / "sub" / "pv40_pump.inp").write_text(DECK)
    os.symlink("..", top / "loop")                       # the parent: outside the folder given
    os.symlink(str(outside), top / "sub" / "elsewhere")   # out of the tree
    os.symlink(".", top / "sub" / "self")                # a loop inside the tree
    os.symlink("sub", top / "again")                     # a second way to the same folder
    code, out, err = run(["check", str(top), "--format", "json"], capsys)
    doc = json.loads(out)
    paths = [f["path"] for f in doc["files"]]
    assert len(paths) == 1 and paths[0].endswith("pv40_pump.inp"), paths


def test_text_report_at_100_columns_groups_by_deck(tmp_path, capsys, monkeypatch):
    (tmp_path / "pv40_very_long_folder_name_for_the_pump_housing_models").mkdir()
    deck = tmp_path / "pv40_very_long_folder_name_for_the_pump_housing_models" / "pv40_housing.inp"
    deck.write_text(DECK)
    monkeypatch.chdir(tmp_path)
    monkeypatch.setenv("COLUMNS", "100")
    monkeypatch.delenv("NO_COLOR", raising=False)
    code, out, err = run(["check", str(deck.relative_to(tmp_path)), "--no-color"], capsys)
    lines = out.splitlines()
    assert max(len(x) for x in lines) <= 100
    # the path appears once, in the deck's heading, never broken over rows
    assert sum("pv40_housing.inp" in x for x in lines) == 1
    row = next(x for x in lines if re.match(r"^\s*10\s+ERROR\s+elastic/poisson-out-of-range\s", x))
    # the message starts right after the rule and takes the rest of the width
    assert row.index("elastic/poisson-out-of-range") < 30
    monkeypatch.setenv("COLUMNS", "160")
    code, out, err = run(["check", str(deck.relative_to(tmp_path)), "--no-color"], capsys)
    assert max(len(x) for x in out.splitlines()) > 100
