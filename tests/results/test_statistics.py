"""Suite statistics against numpy and scipy.stats computed directly on the envelopes.

The references are general-purpose libraries: ``numpy.median``, ``numpy.mean``,
``numpy.percentile`` (default linear interpolation), ``numpy.std`` of ``numpy.log``
with ``ddof=1``, ``scipy.stats.gmean`` and ``scipy.stats.lognorm``. Describing a
demand by its median and the logarithmic dispersion beta (standard deviation of
ln x) is common practice in performance-based earthquake engineering.
"""

from __future__ import annotations

import numpy as np
import pytest
import scipy.stats
import xarray as xr

import simulate as ss
from simulate.results.statistics import DEFORMATION, QUANTITIES, suite_statistics

from conftest import band_limited_acceleration

STATUS = np.array(["ok", "ok", "collapsed", "ok", "not-converged", "ok", "failed: worker lost",
                   "ok", "collapsed", "ok", "ok", "ok"], dtype=object)

#: quantity -> (dims after record, units)
LAYOUT = {
    "peak_drift_ratio": (("storey",), "1"),
    "residual_drift_ratio": (("storey",), "1"),
    "peak_floor_acceleration": (("floor",), "m/s2"),
    "peak_storey_shear": (("storey",), "N"),
    "peak_base_shear": ((), "N"),
    "peak_roof_displacement": ((), "m"),
    "ductility": (("storey",), "1"),
}


def known_dataset(seed: int = 3, n: int = 4) -> xr.Dataset:
    """Envelopes drawn from lognormal laws (invented test data), twelve records with mixed statuses.

    The residual drift has both signs and an exact zero; storey 2 of record 0 has a
    zero peak drift (a record at rest) so the log statistics must leave it out.
    """
    rng = np.random.default_rng(seed)
    R = STATUS.size
    data = {}
    medians = {"peak_drift_ratio": 0.01, "residual_drift_ratio": 0.002, "peak_floor_acceleration": 4.0,
               "peak_storey_shear": 2.0e6, "peak_base_shear": 3.0e6, "peak_roof_displacement": 0.2,
               "ductility": 2.5}
    for name, (dims, units) in LAYOUT.items():
        shape = (R,) + (n,) * len(dims)
        values = medians[name] * rng.lognormal(0.0, 0.5, shape)
        if name == "residual_drift_ratio":
            values *= rng.choice([-1.0, 1.0], shape)
            values[3, 0] = 0.0
        data[name] = (("record",) + dims, values, {"units": units})
    data["peak_drift_ratio"][1][0, 1] = 0.0
    data["status"] = (("record",), STATUS.copy())
    data["scale_factor"] = (("record",), np.repeat([0.5, 1.0, 2.0], R // 3), {"units": "1"})
    coords = {"record": [f"r{k}" for k in range(R)], "storey": np.arange(1, n + 1), "floor": np.arange(1, n + 1)}
    return xr.Dataset(data, coords=coords, attrs={"frame": "test frame"})


def ok_values(ds, name):
    """The values of ``name`` over the records with status ok, absolute for residual drift."""
    x = ds[name].values[np.asarray(ds["status"].values == "ok")]
    return np.abs(x) if name == "residual_drift_ratio" else x


@pytest.fixture(scope="module")
def known():
    return known_dataset()


@pytest.mark.parametrize("name", QUANTITIES)
def test_statistics_equal_numpy_and_scipy(known, name):
    """Each statistic over the ok records equals numpy / scipy.stats on the same values:
    np.mean, np.median, np.percentile (linear interpolation, numpy's default), np.max;
    scipy.stats.gmean and np.std(np.log(x), ddof=1) over the positive values; the
    lognormal 16th / 84th as scipy.stats.lognorm(s=beta, scale=gmean).ppf at
    Phi(-1), Phi(+1) (Phi: scipy.stats.norm.cdf)."""
    stats = suite_statistics(known)
    x = ok_values(known, name)
    assert int(stats["ok_count"]) == x.shape[0] == 8
    columns = x.T if x.ndim == 2 else [x]
    got = {s: np.atleast_1d(stats[f"{name}_{s}"].values) for s in
           ("count", "mean", "median", "geometric_mean", "dispersion", "p16", "p84",
            "lognormal_p16", "lognormal_p84", "max", "log_excluded")}
    for i, col in enumerate(columns):
        pos = col[col > 0]
        beta = np.std(np.log(pos), ddof=1)
        gm = scipy.stats.gmean(pos)
        assert got["count"][i] == col.size
        assert got["log_excluded"][i] == col.size - pos.size
        np.testing.assert_allclose(got["mean"][i], np.mean(col), rtol=1e-14)
        assert got["median"][i] == np.median(col)
        np.testing.assert_allclose(got["p16"][i], np.percentile(col, 16), rtol=1e-14)
        np.testing.assert_allclose(got["p84"][i], np.percentile(col, 84), rtol=1e-14)
        assert got["max"][i] == np.max(col)
        np.testing.assert_allclose(got["geometric_mean"][i], gm, rtol=1e-13)
        np.testing.assert_allclose(got["dispersion"][i], beta, rtol=1e-13)
        fitted = scipy.stats.lognorm(s=beta, scale=gm)
        np.testing.assert_allclose(got["lognormal_p16"][i], fitted.ppf(scipy.stats.norm.cdf(-1.0)), rtol=1e-12)
        np.testing.assert_allclose(got["lognormal_p84"][i], fitted.ppf(scipy.stats.norm.cdf(1.0)), rtol=1e-12)


def test_lognormal_fit_agrees_with_scipy_maximum_likelihood(known):
    """scipy.stats.lognorm.fit with the location fixed at 0 (maximum likelihood) gives
    scale = geometric mean and s = std of ln x with ddof=0, i.e. our beta * sqrt((n-1)/n)."""
    stats = suite_statistics(known)
    x = ok_values(known, "peak_floor_acceleration")
    for i in range(x.shape[1]):
        s, loc, scale = scipy.stats.lognorm.fit(x[:, i], floc=0.0)
        n = x.shape[0]
        np.testing.assert_allclose(stats["peak_floor_acceleration_geometric_mean"].values[i], scale, rtol=1e-6)
        np.testing.assert_allclose(stats["peak_floor_acceleration_dispersion"].values[i] * np.sqrt((n - 1) / n),
                                   s, rtol=1e-6)


def test_nonpositive_values_are_left_out_of_log_statistics_and_counted(known):
    """A zero peak drift and a zero residual drift stay in the median and the count but not
    in the geometric mean or beta; residual drift statistics use |x| (the sign of a
    residual drift only says which way the building leans)."""
    stats = suite_statistics(known)
    assert stats["peak_drift_ratio_log_excluded"].values.tolist() == [0, 1, 0, 0]
    assert stats["residual_drift_ratio_log_excluded"].values.tolist() == [1, 0, 0, 0]
    assert stats["peak_drift_ratio_count"].values.tolist() == [8, 8, 8, 8]
    col = ok_values(known, "peak_drift_ratio")[:, 1]
    assert 0.0 in col
    assert stats["peak_drift_ratio_median"].values[1] == np.median(col)
    np.testing.assert_allclose(stats["peak_drift_ratio_geometric_mean"].values[1],
                               scipy.stats.gmean(col[col > 0]), rtol=1e-13)
    signed = known["residual_drift_ratio"].values[np.asarray(known["status"].values == "ok")]
    assert (signed < 0).any()
    assert stats["residual_drift_ratio_max"].values.tolist() == np.abs(signed).max(axis=0).tolist()
    assert "|residual drift ratio|" in stats.attrs["residual_note"]


def test_status_counts_and_collapse_fraction(known):
    """Collapsed, not-converged and failed analyses are counted, not used; the collapse
    fraction is over all analyses."""
    stats = suite_statistics(known)
    assert int(stats["analysis_count"]) == 12
    assert int(stats["ok_count"]) == 8
    assert int(stats["collapse_count"]) == 2
    assert int(stats["not_converged_count"]) == 1
    assert int(stats["failed_count"]) == 1
    assert float(stats["collapse_fraction"]) == 2 / 12
    # a large value in a collapsed record changes nothing
    changed = known.copy(deep=True)
    changed["peak_drift_ratio"][2, :] = 5.0
    changed["peak_drift_ratio"][4, :] = 5.0
    changed["peak_drift_ratio"][6, :] = np.nan
    again = suite_statistics(changed)
    xr.testing.assert_identical(again["peak_drift_ratio_max"], stats["peak_drift_ratio_max"])
    xr.testing.assert_identical(again["peak_drift_ratio_dispersion"], stats["peak_drift_ratio_dispersion"])
    assert "status ok" in stats.attrs["statistics_records"]
    assert "over all analyses" in stats.attrs["collapse_fraction_note"]


def test_units_and_layout(known):
    """One variable per quantity and statistic, along storey or floor, with units."""
    stats = suite_statistics(known)
    assert stats["peak_drift_ratio_median"].dims == ("storey",)
    assert stats["peak_floor_acceleration_p84"].dims == ("floor",)
    assert stats["peak_base_shear_max"].dims == ()
    assert stats["peak_floor_acceleration_median"].attrs["units"] == "m/s2"
    assert stats["peak_storey_shear_lognormal_p84"].attrs["units"] == "N"
    assert stats["peak_floor_acceleration_dispersion"].attrs["units"] == "1"
    assert stats["peak_floor_acceleration_count"].dtype.kind == "i"
    assert stats["peak_drift_ratio_median"].attrs["quantity"] == "peak_drift_ratio"
    assert stats["peak_drift_ratio_median"].attrs["statistic"] == "median"
    assert stats["storey"].values.tolist() == [1, 2, 3, 4]
    assert stats.attrs["caution"] == ss.CAUTION
    assert "ddof=1" in stats.attrs["dispersion_method"]
    assert "linear" in stats.attrs["percentile_method"]


@pytest.mark.parametrize("name,limit", [("peak_drift_ratio", 0.012), ("residual_drift_ratio", 0.002),
                                        ("peak_floor_acceleration", 4.5), ("peak_base_shear", 3.0e6),
                                        ("ductility", 3.0)])
def test_limits_are_counted_exactly(known, name, limit):
    """Count = ok analyses with value > limit, plus every collapsed analysis for a
    deformation quantity (common practice: a collapse exceeds every drift limit);
    fraction over all twelve analyses; the any-storey count is per analysis."""
    stats = suite_statistics(known, limits={name: limit})
    ok = np.asarray(known["status"].values == "ok")
    collapsed = np.asarray(known["status"].values == "collapsed")
    x = known[name].values
    x = np.abs(x) if name == "residual_drift_ratio" else x
    exceed = (x > limit) & (ok[:, None] if x.ndim == 2 else ok)
    if name in DEFORMATION:
        exceed |= collapsed[:, None] if x.ndim == 2 else collapsed
    expected = exceed.sum(axis=0)
    np.testing.assert_array_equal(stats[f"{name}_exceedance_count"].values, expected)
    np.testing.assert_array_equal(stats[f"{name}_exceedance_fraction"].values, expected / 12)
    if x.ndim == 2:
        assert int(stats[f"{name}_exceedance_count_any"]) == int(exceed.any(axis=1).sum())
        assert float(stats[f"{name}_exceedance_fraction_any"]) == exceed.any(axis=1).sum() / 12
    assert stats[f"{name}_exceedance_count"].attrs["limit"] == limit
    assert stats.attrs[f"limit_{name}"] == limit


def test_a_value_equal_to_the_limit_does_not_exceed_it(known):
    """Exceeding is strictly greater than; the not-converged and failed analyses never count."""
    value = float(known["peak_floor_acceleration"].values[0, 0])
    stats = suite_statistics(known, limits={"peak_floor_acceleration": value})
    ok_col = ok_values(known, "peak_floor_acceleration")[:, 0]
    assert int(stats["peak_floor_acceleration_exceedance_count"].values[0]) == int((ok_col > value).sum())
    tiny = suite_statistics(known, limits={"peak_drift_ratio": 1e-12})
    # every ok analysis has a positive drift somewhere, every collapsed one counts: 8 + 2
    assert int(tiny["peak_drift_ratio_exceedance_count_any"]) == 10


@pytest.mark.parametrize("by", ["scale_factor", "scale"])
def test_by_grouping_equals_the_subsets(known, by):
    """Statistics grouped by a per-record variable equal the statistics of each subset
    of records, and numpy on that subset; ``scale`` falls back to ``scale_factor``."""
    grouped = suite_statistics(known, limits={"peak_drift_ratio": 0.01}, by=by)
    assert grouped[by].values.tolist() == [0.5, 1.0, 2.0]
    factors = known["scale_factor"].values
    for level in (0.5, 1.0, 2.0):
        subset = known.isel(record=np.flatnonzero(factors == level))
        alone = suite_statistics(subset, limits={"peak_drift_ratio": 0.01})
        part = grouped.sel({by: level}, drop=True)
        for name in alone.data_vars:
            xr.testing.assert_allclose(part[name], alone[name])
        x = ok_values(subset, "peak_floor_acceleration")
        np.testing.assert_array_equal(part["peak_floor_acceleration_median"].values, np.median(x, axis=0))
        assert int(part["analysis_count"]) == 4


def test_a_level_dimension_is_kept():
    """Envelopes with an ``intensity`` dimension (a multi-level run) give statistics per
    intensity, equal to numpy on each level's records."""
    levels = [known_dataset(seed=s) for s in (5, 6)]
    ds = xr.concat(levels, dim="intensity", data_vars="all").assign_coords(intensity=[0.2, 0.4])
    ds["status"] = ds["status"].astype(object)
    stats = suite_statistics(ds, by="intensity")
    assert stats["peak_drift_ratio_dispersion"].dims == ("intensity", "storey")
    for k, level in enumerate(levels):
        x = ok_values(level, "peak_storey_shear")
        np.testing.assert_allclose(stats["peak_storey_shear_dispersion"].values[k],
                                   np.std(np.log(x), axis=0, ddof=1), rtol=1e-13)
        np.testing.assert_array_equal(stats["peak_storey_shear_p84"].values[k],
                                      np.percentile(x, 84, axis=0))
        assert int(stats["collapse_count"].values[k]) == 2


@pytest.mark.filterwarnings("error")
def test_empty_columns_give_nan_without_warnings(known):
    """A storey with no finite value (a linear storey's ductility) and a level with one ok
    analysis: count 0 or 1, NaN where the statistic is undefined (beta needs two values)."""
    ds = known.copy(deep=True)
    ds["ductility"][:, 2] = np.nan
    stats = suite_statistics(ds)
    assert stats["ductility_count"].values[2] == 0
    assert np.isnan(stats["ductility_median"].values[2])
    assert np.isnan(stats["ductility_dispersion"].values[2])
    one = suite_statistics(ds.isel(record=[0, 2]))
    assert int(one["ok_count"]) == 1
    assert np.isnan(one["peak_floor_acceleration_dispersion"].values).all()
    np.testing.assert_array_equal(one["peak_floor_acceleration_median"].values,
                                  ds["peak_floor_acceleration"].values[0])
    none = suite_statistics(ds.isel(record=[2, 4]))
    assert int(none["ok_count"]) == 0
    assert np.isnan(none["peak_drift_ratio_max"].values).all()


@pytest.mark.parametrize("kwargs,fragment", [
    (dict(limits={"peak_drift": 0.02}), "'peak_drift'"),
    (dict(limits={"peak_drift_ratio": 0.0}), "peak_drift_ratio must be a finite number > 0"),
    (dict(limits={"peak_drift_ratio": "2%"}), "peak_drift_ratio must be a finite number > 0"),
    (dict(by="site"), "'site'"),
    (dict(by="record"), "cannot group by 'record'"),
])
def test_mistakes_raise_input_errors(known, kwargs, fragment):
    """User mistakes raise InputError naming the key."""
    with pytest.raises(ss.InputError, match="^(limits|by): ") as err:
        suite_statistics(known, **kwargs)
    assert fragment in str(err.value)


def test_not_a_results_dataset():
    with pytest.raises(ss.InputError, match="no 'record' dimension"):
        suite_statistics(xr.Dataset({"a": ("x", [1.0, 2.0])}))
    with pytest.raises(ss.InputError, match="none of the envelopes"):
        suite_statistics(xr.Dataset({"a": ("record", [1.0, 2.0])}))


@pytest.fixture(scope="module")
def nonlinear_run():
    """A three-storey yielding frame under six seeded band-limited records (invented test
    input), three of them scaled up until the frame passes a low collapse limit."""
    frame = ss.ShearFrame(mass=[3.0e5, 2.8e5, 2.5e5], stiffness=[4.0e8, 3.2e8, 2.4e8], height=[4.0, 3.2, 3.2],
                          yield_shear=[1.6e6, 1.3e6, 0.9e6], hardening=0.03,
                          damping=ss.Rayleigh(ratio=0.05, modes=(1, 3)))
    recs = [ss.Record(band_limited_acceleration(s, 600, 0.01, peak=p), dt=0.01, units="m/s2", name=f"r{s}")
            for s, p in zip(range(1, 7), (2.0, 3.0, 4.0, 5.0, 9.0, 14.0))]
    return ss.run(frame, recs, tail=1.0, collapse_drift=0.03, scale=[1, 1, 1, 2, 2, 2])


def test_on_a_run_with_collapses(nonlinear_run, tmp_path):
    """On simulate.run output: the collapsed records are counted and left out, the
    statistics over the rest equal numpy, and the statistics dataset survives NetCDF."""
    ds = nonlinear_run
    status = ds["status"].values
    assert "collapsed" in status and "ok" in status
    stats = suite_statistics(ds, limits={"peak_drift_ratio": 0.02})
    ok = status == "ok"
    assert int(stats["ok_count"]) == ok.sum()
    assert int(stats["collapse_count"]) == (status == "collapsed").sum()
    mu = ds["ductility"].values[ok]
    np.testing.assert_array_equal(stats["ductility_median"].values, np.median(mu, axis=0))
    np.testing.assert_allclose(stats["ductility_dispersion"].values, np.std(np.log(mu), axis=0, ddof=1),
                               rtol=1e-13)
    drift = ds["peak_drift_ratio"].values
    expected = ((drift > 0.02) & ok[:, None] | (status == "collapsed")[:, None]).sum(axis=0)
    np.testing.assert_array_equal(stats["peak_drift_ratio_exceedance_count"].values, expected)
    assert stats.attrs["source_collapse_drift"] == 0.03
    path = ss.write_dataset(stats, tmp_path / "stats.nc")
    back = ss.read_dataset(path)
    xr.testing.assert_allclose(back, stats)
    assert back["peak_floor_acceleration_median"].attrs["units"] == "m/s2"
    assert back.attrs["caution"] == ss.CAUTION
