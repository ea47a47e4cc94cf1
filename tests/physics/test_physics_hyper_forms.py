"""Hyperelastic forms (linter/physics/hyper_models.py) against closed forms: the Arruda-Boyce series, the Ogden
energy, the data-line layouts and the solver's default compressibility when it overflows."""
from __future__ import annotations

import math

import numpy as np
import pytest

from linter.physics import hyper_models as HM
from linter.physics import hyper_stability as HS


def _ab_mu0(mu, lm):
    # initial shear modulus of the five-term Arruda-Boyce series (Arruda & Boyce 1993, J. Mech. Phys. Solids 41,
    # 389-412; the form quoted with the series in solver manuals, from memory):
    # mu0 = mu (1 + 3/(5 lm^2) + 99/(175 lm^4) + 513/(875 lm^6) + 42039/(67375 lm^8))
    x = 1.0 / lm ** 2
    return mu * (1 + 3 / 5 * x + 99 / 175 * x ** 2 + 513 / 875 * x ** 3 + 42039 / 67375 * x ** 4)


@pytest.mark.parametrize("lm", [1.2, 1.5, 2.0, 7.0])
def test_arruda_boyce_initial_shear_modulus_series(lm):
    # a small locking stretch makes every term of the series count (lm = 1.2: the last term is 0.30 mu)
    row = HM.from_row("arruda-boyce", [0.5, lm, 0.01])
    assert row.mu0 == pytest.approx(_ab_mu0(0.5, lm), rel=1e-12)
    assert HM.initial_moduli(row)["mu0"] == pytest.approx(_ab_mu0(0.5, lm), rel=1e-12)


def test_arruda_boyce_uniaxial_stress_and_energy():
    # W = mu sum c_k (I1^k - 3^k)/lm^(2k-2), c = 1/2, 1/20, 11/1050, 19/7000, 519/673750 (CalculiX User's Manual
    # *HYPERELASTIC); uniaxial nominal stress P = 2 (l - l^-2) dW/dI1 (Rivlin's incompressible relation, standard)
    mu, lm = 0.4, 1.5
    c = (1 / 2, 1 / 20, 11 / 1050, 19 / 7000, 519 / 673750)
    model = HM.ArrudaBoyce(mu, lm)
    for lam in (0.6, 1.3, 1.8):
        i1 = lam ** 2 + 2 / lam
        w1 = mu * sum((k + 1) * ck * i1 ** k / lm ** (2 * k) for k, ck in enumerate(c))
        w = mu * sum(ck * (i1 ** (k + 1) - 3 ** (k + 1)) / lm ** (2 * k) for k, ck in enumerate(c))
        assert float(HS.nominal_stress(model, "UT", lam)) == pytest.approx(2 * (lam - lam ** -2) * w1, rel=1e-12)
        assert float(HM.energy(model, lam, lam ** -0.5, lam ** -0.5)) == pytest.approx(w, rel=1e-12)
        w11 = mu * sum((k + 1) * k * ck * i1 ** (k - 1) / lm ** (2 * k) for k, ck in enumerate(c) if k >= 1)
        d = model.derivatives(i1, 3.0)
        assert float(d[0]) == pytest.approx(w1, rel=1e-12) and float(d[2]) == pytest.approx(w11, rel=1e-12)
        assert float(d[1]) == 0.0 and float(d[3]) == 0.0 and float(d[4]) == 0.0


def test_ogden_energy_closed_form():
    # W = sum 2 mu_i/alpha_i^2 (l1^a + l2^a + l3^a - 3) (D-convention, CalculiX User's Manual *HYPERELASTIC OGDEN);
    # zero at the reference state; a term with alpha = 0 carries no energy (it is skipped)
    model = HM.Ogden((0.8, -0.3, 5.0), (1.0, 4.0, 0.0))
    assert float(HM.energy(model, 1.0, 1.0, 1.0)) == 0.0
    for l1, l2 in ((1.5, 0.9), (0.7, 1.2)):
        l3 = 1 / (l1 * l2)
        want = sum(2 * m / a ** 2 * (l1 ** a + l2 ** a + l3 ** a - 3) for m, a in ((0.8, 1.0), (-0.3, 4.0)))
        assert float(HM.energy(model, l1, l2, l3)) == pytest.approx(want, rel=1e-12)


def test_polynomial_energy_and_derivatives_closed_form():
    # W = sum C_ij (I1 - 3)^i (I2 - 3)^j (CalculiX User's Manual *HYPERELASTIC POLYNOMIAL)
    c = {(1, 0): 0.5, (0, 1): -0.05, (2, 0): 0.03, (1, 1): -0.01, (0, 2): 0.004, (3, 0): 0.002}
    model = HM.Polynomial(tuple((i, j, v) for (i, j), v in c.items()))
    i1, i2 = 4.2, 3.7
    t1, t2 = i1 - 3, i2 - 3
    assert float(model.energy_invariants(i1, i2)) == pytest.approx(
        sum(v * t1 ** i * t2 ** j for (i, j), v in c.items()), rel=1e-12)
    w1, w2, w11, w12, w22 = (float(x) for x in model.derivatives(i1, i2))
    assert w1 == pytest.approx(0.5 + 2 * 0.03 * t1 - 0.01 * t2 + 3 * 0.002 * t1 ** 2, rel=1e-12)
    assert w2 == pytest.approx(-0.05 - 0.01 * t1 + 2 * 0.004 * t2, rel=1e-12)
    assert w11 == pytest.approx(2 * 0.03 + 6 * 0.002 * t1, rel=1e-12)
    assert w12 == pytest.approx(-0.01, rel=1e-12)
    assert w22 == pytest.approx(2 * 0.004, rel=1e-12)


@pytest.mark.parametrize("form, values, terms, d", [
    # data-line layouts of the CalculiX User's Manual *HYPERELASTIC
    ("mooney-rivlin", [0.4, 0.1, 0.002], {(1, 0): 0.4, (0, 1): 0.1}, (0.002,)),
    ("polynomial-2", [0.4, 0.1, 0.03, -0.01, 0.004, 0.002, 0.5],
     {(1, 0): 0.4, (0, 1): 0.1, (2, 0): 0.03, (1, 1): -0.01, (0, 2): 0.004}, (0.002, 0.5)),
    ("reduced-polynomial-2", [0.5, -0.01, 0.002, 0.3], {(1, 0): 0.5, (2, 0): -0.01}, (0.002, 0.3)),
    ("yeoh", [0.5, -0.05, 0.001, 0.002, 0.3, 0.1], {(1, 0): 0.5, (2, 0): -0.05, (3, 0): 0.001}, (0.002, 0.3, 0.1)),
    ("neo-hooke", [0.5, 0.002], {(1, 0): 0.5}, (0.002,)),
    ("polynomial-3", [1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0, 0.1, 0.2, 0.3],
     {(1, 0): 1.0, (0, 1): 2.0, (2, 0): 3.0, (1, 1): 4.0, (0, 2): 5.0, (3, 0): 6.0, (2, 1): 7.0, (1, 2): 8.0,
      (0, 3): 9.0}, (0.1, 0.2, 0.3)),
])
def test_polynomial_layouts(form, values, terms, d):
    row = HM.from_row(form, values)
    assert {(i, j): v for i, j, v in row.model.terms if v != 0 or (i, j) in terms} == terms
    assert row.d == d


def test_ogden_and_hyperfoam_layouts():
    # OGDEN N=2: mu1, alpha1, mu2, alpha2, D1, D2; HYPERFOAM N=2: mu1, alpha1, mu2, alpha2, nu1, nu2
    # (CalculiX User's Manual *HYPERELASTIC, *HYPERFOAM)
    row = HM.from_row("ogden-2", [0.8, 1.0, -0.3, 4.0, 0.002, 0.5])
    assert row.model.mu == (0.8, -0.3) and row.model.alpha == (1.0, 4.0) and row.d == (0.002, 0.5)
    foam = HM.from_row("hyperfoam-2", [0.3, 2.0, 0.2, -1.0, 0.1, 0.25])
    assert foam.foam_mu == (0.3, 0.2) and foam.model.alpha == (2.0, -1.0) and foam.foam_nu == (0.1, 0.25)
    assert foam.mu0 == pytest.approx(0.5) and foam.ccx_mu0 == pytest.approx(0.5)
    # short lines are filled with zeros; an unknown form gives None
    assert HM.from_row("ogden-1", [0.8]).model.alpha == (0.0,)
    assert HM.from_row("marlow", [1.0]) is None


def test_hyperfoam_bulk_modulus_two_terms():
    # K0 = sum 2 mu_i (1/3 + beta_i), beta_i = nu_i/(1 - 2 nu_i) (CalculiX User's Manual *HYPERFOAM)
    m = HM.initial_moduli(HM.from_row("hyperfoam-2", [0.3, 2.0, 0.2, -1.0, 0.1, 0.25]))
    b1, b2 = 0.1 / 0.8, 0.25 / 0.5
    assert m["beta"] == pytest.approx([b1, b2])
    assert m["K0"] == pytest.approx(2 * 0.3 * (1 / 3 + b1) + 2 * 0.2 * (1 / 3 + b2), rel=1e-12)
    assert m["K0_over_mu0"] == pytest.approx(m["K0"] / 0.5, rel=1e-12)
    # nu_i = 0.5: beta_i infinite, K0 infinite
    assert math.isinf(HM.initial_moduli(HM.from_row("hyperfoam-1", [0.3, 2.0, 0.5]))["K0"])


def test_default_compressibility_overflows_to_a_signed_infinity():
    # the solver's default D_i = (0.1/mu0)^i (ccx hyperelastics.f) for a tiny negative mu0 = -1e-200:
    # D1 = -1e199, D2 = +inf, D3 = -inf (odd powers keep the sign), as IEEE arithmetic gives
    m = HM.initial_moduli(HM.from_row("polynomial-3", [-5e-201] + [0.0] * 11))
    assert m["D_defaulted"]
    assert m["D_used"][0] == pytest.approx(-1e199)
    assert m["D_used"][1] == math.inf and m["D_used"][2] == -math.inf
    assert m["K0_over_mu0"] == pytest.approx(20.0)


def test_nu_from_ratio_values():
    # nu = (3r - 2)/(6r + 2) (isotropic K-G relation, Mavko, Mukerji & Dvorkin, The Rock Physics Handbook):
    # r = 2/3 gives 0, r = 1 gives 1/8, r = +inf gives 0.5; r = -inf has no physical meaning (nan)
    nu = HM.nu_from_ratio(np.array([2 / 3, 1.0, np.inf, -np.inf]))
    assert nu[0] == pytest.approx(0.0, abs=1e-15) and nu[1] == pytest.approx(0.125) and nu[2] == 0.5
    assert math.isnan(nu[3])
