"""The stability scan of linter/physics/hyper_stability.py: test-mode stretches, the positive-definiteness test,
the partition of the stretch range and the coarsest grid."""
from __future__ import annotations

import numpy as np
import pytest

from linter.physics import hyper_models as HM
from linter.physics import hyper_stability as HS

YEOH = HM.Polynomial(((1, 0, 0.5), (2, 0, -0.05), (3, 0, 0.001)))
MR_NEG = HM.Polynomial(((1, 0, 0.5), (0, 1, -0.05)))
OGDEN_NEG = HM.Ogden((0.8, -0.3), (1.0, 4.0))


@pytest.mark.parametrize("mode, want", [
    # uniaxial (l, l^-1/2, l^-1/2), equibiaxial (l, l, l^-2), planar (l, 1, 1/l): incompressible homogeneous
    # test modes (standard continuum mechanics, e.g. Treloar, The Physics of Rubber Elasticity)
    ("UT", lambda l: (l, l ** -0.5, l ** -0.5)),
    ("ET", lambda l: (l, l, l ** -2)),
    ("PS", lambda l: (l, 1.0, 1 / l)),
])
def test_mode_stretches_are_the_isochoric_test_modes(mode, want):
    lam = np.array([0.3, 1.0, 2.5])
    got = HS.mode_stretches(mode, lam)
    for g, w in zip(got, want(lam)):
        np.testing.assert_allclose(g, np.broadcast_to(w, lam.shape), rtol=1e-14)
    np.testing.assert_allclose(got[0] * got[1] * got[2], 1.0, rtol=1e-14)      # volume preserved


def test_unknown_mode_is_refused():
    with pytest.raises(ValueError):
        HS.mode_stretches("shear", 1.2)


def test_a_zero_tangent_is_not_positive_definite():
    # a zero energy has H = 0 everywhere: det H = 0 is not > 0, so no state is stable
    zero = HM.Polynomial(((1, 0, 0.0),))
    for mode in HS.MODES:
        assert not HS.stable_mask(zero, mode, np.array([0.5, 1.0, 2.0])).any()
    # the same through the scan: the whole range is unstable
    res = HS.scan_mode(zero, "UT", (0.5, 2.0), 20)
    assert res["unstable"] == [(0.5, 2.0)] and res["stable"] == []


@pytest.mark.parametrize("model", [YEOH, MR_NEG, OGDEN_NEG], ids=["yeoh", "mr", "ogden"])
@pytest.mark.parametrize("mode", HS.MODES)
def test_scan_partitions_the_stretch_range(model, mode):
    # the stable and unstable intervals alternate and cover the scanned range exactly, end to end
    res = HS.scan_mode(model, mode, (0.05, 20.0), 200)
    ivs = sorted([(a, b, True) for a, b in res["stable"]] + [(a, b, False) for a, b in res["unstable"]])
    assert ivs[0][0] == 0.05 and ivs[-1][1] == 20.0
    for (a, b, s), (c, d, t) in zip(ivs, ivs[1:]):
        assert b == c and s != t and a < b
    # each interval's state is the state at its middle (geometric mean)
    for a, b, s in ivs:
        assert bool(HS.stable_mask(model, mode, np.sqrt(a * b))) is s
    assert res["all_stable"] is (not res["unstable"])


def test_coarsest_grid_still_has_both_ends_and_the_middle():
    # points below 3 are raised to 3: lo, the geometric middle and hi (with 1.0 added inside the range). Yeoh
    # C10 = 0.5, C20 = -0.05, C30 = 0.001 loses uniaxial stability for 2.0918 < l < 5.4627 (computed, see
    # test_physics_hyper.py); over 0.754-15.15 the ends, 1.0 and the middle 3.38 decide, and the middle is unstable
    res = HS.scan_mode(YEOH, "UT", (0.754, 15.15), 1)
    assert len(res["unstable"]) == 1
    a, b = res["unstable"][0]
    assert a == pytest.approx(2.0918, abs=1e-4) and b == pytest.approx(5.4627, abs=1e-4)


def test_onsets_are_refined_far_below_the_grid_spacing():
    # Mooney-Rivlin C01 < 0: uniaxial tension onset l = sqrt(C10/-C01) = sqrt(10) (from P_UT = 2(l - l^-2)(C10 +
    # C01/l), see test_physics_hyper.py); a 5-point grid over 1-10 is refined to near float precision
    got = HS.scan_mode(MR_NEG, "UT", (1.0, 10.0), 5)["unstable"]
    assert got[0][0] == pytest.approx(np.sqrt(10.0), rel=1e-9) and got[0][1] == 10.0


def test_default_range_and_points_are_those_of_the_data_file():
    # one fact in one place: the scan's defaults are hyper.stretch_range and hyper.stretch_points of
    # linter/data/thresholds.yaml, and a scan with them covers that range end to end in every mode
    from linter.config import default_thresholds

    t = default_thresholds()["hyper"]
    lo, hi = (float(x) for x in t["stretch_range"])
    for model in (YEOH, MR_NEG):
        res = HS.scan(model)
        for mode in HS.MODES:
            ivs = sorted(res[mode]["stable"] + res[mode]["unstable"])
            assert ivs[0][0] == lo and ivs[-1][1] == hi
            assert res[mode] == HS.scan_mode(model, mode, (lo, hi), int(t["stretch_points"]))
        one = HS.scan_mode(model, "UT")
        assert one == HS.scan_mode(model, "UT", (lo, hi), int(t["stretch_points"]))
