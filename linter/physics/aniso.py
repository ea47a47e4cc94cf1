"""Anisotropic linear elasticity: stiffness matrices from every deck layout, and their admissibility.

Pure, vectorised functions (no I/O). Every builder takes an array of rows of shape ``(n, k)`` in
the layout of ``linter.model.BLOCK_LAYOUTS`` for its form and returns ``(n, m, m)`` matrices.

Voigt orders (CalculiX User's Manual *ELASTIC TYPE=ANISO; Nastran MAT9):

* keyword ``*ELASTIC, TYPE=ORTHO`` / ``ENGINEERING CONSTANTS`` / ``ANISO`` (CalculiX): order
  (11, 22, 33, 12, 13, 23); ``ANISO`` lists the upper triangle **column by column**;
* bulk ``MAT9``: order (x, y, z, xy, yz, zx), upper triangle **row by row**;
* bulk ``MAT2``: 3x3, order (x, y, xy), upper triangle row by row (G11 G12 G13 G22 G23 G33);
* bulk ``MAT8``: plane-stress lamina (E1 E2 NU12 G12 G1Z G2Z); blank G1Z/G2Z are nan = rigid.

All 6x6 matrices returned here are in the CalculiX order (11, 22, 33, 12, 13, 23), engineering shear.
"""
from __future__ import annotations

import numpy as np

#: MAT9 order (x,y,z,xy,yz,zx) <-> CalculiX order (11,22,33,12,13,23): positions 5 and 6 swap.
MAT9_TO_CCX = np.array([0, 1, 2, 3, 5, 4])

# (row, column) of each value of the packed upper triangles
_ANISO_IDX = [(i, j) for j in range(6) for i in range(j + 1)]       # column by column
_MAT9_IDX = [(i, j) for i in range(6) for j in range(i, 6)]         # row by row
_MAT2_IDX = [(i, j) for i in range(3) for j in range(i, 3)]         # row by row
_ORTHO_IDX = [(0, 0), (0, 1), (1, 1), (0, 2), (1, 2), (2, 2), (3, 3), (4, 4), (5, 5)]


def _rows(values, k: int) -> np.ndarray:
    a = np.atleast_2d(np.asarray(values, dtype=float))
    if a.shape[1] < k:
        a = np.concatenate([a, np.full((a.shape[0], k - a.shape[1]), np.nan)], axis=1)
    return a[:, :k]


def _sym_from_packed(a: np.ndarray, idx, m: int) -> np.ndarray:
    out = np.zeros((a.shape[0], m, m))
    r = np.array([p[0] for p in idx])
    c = np.array([p[1] for p in idx])
    out[:, r, c] = a
    out[:, c, r] = a
    return out


def stiffness_ortho(values) -> np.ndarray:
    """Keyword TYPE=ORTHO: D1111 D1122 D2222 D1133 D2233 D3333 D1212 D1313 D2323 -> C (n,6,6)."""
    return _sym_from_packed(_rows(values, 9), _ORTHO_IDX, 6)


def stiffness_aniso(values) -> np.ndarray:
    """Keyword TYPE=ANISO: 21 values, upper triangle column by column, order (11,22,33,12,13,23)."""
    return _sym_from_packed(_rows(values, 21), _ANISO_IDX, 6)


def stiffness_mat9(values) -> np.ndarray:
    """Bulk MAT9: G11..G66 row by row in order (x,y,z,xy,yz,zx), returned in CalculiX order."""
    g = _sym_from_packed(_rows(values, 21), _MAT9_IDX, 6)
    return g[:, MAT9_TO_CCX][:, :, MAT9_TO_CCX]


def mat9_values_from_ccx(c: np.ndarray) -> np.ndarray:
    """The 21 MAT9 fields (row by row, x,y,z,xy,yz,zx) of matrices given in CalculiX order."""
    c = np.asarray(c, dtype=float).reshape(-1, 6, 6)
    g = c[:, MAT9_TO_CCX][:, :, MAT9_TO_CCX]
    return np.stack([g[:, i, j] for i, j in _MAT9_IDX], axis=1)


def aniso_values_from_ccx(c: np.ndarray) -> np.ndarray:
    """The 21 keyword TYPE=ANISO values (column by column) of matrices in CalculiX order."""
    c = np.asarray(c, dtype=float).reshape(-1, 6, 6)
    return np.stack([c[:, i, j] for i, j in _ANISO_IDX], axis=1)


def stiffness_mat2(values, transverse_shear: bool = False) -> np.ndarray:
    """Bulk MAT2 (G11 G12 G13 G22 G23 G33, order x, y, xy): the 3x3 matrix.

    As a shell's transverse-shear material only the 2x2 part [[G11, G12], [G12, G22]] counts
    (MYSTRAN User Manual MAT2: G13, G23, G33 are ignored there).
    """
    g = _sym_from_packed(_rows(values, 6), _MAT2_IDX, 3)
    return g[:, :2, :2] if transverse_shear else g


def compliance_engineering(values) -> np.ndarray:
    """Keyword ENGINEERING CONSTANTS E1 E2 E3 nu12 nu13 nu23 G12 G13 G23 -> S (n,6,6) (Jones 1999, 2.2).

    nu_ij is -eps_j/eps_i under sigma_i (nu12 the major ratio); S is symmetric by construction.
    """
    e1, e2, e3, n12, n13, n23, g12, g13, g23 = _rows(values, 9).T
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        s = np.zeros((e1.shape[0], 6, 6))
        s[:, 0, 0], s[:, 1, 1], s[:, 2, 2] = 1 / e1, 1 / e2, 1 / e3
        s[:, 0, 1] = s[:, 1, 0] = -n12 / e1
        s[:, 0, 2] = s[:, 2, 0] = -n13 / e1
        s[:, 1, 2] = s[:, 2, 1] = -n23 / e2
        s[:, 3, 3], s[:, 4, 4], s[:, 5, 5] = 1 / g12, 1 / g13, 1 / g23
    return s


def safe_inv(m: np.ndarray) -> np.ndarray:
    """Batch inverse; singular or non-finite matrices give nan matrices instead of raising."""
    m = np.asarray(m, dtype=float)
    out = np.full_like(m, np.nan)
    ok = np.all(np.isfinite(m), axis=(-2, -1))
    if ok.any():
        scale = np.max(np.abs(m[ok]), axis=(-2, -1))
        scale = np.where(scale > 0, scale, 1.0)[:, None, None]
        sub = m[ok] / scale                                   # entries in [-1, 1]: nothing can overflow
        sv = np.linalg.svd(sub, compute_uv=False)
        good = sv[:, -1] > 1e-15 * sv[:, 0]                   # numerically invertible
        inv = np.full_like(sub, np.nan)
        if good.any():
            with np.errstate(over="ignore", invalid="ignore"):
                inv[good] = np.linalg.inv(sub[good]) / scale[good]
        out[ok] = inv
    return out


def stiffness_engineering(values) -> np.ndarray:
    """C = S^-1 for engineering constants (nan where S is singular)."""
    return safe_inv(compliance_engineering(values))


def engineering_from_stiffness(c: np.ndarray) -> dict[str, np.ndarray]:
    """Engineering constants of an orthotropic C (CalculiX order): the inverse of stiffness_engineering."""
    s = safe_inv(np.asarray(c, dtype=float).reshape(-1, 6, 6))
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        e = 1 / s[:, [0, 1, 2], [0, 1, 2]]
        return {"E1": e[:, 0], "E2": e[:, 1], "E3": e[:, 2],
                "nu12": -s[:, 0, 1] * e[:, 0], "nu13": -s[:, 0, 2] * e[:, 0], "nu23": -s[:, 1, 2] * e[:, 1],
                "G12": 1 / s[:, 3, 3], "G13": 1 / s[:, 4, 4], "G23": 1 / s[:, 5, 5]}


def engineering_bounds(values) -> dict[str, np.ndarray]:
    """Lempriere's conditions on engineering constants, per row.

    ``moduli`` (n,6) = E1 E2 E3 G12 G13 G23 (must be > 0); ``pairs`` (n,3) = nu_ij^2 * E_j/E_i for
    ij = 12, 13, 23 (must be < 1, i.e. |nu_ij| < sqrt(E_i/E_j)); ``determinant`` =
    1 - nu12 nu21 - nu23 nu32 - nu31 nu13 - 2 nu21 nu32 nu13 (must be > 0).
    """
    e1, e2, e3, n12, n13, n23, g12, g13, g23 = _rows(values, 9).T
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        n21, n31, n32 = n12 * e2 / e1, n13 * e3 / e1, n23 * e3 / e2
        pairs = np.stack([n12 * n21, n13 * n31, n23 * n32], axis=1)
        det = 1 - n12 * n21 - n23 * n32 - n31 * n13 - 2 * n21 * n32 * n13
    return {"moduli": np.stack([e1, e2, e3, g12, g13, g23], axis=1), "pairs": pairs, "determinant": det}


def lamina_q(values) -> np.ndarray:
    """MAT8 reduced (plane-stress) stiffness Q (n,3,3), order (1, 2, 12) (Jones 1999, plane-stress stiffness)."""
    e1, e2, n12, g12 = _rows(values, 6).T[:4]
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        n21 = n12 * e2 / e1
        d = 1 - n12 * n21
        q = np.zeros((e1.shape[0], 3, 3))
        q[:, 0, 0], q[:, 1, 1] = e1 / d, e2 / d
        q[:, 0, 1] = q[:, 1, 0] = n12 * e2 / d
        q[:, 2, 2] = g12
    return q


def lamina_s(values) -> np.ndarray:
    """MAT8 in-plane compliance S (n,3,3), order (1, 2, 12)."""
    e1, e2, n12, g12 = _rows(values, 6).T[:4]
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        s = np.zeros((e1.shape[0], 3, 3))
        s[:, 0, 0], s[:, 1, 1], s[:, 2, 2] = 1 / e1, 1 / e2, 1 / g12
        s[:, 0, 1] = s[:, 1, 0] = -n12 / e1
    return s


def lamina_shear(values) -> np.ndarray:
    """MAT8 as transverse-shear material: diag(G1Z, G2Z) (n,2,2); nan entries mean rigid."""
    a = _rows(values, 6)
    out = np.zeros((a.shape[0], 2, 2))
    out[:, 0, 0], out[:, 1, 1] = a[:, 4], a[:, 5]
    return out


def lamina_bounds(values) -> dict[str, np.ndarray]:
    """MAT8: ``moduli`` (n,3) = E1 E2 G12 (> 0), ``pairs`` (n,1) = nu12^2 * E2/E1 (< 1)."""
    e1, e2, n12, g12 = _rows(values, 6).T[:4]
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        return {"moduli": np.stack([e1, e2, g12], axis=1), "pairs": (n12 * n12 * e2 / e1)[:, None]}


def eigen_summary(m: np.ndarray, rel_tol: float = 1e-12) -> dict[str, np.ndarray]:
    """Eigenvalues of symmetric matrices (n,k,k): min, max, condition number, positive definite.

    Rows with nan entries are skipped (all results nan / False). ``positive_definite`` means
    lambda_min > rel_tol * |lambda|_max (a smaller |lambda_min| is returned as 0); ``condition`` is
    lambda_max/lambda_min (inf when not PD).
    """
    m = np.asarray(m, dtype=float)
    n = m.shape[0]
    lo, hi = np.full(n, np.nan), np.full(n, np.nan)
    ok = np.all(np.isfinite(m), axis=(-2, -1))
    if ok.any():
        sub = m[ok]
        scale = np.max(np.abs(sub), axis=(-2, -1))          # scaled first: no overflow for huge entries
        scale = np.where(scale > 0, scale, 1.0)[:, None, None]
        sub = sub / scale
        with np.errstate(over="ignore"):
            ev = np.linalg.eigvalsh(0.5 * (sub + np.swapaxes(sub, -1, -2))) * scale[:, :, 0]
        lo[ok], hi[ok] = ev[:, 0], ev[:, -1]
    big = np.maximum(np.abs(lo), np.abs(hi))
    pd = ok & (lo > rel_tol * big) & (big > 0)
    # an eigenvalue within the tolerance of zero is zero to round-off (its sign means nothing)
    lo = np.where(ok & (np.abs(lo) <= rel_tol * big), 0.0, lo)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        cond = np.where(pd, hi / np.where(pd, lo, 1.0), np.inf)
    cond[~ok] = np.nan
    return {"min": lo, "max": hi, "condition": cond, "positive_definite": pd, "finite": ok}


def is_isotropic(c: np.ndarray, rtol: float = 1e-9) -> np.ndarray:
    """True where a 6x6 stiffness (CalculiX order, engineering shear) has the isotropic pattern."""
    c = np.asarray(c, dtype=float).reshape(-1, 6, 6)
    lam, mu = c[:, 0, 1], c[:, 3, 3]
    iso = np.zeros_like(c)
    iso[:, :3, :3] = lam[:, None, None]
    iso[:, [0, 1, 2], [0, 1, 2]] = (lam + 2 * mu)[:, None]
    iso[:, [3, 4, 5], [3, 4, 5]] = mu[:, None]
    scale = np.max(np.abs(c), axis=(1, 2))
    with np.errstate(invalid="ignore"):
        return np.max(np.abs(c - iso), axis=(1, 2)) <= rtol * np.where(scale > 0, scale, 1.0)


def conductivity_matrix(form: str, values) -> np.ndarray:
    """Conductivity tensor (n,3,3): ``ortho`` k11 k22 k33; ``aniso`` k11 k22 k33 k12 k13 k23."""
    if form == "ortho":
        a = _rows(values, 3)
        out = np.zeros((a.shape[0], 3, 3))
        out[:, [0, 1, 2], [0, 1, 2]] = a
        return out
    a = _rows(values, 6)
    return _sym_from_packed(a, [(0, 0), (1, 1), (2, 2), (0, 1), (0, 2), (1, 2)], 3)
