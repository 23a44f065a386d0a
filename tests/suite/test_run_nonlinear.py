"""ss.run with hysteretic storeys: status handling across a batch of records, input
validation of storey laws, and a suite-level check of the equal-displacement rule."""

import math
import re

import numpy as np
import pytest
import scipy.signal

import simulate as ss
from reference import energy_balance_error

from conftest import FRAME5, band_limited_acceleration

HISTORIES = ("displacement", "velocity", "absolute_acceleration", "drift_ratio", "storey_shear")
ENERGIES = ("energy_input", "energy_kinetic", "energy_damping", "energy_strain", "energy_hysteretic")

#: storey yield shears of the five-storey frame: 0.1 of the weight above each storey
VY5 = 0.1 * 9.81 * np.cumsum(np.array(FRAME5["mass"])[::-1])[::-1]


def record(seed, n, peak, name):
    return ss.Record(band_limited_acceleration(seed, n, 0.01, peak=peak), dt=0.01, units="m/s2", name=name)


def assert_energy_balance(ds, tol=0.01):
    """Energy balance error below 1 % for every record over its valid steps, recomputed from
    the energy histories (Uang and Bertero 1990; common practice as an accuracy check)."""
    error = energy_balance_error(*(ds[name].values for name in ENERGIES))
    np.testing.assert_allclose(ds["energy_balance_error"].values, error, rtol=1e-9, atol=1e-15)
    assert np.all(error < tol), error


def assert_identical_record(batch, r, alone):
    """Record r of a batch run equals the run of that record alone, bit for bit (NaN padding aside)."""
    n = alone.sizes["time"]
    for name in HISTORIES + ENERGIES:
        a = batch[name].isel(record=r).values
        b = alone[name].isel(record=0).values
        np.testing.assert_array_equal(a[:n], b, err_msg=name)
        assert np.isnan(a[n:]).all()
    for name in ("status", "n_steps", "newton_iterations", "hysteretic_energy", "peak_drift_ratio",
                 "residual_drift_ratio", "energy_balance_error"):
        np.testing.assert_array_equal(batch[name].isel(record=r).values, alone[name].isel(record=0).values,
                                      err_msg=name)


# ------------------------------------------------------------------- not converged


def test_record_that_does_not_converge_stops_and_leaves_the_others_alone():
    """With max_iter = 2 and no substepping a step converges only if one Newton correction
    solves it, which holds while the storeys are elastic and fails at the first step where a
    bilinear storey yields (the elastic predictor lands off the yield surface). The strong
    record then ends with status "not-converged" at exactly that step: its history up to the
    step before equals that of a converging run, NaN after (the results schema in DESIGN.md);
    the weak record in the same run never yields and is bit for bit the same as when run
    alone, and so is the strong one."""
    frame = ss.ShearFrame(**FRAME5, yield_shear=VY5, hardening=0.03)
    strong, weak = record(21, 600, 5.0, "strong"), record(22, 400, 0.3, "weak")
    options = dict(max_iter=2, max_depth=0)
    ds = ss.run(frame, [strong, weak], **options)
    assert list(ds["status"].values) == ["not-converged", "ok"]
    n = int(ds["n_steps"].values[0])
    good = ss.run(frame, strong)
    shear = good["storey_shear"].isel(record=0).values
    first_yield = int(np.argmax((np.abs(shear) >= VY5 * (1 - 1e-12)).any(axis=1)))
    assert 0 < first_yield == n
    for name in HISTORIES:
        x = ds[name].isel(record=0).values
        assert np.isfinite(x[:n]).all() and np.isnan(x[n:]).all(), name
        want = good[name].isel(record=0).values[:n]
        assert np.abs(x[:n] - want).max() <= 1e-12 * np.abs(want).max(), name
    for name in ENERGIES:
        x = ds[name].isel(record=0).values
        assert np.isfinite(x[:n]).all() and np.isnan(x[n:]).all(), name
    ag = ds["ground_acceleration"].isel(record=0).values
    assert np.isfinite(ag[:n]).all() and np.isnan(ag[n:]).all()
    # envelopes of the stopped record cover its valid steps
    drift = ds["drift_ratio"].isel(record=0).values
    np.testing.assert_array_equal(ds["peak_drift_ratio"].isel(record=0).values, np.abs(drift[:n]).max(axis=0))
    np.testing.assert_array_equal(ds["residual_drift_ratio"].isel(record=0).values, drift[n - 1])
    assert ds["ductility"].isel(record=0).values.max() < 1.0
    # the other record is untouched, and each record equals its run alone
    assert int(ds["n_steps"].values[1]) == weak.n_steps
    assert_identical_record(ds, 1, ss.run(frame, weak, **options))
    assert_identical_record(ds, 0, ss.run(frame, strong, **options))
    assert_energy_balance(ds)


def test_stopped_record_reports_storey_demands_of_its_valid_steps():
    """When a step fails even after substepping, the storey summaries of the record
    (hysteretic_energy per storey) describe the analysis that is kept, the steps up to the
    last valid one: their sum equals the hysteretic energy history at that step (the same
    quantity, summed over storeys). Bouc-Wen storeys with max_iter = 2 and max_depth = 3: the
    first halves of a failing step may converge before a later substep fails, and those
    substeps belong to no stored step."""
    frame = ss.ShearFrame(**FRAME5, yield_shear=VY5, hardening=0.03, law="bouc-wen")
    ds = ss.run(frame, record(21, 600, 5.0, "strong"), max_iter=2, max_depth=3)
    assert ds["status"].item() == "not-converged"
    n = int(ds["n_steps"].item())
    total = ds["hysteretic_energy"].isel(record=0).values.sum()
    history = ds["energy_hysteretic"].isel(record=0).values[n - 1]
    assert history > 0
    assert total == pytest.approx(history, rel=1e-9)
    assert_energy_balance(ds)


# ------------------------------------------------------------------------- collapse


def test_collapsed_record_stops_at_the_first_step_beyond_the_limit():
    """P-Delta frame with a net negative post-yield slope in the bottom storey (hardening 0.02,
    P / h = 0.08 k1) under a strong and a weak record: the strong one collapses - status
    "collapsed", the last valid step is the first whose storey drift ratio exceeds
    collapse_drift, NaN after - and the weak one is the same, bit for bit, as when run alone
    (common practice: sidesway collapse when a drift limit is passed)."""
    P = np.full(5, 0.08 * FRAME5["stiffness"][0] * FRAME5["height"][0])
    frame = ss.ShearFrame(**FRAME5, yield_shear=VY5, hardening=0.02, gravity_load=P)
    strong, weak = record(31, 1500, 6.0, "strong"), record(32, 500, 0.3, "weak")
    limit = 0.05
    ds = ss.run(frame, [strong, weak], collapse_drift=limit)
    assert list(ds["status"].values) == ["collapsed", "ok"]
    n = int(ds["n_steps"].values[0])
    drift = ds["drift_ratio"].isel(record=0).values
    assert np.abs(drift[n - 1]).max() > limit
    assert np.abs(drift[:n - 1]).max() <= limit
    assert np.isnan(drift[n:]).all() and n < strong.n_steps
    assert ds.attrs["collapse_drift"] == limit
    assert_identical_record(ds, 1, ss.run(frame, weak, collapse_drift=limit))
    assert_identical_record(ds, 0, ss.run(frame, strong, collapse_drift=limit))
    assert_energy_balance(ds)


# ----------------------------------------------------------------- input validation


@pytest.mark.parametrize("law", ["bilinear", "bouc-wen", "peak-oriented", "linear-with-gravity"])
def test_exact_state_space_method_refuses_a_nonlinear_frame(law):
    """The exact first-order-hold recurrence holds for linear frames only; a frame with
    yielding storeys or P-Delta is refused with an InputError that points to Newmark."""
    if law == "linear-with-gravity":
        frame = ss.ShearFrame(**FRAME5, gravity_load=1e6)
    else:
        frame = ss.ShearFrame(**FRAME5, yield_shear=VY5, law=law)
    with pytest.raises(ss.InputError, match="newmark"):
        ss.run(frame, record(1, 50, 1.0, "r"), method="state-space")


V3 = [3.0e6, 2.0e6, 1.0e6]
BAD_LAWS = {
    "yield shear zero": (dict(yield_shear=[3e6, 0.0, 1e6]), "storey 2", "yield_shear"),
    "yield shear negative": (dict(yield_shear=[3e6, -1e6, 1e6]), "storey 2", "yield_shear"),
    "yield shear nan": (dict(yield_shear=[3e6, math.nan, 1e6]), "storey 2", "yield_shear"),
    "hardening one": (dict(yield_shear=V3, hardening=[0.0, 1.0, 0.0]), "storey 2", "hardening"),
    "hardening above one": (dict(yield_shear=V3, hardening=[0.0, 0.0, 1.5]), "storey 3", "hardening"),
    "hardening negative": (dict(yield_shear=V3, hardening=[-0.1, 0.0, 0.0]), "storey 1", "hardening"),
    "unknown law": (dict(yield_shear=V3, law=["bilinear", "elastoplastic-x", "bilinear"]), "storey 2", "law"),
    "law without yield shear": (dict(law="peak-oriented"), "storey 1", "yield_shear"),
    "gamma above beta": (dict(yield_shear=V3, law="bouc-wen", law_params={"beta": 0.5, "gamma": [0.5, 0.6, 0.5]}),
                         "storey 2", "gamma"),
    "gamma below -beta": (dict(yield_shear=V3, law="bouc-wen", law_params={"beta": 0.5, "gamma": [0.5, 0.5, -0.7]}),
                          "storey 3", "gamma"),
    "n below one": (dict(yield_shear=V3, law="bouc-wen", law_params={"n": [2.0, 0.5, 2.0]}), "storey 2", "n"),
    "beta zero": (dict(yield_shear=V3, law="bouc-wen", law_params={"beta": [0.5, 0.0, 0.5], "gamma": 0.0}),
                  "storey 2", "beta"),
    "A zero": (dict(yield_shear=V3, law="bouc-wen", law_params={"A": [1.0, 1.0, 0.0]}), "storey 3", "A"),
}


@pytest.mark.parametrize("case", list(BAD_LAWS))
def test_invalid_storey_law_parameters_name_the_storey_and_key(case):
    """Yield shear <= 0, hardening outside [0, 1), an unknown law, Bouc-Wen gamma outside
    [-beta, beta], n < 1, beta or A not positive (the admissible Bouc-Wen range of the law's
    documentation, simulate/laws/boucwen.py) are user errors: InputError, and the message
    names the storey and the key (the project's error convention, DEVELOPERS.md)."""
    kw, storey, key = BAD_LAWS[case]
    with pytest.raises(ss.InputError) as info:
        ss.ShearFrame(mass=[2e5] * 3, stiffness=[3e8, 2.5e8, 2e8], height=3.0, **kw)
    message = str(info.value)
    assert storey in message, message
    assert re.search(rf"(?<![\w-]){re.escape(key)}(?![\w-])", message), message


# ------------------------------------------------------------ equal-displacement rule


def filtered_noise_record(seed, n=2000, dt=0.01, peak=3.0):
    """Seeded broadband synthetic record: white noise through the Kanai-Tajimi ground filter
    (wg = 5 pi rad/s, zg = 0.6) and the Clough-Penzien high-pass (wf = 0.1 wg, zf = 0.6),
    under a trapezoid-exponential envelope (H. Tajimi (1960); R. W. Clough and J. Penzien,
    Dynamics of Structures, 1975, ch. on random earthquake excitation; from memory). Its
    acceleration spectrum peaks near the ground period 2 pi / wg = 0.4 s and falls off at
    long periods like a real record's, so 2-3 s lies well beyond its corner. Invented input."""
    wg, zg, wf, zf = 5 * math.pi, 0.6, 0.5 * math.pi, 0.6
    num = np.polymul([2 * zg * wg, wg**2], [1.0, 0.0, 0.0])
    den = np.polymul([1.0, 2 * zg * wg, wg**2], [1.0, 2 * zf * wf, wf**2])
    b, a = scipy.signal.bilinear(num, den, fs=1.0 / dt)
    x = scipy.signal.lfilter(b, a, np.random.default_rng(seed).standard_normal(n))
    t = np.arange(n) * dt
    x *= np.minimum(1.0, t / 2.0) * np.exp(-np.maximum(t - 8.0, 0.0) / 4.0)
    return ss.Record(peak * x / np.abs(x).max(), dt=dt, units="m/s2", name=f"kt-{seed}")


@pytest.mark.parametrize("period", [2.0, 3.0])
def test_equal_displacement_rule_for_long_periods(period):
    """Equal-displacement rule: for periods well beyond the corner period of the records the
    peak displacement of an elastoplastic SDOF with strength reduction R = 4 is about that
    of the elastic SDOF (A. S. Veletsos and N. M. Newmark (1960), Proc. 2nd WCEE; N. M.
    Newmark and W. J. Hall (1982), Earthquake Spectra and Design, EERI; from memory). Ten
    seeded broadband records, each scaled to the same elastic peak, 5 % damping: the median
    ratio inelastic / elastic lies in [0.7, 1.4]."""
    m, h = 1.0e5, 3.0
    k = m * (2 * math.pi / period) ** 2
    recs = [filtered_noise_record(100 + i) for i in range(10)]
    elastic = ss.run(ss.ShearFrame(mass=m, stiffness=k, height=h, damping=ss.Rayleigh(0.05)), recs, tail=3.0)
    u_el = elastic["peak_roof_displacement"].values
    target = 0.1                        # m, the elastic peak of every scaled record
    scale = target / u_el
    frame = ss.ShearFrame(mass=m, stiffness=k, height=h, yield_shear=k * target / 4.0, hardening=0.0,
                          damping=ss.Rayleigh(0.05))
    ds = ss.run(frame, recs, scale=scale, tail=3.0)
    assert np.all(ds["status"].values == "ok")
    ratio = ds["peak_roof_displacement"].values / target
    assert np.all(ds["ductility"].values > 1.0)        # every record yields the storey
    assert 0.7 <= np.median(ratio) <= 1.4, ratio
    assert_energy_balance(ds)
