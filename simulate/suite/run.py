"""``run``: a frame and a list of records in, a results dataset out."""

from __future__ import annotations

import numpy as np
import xarray as xr

from simulate.errors import InputError
from simulate.excitation import FloorForces, Record
from simulate.kernels.methods import make_method
from simulate.results.envelopes import envelope_arrays, envelope_variables
from simulate.results.schema import ENERGIES, HISTORIES, STATUS, base_attributes, coordinates, variable
from simulate.suite.plan import load_arrays, make_plan


def run(frame, records, dt=None, method: str = "newmark", scale=1.0, tail: float = 0.0,
        collapse_drift: float = 0.10, attrs: dict | None = None, **method_params) -> xr.Dataset:
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
    collapse_drift : float
        Storey drift ratio beyond which a nonlinear analysis stops with status
        "collapsed" (default 0.10, a common-practice sidesway-collapse limit).
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
    collapse_drift = float(collapse_drift)
    if not (np.isfinite(collapse_drift) and collapse_drift > 0):
        raise InputError(f"collapse_drift must be a positive drift ratio, got {collapse_drift!r}")
    integrator = make_method(method, **method_params)
    n = frame.n_storeys
    plan = make_plan(records, n, dt=dt, scale=scale, tail=tail)
    prepared = integrator.prepare(frame, plan.dt)
    ag, force = load_arrays(records, plan, n)
    R, T = len(records), plan.n_time
    outputs = tuple(np.empty((R, T, n)) for _ in HISTORIES)
    extra = integrator.integrate(frame, prepared, plan.dt, ag, force, plan.has_force, plan.nsteps, outputs,
                                 collapse_drift=collapse_drift)
    ds = _dataset(frame, records, plan, integrator, ag, outputs, extra, attrs)
    if not frame.is_linear:
        ds.attrs["collapse_drift"] = collapse_drift
    return ds


def _nonlinear_variables(frame, plan, ag, extra) -> dict:
    """Status, energies and storey demands from the nonlinear kernel's extra outputs."""
    info = extra["info"]
    energy = extra["energy"]
    status = np.array([STATUS[int(code)] for code in info[:, 0]], dtype=object)
    data = {name: variable(name, energy[:, :, c]) for c, name in enumerate(ENERGIES)}
    balance = energy[:, :, 0] - energy[:, :, 1:].sum(axis=2)
    with np.errstate(invalid="ignore", divide="ignore"):
        scale = np.nanmax(np.abs(energy[:, :, 0]), axis=1)
        error = np.nanmax(np.abs(balance), axis=1) / scale
    data["energy_balance_error"] = variable("energy_balance_error", np.where(scale > 0, error, 0.0))
    data["hysteretic_energy"] = variable("hysteretic_energy", extra["storey"][:, :, 0])
    data["cumulative_plastic_drift_ratio"] = variable(
        "cumulative_plastic_drift_ratio", extra["storey"][:, :, 1] / frame.height[None, :])
    data["newton_iterations"] = variable("newton_iterations", info[:, 2])
    data["substepped_steps"] = variable("substepped_steps", info[:, 3])
    data["n_steps"] = variable("n_steps", info[:, 1])
    data["status"] = variable("status", status)
    data["storey_law"] = variable("storey_law", np.array(frame.law, dtype=object))
    if frame.yield_shear is not None:
        vy = np.where([name == "linear" for name in frame.law], np.nan, frame.yield_shear)
        data["storey_yield_shear"] = variable("storey_yield_shear", vy)
        data["storey_hardening"] = variable("storey_hardening", np.asarray(frame.hardening))
    if frame.gravity_load is not None:
        data["storey_gravity_load"] = variable("storey_gravity_load", np.asarray(frame.gravity_load))
    # ground acceleration after a record stopped early is not part of its analysis
    for r, n_valid in enumerate(info[:, 1]):
        ag[r, n_valid:] = np.nan
    return data


def _dataset(frame, records, plan, integrator, ag, outputs, extra, attrs) -> xr.Dataset:
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
    data = {name: variable(name, arr) for name, arr in per_record.items()}
    if extra:
        data.update(_nonlinear_variables(frame, plan, ag, extra))
    data["ground_acceleration"] = variable("ground_acceleration", ag)
    data.update({name: variable(name, arr) for name, arr in zip(HISTORIES, outputs)})
    data["floor_mass"] = variable("floor_mass", np.asarray(frame.mass))
    data["storey_height"] = variable("storey_height", np.asarray(frame.height))
    data["storey_stiffness"] = variable("storey_stiffness", np.asarray(frame.stiffness))
    data["modal_period"] = variable("modal_period", frame.periods())
    data["modal_damping_ratio"] = variable("modal_damping_ratio", frame.modal_damping_ratios())
    # envelopes straight from the kernels' arrays, before the Dataset is built
    histories = dict(zip(HISTORIES, outputs))
    last = (extra["info"][:, 1] if extra else plan.nsteps) - 1
    peaks = envelope_arrays(histories["drift_ratio"], histories["storey_shear"],
                            histories["absolute_acceleration"], histories["displacement"], last)
    yield_drift = None
    if "storey_yield_shear" in data:
        yield_drift = data["storey_yield_shear"].values / frame.stiffness
    data.update(envelope_variables(peaks, yield_drift, frame.height))
    ds = xr.Dataset(data, coords=coordinates(plan.labels, plan.time, n, n))
    ds.attrs.update(base_attributes())
    ds.attrs.update(
        frame=frame.name,
        storeys=n,
        damping=frame.damping.describe(),
        analysis_dt=plan.dt,
        **integrator.attributes(linear=frame.is_linear),
    )
    if attrs:
        ds.attrs.update(attrs)
    return ds
