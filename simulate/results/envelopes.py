"""Envelopes of a results dataset: peaks over time per record, storey and floor."""

from __future__ import annotations

import numpy as np
import xarray as xr

from simulate.kernels.peaks import _peak_abs_many
from simulate.results.schema import ENVELOPES, variable


def envelope_arrays(drift, shear, acc, disp, last) -> dict:
    """Envelope arrays from (R, T, N) histories and each record's last valid step (R,)."""
    arrays = [np.ascontiguousarray(x, dtype=np.float64) for x in (drift, shear, acc, disp)]
    R, _, N = arrays[0].shape
    peaks = [np.empty((R, N)) for _ in arrays]
    _peak_abs_many(*arrays, *peaks)
    peak_drift, peak_shear, peak_acc, peak_disp = peaks
    return {
        "peak_drift_ratio": peak_drift,
        "residual_drift_ratio": arrays[0][np.arange(R), last, :],
        "peak_floor_acceleration": peak_acc,
        "peak_storey_shear": peak_shear,
        "peak_base_shear": peak_shear[:, 0],
        "peak_roof_displacement": peak_disp[:, -1],
    }


def envelope_variables(data: dict, yield_drift=None, height=None) -> dict:
    """``xarray.Variable`` objects of the envelopes, with ductility when yield drifts are known."""
    out = {name: variable(name, data[name]) for name in ENVELOPES}
    if yield_drift is not None:
        out["ductility"] = variable("ductility", data["peak_drift_ratio"] * height[None, :] / yield_drift[None, :])
    return out


def envelopes(ds: xr.Dataset) -> xr.Dataset:
    """Envelope variables of a results dataset.

    Parameters
    ----------
    ds : xarray.Dataset
        Results with dims (record, time, floor|storey) as returned by ``simulate.run``.

    Returns
    -------
    xarray.Dataset
        ``peak_drift_ratio``, ``residual_drift_ratio``, ``peak_storey_shear`` (record,
        storey); ``peak_floor_acceleration`` (record, floor); ``peak_base_shear`` and
        ``peak_roof_displacement`` (record). Peaks are of absolute values; the residual
        drift ratio is the drift ratio at each record's last valid step (after any
        free-vibration tail).
    """
    drift = ds["drift_ratio"].transpose("record", "time", "storey").values
    shear = ds["storey_shear"].transpose("record", "time", "storey").values
    acc = ds["absolute_acceleration"].transpose("record", "time", "floor").values
    disp = ds["displacement"].transpose("record", "time", "floor").values
    if "n_steps" in ds:
        last = ds["n_steps"].values.astype(int) - 1
    else:
        valid = np.isfinite(drift[:, :, 0])
        last = valid.shape[1] - 1 - np.argmax(valid[:, ::-1], axis=1)
    data = envelope_arrays(drift, shear, acc, disp, last)
    yield_drift = height = None
    if "storey_yield_shear" in ds and "storey_stiffness" in ds:
        yield_drift = (ds["storey_yield_shear"] / ds["storey_stiffness"]).values
        height = ds["storey_height"].values
    coords = {c: ds.coords[c] for c in ("record", "floor", "storey") if c in ds.coords}
    return xr.Dataset(envelope_variables(data, yield_drift, height), coords=coords)
