"""Wave speeds, stable time step and the smallest element edge."""
import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from linter.physics import dynamics as D
from linter.physics import mesh as M


@pytest.mark.parametrize("E, nu, rho, c0, cd, dt", [
    # values computed from dt = L_e/c_d (mm-t-s, L_e = 10 mm); formula Belytschko, Liu & Moran 2000 ch. 6 (from memory)
    (210000.0, 0.3, 7.85e-9, 5.172e6, 6.001e6, 1.666e-6),     # STEEL
    (12.0, 0.4995, 1.2e-9, 1.000e5, 1.827e6, 5.474e-6),       # SEAL
    (12.0, 0.3, 1.2e-9, 1.000e5, 1.160e5, 8.619e-5),          # same seal with nu = 0.3
])
def test_time_step_check_values(E, nu, rho, c0, cd, dt):
    assert D.bar_speed(E, rho) == pytest.approx(c0, rel=1e-3)
    got_cd = D.dilatational_speed(E, nu, rho)
    assert got_cd == pytest.approx(cd, rel=1e-3)
    assert D.stable_time_step(10.0, got_cd) == pytest.approx(dt, rel=1e-3)


def test_speed_ratios_and_hyperelastic_form():
    # c_d/c0 = sqrt((1-nu)/((1+nu)(1-2nu))): 1.16 at 0.3, 4.14 at 0.49, 18.3 at 0.4995 (computed from the isotropic relations, Mavko et al., Rock Physics Handbook)
    for nu, ratio in ((0.3, 1.16), (0.49, 4.14), (0.4995, 18.3)):
        # quoted to 3 digits there
        assert D.dilatational_speed(1.0, nu, 1.0) / D.bar_speed(1.0, 1.0) == pytest.approx(ratio, abs=0.05)
    # the hyperelastic form equals the elastic one for K0 = K, mu0 = G (c_d = sqrt((K + 4G/3)/rho), standard isotropic relation)
    E, nu, rho = 12.0, 0.4995, 1.2e-9
    G, K = E / (2 * (1 + nu)), E / (3 * (1 - 2 * nu))
    assert D.hyper_dilatational_speed(K, G, rho) == pytest.approx(D.dilatational_speed(E, nu, rho))
    assert D.hyper_shear_speed(G, rho) == pytest.approx(D.shear_speed(E, nu, rho))
    assert np.isinf(D.dilatational_speed(12.0, 0.5, 1.2e-9))
    assert D.stable_time_step(10.0, np.inf) == 0.0


def test_estimated_length_from_box():
    # hand computed: 100 x 50 x 20 box of 1000 elements -> (100000/1000)^(1/3) = 4.6416
    assert D.estimated_length([0, 0, 0], [100, 50, 20], 1000) == pytest.approx(100000 ** (1 / 3) / 10)
    # flat (2-D) model: (100*50/200)^(1/2) = 5
    assert D.estimated_length([0, 0, 0], [100, 50, 0], 200) == pytest.approx(5.0)
    assert D.estimated_length(None, None, 10) is None
    assert D.estimated_length([0, 0, 0], [1, 1, 1], 0) is None


def _brick(dx, dy, dz, x0=0.0):
    return np.array([[x0, 0, 0], [x0 + dx, 0, 0], [x0 + dx, dy, 0], [x0, dy, 0],
                     [x0, 0, dz], [x0 + dx, 0, dz], [x0 + dx, dy, dz], [x0, dy, dz]], float)


def test_smallest_edge_of_hand_built_hexahedra():
    # two bricks 2 x 3 x 4 and 5 x 1.5 x 4 (hand computed: smallest edges 2 and 1.5); node ids not contiguous
    coords = np.vstack([_brick(2, 3, 4), _brick(5, 1.5, 4, x0=10)])
    ids = np.arange(1, 17) * 10
    conn = ids.reshape(2, 8)
    assert M.min_edge_lengths(conn, ids, coords, "C3D8").tolist() == pytest.approx([2.0, 1.5])
    assert M.smallest_edge(conn, ids, coords, "CHEXA8") == pytest.approx(1.5)
    assert M.smallest_edge(conn, ids, coords, "C3D8", mask=np.array([True, False])) == pytest.approx(2.0)
    assert M.smallest_edge(conn, ids, coords, "C3D8", chunk=1) == pytest.approx(1.5)  # measured in pieces
    # the diagonal of a face (sqrt(13)) is not an edge, so skewing the node order changes the answer
    shuffled = conn[:, [0, 2, 1, 3, 4, 6, 5, 7]]
    assert M.min_edge_lengths(shuffled, ids, coords, "C3D8")[0] == pytest.approx(3.0)


def test_smallest_edge_tetra_quadratic_and_missing_nodes():
    # unit right tetrahedron: edges 1, 1, 1, sqrt2, sqrt2, sqrt2 -> 1; its 10-node version halves the spacing
    c4 = np.array([[0, 0, 0], [1, 0, 0], [0, 1, 0], [0, 0, 1.0]])
    ids = np.array([1, 2, 3, 4])
    assert M.min_edge_lengths(np.array([[1, 2, 3, 4]]), ids, c4, "C3D4")[0] == pytest.approx(1.0)
    mids = np.array([(c4[a] + c4[b]) / 2 for a, b in ((0, 1), (1, 2), (2, 0), (0, 3), (1, 3), (2, 3))])
    c10 = np.vstack([c4, mids])
    ids10 = np.arange(1, 11)
    assert M.min_edge_lengths(ids10[None, :], ids10, c10, "C3D10")[0] == pytest.approx(0.5)
    # a node that is not defined gives nan for that element, and no length at all
    assert np.isnan(M.min_edge_lengths(np.array([[1, 2, 3, 99]]), ids, c4, "C3D4")[0])
    assert M.smallest_edge(np.array([[1, 2, 3, 99]]), ids, c4, "C3D4") is None
    # unknown topology: smallest distance between any two nodes
    assert M.min_edge_lengths(np.array([[1, 2, 3]]), ids, c4, "XYZ3")[0] == pytest.approx(1.0)
    # 2-D coordinates are accepted
    assert M.min_edge_lengths(np.array([[1, 2, 3]]), ids, c4[:, :2], "CPS3")[0] == pytest.approx(1.0)



@settings(max_examples=40, deadline=None)
@given(angle=st.floats(0, 6.283), shift=st.floats(-1e3, 1e3), scale=st.floats(0.01, 100))
def test_smallest_edge_is_invariant_under_rigid_motion(angle, shift, scale):
    # a rotated, shifted and scaled brick keeps its smallest edge times the scale (geometry, common practice)
    c, s = np.cos(angle), np.sin(angle)
    rot = np.array([[c, -s, 0], [s, c, 0], [0, 0, 1.0]])
    coords = (_brick(2, 3, 4) * scale) @ rot.T + shift
    ids = np.arange(1, 9)
    got = M.smallest_edge(ids[None, :], ids, coords, "C3D8")
    assert got == pytest.approx(2.0 * scale, rel=1e-9)
