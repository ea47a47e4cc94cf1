"""Unit-system inference on neutral models built in the test (no parser needed).

Handbook values are written in every system with pint (external unit library)
and must infer that system.
"""
from __future__ import annotations

import pytest

from linter.derived.units.evidence import model_evidence
from linter.derived.units.infer import confidence_of, infer, load_data

from units_helpers import material, model, run

pint = pytest.importorskip("pint")
UREG = pint.UnitRegistry()

#: pint spelling of each system's unit of stress, density, conductivity, specific heat, expansion
PINT_UNITS = {
    "m-kg-s": ("Pa", "kg/m**3", "W/(m*K)", "J/(kg*K)", "1/K"),
    "mm-tonne-s": ("MPa", "t/mm**3", "N/(s*K)", "mm**2/(s**2*K)", "1/K"),
    "mm-kg-ms": ("GPa", "kg/mm**3", "kN/(ms*K)", "mm**2/(ms**2*K)", "1/K"),
    "mm-g-ms": ("MPa", "g/mm**3", "N/(ms*K)", "mm**2/(ms**2*K)", "1/K"),
    "m-tonne-s": ("kPa", "t/m**3", "kN/(s*K)", "m**2/(s**2*K)", "1/K"),
    "in-lbf-s": ("psi", "lbf*s**2/inch**4", "lbf/(s*degR)", "inch**2/(s**2*degR)", "1/degR"),
    "ft-slug-s": ("lbf/ft**2", "slug/ft**3", "lbf/(s*degR)", "ft**2/(s**2*degR)", "1/degR"),
    "cm-g-s": ("dyn/cm**2", "g/cm**3", "dyn/(s*K)", "cm**2/(s**2*K)", "1/K"),
    "mm-kg-s": ("kPa", "kg/mm**3", "mN/(s*K)", "mm**2/(s**2*K)", "1/K"),
}
SI = ("Pa", "kg/m**3", "W/(m*K)", "J/(kg*K)", "1/K")

# Handbook rows (E, nu, rho, k, c_p, alpha) in SI:
HANDBOOK = {
    # structural steel: EN 1993-1-1 3.2.6, EN 1991-1-1 Tab. A.4, EN 1993-1-2 3.4
    "steel": (210e9, 0.30, 7850, 53.3, 440, 12e-6),
    # Al 6061-T6: ASM / Aluminum Association typical values
    "aluminium": (68.9e9, 0.33, 2700, 167, 896, 23.6e-6),
    # concrete C30/37: EN 1992-1-1 Tab. 3.1 (E, nu, alpha, rho); k 1.6 and c_p 900 from memory
    "concrete": (33e9, 0.2, 2400, 1.6, 900, 10e-6),
    # PA66 dry: Ashby data sheet (alpha 90e-6 from memory)
    "pa66": (3.0e9, 0.4, 1130, 0.24, 1630, 90e-6),
}


def in_system(system, E, nu, rho, k, c, alpha):
    vals = []
    for v, si_u, u in zip((E, rho, k, c, alpha), SI, PINT_UNITS[system]):
        vals.append((v * UREG(si_u)).to(u).magnitude)
    E2, rho2, k2, c2, a2 = vals
    return dict(E=E2, nu=nu, rho=rho2, k=k2, c=c2, alpha=a2)


def rubber(system):
    # natural rubber (ASM data sheet for vulcanised natural rubber; K from memory): G ~ 0.5 MPa (C10 0.2, C01 0.05 MPa), K ~ 2 GPa
    # (from memory) -> D1 = 2/K = 1e-9 1/Pa, rho 930, k 0.14, c_p 2000, alpha 220e-6
    st = (1 * UREG("Pa")).to(PINT_UNITS[system][0]).magnitude
    conv = lambda v, i: (v * UREG(SI[i])).to(PINT_UNITS[system][i]).magnitude  # noqa: E731
    return material("NR", hyper=("mooney-rivlin", (0.2e6 * st, 0.05e6 * st, 1e-9 / st)), rho=conv(930, 1),
                    k=conv(0.14, 2), c=conv(2000, 3), alpha=conv(220e-6, 4), line=40)


SYSTEMS = sorted(PINT_UNITS)


@pytest.mark.parametrize("system", SYSTEMS)
@pytest.mark.parametrize("name", sorted(HANDBOOK))
def test_handbook_material_infers_its_system(system, name):
    m = model(material("M", **in_system(system, *HANDBOOK[name])), steps=("coupled-transient", "frequency"))
    found = run(m)
    us = m.derived["unit_system"]
    assert us["name"] == system
    assert us["confidence"] >= 0.3
    assert us["declared"] is False
    assert not [f for f in found if f.rule in ("units/mismatch", "units/implausible")], found
    assert m.materials["M"].derived["unit_system"]["name"] == system


@pytest.mark.parametrize("system", SYSTEMS)
def test_rubber_with_steel_infers_system_and_is_not_a_slip(system):
    steel = material("ST", **in_system(system, *HANDBOOK["steel"]))
    m = model(steel, rubber(system), steps=("coupled-transient",))
    found = run(m)
    assert m.derived["unit_system"]["name"] == system
    assert m.materials["NR"].derived["unit_system"]["name"] == system
    assert not [f for f in found if f.rule != "units/undetermined"], found


def test_model_scales_are_reported():
    m = model(material("M", **in_system("mm-tonne-s", *HANDBOOK["steel"])), steps=("frequency",))
    run(m)
    us = m.derived["unit_system"]
    assert us["stress_scale_to_pa"] == pytest.approx(1e6)  # 1 MPa = 1e6 Pa (SI definition)
    assert us["length_scale_to_m"] == pytest.approx(1e-3)
    assert us["density_scale_to_kg_m3"] == pytest.approx(1e12)  # 1 t/mm^3 = 1e12 kg/m^3


def test_mechanical_only_is_less_certain_than_full_data():
    full = model(material("M", **in_system("m-tonne-s", *HANDBOOK["steel"])), steps=("coupled-transient",))
    v = in_system("m-tonne-s", *HANDBOOK["steel"])
    bare = model(material("M", E=v["E"], nu=v["nu"], rho=v["rho"]), steps=("frequency",))
    run(full), run(bare)
    assert full.derived["unit_system"]["confidence"] > bare.derived["unit_system"]["confidence"]


def test_moduli_only_leaves_equivalent_systems():
    # MPa is the stress unit of mm-tonne-s and mm-g-ms: E alone cannot tell them apart
    m = model(material("S", E=210000.0))
    run(m)
    us = m.derived["unit_system"]
    assert us["name"] == "mm-tonne-s" and "mm-g-ms" in us["equivalent"]
    assert us["evidence"] == ["stress"]


def test_gravity_decides_between_systems_of_equal_stress_unit():
    # E in MPa and gravity 9806.65 mm/s^2 (standard gravity 9.80665 m/s^2 in mm-t-s): mm-tonne-s, not mm-g-ms (9.80665e-3 mm/ms^2)
    m = model(material("S", E=210000.0), gravity=9806.65)
    run(m)
    assert m.derived["unit_system"]["name"] == "mm-tonne-s"
    assert "mm-g-ms" not in m.derived["unit_system"]["equivalent"]


def test_absolute_zero_in_fahrenheit_prefers_imperial():
    v = in_system("in-lbf-s", *HANDBOOK["aluminium"])
    m = model(material("A", E=v["E"], nu=v["nu"], rho=v["rho"]), steps=("frequency",),
              params={"ABSOLUTE_ZERO": -459.67})
    run(m)
    assert m.derived["unit_system"]["name"] == "in-lbf-s"
    assert "temperature" in m.derived["unit_system"]["evidence"]


def test_bulk_weight_density_times_wtmass():
    # RHO 0.1 lbf/in^3 with WTMASS 0.002591 -> 2.591e-4 lbf s^2/in^4 = 2769 kg/m^3 (WTMASS: NASTRAN-95 User's Manual MAT1 remark 7; value computed; RHO/WTMASS pair as in the MYSTRAN benchmark decks)
    m = model(material("AL", E=1.0e7, nu=0.33, rho=0.1 * 0.002591, wtmass=0.002591), steps=("frequency",))
    found = run(m)
    assert m.derived["unit_system"]["name"] == "in-lbf-s"
    assert not [f for f in found if f.rule == "units/mismatch"]


def test_no_evidence():
    m = model(material("X", E=None, rho=None))
    found = run(m)
    assert m.derived["unit_system"]["name"] is None
    assert m.derived["unit_system"]["confidence"] == 0.0
    assert [f.rule for f in found] == ["units/undetermined"]


def test_declared_system_is_used():
    v = in_system("m-kg-s", *HANDBOOK["steel"])
    m = model(material("S", **v), steps=("frequency",))
    found = run(m, units="mm-t-s")     # alias of mm-tonne-s
    us = m.derived["unit_system"]
    assert us["name"] == "mm-tonne-s" and us["declared"] is True and us["inferred"] == "m-kg-s"
    assert any(f.rule == "units/mismatch" for f in found)


def test_unknown_declared_name_is_an_error_not_a_crash():
    m = model(material("S", **in_system("mm-tonne-s", *HANDBOOK["steel"])), steps=("frequency",))
    found = run(m, units="furlong-firkin-fortnight")
    err = [f for f in found if f.rule == "units/undetermined" and f.severity == "error"]
    assert err and "mm-tonne-s" in err[0].message and "furlong" in err[0].message
    assert m.derived["unit_system"]["name"] == "mm-tonne-s"      # inferred instead


def test_confidence_definition():
    assert confidence_of(0.0) == 0.0
    assert confidence_of(1.0) == pytest.approx(0.5)
    assert confidence_of(float("inf")) == 1.0


def test_identical_materials_scored_once_give_same_result():
    v = in_system("mm-tonne-s", *HANDBOOK["steel"])
    mats = [material(f"S{i}", **v, line=10 + 10 * i) for i in range(50)]
    inf = infer(model_evidence(model(*mats, steps=("frequency",))))
    assert load_data().systems[inf.best].name == "mm-tonne-s"
    assert len(inf.materials) == 50


def test_mesh_size_is_evidence():
    import numpy as np

    from linter.model import ElementBlock, Geometry, Loc

    def with_box(size):
        m = model(material("S", E=210000.0))
        m.geometry = Geometry(node_count=8, bbox_min=np.zeros(3), bbox_max=np.full(3, size))
        m.element_blocks.append(ElementBlock("C3D8", "C3D8", 1000, Loc("demo.inp", 5)))
        return m

    evd = model_evidence(with_box(100.0))
    assert evd.model_size == pytest.approx(100.0 * 3 ** 0.5)
    assert evd.element_size == pytest.approx(100.0 * 3 ** 0.5 / 10.0)
    # a 1.7e6-unit part: 1.7 km in mm but 1700 km in m (model_size band of units.yaml, from memory)
    inf_big = infer(model_evidence(with_box(1.0e6)))
    data = load_data()
    names = [s.name for s in data.systems]
    assert inf_big.scores[names.index("m-kg-s")] > inf_big.scores[names.index("mm-tonne-s")] + 0.5
    assert "length" in inf_big.dims


def test_summary_reports_temperatures_and_absolute_zero():
    m = model(material("S", E=210000.0, rho=7.85e-9), steps=("frequency",), params={"ABSOLUTE_ZERO": -273.15})
    m.materials["S"].blocks[0].rows[0].temperature = 20.0
    run(m)
    us = m.derived["unit_system"]
    assert us["absolute_zero"] == -273.15 and us["temperatures"] == [20.0, 20.0]
    assert us["temperature_scale"] == "K/C"
