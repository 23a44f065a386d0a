"""Time integration of linear frames against closed forms, and the Newmark kernels against
the dense reference loop in tests/reference.py.

The SDOF closed-form checks loop over both integrators (``ss.METHODS``); checks that
only make sense for Newmark-beta (order of convergence, period elongation, stability
limit, equality with the reference loop) follow.
"""

import math

import numpy as np
import pytest

import simulate as ss
from simulate.kernels.methods import Newmark
from reference import (
    newmark_dense, sdof_half_sine_pulse, sdof_harmonic_steady_state, sdof_undamped_harmonic_from_rest,
    shear_frame_matrices, zero_crossings,
)

from conftest import DAMPING, FRAME5, band_limited_acceleration

# SDOF used throughout: T_n = 1 s
M1 = 1.0e5                          # kg
WN = 2.0 * math.pi                  # rad/s
K1 = M1 * WN**2                     # N/m
P0 = 1.0e4                          # N

SDOF_DAMPING = {
    "modal": ss.ModalDamping(0.05),
    "rayleigh": ss.Rayleigh(0.05, (1, 3)),
    "mass": ss.MassProportional(0.05, 1),
    "stiffness": ss.StiffnessProportional(0.05, 1),
}


def sdof(damping=ss.NoDamping()):
    return ss.ShearFrame(mass=M1, stiffness=K1, height=3.0, damping=damping)


def run_sdof(frame, force, dt, method, **params):
    """Roof displacement history and time axis of an SDOF under a force history (N)."""
    loads = ss.FloorForces(np.asarray(force, dtype=float)[:, None], dt=dt, name="p")
    ds = ss.run(frame, loads, method=method, **params)
    return ds["time"].values, ds["displacement"].isel(record=0, floor=0).values


# ----------------------------------------------------------------- harmonic force


@pytest.mark.parametrize("method", list(ss.METHODS))
@pytest.mark.parametrize("damping", list(SDOF_DAMPING))
@pytest.mark.parametrize("r", [0.5, 1.0, 1.6])
def test_damped_steady_state_harmonic_response(method, damping, r):
    """p0 sin(w t) on a 5 %-damped SDOF: after the transient has decayed the response is
    (p0/k) [(1-r^2) sin wt - 2 zeta r cos wt] / [(1-r^2)^2 + (2 zeta r)^2], amplitude
    (p0/k) / sqrt((1-r^2)^2 + (2 zeta r)^2) (Chopra, Dynamics of Structures, ch. 3,
    Eq. 3.2.3-3.2.4, from memory). Every damping model gives c = 2 zeta w m for one storey."""
    dt = 0.005
    zeta = 0.05
    w = r * WN
    loads = ss.harmonic_floor_force(P0, w / (2 * math.pi), 40.0, dt, floors=[1], n_floors=1)
    ds = ss.run(sdof(SDOF_DAMPING[damping]), loads, method=method)
    t = ds["time"].values
    u = ds["displacement"].isel(record=0, floor=0).values
    late = t >= 30.0                                  # exp(-zeta wn 30 s) < 1e-4
    basis = np.column_stack([np.sin(w * t[late]), np.cos(w * t[late])])
    (a, b), *_ = np.linalg.lstsq(basis, u[late], rcond=None)
    den = (1 - r**2) ** 2 + (2 * zeta * r) ** 2
    amplitude = (P0 / K1) / math.sqrt(den)
    a_ref = (P0 / K1) * (1 - r**2) / den
    b_ref = -(P0 / K1) * 2 * zeta * r / den
    assert abs(a - a_ref) <= 2e-3 * amplitude
    assert abs(b - b_ref) <= 2e-3 * amplitude
    assert np.abs(u[late]).max() == pytest.approx(amplitude, rel=1e-2)
    ref = sdof_harmonic_steady_state(P0, K1, zeta, r, w, t[late])
    assert np.abs(u[late] - ref).max() <= 5e-3 * amplitude


@pytest.mark.parametrize("method, dt, tol", [("state-space", 1.0 / 4000, 1e-6), ("newmark", 1.0 / 4000, 2e-5)])
def test_undamped_resonance_grows_linearly(method, dt, tol):
    """Undamped SDOF at resonance from rest: u = (p0 / 2k) (sin wt - wt cos wt) (Chopra,
    Dynamics of Structures, ch. 3, Eq. 3.1.13, from memory); the peaks grow by p0 pi / 2k
    every half cycle. State-space errs only through the linear interpolation of the sine
    between samples, ~(w dt)^2 / 12 ~ 2e-7 here; Newmark adds its period error
    (w dt)^2 / 12 accumulated over ten cycles."""
    t = np.arange(int(round(10.0 / dt)) + 1) * dt
    force = P0 * np.sin(WN * t)
    t, u = run_sdof(sdof(), force, dt, method)
    ref = sdof_undamped_harmonic_from_rest(P0, K1, WN, WN, t)
    assert np.abs(u - ref).max() <= tol * np.abs(ref).max()
    # envelope: peaks in successive half cycles grow linearly with slope p0 wn / 2k
    half = int(round(0.5 / dt))
    peaks = np.array([np.abs(u[i:i + half]).max() for i in range(half, len(u) - half, half)])
    times = np.array([t[i + np.abs(u[i:i + half]).argmax()] for i in range(half, len(u) - half, half)])
    slope = np.polyfit(times, peaks, 1)[0]
    assert slope == pytest.approx(P0 * WN / (2 * K1), rel=1e-3)


@pytest.mark.parametrize("method", list(ss.METHODS))
def test_undamped_off_resonance_stays_bounded(method):
    """Undamped SDOF from rest at r = 0.5: u = (p0/k)/(1-r^2) [sin wt - r sin wn t] (Chopra,
    Dynamics of Structures, ch. 3, Eq. 3.1.6, from memory), bounded by (p0/k)/(1-r) for
    all time."""
    dt, r = 0.002, 0.5
    t = np.arange(int(round(60.0 / dt)) + 1) * dt
    t, u = run_sdof(sdof(), P0 * np.sin(r * WN * t), dt, method)
    ref = sdof_undamped_harmonic_from_rest(P0, K1, WN, r * WN, t)
    bound = (P0 / K1) / (1 - r)
    assert np.abs(u).max() <= bound * (1 + 1e-3)
    assert np.abs(u).max() == pytest.approx(np.abs(ref).max(), rel=1e-3)
    # no growth: the last 20 s peak as high as the first 20 s
    n3 = len(u) // 3
    assert np.abs(u[-n3:]).max() == pytest.approx(np.abs(u[:n3]).max(), rel=1e-2)
    assert np.abs(u - ref).max() <= 2e-3 * bound


# ------------------------------------------------------------------ half-sine pulse

TD = 0.3        # pulse length, s (td / Tn = 0.3)


def pulse(t):
    return np.where(t <= TD + 1e-12, P0 * np.sin(np.pi * np.minimum(t, TD) / TD), 0.0)


@pytest.mark.parametrize("method, tol", [("newmark", 1e-4), ("state-space", 2e-5)])
def test_half_sine_pulse_matches_closed_form(method, tol):
    """Undamped SDOF under a half-cycle sine pulse: forced phase (p0/k)/(1-r^2) [sin(pi t/td)
    - r sin(wn t)], then free vibration (Chopra, Dynamics of Structures, ch. 4, sec. 4.8,
    from memory). dt = Tn / 1000: Newmark's error ~ (wn dt)^2 / 12 of the response,
    state-space's ~ the interpolation error of the load (pi dt / td)^2 / 8."""
    dt = 0.001
    t = np.arange(3001) * dt
    t, u = run_sdof(sdof(), pulse(t), dt, method)
    ref = sdof_half_sine_pulse(P0, K1, WN, TD, t)
    assert np.abs(u - ref).max() <= tol * np.abs(ref).max()
    # td / Tn = 0.3: the peak is reached during the free phase (Chopra, Fig. 4.8.x, from memory)
    assert t[np.abs(ref).argmax()] > TD


def test_newmark_average_acceleration_is_second_order():
    """Average acceleration (gamma = 1/2, beta = 1/4) is second-order accurate (Chopra,
    Dynamics of Structures, ch. 5, sec. 5.5, from memory): halving dt divides the error
    against the closed-form pulse response by 4 (observed order 2 +/- 0.2)."""
    errors = []
    for dt in (0.02, 0.01, 0.005, 0.0025):
        n = int(round(3.0 / dt))
        stride = int(round(0.02 / dt))
        t = np.arange(n + 1) * dt
        t, u = run_sdof(sdof(), pulse(t), dt, "newmark")
        ref = sdof_half_sine_pulse(P0, K1, WN, TD, t)
        errors.append(np.abs(u - ref)[::stride].max())
    order = np.log2(np.array(errors[:-1]) / np.array(errors[1:]))
    assert np.all(np.abs(order - 2.0) <= 0.2), order


@pytest.mark.parametrize("method", list(ss.METHODS))
def test_period_elongation_of_free_vibration(method):
    """Free vibration with dt = Tn / 20: Newmark average acceleration lengthens the period by
    about (wn dt)^2 / 12 (Chopra, Dynamics of Structures, ch. 5, sec. 5.5, Fig. 5.5.2,
    from memory); the exact state-space recurrence keeps the period. The period is
    measured from the zero crossings of 200 cycles."""
    dt = 1.0 / 20
    n = 20 * 200
    force = np.zeros(n + 1)
    force[0] = P0                       # a short triangular load, then free vibration
    t, u = run_sdof(sdof(), force, dt, method)
    crossings = zero_crossings(t[2:], u[2:])
    half_period = np.polyfit(np.arange(crossings.size), crossings, 1)[0]
    elongation = 2 * half_period / 1.0 - 1.0
    expected = (WN * dt) ** 2 / 12 if method == "newmark" else 0.0
    assert elongation == pytest.approx(expected, rel=2e-2, abs=1e-7)
    if method == "newmark":
        # exact phase of the trapezoidal rule: wbar dt = 2 arctan(wn dt / 2) (common practice,
        # from the eigenvalues of its amplification matrix; Hughes, The Finite Element
        # Method, ch. 9, from memory)
        x = WN * dt
        assert elongation == pytest.approx(x / (2 * math.atan(x / 2)) - 1, rel=1e-4)


def test_linear_acceleration_stability_limit():
    """Linear acceleration (gamma = 1/2, beta = 1/6) is stable for dt <= 0.551 T_N with T_N
    the shortest period (Chopra, Dynamics of Structures, ch. 5, Eq. 5.4.14, sqrt(3)/pi =
    0.5513, from memory). Below the limit the library runs; above it, it refuses with
    InputError. The reference loop confirms the limit: bounded below, growing above."""
    scheme = ss.NEWMARK_SCHEMES["linear-acceleration"]
    assert scheme["gamma"] == 0.5 and scheme["beta"] == pytest.approx(1 / 6, rel=1e-15)
    frame = ss.ShearFrame(**FRAME5, damping=ss.NoDamping())
    t_n = frame.periods()[-1]
    dt_cr = math.sqrt(3.0) / math.pi * t_n
    acc = band_limited_acceleration(3, 400, 0.06, corner=2.0)
    rec = ss.Record(acc, dt=0.06, units="m/s2")
    ds = ss.run(frame, rec, dt=0.98 * dt_cr, **scheme)
    assert np.isfinite(ds["displacement"].values).all()
    with pytest.raises(ss.InputError, match="dt"):
        ss.run(frame, rec, dt=1.02 * dt_cr, **scheme)

    M, K = shear_frame_matrices(FRAME5["mass"], FRAME5["stiffness"])
    P = np.zeros((400, 5))
    P[0, -1] = 1.0e5
    grow = {}
    for f in (0.98, 1.02):
        u, _, _ = newmark_dense(M, np.zeros((5, 5)), K, P, f * dt_cr, 0.5, 1 / 6)
        grow[f] = np.abs(u[-50:]).max() / np.abs(u[:50]).max()
    assert grow[0.98] < 2.0
    assert grow[1.02] > 1e6


@pytest.mark.parametrize("params", [{"gamma": 0.5, "beta": 0.1}, {"gamma": 0.6, "beta": 0.2}])
def test_conditional_stability_limit_of_the_newmark_family(params):
    """With 2 beta < gamma Newmark is stable for dt <= T_N / (pi sqrt(2)) / sqrt(gamma - 2 beta)
    (Chopra, Dynamics of Structures, ch. 5, Eq. 5.4.13, from memory): runs just below,
    refused just above."""
    frame = ss.ShearFrame(**FRAME5)
    rec = ss.Record(np.zeros(10), dt=0.05, units="g")
    t_n = frame.periods()[-1]
    dt_cr = t_n / (math.pi * math.sqrt(2)) / math.sqrt(params["gamma"] - 2 * params["beta"])
    ss.run(frame, rec, dt=0.99 * dt_cr, **params)
    with pytest.raises(ss.InputError):
        ss.run(frame, rec, dt=1.01 * dt_cr, **params)


@pytest.mark.parametrize("options", [dict(gamma=0.4), dict(beta=0.0), dict(beta=0.6), dict(gamma=math.nan),
                                     dict(alpha=0.1), dict(method="runge-kutta"),
                                     dict(method="state-space", gamma=0.5)])
def test_invalid_method_options_are_refused(options):
    """gamma < 1/2 adds negative numerical damping, beta must lie in (0, 1/2] (Chopra, ch. 5,
    from memory); unknown parameters and methods are user errors (InputError)."""
    frame = ss.ShearFrame(**FRAME5)
    rec = ss.Record(np.zeros(10), dt=0.01, units="g")
    with pytest.raises(ss.InputError):
        ss.run(frame, rec, **options)


# ----------------------------------------------------------- kernels vs reference


def _kernel_histories(frame, dt, ag, force, gamma, beta):
    """Run the Newmark batch kernel on one record carrying base acceleration and floor forces."""
    method = Newmark(gamma=gamma, beta=beta)
    prepared = method.prepare(frame, dt)
    T, n = force.shape
    outputs = tuple(np.empty((1, T, n)) for _ in range(5))
    method.integrate(frame, prepared, dt, ag[None, :].copy(), force[None].copy(), True,
                     np.array([T], dtype=np.int64), outputs)
    return prepared[0], outputs


@pytest.mark.parametrize("damping, path", [("rayleigh", "tridiagonal"), ("stiffness", "tridiagonal"),
                                           ("none", "tridiagonal"), ("modal", "dense")])
@pytest.mark.parametrize("gamma, beta", [(0.5, 0.25), (0.5, 1 / 6), (0.6, 0.3025)])
def test_newmark_kernels_equal_dense_reference(damping, path, gamma, beta):
    """The O(N) tridiagonal and the dense Newmark kernels equal the plain NumPy
    predictor-corrector loop in tests/reference.py (Hughes, The Finite Element Method,
    ch. 9) to 1e-12 relative, with base acceleration and floor forces applied together
    (p = -M iota a_g + f, Chopra, Dynamics of Structures, ch. 9 and 13)."""
    frame = ss.ShearFrame(**FRAME5, damping=DAMPING[damping])
    dt, T = 0.005, 600
    ag = band_limited_acceleration(5, T, dt, corner=10.0, peak=3.0)
    rng = np.random.default_rng(7)
    force = np.cumsum(rng.standard_normal((T, 5)), axis=0) * 2.0e3
    kind, (u_k, v_k, acc_k, drift_k, shear_k) = _kernel_histories(frame, dt, ag, force, gamma, beta)
    assert kind == path
    M, K = shear_frame_matrices(FRAME5["mass"], FRAME5["stiffness"])
    C = frame.damping_matrix()
    P = -np.outer(ag, np.diag(M)) + force
    u, v, a = newmark_dense(M, C, K, P, dt, gamma, beta)
    for got, want in ((u_k[0], u), (v_k[0], v), (acc_k[0], a + ag[:, None])):
        assert np.abs(got - want).max() <= 1e-12 * np.abs(want).max()
    drift = np.diff(np.column_stack([np.zeros(T), u]), axis=1) / np.array(FRAME5["height"])
    assert np.abs(drift_k[0] - drift).max() <= 1e-12 * np.abs(drift).max()
    shear = drift * np.array(FRAME5["height"]) * np.array(FRAME5["stiffness"])
    assert np.abs(shear_k[0] - shear).max() <= 1e-12 * np.abs(shear).max()
