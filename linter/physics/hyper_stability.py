"""Stress and Drucker (Hill) stability of incompressible isotropic hyperelastic models.

Criterion (physics.md 3.4): with g(e1, e2) = W(exp e1, exp e2, exp(-e1-e2)), the material is stable at
a state when the 2x2 tangent H = Hessian of g is positive definite (H11 > 0 and det H > 0). The
nominal-stress slope dP/dlambda > 0 is only necessary and is not used for the verdict.

The loading direction is 1 and the stress-free direction is 3 in every mode, so the stress in the
loading direction is sigma_1 = dg/de1 and the nominal stress P = sigma_1 / lambda_1 (physics.md 3.3):

* uniaxial tension/compression ``UT``: (l, l^-1/2, l^-1/2)
* equibiaxial tension ``ET``: (l, l, l^-2)
* planar tension (pure shear) ``PS``: (l, 1, 1/l)
"""
from __future__ import annotations

import numpy as np

from .hyper_models import Model, Ogden, energy

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


def gradient_hessian(model: Model, l1, l2):
    """(dg/de1, dg/de2) and H (..., 2, 2) at stretches (l1, l2, 1/(l1 l2)), analytic (physics.md 3.4)."""
    l1, l2 = np.broadcast_arrays(np.asarray(l1, float), np.asarray(l2, float))
    l3 = 1.0 / (l1 * l2)
    shape = l1.shape + (2, 2)
    h = np.zeros(shape)
    g = np.zeros(l1.shape + (2,))
    if isinstance(model, Ogden):
        for m, a in zip(model.mu, model.alpha):
            if a == 0:
                continue
            x, y, z = l1 ** a, l2 ** a, l3 ** a
            g[..., 0] += 2 * m / a * (x - z)
            g[..., 1] += 2 * m / a * (y - z)
            h[..., 0, 0] += 2 * m * (x + z)
            h[..., 0, 1] += 2 * m * z
            h[..., 1, 1] += 2 * m * (y + z)
        h[..., 1, 0] = h[..., 0, 1]
        return g, h
    a, b, c = l1 ** 2, l2 ** 2, l3 ** 2
    i1, i2 = a + b + c, a * b + b * c + c * a
    w1, w2, w11, w12, w22 = model.derivatives(i1, i2)
    d1 = np.stack([2 * (a - c), 2 * (b - c)], axis=-1)
    d2 = np.stack([2 * (1 / c - 1 / a), 2 * (1 / c - 1 / b)], axis=-1)
    hh1 = 4 * np.stack([np.stack([a + c, c], -1), np.stack([c, b + c], -1)], -2)
    hh2 = 4 * np.stack([np.stack([1 / a + 1 / c, 1 / c], -1), np.stack([1 / c, 1 / b + 1 / c], -1)], -2)
    out1 = d1[..., :, None] * d1[..., None, :]
    out2 = d2[..., :, None] * d2[..., None, :]
    cross = d1[..., :, None] * d2[..., None, :]
    e = (..., None, None)
    h = (w1[e] * hh1 + w2[e] * hh2 + w11[e] * out1 + w12[e] * (cross + np.swapaxes(cross, -1, -2))
         + w22[e] * out2)
    g = w1[..., None] * d1 + w2[..., None] * d2
    return g, h


def nominal_stress(model: Model, mode: str, lam):
    """Nominal (first Piola) stress in the loading direction, incompressible (physics.md 3.3)."""
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
    _g, h = gradient_hessian(model, l1, l2)
    h11, h22, h12 = h[..., 0, 0], h[..., 1, 1], h[..., 0, 1]
    det = h11 * h22 - h12 * h12
    scale = np.maximum(np.abs(h11), np.abs(h22)) ** 2
    return np.isfinite(det) & (h11 > 0) & (det > 1e-12 * scale)


def _bisect(model, mode, lo, hi, lo_state, iters=40):
    """Refine a stability change between lo and hi (log-space bisection)."""
    a, b = np.log(lo), np.log(hi)
    for _ in range(iters):
        m = 0.5 * (a + b)
        if bool(stable_mask(model, mode, np.array([np.exp(m)]))[0]) == lo_state:
            a = m
        else:
            b = m
    return float(np.exp(0.5 * (a + b)))


def scan_mode(model: Model, mode: str, stretch_range=(0.1, 4.0), points: int = 400) -> dict:
    """Stable and unstable stretch intervals of one mode over a log-spaced grid (ends refined)."""
    lo, hi = float(stretch_range[0]), float(stretch_range[1])
    lam = np.unique(np.concatenate([np.geomspace(lo, hi, max(int(points), 3)), [1.0] if lo < 1 < hi else []]))
    ok = stable_mask(model, mode, lam)
    edges = [lo]
    for k in np.flatnonzero(ok[1:] != ok[:-1]):
        edges.append(_bisect(model, mode, lam[k], lam[k + 1], bool(ok[k])))
    edges.append(hi)
    states = [bool(ok[0])] + [not bool(ok[0]) if i % 2 == 0 else bool(ok[0]) for i in range(len(edges) - 2)]
    stable, unstable = [], []
    for (a, b), s in zip(zip(edges[:-1], edges[1:]), states):
        (stable if s else unstable).append((a, b))
    return {"mode": mode, "stable": stable, "unstable": unstable, "all_stable": not unstable}


def scan(model: Model, stretch_range=(0.1, 4.0), points: int = 400) -> dict[str, dict]:
    """:func:`scan_mode` for UT, ET and PS."""
    return {m: scan_mode(model, m, stretch_range, points) for m in MODES}


def loss_in(intervals, working_range) -> list[tuple[float, float]]:
    """Parts of the unstable intervals that fall inside the working range."""
    a0, b0 = working_range
    return [(max(a, a0), min(b, b0)) for a, b in intervals if min(b, b0) > max(a, a0)]
