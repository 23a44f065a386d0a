"""Damping models: modal damping ratios and damping matrices against Chopra's formulas."""

import numpy as np
import pytest
import scipy.linalg

import simulate as ss
from reference import rayleigh_coefficients, shear_frame_matrices

from conftest import FRAME5


def _modal(mass, stiffness):
    """omega and mass-normalised shapes from scipy.linalg.eigh(K, M) (general-purpose reference)."""
    M, K = shear_frame_matrices(mass, stiffness)
    w2, phi = scipy.linalg.eigh(K, M)
    return M, K, np.sqrt(w2), phi


@pytest.mark.parametrize("ratio, modes", [(0.05, (1, 3)), ((0.02, 0.06), (1, 4)), ((0.05, 0.03), (2, 5)),
                                          (0.05, (3, 1))])
def test_rayleigh_ratios_in_every_mode(ratio, modes):
    """Rayleigh damping C = a0 M + a1 K gives zeta_n = a0 / (2 omega_n) + a1 omega_n / 2 in
    every mode and the target ratio in the two chosen modes (Chopra, Dynamics of
    Structures, ch. 11, Eq. 11.4.5-11.4.8, numbers from memory); a0, a1 solved by hand
    in tests/reference.py."""
    frame = ss.ShearFrame(**FRAME5, damping=ss.Rayleigh(ratio=ratio, modes=modes))
    M, K, w, phi = _modal(FRAME5["mass"], FRAME5["stiffness"])
    zi, zj = np.broadcast_to(ratio, (2,))
    i, j = modes
    a0, a1 = rayleigh_coefficients(w[i - 1], w[j - 1], zi, zj)
    np.testing.assert_allclose(frame.damping.coefficients(frame.modes()["angular_frequency"].values),
                               (a0, a1), rtol=1e-10)
    C = frame.damping_matrix()
    np.testing.assert_allclose(C, a0 * M + a1 * K, rtol=1e-10, atol=1e-10 * np.abs(C).max())
    expected = a0 / (2 * w) + a1 * w / 2
    zeta = frame.modes()["damping_ratio"].values
    np.testing.assert_allclose(zeta, expected, rtol=1e-10)
    np.testing.assert_allclose(np.diag(phi.T @ C @ phi) / (2 * w), expected, rtol=1e-10)
    assert zeta[i - 1] == pytest.approx(zi, rel=1e-10)
    assert zeta[j - 1] == pytest.approx(zj, rel=1e-10)
    assert frame.damping.tridiagonal
    np.testing.assert_array_equal(np.triu(C, 2), 0.0)


def test_rayleigh_with_equal_ratios_matches_closed_form():
    """Equal ratios: a0 = 2 zeta w_i w_j / (w_i + w_j), a1 = 2 zeta / (w_i + w_j) (Chopra,
    Dynamics of Structures, ch. 11, Eq. 11.4.9, number from memory); modes between i and
    j are under-damped, modes beyond j over-damped (Chopra ch. 11, Fig. 11.4.2, from memory)."""
    frame = ss.ShearFrame(**FRAME5, damping=ss.Rayleigh(ratio=0.05, modes=(1, 4)))
    _, _, w, _ = _modal(FRAME5["mass"], FRAME5["stiffness"])
    a0, a1 = frame.damping.coefficients(w)
    assert a0 == pytest.approx(2 * 0.05 * w[0] * w[3] / (w[0] + w[3]), rel=1e-12)
    assert a1 == pytest.approx(2 * 0.05 / (w[0] + w[3]), rel=1e-12)
    zeta = frame.modes()["damping_ratio"].values
    assert np.all(zeta[1:3] < 0.05) and zeta[4] > 0.05


def test_rayleigh_on_a_single_storey_gives_the_ratio():
    """One mode: any a0, a1 with a0 / (2w) + a1 w / 2 = zeta damps it by zeta (Chopra ch. 11)."""
    frame = ss.ShearFrame(mass=1.0e5, stiffness=4.0e7, height=3.0, damping=ss.Rayleigh(0.05, (1, 3)))
    w = np.sqrt(4.0e7 / 1.0e5)
    assert frame.modes()["damping_ratio"].item() == pytest.approx(0.05, rel=1e-12)
    assert frame.damping_matrix()[0, 0] == pytest.approx(2 * 0.05 * w * 1.0e5, rel=1e-12)


def test_modal_damping_is_diagonal_in_modal_coordinates():
    """Superposition of modal damping matrices C = M (sum 2 zeta_n w_n / M_n phi_n phi_n^T) M
    (Chopra, Dynamics of Structures, ch. 11, Eq. 11.4.21, number from memory):
    phi^T C phi = diag(2 zeta_n w_n) with exactly the requested ratio in every mode."""
    ratios = (0.02, 0.05, 0.03, 0.07, 0.04)
    frame = ss.ShearFrame(**FRAME5, damping=ss.ModalDamping(ratios))
    M, K, w, phi = _modal(FRAME5["mass"], FRAME5["stiffness"])
    C = frame.damping_matrix()
    Cn = phi.T @ C @ phi
    np.testing.assert_allclose(np.diag(Cn), 2 * np.array(ratios) * w, rtol=1e-10)
    off = Cn - np.diag(np.diag(Cn))
    assert np.abs(off).max() <= 1e-10 * np.abs(np.diag(Cn)).max()
    np.testing.assert_allclose(frame.modes()["damping_ratio"].values, ratios, rtol=1e-10)
    np.testing.assert_allclose(C, C.T, rtol=0, atol=0)
    assert not frame.damping.tridiagonal


def test_modal_damping_short_list_repeats_its_last_ratio():
    """Modes beyond the list take its last ratio (library convention, ModalDamping docstring)."""
    frame = ss.ShearFrame(**FRAME5, damping=ss.ModalDamping((0.02, 0.04)))
    np.testing.assert_allclose(frame.modes()["damping_ratio"].values, [0.02, 0.04, 0.04, 0.04, 0.04],
                               rtol=1e-10)


@pytest.mark.parametrize("mode", [1, 3])
def test_mass_and_stiffness_proportional_ratios(mode):
    """C = a0 M gives zeta_n = a0 / (2 w_n), proportional to 1 / w_n; C = a1 K gives
    zeta_n = a1 w_n / 2, proportional to w_n (Chopra, Dynamics of Structures, ch. 11,
    Eq. 11.4.2-11.4.4, numbers from memory)."""
    _, _, w, _ = _modal(FRAME5["mass"], FRAME5["stiffness"])
    z = 0.04
    mass = ss.ShearFrame(**FRAME5, damping=ss.MassProportional(z, mode)).modes()["damping_ratio"].values
    stiff = ss.ShearFrame(**FRAME5, damping=ss.StiffnessProportional(z, mode)).modes()["damping_ratio"].values
    wm = w[mode - 1]
    np.testing.assert_allclose(mass, z * wm / w, rtol=1e-10)
    np.testing.assert_allclose(stiff, z * w / wm, rtol=1e-10)
    np.testing.assert_allclose(mass * w, z * wm, rtol=1e-10)
    np.testing.assert_allclose(stiff / w, z / wm, rtol=1e-10)


def test_no_damping_gives_zero_matrix_and_ratios():
    """C = 0 and zeta_n = 0 (definition)."""
    frame = ss.ShearFrame(**FRAME5, damping=ss.NoDamping())
    np.testing.assert_array_equal(frame.damping_matrix(), 0.0)
    np.testing.assert_array_equal(frame.modes()["damping_ratio"].values, 0.0)


@pytest.mark.parametrize("make", [
    lambda: ss.Rayleigh(ratio=-0.01),
    lambda: ss.Rayleigh(ratio=1.0),
    lambda: ss.Rayleigh(ratio=float("nan")),
    lambda: ss.Rayleigh(ratio=0.05, modes=(2, 2)),
    lambda: ss.Rayleigh(ratio=0.05, modes=(0, 2)),
    lambda: ss.ModalDamping(()),
    lambda: ss.ModalDamping((0.05, 1.5)),
    lambda: ss.MassProportional(0.05, mode=0),
    lambda: ss.StiffnessProportional(-0.1),
])
def test_bad_damping_parameters_are_refused(make):
    """Ratios outside [0, 1) and mode numbers below 1 are user errors (project convention)."""
    with pytest.raises(ss.InputError):
        make()


@pytest.mark.parametrize("damping", [ss.Rayleigh(0.05, (1, 6)), ss.MassProportional(0.05, 6),
                                     ss.StiffnessProportional(0.05, 6)])
def test_damping_mode_beyond_the_frame_is_refused(damping):
    """A five-storey frame has five modes (project convention: InputError naming the mode)."""
    frame = ss.ShearFrame(**FRAME5, damping=damping)
    with pytest.raises(ss.InputError, match="6"):
        frame.damping_matrix()
