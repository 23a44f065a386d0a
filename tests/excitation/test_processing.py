"""Record processing checked against closed forms and general-purpose libraries
(numpy.linalg.lstsq, numpy.polyfit, scipy.signal, scipy.integrate)."""

import math

import numpy as np
import pytest
from scipy import integrate, signal

from simulate.errors import RecordError
from simulate.excitation import Record
from simulate.excitation.processing import (
    bandpass, baseline_correct, butterworth_sos, pad, resample, taper,
)

SOURCE = "motions/invented_r9.txt"


def record(values, dt=0.01, **metadata):
    return Record(acceleration=values, dt=dt, units="m/s2", name="r9",
                  metadata={"source": SOURCE, **metadata})


def orthogonal_sine(t, degree):
    """A sine with its least-squares polynomial part of the given degree removed
    (numpy.linalg.lstsq on a scaled Vandermonde basis), so a correct baseline fit leaves it alone."""
    s = np.sin(2 * np.pi * 1.3 * t + 0.4)
    x = (t - t.mean()) / (t.max() - t.mean())
    basis = np.vander(x, degree + 1)
    coefficients = np.linalg.lstsq(basis, s, rcond=None)[0]
    return s - basis @ coefficients


# ---------------------------------------------------------------- baseline
@pytest.mark.parametrize("order", [0, 1, 2, 3])
def test_polynomial_baseline_removed_from_acceleration(order):
    """A known polynomial added to a sine is removed to 1e-10: least squares reproduces any
    polynomial of the fitted degree exactly (closed form), and leaves a signal orthogonal to
    those polynomials unchanged (numpy.linalg.lstsq as the reference projection)."""
    t = np.arange(3001) * 0.01
    s = orthogonal_sine(t, order)
    coefficients = [0.05, -0.01, 4e-4, -1e-5][: order + 1]
    drift = np.polynomial.polynomial.polyval(t, coefficients)
    corrected = baseline_correct(record(s + drift), order=order)
    np.testing.assert_allclose(corrected.acceleration, s, rtol=0, atol=1e-10)
    np.testing.assert_allclose(baseline_correct(record(drift), order=order).acceleration, 0.0,
                               rtol=0, atol=1e-10)
    assert corrected.metadata["processing"] == [{"step": "baseline", "order": order, "on": "acceleration"}]
    assert corrected.metadata["source"] == SOURCE


def test_displacement_fit_removes_a_linear_acceleration_drift():
    """A linear acceleration drift doubly integrated is a cubic displacement (trapezoidal rule:
    exact up to a linear term, common practice), which a cubic fit removes exactly: the drift
    alone is reduced to zero (1e-10)."""
    t = np.arange(2001) * 0.01
    drift = 0.03 - 0.004 * t
    corrected = baseline_correct(record(drift), order=1, on="displacement")
    np.testing.assert_allclose(corrected.acceleration, 0.0, rtol=0, atol=1e-10)


@pytest.mark.parametrize("order", [0, 1])
def test_displacement_has_no_polynomial_trend_left(order):
    """After correction the doubly integrated displacement (scipy.integrate.cumulative_trapezoid)
    has least-squares polynomial coefficients of degree 2..order+2 equal to zero
    (numpy.polyfit as the independent fit): the defining property of fitting a polynomial to
    the displacement and removing its second derivative (Boore 2001, from memory)."""
    dt = 0.01
    t = np.arange(3001) * dt
    a = np.sin(2 * np.pi * 0.7 * t) * np.exp(-0.05 * t) + 0.002 + 0.0004 * t
    corrected = baseline_correct(record(a, dt), order=order, on="displacement")

    def trend(values):
        v = integrate.cumulative_trapezoid(values, dx=dt, initial=0.0)
        d = integrate.cumulative_trapezoid(v, dx=dt, initial=0.0)
        x = t / t[-1]
        return np.polyfit(x, d, order + 2)[: order + 1]      # degrees order+2 .. 2

    before = trend(a)
    after = trend(corrected.acceleration)
    assert np.abs(before).max() > 1.0
    np.testing.assert_allclose(after, 0.0, rtol=0, atol=1e-9 * np.abs(before).max())
    assert corrected.metadata["processing"][-1] == {"step": "baseline", "order": order, "on": "displacement"}


def test_baseline_argument_errors_name_the_file():
    rec = record(np.ones(5))
    for kwargs, fragment in [({"order": -1}, "baseline order must be a whole number >= 0"),
                             ({"on": "velocity"}, "on= must be 'acceleration' or 'displacement'"),
                             ({"order": 4}, "degree 4 needs more than 5 samples; the record has 5"),
                             ({"order": 2, "on": "displacement"}, "degree 4 needs more than 5")]:
        with pytest.raises(RecordError) as info:
            baseline_correct(rec, **kwargs)
        assert str(info.value).startswith(f"{SOURCE}: record 'r9': ") and fragment in str(info.value)


# ---------------------------------------------------------------- Butterworth
def butterworth_power(f, fs, n, low=None, high=None):
    """|H|^2 of a digital Butterworth filter designed through the bilinear transform with
    pre-warped corners: analog prototype 1 / (1 + x^(2n)) with x = W/Wc (low-pass), Wc/W
    (high-pass) or (W^2 - W1 W2) / (W (W2 - W1)) (band-pass), W = tan(pi f / fs)
    (Oppenheim and Schafer, Discrete-Time Signal Processing, ch. 7, from memory)."""
    w = np.tan(np.pi * np.asarray(f, dtype=float) / fs)
    if low is not None and high is not None:
        w1, w2 = np.tan(np.pi * low / fs), np.tan(np.pi * high / fs)
        x = (w * w - w1 * w2) / (w * (w2 - w1))
    elif high is not None:
        x = w / np.tan(np.pi * high / fs)
    else:
        x = np.tan(np.pi * low / fs) / w
    return 1.0 / (1.0 + x ** (2 * n))


@pytest.mark.parametrize("low, high", [(0.2, 12.0), (0.5, None), (None, 8.0)])
@pytest.mark.parametrize("order", [2, 4])
def test_design_is_the_butterworth_response(low, high, order):
    """The single-pass design has the closed-form Butterworth magnitude (checked with
    scipy.signal.sosfreqz) and -3.01 dB at each corner (common practice); run forward and
    backward that is -6.02 dB."""
    dt = 0.005
    fs = 1.0 / dt
    sos = butterworth_sos(low, high, dt, order)
    f = np.linspace(0.05, 90.0, 400)
    _, h = signal.sosfreqz(sos, worN=f, fs=fs)
    np.testing.assert_allclose(np.abs(h) ** 2, butterworth_power(f, fs, order, low, high),
                               rtol=1e-6, atol=1e-12)
    corners = [c for c in (low, high) if c is not None]
    _, hc = signal.sosfreqz(sos, worN=corners, fs=fs)
    np.testing.assert_allclose(20 * np.log10(np.abs(hc)), -10 * math.log10(2), atol=1e-6)
    np.testing.assert_allclose(2 * 20 * np.log10(np.abs(hc)), -6.0206, atol=1e-3)


def amplitude_and_phase(y, t, f):
    """Least-squares fit of a sin(w t) + b cos(w t): amplitude and phase lag (numpy.linalg.lstsq)."""
    w = 2 * np.pi * f
    (a, b), *_ = np.linalg.lstsq(np.column_stack([np.sin(w * t), np.cos(w * t)]), y, rcond=None)
    return math.hypot(a, b), math.atan2(b, a)


@pytest.mark.parametrize("f, expected", [
    (0.5, 0.5),      # low corner: -6 dB after two passes
    (10.0, 0.5),     # high corner
    (2.0, None),     # pass band: amplitude within 1 %
    (0.1, None),     # stop band: closed-form |H|^2
    (25.0, None),
])
def test_zero_phase_filter_on_sines(f, expected):
    """Sines through the zero-phase band-pass come out with amplitude |H(f)|^2 of the
    closed-form Butterworth response (two passes) and no phase shift
    (common practice for forward-backward filtering; scipy.signal.sosfiltfilt)."""
    dt = 0.005
    t = np.arange(int(80 / dt) + 1) * dt
    rec = record(np.sin(2 * np.pi * f * t), dt)
    out = bandpass(rec, 0.5, 10.0, order=4)
    middle = (t > 25) & (t < 55)
    amplitude, phase = amplitude_and_phase(out.acceleration[middle], t[middle], f)
    power = butterworth_power(f, 1 / dt, 4, 0.5, 10.0)
    if expected is not None:
        assert power == pytest.approx(expected, rel=1e-9)
    assert amplitude == pytest.approx(power, rel=1e-3, abs=1e-5)
    if power > 0.1:
        assert abs(phase) < 1e-3
    if 1.0 < f < 5.0:
        assert amplitude == pytest.approx(1.0, rel=0.01)
    step = out.metadata["processing"][-1]
    assert step["step"] == "bandpass" and (step["low"], step["high"], step["order"]) == (0.5, 10.0, 4)


def test_high_pass_and_low_pass():
    """low or high may be None: a low-pass keeps a 0.3 Hz sine and removes 20 Hz, a high-pass
    the other way round (closed-form Butterworth power as the reference)."""
    dt = 0.01
    t = np.arange(6001) * dt
    slow, fast = np.sin(2 * np.pi * 0.3 * t), np.sin(2 * np.pi * 20.0 * t)
    middle = (t > 20) & (t < 40)
    low_passed = bandpass(record(slow + fast, dt), None, 5.0).acceleration
    np.testing.assert_allclose(low_passed[middle], slow[middle], atol=1e-3)
    high_passed = bandpass(record(slow + fast, dt), 5.0, None).acceleration
    np.testing.assert_allclose(high_passed[middle], fast[middle], atol=2e-3)


@pytest.mark.parametrize("low, high, fragment", [
    (0.1, 50.0, "high corner 50 Hz must be below the Nyquist frequency 50 Hz (dt = 0.01 s)"),
    (60.0, None, "low corner 60 Hz must be below the Nyquist frequency"),
    (5.0, 2.0, "low corner 5 Hz must be below high corner 2 Hz"),
    (None, None, "give a low corner, a high corner or both"),
    (-1.0, 5.0, "low corner must be > 0"),
    ("x", 5.0, "low corner must be a finite number"),
])
def test_filter_corner_errors_name_the_file(low, high, fragment):
    with pytest.raises(RecordError) as info:
        bandpass(record(np.ones(500)), low, high)
    assert str(info.value).startswith(f"{SOURCE}: record 'r9': ") and fragment in str(info.value)


def test_filter_order_must_be_a_positive_whole_number():
    with pytest.raises(RecordError, match="filter order must be a whole number >= 1"):
        bandpass(record(np.ones(500)), 0.5, 5.0, order=0)


# ---------------------------------------------------------------- taper
def test_taper_zero_at_the_ends_one_in_the_middle():
    """Both ends: exactly 0 at the first and last sample, 1 between the tapers, and the
    same weights as scipy.signal.windows.tukey with alpha = 2 m / (n - 1)."""
    n, m = 1001, 100
    rec = record(np.ones(n))
    out = taper(rec, duration=m * rec.dt)
    w = out.acceleration
    assert w[0] == 0.0 and w[-1] == 0.0
    np.testing.assert_array_equal(w[m:n - m], 1.0)
    np.testing.assert_allclose(w, signal.windows.tukey(n, alpha=2 * m / (n - 1)), rtol=0, atol=1e-14)
    # half way up the ramp the half cosine is 0.5 (closed form 0.5 (1 - cos(pi/2)))
    assert w[m // 2] == pytest.approx(0.5, abs=1e-15)
    assert out.metadata["processing"] == [{"step": "taper", "side": "both",
                                           "duration": pytest.approx(1.0), "window": "half-cosine"}]


def test_taper_one_side_and_fraction():
    values = np.linspace(1.0, 2.0, 401)
    start = taper(record(values), fraction=0.1, side="start").acceleration
    assert start[0] == 0.0 and start[-1] == 2.0
    np.testing.assert_array_equal(start[41:], values[41:])
    end = taper(record(values), duration=0.4, side="end").acceleration
    assert end[-1] == 0.0
    np.testing.assert_array_equal(end[:-41], values[:-41])


@pytest.mark.parametrize("kwargs, fragment", [
    ({}, "give the taper length as duration= (s) or fraction=, not both or neither"),
    ({"duration": 1.0, "fraction": 0.1}, "not both or neither"),
    ({"duration": 0.001}, "shorter than one step"),
    ({"duration": 0.6}, "longer than the record"),
    ({"fraction": 0.6}, "taper fraction must be <= 0.5"),
    ({"duration": 0.1, "side": "middle"}, "taper side must be 'both', 'start' or 'end'"),
])
def test_taper_errors(kwargs, fragment):
    with pytest.raises(RecordError) as info:
        taper(record(np.ones(101)), **kwargs)
    assert str(info.value).startswith(f"{SOURCE}: record 'r9': ") and fragment in str(info.value)


# ---------------------------------------------------------------- resample
def band_limited(t):
    """Sum of three sines well below every Nyquist frequency in these tests (closed form)."""
    return (0.4 * np.sin(2 * np.pi * 0.7 * t + 0.3) + 0.25 * np.sin(2 * np.pi * 2.3 * t)
            + 0.1 * np.cos(2 * np.pi * 4.1 * t))


@pytest.mark.parametrize("dt, new_dt, method", [
    (0.01, 0.005, "polyphase"),      # up by 2
    (0.01, 0.02, "polyphase"),       # down by 2
    (0.005, 0.0125, "polyphase"),    # 2/5
    (0.005, 0.00731, "linear"),      # no small fraction
    (0.004, 0.01731, "linear"),      # coarser, anti-aliased first
])
def test_resample_reproduces_a_band_limited_signal(dt, new_dt, method):
    """Resampling a band-limited signal reproduces the analytic signal at the new times within
    1e-3 away from the edges (scipy.signal.resample_poly, or linear interpolation whose error
    is at most dt^2 max|a''| / 8 -- at most 4e-4 here, common numerical analysis)."""
    t = np.arange(int(30 / dt) + 1) * dt
    out = resample(record(band_limited(t), dt), new_dt)
    assert out.dt == new_dt
    assert out.n_steps == math.floor(30 / new_dt + 1e-9) + 1
    new_t = np.arange(out.n_steps) * new_dt
    inner = (new_t > 3) & (new_t < 27)
    np.testing.assert_allclose(out.acceleration[inner], band_limited(new_t[inner]), rtol=0, atol=1e-3)
    step = out.metadata["processing"][-1]
    assert step["step"] == "resample" and step["method"] == method
    assert step["dt_from"] == dt and step["dt"] == new_dt


@pytest.mark.parametrize("new_dt", [0.02, 0.0217])
def test_downsampling_removes_what_the_new_step_cannot_carry(new_dt):
    """A 40 Hz component sampled at 200 Hz is above the new Nyquist frequency (25 or 23 Hz):
    it must be filtered out, not folded back as an alias (sampling theorem, common practice)."""
    dt = 0.005
    t = np.arange(int(30 / dt) + 1) * dt
    out = resample(record(band_limited(t) + 0.5 * np.sin(2 * np.pi * 40.0 * t), dt), new_dt)
    new_t = np.arange(out.n_steps) * new_dt
    inner = (new_t > 3) & (new_t < 27)
    np.testing.assert_allclose(out.acceleration[inner], band_limited(new_t[inner]), rtol=0, atol=5e-3)


def test_resample_errors():
    with pytest.raises(RecordError, match="new time step dt must be > 0"):
        resample(record(np.ones(10)), 0.0)
    with pytest.raises(RecordError, match="longer than the record"):
        resample(record(np.ones(10)), 1.0)


# ---------------------------------------------------------------- pad
def test_pad_keeps_the_values():
    values = np.array([0.3, -0.1, 0.2])
    out = pad(record(values, 0.01), before=0.05, after=0.02)
    np.testing.assert_array_equal(out.acceleration, [0, 0, 0, 0, 0, 0.3, -0.1, 0.2, 0, 0])
    assert out.dt == 0.01 and out.units == "m/s2" and out.name == "r9"
    assert out.metadata["processing"] == [{"step": "pad", "before": pytest.approx(0.05),
                                           "after": pytest.approx(0.02)}]
    with pytest.raises(RecordError, match="padding before must be >= 0"):
        pad(record(values), before=-1.0)


# ---------------------------------------------------------------- provenance
def test_steps_accumulate_in_order_after_scaling():
    """Each step appends one entry, after the {'step': 'scale'} entry of Record.scaled;
    the input record is never changed."""
    t = np.arange(2001) * 0.01
    rec = record(np.sin(2 * np.pi * t)).scaled(2.0)
    out = pad(resample(taper(bandpass(baseline_correct(rec), 0.2, 10.0), duration=1.0), 0.005), after=2.0)
    steps = [entry["step"] for entry in out.metadata["processing"]]
    assert steps == ["scale", "baseline", "bandpass", "taper", "resample", "pad"]
    assert out.metadata["scale_factor"] == 2.0 and out.metadata["source"] == SOURCE
    assert [entry["step"] for entry in rec.metadata["processing"]] == ["scale"]


def test_functions_expect_a_record():
    for function in (baseline_correct, lambda r: bandpass(r, 1.0, 2.0), lambda r: taper(r, 1.0),
                     lambda r: resample(r, 0.01), pad):
        with pytest.raises(RecordError, match="expects a Record, got list"):
            function([1.0, 2.0])
