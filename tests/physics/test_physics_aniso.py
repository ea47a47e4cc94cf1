"""Anisotropic elasticity physics: matrix builders, orderings, bounds and eigenvalues."""
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from linter.physics import aniso as A

# Ply data (GPa): Tsai & Hahn 1980 and Soden, Hinton & Kaddour 1998
PLIES = {
    "T300/5208": (181.0, 10.3, 0.28, 7.17),
    "Scotchply 1002": (38.6, 8.27, 0.26, 4.14),
    "AS4/3501-6": (126.0, 11.0, 0.28, 6.6),
}
# Check values of Q (GPa) and S (1/TPa): Q11 Q12 Q22 Q66 / S11 S12 S22 S66, computed from the plane-stress reduced
# stiffness relations (R. M. Jones, Mechanics of Composite Materials, 1999) and the ply data of Tsai & Hahn,
# Introduction to Composite Materials, 1980 (AS4/3501-6: Soden, Hinton & Kaddour, Compos. Sci. Technol. 58, 1998)
Q_CHECK = {
    "T300/5208": (181.811, 2.8969, 10.3462, 7.17),
    "Scotchply 1002": (39.1673, 2.1818, 8.3915, 4.14),
    "AS4/3501-6": (126.868, 3.1012, 11.0758, 6.6),
}
S_CHECK = {
    "T300/5208": (5.5249, -1.5470, 97.087, 139.47),
    "Scotchply 1002": (25.907, -6.7358, 120.92, 241.55),
    "AS4/3501-6": (7.9365, -2.2222, 90.909, 151.52),
}


def _lamina(name, nu=None):
    e1, e2, n12, g12 = PLIES[name]
    return [e1, e2, n12 if nu is None else nu, g12, np.nan, np.nan]


@pytest.mark.parametrize("name", list(PLIES))
def test_lamina_q_s_and_positive_definite(name):
    v = _lamina(name)
    q, s = A.lamina_q(v)[0], A.lamina_s(v)[0] * 1000.0   # GPa -> 1/TPa
    np.testing.assert_allclose([q[0, 0], q[0, 1], q[1, 1], q[2, 2]], Q_CHECK[name], rtol=2e-4)
    np.testing.assert_allclose([s[0, 0], s[0, 1], s[1, 1], s[2, 2]], S_CHECK[name], rtol=2e-4)
    # Q is the inverse of S (plane stress; Jones, Mechanics of Composite Materials)
    np.testing.assert_allclose(q @ (s / 1000.0), np.eye(3), atol=1e-10)
    assert A.eigen_summary(A.lamina_q(v))["positive_definite"][0]
    assert A.lamina_bounds(v)["pairs"][0, 0] < 1


@pytest.mark.parametrize("name", list(PLIES))
def test_lamina_nu12_past_bound_fails(name):
    e1, e2, _n, _g = PLIES[name]
    nu = 1.05 * np.sqrt(e1 / e2)         # past |nu12| < sqrt(E1/E2), Lempriere 1968 (AIAA J. 6(11), details from memory)
    v = _lamina(name, nu)
    assert A.lamina_bounds(v)["pairs"][0, 0] > 1
    assert not A.eigen_summary(A.lamina_s(v))["positive_definite"][0]
    assert not A.eigen_summary(A.lamina_q(v))["positive_definite"][0]


AS4_3D = [126.0, 11.0, 11.0, 0.28, 0.28, 0.4, 6.6, 6.6, 11.0 / 2.8]


def test_as4_3d_stiffness_and_eigenvalues():
    # AS4/3501-6 transversely isotropic (Soden, Hinton & Kaddour 1998; nu23 = 0.4 from memory), C and eigenvalues
    # computed from the orthotropic compliance (Jones, Mechanics of Composite Materials, from memory)
    c = A.stiffness_engineering(AS4_3D)[0]
    np.testing.assert_allclose([c[0, 0], c[0, 1], c[0, 2], c[1, 1], c[2, 2], c[1, 2], c[3, 3], c[4, 4], c[5, 5]],
                               [128.9418, 5.25318, 5.25318, 13.30926, 13.30926, 5.45211, 6.6, 6.6, 3.92857],
                               rtol=1e-5)
    np.testing.assert_allclose(np.linalg.eigvalsh(c), [3.92857, 6.6, 6.6, 7.85714, 18.2627, 129.4405], rtol=1e-5)
    b = A.engineering_bounds(AS4_3D)
    np.testing.assert_allclose(b["determinant"][0], 0.820836, rtol=1e-5)   # computed, Lempriere 1968 condition 3
    assert np.all(b["pairs"] < 1) and np.all(b["moduli"] > 0)
    # closed-form C11 of Jones 1999 2.2 against the matrix inverse
    e1, e2, e3, n12, n13, n23 = AS4_3D[:6]
    n21, n31, n32 = n12 * e2 / e1, n13 * e3 / e1, n23 * e3 / e2
    delta = (1 - n12 * n21 - n23 * n32 - n31 * n13 - 2 * n21 * n32 * n13) / (e1 * e2 * e3)
    assert c[0, 0] == pytest.approx((1 - n23 * n32) / (e2 * e3 * delta), rel=1e-12)
    assert c[1, 2] == pytest.approx((n32 + n12 * n31) / (e1 * e3 * delta), rel=1e-12)


def test_failing_3d_vectors():
    # failing vectors violating Lempriere 1968 (computed)
    v = list(AS4_3D)
    v[5] = 0.99
    b = A.engineering_bounds(v)
    assert np.all(b["pairs"] < 1)                              # pairwise bounds hold ...
    assert b["determinant"][0] == pytest.approx(-0.00734, abs=5e-5)   # ... determinant condition fails
    assert np.linalg.eigvalsh(A.stiffness_engineering(v)[0])[0] == pytest.approx(-3433, rel=1e-3)
    assert not A.eigen_summary(A.compliance_engineering(v))["positive_definite"][0]
    v[5] = 0.95                                                # still passes: condition 3 = 0.0708
    assert A.engineering_bounds(v)["determinant"][0] == pytest.approx(0.0708, abs=5e-5)
    assert A.eigen_summary(A.compliance_engineering(v))["positive_definite"][0]
    # E1 = 10, E2 = E3 = 100, nu12 = 0.5 (> sqrt(0.1)); nu13 = 0, nu23 = 0.3 give condition 3 = -1.59
    w = [10.0, 100.0, 100.0, 0.5, 0.0, 0.3, 5.0, 5.0, 5.0]
    b = A.engineering_bounds(w)
    assert b["pairs"][0, 0] == pytest.approx(2.5)              # nu12 nu21 = 0.5 * 5.0
    assert b["determinant"][0] == pytest.approx(-1.59)
    assert np.linalg.eigvalsh(A.compliance_engineering(w)[0])[0] < 0


ANISO_INP = [300000, 110000, 320000, 130000, 140000, 350000, 160000, 170000, 180000, 390000, 200000,
             210000, 220000, 230000, 440000, 250000, 260000, 270000, 280000, 290000, 500000]


def test_corpus_aniso_vector_eigenvalues():
    # corpus deck aniso.inp values; eigenvalues computed with a symmetric eigensolver (not published values)
    c = A.stiffness_aniso(ANISO_INP)[0]
    ev = np.linalg.eigvalsh(c)
    assert ev[0] == pytest.approx(75478.05, abs=0.01)
    assert ev[-1] == pytest.approx(1459906.35, abs=0.01)
    # column-by-column order (CalculiX User's Manual, *ELASTIC TYPE=ANISO): D1112 is the 7th value,
    # D1212 the 10th, D1323 the 20th
    assert c[0, 3] == 160000 and c[3, 3] == 390000 and c[4, 5] == 290000 and c[2, 4] == 220000
    summ = A.eigen_summary(A.stiffness_aniso(ANISO_INP))
    assert summ["positive_definite"][0]
    assert summ["condition"][0] == pytest.approx(1459906.35 / 75478.05, rel=1e-6)


def test_ccx_to_mat9_order_swap():
    # CalculiX order (11,22,33,12,13,23) vs MAT9 (x,y,z,xy,yz,zx): positions 5 and 6 swap (CalculiX User's Manual *ELASTIC; MYSTRAN User Manual MAT9)
    c = A.stiffness_aniso(ANISO_INP)
    g = A.mat9_values_from_ccx(c)[0]
    # MAT9 G15 is the (x, yz) term = CalculiX D1123 (16th ANISO value); G16 (x, zx) = D1113 (11th)
    assert g[4] == ANISO_INP[15] and g[5] == ANISO_INP[10]
    np.testing.assert_array_equal(A.stiffness_mat9(g), c)
    np.testing.assert_array_equal(A.aniso_values_from_ccx(c)[0], ANISO_INP)
    # eigenvalues do not depend on the order
    np.testing.assert_allclose(np.linalg.eigvalsh(A.stiffness_mat9(g)[0]), np.linalg.eigvalsh(c[0]))


def test_ortho_manual_example_inversion():
    # CalculiX manual TYPE=ORTHO example; inversion computed from the orthotropic compliance (Jones)
    c = A.stiffness_ortho([500000, 157200, 400000, 157200, 157200, 300000, 126200, 126200, 126200])
    e = A.engineering_from_stiffness(c)
    assert e["E1"][0] == pytest.approx(399999.3, abs=0.1)
    assert e["E2"][0] == pytest.approx(304220.2, abs=0.1)
    assert e["E3"][0] == pytest.approx(217443.1, abs=0.1)
    assert e["nu12"][0] == pytest.approx(0.23558, abs=1e-5)
    assert e["nu13"][0] == pytest.approx(0.40056, abs=1e-5)
    assert e["nu23"][0] == pytest.approx(0.43011, abs=1e-5)
    assert e["G12"][0] == 126200
    # and back: engineering constants reproduce the D values
    eng = [e[k][0] for k in ("E1", "E2", "E3", "nu12", "nu13", "nu23", "G12", "G13", "G23")]
    np.testing.assert_allclose(A.stiffness_engineering(eng), c, rtol=1e-10, atol=1e-6)


def test_isotropic_pattern_and_ortho_layout():
    # isotropic material as ORTHO: D1111 = lambda + 2 mu, D1122 = lambda, D1212 = mu (CalculiX manual *ELASTIC)
    lam, mu = 121153.8, 80769.2
    c = A.stiffness_ortho([lam + 2 * mu, lam, lam + 2 * mu, lam, lam, lam + 2 * mu, mu, mu, mu])
    assert A.is_isotropic(c)[0]
    c2 = A.stiffness_ortho([lam + 2 * mu, lam, lam + 3 * mu, lam, lam, lam + 2 * mu, mu, mu, mu])
    assert not A.is_isotropic(c2)[0]


def test_mat2_and_lamina_transverse_shear():
    g = A.stiffness_mat2([100.0, 30.0, 5.0, 80.0, 4.0, 25.0])[0]
    np.testing.assert_array_equal(g, [[100, 30, 5], [30, 80, 4], [5, 4, 25]])
    ts = A.stiffness_mat2([100.0, 30.0, 5.0, 80.0, 4.0, -1.0], transverse_shear=True)
    assert ts.shape == (1, 2, 2) and A.eigen_summary(ts)["positive_definite"][0]   # G33 ignored as MID3
    sh = A.lamina_shear([181, 10.3, 0.28, 7.17, 5.0, np.nan])[0]
    assert sh[0, 0] == 5.0 and np.isnan(sh[1, 1])


def test_eigen_summary_zero_and_nan():
    z = np.zeros((2, 6, 6))
    z[1] = np.nan
    s = A.eigen_summary(z)
    assert not s["positive_definite"].any()
    assert not s["finite"][1] and s["finite"][0]


def test_conductivity_matrix():
    k = A.conductivity_matrix("aniso", [10.0, 20.0, 30.0, 1.0, 2.0, 3.0])[0]
    np.testing.assert_array_equal(k, [[10, 1, 2], [1, 20, 3], [2, 3, 30]])
    assert not A.eigen_summary(A.conductivity_matrix("ortho", [1.0, -1.0, 2.0]))["positive_definite"][0]
    assert not A.eigen_summary(A.conductivity_matrix("aniso", [1.0, 1.0, 1.0, 2.0, 0.0, 0.0]))["positive_definite"][0]


@settings(max_examples=60, deadline=None)
@given(e1=st.floats(1, 1e3), e2=st.floats(1, 1e3), e3=st.floats(1, 1e3),
       r12=st.floats(-1.5, 1.5), r13=st.floats(-1.5, 1.5), r23=st.floats(-1.5, 1.5),
       g=st.floats(0.1, 100))
def test_bounds_agree_with_eigenvalues(e1, e2, e3, r12, r13, r23, g):
    # Lempriere's conditions are equivalent to positive definiteness of S
    v = [e1, e2, e3, r12 * np.sqrt(e1 / e2), r13 * np.sqrt(e1 / e3), r23 * np.sqrt(e2 / e3), g, g, g]
    b = A.engineering_bounds(v)
    det = b["determinant"][0]
    if abs(det) < 1e-6:
        return
    pd = bool(A.eigen_summary(A.compliance_engineering(v))["positive_definite"][0])
    assert pd == bool(det > 0 and np.all(b["pairs"] < 1))
