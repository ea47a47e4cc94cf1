"""elastic/* decisions at their boundaries: which of two overlapping findings survives, the end points of
the Poisson's ratio ranges, and the bulk-deck grading of NU = 0.5 by element kind."""
from __future__ import annotations

import pytest

from builders import Deck
from linter.check import check_paths
from linter.config import Config

HEAD = "SOL 101\nCEND\nBEGIN BULK\n"
MESH = ("GRID,1,,0.,0.,0.\nGRID,2,,1.,0.,0.\nGRID,3,,1.,1.,0.\nGRID,4,,0.,1.,0.\n"
        "GRID,5,,0.,0.,1.\nGRID,6,,1.,0.,1.\nGRID,7,,1.,1.,1.\nGRID,8,,0.,1.,1.\n")
SOLID = "PSOLID,1,1\nCHEXA,1,1,1,2,3,4,5,6,+\n+,7,8\n"
PLATE = "PSHELL,2,1,1.,1\nCQUAD4,2,2,1,2,3,4\n"


def _all(d: Deck, *rules):
    return [f for f in d.run() if f.rule in rules]


# ------------------------------------------------------------------- E <= 0 together with a bad nu

@pytest.mark.parametrize("E", [-1000.0, 0.0])
def test_nonpositive_E_with_bad_nu_keeps_its_own_modulus_finding(E):
    # E <= 0 is a defect of its own (CalculiX refuses E <= 0, ccx source elastics.f), not a consequence of
    # nu = 0.6: both findings are kept after the engine removes restatements
    d = Deck()
    d.material("M", elastic=[(E, 0.6)])
    found = _all(d, "elastic/poisson-out-of-range", "elastic/modulus-nonpositive")
    assert sorted(f.rule for f in found) == ["elastic/modulus-nonpositive", "elastic/poisson-out-of-range"]
    mod = [f for f in found if f.rule == "elastic/modulus-nonpositive"][0]
    assert "E" in mod.data["rows"][0]["which"] and "CalculiX refuses E <= 0" in mod.message


def test_moduli_that_follow_from_bad_nu_only_are_not_repeated():
    # E > 0, nu = 0.6 gives K < 0 only through nu (K = E/(3(1-2nu)), Mavko et al. 2003): one finding
    d = Deck()
    d.material("M", elastic=[(1000.0, 0.6)])
    found = _all(d, "elastic/poisson-out-of-range", "elastic/modulus-nonpositive")
    assert [f.rule for f in found] == ["elastic/poisson-out-of-range"]
    # ... while the rule selected on its own still reports K <= 0 (dropping restatements is the engine's job)
    alone = d.run(config=Config(select=["elastic/modulus-nonpositive"]))
    assert [f.rule for f in alone] == ["elastic/modulus-nonpositive"] and alone[0].data["rows"][0]["which"] == ["K"]
    assert "CalculiX refuses" not in alone[0].message


def test_zero_modulus_is_not_positive():
    d = Deck()
    d.material("M", elastic=[(0.0, 0.3), (1e-6, 0.3)])
    found = d.run("elastic/modulus-nonpositive")
    assert len(found) == 1 and [r["E"] for r in found[0].data["rows"]] == [0.0]


# ------------------------------------------------------------------- negative-Poisson note

@pytest.mark.parametrize("nu,noted", [(-1.0, False), (-0.999, True), (-1e-6, True), (0.0, False), (-1.5, False)])
def test_negative_poisson_note_only_inside_the_admissible_range(nu, noted):
    # -1 < nu < 0 is admissible but rare (auxetic); nu = -1 is out of range and only an error
    # (standard isotropic admissibility, Mavko, Mukerji & Dvorkin 2003)
    d = Deck()
    d.material("M", elastic=[(1000.0, nu)])
    assert bool(d.run("elastic/poisson-negative")) is noted
    out = d.run("elastic/poisson-out-of-range")
    assert bool(out) is (nu <= -1.0)
    if nu == -1.0:
        assert "G infinite" in out[0].message


def test_poisson_out_of_range_wording_by_side():
    d = Deck()
    d.material("M", elastic=[(1000.0, 0.6, 20.0), (1000.0, -1.5, 80.0)])
    msg = d.run("elastic/poisson-out-of-range")[0].message
    assert "K = " in msg and "< 0" in msg and "G = " in msg and "CalculiX refuses nu >= 0.5" in msg
    d = Deck()
    d.material("N", elastic=[(1000.0, -1.5)])
    assert "CalculiX refuses" not in d.run("elastic/poisson-out-of-range")[0].message


def test_near_incompressible_threshold_is_inclusive_and_stops_below_half():
    # K/G grows without bound as nu -> 0.5 (Mavko et al. 2003); the note starts at the threshold itself
    for nu, noted in ((0.45, True), (0.4499, False), (0.4999, True), (0.5, False)):
        d = Deck()
        d.material("M", elastic=[(1000.0, nu)])
        assert bool(d.run("elastic/near-incompressible", thresholds={"elastic": {"near_incompressible_nu": 0.45}})) \
            is noted, nu


# ------------------------------------------------------------------- bulk decks: NU = 0.5 by element kind

def _bulk(write_deck, body, name):
    p = write_deck(name, HEAD + MESH + body + "ENDDATA\n")
    res = check_paths([str(p)])
    return [f for fr in res.files for f in fr.findings if f.rule == "elastic/poisson-out-of-range"]


def test_bulk_nu_half_error_on_solids_warning_on_plates(write_deck):
    # NASTRAN-95 User's Manual MAT1 remark 8: solid elements must not have NU = 0.5; MYSTRAN
    # MATERIAL_PROPS_3D.f90 *ERROR 1936 for solids, while its plates accept NU = 0.5
    solid = _bulk(write_deck, SOLID + "MAT1,1,2.1+5,,.5\n", "solid.bdf")
    assert [f.severity for f in solid] == ["error"] and solid[0].data["solid_use"] is True
    assert "fatal in solid elements" in solid[0].message
    plate = _bulk(write_deck, PLATE + "MAT1,1,2.1+5,,.5\n", "plate.bdf")
    assert [f.severity for f in plate] == ["warning"] and plate[0].data["solid_use"] is False
    assert "accepted on plates and shells" in plate[0].message
    both = _bulk(write_deck, SOLID + PLATE + "MAT1,1,2.1+5,,.5\n", "both.bdf")
    assert [f.severity for f in both] == ["error"] and both[0].data["solid_use"] is True


def test_bulk_nu_above_half_is_an_error_on_plates_too(write_deck):
    # NU > 0.5 gives K < 0: refused for every element kind (NASTRAN-95 MAT1 remarks, MYSTRAN BD_MAT1.f90)
    plate = _bulk(write_deck, PLATE + "MAT1,1,2.1+5,,.6\n", "plate6.bdf")
    assert [f.severity for f in plate] == ["error"] and "solid_use" not in plate[0].data
    assert "refused for solids and plates" in plate[0].message


# ------------------------------------------------------------------- code_aster: NU = 0.5 by formulation

def _aster(etypes, nu=(0.5,)):
    d = Deck(fmt="aster", dialect="code_aster", path="s.comm")
    d.material("S", elastic=[(10.0, v) for v in nu])
    for i, et in enumerate(etypes):
        d.elements(et, 2, elset=f"G{i}")
        d.section("solid", f"G{i}", "S")
    return d.run("elastic/poisson-out-of-range")


@pytest.mark.parametrize("etypes,severity,said", [
    (["3D/HEXA8"], "error", "displacement formulations then have an infinite bulk modulus"),
    (["3D_INCO_UPG/HEXA20"], "note", "mixed (INCO) formulations"),
    (["3D/HEXA8", "3D_INCO_UPG/HEXA20"], "error", "displacement formulations"),
    (["COQUE_AXIS/SEG3"], "warning", "only structural elements"),
    ([], "warning", "only structural elements"),
])
def test_aster_nu_half_graded_by_formulation(etypes, severity, said):
    # code_aster DEFI_MATERIAU accepts NU = 0.5 (catalogue val_max=0.5, defi_materiau.py); the displacement
    # elements then have K infinite, mixed INCO formulations admit the limit
    found = _aster(etypes)
    assert [f.severity for f in found] == [severity] and said in found[0].message


def test_aster_nu_above_half_is_refused_on_every_formulation():
    for etypes in (["3D_INCO_UPG/HEXA20"], ["COQUE_AXIS/SEG3"]):
        found = _aster(etypes, nu=(0.5, 0.6))
        assert [f.severity for f in found] == ["error"] and "refuses NU > 0.5" in found[0].message


@pytest.mark.parametrize("bad", [float("inf"), float("-inf"), float("nan")])
def test_non_finite_modulus_is_left_to_the_parser_findings(bad):
    # a non-finite E cannot be graded (it is reported where it is read); no range finding is made of it
    d = Deck()
    d.material("M", elastic=[(bad, 0.3), (1000.0, float("nan"))])
    found = d.run()
    assert not [f for f in found if f.rule.startswith("internal/")], found
    assert not [f for f in found if f.rule in ("elastic/poisson-out-of-range", "elastic/modulus-nonpositive",
                                               "elastic/poisson-negative")]


def test_aster_element_unknown_to_the_catalogue_counts_as_other():
    assert [f.severity for f in _aster(["3D/NOSUCH8"])] == ["warning"]


def test_bulk_nonpositive_E_does_not_quote_calculix():
    d = Deck(fmt="bulk", dialect="mystran", path="d.bdf")
    d.material("M", elastic=[(-5.0, 0.3)])
    found = d.run("elastic/modulus-nonpositive")
    assert len(found) == 1 and "CalculiX" not in found[0].message


@pytest.mark.parametrize("rule_id,rows", [
    ("elastic/poisson-out-of-range", [(1000.0, 0.3), (1000.0, 0.6), (1000.0, 0.7)]),
    ("elastic/modulus-nonpositive", [(1000.0, 0.3), (-1.0, 0.3), (-2.0, 0.3)]),
    ("elastic/poisson-negative", [(1000.0, 0.3), (1000.0, -0.1), (1000.0, -0.2)]),
    ("elastic/near-incompressible", [(1000.0, 0.3), (1000.0, 0.495), (1000.0, 0.496)]),
])
def test_finding_points_at_the_first_row_concerned(rule_id, rows):
    d = Deck()
    mat = d.material("M", elastic=[r + (20.0 * (i + 1),) for i, r in enumerate(rows)])
    found = d.run(rule_id)
    assert len(found) == 1 and len(found[0].data["rows"]) == 2
    assert found[0].line == mat.blocks[0].rows[1].loc.line == found[0].data["rows"][0]["line"]
