"""Record scaling to a target spectrum: factors, the suite-mean check, the report."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import optimize, signal

from simulate.errors import InputError, RecordError
from simulate.excitation import Record
from simulate.excitation.scaling import (
    SCALING_METHODS,
    ScalingReport,
    log_misfit_factor,
    scale_records,
    scale_to_sa,
    scale_to_spectrum,
)
from simulate.excitation.targets import ASCE7Spectrum, EC8Spectrum
from simulate.settings import STANDARD_GRAVITY

from conftest import band_limited_acceleration


def lsim_psa(record: Record, periods, damping=0.05, points_per_period=1) -> np.ndarray:
    """Pseudo-spectral acceleration (g) of one record by scipy.signal.lsim.

    Independent reference: the SDOF u'' + 2 z w u' + w^2 u = -a_g(t) as a continuous
    state-space system, integrated by scipy.signal.lsim with the input linear between
    samples (first-order hold), followed by free vibration (zeros appended) for at
    least 1.5 periods; psa = w^2 max|u| / g (Chopra, Dynamics of Structures, ch. 6).
    With ``points_per_period`` the response is evaluated at no fewer points per
    oscillator period (each record step split evenly, the input still linear between
    the record's samples), so short-period peaks are not missed between samples.
    """
    ag = record.to_si()
    out = []
    for T in np.atleast_1d(periods):
        w = 2.0 * np.pi / T
        tail = int(math.ceil(1.5 * T / record.dt)) + 2
        a = np.concatenate([ag, np.zeros(tail)])
        t = np.arange(a.size) * record.dt
        upsample = max(1, math.ceil(points_per_period * record.dt / T))
        if upsample > 1:
            fine = np.arange((a.size - 1) * upsample + 1) * (record.dt / upsample)
            a, t = np.interp(fine, t, a), fine
        system = signal.StateSpace([[0.0, 1.0], [-w * w, -2.0 * damping * w]], [[0.0], [-1.0]],
                                   [[1.0, 0.0]], [[0.0]])
        _, u, _ = signal.lsim(system, a, t)
        out.append(w * w * np.max(np.abs(u)) / STANDARD_GRAVITY)
    return np.array(out)


def suite(n=3, seed=10):
    """Invented test records: seeded band-limited noise of different corners and units."""
    records = []
    for i in range(n):
        acc = band_limited_acceleration(seed + i, 1500, 0.01, corner=3.0 + 2.5 * i, peak=1.5 + i)
        records.append(Record(acc, dt=0.01, units="m/s2", name=f"r{i}"))
    records.append(Record(band_limited_acceleration(seed + 9, 1200, 0.01, 6.0, 0.3), dt=0.01,
                          units="g", name="in-g"))
    return records


TARGET = ASCE7Spectrum(sds=1.0, sd1=0.6, tl=8.0)


def test_sa_t1_scaling_meets_the_target_at_t1():
    """Scaled to Sa(T1): each scaled record's Sa(T1) equals the target (ASCE 7-16 11.4.6
    spectrum at T1 = 0.8 s: S_D1 / T = 0.75 g) to 1e-6. The spectrum of the scaled records is
    computed independently with scipy.signal.lsim at the record's samples (T1 / dt = 80
    points per period, so the library needs no sub-steps and the two sample the same
    instants)."""
    records = suite()
    scaled, report = scale_to_sa(records, TARGET, 0.8)
    assert TARGET(0.8) == pytest.approx(0.75)
    for rec in scaled:
        assert lsim_psa(rec, [0.8])[0] == pytest.approx(0.75, rel=1e-6)
    assert report.method == "sa-t1" and len(report.factors) == len(records)


def test_sa_t1_suite_factor_brings_the_mean_to_the_target():
    """One factor for the suite: the mean Sa(T1) of the scaled records (scipy.signal.lsim)
    equals the target at T1."""
    records = suite()
    scaled, report = scale_records(records, TARGET, 0.8, method="sa-t1", per_record=False)
    assert np.all(report.factors == report.factors[0])
    mean = np.mean([lsim_psa(rec, [0.8])[0] for rec in scaled])
    assert mean == pytest.approx(0.75, rel=1e-6)


@pytest.mark.parametrize("per_record", [True, False])
def test_log_misfit_factor_is_the_minimiser(per_record):
    """The closed-form log factor (mean of ln(target / record)) equals the minimiser of the
    squared log misfit found by scipy.optimize.minimize_scalar (Brent's method on ln f),
    per record or for the whole suite."""
    records = suite()
    _, report = scale_to_spectrum(records, TARGET, 0.6, per_record=per_record)
    mask = report.in_range
    t, s = np.log(report.target_sa[mask]), np.log(report.record_sa[:, mask])
    if per_record:
        for r in range(len(records)):
            best = optimize.minimize_scalar(lambda x: np.sum((t - x - s[r]) ** 2),
                                            bracket=(-5.0, 5.0), tol=1e-12)
            assert math.log(report.factors[r]) == pytest.approx(best.x, abs=1e-6)
    else:
        best = optimize.minimize_scalar(lambda x: np.sum((t - x - s) ** 2), bracket=(-5.0, 5.0),
                                        tol=1e-12)
        assert np.allclose(np.log(report.factors), best.x, atol=1e-6)


def test_log_misfit_factor_function():
    """ln f = mean ln(t/s): for s = t / 2 everywhere the factor is exactly 2; for a spectrum
    off by 1/c and c alternately the factor is 1 (the geometric mean)."""
    t = np.array([0.5, 0.8, 0.4, 0.2])
    assert log_misfit_factor(t, [t / 2.0])[0] == pytest.approx(2.0)
    assert log_misfit_factor(t, t * np.array([3.0, 1 / 3.0, 2.0, 0.5])[None, :])[0] == pytest.approx(1.0)
    assert log_misfit_factor(t, np.vstack([t / 2.0, t / 8.0]), per_record=False) == pytest.approx(4.0)


def test_suite_mean_matches_independent_spectra():
    """The report's scaled suite mean equals the mean of factor x lsim spectrum
    (scipy.signal.lsim) at periods of the grid with at least 20 samples per period."""
    records = suite()
    _, report = scale_to_spectrum(records, TARGET, 1.0)
    picks = [k for k in range(report.periods.size) if report.periods[k] >= 0.2][::25]
    for k in picks:
        T = report.periods[k]
        mean = np.mean([f * lsim_psa(rec, [T])[0] for rec, f in zip(records, report.factors)])
        assert report.mean_sa[k] == pytest.approx(mean, rel=1e-6)


def test_failed_check_states_shortfall_and_extra_factor():
    """Common code check (ASCE/SEI 7-16 16.2.3, from memory): suite mean >= ratio x target
    over 0.2 T1 to 2 T1. With a demanding ratio the check fails; the lowest ratio is the
    minimum of mean/target over the range, and multiplying every factor by the reported
    extra factor lifts that minimum exactly to the ratio."""
    records = suite()
    _, report = scale_to_sa(records, TARGET, 0.8, ratio=1.5)
    mask = report.in_range
    assert report.periods[mask].min() == pytest.approx(0.16)
    assert report.periods[mask].max() == pytest.approx(1.6)
    lowest = np.min(report.mean_sa[mask] / report.target_sa[mask])
    assert not report.passed
    assert report.lowest_ratio == pytest.approx(lowest)
    assert report.extra_factor == pytest.approx(1.5 / lowest)
    assert report.shortfall == pytest.approx(1.5 - lowest)
    lifted = report.extra_factor * report.mean_sa[mask] / report.target_sa[mask]
    assert lifted.min() == pytest.approx(1.5, rel=1e-12)
    assert "FAILED" in report.check_text() and f"{report.extra_factor:.4f}" in report.check_text()
    # the records scaled by factor x extra factor (and held there by limits 1..1) pass
    scaled_again = [r.scaled(report.extra_factor * f) for r, f in zip(records, report.factors)]
    _, check = scale_records(scaled_again, TARGET, 0.8, method="sa-t1", limits=(1.0, 1.0),
                             ratio=1.5 * (1 - 1e-9))
    assert check.passed


def test_passing_check_and_user_range():
    records = suite()
    _, report = scale_to_spectrum(records, TARGET, 0.5, period_range=(0.3, 0.9), ratio=0.5)
    assert report.passed and report.extra_factor == 1.0 and report.shortfall == 0.0
    assert report.period_range == (0.3, 0.9)
    assert "passed" in report.check_text()


def test_factor_limits_clip_and_warn():
    records = suite()
    _, free = scale_to_sa(records, TARGET, 0.8)
    low, high = sorted(free.factors)[1], sorted(free.factors)[-2]
    scaled, report = scale_to_sa(records, TARGET, 0.8, limits=(low, high))
    np.testing.assert_allclose(report.factors, np.clip(free.factors, low, high))
    np.testing.assert_allclose(report.unclipped, free.factors)
    assert len(report.warnings) == 2
    assert any("upper limit" in w for w in report.warnings)
    assert any("lower limit" in w for w in report.warnings)
    for rec, f in zip(scaled, report.factors):
        assert rec.metadata["scale_factor"] == pytest.approx(f)


def test_scaled_records_keep_provenance_and_units():
    records = suite()
    scaled, report = scale_to_spectrum(records, TARGET, 0.8)
    for original, rec, f in zip(records, scaled, report.factors):
        assert rec.units == original.units and rec.name == original.name
        assert rec.metadata["processing"][-1] == {"step": "scale", "factor": float(f)}
        np.testing.assert_allclose(rec.acceleration, f * original.acceleration)


def test_report_dataset_and_caution():
    records = suite()
    _, report = scale_to_spectrum(records, EC8Spectrum(ag=0.2, ground_type="C"), 0.7)
    assert isinstance(report, ScalingReport)
    ds = report.to_dataset()
    assert ds.sizes["record"] == len(records)
    assert ds["scale_factor"].attrs["units"] == "1" and ds["target_sa"].attrs["units"] == "g"
    np.testing.assert_allclose(ds["scaled_psa"].mean("record").values, ds["suite_mean_psa"].values)
    assert "building code in force" in ds.attrs["caution"]
    assert ds.attrs["passed"] in (0, 1)
    assert set(SCALING_METHODS) == {"sa-t1", "spectrum"}


@pytest.mark.parametrize("kwargs, match", [
    (dict(method="peak"), "unknown method"),
    (dict(period_range=(2.0, 1.0)), "increasing"),
    (dict(limits=(2.0, 1.0)), "above the upper"),
    (dict(limits=(0.0, 1.0)), "> 0"),
    (dict(ratio=-1.0), "ratio"),
])
def test_bad_options(kwargs, match):
    with pytest.raises(InputError, match=match):
        scale_records(suite(1), TARGET, 0.8, **kwargs)


def test_zero_record_is_named():
    zero = Record(np.zeros(500), dt=0.01, name="silent")
    with pytest.raises(RecordError, match="record 'silent'"):
        scale_to_sa([zero], TARGET, 0.8)


def test_target_range_errors_pass_through():
    """EN 1998-1 Eq. 3.5 ends at 4 s: a range beyond it is refused by the target."""
    with pytest.raises(InputError, match="above 4 s"):
        scale_to_spectrum(suite(1), EC8Spectrum(ag=0.2), 2.5)
