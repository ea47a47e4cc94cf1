"""Scale factors of every unit system and quantity, checked against pint (external unit library)."""
from __future__ import annotations

import math

import numpy as np
import pytest

pint = pytest.importorskip("pint")

from linter.physics import units as U  # noqa: E402
from linter.derived.units.infer import load_data  # noqa: E402

UREG = pint.UnitRegistry()

#: base units of each system written as pint expressions (mass of force-based systems as lbf s^2 / L);
#: temperature intervals as kelvin or degree Rankine (same interval as the degree Fahrenheit)
PINT_BASE = {
    "m-kg-s": ("meter", "kilogram", "second", "kelvin"),
    "mm-tonne-s": ("millimeter", "metric_ton", "second", "kelvin"),
    "mm-kg-ms": ("millimeter", "kilogram", "millisecond", "kelvin"),
    "mm-g-ms": ("millimeter", "gram", "millisecond", "kelvin"),
    "m-tonne-s": ("meter", "metric_ton", "second", "kelvin"),
    "in-lbf-s": ("inch", "(force_pound * second**2 / inch)", "second", "degR"),
    "ft-slug-s": ("foot", "slug", "second", "degR"),
    "cm-g-s": ("centimeter", "gram", "second", "kelvin"),
    "mm-kg-s": ("millimeter", "kilogram", "second", "kelvin"),
}
SI_BASE = ("meter", "kilogram", "second", "kelvin")


def _pint_factor(system: str, dims) -> float:
    expr = " * ".join(f"({u})**{e}" for u, e in zip(PINT_BASE[system], dims) if e) or "dimensionless"
    si = " * ".join(f"{u}**{e}" for u, e in zip(SI_BASE, dims) if e) or "dimensionless"
    return float((1.0 * UREG(expr)).to(si).magnitude)


def test_every_system_is_checked():
    assert {s.name for s in load_data().systems} == set(PINT_BASE)


@pytest.mark.parametrize("system", sorted(PINT_BASE))
@pytest.mark.parametrize("quantity", sorted(U.DIMENSIONS))
def test_scale_matches_pint(system, quantity):
    # reference: pint unit conversion of the system's base units raised to the dimension exponents
    s = next(x for x in load_data().systems if x.name == system)
    assert s.scale(quantity) == pytest.approx(_pint_factor(system, U.DIMENSIONS[quantity]), rel=1e-9)


# Named units of stress and density in each system, converted by pint (independent of the exponents).
NAMED = {
    "m-kg-s": ("pascal", "kg/m**3", "m/s**2"),
    "mm-tonne-s": ("megapascal", "metric_ton/mm**3", "mm/s**2"),
    "mm-kg-ms": ("gigapascal", "kg/mm**3", "mm/ms**2"),
    "mm-g-ms": ("megapascal", "g/mm**3", "mm/ms**2"),
    "m-tonne-s": ("kilopascal", "metric_ton/m**3", "m/s**2"),
    "in-lbf-s": ("psi", "force_pound*s**2/inch**4", "inch/s**2"),
    "ft-slug-s": ("force_pound/foot**2", "slug/foot**3", "foot/s**2"),
    "cm-g-s": ("dyne/cm**2", "g/cm**3", "cm/s**2"),
    "mm-kg-s": ("kilopascal", "kg/mm**3", "mm/s**2"),
}


@pytest.mark.parametrize("system", sorted(NAMED))
def test_named_units(system):
    s = next(x for x in load_data().systems if x.name == system)
    stress, density, acc = NAMED[system]
    # reference: pint's own definitions of MPa, psi, slug, dyne ...
    assert s.scale("stress") == pytest.approx(UREG(stress).to("pascal").magnitude, rel=1e-9)
    assert s.scale("density") == pytest.approx(UREG(density).to("kg/m**3").magnitude, rel=1e-9)
    assert s.scale("acceleration") == pytest.approx(UREG(acc).to("m/s**2").magnitude, rel=1e-9)


def test_steel_table_of_physics_sheet():
    # steel (E 210 GPa, rho 7850, g 9.80665, k 53.3, c_p 440) written in each system: EN 1993-1-1 3.2.6, EN 1991-1-1 Tab. A.4,
    # EN 1993-1-2 3.4; g standard gravity; the values per system computed by dimensional scaling
    # (values computed there from EN 1993-1-1 3.2.6 / EN 1993-1-2 3.4 data)
    rows = {"mm-tonne-s": (2.1e5, 7.85e-9, 9806.65, 53.3, 4.4e8),
            "mm-kg-ms": (210, 7.85e-6, 9.80665e-3, 5.33e-5, 440),
            "in-lbf-s": (3.0458e7, 7.3454e-4, 386.089, 6.6568, 3.7889e5),
            "ft-slug-s": (4.3859e9, 15.232, 32.174, 6.6568, 2631.2),
            "cm-g-s": (2.1e12, 7.85, 980.665, 5.33e6, 4.4e6)}
    si = (210e9, 7850, 9.80665, 53.3, 440)
    qs = ("stress", "density", "acceleration", "conductivity", "specific_heat")
    for name, expect in rows.items():
        s = next(x for x in load_data().systems if x.name == name)
        got = [v / s.scale(q) for v, q in zip(si, qs)]
        assert got == pytest.approx(expect, rel=2e-4), name


def test_mass_of_force_based_systems():
    # lbf s^2/in = 175.127 kg and slug = 14.594 kg: computed from the definitions of lbf and inch; pint agrees
    assert U.mass_from_force(4.4482216152605, 0.0254, 1.0) == pytest.approx(
        UREG("force_pound*s**2/inch").to("kg").magnitude, rel=1e-12)
    assert U.mass_from_force(4.4482216152605, 0.3048, 1.0) == pytest.approx(UREG("slug").to("kg").magnitude, rel=1e-9)


def test_convert_and_bands():
    data = load_data()
    si, mm = data.systems[data.index("si")], data.systems[data.index("mm-t-s")]
    assert float(U.convert(7850.0, "density", si, mm)) == pytest.approx(7.85e-9)  # 7850 kg/m^3 (EN 1991-1-1 Tab. A.4) scaled to t/mm^3
    assert float(U.decades_outside(1e3, 1e4, 1e5)) == pytest.approx(1.0)
    assert float(U.decades_outside(5e4, 1e4, 1e5)) == 0.0
    assert math.isnan(float(U.decades_outside(0.0, 1.0, 2.0)))
    # c0 of steel 5172 m/s, computed from sqrt(E/rho) with E, rho of EN 1993-1-1 / EN 1991-1-1
    assert float(U.bar_speed(210e9, 7850)) == pytest.approx(5172, rel=1e-3)
    # cd of steel 6001 m/s (computed from sqrt(M/rho), M from the isotropic relations, Mavko et al.)
    assert float(U.bar_speed(U.p_wave_modulus(210e9, 0.3), 7850)) == pytest.approx(6001, rel=1e-3)
    assert np.isnan(U.p_wave_modulus(1.0, 0.5))
    assert U.temperature_scale_of(-273.15) == "C" and U.temperature_scale_of(-459.67) == "F"
    assert U.temperature_scale_of(12.0) is None
