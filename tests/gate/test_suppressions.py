"""Inline suppressions: every scope in every format's comment syntax, unknown and unused suppressions,
--no-inline-suppressions, and how suppressed findings appear in JSON, SARIF and the exit code.

Rule expectations: nu = 0.7 lies outside -1 < nu < 0.5 (isotropic elasticity, common practice), so
elastic/poisson-out-of-range reports it on the data line."""
from __future__ import annotations

import json
import shutil
import textwrap
from pathlib import Path

import pytest

from linter.check import check_paths
from linter.cli import main
from linter.config import Config

from decks import TET_MESH as MESH

REPO = Path(__file__).resolve().parents[2]
POISSON = "elastic/poisson-out-of-range"


def kw(before_material: str = "", before_elastic: str = "", after: str = "", nu: str = "0.7") -> str:
    return (MESH + before_material + "*MATERIAL,NAME=GAS\n" + before_elastic + f"*ELASTIC\n210000.,{nu}\n"
            "*DENSITY\n7.85e-9\n" + after + "*SOLID SECTION,ELSET=E1,MATERIAL=GAS\n*STEP\n*STATIC\n*END STEP\n")


def check(path, **cfg):
    config = Config.from_mapping({"units": "mm-tonne-s"})
    for k, v in cfg.items():
        setattr(config, k, v)
    res = check_paths([str(path)], config)
    return res, res.files[0].findings


def by_rule(findings, rule):
    return [f for f in findings if f.rule == rule]


@pytest.mark.parametrize("where", ["before_material", "before_elastic"])
def test_keyword_next_card(tmp_path, where):
    p = tmp_path / "a.inp"
    p.write_text(kw(**{where: "** deckwarden accept elastic/poisson-out-of-range because gas fill, on purpose\n"}))
    res, found = check(p)
    (f,) = by_rule(found, POISSON)
    assert f.suppression == {"rules": [POISSON], "scope": "next", "reason": "gas fill, on purpose",
                             "path": str(p), "line": 8 if where == "before_material" else 9}
    assert not by_rule(found, "parse/unused-suppression") and not by_rule(found, "parse/bad-suppression")
    from linter.findings import exit_code

    assert exit_code(res, "error") == 0


def test_keyword_next_card_does_not_reach_the_following_card(tmp_path):
    # the comment above *DENSITY covers the density block only, not the *ELASTIC row above it
    p = tmp_path / "a.inp"
    p.write_text(kw().replace("*DENSITY\n", "** deckwarden accept elastic\n*DENSITY\n"))
    _, found = check(p)
    assert by_rule(found, POISSON)[0].suppression is None
    (unused,) = by_rule(found, "parse/unused-suppression")
    assert unused.line == 11 and unused.severity == "note"


def test_keyword_material_and_file_scopes_and_families(tmp_path):
    p = tmp_path / "a.inp"
    p.write_text("** deckwarden accept elastic for material gas\n" + kw())
    _, found = check(p)
    assert by_rule(found, POISSON)[0].suppression["scope"] == "material gas"
    p.write_text(kw(after="** deckwarden accept elastic, model for file because legacy deck\n"))
    _, found = check(p)
    assert by_rule(found, POISSON)[0].suppression["reason"] == "legacy deck"


def test_keyword_include_file_scope_stays_in_its_file(tmp_path):
    (tmp_path / "mat.inp").write_text("** deckwarden accept elastic for file\n*MATERIAL,NAME=GAS\n*ELASTIC\n"
                                      "210000.,0.7\n*DENSITY\n7.85e-9\n")
    top = tmp_path / "top.inp"
    top.write_text(MESH + "*INCLUDE,INPUT=mat.inp\n*MATERIAL,NAME=OTHER\n*ELASTIC\n1000.,0.7\n*DENSITY\n1e-9\n"
                   "*SOLID SECTION,ELSET=E1,MATERIAL=GAS\n*STEP\n*STATIC\n*END STEP\n")
    _, found = check(top)
    states = {f.material: f.suppression is not None for f in by_rule(found, POISSON)}
    assert states == {"GAS": True, "OTHER": False}


def test_unknown_rule_is_a_warning_with_the_closest_id(tmp_path):
    p = tmp_path / "a.inp"
    p.write_text(kw(before_material="** deckwarden accept elastic/poison-out-of-range\n"))
    _, found = check(p)
    (bad,) = by_rule(found, "parse/bad-suppression")
    assert bad.severity == "warning" and bad.line == 8
    assert "'elastic/poison-out-of-range'" in bad.message and "did you mean: elastic/poisson-out-of-range" in bad.message
    assert by_rule(found, POISSON)[0].suppression is None                 # the misspelt id accepts nothing


@pytest.mark.parametrize("text, problem", [
    ("** deckwarden accept\n", "names no rule"),
    ("** deckwarden accept elastic for tomorrow\n", "scope 'for tomorrow'"),
    ("** deckwarden accept internal/rule-failed\n", "cannot be accepted"),
])
def test_bad_directives(tmp_path, text, problem):
    p = tmp_path / "a.inp"
    p.write_text(kw(before_material=text))
    _, found = check(p)
    assert any(problem in f.message for f in by_rule(found, "parse/bad-suppression"))


def test_plain_comments_mentioning_the_tool_are_not_directives(tmp_path):
    p = tmp_path / "a.inp"
    p.write_text("** checked with deckwarden before the release\n" + kw(nu="0.3"))
    _, found = check(p)
    assert not [f for f in found if "suppression" in f.rule]


def test_no_inline_suppressions_ignores_them_all(tmp_path, capsys):
    p = tmp_path / "a.inp"
    p.write_text(kw(before_material="** deckwarden accept elastic\n"))
    assert main(["check", str(p), "--units", "mm-tonne-s", "--format", "line"]) == 0
    out = capsys.readouterr().out
    assert POISSON not in out                          # the line report leaves suppressed findings out
    assert main(["check", str(p), "--units", "mm-tonne-s", "--format", "line", "--no-inline-suppressions"]) == 1
    out = capsys.readouterr().out
    assert POISSON in out and "unused-suppression" not in out


BULK = """SOL 101
CEND
BEGIN BULK
GRID,1,,0.,0.,0.
GRID,2,,1.,0.,0.
GRID,3,,0.,1.,0.
GRID,4,,0.,0.,1.
CTETRA,1,1,1,2,3,4
CTETRA,2,2,1,2,3,4
PSOLID,1,1
PSOLID,2,2
{c1}MAT1,1,210000.,,0.7,7.85e-9
MAT1,2,210000.,,0.7,7.85e-9{c2}
ENDDATA
"""


def test_bulk_comment_line_and_trailing_comment(tmp_path):
    # MAT1 fields: MID, E, G, NU, RHO (MYSTRAN / NASTRAN Quick Reference, MAT1)
    p = tmp_path / "b.bdf"
    p.write_text(BULK.format(c1="$ deckwarden accept elastic/poisson-out-of-range because under review\n",
                             c2=" $ deckwarden accept elastic"))
    _, found = check(p)
    sup = {f.material: f.suppression for f in by_rule(found, POISSON)}
    assert sup["1"]["reason"] == "under review" and sup["1"]["line"] == 12
    assert sup["2"]["line"] == 14 and sup["2"]["scope"] == "next"


def test_bulk_file_scope(tmp_path):
    p = tmp_path / "b.bdf"
    p.write_text("$ deckwarden accept elastic for file\n" + BULK.format(c1="", c2=""))
    _, found = check(p)
    assert all(f.suppression for f in by_rule(found, POISSON)) and len(by_rule(found, POISSON)) == 2


def test_yaml_material_file(tmp_path):
    pytest.importorskip("meshio")
    shutil.copy(REPO / "sample_decks" / "pv40_seal_housing.msh", tmp_path)
    text = (REPO / "sample_decks" / "pv40_seal_housing.yaml").read_text()
    text = text.replace("    elastic: {E: 90000, nu: 0.26}",
                        "    # deckwarden accept elastic because test value\n    elastic: {E: 90000, nu: 0.76}")
    assert "nu: 0.76" in text
    p = tmp_path / "m.yaml"
    p.write_text(text)
    _, found = check(p)
    (f,) = by_rule(found, POISSON)
    assert f.suppression["reason"] == "test value"
    p.write_text("# deckwarden accept elastic for material casing_grey_iron\n" + text.replace("    # deckwarden accept elastic because test value\n", ""))
    _, found = check(p)
    assert by_rule(found, POISSON)[0].suppression["scope"] == "material casing_grey_iron"


def test_aster_command_file(tmp_path):
    # run profile and native mesh as in the code_aster documentation U1.04.00 and U3.01.00 (from memory)
    (tmp_path / "s.mail").write_text("COOR_3D\n N1 0. 0. 0.\n N2 1. 0. 0.\n N3 0. 1. 0.\n N4 0. 0. 1.\nFINSF\n"
                                     "TETRA4\n M1 N1 N2 N3 N4\nFINSF\nFIN\n")
    (tmp_path / "s.export").write_text("P time_limit 60\nF comm s.comm D 1\nF mail s.mail D 20\n")
    (tmp_path / "s.comm").write_text(textwrap.dedent("""\
        DEBUT()
        MA = LIRE_MAILLAGE(FORMAT='ASTER')
        MO = AFFE_MODELE(MAILLAGE=MA, AFFE=_F(TOUT='OUI', PHENOMENE='MECANIQUE', MODELISATION='3D'))
        # deckwarden accept elastic/poisson-out-of-range because placeholder value
        STEEL = DEFI_MATERIAU(ELAS=_F(E=210000., NU=0.7, RHO=7.85e-9))
        CM = AFFE_MATERIAU(MAILLAGE=MA, AFFE=_F(TOUT='OUI', MATER=STEEL))
        RES = MECA_STATIQUE(MODELE=MO, CHAM_MATER=CM)
        """))
    _, found = check(tmp_path / "s.export")
    (f,) = by_rule(found, POISSON)
    assert f.suppression["path"].endswith("s.comm") and f.suppression["line"] == 4


def test_json_and_sarif_keep_suppressed_findings(tmp_path, capsys, sarif_validator):
    p = tmp_path / "a.inp"
    p.write_text(kw(before_material="** deckwarden accept elastic because acoustic gas\n"))
    assert main(["check", str(p), "--units", "mm-tonne-s", "--format", "json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    (f,) = [f for f in doc["findings"] if f["rule"] == POISSON]
    assert f["suppression"]["reason"] == "acoustic gas" and doc["summary"]["suppressed"] == 1
    assert doc["summary"]["error"] == 0
    assert main(["check", str(p), "--units", "mm-tonne-s", "--format", "sarif"]) == 0
    sarif = json.loads(capsys.readouterr().out)
    sarif_validator(sarif)
    (r,) = [r for r in sarif["runs"][0]["results"] if r["ruleId"] == POISSON]
    assert r["suppressions"][0]["kind"] == "inSource" and r["suppressions"][0]["justification"] == "acoustic gas"
    assert main(["check", str(p), "--units", "mm-tonne-s"]) == 0
    assert "1 suppressed by comments (not counted)" in capsys.readouterr().out


def test_directives_are_found_in_any_window_with_their_line(tmp_path, monkeypatch):
    """A mapped file walked in small windows, so that most hold no marker; the lines are counted by hand."""
    from linter import suppressions
    from linter.parsers import buffers

    monkeypatch.setattr(buffers, "MAP_ABOVE", 0)
    monkeypatch.setattr(buffers, "WINDOW", 64)
    lines = [f"N{i} 0. 0. {i}." for i in range(60)]
    lines[3] = "deckwarden accept elastic for file"                 # no comment prefix: not a directive
    lines[40] = "# deckwarden accept element/volumetric-locking"
    lines[55] = "M1 N1 N2  # DECKWARDEN accept elastic because seal"
    lines[58] = "# deckwarden accept element"
    lines[58:58] = [""] * 100                              # blank blocks between the comment and its code line
    p = tmp_path / "blocks.txt"
    p.write_text("\n".join(lines) + "\n")
    got = suppressions.scan_file(str(p), ("#",))
    assert [(s.line, s.rules, s.target) for s in got] == [
        (41, ["element/volumetric-locking"], 42), (56, ["elastic"], 56), (159, ["element"], 160)]


def test_keyword_deck_scanned_from_the_text_the_parser_read(tmp_path, monkeypatch):
    """The keyword parser keeps its text (``DeckModel.texts``): the suppression scan does not open the
    deck again; a UTF-16 deck (decoded by the parser) and CR line ends give the comment's true line."""
    from linter import suppressions

    def no_reread(path, prefixes):
        raise AssertionError(f"{path} read again")

    monkeypatch.setattr(suppressions, "scan_file", no_reread)
    text = kw(before_elastic="** deckwarden accept elastic/poisson-out-of-range because gas fill\n")
    for name, raw in (("utf16.inp", text.encode("utf-16")), ("cr.inp", text.replace("\n", "\r").encode())):
        p = tmp_path / name
        p.write_bytes(raw)
        _, found = check(p)
        (f,) = by_rule(found, POISSON)
        assert f.suppression is not None and f.suppression["line"] == 9, name   # line 9 counted by hand


def test_mapped_bulk_deck_scanned_from_the_text_the_parser_read(tmp_path, monkeypatch):
    """A bulk deck above the mapping size keeps its mapped text, and the places a marker can be (not the
    GRID/element run blocks, which hold no ``$``): the scan does not open the deck again and gives the
    lines the unmapped scan gives (counted by hand: with 40 more GRID lines the comment is line 52 and the
    second MAT1, with its trailing comment, line 54)."""
    from linter import suppressions
    from linter.parsers import buffers
    from linter.parsers.bulk import lines as bl

    grids = "".join(f"GRID,{i},,{i}.,0.,0.\n" for i in range(5, 45))
    text = BULK.format(c1="$ deckwarden accept elastic/poisson-out-of-range because under review\n",
                       c2=" $ deckwarden accept elastic").replace("GRID,4,,0.,0.,1.\n", "GRID,4,,0.,0.,1.\n" + grids)
    p = tmp_path / "pv40_mapped.bdf"
    p.write_text(text)
    monkeypatch.setattr(bl, "BLOCK", 256)
    monkeypatch.setattr(bl, "SMALL", 64)
    _, plain = check(p)
    monkeypatch.setattr(buffers, "MAP_ABOVE", 0)

    def no_reread(path, prefixes):
        raise AssertionError(f"{path} read again")

    monkeypatch.setattr(suppressions, "scan_file", no_reread)
    _, mapped = check(p)
    for found in (plain, mapped):
        sup = {f.material: f.suppression for f in by_rule(found, POISSON)}
        assert sup["1"]["line"] == 52 and sup["1"]["reason"] == "under review"
        assert sup["2"]["line"] == 54 and sup["2"]["scope"] == "next"
