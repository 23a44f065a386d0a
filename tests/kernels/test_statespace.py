"""Exact first-order-hold state-space integration against scipy and closed forms."""

import math

import numpy as np
import pytest
import scipy.integrate
import scipy.linalg
import scipy.signal

import simulate as ss
from simulate.kernels.methods import foh_matrices
from reference import drift_matrix, sdof_piecewise_linear_exact

from conftest import DAMPING, FRAME5


@pytest.mark.parametrize("damping", ["rayleigh", "modal", "none"])
@pytest.mark.parametrize("dt", [0.001, 0.02, 0.3])
def test_foh_matrices_equal_their_defining_integrals(damping, dt):
    """Phi = expm(A dt), Ga = int_0^dt expm(A s) ds B, Gb = int_0^dt expm(A (dt - s)) B s/dt ds,
    G0 = Ga - Gb, G1 = Gb (first-order hold: Franklin, Powell & Workman, Digital Control of
    Dynamic Systems, sec. 6.3, from memory), evaluated with scipy.linalg.expm and
    scipy.integrate.quad_vec (general-purpose references)."""
    frame = ss.ShearFrame(**FRAME5, damping=DAMPING[damping])
    A = frame.state_matrix()
    n = 5
    B = np.vstack([np.zeros((n, n)), np.eye(n)])
    Phi, G0, G1 = foh_matrices(A, dt)
    np.testing.assert_allclose(Phi, scipy.linalg.expm(A * dt), rtol=1e-10, atol=1e-12 * np.abs(Phi).max())
    Ga, _ = scipy.integrate.quad_vec(lambda s: scipy.linalg.expm(A * s) @ B, 0.0, dt, epsabs=1e-15, epsrel=1e-12)
    Gb, _ = scipy.integrate.quad_vec(lambda s: scipy.linalg.expm(A * (dt - s)) @ B * (s / dt), 0.0, dt,
                                     epsabs=1e-15, epsrel=1e-12)
    for got, want in ((G0, Ga - Gb), (G1, Gb)):
        np.testing.assert_allclose(got, want, rtol=0, atol=1e-9 * np.abs(want).max())


@pytest.mark.parametrize("damping, c_ratio", [(ss.NoDamping(), 0.0), (ss.ModalDamping(0.05), 0.05),
                                              (ss.Rayleigh(0.1), 0.1)])
def test_sdof_equals_piecewise_exact_recurrence(damping, c_ratio):
    """For a load that is linear between samples the state-space method is exact: it equals
    the closed-form step-by-step solution (particular line plus damped free vibration,
    Chopra, Dynamics of Structures, ch. 5, sec. 5.2, interpolation of excitation) to
    round-off, here 1e-12 relative, for a coarse dt and a rough load."""
    m, k = 2.0e5, 8.0e7
    c = 2 * c_ratio * math.sqrt(k * m)
    dt = 0.04
    rng = np.random.default_rng(11)
    p = np.concatenate([rng.standard_normal(300) * 1e5, np.zeros(200)])
    frame = ss.ShearFrame(mass=m, stiffness=k, height=3.0, damping=damping)
    ds = ss.run(frame, ss.FloorForces(p[:, None], dt=dt), method="state-space")
    u_ref, v_ref = sdof_piecewise_linear_exact(m, c, k, p, dt)
    u = ds["displacement"].isel(record=0, floor=0).values
    v = ds["velocity"].isel(record=0, floor=0).values
    assert np.abs(u - u_ref).max() <= 1e-12 * np.abs(u_ref).max()
    assert np.abs(v - v_ref).max() <= 1e-12 * np.abs(v_ref).max()
    # equilibrium at the samples: m a = p - c v - k u
    a = ds["absolute_acceleration"].isel(record=0, floor=0).values
    np.testing.assert_allclose(m * a, p - c * v - k * u, rtol=0, atol=1e-10 * np.abs(p).max())


def _lsim_reference(frame, ag, dt):
    """Drift ratios and absolute accelerations from scipy.signal.lsim (first-order hold
    between samples, interp=True) on x' = A x - [0; iota] a_g."""
    n = frame.n_storeys
    A = frame.state_matrix()
    B = np.concatenate([np.zeros(n), -np.ones(n)])[:, None]
    D = drift_matrix(frame.height)
    Cout = np.vstack([np.hstack([D, np.zeros((n, n))]),      # drift ratios
                      A[n:, :],                               # absolute acceleration = A_low x
                      np.hstack([np.eye(n), np.zeros((n, n))])])
    sys = scipy.signal.StateSpace(A, B, Cout, np.zeros((3 * n, 1)))
    t = np.arange(ag.size) * dt
    _, y, _ = scipy.signal.lsim(sys, ag, t, interp=True)
    return y[:, :n], y[:, n:2 * n], y[:, 2 * n:]


@pytest.mark.parametrize("damping", ["rayleigh", "modal"])
def test_five_storey_frame_against_lsim_and_newmark(damping, frame5, noise_record):
    """Five-storey frame under a band-limited record: the exact state-space histories equal
    scipy.signal.lsim (general-purpose reference, first-order hold) to 1e-9 relative, at
    the record step and at a step 20 times smaller (record interpolated linearly, as
    np.interp does); Newmark average acceleration at that small step gives peak drift
    ratios and floor accelerations within 0.1 % (its period error (w dt)^2 / 12 is below
    1e-4 for every mode; Chopra, Dynamics of Structures, ch. 5, from memory). Rayleigh
    runs the tridiagonal Newmark kernel, modal damping the dense one."""
    frame = frame5(DAMPING[damping])
    rec = noise_record(seed=2, n=800, dt=0.01, corner=12.0, peak=3.0)
    ag = rec.to_si()
    for dt in (rec.dt, rec.dt / 20):
        t = np.arange(int(round(rec.duration / dt)) + 1) * dt
        drift_ref, acc_ref, u_ref = _lsim_reference(frame, np.interp(t, rec.time, ag), dt)
        ds = ss.run(frame, rec, method="state-space", dt=dt)
        drift = ds["drift_ratio"].isel(record=0).values
        acc = ds["absolute_acceleration"].isel(record=0).values
        assert drift.shape == drift_ref.shape
        assert np.abs(drift - drift_ref).max() <= 1e-9 * np.abs(drift_ref).max()
        assert np.abs(acc - acc_ref).max() <= 1e-9 * np.abs(acc_ref).max()
        assert np.abs(ds["displacement"].isel(record=0).values - u_ref).max() <= 1e-9 * np.abs(u_ref).max()
        peak_ref = np.abs(drift_ref).max(axis=0)
        np.testing.assert_allclose(ds["peak_drift_ratio"].isel(record=0).values, peak_ref, rtol=1e-9)

    nm = ss.run(frame, rec, method="newmark", dt=rec.dt / 20)
    np.testing.assert_allclose(nm["peak_drift_ratio"].isel(record=0).values, peak_ref, rtol=1e-3)
    np.testing.assert_allclose(nm["peak_floor_acceleration"].isel(record=0).values, np.abs(acc_ref).max(axis=0),
                               rtol=1e-3)
    # at the record's own step Newmark's histories are visibly less accurate
    coarse = ss.run(frame, rec, method="newmark")
    d_coarse = coarse["drift_ratio"].isel(record=0).values
    d_fine = nm["drift_ratio"].isel(record=0).values
    err_coarse = np.abs(d_coarse - drift_ref[::20]).max()
    err_fine = np.abs(d_fine - drift_ref).max()
    assert err_fine < 1e-2 * err_coarse


def test_state_space_is_exact_for_any_step_on_interpolated_records(frame5, noise_record):
    """Records are interpolated linearly, so the first-order-hold recurrence gives the same
    response at the record samples whatever the analysis step (exactness of the
    triangle-hold discretisation, Franklin, Powell & Workman, sec. 6.3, from memory)."""
    frame = frame5(DAMPING["rayleigh"])
    rec = noise_record(seed=4, n=400, dt=0.02)
    a = ss.run(frame, rec, method="state-space")
    b = ss.run(frame, rec, method="state-space", dt=0.005)
    u_a = a["displacement"].isel(record=0).values
    u_b = b["displacement"].isel(record=0).values[::4]
    assert u_b.shape == u_a.shape
    assert np.abs(u_a - u_b).max() <= 1e-10 * np.abs(u_a).max()


@pytest.mark.parametrize("damping", ["rayleigh", "modal", "none"])
def test_free_vibration_energy_is_kept_or_dissipated(damping, frame5):
    """After a load ends, the energy E = (v^T M v + u^T K u) / 2 is constant for an undamped
    frame and never increases with viscous damping, since dE/dt = -v^T C v <= 0
    (common practice)."""
    frame = frame5(DAMPING[damping])
    dt = 0.01
    force = np.zeros((600, 5))
    force[:20, :] = np.linspace(0, 1, 20)[:, None] * 2.0e5
    ds = ss.run(frame, ss.FloorForces(force, dt=dt), method="state-space")
    u = ds["displacement"].isel(record=0).values[20:]
    v = ds["velocity"].isel(record=0).values[20:]
    M = frame.mass_matrix()
    K = frame.stiffness_matrix()
    E = 0.5 * (np.einsum("ti,ij,tj->t", v, M, v) + np.einsum("ti,ij,tj->t", u, K, u))
    if damping == "none":
        np.testing.assert_allclose(E, E[0], rtol=1e-9)
    else:
        assert np.all(np.diff(E) <= 1e-12 * E[0])
        assert E[-1] < 0.1 * E[0]
