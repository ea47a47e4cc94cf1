"""Isotropic hyperelastic strain energies (CalculiX D-parameter convention) and their initial moduli.

Pure functions, no I/O. A model is built from one data row in the layout of
``linter.model.BLOCK_LAYOUTS`` with :func:`from_row`; it gives the deviatoric energy W and its
derivatives for the incompressible stability and stress checks (``hyper_stability``), and the
initial shear and bulk moduli (CalculiX User's Manual *HYPERELASTIC, *HYPERFOAM; Ogden 1972).
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Optional, Union

import numpy as np

#: below this |D_i| CalculiX replaces D_i by (0.1/mu0)^i (ccx hyperelastics.f)
CCX_D_ZERO = 1e-10

# Arruda-Boyce series: W = mu * sum_k c_k (I1^k - 3^k) / lambda_m^(2k-2) (CalculiX User's Manual *HYPERELASTIC)
_AB = (0.5, 1 / 20, 11 / 1050, 19 / 7000, 519 / 673750)


@dataclass(frozen=True)
class Polynomial:
    """W = sum C_ij (I1 - 3)^i (I2 - 3)^j; covers neo-Hooke, Mooney-Rivlin, (reduced) polynomial, Yeoh."""

    terms: tuple[tuple[int, int, float], ...]

    def c(self, i: int, j: int) -> float:
        return sum(v for a, b, v in self.terms if (a, b) == (i, j))

    @property
    def mu0(self) -> float:
        return 2.0 * (self.c(1, 0) + self.c(0, 1))

    def energy_invariants(self, i1, i2):
        t1, t2 = np.asarray(i1, float) - 3.0, np.asarray(i2, float) - 3.0
        return sum(v * t1 ** a * t2 ** b for a, b, v in self.terms)

    def derivatives(self, i1, i2):
        """W1, W2, W11, W12, W22 at the given invariants."""
        t1, t2 = np.asarray(i1, float) - 3.0, np.asarray(i2, float) - 3.0
        z = np.zeros(np.broadcast(t1, t2).shape)
        w1, w2, w11, w12, w22 = z.copy(), z.copy(), z.copy(), z.copy(), z.copy()

        def p(t, n):
            return t ** n if n >= 0 else 0.0

        for a, b, v in self.terms:
            w1 = w1 + v * a * p(t1, a - 1) * p(t2, b)
            w2 = w2 + v * b * p(t1, a) * p(t2, b - 1)
            w11 = w11 + v * a * (a - 1) * p(t1, a - 2) * p(t2, b)
            w12 = w12 + v * a * b * p(t1, a - 1) * p(t2, b - 1)
            w22 = w22 + v * b * (b - 1) * p(t1, a) * p(t2, b - 2)
        return w1, w2, w11, w12, w22


@dataclass(frozen=True)
class ArrudaBoyce:
    mu: float
    lambda_m: float

    def _coef(self):
        lm2 = np.float64(self.lambda_m) ** 2
        with np.errstate(over="ignore", divide="ignore", invalid="ignore"):
            return [float(self.mu * c / lm2 ** k) for k, c in enumerate(_AB)]

    @property
    def mu0(self) -> float:
        # 2 dW/dI1 at I1 = 3 (the initial shear modulus)
        return 2.0 * sum(a * (k + 1) * 3.0 ** k for k, a in enumerate(self._coef()))

    def energy_invariants(self, i1, i2):
        i1 = np.asarray(i1, float)
        return sum(a * (i1 ** (k + 1) - 3.0 ** (k + 1)) for k, a in enumerate(self._coef()))

    def derivatives(self, i1, i2):
        i1 = np.asarray(i1, float)
        z = np.zeros(np.broadcast(i1, np.asarray(i2, float)).shape)
        w1 = z + sum(a * (k + 1) * i1 ** k for k, a in enumerate(self._coef()))
        w11 = z + sum(a * (k + 1) * k * i1 ** (k - 1) for k, a in enumerate(self._coef()) if k >= 1)
        return w1, z, w11, z, z


@dataclass(frozen=True)
class Ogden:
    """W = sum (2 mu_i / alpha_i^2)(l1^a_i + l2^a_i + l3^a_i - 3) (D-convention: mu0 = sum mu_i)."""

    mu: tuple[float, ...]
    alpha: tuple[float, ...]

    @property
    def mu0(self) -> float:
        return float(sum(self.mu))

    def energy_stretches(self, l1, l2, l3):
        out = 0.0
        for m, a in zip(self.mu, self.alpha):
            if a != 0:
                out = out + 2 * m / a ** 2 * (l1 ** a + l2 ** a + l3 ** a - 3)
        return out


Model = Union[Polynomial, ArrudaBoyce, Ogden]


def energy(model: Model, l1, l2, l3):
    """Deviatoric energy at principal stretches (incompressible: l1 l2 l3 = 1)."""
    if isinstance(model, Ogden):
        return model.energy_stretches(l1, l2, l3)
    a, b, c = l1 ** 2, l2 ** 2, l3 ** 2
    return model.energy_invariants(a + b + c, a * b + b * c + c * a)


@dataclass(frozen=True)
class HyperRow:
    """One row read as a model: deviatoric part, volumetric D's (or foam nu's), and mu0."""

    form: str
    model: Optional[Model]
    d: tuple[float, ...] = ()
    #: hyperfoam only: the nu_i and mu_i of each term
    foam_nu: tuple[float, ...] = ()
    foam_mu: tuple[float, ...] = ()
    #: the value ccx uses as mu0 in its default-D rule (Arruda-Boyce: plain mu)
    ccx_mu0: float = math.nan

    @property
    def mu0(self) -> float:
        if self.foam_mu:
            return float(sum(self.foam_mu))
        return self.model.mu0 if self.model is not None else math.nan


_POLY_ORDER = {
    1: [(1, 0), (0, 1)],
    2: [(1, 0), (0, 1), (2, 0), (1, 1), (0, 2)],
    3: [(1, 0), (0, 1), (2, 0), (1, 1), (0, 2), (3, 0), (2, 1), (1, 2), (0, 3)],
}


def _get(values, n):
    v = [float(x) for x in values[:n]]
    return v + [0.0] * (n - len(v))


def from_row(form: str, values) -> Optional[HyperRow]:
    """A :class:`HyperRow` for one row of a (kind hyperelastic/hyperfoam, form) block; None if unknown."""
    if form == "neo-hooke" or form == "reduced-polynomial-1":
        c10, d1 = _get(values, 2)
        m = Polynomial(((1, 0, c10),))
        return HyperRow(form, m, (d1,), ccx_mu0=m.mu0)
    if form in ("mooney-rivlin", "polynomial-1", "polynomial-2", "polynomial-3"):
        n = 1 if form == "mooney-rivlin" else int(form[-1])
        idx = _POLY_ORDER[n]
        v = _get(values, len(idx) + n)
        m = Polynomial(tuple((i, j, c) for (i, j), c in zip(idx, v)))
        return HyperRow(form, m, tuple(v[len(idx):]), ccx_mu0=m.mu0)
    if form in ("reduced-polynomial-2", "reduced-polynomial-3", "yeoh"):
        n = 3 if form == "yeoh" else int(form[-1])
        v = _get(values, 2 * n)
        m = Polynomial(tuple((i + 1, 0, c) for i, c in enumerate(v[:n])))
        return HyperRow(form, m, tuple(v[n:]), ccx_mu0=m.mu0)
    if form.startswith("ogden-"):
        n = int(form[-1])
        v = _get(values, 3 * n)
        m = Ogden(tuple(v[0:2 * n:2]), tuple(v[1:2 * n:2]))
        return HyperRow(form, m, tuple(v[2 * n:]), ccx_mu0=m.mu0)
    if form == "arruda-boyce":
        mu, lm, d = _get(values, 3)
        m = ArrudaBoyce(mu, lm) if lm > 0 else None
        return HyperRow(form, m, (d,), ccx_mu0=mu)
    if form.startswith("hyperfoam-"):
        n = int(form[-1])
        v = _get(values, 3 * n)
        mu, al = tuple(v[0:2 * n:2]), tuple(v[1:2 * n:2])
        return HyperRow(form, Ogden(mu, al), (), foam_nu=tuple(v[2 * n:]), foam_mu=mu, ccx_mu0=sum(mu))
    return None


def nu_from_ratio(k_over_mu):
    """Poisson ratio from K/mu (the isotropic relation): (3r - 2)/(6r + 2); 0.5 for r = inf."""
    r = np.asarray(k_over_mu, dtype=float)
    with np.errstate(invalid="ignore", divide="ignore"):
        nu = np.where(np.isinf(r) & (r > 0), 0.5, (3 * r - 2) / (6 * r + 2))
    return nu


def foam_beta(nu):
    """beta_i = nu_i / (1 - 2 nu_i) (CalculiX User's Manual *HYPERFOAM); inf at nu_i = 0.5."""
    nu = np.asarray(nu, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(nu == 0.5, np.inf, nu / (1 - 2 * nu))


def _pow(x: float, n: int) -> float:
    try:
        return x ** n
    except OverflowError:
        return math.copysign(math.inf, x) if n % 2 else math.inf


def initial_moduli(row: HyperRow, ccx_default: bool = True) -> dict:
    """mu0, K0, nu0, K0/mu0 of a row (CalculiX User's Manual *HYPERELASTIC, *HYPERFOAM).

    K0 = 2/D1. When a |D_i| is below 1e-10: with ``ccx_default`` the solver's replacement
    D_i = (0.1/mu0)^i is used (``D_defaulted`` True, K0 = 20 mu0); otherwise the row is treated as
    incompressible (K0 = inf). Hyperfoam: K0 = sum 2 mu_i (1/3 + beta_i).
    """
    mu0 = row.mu0
    out = {"model": row.form, "mu0": mu0, "D": list(row.d), "D_defaulted": False, "incompressible": False}
    if row.foam_mu:
        beta = foam_beta(row.foam_nu)
        k0 = float(np.sum(2 * np.asarray(row.foam_mu) * (1 / 3 + beta))) if np.all(np.isfinite(beta)) else math.inf
        out["beta"] = [float(b) for b in beta]
    else:
        d = list(row.d)
        small = [abs(x) < CCX_D_ZERO for x in d]
        if any(small) and ccx_default and row.ccx_mu0 != 0 and math.isfinite(row.ccx_mu0):
            d = [_pow(0.1 / row.ccx_mu0, i + 1) if s else x for i, (x, s) in enumerate(zip(d, small))]
            out["D_defaulted"] = True
            out["D_used"] = d
        if d and abs(d[0]) >= CCX_D_ZERO:
            k0 = 2.0 / d[0]
        else:
            k0 = math.inf
            out["incompressible"] = True
    out["K0"] = k0
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = k0 / mu0 if mu0 != 0 else math.nan
    out["K0_over_mu0"] = float(ratio)
    out["nu0"] = float(nu_from_ratio(ratio)) if math.isfinite(ratio) or ratio > 0 else math.nan
    return out
