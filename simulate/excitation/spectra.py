"""Elastic and constant-ductility response spectra of ground-motion records.

Both functions take a list of :class:`~simulate.excitation.record.Record` (any
mix of time steps and lengths) and return an ``xarray.Dataset`` with a ``units``
attribute on every variable. The numerical work is done by the kernels in
:mod:`simulate.kernels.spectra`; this module checks the input, packs the records
into one array once, and labels the output.

Assumptions shared by every value here (stated again in the dataset attributes):

* The ground acceleration varies linearly between samples and is zero after
  the last sample. Each oscillator is integrated exactly for that input (the
  recurrence of Nigam and Jennings, 1969, for elastic oscillators), so the
  result does not depend on dt / T, also when dt > T / 10. It is the response
  to the interpolated record, though: for periods near dt the kinks of the
  interpolation at the samples excite the oscillator a little (PSA about 1 %
  above PGA at T = dt on band-limited noise), and PSA reaches PGA only for
  T well below dt.
* Peaks are the largest absolute values at the record samples and at sub-steps
  added so that each oscillator period holds at least ``samples_per_period``
  points (a sinusoid sampled at 20 points per cycle may miss its crest by up
  to 1 - cos(pi / 20) = 1.2 %). With ``free_vibration`` (the default) each
  oscillator is followed for one damped period after the record ends, so a
  peak reached after the shaking stops is counted.
* Records are used as given: no filtering and no baseline correction.
"""

from __future__ import annotations

import math
from numbers import Integral, Real

import numpy as np
import xarray as xr

from simulate._version import __version__
from simulate.errors import InputError
from simulate.excitation.record import Record
from simulate.kernels.spectra import SAMPLES_PER_PERIOD, constant_ductility, elastic_spectra
from simulate.settings import CAUTION, STANDARD_GRAVITY

__all__ = ["response_spectrum", "inelastic_spectrum", "log_periods"]

#: Stored in the ``note`` attribute of every spectrum dataset.
SPECTRUM_NOTE = (
    "Ground acceleration taken as linear between samples and zero after the last one; "
    "records used as given (no filtering, no baseline correction). Peaks are the largest "
    "absolute values at the samples and at sub-steps of at least samples_per_period points "
    "per oscillator period."
)

ELASTIC_METHOD = "piecewise-exact recurrence (Nigam and Jennings 1969)"
INELASTIC_METHOD = ("bilinear oscillator with kinematic hardening, exact between yield and "
                    "unloading events; largest strength reaching each ductility (Chopra, "
                    "Dynamics of Structures, ch. 7)")


# ------------------------------------------------------------------------------ checks


def as_records(records, *, label: str = "records") -> list[Record]:
    """``records`` as a non-empty list of Record (a single Record is accepted)."""
    if isinstance(records, Record):
        return [records]
    try:
        records = list(records)
    except TypeError:
        raise InputError(f"{label}: expected a Record or a list of Records, "
                         f"got {type(records).__name__}") from None
    if not records:
        raise InputError(f"{label}: no records given")
    for i, rec in enumerate(records):
        if not isinstance(rec, Record):
            raise InputError(f"{label}: item {i} is a {type(rec).__name__}, not a Record")
    return records


def record_labels(records) -> list[str]:
    """Record names made unique by appending ``~2``, ``~3`` ... to repeats."""
    seen: dict[str, int] = {}
    labels = []
    for rec in records:
        count = seen.get(rec.name, 0) + 1
        seen[rec.name] = count
        labels.append(rec.name if count == 1 else f"{rec.name}~{count}")
    return labels


def pack_records(records):
    """(ag (R, T) m/s^2 zero-padded, nsteps (R,) int64, dt (R,)) for the kernels."""
    nsteps = np.array([rec.n_steps for rec in records], dtype=np.int64)
    ag = np.zeros((len(records), int(nsteps.max())))
    for r, rec in enumerate(records):
        ag[r, :rec.n_steps] = rec.to_si()
    dt = np.array([rec.dt for rec in records], dtype=np.float64)
    return ag, nsteps, dt


def check_periods(periods, *, label: str = "periods", allow_empty: bool = False) -> np.ndarray:
    """``periods`` as a 1-D float64 array of distinct finite values >= 0 s."""
    try:
        values = np.array(periods, dtype=np.float64, ndmin=1)
    except (TypeError, ValueError):
        raise InputError(f"{label}: expected numbers of seconds, got {periods!r}") from None
    if values.ndim != 1:
        raise InputError(f"{label}: expected a list of periods, got an array of shape {values.shape}")
    if values.size == 0 and not allow_empty:
        raise InputError(f"{label}: no periods given")
    bad = ~np.isfinite(values) | (values < 0.0)
    if bad.any():
        raise InputError(f"{label}: periods must be finite and >= 0 s, got {float(values[bad][0]):g}")
    unique, counts = np.unique(values, return_counts=True)
    if (counts > 1).any():
        raise InputError(f"{label}: period {unique[counts > 1][0]:g} s is given more than once")
    return np.ascontiguousarray(values)


def _check_ratio(value, name: str, low: float, high: float) -> float:
    """A number with low <= value < high."""
    if isinstance(value, bool) or not isinstance(value, Real) or not math.isfinite(value):
        raise InputError(f"{name} must be a number, got {value!r}")
    value = float(value)
    if not low <= value < high:
        raise InputError(f"{name} must be >= {low:g} and < {high:g}, got {value:g}")
    return value


def check_damping(damping) -> float:
    """Damping ratio: 0 <= damping < 1."""
    return _check_ratio(damping, "damping ratio", 0.0, 1.0)


def check_samples_per_period(value) -> int:
    if isinstance(value, bool) or not isinstance(value, Integral) or value < 0:
        raise InputError(f"samples_per_period must be a whole number >= 0, got {value!r}")
    return int(value)


def check_ductility(ductility, *, label: str = "ductility") -> np.ndarray:
    """Target ductilities as a 1-D array of distinct finite values >= 1."""
    try:
        values = np.array(ductility, dtype=np.float64, ndmin=1)
    except (TypeError, ValueError):
        raise InputError(f"{label}: expected numbers >= 1, got {ductility!r}") from None
    if values.ndim != 1 or values.size == 0:
        raise InputError(f"{label}: expected one or more numbers >= 1, got {ductility!r}")
    bad = ~np.isfinite(values) | (values < 1.0)
    if bad.any():
        raise InputError(f"{label}: target ductilities must be finite and >= 1, got {float(values[bad][0]):g}")
    if np.unique(values).size != values.size:
        raise InputError(f"{label}: a target ductility is given more than once")
    return np.ascontiguousarray(values)


def log_periods(start, stop, count) -> np.ndarray:
    """``count`` periods from ``start`` to ``stop`` (both included, s), evenly spaced in log."""
    for name, value in (("start", start), ("stop", stop)):
        if isinstance(value, bool) or not isinstance(value, Real) or not math.isfinite(value) or value <= 0:
            raise InputError(f"period grid: {name} must be a number of seconds > 0, got {value!r}")
    if isinstance(count, bool) or not isinstance(count, Integral) or count < 1:
        raise InputError(f"period grid: count must be a whole number >= 1, got {count!r}")
    if count > 1 and not stop > start:
        raise InputError(f"period grid: stop ({stop:g} s) must be larger than start ({start:g} s)")
    if count == 1:
        return np.array([float(start)])
    return np.geomspace(float(start), float(stop), int(count))


# --------------------------------------------------------------------------- datasets


def _coords(labels, periods) -> dict:
    return {
        "record": ("record", np.asarray(labels, dtype=object)),
        "period": ("period", periods, {"units": "s", "long_name": "natural period of the oscillator"}),
    }


def _record_variables(records) -> dict:
    return {
        "record_dt": ("record", np.array([rec.dt for rec in records]),
                      {"units": "s", "long_name": "time step of the record"}),
        "record_source": ("record", np.array([str(rec.metadata.get("source", "")) for rec in records],
                                             dtype=object),
                          {"long_name": "file or generator the record came from"}),
    }


def _attributes(title, damping, samples_per_period, free_vibration, method) -> dict:
    return {
        "title": title,
        "software": f"swaysim {__version__}",
        "method": method,
        "damping": damping,
        "samples_per_period": samples_per_period,
        "free_vibration": "one damped period after the record" if free_vibration else "none",
        "note": SPECTRUM_NOTE,
        "caution": CAUTION,
    }


def response_spectrum(records, periods, damping=0.05, *, samples_per_period=SAMPLES_PER_PERIOD,
                      free_vibration=True) -> xr.Dataset:
    """Elastic response spectra of ground-motion records.

    Parameters
    ----------
    records : Record or list of Record
        Ground motions; time steps and lengths may differ.
    periods : array_like, shape (P,)
        Natural periods, s (distinct, >= 0). Period 0 is the rigid oscillator:
        ``sa = psa = PGA`` and ``sd = 0``.
    damping : float, optional
        Damping ratio, 0 <= damping < 1 (default 5 %).
    samples_per_period : int, optional
        Peaks are looked for at no fewer than this many points per oscillator
        period (record steps are split into sub-steps; 0 = at the samples only).
    free_vibration : bool, optional
        Follow each oscillator for one damped period after the record ends
        (default), so a peak reached after the shaking is counted.

    Returns
    -------
    xarray.Dataset
        Dimensions ``record`` (labels) and ``period`` (s). Variables ``sd`` (m,
        peak relative displacement), ``sv`` (m/s, peak relative velocity),
        ``psv`` = omega sd (m/s), ``psa`` = omega^2 sd (g), ``sa`` (g, peak
        absolute acceleration), ``record_dt`` and ``record_source``. Attributes
        give the damping, method, assumptions and the caution.

    Raises
    ------
    simulate.errors.InputError
        For anything but Records, bad periods or a damping ratio outside [0, 1).

    References
    ----------
    N. C. Nigam and P. C. Jennings (1969), "Calculation of response spectra from
    strong-motion earthquake records", Bull. Seismol. Soc. Am. 59(2), 909-922.
    A. K. Chopra, *Dynamics of Structures*, 4th ed., ch. 6 (response spectra).
    """
    records = as_records(records)
    periods = check_periods(periods)
    damping = check_damping(damping)
    samples_per_period = check_samples_per_period(samples_per_period)
    ag, nsteps, dt = pack_records(records)
    sd, sv, sa = elastic_spectra(ag, nsteps, dt, periods, damping, samples_per_period,
                                 bool(free_vibration))
    omega = np.where(periods > 0.0, 2.0 * np.pi / np.where(periods > 0.0, periods, 1.0), 0.0)
    psa = omega**2 * sd / STANDARD_GRAVITY
    # the rigid oscillator moves with the ground: PSA = SA = PGA
    psa[:, periods == 0.0] = sa[:, periods == 0.0] / STANDARD_GRAVITY
    dims = ("record", "period")
    data = {
        "sd": (dims, sd, {"units": "m", "long_name": "peak displacement relative to the ground"}),
        "sv": (dims, sv, {"units": "m/s", "long_name": "peak velocity relative to the ground"}),
        "psv": (dims, omega * sd, {"units": "m/s", "long_name": "pseudo-spectral velocity, omega * sd"}),
        "psa": (dims, psa, {"units": "g", "long_name": "pseudo-spectral acceleration, omega^2 * sd"}),
        "sa": (dims, sa / STANDARD_GRAVITY, {"units": "g", "long_name": "peak absolute acceleration"}),
        **_record_variables(records),
    }
    attrs = _attributes("swaysim elastic response spectra", damping, samples_per_period,
                        free_vibration, ELASTIC_METHOD)
    return xr.Dataset(data, coords=_coords(record_labels(records), periods), attrs=attrs)


def inelastic_spectrum(records, periods, ductility=(2, 4, 6), damping=0.05, hardening=0.0, *,
                       samples_per_period=SAMPLES_PER_PERIOD, free_vibration=True) -> xr.Dataset:
    """Constant-ductility spectra of bilinear oscillators (kinematic hardening).

    For each record, period and target ductility mu, the largest yield strength
    fy whose peak displacement is mu times the yield displacement; the strength
    is sought as fy_bar = fy / f0 with f0 the peak force of the elastic
    oscillator (scan downwards from 1, then bisection on log fy_bar). The
    ductility is not a monotonic function of strength, and several strengths
    may give the same ductility; the largest is kept.

    Parameters
    ----------
    records : Record or list of Record
    periods : array_like, shape (P,)
        Natural periods (initial stiffness), s, distinct, >= 0. At period 0
        ``strength_reduction`` is 1 by definition.
    ductility : sequence of float, optional
        Target ductilities mu >= 1 (default 2, 4, 6).
    damping : float, optional
        Damping ratio of the initial stiffness (constant damping coefficient), 0 <= damping < 1.
    hardening : float, optional
        Post-yield stiffness as a fraction of the initial stiffness, 0 <= hardening < 1
        (0: elastoplastic).
    samples_per_period, free_vibration
        As in :func:`response_spectrum`.

    Returns
    -------
    xarray.Dataset
        Dimensions ``record``, ``ductility``, ``period``. Variables
        ``strength_reduction`` R_y = 1 / fy_bar (1), ``yield_strength_coefficient``
        fy / (m g) = psa / R_y (1), ``sd_inelastic`` peak displacement (m) and
        ``achieved_ductility`` (1; equal to the target unless the ductility jumps
        there). NaN where no strength down to 1/1000 of f0 reaches the target.

    References
    ----------
    A. K. Chopra, *Dynamics of Structures*, 4th ed., ch. 7 (yield strength reduction
    factor, constant-ductility spectra).
    A. S. Veletsos and N. M. Newmark (1960), "Effect of inelastic behavior on the
    response of simple systems to earthquake motions", Proc. 2nd World Conf.
    Earthquake Eng., Tokyo, vol. 2, 895-912.
    """
    records = as_records(records)
    periods = check_periods(periods)
    mu = check_ductility(ductility)
    damping = check_damping(damping)
    hardening = _check_ratio(hardening, "hardening (post-yield stiffness ratio)", 0.0, 1.0)
    samples_per_period = check_samples_per_period(samples_per_period)
    ag, nsteps, dt = pack_records(records)
    R, P, D = len(records), periods.size, mu.size
    fy_bar = np.full((R, D, P), np.nan)
    u_max = np.full((R, D, P), np.nan)
    achieved = np.full((R, D, P), np.nan)
    psa = np.empty((R, P))
    moving = periods > 0.0
    if moving.any():
        tp = np.ascontiguousarray(periods[moving])
        sd = elastic_spectra(ag, nsteps, dt, tp, damping, samples_per_period, bool(free_vibration))[0]
        f, u, m = constant_ductility(ag, nsteps, dt, tp, damping, mu, hardening, sd,
                                     samples_per_period, bool(free_vibration))
        fy_bar[:, :, moving], u_max[:, :, moving], achieved[:, :, moving] = f, u, m
        psa[:, moving] = (2.0 * np.pi / tp) ** 2 * sd / STANDARD_GRAVITY
    if not moving.all():
        pga = np.abs(ag).max(axis=1) / STANDARD_GRAVITY
        psa[:, ~moving] = pga[:, None]
        fy_bar[:, :, ~moving] = 1.0
        u_max[:, :, ~moving] = 0.0
    dims = ("record", "ductility", "period")
    with np.errstate(divide="ignore", invalid="ignore"):
        data = {
            "strength_reduction": (dims, 1.0 / fy_bar, {
                "units": "1", "long_name": "yield strength reduction factor R_y = f0 / fy"}),
            "yield_strength_coefficient": (dims, fy_bar * psa[:, None, :], {
                "units": "1", "long_name": "yield strength over weight, fy / (m g)"}),
            "sd_inelastic": (dims, u_max, {
                "units": "m", "long_name": "peak displacement relative to the ground"}),
            "achieved_ductility": (dims, achieved, {
                "units": "1", "long_name": "peak over yield displacement at the strength found"}),
            **_record_variables(records),
        }
    coords = _coords(record_labels(records), periods)
    coords["ductility"] = ("ductility", mu, {"units": "1", "long_name": "target displacement ductility"})
    attrs = _attributes("swaysim constant-ductility spectra", damping, samples_per_period,
                        free_vibration, INELASTIC_METHOD)
    attrs["hardening"] = hardening
    return xr.Dataset(data, coords=coords, attrs=attrs)
