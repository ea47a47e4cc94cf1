"""units/* rules: the classic unit slips are caught with the right quantity named.

Reference values: steel E 210 GPa, rho 7850 kg/m^3, c_p 440 J/(kg K) (EN 1993-1-1 3.2.6,
EN 1991-1-1 Tab. A.4, EN 1993-1-2 3.4); steel written in mm-tonne-s
(2.1e5 MPa, 7.85e-9 t/mm^3, 4.4e8 mm^2/(s^2 K), g 9806.65 mm/s^2) computed from them by dimensional scaling.
"""
from __future__ import annotations

import importlib.util

import pytest

from linter import registry
from units_helpers import material, model, run
from decks import PLATE_QUAD_BULK

STEEL_MM = dict(E=210000.0, nu=0.3, rho=7.85e-9)


def by_rule(found, rule_id):
    return [f for f in found if f.rule == rule_id]


def test_rules_are_registered_with_fixed_ids():
    ids = {r.id for r in registry.all_rules()}
    assert {"units/mismatch", "units/implausible", "units/gravity", "units/undetermined"} <= ids
    assert registry.get("units/mismatch").severity == "error"
    assert registry.get("units/implausible").severity == "warning"
    assert registry.get("units/gravity").severity == "warning"
    assert registry.get("units/undetermined").severity == "note"


def test_density_in_si_with_moduli_in_mpa():
    # E in MPa with density left in kg/m^3 (c0 = sqrt(E/rho) then off by 10^-6, computed)
    found = run(model(material("STEEL", E=210000.0, rho=7850.0), steps=("frequency",)))
    mm = by_rule(found, "units/mismatch")
    assert len(mm) == 1 and mm[0].severity == "error"
    f = mm[0]
    assert f.material == "STEEL" and f.data["quantities"] == ["rho"]
    assert f.data["fits"] == "m-kg-s" and f.data["model"] == "mm-tonne-s"
    assert f.data["write"]["rho"] == pytest.approx(7.85e-9)    # EN 1991-1-1 Tab. A.4 value scaled to mm-t-s
    assert "density 7850 fits kg/m^3" in f.message and "MPa" in f.message and "7.85e-09" in f.message
    assert f.line == 12                                          # the density line
    assert not by_rule(found, "units/undetermined")


def test_one_material_pasted_in_pa_into_an_mpa_model():
    # Al 6061-T6 (68.9 GPa, 2700 kg/m^3; ASM) pasted in SI among mm-tonne-s steels
    mats = [material("S1", **STEEL_MM), material("S2", **STEEL_MM, line=20),
            material("AL", E=6.89e10, nu=0.33, rho=2700.0, line=30)]
    found = run(model(*mats, steps=("frequency",)))
    mm = by_rule(found, "units/mismatch")
    assert [f.material for f in mm] == ["AL"]
    assert mm[0].data["fits"] == "m-kg-s" and mm[0].data["model"] == "mm-tonne-s"
    assert mm[0].data["write"]["E"] == pytest.approx(68900.0)
    assert mm[0].data["write"]["rho"] == pytest.approx(2.7e-9)


def test_modulus_in_pa_with_density_in_tonne_per_mm3():
    mats = [material("S1", **STEEL_MM), material("S2", E=2.1e11, nu=0.3, rho=7.85e-9, line=20)]
    found = run(model(*mats, steps=("frequency",)))
    mm = by_rule(found, "units/mismatch")
    assert len(mm) == 1 and mm[0].material == "S2" and mm[0].data["quantities"] == ["E"]
    assert mm[0].data["write"]["E"] == pytest.approx(210000.0)


def test_yield_stress_in_pa_in_mpa_model():
    # S355: f_y 355 MPa (EN 1993-1-1 Table 3.1, from memory) written in Pa in an MPa deck
    found = run(model(material("S355", **STEEL_MM, yield_=355e6), steps=("static",)))
    mm = by_rule(found, "units/mismatch")
    assert len(mm) == 1 and mm[0].data["quantities"] == ["yield"]
    assert mm[0].data["write"]["yield"] == pytest.approx(355.0)


def test_gravity_981_in_mm_tonne_s_model():
    found = run(model(material("S", **STEEL_MM), steps=("static",), gravity=9.81))
    g = by_rule(found, "units/gravity")
    assert len(g) == 1 and g[0].severity == "warning" and g[0].line == 102
    assert g[0].data["expected"] == pytest.approx(9806.65)     # standard gravity 9.80665 m/s^2 in mm/s^2
    assert "m-kg-s" in g[0].data["fits"]
    assert "9806.65" in g[0].message


@pytest.mark.parametrize("g", [9806.65, 9810.0, 9.81e3])
def test_gravity_that_fits_is_quiet(g):
    found = run(model(material("S", **STEEL_MM), steps=("static",), gravity=g))
    assert not by_rule(found, "units/gravity")


def test_gravity_that_fits_no_system():
    found = run(model(material("S", **STEEL_MM), steps=("static",), gravity=1.0e6))   # 1000 m/s^2 = 102 g
    g = by_rule(found, "units/gravity")
    assert len(g) == 1 and g[0].data["fits"] == [] and "fits no unit system" in g[0].message


def test_stray_specific_heat_in_static_model_is_a_note():
    # c_p 440 J/(kg K) in an mm-tonne-s deck should be 4.4e8 (EN 1993-1-2 3.4 at 20 C, scaled to mm-t-s); a static analysis never reads it
    found = run(model(material("S", **STEEL_MM, c=440.0), steps=("static",)))
    mm = by_rule(found, "units/mismatch")
    assert len(mm) == 1 and mm[0].severity == "note" and mm[0].data["quantities"] == ["c"]
    assert mm[0].data["write"]["c"] == pytest.approx(4.4e8)


def test_same_specific_heat_in_transient_heat_model_is_an_error():
    found = run(model(material("S", **STEEL_MM, k=53.3, c=440.0), steps=("heat-transient",)))
    mm = by_rule(found, "units/mismatch")
    assert len(mm) == 1 and mm[0].severity == "error" and mm[0].data["quantities"] == ["c"]


def test_soft_rubber_is_not_a_unit_slip():
    # natural rubber C10 0.2, C01 0.05 MPa, rho 930 kg/m^3 (G = 0.5 MPa and rho 910-950 from the ASM natural-rubber data sheet) with steel, all in mm-tonne-s
    rub = material("NR", hyper=("mooney-rivlin", (0.2, 0.05, 0.001)), rho=9.3e-10, line=30)
    found = run(model(material("S", **STEEL_MM), rub, steps=("frequency",)))
    assert not by_rule(found, "units/mismatch") and not by_rule(found, "units/implausible")


def test_implausible_value_that_no_system_explains():
    # alpha 12 (1e-6 forgotten; steel 12e-6 /K, EN 1993-1-1 3.2.6): expansion has the same scale in every K system
    found = run(model(material("S", **STEEL_MM, alpha=12.0), steps=("coupled-steady",)))
    imp = by_rule(found, "units/implausible")
    assert len(imp) == 1 and imp[0].data["quantity"] == "alpha" and imp[0].severity == "warning"
    assert not by_rule(found, "units/mismatch")


def test_implausible_unused_quantity_is_a_note():
    found = run(model(material("S", **STEEL_MM, alpha=12.0), steps=("static",)))
    imp = by_rule(found, "units/implausible")
    assert len(imp) == 1 and imp[0].severity == "note"


def test_undetermined_when_evidence_is_thin():
    found = run(model(material("S", E=210000.0)))
    und = by_rule(found, "units/undetermined")
    assert len(und) == 1 and und[0].severity == "note"
    assert und[0].data["confidence"] < 0.2


def test_declared_system_silences_undetermined():
    found = run(model(material("S", E=210000.0)), units="mm-tonne-s")
    assert not found


def test_clean_model_has_no_unit_findings():
    mats = [material("S", **STEEL_MM, k=53.3, c=4.4e8, alpha=1.2e-5),
            material("AL", E=68900.0, nu=0.33, rho=2.7e-9, k=167.0, c=8.96e8, alpha=2.36e-5, line=30)]
    assert run(model(*mats, steps=("coupled-transient",), gravity=9806.65)) == []


# --------------------------------------------------------------------------- end to end (keyword parser)

KEYWORD = importlib.util.find_spec("linter.parsers.keyword") is not None

DECK = """*HEADING
demo bracket, mm-tonne-s
*NODE
1, 0., 0., 0.
2, 100., 0., 0.
3, 0., 100., 0.
4, 0., 0., 100.
*ELEMENT, TYPE=C3D4, ELSET=EALL
1, 1, 2, 3, 4
*MATERIAL, NAME=STEEL
*ELASTIC
210000., 0.3
*DENSITY
{rho}
*SOLID SECTION, ELSET=EALL, MATERIAL=STEEL
*STEP
*STATIC
*DLOAD
EALL, GRAV, {g}, 0., 0., -1.
*END STEP
*STEP
*FREQUENCY
5
*END STEP
"""


def _check(path, units=None):
    from linter.check import check_paths
    from linter.config import Config

    cfg = Config.from_mapping({"select": ["units"]})
    cfg.units = units     # set directly: a configuration file refuses an unknown system before any check
    res = check_paths([str(path)], cfg)
    assert len(res.files) == 1
    return res.files[0]


@pytest.mark.skipif(not KEYWORD, reason="keyword parser not available yet")
def test_keyword_deck_end_to_end(write_deck):
    rep = _check(write_deck("clean.inp", DECK.format(rho="7.85E-9", g="9810.")))
    assert [f.rule for f in rep.findings] == []
    assert rep.unit_system["name"] == "mm-tonne-s" and rep.unit_system["stress_scale_to_pa"] == 1e6
    mats = {m["name"]: m for m in rep.materials}
    assert mats["STEEL"]["derived"]["unit_system"]["name"] == "mm-tonne-s"


@pytest.mark.skipif(not KEYWORD, reason="keyword parser not available yet")
def test_keyword_deck_density_slip(write_deck):
    rep = _check(write_deck("slips.inp", DECK.format(rho="7850.", g="9810.")))
    assert [f.rule for f in rep.findings] == ["units/mismatch"]
    mm = rep.findings[0]
    assert mm.line == 14 and "7.85e-09" in mm.message and mm.path.endswith("slips.inp")
    assert rep.unit_system["name"] == "mm-tonne-s"


@pytest.mark.skipif(not KEYWORD, reason="keyword parser not available yet")
def test_keyword_deck_gravity_slip(write_deck):
    rep = _check(write_deck("grav.inp", DECK.format(rho="7.85E-9", g="9.81")))
    assert [f.rule for f in rep.findings] == ["units/gravity"]
    assert rep.findings[0].line == 19


@pytest.mark.skipif(not KEYWORD, reason="keyword parser not available yet")
def test_keyword_deck_moduli_outvoted_by_density_and_gravity(write_deck):
    # density and gravity both in SI, E in MPa: no single system explains the deck; the odd one out is E
    rep = _check(write_deck("mixed.inp", DECK.format(rho="7850.", g="9.81")))
    mm = [f for f in rep.findings if f.rule == "units/mismatch"]
    assert len(mm) == 1 and mm[0].data["quantities"] == ["E"] and mm[0].line == 12
    assert mm[0].data["write"]["E"] == pytest.approx(2.1e11)   # 210 GPa in Pa (SI definition)


@pytest.mark.skipif(not KEYWORD, reason="keyword parser not available yet")
def test_keyword_deck_declared_unknown(write_deck):
    rep = _check(write_deck("clean.inp", DECK.format(rho="7.85E-9", g="9810.")), units="parsec-stone-s")
    err = [f for f in rep.findings if f.rule == "units/undetermined"]
    assert err and err[0].severity == "error" and "known systems" in err[0].message


def test_hyperelastic_constants_in_pa_in_mpa_model():
    # natural rubber C10 0.2, C01 0.05 MPa, D1 = 2/K with K ~ 2 GPa (G ~ 0.5 MPa, ASM natural-rubber data sheet; K from memory), the whole
    # block written in Pa (D1 in 1/Pa), density in t/mm^3
    rub = material("NR", hyper=("mooney-rivlin", (0.2e6, 0.05e6, 1e-9)), rho=9.3e-10, line=30)
    found = run(model(material("S", **STEEL_MM), rub, steps=("frequency",)))
    mm = by_rule(found, "units/mismatch")
    assert len(mm) == 1 and mm[0].material == "NR" and "E" in mm[0].data["quantities"]
    assert mm[0].data["fits"] == "m-kg-s" and "3 mu0" in mm[0].message
    assert "by 1e-06 and the D constants by 1e+06" in mm[0].message   # Pa -> MPa (SI prefixes)
    assert mm[0].data["write"]["E"] == pytest.approx(1.5)    # 3 mu0 = 3 * 2 (C10 + C01) = 1.5 MPa


def test_weight_density_without_wtmass_is_named():
    # steel in in-lbf-s: E 3.0458e7 psi (computed: 210 GPa, EN 1993-1-1 3.2.6, in psi); RHO 0.2836 lbf/in^3 is the weight density
    # (7850 kg/m^3 * 9.80665 m/s^2 in lbf/in^3, pint-checked in test_units_scales via the psi/density scales);
    # without PARAM,WTMASS 1/386.09 (NASTRAN-95 User's Manual MAT1 remark 7) the solver takes it as mass density
    mats = [material("ST", E=3.0458e7, rho=0.2836), material("AL", E=1.0e7, nu=0.33, rho=2.591e-4, line=30)]
    found = run(model(*mats, steps=("frequency",)))
    mm = by_rule(found, "units/mismatch")
    assert len(mm) == 1 and mm[0].material == "ST" and mm[0].data["quantities"] == ["rho"]
    assert mm[0].data["fits"] == "weight density" and "WTMASS,0.00259" in mm[0].message
    assert mm[0].data["write"]["rho"] == pytest.approx(7.3454e-4, rel=1e-3)   # 7850 kg/m^3 in lbf s^2/in^4, computed


def test_moduli_far_off_in_every_class_are_implausible_not_silent():
    # E = 2.1e9 "MPa" (2.1e15 Pa) fits no class in any common system: a typing slip
    found = run(model(material("S", **STEEL_MM), material("X", E=2.1e9, rho=7.85e-9, line=30),
                      steps=("frequency",)))
    bad = [f for f in found if f.material == "X"]
    assert bad and all(f.rule in ("units/implausible", "units/mismatch") for f in bad)
    assert any(f.data.get("quantity") == "E" or "E" in f.data.get("quantities", ()) for f in bad)


# --------------------------------------------------------------------------- end to end (bulk parser)

BULK = importlib.util.find_spec("linter.parsers.bulk") is not None

PLATE = """SOL 103
CEND
TITLE = demo aluminium plate, in-lbf-s
METHOD = 1
BEGIN BULK
PARAM,WTMASS,0.00259
EIGRL,1,,,4
""" + PLATE_QUAD_BULK + """PSHELL,1,1,0.1,1
MAT1,1,{E},,0.33,0.1
ENDDATA
"""


@pytest.mark.skipif(not BULK, reason="bulk parser not available yet")
def test_bulk_deck_weight_density_with_wtmass(write_deck):
    # aluminium: E 1.0e7 psi, RHO 0.1 lbf/in^3 with WTMASS 0.00259 (NASTRAN-95 User's Manual MAT1 remark 7; E from memory)
    rep = _check(write_deck("plate.bdf", PLATE.format(E="1.0E7")))
    assert rep.unit_system["name"] == "in-lbf-s"
    assert [f.rule for f in rep.findings] == []


@pytest.mark.skipif(not BULK, reason="bulk parser not available yet")
def test_bulk_deck_modulus_in_pa_with_psi_density(write_deck):
    # E 6.89e10 (Al 6061-T6 in Pa, ASM) with RHO 0.1 x WTMASS 0.00259 (in-lbf-s mass
    # density): one material, so the moduli anchor the system and the density is named, with RHO and WTMASS
    rep = _check(write_deck("plate.bdf", PLATE.format(E="6.89E10")))
    mm = [f for f in rep.findings if f.rule == "units/mismatch"]
    assert len(mm) == 1 and mm[0].data["quantities"] == ["rho"] and mm[0].data["fits"] == "in-lbf-s"
    assert mm[0].line == 14 and "WTMASS" in mm[0].message
    # 0.1 x 0.00259 lbf s^2/in^4 = 2768 kg/m^3 (computed; WTMASS 0.002591 gives 2769)
    assert mm[0].data["write"]["rho"] == pytest.approx(2768, rel=1e-3)
