"""Suite statistics: the envelopes of a results dataset reduced over its records.

Per storey and floor (and per level when records are grouped) the statistics
engineers design with: count, mean, median, geometric mean, logarithmic
dispersion, empirical and lognormal 16th / 84th percentiles, maximum; the
number of analyses that collapsed, did not converge or failed; and the number
and fraction of analyses exceeding limits set by the user.

Every statistic is a reduction over the ``record`` dimension in xarray, so any
other dimension of the envelopes (a ``scale`` or ``intensity`` level of a
multi-level run) is kept and gives statistics per level.
"""

from __future__ import annotations

import math
import warnings
from numbers import Real

import numpy as np
import xarray as xr

from simulate._version import __version__
from simulate.errors import InputError
from simulate.results.schema import VARIABLES
from simulate.settings import CAUTION

#: Envelope quantities that get statistics, in the order reports show them.
QUANTITIES = (
    "peak_drift_ratio",
    "residual_drift_ratio",
    "peak_floor_acceleration",
    "peak_storey_shear",
    "peak_base_shear",
    "peak_roof_displacement",
    "ductility",
)

#: Deformation quantities: a collapsed analysis counts as exceeding any limit set on them.
DEFORMATION = ("peak_drift_ratio", "residual_drift_ratio", "ductility", "peak_roof_displacement")

#: Quantities whose statistics and limits use the absolute value (a residual drift has a sign).
ABSOLUTE = ("residual_drift_ratio",)

#: Percentiles of the empirical statistics and the standard-normal quantile of the lognormal ones.
PERCENTILES = (16.0, 84.0)

#: Statistic -> description. Variables are named ``<quantity>_<statistic>``.
STATISTICS = {
    "count": "number of analyses with status ok and a finite value",
    "mean": "arithmetic mean over the analyses with status ok",
    "median": "median over the analyses with status ok",
    "geometric_mean": "geometric mean exp(mean of ln x) over the positive values",
    "dispersion": "logarithmic dispersion beta: standard deviation of ln x (ddof=1) over the positive values",
    "p16": "16th percentile (numpy.percentile, linear interpolation) over the analyses with status ok",
    "p84": "84th percentile (numpy.percentile, linear interpolation) over the analyses with status ok",
    "lognormal_p16": "geometric_mean * exp(-dispersion): the fitted lognormal's 15.87th percentile",
    "lognormal_p84": "geometric_mean * exp(+dispersion): the fitted lognormal's 84.13th percentile",
    "max": "maximum over the analyses with status ok",
    "log_excluded": "values <= 0 left out of geometric_mean, dispersion and the lognormal percentiles",
}

#: Statistics that are counts (integers, units "1") rather than values in the quantity's units.
COUNTS = ("count", "log_excluded", "exceedance_count", "exceedance_count_any")

#: Status categories counted for every level: variable name -> (statistic, description).
STATUS_COUNTS = {
    "analysis_count": ("analyses", "number of analyses (all statuses)"),
    "ok_count": ("ok", "analyses with status ok (the ones the statistics describe)"),
    "collapse_count": ("collapsed", "analyses with status collapsed"),
    "collapse_fraction": ("collapse_fraction", "collapse_count / analysis_count, over all analyses"),
    "not_converged_count": ("not_converged", "analyses with status not-converged"),
    "failed_count": ("failed", "analyses that failed (status 'failed: ...' or any other status text)"),
}

#: Notes stored in the statistics dataset's attributes.
NOTES = {
    "statistics_records": (
        "statistics use only analyses with status ok; collapsed, not-converged and failed "
        "analyses are left out of every statistic and counted in collapse_count, "
        "not_converged_count and failed_count"),
    "collapse_fraction_note": "collapse_fraction = collapse_count / analysis_count, over all analyses",
    "percentile_method": (
        "p16 and p84: numpy.percentile with its default linear interpolation between order "
        "statistics (method='linear'), over the analyses with status ok"),
    "dispersion_method": (
        "dispersion beta: sample standard deviation of ln x with ddof=1 (common practice for "
        "lognormal demand dispersion); values <= 0 are left out of the log statistics and "
        "counted in <quantity>_log_excluded"),
    "lognormal_method": (
        "lognormal fitted by the moments of ln x: median = geometric_mean, lognormal_p16 and "
        "lognormal_p84 = geometric_mean * exp(-/+ dispersion), strictly the 15.87th and 84.13th "
        "percentiles of the fitted distribution"),
    "residual_note": "residual_drift_ratio statistics and limits use |residual drift ratio|",
    "exceedance_method": (
        "<quantity>_exceedance_count: analyses with status ok whose value is greater than the "
        "limit, plus every collapsed analysis when the quantity is a deformation "
        "(peak_drift_ratio, residual_drift_ratio, ductility, peak_roof_displacement; a collapsed "
        "analysis counts as exceeding at every storey); not-converged and failed analyses never "
        "count as exceeding; fractions are over all analyses (analysis_count)"),
}

#: Status text of an analysis that ended normally, and the other categories.
OK, COLLAPSED, NOT_CONVERGED = "ok", "collapsed", "not-converged"

#: Dimensions the statistics are given along (every other dimension except ``record`` is a level).
LOCATIONS = ("storey", "floor")


def _quantity_units(ds: xr.Dataset, name: str) -> str:
    units = ds[name].attrs.get("units")
    if units is None and name in VARIABLES:
        units = VARIABLES[name][1]
    return units or "1"


def envelope_quantities(ds) -> list[str]:
    """The quantities of ``ds`` that get statistics; raise when it is not a results dataset."""
    if not isinstance(ds, xr.Dataset):
        raise InputError(f"suite statistics need an xarray.Dataset of results, got {type(ds).__name__}")
    if "record" not in ds.dims:
        raise InputError("not a results dataset: it has no 'record' dimension")
    present = [q for q in QUANTITIES if q in ds.data_vars]
    if not present:
        raise InputError(f"not a results dataset: it has none of the envelopes {', '.join(QUANTITIES)}")
    for q in present:
        if "record" not in ds[q].dims:
            raise InputError(f"not a results dataset: {q} has no 'record' dimension")
        if ds[q].dtype.kind not in "fiu":
            raise InputError(f"not a results dataset: {q} is not numeric")
    return present


def status_categories(ds: xr.Dataset) -> xr.DataArray:
    """Each analysis's status reduced to ``ok``, ``collapsed``, ``not-converged`` or ``failed``.

    A dataset without a ``status`` variable (every linear analysis ends ok) counts as all ok.
    Any status text other than the first three counts as failed.
    """
    if "status" not in ds.variables:
        return xr.DataArray(np.full(ds.sizes["record"], OK, dtype=object), dims=("record",))
    status = ds["status"]
    text = np.vectorize(lambda s: s.decode() if isinstance(s, bytes) else str(s), otypes=[object])(status.values)
    known = np.isin(text, [OK, COLLAPSED, NOT_CONVERGED])
    text = np.where(known, text, "failed").astype(object)
    return xr.DataArray(text, dims=status.dims)


def _check_limits(limits, present) -> dict:
    if limits is None:
        return {}
    if not isinstance(limits, dict):
        raise InputError(f"limits must be a mapping of quantity to limit value, got {type(limits).__name__}")
    checked = {}
    for name, value in limits.items():
        if name not in present:
            known = ", ".join(present)
            raise InputError(f"limits: unknown quantity {name!r} for this dataset; use one of {known}")
        if isinstance(value, bool) or not isinstance(value, Real) or not math.isfinite(value) or value <= 0:
            raise InputError(f"limits: {name} must be a finite number > 0, got {value!r}")
        checked[name] = float(value)
    return checked


def _location_dim(da: xr.DataArray) -> str | None:
    return next((d for d in da.dims if d in LOCATIONS), None)


def _attrs(quantity: str, statistic: str, units: str, description: str) -> dict:
    return {"quantity": quantity, "statistic": statistic, "units": units,
            "long_name": f"{quantity}: {description}"}


def _reduce(ds: xr.Dataset, present: list[str], limits: dict) -> xr.Dataset:
    """Statistics over the ``record`` dimension of ``ds`` (every other dimension is kept)."""
    category = status_categories(ds)
    ok = category == OK
    collapsed = category == COLLAPSED
    n_all = xr.ones_like(ok, dtype=np.int64).sum("record")
    out = {}
    counts = {
        "analysis_count": n_all,
        "ok_count": ok.sum("record"),
        "collapse_count": collapsed.sum("record"),
        "not_converged_count": (category == NOT_CONVERGED).sum("record"),
        "failed_count": (category == "failed").sum("record"),
    }
    counts["collapse_fraction"] = counts["collapse_count"] / n_all
    for name, (statistic, description) in STATUS_COUNTS.items():
        out[name] = counts[name].assign_attrs(quantity="status", statistic=statistic, units="1",
                                             long_name=description)

    for q in present:
        units = _quantity_units(ds, q)
        x = ds[q].reset_coords(drop=True)
        if q in ABSOLUTE:
            x = abs(x)
        x_ok = x.where(ok)
        positive = x_ok.where(x_ok > 0)
        logx = np.log(positive)
        with warnings.catch_warnings():
            # all-NaN storeys (no ok analysis, a linear storey's ductility) give NaN statistics
            warnings.simplefilter("ignore", RuntimeWarning)
            count = x_ok.count("record")
            log_count = logx.count("record")
            geometric_mean = np.exp(logx.mean("record"))
            dispersion = logx.std("record", ddof=1)
            quantiles = x_ok.quantile([p / 100.0 for p in PERCENTILES], dim="record", method="linear")
            values = {
                "count": count,
                "mean": x_ok.mean("record"),
                "median": x_ok.median("record"),
                "geometric_mean": geometric_mean,
                "dispersion": dispersion,
                "p16": quantiles.isel(quantile=0, drop=True),
                "p84": quantiles.isel(quantile=1, drop=True),
                "lognormal_p16": geometric_mean * np.exp(-dispersion),
                "lognormal_p84": geometric_mean * np.exp(dispersion),
                "max": x_ok.max("record"),
                "log_excluded": count - log_count,
            }
        for statistic, value in values.items():
            stat_units = "1" if statistic in COUNTS or statistic == "dispersion" else units
            out[f"{q}_{statistic}"] = value.assign_attrs(_attrs(q, statistic, stat_units, STATISTICS[statistic]))
        if q in limits:
            out.update(_exceedance(q, x, ok, collapsed, n_all, limits[q], units))
    return xr.Dataset(out)


def _exceedance(q, x, ok, collapsed, n_all, limit, units) -> dict:
    """Count and fraction of analyses with ``x > limit`` (collapsed ones exceed deformation limits)."""
    exceed = (x > limit) & ok
    if q in DEFORMATION:
        exceed = exceed | collapsed
    limit_attrs = {"limit": limit, "limit_units": units}
    where = "at every storey" if _location_dim(x) == "storey" else "at every floor"
    rule = (f"status ok and value > limit, or collapsed ({where})" if q in DEFORMATION
            else "status ok and value > limit")
    out = {}
    count = exceed.sum("record")
    out[f"{q}_exceedance_count"] = count.assign_attrs(
        _attrs(q, "exceedance_count", "1", f"analyses exceeding {limit:g} {units}: {rule}"), **limit_attrs)
    out[f"{q}_exceedance_fraction"] = (count / n_all).assign_attrs(
        _attrs(q, "exceedance_fraction", "1", "exceedance_count / analysis_count"), **limit_attrs)
    loc = _location_dim(x)
    if loc is not None:
        count_any = exceed.any(loc).sum("record")
        out[f"{q}_exceedance_count_any"] = count_any.assign_attrs(
            _attrs(q, "exceedance_count_any", "1", f"analyses exceeding {limit:g} {units} in at least one {loc}"),
            **limit_attrs)
        out[f"{q}_exceedance_fraction_any"] = (count_any / n_all).assign_attrs(
            _attrs(q, "exceedance_fraction_any", "1", "exceedance_count_any / analysis_count"), **limit_attrs)
    return out


def _group_variable(ds: xr.Dataset, by: str) -> xr.DataArray:
    """The per-record variable ``by`` names (``scale`` falls back to ``scale_factor``)."""
    name = by
    if name not in ds.variables and by == "scale" and "scale_factor" in ds.variables:
        name = "scale_factor"
    if name not in ds.variables:
        per_record = sorted(str(v) for v in ds.variables
                            if ds[v].dims == ("record",) and v != "record")
        levels = sorted(str(d) for d in ds.dims if d not in ("record", "time", "mode") + LOCATIONS)
        choices = ", ".join(levels + per_record) or "none"
        raise InputError(f"by: no dimension or per-record variable {by!r} in the results; use one of {choices}")
    var = ds[name]
    if var.dims != ("record",):
        raise InputError(f"by: {name} must be a dimension or a variable along 'record' only, "
                         f"it has dimensions {var.dims}")
    values = var.values
    if values.dtype.kind == "f" and not np.isfinite(values).all():
        raise InputError(f"by: {name} has missing (NaN) values")
    return var


def suite_statistics(ds: xr.Dataset, limits: dict | None = None, by: str | None = None) -> xr.Dataset:
    """Statistics of the envelopes over the records of a results dataset.

    Parameters
    ----------
    ds : xarray.Dataset
        Results as returned by ``simulate.run`` or read by ``simulate.read_dataset``:
        envelopes (record, storey | floor) or (record,), and ``status`` (record).
        Any other dimension of the envelopes (``scale``, ``intensity``) is kept.
    limits : dict, optional
        Quantity -> limit in the quantity's units (for example
        ``{"peak_drift_ratio": 0.02, "peak_floor_acceleration": 9.81}``, m/s2 for
        accelerations). Adds the count and fraction of analyses exceeding each limit.
    by : str, optional
        A dimension of the envelopes other than ``record`` (statistics per level,
        which happens anyway) or a per-record variable or coordinate such as
        ``scale_factor`` (records grouped by its value; ``"scale"`` falls back to
        ``scale_factor`` when the dataset has no ``scale``). The groups become a new
        dimension named ``by``.

    Returns
    -------
    xarray.Dataset
        One variable per quantity and statistic, ``<quantity>_<statistic>``, with
        dims (levels..., storey | floor) and ``units``, ``quantity`` and
        ``statistic`` attributes. Statistics: ``count``, ``mean``, ``median``,
        ``geometric_mean``, ``dispersion`` (standard deviation of ln x, ddof=1),
        ``p16``, ``p84`` (numpy's default linear interpolation),
        ``lognormal_p16``, ``lognormal_p84`` (geometric mean * exp(-/+ dispersion)),
        ``max`` and ``log_excluded`` (values <= 0 left out of the log statistics);
        with limits, ``exceedance_count`` and ``exceedance_fraction`` (and
        ``..._any`` over storeys or floors). Status counts ``analysis_count``,
        ``ok_count``, ``collapse_count``, ``collapse_fraction``,
        ``not_converged_count``, ``failed_count``. Only analyses with status ok
        enter the statistics; ``residual_drift_ratio`` uses absolute values. The
        attributes say all this and carry the caution.

    Raises
    ------
    simulate.InputError
        ``ds`` is not a results dataset, a limit names an unknown quantity or is
        not a positive number, or ``by`` names nothing in ``ds``.

    References
    ----------
    The lognormal description of demands (median and dispersion beta = standard
    deviation of ln x) is common practice in performance-based earthquake
    engineering.
    """
    present = envelope_quantities(ds)
    limits = _check_limits(limits, present)
    if by is None or (by in ds.dims and by != "record"):
        if by is not None and not any(by in ds[q].dims for q in present):
            raise InputError(f"by: dimension {by!r} is not a dimension of the envelopes")
        stats = _reduce(ds, present, limits)
    elif by == "record" or by in LOCATIONS:
        raise InputError(f"by: cannot group by {by!r}; statistics are over records, per storey and floor")
    else:
        var = _group_variable(ds, by)
        levels = np.unique(var.values)
        parts = [_reduce(ds.isel(record=np.flatnonzero(var.values == level)), present, limits)
                 for level in levels]
        stats = xr.concat(parts, dim=by, data_vars="all", coords="minimal", compat="override",
                          join="outer", combine_attrs="override")
        level_attrs = {"long_name": f"records grouped by {var.name}"}
        if var.attrs.get("units"):
            level_attrs["units"] = var.attrs["units"]
        stats = stats.assign_coords({by: (by, levels, level_attrs)})
    for loc in LOCATIONS:
        if loc in ds.coords and loc in stats.dims:
            stats = stats.assign_coords({loc: ds.coords[loc]})
    stats.attrs = _dataset_attributes(ds, limits, by)
    return stats


def _dataset_attributes(ds: xr.Dataset, limits: dict, by: str | None) -> dict:
    attrs = {
        "title": "swaysim suite statistics",
        "software": f"swaysim {__version__}",
        **NOTES,
    }
    if by is not None:
        attrs["by"] = by
    for name, value in limits.items():
        attrs[f"limit_{name}"] = value
    for key in ("frame", "method", "collapse_drift", "software", "created"):
        if key in ds.attrs:
            attrs[f"source_{key}"] = ds.attrs[key]
    attrs["caution"] = CAUTION
    return attrs


def quantities(stats: xr.Dataset) -> list[str]:
    """The quantities a statistics dataset holds, in the order of :data:`QUANTITIES`."""
    held = {stats[v].attrs.get("quantity") for v in stats.data_vars}
    return [q for q in QUANTITIES if q in held]
