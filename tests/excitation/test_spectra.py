"""Elastic and constant-ductility spectra of Records: closed forms, scipy references, trade facts."""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.integrate
import scipy.signal
import xarray as xr

import simulate as ss
from simulate.errors import InputError
from simulate.excitation.spectra import inelastic_spectrum, log_periods, response_spectrum

from conftest import band_limited_acceleration

G = ss.STANDARD_GRAVITY


def record(a, dt, name="r", units="m/s2"):
    return ss.Record(np.asarray(a, dtype=float), dt=dt, units=units, name=name)


def broadband(seed, n=2000, dt=0.01, peak=3.0):
    """Invented test motion: seeded noise low-passed at 10 Hz (tests/conftest.py), then high-passed
    at 0.5 Hz (4th-order Butterworth, zero phase) so that, as for recorded motions, the spectrum
    falls off at long periods (common practice), with a 2 s rise and a 4 s decay."""
    a = band_limited_acceleration(seed, n, dt, corner=10.0)
    sos = scipy.signal.butter(4, 0.5, btype="high", fs=1.0 / dt, output="sos")
    a = scipy.signal.sosfiltfilt(sos, a)
    envelope = np.ones(n)
    rise, fall = int(2.0 / dt), int(4.0 / dt)
    envelope[:rise] = np.linspace(0.0, 1.0, rise)
    envelope[-fall:] = np.linspace(1.0, 0.0, fall)
    a *= envelope
    return record(peak * a / np.abs(a).max(), dt, name=f"broadband-{seed}")


# ------------------------------------------------------------------------------ elastic


def harmonic_response(t, A, Omega, T, z):
    """u(t) of u'' + 2 z w u' + w^2 u = -A sin(Omega t) from rest: steady state C sin + D cos with
    C = (p0/k) (1 - r^2) / ((1 - r^2)^2 + (2 z r)^2), D = (p0/k) (-2 z r) / (same), p0/k = -A/w^2,
    r = Omega/w, plus the transient exp(-z w t) (E cos wd t + F sin wd t) that starts the motion
    from rest (Chopra, Dynamics of Structures, ch. 3, harmonic excitation of damped systems;
    constants E, F solved here from u(0) = u'(0) = 0)."""
    w = 2 * math.pi / T
    wd = w * math.sqrt(1 - z * z)
    r = Omega / w
    den = (1 - r * r) ** 2 + (2 * z * r) ** 2
    st = -A / w**2
    C, D = st * (1 - r * r) / den, st * (-2 * z * r) / den
    E = -D
    F = (z * w * E - Omega * C) / wd
    transient = np.exp(-z * w * t) * (E * np.cos(wd * t) + F * np.sin(wd * t))
    return transient + C * np.sin(Omega * t) + D * np.cos(Omega * t)


@pytest.mark.parametrize("T", [0.2, 0.5, 0.8, 1.0, 2.0])
def test_sine_record_sd_equals_the_harmonic_closed_form(T):
    """Five cycles of a 1.25 Hz sine (2 m/s^2): SD over the record against the closed-form
    transient + steady-state response (Chopra ch. 3), within 0.1 %; the 0.8 s oscillator is at
    resonance. Fine sampling (400 points per cycle) keeps the record's interpolation error small."""
    A, f, dt, z = 2.0, 1.25, 0.002, 0.05
    t = np.arange(0, 4.0 + dt / 2, dt)
    rec = record(A * np.sin(2 * np.pi * f * t), dt)
    sd = float(response_spectrum(rec, [T], z, free_vibration=False)["sd"][0, 0])
    fine = np.linspace(0, 4.0, 100_001)
    want = np.abs(harmonic_response(fine, A, 2 * np.pi * f, T, z)).max()
    assert sd == pytest.approx(want, rel=1e-3)


@pytest.mark.parametrize("T", [0.3, 1.5, 3.0])
def test_sine_record_with_free_vibration_equals_solve_ivp(T):
    """Two cycles of a 1 Hz sine and then rest: SD including the free vibration against
    scipy.integrate.solve_ivp (general-purpose reference, rtol 1e-10) of the same equation,
    the sine exact and zero after it, maximum on a 0.1 ms grid; within 0.5 %."""
    A, dt, z = 1.0, 0.005, 0.05
    t = np.arange(0, 2.0 + dt / 2, dt)
    rec = record(A * np.sin(2 * np.pi * t), dt)
    sd = float(response_spectrum(rec, [T], z)["sd"][0, 0])
    w = 2 * math.pi / T

    def rhs(s, y):
        ag = A * math.sin(2 * math.pi * s) if s <= 2.0 else 0.0
        return [y[1], -ag - 2 * z * w * y[1] - w * w * y[0]]

    end = 2.0 + 2 * T
    sol = scipy.integrate.solve_ivp(rhs, (0, end), [0.0, 0.0], method="DOP853", rtol=1e-10,
                                    atol=1e-13, dense_output=True, max_step=0.01)
    want = np.abs(sol.sol(np.arange(0, end, 1e-4))[0]).max()
    assert sd == pytest.approx(want, rel=5e-3)


def test_psa_tends_to_pga_at_short_periods():
    """PSA -> PGA as T -> 0 (Chopra ch. 6, a fact of the trade): a stiff oscillator follows the
    ground. Exactly at T = 0 by definition; within 0.2 % at 1 and 2 ms for a 10 ms record.
    (Near T = dt the kinks of the linearly interpolated record still excite the oscillator by
    about 1 %, which is why the check is made well below dt.)"""
    recs = [record(band_limited_acceleration(s, 2000, 0.01, corner=8.0, peak=3.0), 0.01, f"n{s}")
            for s in (1, 2, 3)]
    ds = response_spectrum(recs, [0.0, 0.002, 0.001])
    pga = np.array([r.pga for r in recs]) / G
    np.testing.assert_array_equal(ds["psa"].sel(period=0.0).values, pga)
    np.testing.assert_array_equal(ds["sa"].sel(period=0.0).values, pga)
    np.testing.assert_array_equal(ds["sd"].sel(period=0.0).values, 0.0)
    ratio = ds["psa"].sel(period=[0.002, 0.001]).values / pga[:, None]
    assert np.all(np.abs(ratio - 1) < 2e-3)
    assert np.all(np.abs(ratio[:, 1] - 1) <= np.abs(ratio[:, 0] - 1))


@pytest.mark.parametrize("z, T, tol", [(0.0, 50.0, 1e-3), (0.05, 200.0, 5e-3)])
def test_sd_tends_to_pgd_at_long_periods(z, T, tol):
    """SD -> PGD as T grows (Chopra ch. 6, a fact of the trade): a very flexible oscillator stays
    put while the ground moves under it. One-sine acceleration pulse whose ground displacement
    rises smoothly from 0 to D = 0.2 m and stays (ug = D (t/tp - sin(2 pi t/tp) / (2 pi)),
    differentiated twice by hand)."""
    tp, D, dt = 1.0, 0.2, 0.005
    t = np.arange(0, 3.0 + dt / 2, dt)
    ag = np.where(t <= tp, D * 2 * np.pi / tp**2 * np.sin(2 * np.pi * t / tp), 0.0)
    sd = float(response_spectrum(record(ag, dt), [T], z)["sd"][0, 0])
    assert sd == pytest.approx(D, rel=tol)


@pytest.mark.parametrize("z", [0.02, 0.1])
def test_psa_equals_lsim_on_a_random_record(z):
    """PSA at several periods and two damping ratios against scipy.signal.lsim (general-purpose
    reference) run on the record interpolated linearly at 2 ms and followed by zeros, within
    0.5 %. With 60 points per period asked for here and >= 50 in lsim's samples, the two peak
    searches differ by < 0.2 %."""
    dt = 0.01
    a = band_limited_acceleration(9, 800, dt, corner=10.0, peak=2.5)
    periods = np.array([0.1, 0.25, 0.6, 1.2, 3.0])
    ds = response_spectrum(record(a, dt), periods, z, samples_per_period=60)
    padded = np.concatenate([a, np.zeros(400)])
    fine_t = np.arange(0, (padded.size - 1) * dt + 1e-9, 0.002)
    fine = np.interp(fine_t, np.arange(padded.size) * dt, padded)
    for T, psa in zip(periods, ds["psa"].values[0]):
        w = 2 * math.pi / T
        sys = scipy.signal.StateSpace([[0, 1], [-w * w, -2 * z * w]], [[0], [-1]], [[1, 0]], [[0]])
        _, y, _ = scipy.signal.lsim(sys, fine, fine_t)
        assert psa == pytest.approx(w * w * np.abs(y).max() / G, rel=5e-3)


def test_dataset_layout_units_and_definitions():
    """Dims, coordinates, units and attributes; psv = omega sd and psa = omega^2 sd / g by
    definition (Chopra ch. 6); records with different steps and lengths in one call."""
    a = record(band_limited_acceleration(1, 800, 0.01), 0.01, "a")
    b = record(band_limited_acceleration(2, 1500, 0.005) / G, 0.005, "b", units="g")
    periods = log_periods(0.05, 4.0, 12)
    ds = response_spectrum([a, b], periods, 0.03)
    assert dict(ds.sizes) == {"record": 2, "period": 12}
    assert list(ds["record"].values) == ["a", "b"]
    np.testing.assert_array_equal(ds["period"].values, periods)
    assert ds["period"].attrs["units"] == "s"
    units = {"sd": "m", "sv": "m/s", "psv": "m/s", "psa": "g", "sa": "g", "record_dt": "s"}
    for name, unit in units.items():
        assert ds[name].attrs["units"] == unit
        assert ds[name].attrs["long_name"]
    assert ds.attrs["damping"] == 0.03
    assert ds.attrs["caution"] == ss.CAUTION
    assert "Nigam" in ds.attrs["method"]
    np.testing.assert_array_equal(ds["record_dt"].values, [0.01, 0.005])
    omega = 2 * np.pi / periods
    np.testing.assert_allclose(ds["psv"].values, omega * ds["sd"].values, rtol=1e-15)
    np.testing.assert_allclose(ds["psa"].values, omega**2 * ds["sd"].values / G, rtol=1e-15)
    alone = response_spectrum(b, periods, 0.03)
    np.testing.assert_array_equal(ds["sd"].sel(record="b").values, alone["sd"].values[0])
    # units of the input do not matter once converted
    b_si = b.in_units("m/s2")
    np.testing.assert_allclose(response_spectrum(b_si, periods, 0.03)["sd"].values,
                               alone["sd"].values, rtol=1e-12)


def test_undamped_sa_equals_psa():
    """Without damping the absolute acceleration is -omega^2 u, so SA = PSA exactly (Chopra ch. 6,
    from the equation of motion); with damping they differ."""
    rec = record(band_limited_acceleration(4, 1000, 0.01), 0.01)
    periods = [0.1, 0.5, 2.0]
    ds = response_spectrum(rec, periods, 0.0)
    np.testing.assert_allclose(ds["sa"].values, ds["psa"].values, rtol=1e-12)
    damped = response_spectrum(rec, periods, 0.2)
    assert np.all(np.abs(damped["sa"].values / damped["psa"].values - 1) > 1e-3)


def test_repeated_names_get_unique_labels():
    a = record(np.sin(np.arange(300) * 0.1), 0.01, "same")
    ds = response_spectrum([a, a, a], [0.5])
    assert list(ds["record"].values) == ["same", "same~2", "same~3"]


def test_netcdf_round_trip(tmp_path):
    """Written with simulate.write_dataset and read back unchanged (xarray.testing.assert_identical)."""
    rec = record(band_limited_acceleration(6, 500, 0.01), 0.01, "x")
    ds = response_spectrum(rec, [0.0, 0.2, 1.0])
    back = ss.read_dataset(ss.write_dataset(ds, tmp_path / "spec.nc"))
    xr.testing.assert_identical(back, ds)
    ids = inelastic_spectrum(rec, [0.2, 1.0], ductility=[2])
    back = ss.read_dataset(ss.write_dataset(ids, tmp_path / "inel.nc"))
    xr.testing.assert_identical(back, ids)


@pytest.mark.parametrize("call, fragment", [
    (lambda r: response_spectrum("r.txt", [1.0]), "item 0 is a str"),
    (lambda r: response_spectrum([], [1.0]), "no records"),
    (lambda r: response_spectrum(r, []), "no periods"),
    (lambda r: response_spectrum(r, [0.5, -1.0]), "finite and >= 0"),
    (lambda r: response_spectrum(r, [0.5, np.nan]), "finite and >= 0"),
    (lambda r: response_spectrum(r, [0.5, 0.5]), "more than once"),
    (lambda r: response_spectrum(r, [[0.5, 1.0]]), "shape"),
    (lambda r: response_spectrum(r, [0.5], damping=1.0), "damping ratio"),
    (lambda r: response_spectrum(r, [0.5], damping=-0.01), "damping ratio"),
    (lambda r: response_spectrum(r, [0.5], samples_per_period=2.5), "samples_per_period"),
    (lambda r: inelastic_spectrum(r, [0.5], ductility=[0.5]), ">= 1"),
    (lambda r: inelastic_spectrum(r, [0.5], hardening=1.0), "hardening"),
    (lambda r: log_periods(1.0, 0.5, 10), "larger than start"),
    (lambda r: log_periods(0.0, 0.5, 10), "> 0"),
])
def test_input_errors_are_one_line(call, fragment):
    rec = record(np.sin(np.arange(200) * 0.1), 0.01)
    with pytest.raises(InputError) as info:
        call(rec)
    message = str(info.value)
    assert fragment in message and "\n" not in message


# ---------------------------------------------------------------------------- inelastic


def test_strength_reduction_tends_to_one_at_short_periods():
    """R_y -> 1 as T -> 0 (Chopra, Dynamics of Structures, ch. 7; a fact of the trade: a very stiff
    system must resist the peak ground force to avoid huge ductility). R_y >= 1, decreasing as T
    falls, and within 3 % of 1 at 1 ms; at T = 0 it is 1 by definition."""
    ds = inelastic_spectrum(broadband(1, n=1500), [0.0, 0.001, 0.005, 0.02], ductility=[2, 4, 6])
    R = ds["strength_reduction"].transpose("record", "ductility", "period").values
    np.testing.assert_array_equal(R[:, :, 0], 1.0)
    assert np.all(R[:, :, 1:] >= 1.0)
    assert np.all(np.diff(R[:, :, 1:], axis=2) > 0.0)
    assert np.all(R[:, :, 1] < 1.03)


def test_equal_displacement_rule_at_long_periods():
    """At long periods R_y approaches mu: the inelastic peak displacement is about the elastic one
    (the equal-displacement rule; Veletsos and Newmark 1960; Chopra ch. 7). On invented broadband
    records (high-passed at 0.5 Hz, see ``broadband``) the median of R_y / mu over 8 records at 5
    and 8 s is within a loose band of 30 %; single records scatter far more, as the rule is a trend."""
    recs = [broadband(s) for s in range(8)]
    mu = np.array([2.0, 4.0, 6.0])
    ds = inelastic_spectrum(recs, [5.0, 8.0], ductility=mu)
    R = ds["strength_reduction"].transpose("record", "ductility", "period").values
    median = np.median(R, axis=0) / mu[:, None]
    assert np.all((median > 0.7) & (median < 1.3)), median


def test_inelastic_dataset_layout_and_definitions():
    """C_y = fy / (m g) = PSA / R_y and u_m = mu u_y = mu SD / R_y (definitions, Chopra ch. 7)."""
    recs = [broadband(3, n=1200), broadband(4, n=900)]
    periods = [0.0, 0.3, 1.0]
    ds = inelastic_spectrum(recs, periods, ductility=(2, 4), damping=0.05, hardening=0.02)
    assert dict(ds.sizes) == {"record": 2, "ductility": 2, "period": 3}
    for name, unit in (("strength_reduction", "1"), ("yield_strength_coefficient", "1"),
                       ("sd_inelastic", "m"), ("achieved_ductility", "1")):
        assert ds[name].attrs["units"] == unit
    assert ds.attrs["hardening"] == 0.02 and ds.attrs["damping"] == 0.05
    assert ds.attrs["caution"] == ss.CAUTION
    el = response_spectrum(recs, periods, 0.05)
    R = ds["strength_reduction"]
    xr.testing.assert_allclose(ds["yield_strength_coefficient"], (el["psa"] / R).transpose(*R.dims),
                               rtol=1e-12)
    moving = ds.sel(period=[0.3, 1.0])
    target = moving["ductility"] * el["sd"].sel(period=[0.3, 1.0]) / moving["strength_reduction"]
    xr.testing.assert_allclose(moving["sd_inelastic"], target.transpose(*moving["sd_inelastic"].dims),
                               rtol=2e-3)
