"""Ground-motion intensity measures: peaks, Arias intensity, significant duration, CAV, Sa.

Every integral treats the acceleration as varying linearly between samples,
the same assumption as the response spectra (:mod:`simulate.excitation.spectra`),
and integrates that piecewise-linear history exactly: velocity by the
trapezoidal rule, displacement with the matching cubic term, a^2 and |a| with
their exact integrals over each step (including a sign change inside a step).
Velocity and displacement start from rest and are not baseline-corrected, so a
record with an offset or drift gives the drifting values it implies.

References
----------
A. Arias (1970), "A measure of earthquake intensity", in R. J. Hansen (ed.),
*Seismic Design for Nuclear Power Plants*, MIT Press, 438-483.
M. D. Trifunac and A. G. Brady (1975), "A study on the duration of strong
earthquake ground motion", Bull. Seismol. Soc. Am. 65(3), 581-626.
EPRI (1988), *A criterion for determining exceedance of the operating basis
earthquake*, report NP-5930 (cumulative absolute velocity; from memory).
"""

from __future__ import annotations

import math
from numbers import Integral, Real

import numpy as np
import xarray as xr

from simulate._version import __version__
from simulate.errors import InputError
from simulate.excitation.record import Record
from simulate.excitation.spectra import (
    as_records, check_damping, check_periods, record_labels, response_spectrum,
)
from simulate.settings import CAUTION, STANDARD_GRAVITY

__all__ = [
    "intensity_measures", "ground_velocity", "ground_displacement", "arias_intensity",
    "cumulative_arias", "significant_duration", "cumulative_absolute_velocity",
    "AVERAGE_RANGE", "AVERAGE_COUNT",
]

#: Default period range of the average spectral acceleration, as multiples of the period given.
AVERAGE_RANGE = (0.2, 3.0)

#: Default number of log-spaced periods in that range.
AVERAGE_COUNT = 10


def _si(record: Record) -> tuple[np.ndarray, float]:
    if not isinstance(record, Record):
        raise InputError(f"expected a Record, got {type(record).__name__}")
    return record.to_si(), record.dt


def ground_velocity(record: Record) -> np.ndarray:
    """Ground velocity from rest, m/s, shape (n_steps,): trapezoidal rule, no baseline correction."""
    a, dt = _si(record)
    v = np.empty_like(a)
    v[0] = 0.0
    np.cumsum(0.5 * dt * (a[:-1] + a[1:]), out=v[1:])
    return v


def ground_displacement(record: Record) -> np.ndarray:
    """Ground displacement from rest, m, shape (n_steps,), exact for linear acceleration between samples.

    d_{i+1} = d_i + dt v_i + dt^2 (a_i / 3 + a_{i+1} / 6), with v from :func:`ground_velocity`.
    """
    a, dt = _si(record)
    v = ground_velocity(record)
    d = np.empty_like(a)
    d[0] = 0.0
    np.cumsum(dt * v[:-1] + dt * dt * (a[:-1] / 3.0 + a[1:] / 6.0), out=d[1:])
    return d


def _a2_steps(a: np.ndarray, dt: float) -> np.ndarray:
    """Integral of a^2 over each step of the piecewise-linear history, shape (n_steps - 1,)."""
    return dt * (a[:-1] ** 2 + a[:-1] * a[1:] + a[1:] ** 2) / 3.0


def cumulative_arias(record: Record) -> np.ndarray:
    """Arias intensity accumulated up to each sample, m/s, shape (n_steps,) (the Husid curve)."""
    a, dt = _si(record)
    out = np.empty_like(a)
    out[0] = 0.0
    np.cumsum(_a2_steps(a, dt), out=out[1:])
    return out * (math.pi / (2.0 * STANDARD_GRAVITY))


def arias_intensity(record: Record) -> float:
    """Arias intensity I_a = pi / (2 g) * integral of a^2 dt, m/s (Arias 1970)."""
    return float(cumulative_arias(record)[-1])


def _crossing_time(a: np.ndarray, dt: float, cum: np.ndarray, level: float) -> float:
    """First time (s from the first sample) at which the cumulative integral of a^2 reaches ``level``."""
    i = int(np.searchsorted(cum, level, side="left"))
    if i == 0:
        return 0.0
    i -= 1                           # cum[i] < level <= cum[i + 1]
    a0, delta = a[i], a[i + 1] - a[i]
    lo, hi = 0.0, dt
    for _ in range(200):             # the cubic is monotone in s: bisection is enough
        s = 0.5 * (lo + hi)
        x = s / dt
        value = cum[i] + dt * (a0 * a0 * x + a0 * delta * x * x + delta * delta * x ** 3 / 3.0)
        if value < level:
            lo = s
        else:
            hi = s
        if hi - lo <= 1e-15 * dt:
            break
    return i * dt + 0.5 * (lo + hi)


def significant_duration(record: Record, start: float = 0.05, stop: float = 0.95) -> float:
    """Time between ``start`` and ``stop`` fractions of the Arias intensity, s (D5-95 by default).

    The crossing times are found inside the step on the exact cubic of the
    accumulated a^2. NaN for a record of zeros. (Trifunac and Brady 1975.)
    """
    for name, value in (("start", start), ("stop", stop)):
        if isinstance(value, bool) or not isinstance(value, Real) or not 0.0 <= value <= 1.0:
            raise InputError(f"significant duration: {name} must be a fraction in [0, 1], got {value!r}")
    if not start < stop:
        raise InputError(f"significant duration: start ({start:g}) must be below stop ({stop:g})")
    a, dt = _si(record)
    cum = np.empty_like(a)
    cum[0] = 0.0
    np.cumsum(_a2_steps(a, dt), out=cum[1:])
    total = cum[-1]
    if not total > 0.0:
        return math.nan
    return _crossing_time(a, dt, cum, stop * total) - _crossing_time(a, dt, cum, start * total)


def cumulative_absolute_velocity(record: Record) -> float:
    """CAV = integral of |a| dt over the record, m/s (no threshold; EPRI 1988, from memory)."""
    a, dt = _si(record)
    a0, a1 = a[:-1], a[1:]
    m0, m1 = np.abs(a0), np.abs(a1)
    same = a0 * a1 >= 0.0
    with np.errstate(divide="ignore", invalid="ignore"):
        # a sign change inside the step: two triangles, areas a0^2 and a1^2 over 2 (|a0| + |a1|)
        crossing = dt * (a0 * a0 + a1 * a1) / (2.0 * (m0 + m1))
    return float(np.sum(np.where(same, 0.5 * dt * (m0 + m1), crossing)))


def _check_average(average_range, average_count) -> tuple[float, float, int]:
    try:
        low, high = (float(x) for x in average_range)
    except (TypeError, ValueError):
        raise InputError(f"average_range: expected two multiples (low, high) of the period, "
                         f"got {average_range!r}") from None
    if not (math.isfinite(low) and math.isfinite(high) and 0.0 < low < high):
        raise InputError(f"average_range: expected 0 < low < high, got {average_range!r}")
    if isinstance(average_count, bool) or not isinstance(average_count, Integral) or average_count < 2:
        raise InputError(f"average_count: expected a whole number >= 2, got {average_count!r}")
    return low, high, int(average_count)


def intensity_measures(records, periods=(), damping=0.05, *, average_range=AVERAGE_RANGE,
                       average_count=AVERAGE_COUNT) -> xr.Dataset:
    """Intensity measures of ground-motion records.

    Parameters
    ----------
    records : Record or list of Record
    periods : array_like, shape (P,), optional
        Periods T, s, at which to give Sa(T) and the average spectral acceleration.
    damping : float, optional
        Damping ratio of the spectral values (default 5 %).
    average_range : (float, float), optional
        The average spectral acceleration at T is the geometric mean of Sa at
        ``average_count`` periods spaced evenly in log from ``average_range[0] * T``
        to ``average_range[1] * T`` (default 0.2 T to 3 T, 10 periods, a range used
        for collapse assessment; Eads, Miranda and Lignos 2015, from memory).
    average_count : int, optional

    Returns
    -------
    xarray.Dataset
        Dimension ``record`` (and ``period`` when periods are given). Variables
        ``pga`` (g), ``pgv`` (m/s), ``pgd`` (m), ``arias_intensity`` (m/s),
        ``significant_duration`` (s, D5-95), ``cumulative_absolute_velocity``
        (m/s), ``duration`` (s), ``record_dt`` (s); with periods ``sa`` and
        ``sa_avg`` (g; pseudo-spectral acceleration, omega^2 sd).

    References
    ----------
    Arias (1970); Trifunac and Brady (1975); see the module docstring. Sa:
    A. K. Chopra, *Dynamics of Structures*, 4th ed., ch. 6.
    """
    records = as_records(records)
    periods = check_periods(periods, allow_empty=True)
    damping = check_damping(damping)
    low, high, count = _check_average(average_range, average_count)

    rows = []
    for rec in records:
        a = rec.to_si()
        rows.append((
            float(np.max(np.abs(a))) / STANDARD_GRAVITY,
            float(np.max(np.abs(ground_velocity(rec)))),
            float(np.max(np.abs(ground_displacement(rec)))),
            arias_intensity(rec),
            significant_duration(rec),
            cumulative_absolute_velocity(rec),
            rec.duration,
            rec.dt,
        ))
    cols = np.array(rows, dtype=np.float64).T
    specs = [
        ("pga", "g", "peak ground acceleration"),
        ("pgv", "m/s", "peak ground velocity (from rest, no baseline correction)"),
        ("pgd", "m", "peak ground displacement (from rest, no baseline correction)"),
        ("arias_intensity", "m/s", "Arias intensity, pi / (2 g) * integral of a^2 dt"),
        ("significant_duration", "s", "D5-95: time between 5 % and 95 % of the Arias intensity"),
        ("cumulative_absolute_velocity", "m/s", "integral of |a| dt"),
        ("duration", "s", "time from the first to the last sample"),
        ("record_dt", "s", "time step of the record"),
    ]
    data = {name: ("record", cols[i], {"units": units, "long_name": text})
            for i, (name, units, text) in enumerate(specs)}
    coords = {"record": ("record", np.asarray(record_labels(records), dtype=object))}
    if periods.size:
        factors = np.geomspace(low, high, count)
        around = (periods[:, None] * factors[None, :]).ravel()
        wanted, inverse = np.unique(np.concatenate([periods, around]), return_inverse=True)
        psa = response_spectrum(records, wanted, damping)["psa"].values
        sa = psa[:, inverse[:periods.size]]
        near = psa[:, inverse[periods.size:]].reshape(len(records), periods.size, count)
        with np.errstate(divide="ignore"):
            sa_avg = np.exp(np.mean(np.log(near), axis=2))
        data["sa"] = (("record", "period"), sa, {
            "units": "g", "long_name": "pseudo-spectral acceleration Sa(T)"})
        data["sa_avg"] = (("record", "period"), sa_avg, {
            "units": "g", "long_name": f"geometric mean of Sa at {count} periods from {low:g} T to {high:g} T"})
        coords["period"] = ("period", periods, {"units": "s"})
    attrs = {
        "title": "swaysim ground-motion intensity measures",
        "software": f"swaysim {__version__}",
        "damping": damping,
        "average_range": np.array([low, high]),
        "average_count": count,
        "note": "Acceleration taken as linear between samples; velocity and displacement from rest, "
                "no filtering or baseline correction.",
        "caution": CAUTION,
    }
    return xr.Dataset(data, coords=coords, attrs=attrs)
