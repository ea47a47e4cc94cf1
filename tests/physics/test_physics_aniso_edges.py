"""Anisotropic elasticity helpers at their edges: short rows, singular and nearly singular matrices, the
eigenvalue summary's tolerance, the isotropic pattern, and constants that are all different from each other
(so that no index mix-up hides behind two equal values)."""
from __future__ import annotations

import numpy as np
import pytest

from linter.physics import aniso as A

# an orthotropic solid with nine different constants (invented, inside Lempriere's bounds):
# E1 E2 E3 nu12 nu13 nu23 G12 G13 G23
DISTINCT = [140.0, 9.0, 12.0, 0.3, 0.25, 0.45, 5.0, 4.0, 3.0]


def test_engineering_constants_survive_the_round_trip():
    c = A.stiffness_engineering(DISTINCT)
    e = A.engineering_from_stiffness(c)
    got = [e[k][0] for k in ("E1", "E2", "E3", "nu12", "nu13", "nu23", "G12", "G13", "G23")]
    assert got == pytest.approx(DISTINCT, rel=1e-12)


def test_compliance_is_symmetric_with_the_reciprocal_ratios():
    # S_ij = -nu_ij/E_i = -nu_ji/E_j (Jones 1999, 2.2): nu21 = nu12 E2/E1 etc.
    e1, e2, e3, n12, n13, n23, g12, g13, g23 = DISTINCT
    s = A.compliance_engineering(DISTINCT)[0]
    np.testing.assert_allclose(np.diag(s), [1 / e1, 1 / e2, 1 / e3, 1 / g12, 1 / g13, 1 / g23], rtol=1e-15)
    assert s[0, 1] == s[1, 0] == pytest.approx(-n12 / e1) and s[0, 1] == pytest.approx(-(n12 * e2 / e1) / e2)
    assert s[0, 2] == s[2, 0] == pytest.approx(-n13 / e1)
    assert s[1, 2] == s[2, 1] == pytest.approx(-n23 / e2)
    assert np.count_nonzero(s) == 12        # no coupling of normal and shear terms


def test_bounds_with_three_different_moduli():
    e1, e2, e3, n12, n13, n23 = DISTINCT[:6]
    b = A.engineering_bounds(DISTINCT)
    np.testing.assert_allclose(b["moduli"][0], [e1, e2, e3, 5.0, 4.0, 3.0])
    np.testing.assert_allclose(b["pairs"][0], [n12 ** 2 * e2 / e1, n13 ** 2 * e3 / e1, n23 ** 2 * e3 / e2])
    n21, n31, n32 = n12 * e2 / e1, n13 * e3 / e1, n23 * e3 / e2
    det = 1 - n12 * n21 - n23 * n32 - n31 * n13 - 2 * n21 * n32 * n13       # Lempriere 1968, condition 3
    assert b["determinant"][0] == pytest.approx(det, rel=1e-12)
    # the same determinant is E1 E2 E3 det(S) of the normal block (Jones 1999, 2.2)
    s = A.compliance_engineering(DISTINCT)[0][:3, :3]
    assert b["determinant"][0] == pytest.approx(e1 * e2 * e3 * np.linalg.det(s), rel=1e-10)


def test_lamina_bounds_and_short_rows():
    # MAT8 with the trailing G1Z, G2Z left out: they read as blank (nan, rigid transverse shear)
    sh = A.lamina_shear([181.0, 10.3, 0.28, 7.17])[0]
    assert np.isnan(sh[0, 0]) and np.isnan(sh[1, 1]) and sh[0, 1] == 0
    b = A.lamina_bounds([181.0, 10.3, 0.28, 7.17])
    np.testing.assert_allclose(b["moduli"][0], [181.0, 10.3, 7.17])
    assert b["pairs"][0, 0] == pytest.approx(0.28 ** 2 * 10.3 / 181.0)
    # an ORTHO row cut short: the missing D values are nan, not zero
    c = A.stiffness_ortho([1.0, 2.0, 3.0])
    assert c[0, 0, 0] == 1.0 and c[0, 0, 1] == 2.0 and c[0, 1, 1] == 3.0 and np.isnan(c[0, 5, 5])
    # extra values past the layout are ignored
    assert np.array_equal(A.stiffness_mat2([1, 2, 3, 4, 5, 6, 99])[0], A.stiffness_mat2([1, 2, 3, 4, 5, 6])[0])


def test_safe_inverse_of_singular_scaled_and_nan_matrices():
    m = np.array([np.diag([2.0, 4.0, 8.0]), np.zeros((3, 3)), np.full((3, 3), np.nan),
                  np.array([[1.0, 2.0, 0], [2.0, 4.0, 0], [0, 0, 1.0]])])
    inv = A.safe_inv(m)
    np.testing.assert_allclose(inv[0], np.diag([0.5, 0.25, 0.125]), rtol=1e-15)
    assert np.isnan(inv[1:]).all()
    # huge entries (a modulus in Pa written as 1e300) still invert without overflow: scaled first
    big = A.safe_inv(np.diag([1e300, 2e300, 4e300])[None])[0]
    np.testing.assert_allclose(np.diag(big), [1e-300, 0.5e-300, 0.25e-300], rtol=1e-12)


def test_safe_inverse_stops_at_a_condition_number_of_1e15():
    # numerically invertible while the smallest singular value exceeds 1e-15 times the largest
    ok = A.safe_inv(np.diag([1.0, 0.5, 1.5e-15])[None])[0]
    assert ok[2, 2] == pytest.approx(1 / 1.5e-15) and ok[1, 1] == pytest.approx(2.0)
    assert np.isnan(A.safe_inv(np.diag([1.0, 0.5, 0.5e-15])[None])).all()
    assert np.isnan(A.safe_inv(np.diag([0.5e-15, 0.5, 1.0])[None])).all()   # order of the rows does not matter


def test_safe_inverse_near_the_largest_float():
    # [[a, b], [b, a]]^-1 = [[a, -b], [-b, a]] / (a^2 - b^2) (closed form); a^2 overflows unless scaled first
    a, b = 1.7e308, 1.6e308
    inv = A.safe_inv(np.array([[[a, b], [b, a]]]))[0]
    det = (a / 1e308) ** 2 - (b / 1e308) ** 2
    np.testing.assert_allclose(inv, np.array([[a, -b], [-b, a]]) / 1e308 / det / 1e308, rtol=1e-12)


def test_eigen_summary_values_and_condition():
    s = A.eigen_summary(np.diag([3.0, 1.0, 2.0])[None])
    assert s["min"][0] == 1.0 and s["max"][0] == 3.0 and s["condition"][0] == pytest.approx(3.0)
    assert s["positive_definite"][0] and s["finite"][0]
    # scaled input gives scaled eigenvalues (the internal scaling is undone)
    s = A.eigen_summary(np.diag([3e9, 1e9, 2e9])[None])
    assert s["min"][0] == pytest.approx(1e9) and s["max"][0] == pytest.approx(3e9)
    # an indefinite matrix: not positive definite, condition inf
    s = A.eigen_summary(np.diag([3.0, -1.0, 2.0])[None])
    assert s["min"][0] == -1.0 and not s["positive_definite"][0] and s["condition"][0] == np.inf
    # a row with nan: nothing known
    s = A.eigen_summary(np.full((1, 3, 3), np.nan))
    assert np.isnan(s["min"][0]) and np.isnan(s["max"][0]) and np.isnan(s["condition"][0])
    assert not s["finite"][0] and not s["positive_definite"][0]


def test_eigen_summary_tolerance_relative_to_the_largest_eigenvalue():
    # lambda_min within 1e-12 |lambda|_max of zero is zero (its sign is round-off): not positive definite
    for tiny in (0.5e-12, -0.5e-12, 0.0):
        s = A.eigen_summary(np.diag([1.0, 2.0, 2.0 * tiny])[None])
        assert s["min"][0] == 0.0 and not s["positive_definite"][0] and s["condition"][0] == np.inf, tiny
    s = A.eigen_summary(np.diag([1.0, 2.0, 4e-12])[None])
    assert s["positive_definite"][0] and s["min"][0] == pytest.approx(4e-12)
    assert s["condition"][0] == pytest.approx(2.0 / 4e-12)
    s = A.eigen_summary(np.diag([1.0, 2.0, -4e-12])[None])
    assert not s["positive_definite"][0] and s["min"][0] == pytest.approx(-4e-12)
    # a wider tolerance of the caller
    assert not A.eigen_summary(np.diag([1.0, 2.0, 4e-12])[None], rel_tol=1e-6)["positive_definite"][0]


def test_eigen_summary_uses_the_symmetric_part():
    # the strain energy sees only the symmetric part of a matrix: [[2, 3], [-3, 2]] acts as 2 I
    s = A.eigen_summary(np.array([[[2.0, 3.0], [-3.0, 2.0]]]))
    assert s["min"][0] == pytest.approx(2.0) and s["max"][0] == pytest.approx(2.0)


def test_isotropic_pattern_to_one_part_in_1e9():
    # lambda = 3, mu = 2: D1111 = lambda + 2 mu (CalculiX User's Manual *ELASTIC, TYPE=ORTHO)
    c = A.stiffness_ortho([7.0, 3.0, 7.0, 3.0, 3.0, 7.0, 2.0, 2.0, 2.0])
    assert A.is_isotropic(c)[0]
    for k, (i, j) in enumerate([(0, 0), (1, 1), (2, 2), (3, 3), (4, 4), (5, 5), (0, 1), (1, 2), (0, 2)]):
        for rel, want in ((0.5e-9, True), (3e-9, False)):
            d = c.copy()
            d[0, i, j] += rel * 7.0
            d[0, j, i] = d[0, i, j]
            assert A.is_isotropic(d)[0] == want, (i, j, rel)
    # a coupling term off the pattern
    d = c.copy()
    d[0, 0, 3] = d[0, 3, 0] = 1e-6
    assert not A.is_isotropic(d)[0]
    # the tolerance is relative also for small numbers (a stiffness written in a large unit, e.g. 7e-6)
    small = c * 1e-6
    assert A.is_isotropic(small)[0]
    d = small.copy()
    d[0, 3, 3] *= 1 + 3e-9
    assert not A.is_isotropic(d)[0]
    assert A.is_isotropic(np.zeros((1, 6, 6)))[0]       # no stiffness at all still has the pattern (0 = 0)
    assert not A.is_isotropic(np.full((1, 6, 6), np.nan))[0]


def test_conductivity_of_an_orthotropic_row():
    k = A.conductivity_matrix("ortho", [10.0, 20.0, 30.0])
    assert k.shape == (1, 3, 3)
    np.testing.assert_array_equal(k[0], np.diag([10.0, 20.0, 30.0]))
    assert A.conductivity_matrix("aniso", [[1.0] * 6, [2.0] * 6]).shape == (2, 3, 3)


def test_one_matrix_per_row():
    assert A.lamina_shear([181.0, 10.3, 0.28, 7.17, 5.0, 4.0]).shape == (1, 2, 2)
    assert A.compliance_engineering(DISTINCT).shape == (1, 6, 6)
    assert A.lamina_q([DISTINCT[:6], DISTINCT[:6]]).shape == (2, 3, 3)


def test_tolerances_are_inclusive():
    # isotropic pattern (lambda = 0, mu = 0.5: D1111 = 1) with a coupling term of exactly 1e-9 times the
    # largest term: still the pattern (the test is "<= rtol * largest")
    c = A.stiffness_ortho([1.0, 0.0, 1.0, 0.0, 0.0, 1.0, 0.5, 0.5, 0.5])
    c[0, 0, 3] = c[0, 3, 0] = 1e-9
    assert A.is_isotropic(c)[0]
    # an eigenvalue of exactly 1e-12 times the largest is zero to round-off
    s = A.eigen_summary(np.diag([1.0, 1e-12])[None])
    assert s["min"][0] == 0.0 and not s["positive_definite"][0]
