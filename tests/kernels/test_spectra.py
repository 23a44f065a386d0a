"""Spectrum kernels: elastic recurrence and bilinear oscillator against scipy and closed forms."""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.integrate
import scipy.linalg
import scipy.signal

from simulate.kernels import spectra as K

from conftest import band_limited_acceleration


def augmented(r, d):
    """The 4x4 matrix of u'' + d u' + r u = q0 + q1 t with the load carried as two states."""
    return np.array([[0.0, 1.0, 0.0, 0.0], [-r, -d, 1.0, 0.0], [0.0, 0.0, 0.0, 1.0], [0.0, 0.0, 0.0, 0.0]])


@pytest.mark.parametrize("r, d", [(1.0, 0.1), (1.0, 0.0), (0.0, 0.1), (0.0, 0.0), (0.05, 1.9), (1.0, 1.98)])
@pytest.mark.parametrize("theta", [1e-5, 0.03, 0.3, 2.0, 40.0])
def test_propagator_equals_scipy_expm(r, d, theta):
    """Top rows of expm(A theta) against scipy.linalg.expm (general-purpose reference, Pade
    with scaling and squaring); small entries are compared relatively, so the long-period
    (small theta) coefficients keep their digits."""
    P = np.empty((2, 4))
    K._propagator(r, d, theta, P)
    want = scipy.linalg.expm(augmented(r, d) * theta)[:2]
    scale = np.maximum(np.abs(want), 1e-300)
    big = np.abs(want) > 1e-12 * np.abs(want).max()
    np.testing.assert_allclose(P[big], want[big], rtol=1e-11 * max(1.0, theta))
    assert np.all(np.abs(P - want)[~big] <= 1e-11 * np.abs(want).max() + 1e-11 * scale[~big])


def van_loan_coefficients(w, z, h):
    """(A, B0, B1) of x_{i+1} = A x_i + B0 ag_i + B1 ag_{i+1} for x = [u, v] from scipy.linalg.expm.

    First-order hold by the augmented matrix [[F h, G h, 0], [0, 0, I], [0, 0, 0]] (Van Loan
    1978, "Computing integrals involving the matrix exponential"; the block layout as in
    Franklin, Powell and Workman, Digital Control of Dynamic Systems, sec. 6.3, from memory).
    """
    F = np.array([[0.0, 1.0], [-w * w, -2.0 * z * w]])
    G = np.array([[0.0], [-1.0]])
    M = np.zeros((4, 4))
    M[:2, :2] = F * h
    M[:2, 2:3] = G * h
    M[2, 3] = 1.0
    E = scipy.linalg.expm(M)
    Phi, Gam1, Gam2 = E[:2, :2], E[:2, 2:3], E[:2, 3:4]
    return Phi, (Gam1 - Gam2)[:, 0], Gam2[:, 0]


@pytest.mark.parametrize("theta", [1e-4, 0.01, 0.999 * K.THETA_SERIES, 1.001 * K.THETA_SERIES, 0.5, 3.0, 25.0])
@pytest.mark.parametrize("z", [0.0, 0.05, 0.3, 0.9])
def test_nigam_jennings_coefficients_equal_first_order_hold(theta, z):
    """The closed-form coefficients (theta >= THETA_SERIES) and the series ones (below) both
    equal the first-order-hold discretisation computed with scipy.linalg.expm (Van Loan 1978),
    which is what Nigam and Jennings (1969) integrate exactly."""
    w = 2.0 * math.pi / 0.7
    h = theta / w
    got = K._nj_coefficients(w, z, h, np.empty((2, 4)))
    Phi, B0, B1 = van_loan_coefficients(w, z, h)
    want = (Phi[0, 0], Phi[0, 1], Phi[1, 0], Phi[1, 1], B0[0], B1[0], B0[1], B1[1])
    for g, x in zip(got, want):
        assert g == pytest.approx(x, rel=2e-9, abs=1e-12 * max(abs(v) for v in want))


def lsim_peaks(ag, dt, T, z):
    """Peak |u|, |v|, |absolute acceleration| at the samples from scipy.signal.lsim (linear
    interpolation of the input between samples, the default), outputs y = [u, v, -(2 z w v + w^2 u)]."""
    w = 2.0 * math.pi / T
    A = [[0.0, 1.0], [-w * w, -2.0 * z * w]]
    C = [[1.0, 0.0], [0.0, 1.0], [-w * w, -2.0 * z * w]]
    sys = scipy.signal.StateSpace(A, [[0.0], [-1.0]], C, [[0.0], [0.0], [0.0]])
    _, y, _ = scipy.signal.lsim(sys, ag, np.arange(ag.size) * dt)
    return np.abs(y).max(axis=0)


@pytest.mark.parametrize("z", [0.0, 0.05, 0.2])
def test_elastic_peaks_at_samples_equal_lsim(z):
    """With no sub-steps and no free vibration the kernel's peaks are lsim's peaks at the samples
    (scipy.signal.lsim, general-purpose reference): both integrate the linearly interpolated record
    exactly, so they agree to round-off, far inside the 0.5 % an engineer would accept."""
    dt = 0.01
    ag = band_limited_acceleration(3, 1500, dt, corner=12.0, peak=3.0)
    periods = np.array([0.02, 0.1, 0.35, 1.0, 3.0, 20.0])
    sd, sv, sa = K.elastic_spectra(ag, [ag.size], [dt], periods, z, samples_per_period=0,
                                   free_vibration=False)
    for p, T in enumerate(periods):
        want = lsim_peaks(ag, dt, T, z)
        np.testing.assert_allclose([sd[0, p], sv[0, p], sa[0, p]], want, rtol=1e-9)


@pytest.mark.parametrize("T", [0.013, 0.04, 0.25, 1.7])
def test_substeps_and_free_vibration_equal_lsim_on_the_interpolated_record(T):
    """Default settings: steps split so each period holds >= 20 points, then one damped period
    of free vibration. lsim (general-purpose reference) on the record interpolated linearly at
    ceil(20 dt / T) points per step and followed by ceil(T_d / dt) steps of zeros gives the same peaks."""
    dt, z = 0.01, 0.05
    ag = band_limited_acceleration(5, 600, dt, corner=10.0, peak=2.0)
    assert ag[-1] == 0.0
    m = math.ceil(20 * dt / T)
    tail = math.ceil(T / math.sqrt(1 - z * z) / dt)
    padded = np.concatenate([ag, np.zeros(tail)])
    t = np.arange(padded.size) * dt
    fine_t = np.arange((padded.size - 1) * m + 1) * (dt / m)
    fine = np.interp(fine_t, t, padded)
    sd, sv, sa = K.elastic_spectra(ag, [ag.size], [dt], [T], z)
    assert K.substeps([dt], [T])[0, 0] == m
    want = lsim_peaks(fine, dt / m, T, z)
    np.testing.assert_allclose([sd[0, 0], sv[0, 0], sa[0, 0]], want, rtol=1e-8)


def test_free_vibration_after_the_record_is_counted():
    """One cycle of a 1 Hz sine on a 2 s oscillator: a pulse short against the period, whose peak
    response comes after the pulse, in free vibration (Chopra, Dynamics of Structures, ch. 4,
    pulse excitation; from memory). lsim on the record followed by zeros (general-purpose
    reference) gives the same peak as the kernel's one damped period of free vibration."""
    dt, T, z = 0.01, 2.0, 0.02
    t = np.arange(0, 1.0 + dt / 2, dt)
    ag = np.sin(2 * np.pi * t)
    ag[-1] = 0.0
    during = K.elastic_spectra(ag, [ag.size], [dt], [T], z, free_vibration=False)[0][0, 0]
    after = K.elastic_spectra(ag, [ag.size], [dt], [T], z)[0][0, 0]
    assert math.ceil(20 * dt / T) == 1           # no sub-steps: lsim's samples are the kernel's
    padded = np.concatenate([ag, np.zeros(400)])
    assert after > 1.3 * during
    assert after == pytest.approx(lsim_peaks(padded, dt, T, z)[0], rel=1e-9)


def test_rigid_oscillator_moves_with_the_ground():
    """Period 0: no relative motion, absolute acceleration = ground acceleration (common practice)."""
    ag = band_limited_acceleration(2, 400, 0.01)
    sd, sv, sa = K.elastic_spectra(ag, [ag.size], [0.01], [0.0, 0.5], 0.05)
    assert sd[0, 0] == 0.0 and sv[0, 0] == 0.0
    assert sa[0, 0] == np.abs(ag).max()
    assert sd[0, 1] > 0.0


def test_records_of_different_length_and_step_in_one_call():
    """Each row is read up to its own length with its own dt: the batch equals single calls."""
    a = band_limited_acceleration(7, 900, 0.01)
    b = band_limited_acceleration(8, 700, 0.005)
    ag = np.zeros((2, 900))
    ag[0], ag[1, :700] = a, b
    periods = np.array([0.1, 0.6, 2.5])
    batch = K.elastic_spectra(ag, [900, 700], [0.01, 0.005], periods, 0.05)
    for r, (x, dt) in enumerate(((a, 0.01), (b, 0.005))):
        one = K.elastic_spectra(x, [x.size], [dt], periods, 0.05)
        for got, want in zip(batch, one):
            np.testing.assert_array_equal(got[r], want[0])


# ----------------------------------------------------------------------------- bilinear


@pytest.mark.parametrize("hardening", [0.0, 0.1])
@pytest.mark.parametrize("T", [0.05, 0.4, 1.5, 6.0])
def test_bilinear_with_huge_strength_equals_the_elastic_spectrum(hardening, T):
    """A bilinear oscillator that never yields is the elastic oscillator (common practice); its
    peak, from the matrix-exponential stepping, equals the Nigam-Jennings elastic SD to 1e-6."""
    dt = 0.01
    ag = band_limited_acceleration(11, 1200, dt, peak=4.0)
    sd = K.elastic_spectra(ag, [ag.size], [dt], [T], 0.05)[0][0, 0]
    assert K.bilinear_peak(ag, dt, T, 0.05, 1e12, hardening) == pytest.approx(sd, rel=1e-6)


@pytest.mark.parametrize("ratio", [1.1, 1.5, 1.9])
@pytest.mark.parametrize("T", [0.3, 1.0])
def test_elastoplastic_peak_under_a_step_force_equals_the_energy_balance(ratio, T):
    """Undamped elastoplastic oscillator, force p0 applied suddenly and held, p0 < fy < 2 p0.
    Energy balance at the peak (velocity zero), derived here: the work p0 u_m equals the strain
    energy fy u_y / 2 + fy (u_m - u_y), so mu = u_m / u_y = 1 / (2 (1 - p0 / fy)) (the step-force
    result for elastoplastic systems, cf. Chopra, Dynamics of Structures, ch. 7; from memory).
    A constant ground acceleration a is the force p0 = m |a|."""
    dt = 0.002
    a = 1.5
    ag = np.full(int(round(2.5 * T / dt)) + 1, a)
    fy = ratio * a
    w = 2 * math.pi / T
    um = K.bilinear_peak(ag, dt, T, 0.0, fy, 0.0, free_vibration=False)
    assert um / (fy / w**2) == pytest.approx(1.0 / (2.0 * (1.0 - 1.0 / ratio)), rel=1e-9)


def event_driven_reference(ag, dt, T, z, fy, alpha, t_end):
    """Peak |u| of the bilinear kinematic-hardening oscillator by scipy.integrate.solve_ivp
    (DOP853, rtol 1e-11), one integration per branch, switching at terminal events: force
    reaching alpha k u +- (1 - alpha) fy (yield), velocity changing sign (unloading). The input
    is the record linearly interpolated between samples, zero after it. States u, v, f_s."""
    w = 2 * math.pi / T
    k, c = w * w, 2 * z * w
    t_rec = np.arange(ag.size) * dt
    mode = 0
    y = np.zeros(3)
    t = 0.0
    peak = 0.0

    def rhs(t, y):
        stiffness = k if mode == 0 else alpha * k
        return [y[1], -np.interp(t, t_rec, ag, right=0.0) - c * y[1] - y[2], stiffness * y[1]]

    def upper(t, y):
        return y[2] - (alpha * k * y[0] + (1 - alpha) * fy)

    def lower(t, y):
        return y[2] - (alpha * k * y[0] - (1 - alpha) * fy)

    def velocity(t, y):
        return y[1]

    upper.terminal = lower.terminal = velocity.terminal = True
    upper.direction, lower.direction = 1, -1
    while t < t_end:
        if mode == 0:
            events = [upper, lower]
        else:
            velocity.direction = -mode
            events = [velocity]
        sol = scipy.integrate.solve_ivp(rhs, (t, t_end), y, method="DOP853", rtol=1e-11,
                                        atol=1e-14, events=events, max_step=dt)
        peak = max(peak, np.abs(sol.y[0]).max())
        t, y = sol.t[-1], sol.y[:, -1].copy()
        if sol.status != 1:
            break
        if mode == 0:
            mode = 1 if sol.t_events[0].size else -1
            y[2] = alpha * k * y[0] + mode * (1 - alpha) * fy
        else:
            mode = 0
    return peak


@pytest.mark.parametrize("alpha, z, strength", [(0.0, 0.05, 0.3), (0.0, 0.0, 0.6), (0.1, 0.05, 0.4),
                                                (0.3, 0.1, 0.2)])
def test_bilinear_half_sine_pulse_equals_event_driven_solve_ivp(alpha, z, strength):
    """Half-sine ground pulse (0.6 s, 3 m/s^2) on a 0.5 s oscillator yielding at a fraction of its
    elastic peak force: peak displacement against an independent event-driven solve_ivp solution
    (general-purpose reference) of the same interpolated record, within 1e-6."""
    dt, T = 0.005, 0.5
    t = np.arange(0.0, 2.0 + dt / 2, dt)
    ag = np.where(t <= 0.6, 3.0 * np.sin(np.pi * t / 0.6), 0.0)
    sd = K.elastic_spectra(ag, [ag.size], [dt], [T], z, free_vibration=False)[0][0, 0]
    fy = strength * sd * (2 * math.pi / T) ** 2
    got = K.bilinear_peak(ag, dt, T, z, fy, alpha, free_vibration=False)
    want = event_driven_reference(ag, dt, T, z, fy, alpha, t[-1])
    assert got == pytest.approx(want, rel=1e-6)
    assert got > strength * sd                  # it did yield


def test_ductility_search_finds_the_largest_strength_with_the_target():
    """Chopra (Dynamics of Structures, ch. 7): the ductility is not monotonic in the strength,
    so the largest strength reaching the target is wanted. Every strength of the scan above the
    one returned gives a smaller ductility (checked with single analyses), and the one returned
    reaches the target. (The scan is the only search over the whole range; between its points
    the algorithm cannot see, so only its points are checked.)"""
    dt = 0.01
    ag = band_limited_acceleration(21, 1500, dt, corner=6.0, peak=3.0)
    periods = np.array([0.15, 0.6, 2.0])
    mu = np.array([2.0, 5.0])
    fy_bar, u_max, got = K.constant_ductility(ag, [ag.size], [dt], periods, 0.05, mu)
    sd = K.elastic_spectra(ag, [ag.size], [dt], periods, 0.05)[0][0]
    grid = K.STRENGTH_GRID_RATIO ** np.arange(1, 200)
    for q, target in enumerate(mu):
        for p, T in enumerate(periods):
            f = fy_bar[0, q, p]
            assert 0.0 < f < 1.0
            assert got[0, q, p] >= target and got[0, q, p] == pytest.approx(target, rel=1e-3)
            w2 = (2 * math.pi / T) ** 2
            assert u_max[0, q, p] == pytest.approx(K.bilinear_peak(ag, dt, T, 0.05, f * w2 * sd[p]),
                                                   rel=1e-12)
            for g in grid[grid > f * (1.0 + 1e-12)]:
                um = K.bilinear_peak(ag, dt, T, 0.05, g * w2 * sd[p])
                assert um / (g * sd[p]) < target
