"""elastic/* rules on neutral models built directly (tests/builders.py)."""
from __future__ import annotations

import pytest

from builders import Deck
from decks import CUBE_NODES


# ------------------------------------------------------------------------------------ poisson-out-of-range


@pytest.mark.parametrize("nu", [0.5, 0.55, -1.0, -1.5])
def test_poisson_out_of_range_is_error(nu):
    d = Deck()
    d.material("M", elastic=[(1000.0, nu, 20.0)])
    found = d.run("elastic/poisson-out-of-range")
    assert len(found) == 1 and found[0].severity == "error"
    assert found[0].data["rows"][0]["nu"] == nu
    assert "T = 20" in found[0].message and f"line {found[0].line}" in found[0].message


@pytest.mark.parametrize("nu", [0.3, 0.4999, -0.99, 0.0])
def test_poisson_in_range_is_not_reported(nu):
    d = Deck()
    d.material("M", elastic=[(1000.0, nu)])
    assert d.run("elastic/poisson-out-of-range") == []


def test_poisson_message_explains_incompressible_limit_and_ccx():
    # CalculiX refuses nu >= 0.5 on reading (ccx source elastics.f)
    d = Deck()
    d.material("SEAL", elastic=[(12.0, 0.5, 20.0), (11.0, 0.45, 80.0), (10.0, 0.5, 120.0)])
    found = d.run("elastic/poisson-out-of-range")
    assert len(found) == 1  # one finding listing both rows
    f = found[0]
    assert [r["T"] for r in f.data["rows"]] == [20.0, 120.0]
    assert "incompressible" in f.message and "CalculiX refuses" in f.message


def test_bulk_nu_half_depends_on_solid_use():
    # NASTRAN-95 MAT1 remark 8 and MYSTRAN *ERROR 1936: nu = 0.5 is fatal in solids only
    d = Deck(fmt="bulk", dialect="mystran", path="d.bdf")
    d.material("MID 1", elastic=[(1.0e7, 0.5)])
    d.material("MID 2", elastic=[(1.0e7, 0.5)])
    d.material("MID 3", elastic=[(1.0e7, 0.6)])
    d.elements("CHEXA8", 3, elset="PID 1")
    d.section("solid", "PID 1", "MID 1", card="PSOLID")
    d.elements("CQUAD4", 3, elset="PID 2")
    d.section("shell", "PID 2", "MID 2", role="membrane", card="PSHELL")
    d.elements("CQUAD4", 3, elset="PID 3")
    d.section("shell", "PID 3", "MID 3", role="membrane", card="PSHELL")
    sev = {f.material: f.severity for f in d.run("elastic/poisson-out-of-range")}
    assert sev == {"MID 1": "error", "MID 2": "warning", "MID 3": "error"}


# ------------------------------------------------------------------------------------ modulus-nonpositive


def test_nonpositive_E_is_error():
    d = Deck()
    d.material("M", elastic=[(0.0, 0.3, 20.0), (-5.0, 0.3, 40.0), (100.0, 0.3, 60.0)])
    found = d.run("elastic/modulus-nonpositive")
    assert len(found) == 1 and found[0].severity == "error"
    assert [r["T"] for r in found[0].data["rows"]] == [20.0, 40.0]
    assert "E = 0" in found[0].message and "E = -5" in found[0].message


def test_K_from_nu_over_half_restates_poisson_finding():
    d = Deck()
    d.material("M", elastic=[(100.0, 0.6)])
    found = d.run("elastic/modulus-nonpositive", "elastic/poisson-out-of-range")
    assert [f.rule for f in found] == ["elastic/poisson-out-of-range"]


def test_K_from_nu_is_reported_when_poisson_rule_is_off():
    from linter.config import Config

    cfg = Config.from_mapping({"rules": {"elastic/poisson-out-of-range": "off"}})
    d = Deck()
    d.material("M", elastic=[(100.0, 0.6)])
    found = d.run("elastic/modulus-nonpositive", config=cfg)
    assert len(found) == 1 and found[0].data["rows"][0]["which"] == ["K"]
    # K = E/(3(1-2nu)) = 100/(3*(-0.2)) = -166.67 (standard relation; Mavko et al., Rock Physics Handbook)
    assert found[0].data["rows"][0]["K"] == pytest.approx(-166.6667, rel=1e-5)


def test_positive_moduli_not_reported():
    d = Deck()
    d.material("M", elastic=[(210000.0, 0.3), (1.0, -0.5)])
    assert d.run("elastic/modulus-nonpositive") == []


# ------------------------------------------------------------------------------------ notes


def test_poisson_negative_note():
    d = Deck()
    d.material("FOAM", elastic=[(10.0, -0.2)])
    d.material("OK", elastic=[(10.0, 0.0)])
    found = d.run("elastic/poisson-negative")
    assert [(f.material, f.severity) for f in found] == [("FOAM", "note")]
    assert "auxetic" in found[0].message


def test_poisson_negative_not_for_out_of_range():
    d = Deck()
    d.material("M", elastic=[(10.0, -1.2)])
    assert d.run("elastic/poisson-negative") == []


def test_near_incompressible_note_with_ratio_and_lambda():
    d = Deck()
    d.material("RUBBER", elastic=[(12.0, 0.49)])
    d.material("PA6", elastic=[(3000.0, 0.39)])
    found = d.run("elastic/near-incompressible")
    assert [f.material for f in found] == ["RUBBER"]
    row = found[0].data["rows"][0]
    # E = 12, nu = 0.49: K/G = 49.667, lambda = 197.3154 (computed from the standard conversion table, Mavko et al.)
    assert row["K_over_G"] == pytest.approx(49.667, rel=1e-4)
    assert row["lambda"] == pytest.approx(197.3154, rel=1e-6)
    assert "K/G = 49.66" in found[0].message and "lambda = 197.3" in found[0].message


def test_near_incompressible_threshold_is_configurable():
    d = Deck()
    d.material("M", elastic=[(12.0, 0.46)])
    assert d.run("elastic/near-incompressible") == []
    assert len(d.run("elastic/near-incompressible", thresholds={"elastic": {"near_incompressible_nu": 0.45}})) == 1


def test_near_incompressible_threshold_boundary():
    d = Deck()
    d.material("AT", elastic=[(12.0, 0.48)])
    d.material("BELOW", elastic=[(12.0, 0.4799)])
    d.material("HALF", elastic=[(12.0, 0.5)])
    assert [f.material for f in d.run("elastic/near-incompressible")] == ["AT"]


# ------------------------------------------------------------------------------------ end to end (keyword parser)

HEX = """*NODE
""" + CUBE_NODES + """*ELEMENT, TYPE={etype}, ELSET=SEAL
1, 1, 2, 3, 4, 5, 6, 7, 8
*MATERIAL, NAME=NBR
*ELASTIC
{elastic}
*DENSITY
1.2E-9
*SOLID SECTION, ELSET=SEAL, MATERIAL=NBR
*STEP
*STATIC
*END STEP
"""


def _check(path):
    from linter.check import check_paths

    res = check_paths([str(path)])
    return res.files[0].findings


def test_end_to_end_nu_half(write_deck):
    # ccx 2.20 on this deck: "*ERROR reading *ELASTIC: Poisson coefficient should be less than 0.5"
    # (run here; the check is in the ccx source elastics.f)
    p = write_deck("seal.inp", HEX.format(etype="C3D8R", elastic="12., 0.5, 20.\n12., 0.45, 80."))
    found = [f for f in _check(p) if f.rule.startswith("elastic/")]
    assert [(f.rule, f.line) for f in found] == [("elastic/poisson-out-of-range", 14)]
    assert "nu = 0.5 at T = 20 on line 14" in found[0].message


def test_end_to_end_locking(write_deck):
    p = write_deck("seal.inp", HEX.format(etype="C3D8", elastic="12., 0.4995"))
    found = {f.rule: f for f in _check(p)}
    lock = found["element/volumetric-locking"]
    assert lock.severity == "error" and lock.data["types"] == {"C3D8": {"count": 1, "grade": "severe"}}
    assert found["elastic/near-incompressible"].line == 14
    p = write_deck("seal2.inp", HEX.format(etype="C3D8I", elastic="12., 0.4995"))
    assert "element/volumetric-locking" not in {f.rule for f in _check(p)}
