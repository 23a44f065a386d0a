"""Comparing two results datasets record by record: usually a frame and its linear twin.

Convention: ``a`` is the reference (usually the linear twin, elastic), ``b`` the
other analysis (usually the hysteretic frame). Demand ratios are b / a, so a
drift ratio of 1.3 means the frame drifts 30 % more than its reference; the
strength reduction factor is a / b of the peak base shear, the elastic demand
over the strength the frame developed.
"""

from __future__ import annotations

import warnings

import numpy as np
import xarray as xr

from simulate.errors import InputError
from simulate.results.envelopes import envelopes
from simulate.results.schema import base_attributes
from simulate.settings import CAUTION

#: Envelope variables compared, with the dimension other than ``record`` (None: per record).
COMPARED = {
    "peak_drift_ratio": "storey",
    "residual_drift_ratio": "storey",
    "peak_floor_acceleration": "floor",
    "peak_base_shear": None,
}

#: Units of the compared envelopes.
UNITS = {"peak_drift_ratio": "1", "residual_drift_ratio": "1", "peak_floor_acceleration": "m/s2",
         "peak_base_shear": "N"}

CONVENTION = ("a is the reference (usually the linear twin), b the other analysis; demand ratios are "
              "b / a; the strength reduction factor R is the peak base shear of a over that of b")

RESIDUAL_NOTE = ("residual drift ratios are compared as |b| / |a|; an elastic reference has a residual "
                 "drift near zero, so that ratio is often meaningless: read the absolute values "
                 "residual_drift_ratio_a and residual_drift_ratio_b")


def _envelopes_of(ds: xr.Dataset, name: str) -> xr.Dataset:
    """The compared envelopes of ``ds``, computed from its histories where they are missing."""
    if all(var in ds for var in COMPARED):
        return ds
    try:
        return ds.merge(envelopes(ds), compat="override")
    except KeyError as exc:
        raise InputError(f"{name}: not a time-history results dataset (no {exc.args[0]!r} to compute "
                         f"the envelopes from)") from None


def _labels(ds: xr.Dataset, name: str) -> list[str]:
    if "record" not in ds.coords:
        raise InputError(f"{name}: not a time-history results dataset (no record coordinate)")
    labels = [str(label) for label in ds["record"].values]
    seen = set()
    for label in labels:
        if label in seen:
            raise InputError(f"{name}: record label {label!r} appears twice; labels must be unique to align records")
        seen.add(label)
    return labels


def _preview(labels: list[str], count: int = 3) -> str:
    shown = ", ".join(repr(label) for label in labels[:count])
    return shown + (f", ... ({len(labels)} in all)" if len(labels) > count else "")


def _ratio(numerator: np.ndarray, denominator: np.ndarray) -> np.ndarray:
    """numerator / denominator, NaN where the denominator is zero or either value is missing."""
    with np.errstate(divide="ignore", invalid="ignore"):
        out = numerator / denominator
    return np.where(denominator != 0.0, out, np.nan)


def _median(values: np.ndarray) -> np.ndarray:
    """Median over records (axis 0) ignoring NaN; NaN where no record has a value."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return np.nanmedian(values, axis=0)


def compare(ds_a: xr.Dataset, ds_b: xr.Dataset, names: tuple[str, str] = ("a", "b")) -> xr.Dataset:
    """Record-by-record demand ratios b / a of two results datasets, and their medians.

    Parameters
    ----------
    ds_a : xarray.Dataset
        The reference results (usually the linear twin), as from ``simulate.run``.
    ds_b : xarray.Dataset
        The other results (usually the hysteretic frame), same number of storeys.
    names : (str, str)
        How error messages and the attributes name the two datasets (for example
        their file names).

    Returns
    -------
    xarray.Dataset
        Dimensions ``record`` (the labels both datasets hold, in the order of
        ``ds_a``), ``storey`` and ``floor``. For each compared envelope X in
        ``peak_drift_ratio``, ``residual_drift_ratio`` (record, storey),
        ``peak_floor_acceleration`` (record, floor) and ``peak_base_shear``
        (record): the values ``X_a`` and ``X_b``, the ratio ``ratio_X`` = b / a and
        its median over records ``median_ratio_X``. ``strength_reduction_factor``
        (record) = peak base shear of a / that of b (the effective R when a is
        elastic) and its median; ``status_a``, ``status_b``. Ratios are NaN where
        the denominator is zero or missing; medians ignore NaN.

    Notes
    -----
    Residual drift ratios are compared as |b| / |a|. The residual drift of an
    elastic reference is close to zero after a free-vibration tail, so that ratio
    can be huge or meaningless; read ``residual_drift_ratio_a`` and
    ``residual_drift_ratio_b`` themselves. The peak base shear is the peak storey-1
    spring shear the datasets store.

    Raises
    ------
    simulate.errors.InputError
        When the datasets share no record label, differ in their number of storeys,
        or are not time-history results.
    """
    name_a, name_b = names
    labels_a = _labels(ds_a, name_a)
    labels_b = _labels(ds_b, name_b)
    in_b = set(labels_b)
    common = [label for label in labels_a if label in in_b]
    if not common:
        raise InputError(f"no record in common between {name_a} ({_preview(labels_a)}) and "
                         f"{name_b} ({_preview(labels_b)}); records are aligned by their labels")
    for dim in ("storey", "floor"):
        na, nb = ds_a.sizes.get(dim), ds_b.sizes.get(dim)
        if na != nb:
            raise InputError(f"{name_a} has {na} {dim}s but {name_b} has {nb}; "
                             f"compare analyses of the same building")
    ia = [labels_a.index(label) for label in common]
    ib = [labels_b.index(label) for label in common]
    env_a = _envelopes_of(ds_a, name_a)
    env_b = _envelopes_of(ds_b, name_b)

    data = {}
    for var, dim in COMPARED.items():
        dims = ("record",) if dim is None else ("record", dim)
        a = env_a[var].transpose(*dims).values[ia].astype(float)
        b = env_b[var].transpose(*dims).values[ib].astype(float)
        units = UNITS[var]
        long_name = env_a[var].attrs.get("long_name", var)
        data[f"{var}_a"] = xr.Variable(dims, a, {"units": units, "long_name": f"{long_name} (a, reference)"})
        data[f"{var}_b"] = xr.Variable(dims, b, {"units": units, "long_name": f"{long_name} (b)"})
        if var == "residual_drift_ratio":
            ratio = _ratio(np.abs(b), np.abs(a))
            how = "|b| / |a|"
        else:
            ratio = _ratio(b, a)
            how = "b / a"
        data[f"ratio_{var}"] = xr.Variable(dims, ratio, {"units": "1", "long_name": f"{var} {how}"})
        data[f"median_ratio_{var}"] = xr.Variable(dims[1:], _median(ratio),
                                                  {"units": "1", "long_name": f"median over records of {var} {how}"})
    R = _ratio(data["peak_base_shear_a"].values, data["peak_base_shear_b"].values)
    data["strength_reduction_factor"] = xr.Variable(
        ("record",), R, {"units": "1", "long_name": "strength reduction factor R: peak base shear a / b"})
    data["median_strength_reduction_factor"] = xr.Variable(
        (), _median(R), {"units": "1", "long_name": "median over records of the strength reduction factor"})
    for which, ds, index in (("a", ds_a, ia), ("b", ds_b, ib)):
        status = (np.asarray(ds["status"].values, dtype=object)[index] if "status" in ds
                  else np.array(["ok"] * len(index), dtype=object))
        data[f"status_{which}"] = xr.Variable(("record",), np.array([str(s) for s in status], dtype=object),
                                              {"long_name": f"analysis status ({which})"})

    n = ds_a.sizes["storey"]
    coords = {"record": ("record", np.array(common, dtype=object)),
              "storey": ("storey", np.arange(1, n + 1)), "floor": ("floor", np.arange(1, n + 1))}
    out = xr.Dataset(data, coords=coords)
    out.attrs.update(base_attributes())
    out.attrs.update(
        title="swaysim comparison of two results datasets (b / a)",
        a=str(name_a),
        b=str(name_b),
        frame_a=str(ds_a.attrs.get("frame", "")),
        frame_b=str(ds_b.attrs.get("frame", "")),
        records_a=len(labels_a),
        records_b=len(labels_b),
        records_compared=len(common),
        convention=CONVENTION,
        residual_note=RESIDUAL_NOTE,
        caution=CAUTION,
    )
    return out
