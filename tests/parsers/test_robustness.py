"""Robustness: bad input of every kind gets a clear, located finding, and the run goes on.

Each case writes a small invented deck (keyword and/or bulk) with one defect and checks
that the defect is reported on the right file and line, that no internal failure
(`internal/*`) occurs, and that every reported line exists in its file.
"""
from __future__ import annotations

import os
from pathlib import Path

import pytest

from linter import parsers
from linter.check import check_paths
from linter.findings import exit_code
from linter.config import Config
from linter.findings import SEVERITIES
from linter.parsers.sources import SourceError, read_deck_bytes


def need(fmt: str):
    try:
        return parsers.get(fmt)
    except ImportError:
        pytest.skip(f"the {fmt} parser is not there yet")


# --------------------------------------------------------------------------- decks

NODES = "\n".join(f"{i + 1}, {x}., {y}., {z}." for i, (x, y, z) in enumerate(
    [(0, 0, 0), (1, 0, 0), (1, 1, 0), (0, 1, 0), (0, 0, 1), (1, 0, 1), (1, 1, 1), (0, 1, 1)]))


def kw(elastic: str = "210000., 0.3", material: str = "STEEL", extra_model: str = "",
       props: str | None = None) -> str:
    """A one-element keyword deck; the elastic data line is line 14 (see KW_ELASTIC_LINE)."""
    if props is None:
        props = f"*ELASTIC\n{elastic}\n*DENSITY\n7.85e-9\n"
    return (f"*NODE, NSET=NALL\n{NODES}\n*ELEMENT, TYPE=C3D8, ELSET=EALL\n1, 1, 2, 3, 4, 5, 6, 7, 8\n"
            f"*MATERIAL, NAME={material}\n{props}{extra_model}"
            f"*SOLID SECTION, ELSET=EALL, MATERIAL={material}\n\n"
            "*BOUNDARY\n1, 1, 3\n*STEP\n*STATIC\n*CLOAD\n7, 3, -1.\n*END STEP\n")


KW_MATERIAL_LINE = 12
KW_ELASTIC_LINE = 14

GRIDS = "\n".join(f"GRID,{i + 1},,{x}.,{y}.,{z}." for i, (x, y, z) in enumerate(
    [(0, 0, 0), (1, 0, 0), (1, 1, 0), (0, 1, 0), (0, 0, 1), (1, 0, 1), (1, 1, 1), (0, 1, 1)]))


def bulk(mat1: str = "MAT1,1,210000.,,0.3,7.85-9", extra: str = "", end: str = "ENDDATA\n") -> str:
    """A one-element free-field bulk deck; the MAT1 card is line 16 (see BULK_MAT_LINE)."""
    return (f"SOL 101\nCEND\nSUBCASE 1\n  SPC = 1\nBEGIN BULK\n{GRIDS}\n"
            "CHEXA,1,1,1,2,3,4,5,6,+\n+,7,8\nPSOLID,1,1\n"
            f"{mat1}\n{extra}SPC1,1,123456,1\n{end}")


BULK_CHEXA_LINE = 14
BULK_MAT_LINE = 17


def test_templates_are_where_the_tests_say(tmp_path):
    k = kw().split("\n")
    assert k[KW_MATERIAL_LINE - 1].startswith("*MATERIAL") and k[KW_ELASTIC_LINE - 1] == "210000., 0.3"
    b = bulk().split("\n")
    assert b[BULK_MAT_LINE - 1].startswith("MAT1") and b[BULK_CHEXA_LINE - 1].startswith("CHEXA")


# --------------------------------------------------------------------------- helpers


def n_lines(path: str) -> int:
    src = read_deck_bytes(path, 1 << 30)
    data = src.data
    return data.count(b"\n") + (0 if data.endswith(b"\n") or not data else 1)


def assert_sane(result) -> None:
    """No internal failure; every finding has a severity, a message, and a line that exists."""
    for f in result.findings:
        assert f.severity in SEVERITIES, f
        assert f.message.strip(), f
        assert not f.rule.startswith("internal/"), f"{f.rule}: {f.message}"
        if f.line is not None:
            assert f.path, f
            try:
                n = n_lines(f.path)
            except SourceError:
                pytest.fail(f"{f.rule} gives line {f.line} in an unreadable file {f.path}")
            assert 1 <= f.line <= max(n, 1), f"{f.rule} at {f.path}:{f.line}, file has {n} lines"


def run(paths, **cfg):
    result = check_paths([str(p) for p in paths], Config(**cfg))
    assert_sane(result)
    return result


def hits(result, rules, path=None, line=None):
    rules = {rules} if isinstance(rules, str) else set(rules)
    return [f for f in result.findings if f.rule in rules
            and (path is None or (f.path and os.path.samefile(f.path, path)))
            and (line is None or f.line == line)]


def parsed(path, fmt):
    return parsers.get(fmt).parse(str(path), parsers.ParseOptions(display_path=str(path)))


def elastic_values(model):
    mats = list(model.materials.values())
    assert mats, "no material read"
    block = mats[0].first("elastic")
    assert block is not None, "no elastic block read"
    return block.rows[0].values


# --------------------------------------------------------------------------- truncation


def test_keyword_truncated_mid_card(write_deck):
    need("keyword")
    text = kw()
    cut = text[:text.index("210000.")]             # ends right after "*ELASTIC\n"
    p = write_deck("cut.inp", cut)
    r = run([p])
    assert hits(r, {"parse/truncated", "parse/malformed-data"}, p, KW_ELASTIC_LINE - 1), r.findings


def test_keyword_truncated_mid_line(write_deck):
    need("keyword")
    text = kw()
    p = write_deck("cut.inp", text[:text.index("7, 3, -1.")] + "7, 3")   # no newline, step never ends
    r = run([p])
    assert r.files and r.files[0].materials, "the material before the cut is still read"


def test_bulk_truncated_mid_continuation(write_deck):
    need("bulk")
    text = bulk()
    p = write_deck("cut.bdf", text[:text.index("+,7,8")])   # CHEXA parent without its continuation, no ENDDATA
    r = run([p])
    found = hits(r, {"parse/truncated", "parse/malformed-data"}, p)
    assert found and all(f.line is not None and f.line >= BULK_CHEXA_LINE for f in found), r.findings


def test_bulk_without_enddata(write_deck):
    need("bulk")
    p = write_deck("noend.bdf", bulk(end=""))
    r = run([p])
    assert hits(r, {"parse/truncated", "parse/no-bulk-section"}, p), r.findings
    assert r.files[0].materials, "the material is still read"


# --------------------------------------------------------------------------- binary, empty, not a deck


@pytest.mark.parametrize("name", ["blob.inp", "blob.bdf", "blob.bin"])
def test_binary_file_given_explicitly(write_deck, name):
    p = write_deck(name, bytes(range(256)) * 40)
    r = run([p])
    assert [f.rule for f in r.findings] == ["parse/binary-file"]
    assert r.findings[0].path == str(p) and str(p) in r.findings[0].message
    assert exit_code(r, "error") == 2


@pytest.mark.parametrize("fmt,name", [("keyword", "empty.inp"), ("bulk", "empty.bdf")])
def test_empty_file(write_deck, fmt, name):
    need(fmt)
    p = write_deck(name, b"")
    r = run([p])
    # a file given by name must be a model: an empty one fails the gate (exit 2), it is not a clean pass
    assert [f.rule for f in r.findings] == ["parse/not-a-deck"] and "empty" in r.findings[0].message
    assert exit_code(r, "error") == 2


@pytest.mark.parametrize("fmt,inc,main", [
    ("keyword", "empty.inc", "*INCLUDE, INPUT=empty.inc\n"),
])
def test_empty_include_is_a_warning(write_deck, fmt, inc, main):
    need(fmt)
    write_deck(inc, b"")
    p = write_deck("main.inp", main + kw())
    r = run([p])
    assert any(f.rule == "parse/empty-file" and f.severity == "warning" for f in r.findings), r.findings


@pytest.mark.parametrize("name,text", [
    ("notes.txt", "Dear reviewer,\nplease find the model attached.\n"),
    ("notes.inp", "Dear reviewer,\nplease find the model attached. It is a nice model.\n" * 5),
    ("script.py", "import os\nprint(os.getcwd())\n"),
])
def test_not_a_deck_given_explicitly(write_deck, name, text):
    p = write_deck(name, text)
    r = run([p])
    assert [f.rule for f in r.findings] == ["parse/not-a-deck"], r.findings
    assert str(p) in r.findings[0].message
    assert exit_code(r, "error") == 2


# --------------------------------------------------------------------------- encodings, line ends, tabs


def test_keyword_latin1(write_deck):
    need("keyword")
    p = write_deck("latin.inp", kw(material="STAHL\xc4").encode("latin-1"))
    r = run([p])
    assert hits(r, "parse/encoding", p), r.findings
    assert [m["name"] for m in r.files[0].materials] == ["STAHL\xc4"]


@pytest.mark.parametrize("fmt,enc", [("keyword", "utf-8-sig"), ("keyword", "utf-16"),
                                     ("bulk", "utf-8-sig"), ("bulk", "utf-16")])
def test_bom_and_utf16(write_deck, fmt, enc):
    need(fmt)
    text = kw() if fmt == "keyword" else bulk()
    p = write_deck("enc.inp" if fmt == "keyword" else "enc.bdf", text.encode(enc))
    r = run([p])
    assert not hits(r, {"parse/data-without-keyword", "parse/malformed-data", "parse/not-a-deck"}), r.findings
    mats = r.files[0].materials
    assert len(mats) == 1
    assert mats[0]["line"] in ((KW_MATERIAL_LINE, KW_ELASTIC_LINE - 1) if fmt == "keyword" else (BULK_MAT_LINE,))
    assert elastic_values(parsed(p, fmt))[:2] == (210000.0, 0.3)


@pytest.mark.parametrize("fmt", ["keyword", "bulk"])
@pytest.mark.parametrize("ends", ["crlf", "mixed", "cr"])
def test_line_ends(write_deck, fmt, ends):
    need(fmt)
    lines = (kw() if fmt == "keyword" else bulk()).split("\n")
    if ends == "crlf":
        data = "\r\n".join(lines)
    elif ends == "cr":
        data = "\r".join(lines)
    else:
        data = "".join(ln + ("\r\n" if i % 2 else "\n") for i, ln in enumerate(lines))
    p = write_deck("ends.inp" if fmt == "keyword" else "ends.bdf", data.encode())
    r = run([p])
    assert not hits(r, {"parse/malformed-data", "parse/data-without-keyword"}), r.findings
    assert elastic_values(parsed(p, fmt))[:2] == (210000.0, 0.3)
    line = KW_MATERIAL_LINE if fmt == "keyword" else BULK_MAT_LINE
    assert r.files[0].materials[0]["line"] in (line, line + 1 if fmt == "keyword" else line)


def test_keyword_tabs(write_deck):
    need("keyword")
    p = write_deck("tabs.inp", kw(elastic="\t210000.\t,\t0.3\t").replace("*ELASTIC", "\t*ELASTIC"))
    r = run([p])
    assert not hits(r, {"parse/malformed-data", "parse/data-without-keyword"}), r.findings
    assert elastic_values(parsed(p, "keyword"))[:2] == (210000.0, 0.3)


def test_bulk_blanks_around_free_fields(write_deck):
    need("bulk")
    p = write_deck("blanks.bdf", bulk(mat1="MAT1, 1, 210000. , , 0.3 , 7.85-9"))
    run([p])
    assert elastic_values(parsed(p, "bulk"))[:2] == (210000.0, 0.3)


# --------------------------------------------------------------------------- huge line


@pytest.mark.parametrize("fmt", ["keyword", "bulk"])
def test_ten_megabyte_single_line(write_deck, fmt):
    need(fmt)
    big = "1.0," * (10 * 2**20 // 4)
    if fmt == "keyword":
        text = kw(extra_model=f"*EXPANSION\n{big}\n")
        line = KW_ELASTIC_LINE + 4
    else:
        text = bulk(extra=f"MAT1,7,{big}\n")
        line = BULK_MAT_LINE + 1
    p = write_deck("big.inp" if fmt == "keyword" else "big.bdf", text)
    r = run([p])
    assert r.files[0].materials, "the deck is still read"
    assert all(len(f.message) < 10_000 for f in r.findings), "messages must not quote the whole line"
    if fmt == "keyword":     # ccx takes at most 16 entries on a line (ccx source splitline.f); MYSTRAN keeps the first 10
        assert hits(r, {"parse/too-many-fields", "parse/malformed-data"}, p, line), r.findings


# --------------------------------------------------------------------------- numbers


@pytest.mark.parametrize("value,rules", [
    ("nan", {"parse/value-not-finite", "parse/malformed-data"}),
    ("inf", {"parse/value-not-finite", "parse/malformed-data"}),
    ("-inf", {"parse/value-not-finite", "parse/malformed-data"}),
    ("1e400", {"parse/value-not-finite"}),
    ("1.2.3", {"parse/malformed-data"}),
    ("--5", {"parse/malformed-data"}),
])
@pytest.mark.parametrize("fmt", ["keyword", "bulk"])
def test_bad_numbers(write_deck, fmt, value, rules):
    need(fmt)
    if fmt == "keyword":
        p, line = write_deck("num.inp", kw(elastic=f"{value}, 0.3")), KW_ELASTIC_LINE
    else:
        if value == "1e400":
            value = "1.+400"        # the bulk spelling of the same overflow (NASTRAN-95 User's Manual 2.4.1.1, real numbers)
        p, line = write_deck("num.bdf", bulk(mat1=f"MAT1,1,{value},,0.3,7.85-9")), BULK_MAT_LINE
    r = run([p])
    found = hits(r, rules, p, line)
    assert found and all(f.severity == "error" for f in found), r.findings


def test_keyword_fortran_d_exponent(write_deck):
    need("keyword")
    # ccx reads reals with a Fortran (f20.0) edit descriptor, which takes a D exponent
    # (Fortran 2008, 13.7.2.3.2); checked with ccx 2.20 here: "2.1D5, 3.0d-1" gives the
    # same displacements as "210000., 0.3" on a one-element tension test
    p = write_deck("dexp.inp", kw(elastic="2.1D5, 3.0d-1"))
    r = run([p])
    assert not hits(r, {"parse/malformed-data"}), r.findings
    assert elastic_values(parsed(p, "keyword"))[:2] == pytest.approx((210000.0, 0.3))


def test_bulk_exponent_without_e(write_deck):
    need("bulk")
    # "7.85-9" = 7.85e-9 and "2.1+5" = 2.1e5 (NASTRAN 95 User's Manual 2.4.1.1)
    p = write_deck("exp.bdf", bulk(mat1="MAT1,1,2.1+5,,.3,7.85-9"))
    run([p])
    assert elastic_values(parsed(p, "bulk"))[:2] == pytest.approx((210000.0, 0.3))


# --------------------------------------------------------------------------- structure


def test_keyword_without_data_lines(write_deck):
    need("keyword")
    p = write_deck("nodata.inp", kw(props="*ELASTIC\n*DENSITY\n7.85e-9\n"))
    r = run([p])
    assert hits(r, {"parse/malformed-data", "parse/truncated"}, p, KW_MATERIAL_LINE + 1), r.findings


def test_bulk_card_without_fields(write_deck):
    need("bulk")
    p = write_deck("nofields.bdf", bulk(extra="MAT1\n"))
    r = run([p])
    assert hits(r, {"parse/malformed-data"}, p, BULK_MAT_LINE + 1), r.findings


def test_keyword_data_before_any_keyword(write_deck):
    need("keyword")
    p = write_deck("early.inp", "1, 2, 3\n" + kw())
    r = run([p])
    assert hits(r, "parse/data-without-keyword", p, 1), r.findings


def test_keyword_elastic_outside_material(write_deck):
    need("keyword")
    text = kw().replace("*ELEMENT", "*ELASTIC\n1000., 0.2\n*ELEMENT", 1)
    p = write_deck("stray.inp", text)
    r = run([p])
    assert hits(r, "parse/misplaced-card", p, 10), r.findings
    assert [m["name"] for m in r.files[0].materials] == ["STEEL"]


@pytest.mark.parametrize("fmt", ["keyword", "bulk"])
def test_material_without_properties(write_deck, fmt):
    need(fmt)
    if fmt == "keyword":
        p = write_deck("bare.inp", kw(material="BARE", props=""))
        line = KW_MATERIAL_LINE
    else:
        p = write_deck("bare.bdf", bulk(mat1="MAT1,1"))
        line = BULK_MAT_LINE
    r = run([p])
    errors = [f for f in r.findings if f.severity == "error" and f.line == line]
    assert errors, r.findings


def test_keyword_duplicated_set(write_deck):
    need("keyword")
    p = write_deck("dupset.inp", kw(extra_model="*ELSET, ELSET=S\n1\n*ELSET, ELSET=S\n1\n"))
    r = run([p])
    assert hits(r, "parse/duplicate-set", p, KW_ELASTIC_LINE + 5), r.findings


@pytest.mark.parametrize("fmt", ["keyword", "bulk"])
def test_duplicated_material(write_deck, fmt):
    need(fmt)
    if fmt == "keyword":
        p = write_deck("dupmat.inp", kw(extra_model="*MATERIAL, NAME=steel\n*ELASTIC\n1000., 0.2\n"))
        line = KW_ELASTIC_LINE + 3
    else:
        p = write_deck("dupmat.bdf", bulk(extra="MAT1,1,1000.,,0.2\n"))
        line = BULK_MAT_LINE + 1
    r = run([p])
    found = hits(r, "model/duplicate-material", p)
    assert found and any(f.line in (line, KW_MATERIAL_LINE, BULK_MAT_LINE) for f in found), r.findings


# --------------------------------------------------------------------------- includes


def _include(fmt, target):
    return f"*INCLUDE, INPUT={target}\n" if fmt == "keyword" else f"INCLUDE '{target}'\n"


def _deck_with_include(fmt, target):
    if fmt == "keyword":
        return _include(fmt, target) + kw()
    return bulk(extra=_include(fmt, target))


INC_LINE = {"keyword": 1, "bulk": BULK_MAT_LINE + 1}
EXT = {"keyword": ".inp", "bulk": ".bdf"}


@pytest.mark.parametrize("fmt", ["keyword", "bulk"])
def test_include_cycle(write_deck, fmt):
    need(fmt)
    ext = EXT[fmt]
    a = write_deck("a" + ext, _deck_with_include(fmt, "b" + ext))
    b = write_deck("b" + ext, "** part b\n" + _include(fmt, "a" + ext) if fmt == "keyword"
                   else "$ part b\n" + _include(fmt, "a" + ext))
    r = run([a])
    found = hits(r, "parse/include-cycle", b, 2)
    assert found, r.findings
    assert len(r.files) == 1 and r.files[0].materials


@pytest.mark.parametrize("fmt", ["keyword", "bulk"])
def test_missing_include(write_deck, fmt):
    need(fmt)
    p = write_deck("main" + EXT[fmt], _deck_with_include(fmt, "nowhere" + EXT[fmt]))
    r = run([p])
    found = hits(r, "parse/missing-include", p, INC_LINE[fmt])
    assert found and "nowhere" in found[0].message, r.findings
    assert r.files[0].materials, "the rest of the deck is still checked"


@pytest.mark.parametrize("fmt", ["keyword", "bulk"])
def test_include_of_directory(write_deck, tmp_path, fmt):
    need(fmt)
    (tmp_path / "folder").mkdir()
    p = write_deck("main" + EXT[fmt], _deck_with_include(fmt, "folder"))
    r = run([p])
    assert hits(r, "parse/include-directory", p, INC_LINE[fmt]), r.findings


@pytest.mark.parametrize("fmt", ["keyword", "bulk"])
def test_include_of_binary_file(write_deck, fmt):
    need(fmt)
    write_deck("blob" + EXT[fmt], bytes(range(256)) * 8)
    p = write_deck("main" + EXT[fmt], _deck_with_include(fmt, "blob" + EXT[fmt]))
    r = run([p])
    assert hits(r, "parse/include-unreadable", p, INC_LINE[fmt]), r.findings


# --------------------------------------------------------------------------- unreadable files, walks


def test_broken_symlink_given_explicitly(tmp_path):
    # tests run as root here, where chmod 000 does not stop a read: a dangling link makes the open fail instead
    link = tmp_path / "gone.inp"
    link.symlink_to(tmp_path / "does-not-exist.inp")
    r = run([link])
    assert [f.rule for f in r.findings] == ["parse/file-unreadable"], r.findings
    assert str(link) in r.findings[0].message
    assert exit_code(r, "error") == 2


@pytest.mark.skipif(not hasattr(os, "geteuid") or os.geteuid() == 0, reason="root reads files whatever their mode")
def test_unreadable_permissions(write_deck):
    p = write_deck("locked.inp", kw())
    p.chmod(0)
    try:
        r = run([p])
    finally:
        p.chmod(0o644)
    assert [f.rule for f in r.findings] == ["parse/file-unreadable"]


def test_symlink_loops_in_walk(write_deck, tmp_path):
    need("keyword")
    deck = write_deck("models/part.inp", kw())
    (tmp_path / "models" / "again").symlink_to(tmp_path / "models")
    (tmp_path / "models" / "sub").mkdir()
    (tmp_path / "models" / "sub" / "up").symlink_to(tmp_path)
    (tmp_path / "models" / "self.inp").symlink_to(tmp_path / "models" / "self.inp")
    r = run([tmp_path / "models"])
    assert [os.path.realpath(f.path) for f in r.files] == [os.path.realpath(deck)]


def test_missing_path(tmp_path):
    r = run([tmp_path / "nope.inp"])
    assert [f.rule for f in r.findings] == ["parse/path-not-found"]
    assert exit_code(r, "error") == 2


# --------------------------------------------------------------------------- the run goes on


def test_bad_files_do_not_stop_the_others(write_deck, tmp_path):
    need("keyword")
    good = write_deck("good.inp", kw())
    bad = [write_deck("blob.inp", bytes(range(256)) * 4), write_deck("empty.inp", ""),
           write_deck("notes.txt", "hello\n"), write_deck("cut.inp", kw()[:200]),
           write_deck("num.inp", kw(elastic="1.2.3, nan")), tmp_path / "missing.inp"]
    r = run([*bad, good])
    reports = {os.path.basename(f.path): f for f in r.files}
    assert reports["good.inp"].materials and not reports["good.inp"].incomplete
    assert {"parse/binary-file", "parse/not-a-deck", "parse/path-not-found"} <= {f.rule for f in r.general}
    assert {"cut.inp", "num.inp", "good.inp"} <= set(reports)
    assert any(f.rule == "parse/not-a-deck" and f.path.endswith("empty.inp") for f in r.general)
    assert exit_code(r, "error") == 2


# --------------------------------------------------------------------------- found by the fuzz suite


@pytest.mark.parametrize("extra", [
    "*ELSET, ELSET=E\n" + "1" * 40 + "\n",                       # integer beyond 64 bits in a set
    "*NODE\n" + "9" * 30 + ", 0., 0., 0.\n",                     # node id beyond 64 bits
    "*NODE\n9, 1.2.3, 0., 0.\n",                                 # malformed coordinate
    "*NODE\n10, 7.85-9, --5, 0.\n",
    "*ELEMENT, TYPE=C3D8, ELSET=E2\n2, 1, 2, 3, 4, 5, 6, 7, " + "8" * 25 + "\n",
    "*ELSET, ELSET=E, GENERATE\n, 0\n",                          # empty start of a generated range
    "*ELSET, ELSET=E, GENERATE\n1, , 0\n",
    "*NSET, NSET=N, GENERATE\n1, x\n",
])
def test_keyword_mesh_numbers_out_of_range(write_deck, extra):
    need("keyword")
    p = write_deck("mesh.inp", kw(extra_model=extra))
    # mesh lines are not material data: the parser need not report them, but it must not fail
    r = run([p])      # run() fails on any internal/* finding
    assert [m["name"] for m in r.files[0].materials] == ["STEEL"]
    assert not r.files[0].incomplete


@pytest.mark.parametrize("extra", [
    "GRID*,1111111111111111111111111111111111111111\n",          # large-field name, id beyond 64 bits
    "GRID," + "9" * 30 + ",,0.,0.,0.\n",
    "GRID,9,,1.2.3,--5,0.\n",
    "CHEXA,2,1,1,2,3,4,5,6,+\n+,7," + "8" * 25 + "\n",
    "PSOLID," + "3" * 25 + "," + "1" * 25 + "\n",
])
def test_bulk_mesh_numbers_out_of_range(write_deck, extra):
    need("bulk")
    p = write_deck("mesh.bdf", bulk(extra=extra))
    r = run([p])      # run() fails on any internal/* finding
    assert len(r.files[0].materials) == 1
    assert not r.files[0].incomplete
