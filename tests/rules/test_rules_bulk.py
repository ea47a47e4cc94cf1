"""Tests of the bulk-specific rules (rules/elastic_bulk.py) and of core rules running on bulk decks."""
from __future__ import annotations

import pytest

from linter.check import check_paths

HEAD = "SOL 101\nCEND\nBEGIN BULK\n"
MESH = ("GRID,1,,0.,0.,0.\nGRID,2,,1.,0.,0.\nGRID,3,,1.,1.,0.\nGRID,4,,0.,1.,0.\n"
        "GRID,5,,0.,0.,1.\nGRID,6,,1.,0.,1.\nGRID,7,,1.,1.,1.\nGRID,8,,0.,1.,1.\n")


def findings(path, rule=None):
    res = check_paths([str(path)])
    out = [f for fr in res.files for f in fr.findings]
    return [f for f in out if rule is None or f.rule == rule]


def deck(write_deck, body: str, name="d.bdf"):
    return write_deck(name, HEAD + MESH + body + "ENDDATA\n")


def test_inconsistent_constants(write_deck):
    # G = E/(2(1+nu)) (NASTRAN-95 MAT1 remarks): 2.1e5/(2*1.3) = 80769 vs G = 7.0e4 -> 15.4 %
    p = deck(write_deck, "PSOLID,1,1\nCHEXA,1,1,1,2,3,4,5,6,+\n+,7,8\nMAT1,1,2.1+5,7.0+4,.3\n")
    (f,) = findings(p, "elastic/inconsistent-constants")
    assert f.severity == "warning" and f.line == 15 and f.material == "1"
    assert f.data["G_from_E_nu"] == pytest.approx(2.1e5 / 2.6)
    assert f.data["relative_difference"] == pytest.approx(abs(1 - (2.1e5 / 2.6) / 7.0e4))
    assert "solids" in f.message and "G directly for the shear terms" in f.message


def test_consistent_constants_within_tolerance(write_deck):
    # 2.1e5/(2*1.3) = 80769.2: G = 80800 differs by 0.04 %, under the 1 % tolerance (MYSTRAN BD_MAT1.f90)
    p = deck(write_deck, "PSOLID,1,1\nCHEXA,1,1,1,2,3,4,5,6,+\n+,7,8\nMAT1,1,2.1+5,8.08+4,.3\n")
    assert findings(p, "elastic/inconsistent-constants") == []


def test_tolerance_from_config(write_deck):
    from linter.config import Config

    p = deck(write_deck, "PSOLID,1,1\nCHEXA,1,1,1,2,3,4,5,6,+\n+,7,8\nMAT1,1,2.1+5,7.9+4,.3\n")
    # 1 - 80769.2/79000 = 2.2 % off: reported at the default 1 %, not with a 5 % tolerance
    assert len(findings(p, "elastic/inconsistent-constants")) == 1
    cfg = Config.from_mapping({"thresholds": {"elastic": {"mat1_consistency_tol": 0.05}}})
    res = check_paths([str(p)], config=cfg)
    assert [f for fr in res.files for f in fr.findings if f.rule == "elastic/inconsistent-constants"] == []


def test_defaulted_nu_on_solid(write_deck):
    # only E given: G = 0 and nu = 0 (NASTRAN-95 MAT1 remark 6; MYSTRAN MAT1)
    p = deck(write_deck, "PSOLID,1,1\nCHEXA,1,1,1,2,3,4,5,6,+\n+,7,8\nMAT1,1,2.1+5\n")
    (f,) = findings(p, "elastic/defaulted-constants")
    assert f.data["given"] == ["E"] and f.data["defaulted"] == ["G", "NU"]
    assert "PSOLID PID 1 (solid)" in f.data["used_by"][0]


def test_defaulted_shell_roles(write_deck):
    p = deck(write_deck, "PSHELL,2,1,1.,1,,1\nCQUAD4,1,2,1,2,3,4\nMAT1,1,7.+4\n")
    (f,) = findings(p, "elastic/defaulted-constants")
    joined = " ".join(f.data["used_by"])
    assert "membrane" in joined and "transverse-shear" in joined and "G = 0" in joined


def test_g_only_is_fine_for_shear_panels(write_deck):
    # MAT1 with only G is legitimate for PSHEAR (NASTRAN-95 User's Manual MAT1: shear panels take G)
    p = deck(write_deck, "PSHEAR,3,1,1.\nCSHEAR,1,3,1,2,3,4\nMAT1,1,,2.7+4\n")
    assert findings(p, "elastic/defaulted-constants") == []
    p2 = deck(write_deck, "PSHELL,3,1,1.\nCQUAD4,1,3,1,2,3,4\nMAT1,1,,2.7+4\n", name="e.bdf")
    (f,) = findings(p2, "elastic/defaulted-constants")
    assert f.data["given"] == ["G"] and "E = 0" in f.message


def test_unused_material_is_not_reported_by_defaulted(write_deck):
    p = deck(write_deck, "PSOLID,1,1\nCHEXA,1,1,1,2,3,4,5,6,+\n+,7,8\nMAT1,1,2.1+5,,.3\nMAT1,2,2.1+5\n")
    assert findings(p, "elastic/defaulted-constants") == []


def test_bulk_rules_do_not_run_on_keyword_decks(write_deck):
    from linter.registry import load

    r = load()
    for rid in ("elastic/inconsistent-constants", "elastic/defaulted-constants"):
        assert r[rid].formats == ("bulk",)


def test_core_rules_on_bulk(write_deck):
    # nu = 0.5 on a solid is an error (MYSTRAN MATERIAL_PROPS_3D.f90 *ERROR 1936; NASTRAN-95 MAT1 remark 8)
    p = deck(write_deck, "PSOLID,1,1\nCHEXA,1,1,1,2,3,4,5,6,+\n+,7,8\nMAT1,1,2.1+5,,.5\n")
    got = findings(p, "elastic/poisson-out-of-range")
    assert [f.severity for f in got] == ["error"]
    # ... and a warning on plates (MYSTRAN source MATERIAL_PROPS_2D.f90: plates accept it)
    p2 = deck(write_deck, "PSHELL,2,1,1.,1\nCQUAD4,1,2,1,2,3,4\nMAT1,1,2.1+5,,.5\n", name="s.bdf")
    got2 = findings(p2, "elastic/poisson-out-of-range")
    assert [f.severity for f in got2] == ["warning"]
    # a property naming a material that no MAT card defines
    p3 = deck(write_deck, "PSOLID,1,9\nCHEXA,1,1,1,2,3,4,5,6,+\n+,7,8\nMAT1,1,2.1+5,,.3\n", name="u.bdf")
    assert [f.rule for f in findings(p3) if f.rule == "model/undefined-material"] == ["model/undefined-material"]
