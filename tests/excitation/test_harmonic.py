"""Harmonic ground motion and floor forces against their closed form."""

import math

import numpy as np
import pytest

from simulate.errors import InputError
from simulate.excitation import harmonic_floor_force, harmonic_ground_motion


def closed_form(amplitude, frequency, t, phase=0.0, ramp=0.0):
    """a(t) = A r(t) sin(2 pi f t + phase) with the half-cosine ramp r, written out independently."""
    r = np.where(t < ramp, 0.5 * (1.0 - np.cos(np.pi * t / max(ramp, 1e-300))), 1.0)
    return amplitude * r * np.sin(2.0 * np.pi * frequency * t + phase)


def test_samples_equal_closed_form_sine():
    """Steady harmonic excitation p0 sin(omega t) (Chopra, Dynamics of Structures, ch. 3.1)."""
    rec = harmonic_ground_motion(0.25, 2.5, 8.0, 0.005, phase=0.3)
    t = np.arange(1601) * 0.005
    assert rec.n_steps == 1601
    assert rec.time[-1] == pytest.approx(8.0)
    assert rec.units == "g" and rec.name == "harmonic-2.50Hz"
    np.testing.assert_allclose(rec.acceleration, closed_form(0.25, 2.5, t, 0.3), rtol=0, atol=1e-14)


def test_ramp_starts_at_zero_and_joins_the_sine():
    """Half-cosine ramp: r(0) = 0, r(ramp / 2) = 1/2, r = 1 from t = ramp on (closed form)."""
    ramp, f, dt = 2.0, 1.5, 0.01
    rec = harmonic_ground_motion(3.0, f, 10.0, dt, units="m/s2", ramp=ramp, phase=math.pi / 2)
    t = rec.time
    assert rec.acceleration[0] == 0.0
    mid = int(round(1.0 / dt))
    # sin(2 pi 1.5 * 1.0 + pi / 2) = cos(3 pi) = -1, so a = 3 * 0.5 * -1
    assert rec.acceleration[mid] == pytest.approx(-1.5, abs=1e-12)
    after = t >= ramp
    steady = 3.0 * np.sin(2 * np.pi * f * t[after] + math.pi / 2)
    np.testing.assert_allclose(rec.acceleration[after], steady, rtol=0, atol=1e-12)
    np.testing.assert_allclose(rec.acceleration, closed_form(3.0, f, t, math.pi / 2, ramp), atol=1e-12)
    # the ramp never amplifies the sine
    assert np.all(np.abs(rec.acceleration[~after]) <= 3.0 * np.abs(np.sin(2 * np.pi * f * t[~after] + math.pi / 2)) + 1e-15)


def test_ramp_reduces_start_up_transient():
    """Undamped SDOF under a sine from rest: the free-vibration part of the response is
    smaller with a smooth ramp. Closed form for an abrupt start: Chopra, Dynamics of
    Structures, sec. 3.1 (undamped harmonic vibration; the transient term has amplitude
    (omega / omega_n) times the steady amplitude; recalled from memory). Response
    computed with scipy.signal.lsim."""
    from scipy import signal

    fn, f = 1.0, 0.6  # natural and forcing frequency, Hz
    wn, w = 2 * np.pi * fn, 2 * np.pi * f
    system = signal.lti([1.0], [1.0, 0.0, wn**2])  # u'' + wn^2 u = p(t)
    steady_amplitude = 1.0 / (wn**2 - w**2)

    def transient(ramp):
        rec = harmonic_ground_motion(1.0, f, 40.0, 0.005, units="m/s2", ramp=ramp)
        _, u, _ = signal.lsim(system, rec.acceleration, rec.time)
        late = rec.time > 10.0
        steady = steady_amplitude * np.sin(w * rec.time[late])
        return np.max(np.abs(u[late] - steady))

    abrupt, smooth = transient(0.0), transient(5.0)
    # Chopra sec. 3.1: free vibration amplitude (w / wn) * steady amplitude for an abrupt start
    assert abrupt == pytest.approx(f / fn * steady_amplitude, rel=0.05)
    assert smooth < 0.3 * abrupt


def test_floor_force_columns():
    """Listed floors carry A_k sin(2 pi f t); unlisted floors stay exactly zero (column j = floor j + 1)."""
    loads = harmonic_floor_force([1000.0, 2500.0], 2.0, 5.0, 0.01, floors=[4, 2], n_floors=5)
    t = loads.time
    assert loads.force.shape == (501, 5)
    np.testing.assert_allclose(loads.force[:, 3], closed_form(1000.0, 2.0, t), atol=1e-10)
    np.testing.assert_allclose(loads.force[:, 1], closed_form(2500.0, 2.0, t), atol=1e-10)
    for column in (0, 2, 4):
        assert np.all(loads.force[:, column] == 0.0)
    assert loads.metadata["floors"] == [4, 2]


def test_floor_force_scalar_amplitude_at_each_floor():
    """A single amplitude applies to every listed floor."""
    loads = harmonic_floor_force(500.0, 1.0, 3.0, 0.02, floors=(1, 3), n_floors=3, ramp=1.0)
    np.testing.assert_array_equal(loads.force[:, 0], loads.force[:, 2])
    np.testing.assert_allclose(loads.force[:, 0], closed_form(500.0, 1.0, loads.time, ramp=1.0), atol=1e-10)


@pytest.mark.parametrize(
    "floors, n_floors, fragment",
    [
        ([0], 3, "floor 0 does not exist"),
        ([4], 3, "floor 4 does not exist"),
        ([1, 1], 3, "listed twice"),
        ([1.5], 3, "whole numbers"),
        ([True], 3, "whole numbers"),
        ([], 3, "empty"),
        ([1], 0, "n_floors"),
    ],
)
def test_floors_validated(floors, n_floors, fragment):
    """Floors are 1..N from the ground up (project convention); other numbers are refused."""
    with pytest.raises(InputError, match=fragment):
        harmonic_floor_force(1.0, 1.0, 2.0, 0.01, floors=floors, n_floors=n_floors)


def test_amplitude_count_must_match_floors():
    with pytest.raises(InputError, match="3 amplitudes given for 2 floors"):
        harmonic_floor_force([1.0, 2.0, 3.0], 1.0, 2.0, 0.01, floors=[1, 2], n_floors=3)


@pytest.mark.parametrize(
    "args, fragment",
    [
        ((float("nan"), 1.0, 2.0, 0.01), "amplitude"),
        ((1.0, 0.0, 2.0, 0.01), "frequency"),
        ((1.0, 1.0, -2.0, 0.01), "duration"),
        ((1.0, 1.0, 2.0, 0.0), "dt"),
        ((1.0, 1.0, 0.005, 0.01), "shorter than one time step"),
    ],
)
def test_bad_parameters(args, fragment):
    with pytest.raises(InputError, match=fragment):
        harmonic_ground_motion(*args)


def test_coarse_time_step_refused_with_numbers():
    """At least 10 samples per cycle: f dt = 5 Hz * 0.05 s = 0.25 > 0.1 is refused, 0.1 accepted."""
    with pytest.raises(InputError) as info:
        harmonic_ground_motion(0.1, 5.0, 2.0, 0.05)
    assert "0.05" in str(info.value) and "5 Hz" in str(info.value) and "0.02" in str(info.value)
    assert harmonic_ground_motion(0.1, 5.0, 2.0, 0.02).n_steps == 101
