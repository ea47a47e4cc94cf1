"""Stress and Drucker (Hill) stability of incompressible isotropic hyperelastic models.

Criterion (Hill/Drucker stability, arXiv:2511.13792):
with g(e1, e2) = W(exp e1, exp e2, exp(-e1-e2)), the material is stable at
a state when the 2x2 tangent H = Hessian of g is positive definite (H11 > 0 and det H > 0). The
nominal-stress slope dP/dlambda > 0 is only necessary and is not used for the verdict.

The loading direction is 1 and the stress-free direction is 3 in every mode, so the stress in the
loading direction is sigma_1 = dg/de1 and the nominal stress P = sigma_1 / lambda_1 (standard):

* uniaxial tension/compression ``UT``: (l, l^-1/2, l^-1/2)
* equibiaxial tension ``ET``: (l, l, l^-2)
* planar tension (pure shear) ``PS``: (l, 1, 1/l)
"""
from __future__ import annotations

import numpy as np

from .hyper_models import ArrudaBoyce, Model, Ogden, energy

MODES = ("UT", "ET", "PS")
MODE_NAMES = {"UT": "uniaxial", "ET": "equibiaxial", "PS": "planar"}
CRITERION = "Drucker/Hill: Hessian of W(log strains) positive definite (incompressible, coaxial)"


def mode_stretches(mode: str, lam):
    """Principal stretches (l1, l2, l3) of a homogeneous test mode at loading stretch lam."""
    lam = np.asarray(lam, dtype=float)
    if mode == "UT":
        return lam, lam ** -0.5, lam ** -0.5
    if mode == "ET":
        return lam, lam, lam ** -2.0
    if mode == "PS":
        return lam, np.ones_like(lam), 1.0 / lam
    raise ValueError(f"unknown mode {mode!r}")


def split_tangent(model: Model, l1, l2):
    """g = (dg/de1, dg/de2) and H written as diag(d1, d2) + off * [[1, 1], [1, 1]].

    The split keeps det H = d1 d2 + off (d1 + d2) accurate when the stretch of the free direction
    dominates (off >> d1, d2), where h11 h22 - h12^2 would cancel catastrophically.
    """
    l1, l2 = np.broadcast_arrays(np.asarray(l1, float), np.asarray(l2, float))
    l3 = 1.0 / (l1 * l2)
    if isinstance(model, Ogden):
        g = np.zeros(l1.shape + (2,))
        d1, d2, off = np.zeros(l1.shape), np.zeros(l1.shape), np.zeros(l1.shape)
        for m, a in zip(model.mu, model.alpha):
            if a == 0:
                continue
            x, y, z = l1 ** a, l2 ** a, l3 ** a
            g[..., 0] += 2 * m / a * (x - z)
            g[..., 1] += 2 * m / a * (y - z)
            d1, d2, off = d1 + 2 * m * x, d2 + 2 * m * y, off + 2 * m * z
        return g, d1, d2, off
    a, b, c = l1 ** 2, l2 ** 2, l3 ** 2
    i1, i2 = a + b + c, a * b + b * c + c * a
    w1, w2, w11, w12, w22 = model.derivatives(i1, i2)
    v1, v2 = 2 * (a - c), 2 * (b - c)                    # grad I1
    u1, u2 = 2 * (1 / c - 1 / a), 2 * (1 / c - 1 / b)    # grad I2
    dv, du = 2 * (a - b), 2 * (1 / b - 1 / a)            # v1 - v2, u1 - u2 without cancellation
    d1 = (4 * (w1 * a + w2 / a) + w11 * v1 * dv + w22 * u1 * du + w12 * (v1 * du + u1 * dv))
    d2 = (4 * (w1 * b + w2 / b) - w11 * v2 * dv - w22 * u2 * du - w12 * (v2 * du + u2 * dv))
    off = 4 * (w1 * c + w2 / c) + w11 * v1 * v2 + w22 * u1 * u2 + w12 * (v1 * u2 + v2 * u1)
    g = np.stack([w1 * v1 + w2 * u1, w1 * v2 + w2 * u2], axis=-1)
    return g, d1, d2, off


def gradient_hessian(model: Model, l1, l2):
    """(dg/de1, dg/de2) and H (..., 2, 2) at stretches (l1, l2, 1/(l1 l2)), analytic."""
    g, d1, d2, off = split_tangent(model, l1, l2)
    h = np.stack([np.stack([d1 + off, off], -1), np.stack([off, d2 + off], -1)], -2)
    return g, h


def nominal_stress(model: Model, mode: str, lam):
    """Nominal (first Piola) stress in the loading direction, incompressible (standard continuum mechanics)."""
    l1, l2, _ = mode_stretches(mode, lam)
    g, _h = gradient_hessian(model, l1, l2)
    return g[..., 0] / np.asarray(lam, dtype=float)


def hessian_fd(model: Model, l1, l2, h: float = 1e-4):
    """Central-difference Hessian of g(e1, e2) (for cross-checks)."""
    e1, e2 = np.log(np.asarray(l1, float)), np.log(np.asarray(l2, float))

    def g(a, b):
        return energy(model, np.exp(a), np.exp(b), np.exp(-a - b))

    f11 = (g(e1 + h, e2) - 2 * g(e1, e2) + g(e1 - h, e2)) / h ** 2
    f22 = (g(e1, e2 + h) - 2 * g(e1, e2) + g(e1, e2 - h)) / h ** 2
    f12 = (g(e1 + h, e2 + h) - g(e1 + h, e2 - h) - g(e1 - h, e2 + h) + g(e1 - h, e2 - h)) / (4 * h ** 2)
    return np.stack([np.stack([f11, f12], -1), np.stack([f12, f22], -1)], -2)


def stable_mask(model: Model, mode: str, lam) -> np.ndarray:
    """True where H is positive definite (relative tolerance on the determinant)."""
    l1, l2, _ = mode_stretches(mode, lam)
    _g, d1, d2, off = split_tangent(model, l1, l2)
    det = d1 * d2 + off * (d1 + d2)
    scale = np.abs(d1 * d2) + np.abs(off) * (np.abs(d1) + np.abs(d2))
    # a state whose tangent overflows (huge exponents or constants) cannot be judged: it is not reported
    return ~np.isfinite(det) | ((d1 + off > 0) & (det > 1e-12 * scale))


def _bisect(model, mode, lo, hi, lo_state, iters=34):
    """Refine stability changes between lo[k] and hi[k] (all at once, log-space bisection)."""
    a, b = np.log(np.asarray(lo, float)), np.log(np.asarray(hi, float))
    lo_state = np.asarray(lo_state, bool)
    for _ in range(iters):
        m = 0.5 * (a + b)
        same = stable_mask(model, mode, np.exp(m)) == lo_state
        a, b = np.where(same, m, a), np.where(same, b, m)
    return np.exp(0.5 * (a + b))


def sufficient_stable(model: Model) -> bool:
    """Sufficient analytic conditions for stability under every deformation (arXiv:2511.13792)."""
    if isinstance(model, Ogden):
        return all(m > 0 and a != 0 for m, a in zip(model.mu, model.alpha))
    if isinstance(model, ArrudaBoyce):
        return model.mu > 0 and model.lambda_m > 0
    c = {(i, j): model.c(i, j) for i, j, _v in model.terms}
    if all(j == 0 for _i, j in c):        # reduced polynomial / Yeoh / neo-Hooke: all C_i0 >= 0, C10 > 0
        return c.get((1, 0), 0.0) > 0 and all(v >= 0 for v in c.values())
    if set(c) <= {(1, 0), (0, 1)}:        # Mooney-Rivlin
        return c.get((1, 0), 0.0) >= 0 and c.get((0, 1), 0.0) >= 0 and model.mu0 > 0
    return False


def scan_mode(model: Model, mode: str, stretch_range=(0.1, 4.0), points: int = 400) -> dict:
    """Stable and unstable stretch intervals of one mode over a log-spaced grid (ends refined)."""
    lo, hi = float(stretch_range[0]), float(stretch_range[1])
    if sufficient_stable(model):
        return {"mode": mode, "stable": [(lo, hi)], "unstable": [], "all_stable": True, "by": "sufficient condition"}
    lam = np.unique(np.concatenate([np.geomspace(lo, hi, max(int(points), 3)), [1.0] if lo < 1 < hi else []]))
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        ok = stable_mask(model, mode, lam)
        k = np.flatnonzero(ok[1:] != ok[:-1])
        inner = _bisect(model, mode, lam[k], lam[k + 1], ok[k]).tolist() if k.size else []
    edges = [lo] + [float(x) for x in inner] + [hi]
    states = [bool(ok[0])] + [not bool(ok[0]) if i % 2 == 0 else bool(ok[0]) for i in range(len(edges) - 2)]
    stable, unstable = [], []
    for (a, b), s in zip(zip(edges[:-1], edges[1:]), states):
        (stable if s else unstable).append((a, b))
    return {"mode": mode, "stable": stable, "unstable": unstable, "all_stable": not unstable, "by": "scan"}


def scan(model: Model, stretch_range=(0.1, 4.0), points: int = 400) -> dict[str, dict]:
    """:func:`scan_mode` for UT, ET and PS."""
    return {m: scan_mode(model, m, stretch_range, points) for m in MODES}


def loss_in(intervals, working_range) -> list[tuple[float, float]]:
    """Parts of the unstable intervals that fall inside the working range."""
    a0, b0 = working_range
    return [(max(a, a0), min(b, b0)) for a, b in intervals if min(b, b0) > max(a, a0)]
