"""The analysis plan: time step, step counts and the load arrays the kernels read.

Python-level work here happens once per record (interpolation to the analysis
step, scaling, padding), never once per step.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from simulate.errors import InputError
from simulate.excitation import FloorForces, Record


@dataclass
class Plan:
    dt: float
    nsteps: np.ndarray      # (R,) int64, valid steps per record (record + tail)
    n_time: int             # length of the common time axis
    labels: list[str]
    scale: np.ndarray       # (R,)
    has_force: bool

    @property
    def time(self) -> np.ndarray:
        return np.arange(self.n_time) * self.dt


def _unique_labels(names) -> list[str]:
    seen: dict[str, int] = {}
    labels = []
    for name in names:
        count = seen.get(name, 0) + 1
        seen[name] = count
        labels.append(name if count == 1 else f"{name}~{count}")
    return labels


def make_plan(records, n_floors: int, dt=None, scale=1.0, tail=0.0) -> Plan:
    """Choose the analysis step and step counts for ``records``.

    ``dt`` defaults to the smallest record step; it may be smaller than a record's
    step (the record is interpolated linearly) but not larger (peaks would be skipped).
    ``tail`` seconds of free vibration follow each record.
    """
    if not records:
        raise InputError("no records to run")
    for rec in records:
        if not isinstance(rec, (Record, FloorForces)):
            raise InputError(f"expected Record or FloorForces objects, got {type(rec).__name__}")
        if isinstance(rec, FloorForces) and rec.n_floors != n_floors:
            raise InputError(
                f"floor forces {rec.name!r} have {rec.n_floors} floors but the frame has {n_floors}"
            )
    rec_dts = np.array([rec.dt for rec in records])
    if dt is None:
        dt = float(rec_dts.min())
    dt = float(dt)
    if not math.isfinite(dt) or dt <= 0:
        raise InputError(f"analysis dt must be positive, got {dt!r}")
    for rec, rdt in zip(records, rec_dts):
        if dt > rdt * (1 + 1e-9):
            raise InputError(
                f"analysis dt {dt:g} s is larger than the step {rdt:g} s of record {rec.name!r}; "
                f"use dt <= {rdt:g} s"
            )
    tail = float(tail)
    if not math.isfinite(tail) or tail < 0:
        raise InputError(f"free-vibration tail must be >= 0 s, got {tail!r}")
    n_tail = int(round(tail / dt))
    nsteps = np.array([int(math.floor(rec.duration / dt + 1e-9)) + 1 + n_tail for rec in records],
                      dtype=np.int64)
    try:
        scale = np.broadcast_to(np.asarray(scale, dtype=float), (len(records),)).copy()
    except ValueError:
        raise InputError(f"scale must be one factor or one per record ({len(records)})") from None
    if not np.isfinite(scale).all():
        raise InputError("scale factors must be finite numbers")
    return Plan(dt=dt, nsteps=nsteps, n_time=int(nsteps.max()),
                labels=_unique_labels([rec.name for rec in records]), scale=scale,
                has_force=any(isinstance(rec, FloorForces) for rec in records))


def _resample(values: np.ndarray, rdt: float, dt: float, n: int) -> np.ndarray:
    """``values`` sampled at ``rdt`` taken at n analysis steps of ``dt`` (linear interpolation)."""
    if abs(rdt - dt) <= 1e-12 * dt:
        return values[:n]
    t_rec = np.arange(values.shape[0]) * rdt
    t = np.arange(n) * dt
    if values.ndim == 1:
        return np.interp(t, t_rec, values)
    return np.column_stack([np.interp(t, t_rec, values[:, j]) for j in range(values.shape[1])])


def load_arrays(records, plan: Plan, n_floors: int):
    """Ground acceleration (R, T) in m/s^2 and floor forces (R, T, N) or (R, 1, N) in N.

    Ground acceleration is zero in the free-vibration tail and NaN after each
    record's last step; forces are zero outside their record.
    """
    R, T = len(records), plan.n_time
    ag = np.full((R, T), np.nan)
    force = np.zeros((R, T if plan.has_force else 1, n_floors))
    for r, rec in enumerate(records):
        n_rec = int(math.floor(rec.duration / plan.dt + 1e-9)) + 1
        ag[r, :plan.nsteps[r]] = 0.0
        if isinstance(rec, Record):
            ag[r, :n_rec] = plan.scale[r] * _resample(rec.to_si(), rec.dt, plan.dt, n_rec)
        else:
            force[r, :n_rec, :] = plan.scale[r] * _resample(rec.force, rec.dt, plan.dt, n_rec)
    return ag, force
