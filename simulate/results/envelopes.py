"""Envelopes of a results dataset: peaks over time per record, storey and floor."""

from __future__ import annotations

import numpy as np
import xarray as xr

from simulate.kernels.peaks import _peak_abs
from simulate.results.schema import ENVELOPES, variable


def _peaks(values: np.ndarray) -> np.ndarray:
    x = np.ascontiguousarray(values, dtype=np.float64)
    out = np.empty((x.shape[0], x.shape[2]))
    _peak_abs(x, out)
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
    peak_shear = _peaks(shear)
    peak_disp = _peaks(disp)
    data = {
        "peak_drift_ratio": _peaks(drift),
        "residual_drift_ratio": drift[np.arange(drift.shape[0]), last, :],
        "peak_floor_acceleration": _peaks(acc),
        "peak_storey_shear": peak_shear,
        "peak_base_shear": peak_shear[:, 0],
        "peak_roof_displacement": peak_disp[:, -1],
    }
    coords = {c: ds.coords[c] for c in ("record", "floor", "storey") if c in ds.coords}
    out = xr.Dataset({name: variable(name, data[name]) for name in ENVELOPES}, coords=coords)
    if "storey_yield_shear" in ds and "storey_stiffness" in ds:
        dy = (ds["storey_yield_shear"] / ds["storey_stiffness"]).values
        peak_d = data["peak_drift_ratio"] * ds["storey_height"].values[None, :]
        out["ductility"] = variable("ductility", peak_d / dy[None, :])
    return out
