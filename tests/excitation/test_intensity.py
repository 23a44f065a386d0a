"""Intensity measures against closed forms from their definitions."""

from __future__ import annotations

import math

import numpy as np
import pytest

import simulate as ss
from simulate.errors import InputError
from simulate.excitation import intensity as im
from simulate.excitation.spectra import response_spectrum

from conftest import band_limited_acceleration

G = ss.STANDARD_GRAVITY


def sine(A=2.0, f=1.0, D=25.0, per_cycle=200, units="m/s2"):
    """A sin(2 pi f t) over D seconds (whole cycles), ``per_cycle`` samples per cycle."""
    dt = 1.0 / (f * per_cycle)
    t = np.arange(int(round(D / dt)) + 1) * dt
    return ss.Record(A * np.sin(2 * np.pi * f * t), dt=dt, units=units, name="sine")


def test_arias_intensity_of_a_sine():
    """I_a = pi / (2 g) * integral of a^2 dt (Arias 1970); for A sin over whole cycles of total
    length D the integral is A^2 D / 2, so I_a = (pi / 2g) A^2 D / 2 (closed form from the
    definition). The sampled sine is integrated as linear between samples, which at 200 points
    per cycle changes the integral by about (2 pi / 200)^2 / 6 = 1.6e-4, so 5e-4 is allowed."""
    A, D = 2.0, 25.0
    want = math.pi / (2 * G) * A * A * D / 2
    assert im.arias_intensity(sine(A=A, D=D)) == pytest.approx(want, rel=5e-4)
    assert im.cumulative_arias(sine(A=A, D=D))[-1] == pytest.approx(want, rel=5e-4)


def test_arias_intensity_of_a_linear_ramp_is_exact():
    """For acceleration linear in time the integral of a^2 is exact: a = c t on [0, D] gives
    c^2 D^3 / 3 (calculus), whatever the sampling."""
    c, dt, n = 0.7, 0.05, 41
    rec = ss.Record(c * np.arange(n) * dt, dt=dt, units="m/s2")
    D = (n - 1) * dt
    assert im.arias_intensity(rec) == pytest.approx(math.pi / (2 * G) * c * c * D**3 / 3, rel=1e-13)


def test_significant_duration_of_a_stationary_sine():
    """D5-95 (Trifunac and Brady 1975) of a stationary sine is 0.9 D (from the definition): the
    Husid curve of A sin(w t) is (t - sin(2 w t) / (2 w)) / D, so the 5 % and 95 % times are
    0.05 D and 0.95 D where sin(2 w t) = 0; with f = 1 Hz and D = 25 s they fall at 1.25 s and
    23.75 s, where it is."""
    D = 25.0
    assert im.significant_duration(sine(D=D)) == pytest.approx(0.9 * D, rel=1e-4)
    # other fractions: 0.2 D to 0.7 D (5 s and 17.5 s are also zeros of sin(2 w t))
    assert im.significant_duration(sine(D=D), 0.2, 0.7) == pytest.approx(0.5 * D, rel=1e-4)


def test_significant_duration_inside_a_step_follows_the_interpolated_record():
    """Constant acceleration: the Husid curve is linear in t, so D5-95 = 0.9 D exactly even when
    the 5 % and 95 % points fall inside steps (calculus)."""
    rec = ss.Record(np.full(8, 0.3), dt=0.1, units="g")
    assert im.significant_duration(rec) == pytest.approx(0.9 * 0.7, rel=1e-12)


def test_cav_of_a_sine():
    """CAV = integral of |a| dt; for A sin over whole cycles of length D it is (2 / pi) A D (closed
    form from the definition: the mean of |sin| is 2 / pi). Zero crossings between samples are
    integrated exactly for the interpolated record (two triangles)."""
    A, D = 2.0, 25.0
    assert im.cumulative_absolute_velocity(sine(A=A, D=D)) == pytest.approx(2 / math.pi * A * D, rel=2e-4)
    # one step from +a to -a: two triangles of area a dt / 4 each
    rec = ss.Record([1.0, -1.0], dt=0.2, units="m/s2")
    assert im.cumulative_absolute_velocity(rec) == pytest.approx(0.1, rel=1e-14)


def test_pgv_pgd_of_a_constant_acceleration_pulse():
    """Kinematics from rest under constant acceleration A for t1 seconds (calculus): v = A t,
    d = A t^2 / 2. The sampled pulse (A at 0, dt, ..., t1, then 0) is linear between samples, so
    it falls to zero over the step after t1: at t1 + dt the velocity is v1 = A t1 + A dt / 2 and
    the displacement d1 = A t1^2 / 2 + A t1 dt + A dt^2 / 3, after which d grows as d1 + v1 (t - t1 - dt).
    PGV and PGD (at the end) match these closed forms to round-off."""
    A, t1, dt, end = 1.5, 0.8, 0.01, 2.0
    n = int(round(end / dt)) + 1
    k1 = int(round(t1 / dt))
    a = np.zeros(n)
    a[:k1 + 1] = A
    rec = ss.Record(a, dt=dt, units="m/s2")
    v = im.ground_velocity(rec)
    d = im.ground_displacement(rec)
    t = np.arange(n) * dt
    during = t <= t1 + 1e-12
    np.testing.assert_allclose(v[during], A * t[during], rtol=1e-12, atol=1e-15)
    np.testing.assert_allclose(d[during], A * t[during] ** 2 / 2, rtol=1e-12, atol=1e-15)
    v1 = A * t1 + A * dt / 2
    d1 = A * t1**2 / 2 + A * t1 * dt + A * dt**2 / 3
    ds = im.intensity_measures(rec)
    assert float(ds["pgv"][0]) == pytest.approx(v1, rel=1e-12)
    assert float(ds["pgd"][0]) == pytest.approx(d1 + v1 * (end - t1 - dt), rel=1e-12)


def test_no_baseline_correction():
    """A record with a constant offset c drifts: v(T) = c T, as the integral says (no correction)."""
    rec = ss.Record(np.full(101, 0.01), dt=0.01, units="m/s2")
    assert im.ground_velocity(rec)[-1] == pytest.approx(0.01 * 1.0, rel=1e-12)


def test_intensity_dataset():
    """Variables, units and Sa: Sa equals the spectrum's PSA; sa_avg is the geometric mean of PSA
    at 10 periods from 0.2 T to 3 T (the definition of the average spectral acceleration; range
    as in Eads, Miranda and Lignos 2015, from memory)."""
    recs = [ss.Record(band_limited_acceleration(s, 1000, 0.01), dt=0.01, units="m/s2", name=f"n{s}")
            for s in (1, 2)]
    periods = [0.3, 1.0]
    ds = im.intensity_measures(recs, periods, damping=0.05)
    units = {"pga": "g", "pgv": "m/s", "pgd": "m", "arias_intensity": "m/s",
             "significant_duration": "s", "cumulative_absolute_velocity": "m/s", "duration": "s",
             "sa": "g", "sa_avg": "g"}
    for name, unit in units.items():
        assert ds[name].attrs["units"] == unit
    assert ds.attrs["caution"] == ss.CAUTION
    np.testing.assert_allclose(ds["pga"].values, [r.pga / G for r in recs], rtol=1e-15)
    spec = response_spectrum(recs, periods, 0.05)
    np.testing.assert_allclose(ds["sa"].values, spec["psa"].values, rtol=1e-12)
    for p, T in enumerate(periods):
        around = response_spectrum(recs, np.geomspace(0.2 * T, 3.0 * T, 10), 0.05)["psa"].values
        np.testing.assert_allclose(ds["sa_avg"].values[:, p], np.exp(np.log(around).mean(axis=1)),
                                   rtol=1e-12)
    # the same motion in other units gives the same measures
    in_g = [r.in_units("g") for r in recs]
    again = im.intensity_measures(in_g, periods)
    for name in units:
        np.testing.assert_allclose(again[name].values, ds[name].values, rtol=1e-12)
    assert "period" not in im.intensity_measures(recs).dims


def test_zero_record():
    rec = ss.Record(np.zeros(50), dt=0.01, units="g")
    ds = im.intensity_measures(rec)
    assert float(ds["arias_intensity"][0]) == 0.0 and float(ds["pga"][0]) == 0.0
    assert math.isnan(float(ds["significant_duration"][0]))


@pytest.mark.parametrize("call, fragment", [
    (lambda r: im.intensity_measures(r, [-1.0]), ">= 0"),
    (lambda r: im.intensity_measures(r, [1.0], damping=2.0), "damping ratio"),
    (lambda r: im.intensity_measures(r, [1.0], average_range=(3.0, 0.2)), "average_range"),
    (lambda r: im.intensity_measures(r, [1.0], average_count=1), "average_count"),
    (lambda r: im.significant_duration(r, 0.95, 0.05), "below stop"),
    (lambda r: im.arias_intensity([1.0, 2.0]), "expected a Record"),
])
def test_input_errors(call, fragment):
    rec = ss.Record(np.sin(np.arange(100) * 0.2), dt=0.01, units="g")
    with pytest.raises(InputError) as info:
        call(rec)
    assert fragment in str(info.value) and "\n" not in str(info.value)
