"""Record processing: baseline correction, filtering, tapering, resampling and padding.

Every function takes a :class:`~simulate.excitation.record.Record` and returns a
new one; the input is never changed. Each appends one entry to
``metadata["processing"]``, a dict with ``"step"`` and the step's parameters
(the shape :meth:`Record.scaled` uses), so results carry the provenance of the
motion they were computed from. Filters, tapers and resampling are those of
:mod:`scipy.signal`.
"""

from __future__ import annotations

import math
from fractions import Fraction
from numbers import Integral, Real

import numpy as np
from scipy import integrate, signal

from simulate.errors import RecordError
from simulate.excitation.record import Record, _label

__all__ = [
    "baseline_correct",
    "bandpass",
    "butterworth_sos",
    "taper",
    "resample",
    "pad",
    "MAX_POLYPHASE_TERM",
    "ANTI_ALIAS_FRACTION",
    "ANTI_ALIAS_ORDER",
]

#: Largest numerator or denominator of the step ratio for polyphase resampling.
MAX_POLYPHASE_TERM = 100

#: Corner of the anti-alias low-pass before linear interpolation to a coarser step,
#: as a fraction of the new Nyquist frequency.
ANTI_ALIAS_FRACTION = 0.8

#: Order of that anti-alias Butterworth low-pass (applied forward and backward).
ANTI_ALIAS_ORDER = 8


def _check_record(record, what: str) -> str:
    if not isinstance(record, Record):
        raise RecordError(f"{what} expects a Record, got {type(record).__name__}")
    return _label("record", record.name, record.metadata)


def _number(value, what: str, label: str, *, positive=False, non_negative=False) -> float:
    if isinstance(value, bool) or not isinstance(value, Real) or not math.isfinite(value):
        raise RecordError(f"{label}: {what} must be a finite number, got {value!r}")
    value = float(value)
    if positive and value <= 0.0:
        raise RecordError(f"{label}: {what} must be > 0, got {value!r}")
    if non_negative and value < 0.0:
        raise RecordError(f"{label}: {what} must be >= 0, got {value!r}")
    return value


def _whole(value, what: str, label: str, minimum: int) -> int:
    if isinstance(value, bool) or not isinstance(value, Integral) or value < minimum:
        raise RecordError(f"{label}: {what} must be a whole number >= {minimum}, got {value!r}")
    return int(value)


def _processed(record: Record, acceleration, step: dict, dt=None) -> Record:
    """A new record with ``step`` appended to ``metadata["processing"]``."""
    metadata = dict(record.metadata)
    metadata["processing"] = list(metadata.get("processing", [])) + [step]
    return Record(acceleration=acceleration, dt=record.dt if dt is None else dt,
                  units=record.units, name=record.name, metadata=metadata)


# ------------------------------------------------------------------ baseline
def baseline_correct(record: Record, order: int = 1, on: str = "acceleration") -> Record:
    """Remove a polynomial baseline of degree ``order`` from the acceleration.

    Parameters
    ----------
    record : Record
    order : int, optional
        Degree of the polynomial removed from the acceleration (0: mean,
        1: straight line, ...).
    on : {"acceleration", "displacement"}, optional
        ``"acceleration"``: least-squares fit of the polynomial to the
        acceleration itself, which is then subtracted.
        ``"displacement"``: the acceleration is integrated twice (trapezoidal
        rule, zero initial velocity and displacement), a polynomial of degree
        ``order + 2`` is fitted by least squares to that displacement, and its
        second derivative -- a polynomial of degree ``order`` -- is subtracted
        from the acceleration. The displacement of the corrected record then
        has no trend of degree 2 to ``order + 2`` left (the constant and linear
        terms depend only on the initial conditions and are not touched).

    Returns
    -------
    Record
        With ``{"step": "baseline", "order": order, "on": on}`` appended to
        ``metadata["processing"]``.

    Notes
    -----
    Polynomials are fitted with :meth:`numpy.polynomial.Polynomial.fit`, which
    maps time onto [-1, 1] so high degrees stay well conditioned. Fitting a
    polynomial to the displacement and removing its second derivative from the
    acceleration is a common baseline correction for strong-motion records;
    the discussion of such fits, and of how the choice changes long-period
    displacements, is in Boore (2001) and Boore and Bommer (2005) (both from
    memory). No single baseline choice is right for every record: check the
    velocity and displacement after correcting.

    References
    ----------
    Boore, D. M. (2001). Effect of baseline corrections on displacements and
    response spectra for several recordings of the 1999 Chi-Chi, Taiwan,
    earthquake. Bulletin of the Seismological Society of America 91(5).
    Boore, D. M. and Bommer, J. J. (2005). Processing of strong-motion
    accelerograms: needs, options and consequences. Soil Dynamics and
    Earthquake Engineering 25.
    """
    label = _check_record(record, "baseline_correct")
    order = _whole(order, "baseline order", label, 0)
    if on not in ("acceleration", "displacement"):
        raise RecordError(f"{label}: baseline on= must be 'acceleration' or 'displacement', got {on!r}")
    t = record.time
    a = record.acceleration
    degree = order if on == "acceleration" else order + 2
    if degree + 1 >= record.n_steps:
        raise RecordError(
            f"{label}: a baseline polynomial of degree {degree} needs more than "
            f"{degree + 1} samples; the record has {record.n_steps}"
        )
    if on == "acceleration":
        baseline = np.polynomial.Polynomial.fit(t, a, degree)(t)
    else:
        velocity = integrate.cumulative_trapezoid(a, dx=record.dt, initial=0.0)
        displacement = integrate.cumulative_trapezoid(velocity, dx=record.dt, initial=0.0)
        baseline = np.polynomial.Polynomial.fit(t, displacement, degree).deriv(2)(t)
    return _processed(record, a - baseline, {"step": "baseline", "order": order, "on": on})


# ------------------------------------------------------------------ filtering
def butterworth_sos(low, high, dt: float, order: int = 4, *, label: str = "filter") -> np.ndarray:
    """Second-order sections of the digital Butterworth filter :func:`bandpass` applies once.

    Parameters
    ----------
    low, high : float or None
        Corner frequencies, Hz: both for a band-pass, ``low`` only for a
        high-pass, ``high`` only for a low-pass. Each below the Nyquist
        frequency ``1 / (2 dt)``; ``low < high``.
    dt : float
        Sampling step, s.
    order : int, optional
        Butterworth order (per corner: a band-pass has ``2 order`` poles, as in
        :func:`scipy.signal.butter`).

    Returns
    -------
    numpy.ndarray, shape (n_sections, 6)
        From ``scipy.signal.butter(order, corners, btype, fs=1/dt, output="sos")``.
    """
    order = _whole(order, "filter order", label, 1)
    nyquist = 0.5 / dt
    corners = []
    for what, value in (("low corner", low), ("high corner", high)):
        if value is None:
            continue
        value = _number(value, what, label, positive=True)
        if value >= nyquist:
            raise RecordError(
                f"{label}: {what} {value:g} Hz must be below the Nyquist frequency "
                f"{nyquist:g} Hz (dt = {dt:g} s)"
            )
        corners.append(value)
    if not corners:
        raise RecordError(f"{label}: give a low corner, a high corner or both (Hz)")
    if len(corners) == 2:
        if corners[0] >= corners[1]:
            raise RecordError(
                f"{label}: low corner {corners[0]:g} Hz must be below high corner {corners[1]:g} Hz"
            )
        return signal.butter(order, corners, btype="bandpass", fs=1.0 / dt, output="sos")
    btype = "highpass" if low is not None else "lowpass"
    return signal.butter(order, corners[0], btype=btype, fs=1.0 / dt, output="sos")


def _edge_length(corner: float, order: int, dt: float, n: int) -> int:
    """Samples of odd extension at each end for a forward-backward Butterworth pass.

    ``1.5 order / corner`` seconds (the lowest corner), the pad length for
    acausal Butterworth filters given by Boore and Bommer (2005) (from memory),
    at most ``n - 1`` samples and never less than scipy's own default.
    """
    sections = int(math.ceil(order / 2))
    default = 3 * (2 * sections + 1)
    wanted = int(math.ceil(1.5 * order / corner / dt))
    return min(n - 1, max(default, wanted))


def _filtfilt(sos, values, label: str, padlen: int) -> np.ndarray:
    try:
        return signal.sosfiltfilt(sos, values, padtype="odd", padlen=padlen)
    except ValueError as exc:  # record shorter than the filter's edge padding
        raise RecordError(f"{label}: record too short for this filter ({exc})") from None


def bandpass(record: Record, low, high, order: int = 4) -> Record:
    """Zero-phase Butterworth band-pass (or high-pass, or low-pass) filter.

    Parameters
    ----------
    record : Record
    low, high : float or None
        Corner frequencies, Hz; ``None`` for no corner on that side (``low``
        only: high-pass; ``high`` only: low-pass). Corners must lie below the
        Nyquist frequency ``1 / (2 dt)``.
    order : int, optional
        Butterworth order of the filter applied in each direction.

    Returns
    -------
    Record
        With ``{"step": "bandpass", "low": ..., "high": ..., "order": ...,
        "filter": "butterworth", "zero_phase": True, "edge_extension": s}``
        appended to ``metadata["processing"]``.

    Notes
    -----
    The filter (:func:`butterworth_sos`) runs forward and backward with
    :func:`scipy.signal.sosfiltfilt`, so there is no phase shift and the
    magnitude response is that of the single pass squared: at a corner the
    single pass gives -3 dB and the filtered record is attenuated by -6 dB
    (half amplitude). To keep the filter's start-up transient out of the
    record, each end is extended by odd reflection over ``1.5 order / f``
    seconds, ``f`` the lowest corner (at most the record's length), the pad
    length for such filters quoted by Boore and Bommer (2005) (from memory);
    the extension is removed again. Taper or pad the record first when its
    ends are far from zero.

    References
    ----------
    Boore, D. M. and Bommer, J. J. (2005). Processing of strong-motion
    accelerograms: needs, options and consequences. Soil Dynamics and
    Earthquake Engineering 25.
    """
    label = _check_record(record, "bandpass")
    sos = butterworth_sos(low, high, record.dt, order, label=label)
    corner = float(low) if low is not None else float(high)
    padlen = _edge_length(corner, int(order), record.dt, record.n_steps)
    filtered = _filtfilt(sos, record.acceleration, label, padlen)
    step = {"step": "bandpass", "low": None if low is None else float(low),
            "high": None if high is None else float(high), "order": int(order),
            "filter": "butterworth", "zero_phase": True, "edge_extension": padlen * record.dt}
    return _processed(record, filtered, step)


# ------------------------------------------------------------------ taper
def taper(record: Record, duration=None, fraction=None, side: str = "both") -> Record:
    """Half-cosine (Tukey-type) taper at the start and/or end of the record.

    Over the tapered length ``m`` samples the record is multiplied by
    ``w_k = 0.5 (1 - cos(pi k / m))``, k = 0..m (``scipy.signal.windows.hann``
    of length ``2 m + 1``, first half), rising from exactly 0 at the end sample
    to 1; the end taper is the mirror image.

    Parameters
    ----------
    record : Record
    duration : float, optional
        Tapered length at each tapered end, s (rounded to whole steps).
    fraction : float, optional
        Instead of ``duration``: tapered length at each tapered end as a
        fraction of the record's duration (``0 < fraction <= 0.5``).
    side : {"both", "start", "end"}, optional

    Returns
    -------
    Record
        With ``{"step": "taper", "side": ..., "duration": m dt, "window":
        "half-cosine"}`` appended to ``metadata["processing"]``.
    """
    label = _check_record(record, "taper")
    if side not in ("both", "start", "end"):
        raise RecordError(f"{label}: taper side must be 'both', 'start' or 'end', got {side!r}")
    if (duration is None) == (fraction is None):
        raise RecordError(f"{label}: give the taper length as duration= (s) or fraction=, not both or neither")
    if duration is not None:
        duration = _number(duration, "taper duration", label, positive=True)
    else:
        fraction = _number(fraction, "taper fraction", label, positive=True)
        if fraction > 0.5:
            raise RecordError(f"{label}: taper fraction must be <= 0.5, got {fraction!r}")
        duration = fraction * record.duration
    m = int(round(duration / record.dt))
    ends = 2 if side == "both" else 1
    if m < 1:
        raise RecordError(
            f"{label}: taper of {duration:g} s is shorter than one step ({record.dt:g} s)"
        )
    if ends * m > record.n_steps - 1:
        raise RecordError(
            f"{label}: taper of {m * record.dt:g} s at {ends} end(s) is longer than the "
            f"record ({record.duration:g} s)"
        )
    ramp = signal.windows.hann(2 * m + 1, sym=True)[: m + 1]
    ramp[-1] = 1.0
    weights = np.ones(record.n_steps)
    if side in ("both", "start"):
        weights[: m + 1] = ramp
    if side in ("both", "end"):
        weights[-(m + 1):] = np.minimum(weights[-(m + 1):], ramp[::-1])
    step = {"step": "taper", "side": side, "duration": m * record.dt, "window": "half-cosine"}
    return _processed(record, record.acceleration * weights, step)


# ------------------------------------------------------------------ resample
def resample(record: Record, dt) -> Record:
    """Return the record sampled at a new time step ``dt``.

    When the ratio of the old to the new step is a fraction ``up / down`` with
    terms at most :data:`MAX_POLYPHASE_TERM` (within 1e-9 relative), the record
    goes through :func:`scipy.signal.resample_poly` (polyphase FIR with its
    default Kaiser-window low-pass, which also removes what the new step cannot
    carry when downsampling). Otherwise the record is interpolated linearly
    (:func:`numpy.interp`); before interpolating to a coarser step it is
    low-passed at :data:`ANTI_ALIAS_FRACTION` of the new Nyquist frequency by a
    zero-phase Butterworth filter of order :data:`ANTI_ALIAS_ORDER`. Linear
    interpolation to a finer step adds no anti-alias filter and has an error of
    at most ``dt_old**2 max|a''| / 8``.

    The new record covers the same duration: ``floor(duration / dt) + 1``
    samples starting at time 0. Expect a few samples of edge effect at both
    ends on the polyphase path (the record is taken as zero outside).

    Parameters
    ----------
    record : Record
    dt : float
        New time step, s.

    Returns
    -------
    Record
        With ``{"step": "resample", "dt_from": ..., "dt": ..., "method":
        "polyphase" | "linear", ...}`` appended to ``metadata["processing"]``.
    """
    label = _check_record(record, "resample")
    new_dt = _number(dt, "new time step dt", label, positive=True)
    n_new = int(math.floor(record.duration / new_dt + 1e-9)) + 1
    if n_new < 2:
        raise RecordError(
            f"{label}: new time step {new_dt:g} s is longer than the record ({record.duration:g} s)"
        )
    ratio = record.dt / new_dt
    fraction = Fraction(ratio).limit_denominator(MAX_POLYPHASE_TERM)
    up, down = fraction.numerator, fraction.denominator
    step = {"step": "resample", "dt_from": record.dt, "dt": new_dt}
    if up <= MAX_POLYPHASE_TERM and abs(up / down - ratio) <= 1e-9 * ratio:
        values = signal.resample_poly(record.acceleration, up, down)
        if values.shape[0] < n_new:
            values = np.concatenate([values, np.zeros(n_new - values.shape[0])])
        values = values[:n_new]
        step.update(method="polyphase", up=up, down=down)
    else:
        source = record.acceleration
        if new_dt > record.dt:
            corner = ANTI_ALIAS_FRACTION * 0.5 / new_dt
            sos = signal.butter(ANTI_ALIAS_ORDER, corner, btype="lowpass",
                                fs=1.0 / record.dt, output="sos")
            padlen = _edge_length(corner, ANTI_ALIAS_ORDER, record.dt, record.n_steps)
            source = _filtfilt(sos, source, label, padlen)
            step.update(anti_alias={"filter": "butterworth", "high": corner,
                                    "order": ANTI_ALIAS_ORDER, "zero_phase": True})
        values = np.interp(np.arange(n_new) * new_dt, record.time, source)
        step["method"] = "linear"
    return _processed(record, values, step, dt=new_dt)


# ------------------------------------------------------------------ pad
def pad(record: Record, before=0.0, after=0.0) -> Record:
    """Add zeros before and/or after the record.

    Parameters
    ----------
    record : Record
    before, after : float, optional
        Seconds of zeros, rounded to whole steps.

    Returns
    -------
    Record
        With ``{"step": "pad", "before": n_before dt, "after": n_after dt}``
        appended to ``metadata["processing"]``. The record still starts at
        time 0, so its original samples move later by ``before``.
    """
    label = _check_record(record, "pad")
    before = _number(before, "padding before", label, non_negative=True)
    after = _number(after, "padding after", label, non_negative=True)
    n_before = int(round(before / record.dt))
    n_after = int(round(after / record.dt))
    values = np.concatenate([np.zeros(n_before), record.acceleration, np.zeros(n_after)])
    step = {"step": "pad", "before": n_before * record.dt, "after": n_after * record.dt}
    return _processed(record, values, step)
