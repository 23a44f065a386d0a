"""``run``: a frame and a list of records in, a results dataset out."""

from __future__ import annotations

import numpy as np
import xarray as xr

from simulate.errors import InputError
from simulate.excitation import FloorForces, Record
from simulate.kernels.methods import make_method
from simulate.results.envelopes import envelopes
from simulate.results.schema import HISTORIES, base_attributes, coordinates, variable
from simulate.suite.plan import load_arrays, make_plan


def run(frame, records, dt=None, method: str = "newmark", scale=1.0, tail: float = 0.0,
        attrs: dict | None = None, **method_params) -> xr.Dataset:
    """Run ``records`` through ``frame`` and return the full results dataset.

    Parameters
    ----------
    frame : ShearFrame
    records : Record, FloorForces or a list of them
        Base accelerations and/or floor force histories.
    dt : float, optional
        Analysis time step, s; defaults to the smallest record step. Records with a
        larger step are interpolated linearly.
    method : {"newmark", "state-space"}
        Integrator (see ``simulate.kernels.METHODS``).
    scale : float or sequence of float
        Factor(s) applied to the records.
    tail : float
        Seconds of free vibration after each record (for residual drift).
    attrs : dict, optional
        Extra dataset attributes (for example the config text).
    **method_params
        Method parameters, e.g. ``gamma=0.5, beta=1/6`` for Newmark.

    Returns
    -------
    xarray.Dataset
        Dimensions ``record``, ``time``, ``floor``, ``storey``, ``mode``; histories
        (record, time, floor|storey), envelopes (record, storey|floor) and frame
        properties, each with a ``units`` attribute. Records shorter than the longest
        are padded with NaN after their last step.
    """
    if isinstance(records, (Record, FloorForces)):
        records = [records]
    records = list(records)
    if not frame.is_linear:
        raise InputError(
            "this version integrates linear frames only: remove yield_shear and gravity_load "
            "(hysteretic storeys and P-Delta are not available yet)"
        )
    integrator = make_method(method, **method_params)
    n = frame.n_storeys
    plan = make_plan(records, n, dt=dt, scale=scale, tail=tail)
    prepared = integrator.prepare(frame, plan.dt)
    ag, force = load_arrays(records, plan, n)
    R, T = len(records), plan.n_time
    outputs = tuple(np.empty((R, T, n)) for _ in HISTORIES)
    integrator.integrate(frame, prepared, plan.dt, ag, force, plan.has_force, plan.nsteps, outputs)
    return _dataset(frame, records, plan, integrator, ag, outputs, attrs)


def _dataset(frame, records, plan, integrator, ag, outputs, attrs) -> xr.Dataset:
    modes = frame.modes()
    n = frame.n_storeys
    per_record = {
        "status": np.array(["ok"] * len(records), dtype=object),
        "n_steps": plan.nsteps,
        "scale_factor": plan.scale,
        "record_dt": np.array([rec.dt for rec in records]),
        "record_source": np.array([str(rec.metadata.get("source", "")) for rec in records], dtype=object),
        "excitation": np.array(["floor-forces" if isinstance(rec, FloorForces) else "base-acceleration"
                                for rec in records], dtype=object),
    }
    data = {"ground_acceleration": variable("ground_acceleration", ag)}
    data.update({name: variable(name, arr) for name, arr in zip(HISTORIES, outputs)})
    data.update({name: variable(name, arr) for name, arr in per_record.items()})
    data["floor_mass"] = variable("floor_mass", np.asarray(frame.mass))
    data["storey_height"] = variable("storey_height", np.asarray(frame.height))
    data["storey_stiffness"] = variable("storey_stiffness", np.asarray(frame.stiffness))
    data["modal_period"] = variable("modal_period", modes["period"].values)
    data["modal_damping_ratio"] = variable("modal_damping_ratio", modes["damping_ratio"].values)
    ds = xr.Dataset(data, coords=coordinates(plan.labels, plan.time, n, n))
    ds = ds.merge(envelopes(ds))
    ds.attrs.update(base_attributes())
    ds.attrs.update(
        frame=frame.name,
        storeys=n,
        damping=frame.damping.describe(),
        analysis_dt=plan.dt,
        **integrator.attributes(),
    )
    if attrs:
        ds.attrs.update(attrs)
    return ds
