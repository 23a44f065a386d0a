"""The results dataset: names, dimensions and units of every variable.

One table describes each variable once; builders and readers use it so the
schema lives in a single place.
"""

from __future__ import annotations

from datetime import datetime, timezone

import numpy as np
import xarray as xr

from simulate._version import __version__
from simulate.settings import CAUTION

#: name -> (dimensions, units, description)
VARIABLES = {
    "ground_acceleration": (("record", "time"), "m/s2", "ground acceleration applied at the base"),
    "displacement": (("record", "time", "floor"), "m", "floor displacement relative to the ground"),
    "velocity": (("record", "time", "floor"), "m/s", "floor velocity relative to the ground"),
    "absolute_acceleration": (("record", "time", "floor"), "m/s2", "absolute floor acceleration"),
    "drift_ratio": (("record", "time", "storey"), "1", "storey drift ratio (u_i - u_i-1) / h_i"),
    "storey_shear": (("record", "time", "storey"), "N", "storey spring shear (restoring force, no damping force)"),
    "peak_drift_ratio": (("record", "storey"), "1", "peak absolute storey drift ratio"),
    "residual_drift_ratio": (("record", "storey"), "1", "storey drift ratio at the end of the analysis"),
    "peak_floor_acceleration": (("record", "floor"), "m/s2", "peak absolute floor acceleration"),
    "peak_storey_shear": (("record", "storey"), "N", "peak absolute storey spring shear"),
    "peak_base_shear": (("record",), "N", "peak absolute spring shear of storey 1"),
    "peak_roof_displacement": (("record",), "m", "peak absolute roof displacement relative to the ground"),
    "status": (("record",), "", "ok, or the reason the analysis stopped"),
    "n_steps": (("record",), "1", "number of valid analysis steps (later steps are NaN padding)"),
    "scale_factor": (("record",), "1", "factor applied to the record"),
    "record_dt": (("record",), "s", "time step of the record as read"),
    "record_source": (("record",), "", "file or generator the record came from"),
    "excitation": (("record",), "", "base-acceleration or floor-forces"),
    "floor_mass": (("floor",), "kg", "lumped floor mass"),
    "storey_height": (("storey",), "m", "storey height"),
    "storey_stiffness": (("storey",), "N/m", "elastic storey stiffness"),
    "modal_period": (("mode",), "s", "undamped natural period"),
    "modal_damping_ratio": (("mode",), "1", "damping ratio of the mode"),
}

HISTORIES = ("displacement", "velocity", "absolute_acceleration", "drift_ratio", "storey_shear")
ENVELOPES = ("peak_drift_ratio", "residual_drift_ratio", "peak_floor_acceleration",
             "peak_storey_shear", "peak_base_shear", "peak_roof_displacement")


def variable(name: str, data) -> xr.Variable:
    """An ``xarray.Variable`` with the dims, units and description the schema gives ``name``."""
    dims, units, description = VARIABLES[name]
    attrs = {"long_name": description}
    if units:
        attrs["units"] = units
    return xr.Variable(dims, data, attrs)


def base_attributes() -> dict:
    """Attributes every results dataset carries."""
    return {
        "title": "swaysim time-history results",
        "software": f"swaysim {__version__}",
        "created": datetime.now(timezone.utc).isoformat(timespec="seconds"),
        "conventions": "SI units; floors and storeys numbered from the ground up; "
                       "storey i joins floor i-1 and floor i",
        "caution": CAUTION,
    }


def coordinates(labels, time, n: int, n_modes: int | None = None) -> dict:
    coords = {
        "record": ("record", np.asarray(labels, dtype=object)),
        "time": ("time", np.asarray(time, dtype=float), {"units": "s"}),
        "floor": ("floor", np.arange(1, n + 1)),
        "storey": ("storey", np.arange(1, n + 1)),
    }
    if n_modes:
        coords["mode"] = ("mode", np.arange(1, n_modes + 1))
    return coords
