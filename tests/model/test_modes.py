"""Modal analysis and state-space eigen-solution against closed forms and scipy.linalg."""

import numpy as np
import pytest
import scipy.linalg
from hypothesis import example, given, settings
from hypothesis import strategies as st

import simulate as ss
from reference import shear_frame_matrices, uniform_chain_frequencies, uniform_chain_shapes

from conftest import DAMPING, FRAME5


@pytest.mark.parametrize("n", range(1, 31))
def test_uniform_chain_frequencies_and_shapes(n):
    """Uniform fixed-free shear chain: omega_j = 2 sqrt(k/m) sin((2j-1) pi / (2(2N+1))) and
    phi_j(i) proportional to sin((2j-1) i pi / (2N+1)) (common practice: closed-form
    eigen-solution of the uniform chain, found in structural dynamics texts)."""
    m, k = 2.5e5, 3.0e8
    frame = ss.ShearFrame(mass=[m] * n, stiffness=[k] * n, height=[3.5] * n, damping=ss.NoDamping())
    modes = frame.modes()
    w = uniform_chain_frequencies(k, m, n)
    np.testing.assert_allclose(modes["angular_frequency"].values, w, rtol=1e-9, atol=0)
    np.testing.assert_allclose(modes["period"].values, 2 * np.pi / w, rtol=1e-9, atol=0)
    np.testing.assert_allclose(modes["frequency"].values, w / (2 * np.pi), rtol=1e-9, atol=0)
    np.testing.assert_allclose(frame.periods(), 2 * np.pi / w, rtol=1e-9, atol=0)

    phi = uniform_chain_shapes(n)
    roof = phi / phi[-1, :]
    np.testing.assert_allclose(modes["shape"].transpose("floor", "mode").values, roof, rtol=1e-9,
                               atol=1e-9 * np.abs(roof).max())
    assert np.all(modes["shape"].sel(floor=n).values == 1.0)
    # mass-normalised: scale phi so that phi^T M phi = 1 and the roof is positive
    mn = phi / np.sqrt(m * (phi**2).sum(axis=0)) * np.sign(phi[-1, :])
    np.testing.assert_allclose(modes["mass_normalised_shape"].transpose("floor", "mode").values, mn,
                               rtol=0, atol=1e-9 * np.abs(mn).max())


def _reference_modes(mass, stiffness):
    """Modal properties straight from scipy.linalg.eigh(K, M) and Chopra's definitions
    (Dynamics of Structures, ch. 13: L_n = phi_n^T M iota, M_n = phi_n^T M phi_n,
    Gamma_n = L_n / M_n, M_n* = L_n^2 / M_n; equation numbers 13.2.3-13.2.14 from memory)."""
    M, K = shear_frame_matrices(mass, stiffness)
    w2, phi = scipy.linalg.eigh(K, M)
    phi = phi / phi[-1, :]                          # roof-normalised
    iota = np.ones(len(mass))
    L = phi.T @ M @ iota
    Mn = np.einsum("in,ij,jn->n", phi, M, phi)
    return np.sqrt(w2), phi, L / Mn, L**2 / Mn


def test_participation_and_effective_mass_match_scipy_eigh():
    """Gamma_n = L_n / M_n and M_n* = L_n^2 / M_n (Chopra, Dynamics of Structures, ch. 13)
    against a direct scipy.linalg.eigh(K, M) solution; the effective masses sum to the
    total mass (Chopra ch. 13, from memory)."""
    frame = ss.ShearFrame(**FRAME5)
    modes = frame.modes()
    w, phi, gamma, eff = _reference_modes(FRAME5["mass"], FRAME5["stiffness"])
    total = sum(FRAME5["mass"])
    np.testing.assert_allclose(modes["angular_frequency"].values, w, rtol=1e-12)
    np.testing.assert_allclose(modes["shape"].transpose("floor", "mode").values, phi, rtol=1e-10, atol=1e-12)
    np.testing.assert_allclose(modes["participation_factor"].values, gamma, rtol=1e-10, atol=1e-12)
    np.testing.assert_allclose(modes["effective_mass"].values, eff, rtol=1e-10, atol=1e-9 * total)
    np.testing.assert_allclose(modes["effective_mass_ratio"].values, eff / total, rtol=1e-10, atol=1e-12)
    np.testing.assert_allclose(modes["cumulative_effective_mass_ratio"].values, np.cumsum(eff) / total,
                               rtol=1e-10, atol=1e-12)
    assert modes["effective_mass"].sum().item() == pytest.approx(total, rel=1e-12)
    assert modes["cumulative_effective_mass_ratio"].values[-1] == pytest.approx(1.0, rel=1e-12)
    # Gamma_1 of a roof-normalised first mode exceeds 1 for a regular frame (common practice)
    assert 1.0 < modes["participation_factor"].values[0] < 1.6


frames = st.integers(min_value=1, max_value=12).flatmap(
    lambda n: st.tuples(
        st.lists(st.floats(1.0e4, 1.0e6), min_size=n, max_size=n),
        st.lists(st.floats(1.0e6, 1.0e9), min_size=n, max_size=n),
    )
)


#: A stiff second storey between soft ones: LAPACK returns the ninth mode with a roof
#: component of exactly 0.0 (the exact value is of order 1e-18).
STIFF_SECOND_STOREY = ([1.0e4] * 9, [1.0e6, 347226890.0] + [1.0e6] * 7)


@settings(max_examples=60, deadline=None, derandomize=True)
@given(frames)
@example(STIFF_SECOND_STOREY)
def test_random_frames_effective_masses_and_orthogonality(data):
    """Invariants of the undamped eigenproblem on random frames (Chopra, Dynamics of
    Structures, ch. 10, orthogonality of modes; ch. 13, sum of effective modal masses =
    total mass): phi^T M phi = I, phi^T K phi = diag(omega^2), sum M_n* = sum m."""
    mass, stiffness = data
    n = len(mass)
    frame = ss.ShearFrame(mass=mass, stiffness=stiffness, height=[3.0] * n, damping=ss.NoDamping())
    modes = frame.modes()
    M, K = shear_frame_matrices(mass, stiffness)
    phi = modes["mass_normalised_shape"].transpose("floor", "mode").values
    w = modes["angular_frequency"].values
    np.testing.assert_allclose(phi.T @ M @ phi, np.eye(n), rtol=0, atol=1e-10)
    np.testing.assert_allclose(phi.T @ K @ phi, np.diag(w**2), rtol=0, atol=1e-10 * w[-1] ** 2)
    assert modes["effective_mass"].sum().item() == pytest.approx(sum(mass), rel=1e-12)
    assert np.all(np.diff(w) > 0)


def test_mode_with_a_motionless_roof_keeps_its_shape():
    """A mode whose roof component is numerically zero is still a mode: its mass-normalised
    shape has phi^T M phi = 1 and K phi = omega^2 M phi (Chopra, Dynamics of Structures,
    ch. 10, definition and normalisation of modes), and modal damping damps it by the
    requested ratio (Chopra ch. 11, Eq. 11.4.21, from memory)."""
    mass, stiffness = STIFF_SECOND_STOREY
    frame = ss.ShearFrame(mass=mass, stiffness=stiffness, height=3.0, damping=ss.ModalDamping(0.05))
    modes = frame.modes()
    M, K = shear_frame_matrices(mass, stiffness)
    phi = modes["mass_normalised_shape"].sel(mode=9).values
    w = modes["angular_frequency"].sel(mode=9).item()
    assert phi @ M @ phi == pytest.approx(1.0, rel=1e-10)
    np.testing.assert_allclose(K @ phi, w**2 * (M @ phi), rtol=0, atol=1e-8 * w**2 * mass[0])
    assert modes["damping_ratio"].sel(mode=9).item() == pytest.approx(0.05, rel=1e-8)


def test_undamped_state_eigenvalues_are_conjugate_pairs_on_the_imaginary_axis():
    """Undamped frame: the eigenvalues of A are +/- i omega_j (common practice: x = [u; v],
    lambda^2 = -omega^2 from K phi = omega^2 M phi)."""
    frame = ss.ShearFrame(**FRAME5, damping=ss.NoDamping())
    modes = frame.modes()
    w, *_ = _reference_modes(FRAME5["mass"], FRAME5["stiffness"])
    lam = modes["state_eigenvalue"].values
    assert lam.shape == (10,)
    scale = w[-1]
    np.testing.assert_allclose(lam.real, 0.0, atol=1e-10 * scale)
    np.testing.assert_allclose(lam[0::2].imag, w, rtol=1e-10)
    np.testing.assert_allclose(lam[1::2].imag, -w, rtol=1e-10)
    np.testing.assert_allclose(modes["eigenvalue"].values, lam[0::2], rtol=0, atol=1e-12 * scale)


@pytest.mark.parametrize("name", ["rayleigh", "rayleigh-unequal", "modal", "mass", "stiffness", "none"])
def test_classically_damped_eigenvalues(name):
    """Classical damping: lambda = -zeta omega +/- i omega sqrt(1 - zeta^2) with each mode's
    damping ratio (Chopra, Dynamics of Structures, ch. 14, from memory on the chapter).
    Eigenvectors satisfy A v = lambda v (definition); for classical damping their
    displacement part is the real undamped mode shape (common practice)."""
    frame = ss.ShearFrame(**FRAME5, damping=DAMPING[name])
    modes = frame.modes()
    w, phi, *_ = _reference_modes(FRAME5["mass"], FRAME5["stiffness"])
    M, K = shear_frame_matrices(FRAME5["mass"], FRAME5["stiffness"])
    C = frame.damping_matrix()
    M_phi = phi / np.sqrt(np.einsum("in,ij,jn->n", phi, M, phi))
    zeta = np.diag(M_phi.T @ C @ M_phi) / (2 * w)
    if name == "modal":
        np.testing.assert_allclose(zeta, DAMPING[name].ratios, rtol=1e-10)
    expected = -zeta * w + 1j * w * np.sqrt(1 - zeta**2)
    lam = modes["state_eigenvalue"].values
    np.testing.assert_allclose(modes["eigenvalue"].values, expected, rtol=1e-10)
    np.testing.assert_allclose(lam[0::2], expected, rtol=1e-10)
    np.testing.assert_allclose(lam[1::2], np.conj(expected), rtol=1e-10)

    A = modes["state_matrix"].values
    np.testing.assert_allclose(A, frame.state_matrix(), rtol=0, atol=0)
    V = modes["state_eigenvector"].values
    resid = A @ V - V * lam[None, :]
    assert np.abs(resid).max() <= 1e-10 * np.abs(A).max() * np.abs(V).max()
    # displacement rows of mode n's vector are the undamped shape, velocity rows lambda times it
    for j in range(5):
        v = V[:5, 2 * j]
        np.testing.assert_allclose(v / v[-1], phi[:, j], rtol=1e-9, atol=1e-9)
        np.testing.assert_allclose(V[5:, 2 * j], lam[2 * j] * v, rtol=1e-9, atol=1e-9 * abs(lam[2 * j]))


def test_non_classical_damping_eigenvectors():
    """A damper in one storey only gives non-classical damping: the eigenvalues are those of
    A as computed by scipy.linalg.eigvals (general-purpose reference) and still satisfy
    A v = lambda v. Built by passing a custom damping model (library contract
    ``Damping.matrix``)."""

    class StoreyDamper(ss.model.Damping):
        kind = "storey-damper"
        tridiagonal = True

        def matrix(self, M, K, omega, phi):
            C = np.zeros_like(K)
            C[0, 0] = 4.0e6
            return C

        def describe(self):
            return "damper in storey 1"

    frame = ss.ShearFrame(**FRAME5, damping=StoreyDamper())
    modes = frame.modes()
    A = frame.state_matrix()
    ref = scipy.linalg.eigvals(A)
    lam = modes["state_eigenvalue"].values
    np.testing.assert_allclose(np.sort_complex(lam), np.sort_complex(ref), rtol=1e-10)
    assert np.all(lam[0::2].imag > 0)
    assert np.all(np.diff(np.abs(lam[0::2])) > 0)
    # the damper couples the modes: the displacement part is no longer a real shape
    disp = modes["state_eigenvector"].values[:5, 0]
    assert np.abs(disp.imag).max() > 1e-4
    np.testing.assert_allclose(lam[1::2], np.conj(lam[0::2]), rtol=1e-12)
    V = modes["state_eigenvector"].values
    assert np.abs(A @ V - V * lam).max() <= 1e-10 * np.abs(A).max() * np.abs(V).max()
