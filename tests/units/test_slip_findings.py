"""Unit slips diagnosed right: the reading that fits every number best, its fix with the factor, the
evidence beyond the material numbers (names, explicit step time), weight density without WTMASS, and
the measured recall / right-fix share on the generated slip decks (tests/units/slip_decks.py).

Values: steel E = 210000 MPa, nu = 0.3, rho = 7850 kg/m^3 (EN 1993-1-1 3.2.6; EN 1991-1-1 Table A.4);
aluminium E = 68900 MPa, rho = 2700 kg/m^3 (ASM Handbook Vol. 2, 6061-T6); steel in in-lbf-s
E = 29.0e6 psi, weight density 0.283 lbf/in^3 (common US handbook values, e.g. AISC Manual, from
memory); standard gravity 386.089 in/s^2 (NIST SP 811).
"""
from __future__ import annotations

import importlib.util
import sys
from pathlib import Path

import pytest

from linter.check import check_paths
from linter.config import Config

HERE = Path(__file__).resolve().parent
NODES = ("*NODE\n1,0,0,0\n2,100,0,0\n3,100,100,0\n4,0,100,0\n5,0,0,100\n6,100,0,100\n7,100,100,100\n8,0,100,100\n"
         "*ELEMENT,TYPE=C3D8,ELSET=EALL\n1,1,2,3,4,5,6,7,8\n")


def deck(mat: str, E, nu, rho, step: str) -> str:
    # density value on line 16
    return (NODES + f"*MATERIAL,NAME={mat}\n*ELASTIC\n{E},{nu}\n*DENSITY\n{rho}\n"
            f"*SOLID SECTION,ELSET=EALL,MATERIAL={mat}\n*STEP\n{step}\n*END STEP\n")


def mismatch(write_deck, name, text, **cfg):
    r = check_paths([str(write_deck(name, text))], Config(**cfg))
    return [f for f in r.findings if f.rule == "units/mismatch"], r


def test_kg_per_mm3_is_not_a_weight_density(write_deck):
    # 7.85e-6 is steel in kg/mm^3 (7850 kg/m^3 x 1e-9); a steel weight density in N/mm^3 would be
    # 7850 x 9.81 x 1e-9 = 7.7e-5, so reading it as one (mass 8.0e-10) makes the steel ten times too light
    mm, _ = mismatch(write_deck, "pv40_bracket.inp", deck("PV40_BRACKET", 210000, 0.3, "7.85e-6", "*FREQUENCY\n10"))
    assert len(mm) == 1 and mm[0].severity == "error" and mm[0].line == 16
    f = mm[0]
    assert f.data["write"]["rho"] == pytest.approx(7.85e-9, rel=1e-6)
    assert f.data["factor"]["rho"] == pytest.approx(1e-3)
    assert "kg/mm^3" in f.message and "7.85e-09" in f.message and "x 0.001" in f.message
    # the weight-density reading was ranked below it
    assert any(o["fits"] == "weight density" for o in f.data.get("other_readings", ()))


def test_aluminium_slip_not_explained_away_as_a_foam(write_deck):
    # E = 68900 with density 2.70e-6 in a frequency step: kg/mm^3 in an mm/MPa model, not a foam in psi
    mm, r = mismatch(write_deck, "pv40_alu.inp", deck("PV40_BRACKET", 68900, 0.33, "2.70e-6", "*FREQUENCY\n10"))
    assert r.files[0].unit_system["name"] == "mm-tonne-s"
    assert len(mm) == 1 and mm[0].data["write"]["rho"] == pytest.approx(2.7e-9, rel=1e-6)
    assert not [f for f in r.findings if "foam" in f.message]


@pytest.mark.parametrize("rho,factor", [("7.85", 1e-9), ("7.85e-3", 1e-6)])
def test_explicit_step_density_slips_do_not_pass_as_another_system(write_deck, rho, factor):
    # 7.85 (g/cm^3) and 7.85e-3 (g/mm^3, which with MPa is the consistent mm-g-ms system) beside
    # E = 210000 in an explicit step of 1 ms: in mm-g-ms the step would last 1e-3 ms, less than one
    # stable increment (L/c_d, about 0.017 ms for 100 mm of steel), so the step time refutes that reading
    mm, r = mismatch(write_deck, "pv40_drop.inp", deck("PV40_HOUSING", 210000, 0.3, rho,
                                                        "*DYNAMIC,EXPLICIT\n1e-7,1e-3"))
    assert r.files[0].unit_system["name"] == "mm-tonne-s"
    assert len(mm) == 1 and mm[0].data["write"]["rho"] == pytest.approx(7.85e-9, rel=1e-6)
    assert mm[0].data["factor"]["rho"] == pytest.approx(factor)
    assert any("explicit step period" in c for c in r.files[0].unit_system.get("clues", ()))


def test_material_name_is_weighed_and_shown(write_deck):
    mm, r = mismatch(write_deck, "pv40_named.inp", deck("ALU_6061_T6", 68900, 0.33, "2.70e-6", "*FREQUENCY\n10"))
    assert len(mm) == 1 and "the name ALU_6061_T6 says metal" in mm[0].message
    assert "material name ALU_6061_T6: metal" in r.files[0].unit_system["clues"]


def test_weight_density_without_wtmass(write_deck):
    text = ("SOL 103\nCEND\nMETHOD = 1\nBEGIN BULK\nEIGRL,1,,,10\nGRID,1,,0.,0.,0.\nGRID,2,,4.,0.,0.\n"
            "GRID,3,,4.,4.,0.\nGRID,4,,0.,4.,0.\nCQUAD4,1,1,1,2,3,4\nPSHELL,1,1,0.25\nMAT1,1,29.0E6,,0.3,0.283\n"
            "ENDDATA\n")
    mm, r = mismatch(write_deck, "pv40_plate.bdf", text)
    assert len(mm) == 1 and mm[0].data["fits"] == "weight density"
    assert mm[0].data["write"]["rho"] == pytest.approx(0.283 / 386.089, rel=1e-4)
    assert mm[0].data["wtmass"] == pytest.approx(1 / 386.089, rel=1e-4)
    # inferred with low confidence: the finding says the system assumed and how sure it is
    assert "assumed unit system in-lbf-s" in mm[0].message and "--units in-lbf-s" in mm[0].message
    # with the system declared the same finding fails the gate
    mm, _ = mismatch(write_deck, "pv40_plate2.bdf", text, units="in-lbf-s")
    assert len(mm) == 1 and mm[0].severity == "error"
    # with PARAM,WTMASS the density is a mass density: nothing to say
    mm, _ = mismatch(write_deck, "pv40_plate3.bdf", text.replace("BEGIN BULK\n", "BEGIN BULK\nPARAM,WTMASS,0.00259\n"))
    assert not mm


def test_undetermined_says_how_to_declare(write_deck):
    r = check_paths([str(write_deck("pv40_thin.inp", NODES + "*MATERIAL,NAME=M1\n*ELASTIC\n210000,0.3\n"
                                     "*SOLID SECTION,ELSET=EALL,MATERIAL=M1\n*STEP\n*STATIC\n*END STEP\n"))], Config())
    und = [f for f in r.findings if f.rule == "units/undetermined"]
    assert len(und) == 1 and "--units" in und[0].message and "deckwarden.yaml" in und[0].message


def _slip_module():
    spec = importlib.util.spec_from_file_location("slip_decks", HERE / "slip_decks.py")
    mod = importlib.util.module_from_spec(spec)
    sys.modules["slip_decks"] = mod          # dataclasses look their module up
    spec.loader.exec_module(mod)
    return mod


def test_slip_decks_recall_and_right_fixes(tmp_path):
    # measured on this generator: 40 decks, recall 97.5 %, right fixes 95 % (python tests/units/slip_decks.py);
    # the floors leave room for tuning, not for losing a slip class
    mod = _slip_module()
    decks = mod.generate()
    assert len(decks) >= 30
    kinds = {d.slip for d in decks}
    assert {"kg/mm^3 in mm-t-s", "g/cm^3 in mm-t-s", "kg/m^3 in mm-t-s", "weight density without WTMASS",
            "psi moduli in m-kg-s"} <= kinds
    res = mod.evaluate(decks, tmp_path)
    recall, right = mod.figures(res)
    assert recall >= 0.9, [o.deck.name for o in res if not o.raised]
    assert right >= 0.85, [o.deck.name for o in res if not o.right_fix]
