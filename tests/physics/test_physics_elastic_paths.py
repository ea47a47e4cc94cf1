"""Every input pair of linter/physics/elastic.py gives the same seven constants.

The (E, G) and (K, G) rows of the standard conversion table (Mavko, Mukerji & Dvorkin, The Rock Physics Handbook,
2003, table of isotropic moduli) must agree with the (E, nu) row for every constant, lambda and M included, and
each row must keep the definitions M = lambda + 2G and K = lambda + 2G/3.
"""
from __future__ import annotations

import math

import numpy as np
import pytest

from linter.physics import elastic as el

KEYS = ("E", "nu", "G", "K", "lambda", "M", "K_over_G")

# (E, nu) points across the admissible range: auxetic, zero, common metals, nearly incompressible rubber
POINTS = [(210000.0, 0.3), (68900.0, 0.33), (1.0, -0.5), (5.0, 0.0), (12.0, 0.49), (3.0, 0.1), (2.5, 0.45)]


def _same(a: dict, b: dict, rel: float = 1e-9) -> None:
    for key in KEYS:
        want = float(a[key])
        assert float(b[key]) == pytest.approx(want, rel=rel, abs=1e-12 * abs(float(a["E"]))), key


@pytest.mark.parametrize("E, nu", POINTS)
def test_E_G_row_gives_every_constant_of_the_E_nu_row(E, nu):
    ref = el.from_E_nu(E, nu)
    _same(ref, el.from_E_G(E, ref["G"]), rel=1e-8)


@pytest.mark.parametrize("E, nu", POINTS)
def test_K_G_row_gives_every_constant_of_the_E_nu_row(E, nu):
    ref = el.from_E_nu(E, nu)
    _same(ref, el.from_K_G(ref["K"], ref["G"]), rel=1e-8)


@pytest.mark.parametrize("E, nu", POINTS)
def test_G_nu_row_gives_every_constant_of_the_E_nu_row(E, nu):
    ref = el.from_E_nu(E, nu)
    _same(ref, el.from_G_nu(ref["G"], nu), rel=1e-12)


def test_steel_lambda_and_M_from_each_pair():
    # structural steel E = 210000 N/mm2, nu = 0.3 (EN 1993-1-1 clause 3.2.6); lambda = E nu/((1+nu)(1-2nu))
    # = 121153.85 and M = lambda + 2G = 282692.31, from the standard conversion table (Mavko et al.)
    G, K = 210000.0 / 2.6, 175000.0
    for c in (el.from_E_G(210000.0, G), el.from_K_G(K, G)):
        assert float(c["lambda"]) == pytest.approx(121153.846, abs=1e-3)
        assert float(c["M"]) == pytest.approx(282692.308, abs=1e-3)
        assert float(c["E"]) == pytest.approx(210000.0, rel=1e-12)
        assert float(c["nu"]) == pytest.approx(0.3, rel=1e-12)


def test_zero_lambda_at_nu_zero_from_each_pair():
    # nu = 0 means lambda = 0 and M = 2G = E, K = 2G/3 (definitions; Mavko et al.): E = 2G, K = 2G/3
    for c in (el.from_E_G(2.0, 1.0), el.from_K_G(2.0 / 3.0, 1.0)):
        assert float(c["lambda"]) == pytest.approx(0.0, abs=1e-12)
        assert float(c["M"]) == pytest.approx(2.0, rel=1e-12)
        assert float(c["nu"]) == pytest.approx(0.0, abs=1e-12)
        assert float(c["E"]) == pytest.approx(2.0, rel=1e-12)


def test_E_G_incompressible_limit_is_infinite_K_lambda_and_M():
    # E = 3G is nu = 0.5: K, lambda and M are unbounded (singular entry of the (E, G) row, Mavko et al.)
    c = el.from_E_G(3.0, 1.0)
    assert float(c["nu"]) == pytest.approx(0.5, rel=1e-12)
    for key in ("K", "lambda", "M"):
        assert math.isinf(float(c[key])) and float(c[key]) > 0, key


def test_pairs_broadcast_scalar_against_array():
    G = np.array([1.0, 2.0, 4.0])
    c = el.from_E_G(5.0, G)
    assert c["lambda"].shape == (3,) and c["M"].shape == (3,)
    for k, g in enumerate(G):
        assert float(c["M"][k]) == pytest.approx(float(el.from_E_G(5.0, g)["M"]), rel=1e-12)
    k = el.from_K_G(np.array([1.0, 10.0]), 1.0)
    assert k["lambda"].tolist() == pytest.approx([1.0 - 2.0 / 3.0, 10.0 - 2.0 / 3.0])


@pytest.mark.parametrize("nu", [-2.0, -3.0, 1.0, 0.75])
def test_poisson_outside_the_open_interval_is_not_admissible(nu):
    # positive-definite strain energy needs K > 0 and G > 0, i.e. -1 < nu < 0.5 for E > 0 (Mavko et al.):
    # nu = -2 gives G = -E/2 (K > 0), nu = 1 gives K = -E/3 (G > 0): one negative modulus is enough to fail
    assert not bool(el.admissible(1.0, nu))
    c = el.from_E_nu(1.0, nu)
    assert (float(c["K"]) < 0) != (float(c["G"]) < 0)


def test_interpolate_table_edge_cases():
    # an empty table has no value to hold: nan (for every query)
    out = el.interpolate_table(np.array([5.0, 7.0]), [], [])
    assert out.shape == (2,) and np.isnan(out).all()
    # one usable row among rows without a temperature: that row's value everywhere
    assert float(el.interpolate_table(500.0, [20.0, np.nan], [5.0, 6.0])) == 5.0
    assert float(el.interpolate_table(-50.0, [np.nan, 20.0], [5.0, 6.0])) == 6.0
    # no row with a temperature: the first value (documented behaviour), not the last
    assert float(el.interpolate_table(7.0, [np.nan, np.nan], [5.0, 6.0])) == 5.0
