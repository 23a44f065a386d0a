"""Comparing two results datasets record by record (b / a)."""

from __future__ import annotations

import numpy as np
import pytest
import xarray as xr

import simulate as ss
from simulate.results.compare import compare
from simulate.settings import CAUTION

from conftest import FRAME5, band_limited_acceleration

RATIOS = ("ratio_peak_drift_ratio", "ratio_residual_drift_ratio", "ratio_peak_floor_acceleration",
          "ratio_peak_base_shear")


def records(seeds=(1, 2, 3), n=600, dt=0.01, peak=2.5, corner=8.0):
    return [ss.Record(band_limited_acceleration(s, n, dt, corner=corner, peak=peak), dt=dt, units="m/s2",
                      name=f"r{s}") for s in seeds]


@pytest.fixture(scope="module")
def strong_pair():
    """A five-storey frame whose storeys never yield (yield shear far above any demand) and
    its linear twin, through the same three records with a free-vibration tail."""
    frame = ss.ShearFrame(**FRAME5, yield_shear=[1e12] * 5, hardening=0.05)
    recs = records()
    return ss.run(frame.linear_twin(), recs, tail=1.0), ss.run(frame, recs, tail=1.0)


def test_compare_with_itself_gives_exactly_one(strong_pair):
    """x / x = 1 exactly in IEEE arithmetic for every finite non-zero x (IEEE 754
    correctly rounded division), so every ratio, the median and R are exactly 1."""
    ds = strong_pair[0]
    out = compare(ds, ds)
    for name in RATIOS + ("strength_reduction_factor",):
        values = out[name].values
        assert np.isfinite(values).all(), name
        np.testing.assert_array_equal(values, 1.0)
        np.testing.assert_array_equal(out[f"median_{name}"].values, 1.0)
    assert list(out["record"].values) == ["r1", "r2", "r3"]
    assert out.sizes == {"record": 3, "storey": 5, "floor": 5}
    assert out.attrs["caution"] == CAUTION


def test_frame_that_never_yields_equals_its_linear_twin(strong_pair):
    """A bilinear frame that stays elastic (Vy far above the demand) solves the same linear
    equations as its linear twin (common practice; the nonlinear kernel's Newton step is exact
    for a linear step), so every demand ratio is 1 to 1e-9 and R = 1. The absolute residual
    drifts of the two are reported and agree too."""
    a, b = strong_pair
    assert (b["status"].values == "ok").all()
    out = compare(a, b)
    for name in ("ratio_peak_drift_ratio", "ratio_peak_floor_acceleration", "ratio_peak_base_shear",
                 "strength_reduction_factor"):
        np.testing.assert_allclose(out[name].values, 1.0, rtol=1e-9, err_msg=name)
        np.testing.assert_allclose(out[f"median_{name}"].values, 1.0, rtol=1e-9, err_msg=name)
    np.testing.assert_allclose(out["residual_drift_ratio_b"].values, out["residual_drift_ratio_a"].values,
                               rtol=1e-6, atol=1e-12)
    np.testing.assert_allclose(out["peak_drift_ratio_a"].values, a["peak_drift_ratio"].values, rtol=0)


def test_strength_reduction_factor_of_an_elastoplastic_oscillator():
    """Elastoplastic one-storey frame (alpha = 0) against its linear twin under long-period
    dominated motions (band-limited below 1.5 Hz, T = 0.5 s). R is the ratio of the peak
    storey-1 shears computed here with numpy.nanmax from the two datasets' storey_shear
    histories; the elastoplastic peak shear is the yield shear itself (the yield surface
    |V| <= Vy of rate-independent plasticity, Simo and Hughes 1998, ch. 1), so R = max|V_a| / Vy."""
    m, T, vy = 2.0e5, 0.5, 2.0e5
    k = m * (2 * np.pi / T) ** 2
    frame = ss.ShearFrame(mass=[m], stiffness=[k], height=[3.0], yield_shear=[vy], hardening=0.0,
                          damping=ss.MassProportional(ratio=0.05, mode=1))
    recs = records(seeds=(4, 5), n=1500, corner=1.5, peak=3.0)
    a = ss.run(frame.linear_twin(), recs)
    b = ss.run(frame, recs)
    out = compare(a, b)
    va = np.nanmax(np.abs(a["storey_shear"].sel(storey=1).transpose("record", "time").values), axis=1)
    vb = np.nanmax(np.abs(b["storey_shear"].sel(storey=1).transpose("record", "time").values), axis=1)
    np.testing.assert_allclose(out["strength_reduction_factor"].values, va / vb, rtol=1e-14)
    np.testing.assert_allclose(vb, vy, rtol=1e-9)
    assert (out["strength_reduction_factor"].values > 2.0).all()        # the records do make it yield
    assert float(out["median_strength_reduction_factor"]) == pytest.approx(np.median(va / vb), rel=1e-14)
    np.testing.assert_allclose(out["ratio_peak_base_shear"].values, vb / va, rtol=1e-14)


def envelope_dataset(labels, drift, residual, pfa, base, status=None):
    """A small dataset holding only envelope variables (record, storey|floor)."""
    n = np.shape(drift)[1]
    data = {
        "peak_drift_ratio": (("record", "storey"), np.asarray(drift, float)),
        "residual_drift_ratio": (("record", "storey"), np.asarray(residual, float)),
        "peak_floor_acceleration": (("record", "floor"), np.asarray(pfa, float)),
        "peak_base_shear": (("record",), np.asarray(base, float)),
    }
    if status is not None:
        data["status"] = (("record",), np.array(status, dtype=object))
    return xr.Dataset(data, coords={"record": np.array(labels, dtype=object), "storey": np.arange(1, n + 1),
                                    "floor": np.arange(1, n + 1)})


def test_alignment_zero_denominators_and_medians():
    """Records are matched by label (common ones, in the order of a); a zero denominator
    gives NaN, which the medians skip (numpy.nanmedian as reference); residual drifts are
    compared as |b| / |a| and also reported as values."""
    a = envelope_dataset(["x", "y", "z", "w"],
                         drift=[[0.01, 0.02], [0.02, 0.0], [0.01, 0.01], [0.03, 0.03]],
                         residual=[[-0.002, 0.001], [0.0, 0.001], [0.001, -0.004], [0.0, 0.0]],
                         pfa=[[2.0, 4.0], [3.0, 3.0], [1.0, 2.0], [1.0, 1.0]],
                         base=[4e6, 5e6, 0.0, 1e6])
    b = envelope_dataset(["z", "q", "x", "y"],
                         drift=[[0.03, 0.01], [9.0, 9.0], [0.02, 0.03], [0.05, 0.01]],
                         residual=[[0.003, 0.002], [9.0, 9.0], [0.004, -0.001], [0.001, 0.001]],
                         pfa=[[1.5, 1.0], [9.0, 9.0], [1.0, 2.0], [3.0, 6.0]],
                         base=[1e6, 9.0, 2e6, 0.0],
                         status=["ok", "ok", "collapsed", "ok"])
    out = compare(a, b, names=("lin.nc", "hyst.nc"))
    assert list(out["record"].values) == ["x", "y", "z"]
    drift = out["ratio_peak_drift_ratio"].values
    np.testing.assert_array_equal(drift, [[2.0, 1.5], [2.5, np.nan], [3.0, 1.0]])
    np.testing.assert_array_equal(out["median_ratio_peak_drift_ratio"].values,
                                  np.nanmedian(drift, axis=0))
    np.testing.assert_array_equal(out["ratio_residual_drift_ratio"].values,
                                  [[2.0, 1.0], [np.nan, 1.0], [3.0, 0.5]])
    np.testing.assert_array_equal(out["residual_drift_ratio_b"].values, [[0.004, -0.001], [0.001, 0.001],
                                                                         [0.003, 0.002]])
    np.testing.assert_array_equal(out["ratio_peak_floor_acceleration"].values, [[0.5, 0.5], [1.0, 2.0],
                                                                                [1.5, 0.5]])
    R = out["strength_reduction_factor"].values
    np.testing.assert_array_equal(R, [2.0, np.nan, 0.0])
    assert float(out["median_strength_reduction_factor"]) == 1.0
    np.testing.assert_array_equal(out["ratio_peak_base_shear"].values, [0.5, 0.0, np.nan])
    assert list(out["status_b"].values) == ["collapsed", "ok", "ok"]
    assert list(out["status_a"].values) == ["ok", "ok", "ok"]
    assert out.attrs["a"] == "lin.nc" and out.attrs["b"] == "hyst.nc"
    assert "b / a" in out.attrs["convention"] and "meaningless" in out.attrs["residual_note"]


def test_no_common_record_names_both_datasets():
    a = envelope_dataset(["x"], [[0.01]], [[0.0]], [[1.0]], [1.0])
    b = envelope_dataset(["y"], [[0.01]], [[0.0]], [[1.0]], [1.0])
    with pytest.raises(ss.InputError, match="no record in common between lin.nc .*'x'.* and hyst.nc .*'y'") as info:
        compare(a, b, names=("lin.nc", "hyst.nc"))
    assert "\n" not in str(info.value)


def test_different_buildings_are_refused():
    a = envelope_dataset(["x"], [[0.01, 0.02]], [[0.0, 0.0]], [[1.0, 1.0]], [1.0])
    b = envelope_dataset(["x"], [[0.01]], [[0.0]], [[1.0]], [1.0])
    with pytest.raises(ss.InputError, match="a has 2 storeys but b has 1"):
        compare(a, b)


def test_histories_only_dataset_gets_its_envelopes(strong_pair):
    """A dataset without envelope variables has them computed from its histories
    (simulate.envelopes), giving the same comparison."""
    a, b = strong_pair
    stripped = b.drop_vars(["peak_drift_ratio", "residual_drift_ratio", "peak_floor_acceleration",
                            "peak_storey_shear", "peak_base_shear", "peak_roof_displacement"])
    xr.testing.assert_allclose(compare(a, stripped)["ratio_peak_drift_ratio"],
                               compare(a, b)["ratio_peak_drift_ratio"])
    with pytest.raises(ss.InputError, match="not a time-history results dataset"):
        compare(a, stripped.drop_vars("drift_ratio"), names=("a.nc", "b.nc"))
