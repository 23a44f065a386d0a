"""ss.run: padding, free-vibration tail, resampling, batching and linearity."""

import math

import numpy as np
import pytest

import simulate as ss
from reference import free_vibration_classical

from conftest import DAMPING, FRAME5, band_limited_acceleration

METHODS = list(ss.METHODS)


def records(n_each=(600, 250, 420), dt=0.01):
    return [ss.Record(band_limited_acceleration(i + 1, n, dt), dt=dt, units="m/s2", name=f"r{i + 1}")
            for i, n in enumerate(n_each)]


@pytest.mark.parametrize("method", METHODS)
def test_short_records_are_nan_padded_after_their_end_and_tail(method, frame5):
    """Records shorter than the longest are padded with NaN after their own end plus the
    free-vibration tail; the ground acceleration is zero in the tail (DESIGN.md, results
    dataset schema)."""
    recs = records()
    ds = ss.run(frame5(), recs, method=method, tail=0.5)
    tail_steps = 50
    expected = np.array([600, 250, 420]) + tail_steps
    np.testing.assert_array_equal(ds["n_steps"].values, expected)
    assert ds.sizes["time"] == expected.max()
    np.testing.assert_allclose(ds["time"].values, np.arange(expected.max()) * 0.01, rtol=0, atol=1e-12)
    for r, (rec, n) in enumerate(zip(recs, expected)):
        for name in ("displacement", "velocity", "absolute_acceleration", "drift_ratio", "storey_shear"):
            x = ds[name].isel(record=r).values
            assert np.isfinite(x[:n]).all(), name
            assert np.isnan(x[n:]).all(), name
        ag = ds["ground_acceleration"].isel(record=r).values
        np.testing.assert_array_equal(ag[:rec.n_steps], rec.to_si())
        np.testing.assert_array_equal(ag[rec.n_steps:n], 0.0)
        assert np.isnan(ag[n:]).all()
    assert ds.attrs["analysis_dt"] == 0.01
    assert ds.attrs["method"] == method


@pytest.mark.parametrize("method", METHODS)
def test_free_vibration_tail_matches_damped_free_vibration(method, frame5):
    """In the tail the frame vibrates freely: from the state at the first step with a_g = 0
    on, the displacement equals the closed-form damped free vibration of a classically
    damped frame by mode superposition (Chopra, Dynamics of Structures, ch. 10-11 and
    Eq. 2.2.4, from memory), and the residual drift decays toward zero. Tolerances: round-off
    for the exact state-space recurrence; for Newmark at dt = 1 ms its phase error
    w1 t (w1 dt)^2 / 12 ~ 6e-4 rad after 6 s (Chopra, ch. 5, from memory)."""
    frame = frame5(DAMPING["rayleigh"])
    rec = records((500,))[0]
    dt = 0.01 if method == "state-space" else 0.001
    tail = 6.0
    ds = ss.run(frame, rec, method=method, tail=tail, dt=dt)
    start = int(round(rec.duration / dt)) + 1          # first step with a_g = 0
    u = ds["displacement"].isel(record=0).values
    v = ds["velocity"].isel(record=0).values
    n = int(ds["n_steps"].item())
    t = np.arange(n - start) * dt
    ref = free_vibration_classical(frame.mass_matrix(), frame.stiffness_matrix(), frame.damping_matrix(),
                                   u[start], v[start], t)
    tol = 1e-9 if method == "state-space" else 1e-3
    assert np.abs(u[start:n] - ref).max() <= tol * np.abs(ref).max()
    # decay: every mode decays at least as fast as exp(-zeta_1 w_1 t) with Rayleigh damping
    zw = 0.05 * 2 * math.pi / frame.periods()[0]
    drift = ds["drift_ratio"].isel(record=0).values
    residual = np.abs(ds["residual_drift_ratio"].isel(record=0).values)
    assert np.all(residual <= 5 * np.abs(drift[start:n]).max(axis=0) * math.exp(-zw * (tail - 0.5)))
    short = ss.run(frame, rec, method=method, tail=1.0, dt=dt)
    assert np.abs(ds["residual_drift_ratio"].values).max() < 0.1 * np.abs(short["residual_drift_ratio"].values).max()


@pytest.mark.parametrize("method", METHODS)
@pytest.mark.parametrize("dt", [0.005, 0.003])
def test_smaller_analysis_step_interpolates_records_linearly(method, dt, frame5):
    """An analysis step smaller than the record step samples the record by linear
    interpolation (numpy.interp, the general-purpose reference)."""
    rec = records((300,), dt=0.01)[0]
    ds = ss.run(frame5(), rec, method=method, dt=dt)
    n = int(math.floor(rec.duration / dt + 1e-9)) + 1
    t = np.arange(n) * dt
    ag = ds["ground_acceleration"].isel(record=0).values
    np.testing.assert_allclose(ag[:n], np.interp(t, rec.time, rec.to_si()), rtol=1e-13, atol=1e-15)
    assert ds.attrs["analysis_dt"] == dt


def test_records_with_different_steps_share_the_smallest(frame5):
    """With no dt given the analysis uses the smallest record step, interpolating the others
    (numpy.interp reference)."""
    a = ss.Record(band_limited_acceleration(1, 300, 0.02), dt=0.02, units="m/s2", name="coarse")
    b = ss.Record(band_limited_acceleration(2, 300, 0.005), dt=0.005, units="m/s2", name="fine")
    ds = ss.run(frame5(), [a, b])
    assert ds.attrs["analysis_dt"] == 0.005
    n = int(ds["n_steps"].sel(record="coarse"))
    t = np.arange(n) * 0.005
    np.testing.assert_allclose(ds["ground_acceleration"].sel(record="coarse").values[:n],
                               np.interp(t, a.time, a.to_si()), rtol=1e-13, atol=1e-15)
    np.testing.assert_array_equal(ds["record_dt"].values, [0.02, 0.005])


@pytest.mark.parametrize("bad", [dict(dt=0.02), dict(dt=0.0), dict(dt=-0.01), dict(dt=math.nan),
                                 dict(tail=-1.0), dict(scale=[1.0, 2.0]), dict(scale=math.inf)])
def test_bad_run_options_are_refused(bad, frame5):
    """An analysis step larger than the record step would skip peaks; other options must be
    finite and of the right size (project convention: InputError)."""
    rec = records((100,))[0]
    with pytest.raises(ss.InputError):
        ss.run(frame5(), rec, **bad)


def test_wrong_inputs_are_refused(frame5):
    """Floor forces must match the frame's floors; lists must hold records (InputError)."""
    with pytest.raises(ss.InputError, match="floors"):
        ss.run(frame5(), ss.FloorForces(np.ones((10, 3)), dt=0.01))
    with pytest.raises(ss.InputError):
        ss.run(frame5(), [np.ones(10)])
    with pytest.raises(ss.InputError):
        ss.run(frame5(), [])


@pytest.mark.parametrize("method", METHODS)
@pytest.mark.parametrize("damping", ["rayleigh", "modal"])
def test_results_do_not_depend_on_batching(method, damping, frame5):
    """Running records one by one equals running them together, bit for bit (DESIGN.md:
    the same job gives the same bytes whatever the batching or number of workers)."""
    frame = frame5(DAMPING[damping])
    recs = records()
    together = ss.run(frame, recs, method=method, tail=0.3)
    for rec in recs:
        alone = ss.run(frame, rec, method=method, tail=0.3)
        n = alone.sizes["time"]
        part = together.sel(record=rec.name).isel(time=slice(0, n))
        for name in ("ground_acceleration", "displacement", "velocity", "absolute_acceleration",
                     "drift_ratio", "storey_shear"):
            np.testing.assert_array_equal(part[name].values, alone[name].isel(record=0).values)
        for name in ("peak_drift_ratio", "residual_drift_ratio", "peak_floor_acceleration"):
            np.testing.assert_array_equal(part[name].values, alone[name].isel(record=0).values)


@pytest.mark.parametrize("method", METHODS)
def test_scaled_records_give_scaled_responses(method, frame5):
    """Linear frame: scaling the excitation scales every response by the same factor
    (linearity, common practice), to 1e-12 relative; per-record factors are applied to
    their own record."""
    frame = frame5(DAMPING["modal"])
    recs = records((400, 300))
    base = ss.run(frame, recs, method=method)
    scaled = ss.run(frame, recs, method=method, scale=[2.5, -0.4])
    for r, f in enumerate((2.5, -0.4)):
        for name in ("ground_acceleration", "displacement", "velocity", "absolute_acceleration", "drift_ratio",
                     "storey_shear"):
            want = f * base[name].isel(record=r).values
            got = scaled[name].isel(record=r).values
            np.testing.assert_allclose(got, want, rtol=0, atol=1e-12 * np.nanmax(np.abs(want)))
        np.testing.assert_allclose(scaled["peak_drift_ratio"].isel(record=r).values,
                                   abs(f) * base["peak_drift_ratio"].isel(record=r).values, rtol=1e-12)
    np.testing.assert_array_equal(scaled["scale_factor"].values, [2.5, -0.4])
    # units in g are converted with standard gravity (9.80665 m/s^2, CGPM 1901)
    in_g = ss.Record(recs[0].acceleration / 9.80665, dt=0.01, units="g", name="r1")
    g_ds = ss.run(frame, in_g, method=method)
    np.testing.assert_allclose(g_ds["displacement"].isel(record=0).values,
                               base["displacement"].isel(record=0).values, rtol=1e-12, atol=1e-15)


def test_results_carry_units_and_frame_properties(frame5):
    """Every variable has a units attribute; frame and modal properties are recorded
    (DESIGN.md, results dataset schema)."""
    frame = frame5()
    ds = ss.run(frame, records((100,)))
    for name, var in ds.data_vars.items():
        if var.dtype.kind == "f":
            assert "units" in var.attrs, name
    assert ds["drift_ratio"].attrs["units"] == "1"
    assert ds["displacement"].attrs["units"] == "m"
    assert ds["absolute_acceleration"].attrs["units"] == "m/s2"
    assert ds["storey_shear"].attrs["units"] == "N"
    np.testing.assert_array_equal(ds["floor_mass"].values, FRAME5["mass"])
    np.testing.assert_array_equal(ds["storey_stiffness"].values, FRAME5["stiffness"])
    np.testing.assert_allclose(ds["modal_period"].values, frame.periods(), rtol=1e-15)
    assert "caution" in ds.attrs and ds.attrs["damping"] == frame.damping.describe()
    assert list(ds["floor"].values) == [1, 2, 3, 4, 5]
