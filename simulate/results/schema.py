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
    "energy_input": (("record", "time"), "J", "relative input energy"),
    "energy_kinetic": (("record", "time"), "J", "kinetic energy of the relative motion"),
    "energy_damping": (("record", "time"), "J", "energy dissipated by viscous damping"),
    "energy_strain": (("record", "time"), "J", "recoverable strain energy (storey springs and P-Delta)"),
    "energy_hysteretic": (("record", "time"), "J", "energy dissipated by storey hysteresis"),
    "energy_balance_error": (("record",), "1",
                             "max over time of |E_input - (E_kinetic + E_damping + E_strain + E_hysteretic)| "
                             "/ max over time of |E_input|"),
    "hysteretic_energy": (("record", "storey"), "J", "energy dissipated by hysteresis in the storey"),
    "cumulative_plastic_drift_ratio": (("record", "storey"), "1",
                                       "sum of absolute plastic storey deformation increments / h_i"),
    "ductility": (("record", "storey"), "1", "peak storey deformation / yield deformation Vy / k"),
    "newton_iterations": (("record",), "1", "Newton iterations over the record"),
    "substepped_steps": (("record",), "1", "steps that had to be split to converge"),
    "storey_law": (("storey",), "", "storey force-deformation law"),
    "storey_yield_shear": (("storey",), "N", "storey yield shear"),
    "storey_hardening": (("storey",), "1", "post-yield stiffness ratio"),
    "storey_gravity_load": (("storey",), "N", "axial gravity load carried by the storey (P-Delta)"),
    "modal_period": (("mode",), "s", "undamped natural period"),
    "modal_damping_ratio": (("mode",), "1", "damping ratio of the mode"),
}

HISTORIES = ("displacement", "velocity", "absolute_acceleration", "drift_ratio", "storey_shear")
ENVELOPES = ("peak_drift_ratio", "residual_drift_ratio", "peak_floor_acceleration",
             "peak_storey_shear", "peak_base_shear", "peak_roof_displacement")
ENERGIES = ("energy_input", "energy_kinetic", "energy_damping", "energy_strain", "energy_hysteretic")

#: Status labels by kernel status code.
STATUS = {0: "ok", 1: "not-converged", 2: "collapsed"}


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
