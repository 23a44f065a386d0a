"""Modal analysis and the first-order (state-space) form of a shear frame.

References
----------
A. K. Chopra, *Dynamics of Structures*, 4th ed.: ch. 10 (natural modes, mass
normalisation), ch. 13 (modal participation factor Gamma_n = L_n / M_n and
effective modal mass M_n* = L_n^2 / M_n, Eq. 13.2.3-13.2.14), ch. 14 (state-space
form and complex eigenvalues of non-classically damped systems).
"""

from __future__ import annotations

import numpy as np
import scipy.linalg


#: A roof component below this fraction of a mode's largest component counts as zero.
ROOF_TOLERANCE = 1e-9


def undamped_modes(mass: np.ndarray, k_diag: np.ndarray, k_off: np.ndarray):
    """Natural frequencies and mass-normalised shapes of a lumped-mass chain.

    Solves K phi = w^2 M phi through the symmetric tridiagonal matrix
    M^-1/2 K M^-1/2 (scipy.linalg.eigh_tridiagonal), which keeps full accuracy
    for long chains.

    Returns
    -------
    omega : (N,) rad/s, ascending
    phi : (N, N) mass-normalised shapes (phi^T M phi = I), column n = mode n+1,
        signed so that the roof component is positive.
    """
    s = 1.0 / np.sqrt(mass)
    d = k_diag * s * s
    e = k_off * s[:-1] * s[1:]
    if mass.size == 1:
        lam = d.copy()
        vec = np.ones((1, 1))
    else:
        lam, vec = scipy.linalg.eigh_tridiagonal(d, e)
    lam = np.maximum(lam, 0.0)
    phi = vec * s[:, None]
    # sign convention: roof component positive; a mode whose roof component is
    # numerically zero takes the sign of its largest component instead
    roof = phi[-1, :]
    largest = phi[np.argmax(np.abs(phi), axis=0), np.arange(phi.shape[1])]
    ref = np.where(np.abs(roof) > ROOF_TOLERANCE * np.abs(largest), roof, largest)
    phi = phi * np.where(ref < 0.0, -1.0, 1.0)[None, :]
    return np.sqrt(lam), phi


def state_matrix(mass: np.ndarray, K: np.ndarray, C: np.ndarray) -> np.ndarray:
    """A = [[0, I], [-M^-1 K, -M^-1 C]] for x = [u; v]."""
    n = mass.size
    A = np.zeros((2 * n, 2 * n))
    A[:n, n:] = np.eye(n)
    A[n:, :n] = -K / mass[:, None]
    A[n:, n:] = -C / mass[:, None]
    return A


def state_eigen(A: np.ndarray):
    """Complex eigenvalues and eigenvectors of A, in conjugate pairs by modulus.

    Returns eigenvalues (2N,) ordered mode by mode (positive imaginary part first
    within a pair) and eigenvectors (2N, 2N) as columns, each scaled so that its
    largest displacement component is real and equal to 1.
    """
    lam, vec = scipy.linalg.eig(A)
    # ascending modulus; within equal modulus, positive imaginary part first
    order = np.lexsort((-lam.imag, np.round(np.abs(lam), 12)))
    lam, vec = lam[order], vec[:, order]
    n = A.shape[0] // 2
    disp = vec[:n, :]
    k = np.argmax(np.abs(disp), axis=0)
    vec = vec / disp[k, np.arange(2 * n)][None, :]
    return lam, vec


def modes_dataset(frame):
    """Modal and state-space properties of ``frame`` as an ``xarray.Dataset``.

    Dimensions: ``mode`` (1..N), ``floor`` (1..N), ``state`` (1..2N) and
    ``state_column`` (1..2N).
    """
    import xarray as xr

    from simulate.settings import CAUTION
    from simulate._version import __version__

    n = frame.n_storeys
    m = frame.mass
    omega, phi = frame._undamped
    M = frame.mass_matrix()
    C = frame.damping_matrix()
    iota = np.ones(n)

    L = phi.T @ (m * iota)                       # L_n with M_n = 1 (mass-normalised)
    eff_mass = L**2                              # M_n* = L_n^2 / M_n
    roof = phi[-1, :]
    largest = np.abs(phi).max(axis=0)
    roof_ok = np.abs(roof) > ROOF_TOLERANCE * largest
    # roof-normalised shapes; a mode with a (numerically) motionless roof has none
    with np.errstate(divide="ignore", invalid="ignore"):
        shape = np.where(roof_ok[None, :], phi / roof[None, :], np.nan)
    # Gamma of the shape phi / roof is L_n * roof (phi mass-normalised)
    gamma_roof = L * roof
    with np.errstate(divide="ignore", invalid="ignore"):
        zeta = np.einsum("in,ij,jn->n", phi, C, phi) / (2.0 * omega)
        period = 2.0 * np.pi / omega

    A = frame.state_matrix()
    lam, vec = state_eigen(A)
    lam_mode = lam[0::2]

    modes = np.arange(1, n + 1)
    floors = np.arange(1, n + 1)
    states = np.arange(1, 2 * n + 1)
    ds = xr.Dataset(
        {
            "period": ("mode", period, {"units": "s", "long_name": "undamped natural period"}),
            "frequency": ("mode", omega / (2 * np.pi), {"units": "Hz"}),
            "angular_frequency": ("mode", omega, {"units": "rad/s"}),
            "shape": (("mode", "floor"), shape.T,
                      {"units": "1", "long_name": "mode shape, roof component = 1 "
                                               "(NaN for a mode whose roof does not move)"}),
            "mass_normalised_shape": (("mode", "floor"), phi.T,
                                      {"units": "kg-1/2", "long_name": "mode shape with phi^T M phi = 1"}),
            "participation_factor": ("mode", gamma_roof,
                                     {"units": "1", "long_name": "modal participation factor of the roof-normalised shape"}),
            "effective_mass": ("mode", eff_mass, {"units": "kg"}),
            "effective_mass_ratio": ("mode", eff_mass / frame.total_mass, {"units": "1"}),
            "cumulative_effective_mass_ratio": ("mode", np.cumsum(eff_mass) / frame.total_mass, {"units": "1"}),
            "damping_ratio": ("mode", zeta, {"units": "1", "long_name": "modal damping ratio phi^T C phi / (2 w M_n)"}),
            "eigenvalue": ("mode", lam_mode,
                           {"units": "rad/s", "long_name": "state-space eigenvalue of the mode (upper of its pair)"}),
            "state_eigenvalue": ("state", lam, {"units": "rad/s"}),
            "state_eigenvector": (("state", "state_column"), vec,
                                  {"units": "1", "long_name": "eigenvectors as columns; rows u_1..u_N, v_1..v_N"}),
            "state_matrix": (("state", "state_column"), A, {"units": "s-1 | s-2 (by block)"}),
        },
        coords={"mode": modes, "floor": floors, "state": states, "state_column": states},
        attrs={
            "title": f"modes of {frame.name}",
            "software": f"swaysim {__version__}",
            "damping": frame.damping.describe(),
            "total_mass": frame.total_mass,
            "caution": CAUTION,
        },
    )
    return ds
