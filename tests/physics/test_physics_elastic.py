"""Isotropic elastic conversions (linter/physics/elastic.py) and the derivation (linter/derived/elastic.py)."""
from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from builders import Deck
from linter.physics import elastic as el


def test_structural_steel_against_handbook():
    c = el.from_E_nu(210000.0, 0.3)
    # EN 1993-1-1 clause 3.2.6: E = 210000 N/mm2, nu = 0.3, G = E/(2(1+nu)) "approximately 81000 N/mm2":
    # the standard rounds, so compare within that rounding (80769 vs 81000).
    assert float(c["G"]) == pytest.approx(81000.0, rel=0.005)
    # exact values computed from the standard conversion table (Mavko, Mukerji & Dvorkin, The Rock Physics Handbook)
    assert float(c["G"]) == pytest.approx(80769.23, abs=0.01)
    assert float(c["K"]) == pytest.approx(175000.0, rel=1e-9)
    assert float(c["lambda"]) == pytest.approx(121153.85, abs=0.01)
    assert float(c["M"]) == pytest.approx(282692.31, abs=0.01)
    assert float(c["K_over_G"]) == pytest.approx(2.1667, abs=1e-4)


@pytest.mark.parametrize("E, nu, G, K, lam, M", [
    # computed from the standard conversion table (Mavko, Mukerji & Dvorkin, The Rock Physics Handbook)
    (200000.0, 0.3, 76923.08, 166666.67, 115384.62, 269230.77),
    (68900.0, 0.33, 25902.26, 67549.02, 50280.85, 102085.36),   # Al 6061-T6
    (12.0, 0.4995, 4.001334, 4000.0, 3997.332, 4005.335),
    (12.0, 0.49, 4.026846, 200.0, 197.3154, 205.3691),
    (1.0, -0.5, 1.0, 0.16667, -0.5, 1.5),
])
def test_check_values(E, nu, G, K, lam, M):
    c = el.from_E_nu(E, nu)
    for key, want in (("G", G), ("K", K), ("lambda", lam), ("M", M)):
        assert float(c[key]) == pytest.approx(want, rel=2e-5), key


def test_inverse_relations():
    # inverse checks computed from the same table (Mavko et al.): (K, G) = (175000, 80769.23) -> E = 210000, nu = 0.3
    c = el.from_K_G(175000.0, 80769.23)
    assert float(c["E"]) == pytest.approx(210000.0, rel=1e-6)
    assert float(c["nu"]) == pytest.approx(0.3, rel=1e-6)
    # (E, G) with G = E/(2(1+nu)) gives nu back; K from the standard table EG/(3(3G-E))
    e = el.from_E_G(210000.0, 210000.0 / 2.6)
    assert float(e["nu"]) == pytest.approx(0.3, rel=1e-12)
    assert float(e["K"]) == pytest.approx(175000.0, rel=1e-9)
    assert float(e["M"]) == pytest.approx(282692.31, abs=0.01)
    g = el.from_G_nu(80769.23076923077, 0.3)
    assert float(g["E"]) == pytest.approx(210000.0, rel=1e-12)


# K/G, lambda/G and c_d/c_0 against nu, computed from the standard relations (Mavko et al., Rock Physics Handbook)
KG_TABLE = [(-0.5, 0.167, -0.5, 1.225), (0.0, 0.667, 0.0, 1.0), (0.2, 1.333, 0.667, 1.054),
            (0.25, 1.667, 1.0, 1.095), (0.3, 2.167, 1.5, 1.160), (1 / 3, 2.667, 2.0, 1.225),
            (0.4, 4.667, 4.0, 1.464), (0.45, 9.667, 9.0, 1.948), (0.48, 24.67, 24.0, 2.964),
            (0.49, 49.67, 49.0, 4.137), (0.495, 99.67, 99.0, 5.812), (0.499, 499.7, 499.0, 12.93),
            (0.4995, 999.7, 999.0, 18.27), (0.4999, 5000.0, 4999.0, 40.83)]


@pytest.mark.parametrize("nu, kg, lg, cd_c0", KG_TABLE)
def test_k_over_g_table(nu, kg, lg, cd_c0):
    c = el.from_E_nu(1.0, nu)
    assert float(el.k_over_g(nu)) == pytest.approx(kg, rel=2e-3)
    assert float(c["K_over_G"]) == pytest.approx(kg, rel=2e-3)
    assert float(c["lambda"] / c["G"]) == pytest.approx(lg, rel=2e-3, abs=1e-9)
    w = el.wave_speeds(c["E"], c["G"], c["M"], 1.0)
    assert float(w["cd"] / w["c0"]) == pytest.approx(cd_c0, rel=2e-3)
    assert float(el.nu_from_k_over_g(el.k_over_g(nu))) == pytest.approx(nu, abs=1e-9)


def test_vectorised_and_singular():
    nu = np.array([0.3, 0.5, 0.6, -1.0])
    c = el.from_E_nu(np.full(4, 100.0), nu)
    assert c["K"].shape == (4,)
    assert math.isinf(c["K"][1]) and c["K"][2] < 0
    assert math.isinf(c["G"][3])
    assert el.admissible(100.0, nu).tolist() == [True, False, False, False]
    assert el.poisson_in_range(np.array([-1.0, -0.99, 0.0, 0.4999, 0.5])).tolist() == [False, True, True, True, False]
    assert not bool(el.admissible(-1.0, 0.3))
    # E = 3G is the incompressible limit of the (E, G) pair (singular input of the (E, G) row of the conversion table, Mavko et al.)
    assert math.isinf(float(el.from_E_G(3.0, 1.0)["K"]))


def test_wave_speeds_of_steel():
    # bar speed of steel sqrt(E/rho) = sqrt(210e9/7850) = 5172 m/s (common practice: ~5100-5200 m/s)
    c = el.from_E_nu(210e9, 0.3)
    w = el.wave_speeds(c["E"], c["G"], c["M"], 7850.0)
    assert float(w["c0"]) == pytest.approx(5172.2, abs=0.5)
    assert float(w["cs"]) == pytest.approx(math.sqrt(80769.23e6 / 7850.0), rel=1e-6)
    assert float(w["cd"]) == pytest.approx(math.sqrt(282692.31e6 / 7850.0), rel=1e-6)
    bad = el.wave_speeds(1.0, 1.0, 1.0, 0.0)
    assert all(math.isnan(float(v)) for v in bad.values())


@settings(max_examples=200, deadline=None)
@given(E=st.floats(1e-3, 1e12), nu=st.floats(-0.99, 0.499))
def test_round_trips(E, nu):
    c = el.from_E_nu(E, nu)
    back = el.from_K_G(c["K"], c["G"])
    assert float(back["E"]) == pytest.approx(E, rel=1e-9)
    assert float(back["nu"]) == pytest.approx(nu, rel=1e-7, abs=1e-9)
    eg = el.from_E_G(E, c["G"])
    assert float(eg["K"]) == pytest.approx(float(c["K"]), rel=1e-6)
    # M = lambda + 2G and K = lambda + 2G/3 (definitions; Mavko et al., Rock Physics Handbook)
    assert float(c["M"]) == pytest.approx(float(c["lambda"] + 2 * c["G"]), rel=1e-9, abs=1e-9 * E)
    assert float(c["K"]) == pytest.approx(float(c["lambda"] + 2 * c["G"] / 3), rel=1e-9, abs=1e-9 * E)


def test_interpolate_table():
    assert float(el.interpolate_table(50.0, [0.0, 100.0], [1.0, 3.0])) == pytest.approx(2.0)
    assert float(el.interpolate_table(500.0, [100.0, 0.0], [3.0, 1.0])) == pytest.approx(3.0)
    assert float(el.interpolate_table(7.0, [np.nan], [5.0])) == 5.0


# ------------------------------------------------------------------------------------------- derivation


def test_derivation_rows_and_density_matching():
    d = Deck()
    d.material("AL", elastic=[(70000.0, 0.33, 20.0), (60000.0, 0.34, 200.0)],
               density=[(2.7e-9, 20.0), (2.6e-9, 200.0)])
    d.material("ST", elastic=[(210000.0, 0.3)], density=[(7.85e-9,)])
    d.material("SEAL", elastic=[(12.0, 0.5)])
    d.run()
    al = d.model.materials["AL"].derived["elastic"]
    assert [r["T"] for r in al] == [20.0, 200.0]
    assert al[1]["rho"] == pytest.approx(2.6e-9)
    assert al[1]["c0"] == pytest.approx(math.sqrt(60000.0 / 2.6e-9))
    st_ = d.model.materials["ST"].derived["elastic"][0]
    assert st_["G"] == pytest.approx(80769.23, abs=0.01)
    assert st_["cs"] == pytest.approx(math.sqrt(st_["G"] / 7.85e-9))
    assert set(st_) >= {"T", "E", "nu", "G", "K", "lambda", "M", "K_over_G", "c0", "cd", "cs"}
    seal = d.model.materials["SEAL"].derived["elastic"][0]
    assert math.isnan(seal["K"]) and math.isnan(seal["K_over_G"]) and "c0" not in seal


def test_bulk_density_uses_wtmass(write_deck):
    # NASTRAN-95 User's Manual MAT1 remark 7 / MYSTRAN User Manual (mass units): RHO is a weight density when PARAM,WTMASS is not 1 (mass density = WTMASS * RHO);
    # the bulk parser applies the factor once, the derivation must not apply it again
    from linter.check import make_policy
    from linter.config import Config

    deck = write_deck("wt.bdf", "SOL 101\nCEND\nBEGIN BULK\nPARAM,WTMASS,0.002591\n"
                      "MAT1,1,1.0+7,,0.33,0.1\nENDDATA\n")
    from linter import parsers

    opts = parsers.ParseOptions(dialect="mystran", include=make_policy([str(deck)], Config()))
    model = parsers.get("bulk").parse(str(deck), opts)
    from linter.derived import derive_all

    derive_all(model, Config())
    r = model.materials["1"].derived["elastic"][0]
    assert r["rho"] == pytest.approx(2.591e-4)
