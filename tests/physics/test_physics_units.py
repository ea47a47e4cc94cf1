"""The pure helpers of ``linter.physics.units`` at their edges: a force-based mass unit whose time unit is not
the second, the distance of a value outside a band, wave-speed moduli at the admissibility limits, the
temperature scales."""
from __future__ import annotations

import math

import numpy as np
import pytest

from linter.physics import units as U

pint = pytest.importorskip("pint")
UREG = pint.UnitRegistry()


def test_mass_unit_of_force_based_systems_with_other_time_units():
    # N ms^2/mm = 1e-3 kg (a gram) and kN ms^2/mm = 1 kg: reference pint
    assert U.mass_from_force(1.0, 1e-3, 1e-3) == pytest.approx(UREG("N*ms**2/mm").to("kg").magnitude, rel=1e-12)
    assert U.mass_from_force(1e3, 1e-3, 1e-3) == pytest.approx(UREG("kN*ms**2/mm").to("kg").magnitude, rel=1e-12)
    # lbf s^2/ft (the slug) with the minute as time unit: 3600 slug, reference pint
    assert U.mass_from_force(4.4482216152605, 0.3048, 60.0) == pytest.approx(
        UREG("lbf*minute**2/ft").to("kg").magnitude, rel=1e-9)


def test_unit_system_defaults_to_kelvin_and_no_preference():
    # a system given only length, mass and time measures temperature intervals in kelvin
    s = U.UnitSystem("mm-t-ms", length=1e-3, mass=1e3, time=1e-3)
    # conductivity t mm / (ms^3 K) in W/(m K), reference pint
    assert s.scale("conductivity") == pytest.approx(UREG("t*mm/ms**3/K").to("W/(m*K)").magnitude, rel=1e-12)
    assert s.temperature_scale == "K/C" and s.prior == 0.0
    assert s.label("stress") == "mm-t-ms units"
    assert U.UnitSystem("x", 1, 1, 1, labels=(("stress", "MPa"),)).label("stress") == "MPa"


def test_scale_vector_and_convert_both_ways():
    si = U.UnitSystem("si", 1.0, 1.0, 1.0)
    mm = U.UnitSystem("mm-t-s", 1e-3, 1e3, 1.0)
    np.testing.assert_allclose(U.scale_vector("stress", [si, mm]), [1.0, 1e6])
    # 210 GPa (EN 1993-1-1 3.2.6) is 210000 MPa, and back
    assert float(U.convert(210e9, "stress", si, mm)) == pytest.approx(2.1e5)
    assert float(U.convert(2.1e5, "stress", mm, si)) == pytest.approx(210e9)


def test_decades_outside_a_band():
    # 1e7 against [1e4, 1e5]: two decades above; 1e2: two below; negative values count by magnitude
    np.testing.assert_allclose(U.decades_outside([1e7, 1e2, -1e7, 3e4], 1e4, 1e5), [2.0, 2.0, 2.0, 0.0])
    got = U.decades_outside([0.0, np.inf, np.nan], 1.0, 2.0)
    assert np.isnan(got).all()


def test_linear_outside_a_band_of_ratios():
    # Poisson's ratio against [-1, 0.5] in steps of 0.1: 0.6 is one step above, -1.2 two steps below
    np.testing.assert_allclose(U.linear_outside([0.6, -1.2, 0.3, -1.0, 0.5], -1.0, 0.5, 0.1), [1, 2, 0, 0, 0],
                               atol=1e-12)
    assert float(U.linear_outside(3.0, 0.0, 1.0, 0.5)) == pytest.approx(4.0)


def test_bar_speed_is_nan_without_positive_modulus_and_density():
    # c0 = sqrt(E/rho); steel 210 GPa, 7850 kg/m^3 (EN 1993-1-1 3.2.6, EN 1991-1-1 Tab. A.4): 5172 m/s
    got = U.bar_speed([210e9, 0.0, -1.0, 210e9, 210e9], [7850, 7850, 7850, 0.0, -1.0])
    assert got[0] == pytest.approx(5172, rel=1e-3)
    assert np.isnan(got[1:]).all()
    # the same steel in mm-t-s (E 210000 MPa, rho 7.85e-9 t/mm^3): 5.172e6 mm/s, a density below 1 is fine
    assert float(U.bar_speed(210000.0, 7.85e-9)) == pytest.approx(5.172e6, rel=1e-3)


def test_p_wave_modulus_across_the_admissible_range():
    # M = E (1 - nu) / ((1 + nu)(1 - 2 nu)) (standard isotropic moduli conversion): nu = 0 gives M = E,
    # nu = -0.5 gives 1.5 E / (0.5 * 2) = 1.5 E, nu = 0.25 gives 0.75 E / (1.25 * 0.5) = 1.2 E
    got = U.p_wave_modulus(100.0, [0.0, -0.5, 0.25, 0.4999, 0.5, -1.0, 0.7, -1.5])
    assert got[:3].tolist() == pytest.approx([100.0, 150.0, 120.0])
    assert got[3] > 1e5                   # nearly incompressible: M grows without bound
    assert np.isnan(got[4:]).all()        # nu >= 0.5 or nu <= -1: no finite modulus


def test_thermal_diffusivity():
    # a = k / (rho c); steel 53.3 W/(m K), 7850 kg/m^3, 440 J/(kg K) (EN 1993-1-2 3.4, EN 1991-1-1 Tab. A.4):
    # 53.3 / (7850 * 440) = 1.543e-5 m^2/s (computed)
    assert float(U.diffusivity(53.3, 7850, 440)) == pytest.approx(1.5432e-5, rel=1e-4)


def test_absolute_zero_of_each_temperature_scale():
    # 0 K = -273.15 C and 0 R = -459.67 F (definitions of the Celsius and Fahrenheit scales, NIST SP 811 B.8)
    assert U.absolute_zero_of("K/C") == (0.0, -273.15)
    assert U.absolute_zero_of("F") == (0.0, -459.67)


def test_temperature_scale_of_an_absolute_zero_within_half_a_degree():
    assert U.temperature_scale_of(-273.0) == "C"          # rounded in the deck
    assert U.temperature_scale_of(-460.0) == "F"
    assert U.temperature_scale_of(0.0) == "K or R"
    # half a degree is the limit, inclusive (0.5 and 0.25 are exact in binary)
    assert U.temperature_scale_of(0.5) == "K or R" and U.temperature_scale_of(-0.25) == "K or R"
    assert U.temperature_scale_of(0.75) is None and U.temperature_scale_of(-272.4) is None
    assert U.temperature_scale_of(-274.0) is None
    for bad in (None, math.nan, math.inf):
        assert U.temperature_scale_of(bad) is None


#: each quantity's SI unit as pint spells it (named units, independent of the exponent table)
SI_UNIT = {
    "length": "m", "mass": "kg", "time": "s", "temperature": "K", "force": "N", "stress": "Pa",
    "compliance": "1/Pa", "density": "kg/m**3", "acceleration": "m/s**2", "speed": "m/s",
    "conductivity": "W/(m*K)", "specific_heat": "J/(kg*K)", "expansion": "1/K", "diffusivity": "m**2/s",
    "volumetric_heat_capacity": "J/(m**3*K)", "film_coefficient": "W/(m**2*K)", "energy": "J",
    "specific_stiffness": "Pa/(kg/m**3)",
}


@pytest.mark.parametrize("quantity", sorted(SI_UNIT))
def test_dimension_exponents_match_the_named_si_unit(quantity):
    # reference: pint's dimensionality of the named SI unit (W, J, Pa, N ... resolved by pint)
    dim = UREG(SI_UNIT[quantity]).dimensionality
    want = tuple(int(dim.get(k, 0)) for k in ("[length]", "[mass]", "[time]", "[temperature]"))
    assert U.DIMENSIONS[quantity] == want
    assert set(U.DIMENSIONS) == set(SI_UNIT)
