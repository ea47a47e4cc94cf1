"""analysis/* rules on neutral models built directly, in keyword and bulk vocabularies."""
import math

import numpy as np
import pytest

from builders import Deck
from decks import PLATE_QUAD_BULK
from linter.config import Config
from linter.model import Lazy, Load, Loc, MassSource

STEEL = dict(elastic=[(210000.0, 0.3)], density=[(7.85e-9,)])


def _deck(fmt="keyword", elset="PART", etype="C3D8", **props):
    d = Deck(fmt=fmt, dialect="calculix" if fmt == "keyword" else "mystran",
             path="deck.inp" if fmt == "keyword" else "deck.bdf")
    d.material("M1", **(props or STEEL))
    d.elements(etype, 4, elset=elset)
    d.section("solid", elset, "M1")
    return d


def _step(d, kind, loads=(), card=None):
    st = d.step(kind, loads=loads)
    if card:
        st.procedures[0].card = card
    return st


def _load(kind, value, target=None):
    return Load(kind=kind, value=value, loc=Loc("deck.inp", 90), target=target)


# ---------------------------------------------------------------- density

@pytest.mark.parametrize("fmt, kind, card", [
    ("keyword", "frequency", "*FREQUENCY"), ("keyword", "dynamic-explicit", "*DYNAMIC"),
    ("keyword", "dynamic-implicit", "*DYNAMIC"), ("keyword", "heat-transient", "*HEAT TRANSFER"),
    ("bulk", "frequency", "SOL 103"), ("bulk", "dynamic-implicit", "SOL 129"),
    ("bulk", "heat-transient", "SOL 159"),
])
def test_missing_density_is_an_error_when_the_step_needs_mass(fmt, kind, card):
    # CalculiX User's Manual, Materials and *DENSITY (*DENSITY for *FREQUENCY, *DYNAMIC, transient *HEAT TRANSFER);
    # MYSTRAN User Manual, Solutions and Mass (SOL 103)
    d = _deck(fmt, elastic=[(210000.0, 0.3)], conductivity=[(50.0,)], specific_heat=[(4.6e8,)])
    _step(d, kind, card=card)
    found = d.run("analysis/missing-density")
    assert len(found) == 1 and found[0].severity == "error"
    assert card in found[0].message and found[0].line == d.model.materials["M1"].loc.line
    with_rho = _deck(fmt)
    _step(with_rho, kind, card=card)
    assert with_rho.run("analysis/missing-density") == []


def test_static_steps_do_not_need_density_but_gravity_warns():
    d = _deck(elastic=[(210000.0, 0.3)])
    _step(d, "static")
    assert d.run("analysis/missing-density") == []
    g = _deck(elastic=[(210000.0, 0.3)])
    _step(g, "static", loads=[_load("gravity", 9810.0, target="PART")])
    found = g.run("analysis/missing-density")
    # ccx 2.20 run here: "no density was assigned to any material ... gravitational loads" is an *ERROR
    assert len(found) == 1 and found[0].severity == "error" and "CalculiX stops" in found[0].message
    # another material with a density: CalculiX only warns for this one
    g.material("OTHER", elastic=[(70000.0, 0.33)], density=[(2.7e-9,)])
    g.elements("C3D8", 2, elset="P2")
    g.section("solid", "P2", "OTHER")
    found = g.run("analysis/missing-density")
    assert len(found) == 1 and found[0].severity == "warning" and "gravity" in found[0].message
    bulk = _deck("bulk", elset="PID 1", elastic=[(210000.0, 0.3)])
    _step(bulk, "static", loads=[_load("gravity", 9810.0)], card="SOL 101")
    assert [f.severity for f in bulk.run("analysis/missing-density")] == ["warning"]
    # massless bars carrying point masses (CONM2) under RFORCE: the masses take the load, a note
    bulk.model.mass_sources.append(MassSource(kind="point-mass", loc=Loc("deck.bdf", 51), target=None))
    found = bulk.run("analysis/missing-density")
    assert [f.severity for f in found] == ["note"] and "point masses" in found[0].message
    # a centrifugal load on another set does not touch this material
    other = _deck(elastic=[(210000.0, 0.3)])
    other.elset("ELSEWHERE")
    _step(other, "static", loads=[_load("centrifugal", 100.0, target="ELSEWHERE")])
    assert other.run("analysis/missing-density") == []


def test_zero_density_counts_as_missing():
    # bulk MAT1 RHO blank defaults to 0 (NASTRAN-95 User's Manual MAT1)
    d = _deck("bulk", elset="PID 1", elastic=[(210000.0, 0.3)], density=[(0.0,)])
    _step(d, "frequency", card="SOL 103")
    assert len(d.run("analysis/missing-density")) == 1


def test_mass_sources():
    # keyword *MASS on the material's set covers it; bulk NSM on its PID covers it
    kw = _deck(elastic=[(210000.0, 0.3)])
    kw.model.mass_sources.append(MassSource(kind="point-mass", loc=Loc("deck.inp", 50), target="PART"))
    _step(kw, "frequency")
    assert kw.run("analysis/missing-density") == []
    bulk = _deck("bulk", elset="PID 1", elastic=[(210000.0, 0.3)])
    bulk.model.mass_sources.append(MassSource(kind="nonstructural-mass", loc=Loc("deck.bdf", 50), target="PID 1"))
    _step(bulk, "frequency", card="SOL 103")
    assert bulk.run("analysis/missing-density") == []
    # a CONM2 on a grid (no target) gives the model mass but not this material: warning, and it says so
    conm2 = _deck("bulk", elset="PID 1", elastic=[(210000.0, 0.3)])
    conm2.model.mass_sources.append(MassSource(kind="point-mass", loc=Loc("deck.bdf", 51), target=None))
    _step(conm2, "frequency", card="SOL 103")
    found = conm2.run("analysis/missing-density")
    assert len(found) == 1 and found[0].severity == "warning" and "point masses" in found[0].message
    assert found[0].data["other_mass_sources"] == 1
    # a mass source on another set (keyword *MASS elements) does not cover it either: warning, it says so
    elsewhere = _deck(elastic=[(210000.0, 0.3)])
    elsewhere.elset("OTHER")
    elsewhere.model.mass_sources.append(MassSource(kind="point-mass", loc=Loc("deck.inp", 50), target="OTHER"))
    _step(elsewhere, "frequency")
    assert [f.severity for f in elsewhere.run("analysis/missing-density")] == ["warning"]


def test_unused_material_is_not_reported():
    d = _deck()
    d.material("SPARE", elastic=[(1.0, 0.3)])
    _step(d, "frequency")
    assert d.run("analysis/missing-density") == []


# ---------------------------------------------------------------- thermal needs

def test_conductivity_and_specific_heat():
    d = _deck(**STEEL)
    _step(d, "heat-steady", card="*HEAT TRANSFER, STEADY STATE")
    assert [f.rule for f in d.run("analysis/missing-conductivity", "analysis/missing-specific-heat")] == [
        "analysis/missing-conductivity"]
    t = _deck(**STEEL)
    _step(t, "heat-transient", card="SOL 159")
    assert sorted(f.rule for f in t.run("analysis/missing-conductivity", "analysis/missing-specific-heat")) == [
        "analysis/missing-conductivity", "analysis/missing-specific-heat"]
    ok = _deck(conductivity=[(50.0,)], specific_heat=[(4.6e8,)], **STEEL)
    _step(ok, "heat-transient")
    assert ok.run("analysis/missing-conductivity", "analysis/missing-specific-heat") == []
    static = _deck(**STEEL)
    _step(static, "static")
    assert static.run("analysis/missing-conductivity", "analysis/missing-specific-heat") == []


def test_missing_expansion_when_the_temperature_changes():
    d = _deck(**STEEL)
    d.model.initial_temperatures.append(_load("temperature", 20.0, target="NALL"))
    _step(d, "static", loads=[_load("temperature", 120.0, target="NALL")])
    found = d.run("analysis/missing-expansion")
    assert len(found) == 1 and found[0].severity == "warning"
    assert "120" in found[0].message and "20" in found[0].message and "every material" in found[0].message
    same = _deck(**STEEL)
    same.model.initial_temperatures.append(_load("temperature", 20.0))
    _step(same, "static", loads=[_load("temperature", 20.0)])
    assert same.run("analysis/missing-expansion") == []
    with_alpha = _deck(expansion=[(1.2e-5,)], **STEEL)
    with_alpha.model.initial_temperatures.append(_load("temperature", 20.0))
    _step(with_alpha, "static", loads=[_load("temperature", 120.0)])
    assert with_alpha.run("analysis/missing-expansion") == []
    heat = _deck(**STEEL)
    _step(heat, "heat-steady", loads=[_load("temperature", 120.0)])
    assert heat.run("analysis/missing-expansion") == []
    # bulk MAT1 with A blank reads as 0 (NASTRAN-95 User's Manual MAT1): no expansion
    blank = _deck("bulk", elset="PID 1", expansion=[(0.0,)], **STEEL)
    blank.model.initial_temperatures.append(_load("temperature", 20.0))
    _step(blank, "static", loads=[_load("temperature", 120.0)], card="SOL 101")
    assert len(blank.run("analysis/missing-expansion")) == 1


def test_missing_elastic_and_its_restatement():
    d = _deck(density=[(7.85e-9,)])
    _step(d, "static")
    found = d.run("analysis/missing-elastic", config=Config(rules={"model/no-mechanical-behaviour": "off"}))
    assert len(found) == 1 and found[0].severity == "error"
    assert found[0].restates == (("no-mechanical", "M1"),)
    # with the model rule on, the same defect gives one finding, not two
    both = d.run("analysis/missing-elastic", "model/no-mechanical-behaviour")
    assert [f.rule for f in both] == ["model/no-mechanical-behaviour"]
    heat = _deck(density=[(7.85e-9,)], conductivity=[(50.0,)])
    _step(heat, "heat-steady")
    assert heat.run("analysis/missing-elastic") == []
    hyper = _deck(hyper=("neo-hooke", [(0.5, 0.001)]), density=[(1.1e-9,)])
    _step(hyper, "static")
    assert hyper.run("analysis/missing-elastic") == []


# ---------------------------------------------------------------- temperature tables

def test_temperature_outside_table_and_negative_extrapolation():
    # E falls from 200000 at 20 to 100000 at 500: linear extrapolation to 1100 gives -25000 (hand computed)
    d = _deck(fmt="bulk", elastic=[(200000.0, 0.3, 20.0), (100000.0, 0.3, 500.0)], density=[(7.85e-9,)])
    d.model.initial_temperatures.append(_load("temperature", 20.0))
    _step(d, "static", loads=[_load("temperature", 1100.0)])
    found = d.run("analysis/temperature-outside-table")
    assert len(found) == 1 and found[0].data["kind"] == "elastic"
    assert found[0].data["extrapolated_E"] == pytest.approx(-25000.0)
    assert "<= 0" in found[0].message and "1100" in found[0].message and "20..500" in found[0].message
    inside = _deck(elastic=[(200000.0, 0.3, 20.0), (100000.0, 0.3, 500.0)], density=[(7.85e-9,)])
    inside.model.initial_temperatures.append(_load("temperature", 20.0))
    _step(inside, "static", loads=[_load("temperature", 400.0)])
    assert inside.run("analysis/temperature-outside-table") == []
    # a single row holds for all temperatures (CalculiX User's Manual *ELASTIC example; ccx source elastics.f)
    single = _deck(**STEEL)
    single.model.initial_temperatures.append(_load("temperature", -50.0))
    assert single.run("analysis/temperature-outside-table") == []


def test_temperature_outside_conductivity_table_keyword():
    d = _deck(conductivity=[(50.0, 0.0), (40.0, 300.0)], **STEEL)
    d.model.initial_temperatures.append(_load("temperature", -40.0))
    found = d.run("analysis/temperature-outside-table")
    assert len(found) == 1 and found[0].data["kind"] == "conductivity"
    assert found[0].data["extrapolated_E"] is None and "initial temperature = -40" in found[0].message


def test_expansion_reference():
    kw = _deck(expansion=[(1.1e-5, 20.0), (1.3e-5, 400.0)], **STEEL)
    kw.model.initial_temperatures.append(_load("temperature", 20.0))
    found = kw.run("analysis/expansion-reference")
    assert len(found) == 1 and found[0].severity == "note" and "ZERO" in found[0].message
    kw.model.materials["M1"].find("expansion")[0].options["ZERO"] = 20.0
    assert kw.run("analysis/expansion-reference") == []
    const = _deck(expansion=[(1.2e-5,)], **STEEL)  # constant alpha: the reference cancels (CalculiX manual)
    const.model.initial_temperatures.append(_load("temperature", 20.0))
    assert const.run("analysis/expansion-reference") == []
    bulk = _deck("bulk", elset="PID 1", expansion=[(1.2e-5,)], **STEEL)
    bulk.model.initial_temperatures.append(_load("temperature", 20.0))
    assert len(bulk.run("analysis/expansion-reference")) == 1
    bulk.model.materials["M1"].find("expansion")[0].options["TREF"] = 20.0
    assert bulk.run("analysis/expansion-reference") == []
    cold = _deck("bulk", elset="PID 1", expansion=[(1.2e-5,)], **STEEL)
    cold.model.initial_temperatures.append(_load("temperature", 0.0))
    assert cold.run("analysis/expansion-reference") == []


# ---------------------------------------------------------------- explicit time step

def _hex_mesh(d, edge=10.0):
    """Four 10 mm cubes in a row along x (hand built; smallest edge 10)."""
    xs = np.arange(5) * edge
    nodes, ids = [], []
    for i, x in enumerate(xs):
        for j, (y, z) in enumerate(((0, 0), (edge, 0), (edge, edge), (0, edge))):
            ids.append(100 + 4 * i + j)
            nodes.append((x, y, z))
    coords, ids = np.array(nodes, float), np.array(ids)
    conn = np.array([[100 + 4 * i + j for j in (0, 1, 2, 3)] + [104 + 4 * i + j for j in (0, 1, 2, 3)]
                     for i in range(4)])
    conn = conn[:, [0, 4, 7, 3, 1, 5, 6, 2]]  # x-direction first: a proper hexahedron ordering
    d.model.element_blocks[0].conn = Lazy.of(conn)
    d.model.geometry.nodes = Lazy.of((ids, coords))
    d.model.geometry.bbox_min, d.model.geometry.bbox_max = coords.min(0), coords.max(0)


def test_explicit_time_step_check_values():
    # computed from dt = L_e/c_d (Belytschko, Liu & Moran 2000 ch. 6, from memory; mm-t-s, L_e = 10 mm): steel dt = 1.666e-6 s, seal (nu = 0.4995) 5.474e-6 s
    d = _deck()
    _hex_mesh(d)
    _step(d, "dynamic-explicit", card="*DYNAMIC, EXPLICIT")
    found = d.run("analysis/explicit-time-step")
    assert len(found) == 1 and found[0].severity == "note"
    assert found[0].data["length"] == pytest.approx(10.0) and not found[0].data["length_estimated"]
    assert found[0].data["dt"] == pytest.approx(1.666e-6, rel=1e-3)
    seal = _deck(elastic=[(12.0, 0.4995)], density=[(1.2e-9,)])
    _hex_mesh(seal)
    _step(seal, "dynamic-explicit")
    found = seal.run("analysis/explicit-time-step")
    assert found[0].data["dt"] == pytest.approx(5.474e-6, rel=1e-3)
    # c_d/c_s = sqrt((2-2nu)/(1-2nu)) = 31.6 at nu = 0.4995 (derived from the isotropic relations, Mavko et al.): above 10 -> warning
    assert found[0].severity == "warning" and found[0].data["ratio"] == pytest.approx(31.6, abs=0.1)
    soft = _deck(elastic=[(12.0, 0.3)], density=[(1.2e-9,)])
    _hex_mesh(soft)
    _step(soft, "dynamic-explicit")
    found = soft.run("analysis/explicit-time-step")
    assert found[0].severity == "note" and found[0].data["dt"] == pytest.approx(8.619e-5, rel=1e-3)


def test_explicit_time_step_estimated_without_connectivity():
    d = _deck()
    d.model.geometry.bbox_min, d.model.geometry.bbox_max = np.zeros(3), np.array([40.0, 10.0, 10.0])
    _step(d, "dynamic-explicit")
    found = d.run("analysis/explicit-time-step")
    # (4000 / 4)^(1/3) = 10 (hand computed)
    assert found[0].data["length_estimated"] and found[0].data["length"] == pytest.approx(10.0)
    assert "estimated" in found[0].message
    none = _deck()
    _step(none, "dynamic-explicit")
    found = none.run("analysis/explicit-time-step")
    assert found[0].data["dt"] is None and "not known" in found[0].message


def test_explicit_time_step_hyperelastic_and_other_steps():
    # neo-Hooke C10 = 0.5, D1 = 0.001: mu0 = 1, K0 = 2/D1 = 2000 (mu0, K0 from the *HYPERELASTIC energies of the CalculiX User's Manual); rho = 1.1e-9
    d = _deck(hyper=("neo-hooke", [(0.5, 0.001)]), density=[(1.1e-9,)])
    _hex_mesh(d)
    _step(d, "dynamic-explicit")
    found = d.run("analysis/explicit-time-step")
    assert found[0].data["source"].startswith("hyperelastic")
    assert found[0].data["cd"] == pytest.approx(math.sqrt((2000 + 4 / 3) / 1.1e-9), rel=1e-6)
    assert found[0].severity == "warning"
    implicit = _deck()
    _step(implicit, "dynamic-implicit")
    assert implicit.run("analysis/explicit-time-step") == []


def test_fluid_and_heat_elements_need_no_stiffness():
    # CalculiX User's Manual *SPECIFIC HEAT: *SPECIFIC HEAT is for solids; fluids take *FLUID CONSTANTS (CalculiX manual)
    fluid = _deck(etype="F3D8", density=[(1.0,)], conductivity=[(1.0,)])
    _step(fluid, "coupled-transient", card="*COUPLED TEMPERATURE-DISPLACEMENT")
    assert fluid.run("analysis/missing-elastic", "analysis/missing-specific-heat",
                     config=Config(rules={"model/no-mechanical-behaviour": "off"})) == []
    heat = _deck(etype="DC3D8", density=[(7.85e-9,)], conductivity=[(50.0,)])
    _step(heat, "coupled-transient")
    found = heat.run("analysis/missing-elastic", "analysis/missing-specific-heat")
    assert [f.rule for f in found] == ["analysis/missing-specific-heat"]


# ---------------------------------------------------------------- end to end (keyword parser)

E2E = """*NODE
1, 0, 0, 0
2, 10, 0, 0
3, 10, 10, 0
4, 0, 10, 0
5, 0, 0, 8
6, 10, 0, 8
7, 10, 10, 8
8, 0, 10, 8
*ELEMENT, TYPE=C3D8, ELSET=PART
1, 1, 2, 3, 4, 5, 6, 7, 8
*NSET, NSET=NALL
1, 2, 3, 4, 5, 6, 7, 8
*MATERIAL, NAME=STEEL
*ELASTIC
210000., 0.3, 20.
150000., 0.3, 400.
{extra}*SOLID SECTION, ELSET=PART, MATERIAL=STEEL
*INITIAL CONDITIONS, TYPE=TEMPERATURE
NALL, 20.
*STEP
*FREQUENCY
5
*END STEP
*STEP
*DYNAMIC, EXPLICIT
1e-7, 1e-5
*TEMPERATURE
NALL, 900.
*END STEP
"""


def _check(write_deck, text):
    from linter.check import check_paths

    path = write_deck("e2e.inp", text)
    return [f for f in check_paths([str(path)]).findings if f.rule.startswith("analysis/")]


def test_end_to_end_keyword_deck(write_deck):
    found = _check(write_deck, E2E.format(extra=""))
    by_rule = {f.rule: f for f in found}
    assert by_rule["analysis/missing-density"].line == 14          # the *MATERIAL line
    assert "*FREQUENCY" in by_rule["analysis/missing-density"].message
    assert by_rule["analysis/missing-expansion"].severity == "warning"
    tab = by_rule["analysis/temperature-outside-table"]
    assert tab.line == 15 and tab.data["temperature"] == 900.0
    # E from 210000 at 20 to 150000 at 400, extrapolated to 900: 150000 - 60000*500/380 (hand computed)
    assert tab.data["extrapolated_E"] == pytest.approx(150000 - 60000 * 500 / 380)
    assert "analysis/explicit-time-step" not in by_rule               # no density: no wave speed
    fixed = _check(write_deck, E2E.format(extra="*DENSITY\n7.85e-9\n*EXPANSION, ZERO=20.\n1.2e-5\n"))
    rules = sorted(f.rule for f in fixed)
    assert rules == ["analysis/explicit-time-step", "analysis/temperature-outside-table"]
    dt = [f for f in fixed if f.rule == "analysis/explicit-time-step"][0]
    # smallest edge 8 (hand built brick 10 x 10 x 8); c_d of steel 6.001e6 mm/s (computed from sqrt(M/rho), EN 1993-1-1 E and nu)
    assert dt.data["length"] == pytest.approx(8.0) and dt.data["dt"] == pytest.approx(8.0 / 6.001e6, rel=1e-3)


def test_corpus_sweep_has_no_rule_failures(corpus_dir):
    from linter.check import check_paths

    decks = sorted((corpus_dir / "keyword").glob("*.inp"))
    if not decks:
        pytest.skip("no keyword decks in the corpus")
    found = check_paths([str(p) for p in decks]).findings
    failed = [f for f in found if f.rule == "internal/rule-failed" and
              f.data.get("failed_rule", "").startswith(("analysis/", "plastic/"))]
    assert failed == []
    # the corpus decks are solver test decks that run: none lacks the elastic data a structural step needs
    assert [f for f in found if f.rule == "analysis/missing-elastic"] == []


BULK = """SOL 103
CEND
METHOD = 1
BEGIN BULK
EIGRL,1,,,4
""" + PLATE_QUAD_BULK + """PSHELL,1,7,2.0,7
MAT1,7,70000.,,0.33{rho}
ENDDATA
"""


def test_end_to_end_bulk_deck(write_deck):
    pytest.importorskip("linter.parsers.bulk")
    from linter.check import check_paths

    path = write_deck("bracket.bdf", BULK.format(rho=""))
    found = [f for f in check_paths([str(path)]).findings if f.rule == "analysis/missing-density"]
    assert len(found) == 1 and found[0].severity == "error" and found[0].line == 12   # the MAT1 line
    path = write_deck("bracket_rho.bdf", BULK.format(rho=",2.7e-9"))
    assert [f for f in check_paths([str(path)]).findings if f.rule == "analysis/missing-density"] == []


def test_fluid_only_material_needs_no_conductivity(write_deck):
    # common practice (CalculiX manual, *FLUID SECTION / *FLUID CONSTANTS): network fluid materials carry
    # their properties in *FLUID CONSTANTS, so a heat-transfer step does not need a conductivity for them
    from linter.check import check_paths

    deck = write_deck("net.inp", """*NODE
1, 0., 0., 0.
2, 1., 0., 0.
3, 2., 0., 0.
*ELEMENT, TYPE=D, ELSET=PIPE
1, 1, 2, 3
*MATERIAL, NAME=WATER
*FLUID CONSTANTS
4.18e9, 1.0e-9
*DENSITY
1.0e-9
*FLUID SECTION, ELSET=PIPE, MATERIAL=WATER, TYPE=PIPE MANNING
1.0, 0.1, 0.01
*MATERIAL, NAME=WALL
*DENSITY
7.8e-9
*STEP
*HEAT TRANSFER, STEADY STATE
*END STEP
""")
    rules = [f.rule for f in check_paths([str(deck)]).files[0].findings]
    assert "analysis/missing-conductivity" not in rules
