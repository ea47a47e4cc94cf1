"""Hardening-table physics: conversions, tangent/plastic modulus, groups, checks, material class."""
import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from linter.derived.units.infer import load_data
from linter.physics import plastic as P

# 6061-T6 aluminium, engineering stress (MPa) against engineering strain: the representative points of
# Dowling, Mechanical Behavior of Materials, Problem 4.6 / Table P4.6 (as reproduced on a public Q&A page;
# not checked against the book). E = 50 MPa / 0.00069 = 72464 MPa from its first two points.
AL_STRESS = np.array([0, 50, 100, 151, 199, 242, 268, 290, 298, 302, 305.0])
AL_STRAIN = np.array([0, 0.069, 0.138, 0.210, 0.280, 0.343, 0.384, 0.438, 0.493, 0.651, 0.992]) / 100
AL_E = 50 / 0.00069


def test_check_values_of_the_conversion():
    # values computed from sigma_t = sigma(1+eps), eps_t = ln(1+eps) (standard conversion, common practice): E = 200000, eps_eng = 0.10, sigma_eng = 400
    st, et = P.eng_to_true(400.0, 0.10)
    assert st == pytest.approx(440.0)
    assert et == pytest.approx(0.0953102, abs=1e-7)
    _, ep = P.eng_to_plastic_table(400.0, 0.10, 200000.0)
    assert ep == pytest.approx(0.0931102, abs=1e-7)


def test_tangent_and_plastic_modulus_check_values():
    # computed from E_t = E H/(E + H) (standard, common practice): E = 200000, H = 2000 -> E_t = 1980.20; H = 20000 -> E_t = 18181.8
    et = P.tangent_from_plastic(200000.0, np.array([2000.0, 20000.0]))
    assert et == pytest.approx([1980.20, 18181.8], abs=0.05)  # quoted to 0.1
    assert P.plastic_from_tangent(200000.0, et) == pytest.approx([2000.0, 20000.0])
    assert np.isinf(P.plastic_from_tangent(200000.0, 200000.0))


def test_published_aluminium_curve_to_hardening_table():
    # Points past the proportional limit (242 MPa) of the Dowling 6061-T6 curve, converted with the
    # standard conversion (common practice) (sigma_t = sigma(1+eps), eps_p = ln(1+eps) - sigma_t/E).
    s, e = AL_STRESS[5:], AL_STRAIN[5:]
    st, ep = P.eng_to_plastic_table(s, e, AL_E)
    assert st[0] == pytest.approx(242 * 1.00343)
    assert st[-1] == pytest.approx(305 * 1.00992)
    # hand computation for the last point: ln(1.00992) - 308.0256/72464 = 0.0098711 - 0.0042507
    assert ep[-1] == pytest.approx(0.0056204, abs=2e-7)
    assert (np.diff(ep) > 0).all() and (np.diff(st) > 0).all()
    assert ep[0] == pytest.approx(0.0, abs=1e-4)  # the first point is (almost) the yield point


def test_elastic_strain_match_finds_a_total_strain_column():
    # the elastic points of the Dowling curve are total strains: eps = sigma/E within 2 %
    m = P.elastic_strain_match(AL_STRESS[1:5], AL_STRAIN[1:5], AL_E, 0.1)
    assert m.all()
    st, ep = P.eng_to_plastic_table(AL_STRESS[6:], AL_STRAIN[6:], AL_E)
    assert not P.elastic_strain_match(st[1:], ep[1:], AL_E, 0.1).any()


def test_groups_slopes_and_order_checks():
    t = np.array([20, 20, 20, 100, 100, np.nan, np.nan])
    groups = P.temperature_groups(t)
    assert [g.tolist() for g in groups] == [[0, 1, 2], [3, 4], [5, 6]]
    assert P.temperature_groups([]) == []
    assert P.not_increasing([0, 0.1, 0.1, 0.05, 0.2]).tolist() == [2, 3]
    assert P.softening([300, 320, 310, 330]).tolist() == [2]
    assert P.hardening_slopes([300, 320], [0, 0.01]) == pytest.approx([2000.0])


def _class(E, rho=None):
    # the unit systems and class bands of linter/data/units.yaml, as the plastic rules use them
    data = load_data()
    bands = {c: {q: data.band(c, q) for q in ("E", "rho")} for c in ("metal", "polymer")}
    return P.material_class(E, rho, data.scales("stress"), data.scales("density"), bands)


def test_material_class_from_modulus_and_density():
    # handbook values: steel E = 210 GPa, rho = 7850 kg/m^3 (EN 1993-1-1, 3.2.6), Al 6061-T6 E = 68.9 GPa,
    # rho = 2700 kg/m^3 (ASM Handbook), PA66 E = 3 GPa, rho = 1130 kg/m^3 (a typical data sheet, from memory)
    assert _class(210000.0, 7.85e-9) == "metal"      # steel, mm-t-s
    assert _class(2.1e11, 7850.0) == "metal"         # steel, SI
    assert _class(68900.0, 2.7e-9) == "metal"        # Al 6061-T6, mm-t-s
    assert _class(3000.0, 1.13e-9) == "polymer"      # PA66, mm-t-s
    assert _class(210000.0) == "unknown"             # E alone fits several systems
    assert _class(-1.0, 7850.0) == "unknown"
    # lead, E = 16 GPa, rho = 11340 kg/m^3 (from memory): a metal in the one band of units.yaml (from 10 GPa)
    assert _class(1.6e10, 11340.0) == "metal"


@settings(max_examples=60, deadline=None)
@given(E=st.floats(1.0, 1e12), frac=st.floats(1e-6, 0.999))
def test_tangent_plastic_round_trip(E, frac):
    # E_t = E H/(E + H) and H = E E_t/(E - E_t) are inverse (standard, common practice)
    Et = frac * E
    H = P.plastic_from_tangent(E, Et)
    assert H > 0
    assert P.tangent_from_plastic(E, H) == pytest.approx(Et, rel=1e-6)


@settings(max_examples=60, deadline=None)
@given(s=st.floats(1.0, 1e4), e=st.floats(0.0, 0.5), E=st.floats(1e3, 1e6))
def test_true_values_exceed_engineering_in_tension(s, e, E):
    # in tension sigma_t >= sigma_e and eps_t <= eps_e (follows from the standard conversion; common practice)
    st_, et = P.eng_to_true(s, e)
    assert st_ >= s and et <= e + 1e-15
    assert P.plastic_from_total(et, st_, E) == pytest.approx(et - st_ / E)
