"""Envelopes against NumPy on the histories, and the histories against the equation of motion."""

import numpy as np
import pytest

import simulate as ss

from conftest import DAMPING, FRAME5


@pytest.fixture(scope="module")
def suite_results():
    """Three records of different lengths (NaN padding) with a free-vibration tail."""
    from conftest import band_limited_acceleration

    frame = ss.ShearFrame(**FRAME5, damping=DAMPING["rayleigh"])
    recs = [ss.Record(band_limited_acceleration(s, n, 0.01, peak=p), dt=0.01, units="m/s2", name=f"r{s}")
            for s, n, p in ((1, 700, 2.0), (2, 400, 3.5), (3, 550, 1.0))]
    recs.append(ss.Record(np.zeros(300), dt=0.01, units="g", name="at-rest"))
    return ss.run(frame, recs, tail=1.5)


def test_envelopes_equal_numpy_on_the_histories(suite_results):
    """Peaks are max over time of |x| skipping the NaN padding; the residual drift is the
    drift at each record's last valid step (definitions, DESIGN.md); numpy.nanmax is
    the general-purpose reference. Equality is exact."""
    ds = suite_results
    env = ss.envelopes(ds)
    drift = ds["drift_ratio"].transpose("record", "time", "storey").values
    shear = ds["storey_shear"].transpose("record", "time", "storey").values
    acc = ds["absolute_acceleration"].transpose("record", "time", "floor").values
    disp = ds["displacement"].transpose("record", "time", "floor").values
    nsteps = ds["n_steps"].values
    np.testing.assert_array_equal(env["peak_drift_ratio"].values, np.nanmax(np.abs(drift), axis=1))
    np.testing.assert_array_equal(env["peak_floor_acceleration"].values, np.nanmax(np.abs(acc), axis=1))
    np.testing.assert_array_equal(env["peak_storey_shear"].values, np.nanmax(np.abs(shear), axis=1))
    np.testing.assert_array_equal(env["peak_base_shear"].values, np.nanmax(np.abs(shear[:, :, 0]), axis=1))
    np.testing.assert_array_equal(env["peak_roof_displacement"].values, np.nanmax(np.abs(disp[:, :, -1]), axis=1))
    residual = np.array([drift[r, nsteps[r] - 1, :] for r in range(drift.shape[0])])
    np.testing.assert_array_equal(env["residual_drift_ratio"].values, residual)
    # the last valid step is the last finite row
    for r in range(drift.shape[0]):
        finite = np.flatnonzero(np.isfinite(drift[r, :, 0]))
        assert finite[-1] == nsteps[r] - 1
    # the record at rest has zero envelopes, not NaN
    assert np.all(env["peak_drift_ratio"].sel(record="at-rest").values == 0.0)
    # the envelopes merged into the run's dataset are the same
    for name in env.data_vars:
        np.testing.assert_array_equal(ds[name].values, env[name].values)
        assert ds[name].attrs["units"] == env[name].attrs["units"]
    assert env["peak_drift_ratio"].dims == ("record", "storey")
    assert env["peak_floor_acceleration"].dims == ("record", "floor")
    assert list(env["record"].values) == ["r1", "r2", "r3", "at-rest"]


def test_envelopes_without_step_counts_find_the_last_valid_step(suite_results):
    """Without ``n_steps`` the residual drift is taken at the last finite row (DESIGN.md:
    records are NaN-padded after their end)."""
    ds = suite_results
    env = ss.envelopes(ds)
    env2 = ss.envelopes(ds.drop_vars("n_steps"))
    for name in env.data_vars:
        np.testing.assert_array_equal(env[name].values, env2[name].values)


def test_storey_shear_is_stiffness_times_drift(suite_results):
    """Storey spring shear V_i = k_i (u_i - u_{i-1}) = k_i h_i x drift ratio (definition,
    common practice)."""
    ds = suite_results
    k = np.array(FRAME5["stiffness"])
    h = np.array(FRAME5["height"])
    u = ds["displacement"].values
    rel = np.diff(np.concatenate([np.zeros(u.shape[:2] + (1,)), u], axis=2), axis=2)
    np.testing.assert_allclose(ds["storey_shear"].values, k * rel, rtol=1e-13, atol=0, equal_nan=True)
    np.testing.assert_allclose(ds["drift_ratio"].values, rel / h, rtol=1e-13, atol=0, equal_nan=True)


@pytest.mark.parametrize("method", list(ss.METHODS))
@pytest.mark.parametrize("damping", ["rayleigh", "modal", "stiffness", "none"])
def test_absolute_acceleration_satisfies_the_equation_of_motion(method, damping, frame5, noise_record):
    """Base excitation, D'Alembert (common practice; Chopra, Dynamics of Structures, ch. 9):
    M (u'' + iota a_g) = -(C u' + K u) at every step, so the absolute floor acceleration
    equals -M^-1 (C v + K u), to 1e-8 relative; with floor forces M u'' = p - C v - K u."""
    frame = frame5(DAMPING[damping])
    rec = noise_record(seed=8, n=500, dt=0.01, peak=2.5)
    rng = np.random.default_rng(3)
    forces = ss.FloorForces(np.cumsum(rng.standard_normal((300, 5)), axis=0) * 1e4, dt=0.01, name="wind")
    ds = ss.run(frame, [rec, forces], method=method)
    M = frame.mass_matrix()
    C = frame.damping_matrix()
    K = frame.stiffness_matrix()

    n = int(ds["n_steps"].sel(record=rec.name))
    u = ds["displacement"].sel(record=rec.name).values[:n]
    v = ds["velocity"].sel(record=rec.name).values[:n]
    a_abs = ds["absolute_acceleration"].sel(record=rec.name).values[:n]
    lhs = a_abs @ M
    rhs = -(v @ C + u @ K)
    assert np.abs(lhs - rhs).max() <= 1e-8 * np.abs(rhs).max()
    ag = ds["ground_acceleration"].sel(record=rec.name).values[:n]
    np.testing.assert_array_equal(ag, rec.to_si())

    n = int(ds["n_steps"].sel(record="wind"))
    u = ds["displacement"].sel(record="wind").values[:n]
    v = ds["velocity"].sel(record="wind").values[:n]
    a = ds["absolute_acceleration"].sel(record="wind").values[:n]
    p = forces.force
    assert np.abs(a @ M - (p - v @ C - u @ K)).max() <= 1e-8 * np.abs(p).max()
    np.testing.assert_array_equal(ds["ground_acceleration"].sel(record="wind").values[:n], 0.0)
    assert list(ds["excitation"].values) == ["base-acceleration", "floor-forces"]
