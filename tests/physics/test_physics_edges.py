"""Edge cases of the physics functions that single-point code changes would otherwise slip past:
the analytic stability shortcuts, the working-range overlap, wave speeds at singular moduli, and the
bounds of the admissible Poisson's ratio."""
import math

import numpy as np
import pytest

from linter.physics import elastic as el
from linter.physics import hyper_models as HM
from linter.physics import hyper_stability as HS

WORKING = (0.5, 2.0)     # the default hyper.working_range of thresholds.yaml
SCAN = (0.1, 4.0)        # the default hyper.stretch_range


def _scanned_unstable(model, mode, rng=SCAN, points=400):
    """Unstable intervals found by the grid scan alone (the shortcut bypassed)."""
    lam = np.geomspace(rng[0], rng[1], points)
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        return lam[~HS.stable_mask(model, mode, lam)]


# --------------------------------------------------------------------------- stability shortcuts

def test_mooney_rivlin_shortcut_needs_c10_not_negative():
    # Mooney-Rivlin is stable for every deformation when C10 >= 0 and C01 >= 0 with C10 + C01 > 0
    # (Drucker/Hill sufficient condition, arXiv:2511.13792, as cited by the shortcut itself).
    # C10 = -0.1, C01 = 0.6 has mu0 = 2(C10 + C01) = 1 > 0 but C10 < 0: the shortcut must not apply ...
    mr = HM.Polynomial(((1, 0, -0.1), (0, 1, 0.6)))
    assert mr.mu0 == pytest.approx(1.0)
    assert HS.sufficient_stable(mr) is False
    # ... because the scan (independent of the shortcut) finds equibiaxial loss inside the working range
    et = _scanned_unstable(mr, "ET")
    assert et.size and ((et > WORKING[0]) & (et < WORKING[1])).any()
    res = HS.scan_mode(mr, "ET", SCAN, 400)
    assert res["by"] == "scan" and res["all_stable"] is False
    assert HS.loss_in(res["unstable"], WORKING) != []
    # the same constants with C10 >= 0 are covered by the shortcut (C10 = 0 is the boundary, still stable)
    assert HS.sufficient_stable(HM.Polynomial(((1, 0, 0.0), (0, 1, 0.6)))) is True
    assert HS.sufficient_stable(HM.Polynomial(((1, 0, 0.4), (0, 1, 0.0)))) is True
    assert HS.sufficient_stable(HM.Polynomial(((1, 0, 0.4), (0, 1, -0.01)))) is False
    assert HS.sufficient_stable(HM.Polynomial(((1, 0, 0.0), (0, 1, 0.0)))) is False     # mu0 = 0


def test_mooney_rivlin_shortcut_agrees_with_scan():
    # whenever the shortcut says "stable", the grid scan must find no loss (common practice: a sufficient
    # condition may be conservative but never wrong)
    for c10, c01 in [(0.4, 0.1), (0.0, 0.5), (0.5, 0.0), (1e-3, 2.0)]:
        mr = HM.Polynomial(((1, 0, c10), (0, 1, c01)))
        assert HS.sufficient_stable(mr)
        for mode in HS.MODES:
            assert _scanned_unstable(mr, mode).size == 0, (c10, c01, mode)


@pytest.mark.parametrize("mu", [-0.27, 0.0])
def test_arruda_boyce_shortcut_needs_positive_mu(mu):
    # Arruda-Boyce is stable for mu > 0 and lambda_m > 0 (arXiv:2511.13792); mu <= 0 with a valid
    # locking stretch must go to the scan, which reports the loss
    ab = HM.ArrudaBoyce(mu, 5.15)
    assert HS.sufficient_stable(ab) is False
    if mu < 0:
        res = HS.scan_mode(ab, "UT", SCAN, 100)
        assert res["by"] == "scan" and res["unstable"] and not res["all_stable"]


def test_arruda_boyce_shortcut_needs_positive_locking_stretch():
    assert HS.sufficient_stable(HM.ArrudaBoyce(0.27, 5.15)) is True        # Arruda & Boyce 1993 rubber fit
    assert HS.sufficient_stable(HM.ArrudaBoyce(0.27, -5.15)) is False
    assert HS.sufficient_stable(HM.ArrudaBoyce(0.27, 0.0)) is False


def test_ogden_shortcut_needs_positive_mu_and_nonzero_alpha():
    # Ogden terms with mu_i > 0 and alpha_i != 0 (D-convention) are stable (arXiv:2511.13792)
    assert HS.sufficient_stable(HM.Ogden((0.5, 0.1), (2.0, -2.0))) is True
    assert HS.sufficient_stable(HM.Ogden((0.5, -0.1), (2.0, 4.0))) is False
    assert HS.sufficient_stable(HM.Ogden((0.5, 0.0), (2.0, 4.0))) is False
    assert HS.sufficient_stable(HM.Ogden((0.5, 0.1), (2.0, 0.0))) is False


def test_reduced_polynomial_shortcut_needs_c10_positive_and_others_not_negative():
    # reduced polynomial / Yeoh: C10 > 0 and C_i0 >= 0 is sufficient (arXiv:2511.13792)
    assert HS.sufficient_stable(HM.Polynomial(((1, 0, 0.5), (2, 0, 0.0), (3, 0, 0.01)))) is True
    assert HS.sufficient_stable(HM.Polynomial(((1, 0, 0.0), (2, 0, 0.1)))) is False
    assert HS.sufficient_stable(HM.Polynomial(((1, 0, 0.5), (2, 0, -0.05), (3, 0, 0.001)))) is False
    # a full polynomial (an I2 term beyond C01) has no shortcut
    assert HS.sufficient_stable(HM.Polynomial(((1, 0, 0.5), (0, 1, 0.1), (1, 1, 0.01)))) is False


# --------------------------------------------------------------------------- working-range overlap

def test_interval_touching_the_working_range_edge_is_not_inside():
    # an interval that shares only an end point with the working range has no length inside it
    # (common practice: open overlap of intervals)
    assert HS.loss_in([(2.0, 4.0)], WORKING) == []
    assert HS.loss_in([(0.1, 0.5)], WORKING) == []
    assert HS.loss_in([(0.1, 0.5), (2.0, 4.0)], WORKING) == []
    # a sliver beyond the edge is inside and clipped to the range
    assert HS.loss_in([(1.999, 4.0)], WORKING) == [(1.999, 2.0)]
    assert HS.loss_in([(0.1, 0.501)], WORKING) == [(0.5, 0.501)]
    assert HS.loss_in([(0.1, 4.0)], WORKING) == [WORKING]


# --------------------------------------------------------------------------- wave speeds

STEEL = (210000.0, 7.85e-9)      # MPa, t/mm^3 (common practice)


def test_wave_speeds_nan_at_the_incompressible_limit():
    # nu = 0.5: M = lambda + 2G is infinite, so the dilatational speed is undefined (nan), not inf;
    # c0 and cs stay finite (Belytschko, Liu & Moran 2000 ch. 6 relations)
    c = el.from_E_nu(STEEL[0], 0.5)
    w = el.wave_speeds(c["E"], c["G"], c["M"], STEEL[1])
    assert math.isnan(float(w["cd"]))
    assert float(w["c0"]) == pytest.approx(math.sqrt(STEEL[0] / STEEL[1]))
    assert float(w["cs"]) == pytest.approx(math.sqrt(STEEL[0] / 3.0 / STEEL[1]))


@pytest.mark.parametrize("E", [0.0, -1000.0])
def test_wave_speeds_nan_for_a_modulus_not_positive(E):
    c = el.from_E_nu(E, 0.3)
    w = el.wave_speeds(c["E"], c["G"], c["M"], STEEL[1])
    assert all(math.isnan(float(v)) for v in w.values()), w


def test_wave_speeds_nan_for_density_not_positive_or_not_finite():
    for rho in (0.0, -1.0, math.inf, math.nan):
        w = el.wave_speeds(1.0, 1.0, 1.0, rho)
        assert all(math.isnan(float(v)) for v in w.values()), (rho, w)
    # a tiny but positive modulus and density still give the finite speed sqrt(mod / rho)
    w = el.wave_speeds(1e-12, 4e-12, 9e-12, 1e-12)
    assert [float(w[k]) for k in ("c0", "cs", "cd")] == pytest.approx([1.0, 2.0, 3.0])


def test_wave_speeds_vectorised_mix():
    w = el.wave_speeds(np.array([1.0, 0.0, 4.0]), 1.0, np.array([1.0, 1.0, np.inf]), 1.0)
    assert np.array_equal(np.isnan(w["c0"]), [False, True, False])
    assert np.array_equal(np.isnan(w["cd"]), [False, False, True])
    assert w["c0"][2] == pytest.approx(2.0)


# --------------------------------------------------------------------------- admissibility bounds

def test_poisson_bounds_are_open():
    # -1 < nu < 0.5 (standard isotropic admissibility, Mavko, Mukerji & Dvorkin 2003)
    got = el.poisson_in_range([-1.0, -0.999999, 0.0, 0.499999, 0.5])
    assert got.tolist() == [False, True, True, True, False]


def test_admissible_needs_positive_modulus():
    assert el.admissible([0.0, -1.0, 1e-9, 1.0], 0.3).tolist() == [False, False, True, True]
    assert el.admissible(1.0, [-1.0, 0.5, 0.49, -0.99]).tolist() == [False, False, True, True]
