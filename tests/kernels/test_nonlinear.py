"""Newton-Newmark kernel for hysteretic storeys and P-Delta against closed forms and
scipy.integrate.solve_ivp.

Every nonlinear analysis below is run with the default average-acceleration scheme
and its energy balance is checked (``assert_energy_balance``).
"""

import math

import numpy as np
import pytest

import simulate as ss
from reference import (
    bouc_wen_frame_ivp, elastoplastic_rectangular_pulse_peak, energy_balance_error, pdelta_period,
    undamped_rectangular_pulse_energy, zero_crossings,
)

from conftest import DAMPING, FRAME5, band_limited_acceleration

# SDOF used throughout: T = 1 s
M1 = 1.0e5                      # kg
W1 = 2.0 * math.pi              # rad/s
K1 = M1 * W1**2                 # N/m
H1 = 3.0                        # m
VY1 = 0.01 * K1                 # N, yield drift dy = 1 cm

ENERGIES = ("energy_input", "energy_kinetic", "energy_damping", "energy_strain", "energy_hysteretic")


def assert_energy_balance(ds, tol=0.01):
    """Energy balance error below ``tol`` for every record, recomputed from the energy
    histories by tests/reference.py::energy_balance_error (Uang and Bertero 1990; below 1 %
    as an accuracy check is common practice) and equal to the one reported."""
    error = energy_balance_error(*(ds[name].values for name in ENERGIES))
    np.testing.assert_allclose(ds["energy_balance_error"].values, error, rtol=1e-9, atol=1e-15)
    assert np.all(error < tol), error


def pulse(p0, td, dt, duration):
    """Rectangular pulse p0 on [0, td] sampled at dt; the sample at td (if any) carries p0 / 2
    so that the linear interpolation between samples keeps the impulse p0 td."""
    t = np.arange(int(round(duration / dt)) + 1) * dt
    p = np.where(t < td - 1e-9 * dt, p0, 0.0)
    p[np.abs(t - td) <= 1e-9 * dt] = 0.5 * p0
    return p


def sdof(**kw):
    kw.setdefault("damping", ss.NoDamping())
    return ss.ShearFrame(mass=M1, stiffness=K1, height=H1, **kw)


def run_force(frame, force, dt, **options):
    loads = ss.FloorForces(np.asarray(force, dtype=float)[:, None], dt=dt, name="p")
    return ss.run(frame, loads, **options)


# ---------------------------------------------------- elastoplastic SDOF, rectangular pulse


@pytest.mark.parametrize("ratio, td_over_t", [
    (0.8, 0.5),      # yields during the pulse, decelerates plastically (p0 < Vy) past its end
    (1.5, 0.2),      # yields just before the pulse ends, then the energy-based stop
    (1.2, 0.4),      # accelerates plastically during the pulse (p0 > Vy)
    (0.9, 0.2),      # yields only in the free vibration after the pulse
    (0.4, 0.6),      # stays elastic: peak 2 p0 / k
])
def test_elastoplastic_sdof_peak_under_a_rectangular_pulse(ratio, td_over_t):
    """Undamped elastoplastic SDOF (hardening 0) under a rectangular force pulse p0 = ratio Vy
    of length td: the peak displacement and the ductility equal the closed form derived phase
    by phase in tests/reference.py (elastic (p0/k)(1 - cos wt) until yield, constant net force
    while plastic, energy-based stop after the pulse; Biggs, Introduction to Structural
    Dynamics, ch. 2, and Chopra, Dynamics of Structures, ch. 7, both from memory). dt = T/1000:
    the kernel's error is O(dt^2), about 1e-5 here; tolerance 1e-4."""
    dt = 1.0e-3
    td = td_over_t * 1.0
    frame = sdof(yield_shear=VY1, hardening=0.0)
    ds = run_force(frame, pulse(ratio * VY1, td, dt, 3.0), dt)
    assert ds["status"].item() == "ok"
    u = ds["displacement"].isel(record=0, floor=0).values
    ref = elastoplastic_rectangular_pulse_peak(M1, K1, VY1, ratio * VY1, td)
    assert u.max() == pytest.approx(ref, rel=1e-4)
    assert ds["ductility"].item() == pytest.approx(ref / (VY1 / K1), rel=1e-4)
    if ratio == 0.4:
        assert ref == pytest.approx(2 * 0.4 * VY1 / K1, rel=1e-12)
        assert ds["hysteretic_energy"].item() == pytest.approx(0.0, abs=1e-9 * VY1 * VY1 / K1)
    else:
        assert ref > VY1 / K1 and ds["hysteretic_energy"].item() > 0
    assert_energy_balance(ds)


# -------------------------------------------------- Bouc-Wen frames vs solve_ivp


BW = dict(A=1.0, beta=0.5, gamma=0.5, n=2.0)
BW_FRAMES = {
    "sdof": dict(mass=[2.0e5], stiffness=[2.0e5 * (2 * math.pi / 0.6) ** 2], height=[3.5],
                 damping=ss.Rayleigh(0.05)),
    "three-storey": dict(mass=[3.0e5, 2.8e5, 2.2e5], stiffness=[3.0e8, 2.5e8, 1.8e8],
                         height=[4.0, 3.2, 3.2], damping=ss.Rayleigh(0.05, (1, 3))),
}


@pytest.mark.parametrize("name", list(BW_FRAMES))
def test_bouc_wen_frame_under_a_record_matches_solve_ivp(name):
    """Bouc-Wen storeys (yield shear 0.12 of the weight above, hardening 0.05) under a seeded
    3 s synthetic record (peak 4 m/s2): the storey drifts equal those of
    scipy.integrate.solve_ivp (DOP853, rtol 1e-10) on the first-order system with the
    hysteretic variables z_i as extra states (Wen 1976, from memory), the same
    piecewise-linear ground acceleration and the same Rayleigh C (frame.damping_matrix()).
    Analysis dt = 2.5 ms against the record's 10 ms; compared at the record samples: peak
    drift of every storey within 1e-3 (errors ~2e-4 at this dt), whole drift histories
    within 3e-3 of the peak."""
    kw = BW_FRAMES[name]
    m = np.array(kw["mass"])
    vy = 0.12 * 9.81 * np.cumsum(m[::-1])[::-1]
    frame = ss.ShearFrame(**kw, yield_shear=vy, hardening=0.05, law="bouc-wen", law_params=BW)
    rdt = 0.01
    ag = band_limited_acceleration(11, 300, rdt, corner=8.0, peak=4.0)
    ds = ss.run(frame, ss.Record(ag, dt=rdt, units="m/s2"), dt=0.0025)
    assert ds["status"].item() == "ok"
    assert np.all(ds["ductility"].values > 2.0)          # the storeys do yield
    drift = ds["drift_ratio"].isel(record=0).values[::4]
    u = bouc_wen_frame_ivp(m, kw["stiffness"], vy, 0.05, BW["A"], BW["beta"], BW["gamma"], BW["n"],
                           frame.damping_matrix(), ag, rdt)
    ref = np.diff(np.column_stack([np.zeros(len(u)), u]), axis=1) / np.array(kw["height"])
    peak, peak_ref = np.abs(drift).max(axis=0), np.abs(ref).max(axis=0)
    np.testing.assert_allclose(peak, peak_ref, rtol=1e-3)
    assert np.abs(drift - ref).max() <= 3e-3 * peak_ref.max()
    assert_energy_balance(ds)


# ------------------------------------------------------------------------- P-Delta


@pytest.mark.parametrize("law", ["linear", "bilinear"])
@pytest.mark.parametrize("p_ratio", [0.0, 0.2, 0.5])
def test_pdelta_free_vibration_period(law, p_ratio):
    """One storey with gravity load P = p_ratio k h: small free vibrations have the period
    2 pi sqrt(m / (k - P / h)) (linearised P-Delta, common practice). Measured from the zero
    crossings of 30 cycles; Newmark's period elongation (w dt)^2 / 12 = 2e-5 at dt = T / 400
    (Chopra, Dynamics of Structures, ch. 5, from memory) is inside the 1e-4 tolerance, a
    missing or doubled P / h is not. The bilinear storey has a yield shear it never reaches."""
    P = p_ratio * K1 * H1
    extra = dict(yield_shear=1e3 * VY1) if law == "bilinear" else {}
    frame = sdof(gravity_load=P, law=law, **extra)
    period = pdelta_period(M1, K1, P, H1)
    dt = period / 400
    force = np.zeros(int(round(30 * period / dt)) + 1)
    force[0] = 0.1 * VY1
    ds = run_force(frame, force, dt)
    t = ds["time"].values
    u = ds["displacement"].isel(record=0, floor=0).values
    crossings = zero_crossings(t[2:], u[2:])
    measured = 2 * np.polyfit(np.arange(crossings.size), crossings, 1)[0]
    assert measured == pytest.approx(period, rel=1e-4)
    assert_energy_balance(ds)


def test_negative_post_yield_slope_collapses_under_a_strong_pulse():
    """Elastoplastic storey with hardening 0.02 and P / h = 0.1 k: the net post-yield slope
    (0.02 - 0.1) k is negative, so once yielded far enough the storey cannot stop and the
    drift runs away (common practice: P-Delta instability). A 1.5 Vy pulse of 0.6 s drives it
    past the collapse drift (0.10): status "collapsed", the record stops at the first step
    beyond the limit, NaN after. Without the gravity load the same pulse leaves a bounded
    response well below the limit."""
    dt = 2.0e-3
    force = pulse(1.5 * VY1, 0.6, dt, 8.0)
    stable = run_force(sdof(yield_shear=VY1, hardening=0.02, damping=ss.Rayleigh(0.05)), force, dt)
    assert stable["status"].item() == "ok"
    assert stable["peak_drift_ratio"].item() < 0.05
    frame = sdof(yield_shear=VY1, hardening=0.02, gravity_load=0.1 * K1 * H1, damping=ss.Rayleigh(0.05))
    ds = run_force(frame, force, dt)
    assert ds["status"].item() == "collapsed"
    n = int(ds["n_steps"].item())
    drift = ds["drift_ratio"].isel(record=0, storey=0).values
    assert abs(drift[n - 1]) > 0.10
    assert np.all(np.abs(drift[:n - 1]) <= 0.10)
    assert np.isnan(drift[n:]).all() and n < drift.size
    # it ran away: the drift grew monotonically over the last second before collapse
    last = drift[n - int(1.0 / dt):n]
    assert np.all(np.diff(np.abs(last)) > 0)
    assert_energy_balance(ds)


# ------------------------------------------------------------------------ energies


ELASTIC = {
    "linear, zero gravity load": dict(law="linear", gravity_load=0.0),
    "bilinear": dict(law="bilinear", yield_shear=1e6 * VY1, hardening=0.05),
    "bouc-wen": dict(law="bouc-wen", yield_shear=1e6 * VY1),
    "peak-oriented": dict(law="peak-oriented", yield_shear=1e6 * VY1),
}


@pytest.mark.parametrize("name", list(ELASTIC))
def test_undamped_elastic_energy_after_a_pulse(name):
    """Undamped elastic SDOF in free vibration after a rectangular pulse (through the
    nonlinear kernel): the input energy stays constant and equals kinetic + strain energy to
    1e-8 (the trapezoidal energy sums are exact for average acceleration on a linear system,
    common practice), no hysteretic or damping energy appears, and the input energy equals
    2 (p0^2 / k) sin^2(w td / 2) (free-vibration amplitude after a rectangular pulse,
    Chopra, Dynamics of Structures, ch. 4, from memory) to the kernel's O(dt^2) ~ 1e-5."""
    dt, td, p0 = 1.0e-3, 0.37, 0.2 * VY1
    ds = run_force(sdof(**ELASTIC[name]), pulse(p0, td, dt, 5.0), dt)
    t = ds["time"].values
    E = {key: ds[key].isel(record=0).values for key in ENERGIES}
    after = t > td + 2 * dt
    e_in = E["energy_input"][after]
    assert np.ptp(e_in) <= 1e-12 * e_in.max()
    total = E["energy_kinetic"][after] + E["energy_strain"][after]
    assert np.abs(e_in - total).max() <= 1e-8 * e_in.max()
    assert np.abs(E["energy_hysteretic"]).max() <= 1e-8 * e_in.max()
    assert np.abs(E["energy_damping"]).max() == 0.0
    assert e_in[-1] == pytest.approx(undamped_rectangular_pulse_energy(K1, p0, W1, td), rel=1e-4)
    assert_energy_balance(ds, tol=1e-8)


HYSTERETIC = {
    "elastoplastic": dict(law="bilinear", hardening=0.0),
    "bilinear": dict(law="bilinear", hardening=0.05),
    "peak-oriented": dict(law="peak-oriented", hardening=0.02),
    "bouc-wen": dict(law="bouc-wen", hardening=0.02),
}


@pytest.mark.parametrize("name", list(HYSTERETIC))
def test_hysteretic_energy_equals_the_area_of_the_loops(name):
    """Damped (5 % Rayleigh) yielding SDOF under an 8 s record and 6 s of free vibration:
    the hysteretic energy reported (per storey and as a history) equals the area enclosed by
    the storey's force-deformation loops, computed here from the output histories by
    np.trapezoid of storey_shear against the storey deformation, less the elastic energy
    V^2 / (2 k) still stored at the end (unloading slope k; common practice). Tolerance 1e-6:
    without substeps the kernel sums the same trapezoids, and the stored elastic energy,
    ~4e-4 of the total here, must not go missing. For the
    elastoplastic storey the dissipated energy is also Vy times the accumulated plastic
    deformation sum |dd - dV / k| (common practice), within 1e-4 (steps that start to yield
    part-way put a small trapezoid error on that sum)."""
    kw = HYSTERETIC[name]
    frame = sdof(yield_shear=0.15 * M1 * 9.81, damping=ss.Rayleigh(0.05), **kw)
    rec = ss.Record(band_limited_acceleration(5, 800, 0.01, peak=4.0), dt=0.01, units="m/s2")
    ds = ss.run(frame, rec, dt=0.002, tail=6.0)
    assert ds["status"].item() == "ok" and ds["ductility"].item() > 2.0
    V = ds["storey_shear"].isel(record=0, storey=0).values
    d = ds["drift_ratio"].isel(record=0, storey=0).values * H1
    area = np.trapezoid(V, d) - V[-1] ** 2 / (2 * K1)
    assert area > 0
    assert ds["substepped_steps"].item() == 0
    assert ds["hysteretic_energy"].item() == pytest.approx(area, rel=1e-6)
    assert ds["energy_hysteretic"].isel(record=0).values[-1] == pytest.approx(area, rel=1e-6)
    plastic = np.abs(np.diff(d) - np.diff(V) / K1).sum()
    assert ds["cumulative_plastic_drift_ratio"].item() * H1 == pytest.approx(plastic, rel=1e-6)
    if name == "elastoplastic":
        assert area == pytest.approx(frame.yield_shear[0] * plastic, rel=1e-4)
    assert_energy_balance(ds)


# ------------------------------------------------------- strong frames are linear frames


HISTORY_VARIABLES = ("displacement", "velocity", "absolute_acceleration", "drift_ratio", "storey_shear")


def assert_same_histories(ds, ref, rtol):
    for name in HISTORY_VARIABLES:
        got, want = ds[name].values, ref[name].values
        assert np.abs(got - want).max() <= rtol * np.abs(want).max(), name


@pytest.mark.parametrize("damping", ["rayleigh", "stiffness", "none"])
@pytest.mark.parametrize("law", ["bilinear", "bouc-wen", "peak-oriented"])
def test_frame_that_never_yields_equals_its_linear_twin(law, damping):
    """A five-storey frame whose yield shears are far beyond any demand (1e20 N) gives the same
    histories as its linear twin (simulate.linear_twin) through the linear Newmark kernel,
    to 1e-10 of each history's peak (common practice: an elastic system is a linear
    system), and each step takes two Newton iterations: one solve and one check (Newton's
    method solves a linear residual in one step)."""
    rec = ss.Record(band_limited_acceleration(3, 500, 0.01, peak=3.0), dt=0.01, units="m/s2")
    frame = ss.ShearFrame(**FRAME5, damping=DAMPING[damping], yield_shear=1e20, hardening=0.05, law=law)
    twin = ss.linear_twin(frame)
    assert twin.is_linear and not frame.is_linear
    ds = ss.run(frame, rec)
    ref = ss.run(twin, rec)
    assert ds["status"].item() == "ok"
    assert_same_histories(ds, ref, 1e-10)
    assert ds["newton_iterations"].item() == 2 * (rec.n_steps - 1)
    assert_energy_balance(ds, tol=1e-8)


@pytest.mark.parametrize("damping", ["rayleigh", "rayleigh-unequal", "mass", "stiffness", "none", "modal"])
def test_linear_storeys_with_zero_gravity_load_equal_the_linear_kernel(damping):
    """A frame of linear storeys with gravity_load = 0 goes through the Newton-Newmark kernel
    (it carries a P-Delta term, of zero size) and must give the linear kernel's histories
    to 1e-10, with two Newton iterations a step, for every damping model - the tridiagonal
    ones and the full modal C, which the kernel solves densely (common practice: Newton
    on a linear residual converges in one step)."""
    rec = ss.Record(band_limited_acceleration(3, 500, 0.01, peak=3.0), dt=0.01, units="m/s2")
    frame = ss.ShearFrame(**FRAME5, damping=DAMPING[damping], gravity_load=0.0, law="linear")
    ds = ss.run(frame, rec)
    ref = ss.run(ss.linear_twin(frame), rec)
    assert ds["status"].item() == "ok"
    assert_same_histories(ds, ref, 1e-10)
    assert ds["newton_iterations"].item() == 2 * (rec.n_steps - 1)
    assert_energy_balance(ds, tol=1e-8)


# ------------------------------------------------------------- tangent-stiffness damping


def _tangent_pair(peak):
    rec = ss.Record(band_limited_acceleration(8, 800, 0.01, peak=peak), dt=0.01, units="m/s2")
    vy = 0.1 * 9.81 * np.cumsum(np.array(FRAME5["mass"])[::-1])[::-1]
    out = {}
    for stiffness in ("initial", "tangent"):
        frame = ss.ShearFrame(**FRAME5, yield_shear=vy, hardening=0.03,
                              damping=ss.Rayleigh(0.05, (1, 3), stiffness=stiffness))
        out[stiffness] = ss.run(frame, rec, tail=2.0)
    return out


def test_tangent_stiffness_damping_equals_initial_while_elastic():
    """Rayleigh damping on the tangent stiffness (a0 M + a1 K_t) is the same matrix as on the
    initial stiffness while every storey stays elastic, so the histories agree to 1e-12
    (common practice)."""
    runs = _tangent_pair(0.2)
    assert np.all(runs["initial"]["ductility"].values < 0.9)
    assert_same_histories(runs["tangent"], runs["initial"], 1e-12)
    for ds in runs.values():
        assert_energy_balance(ds)


def test_tangent_stiffness_damping_dissipates_less_once_storeys_yield():
    """Once storeys yield, the stiffness-proportional part a1 K_t shrinks with the tangent, so
    the viscous damping energy is smaller than with a1 K_0, which keeps spurious damping
    forces in yielded storeys (F. A. Charney (2008), "Unintended consequences of modeling
    damping in structures", J. Struct. Eng. 134(4), 581-592; J. F. Hall (2006), Earthquake
    Eng. Struct. Dyn. 35; both from memory). The hysteretic energy takes up part of the
    difference."""
    runs = _tangent_pair(5.0)
    assert runs["initial"]["ductility"].values.max() > 3.0
    e_init = runs["initial"]["energy_damping"].isel(record=0).values[-1]
    e_tan = runs["tangent"]["energy_damping"].isel(record=0).values[-1]
    assert e_tan < 0.95 * e_init
    h_init = runs["initial"]["energy_hysteretic"].isel(record=0).values[-1]
    h_tan = runs["tangent"]["energy_hysteretic"].isel(record=0).values[-1]
    assert h_tan > h_init
    for ds in runs.values():
        assert_energy_balance(ds)
