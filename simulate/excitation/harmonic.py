"""Steady sinusoidal excitation: harmonic ground motion and harmonic floor forces.

Both generators sample

    s(t) = amplitude * r(t) * sin(2 pi f t + phase),    t = 0, dt, 2 dt, ... <= duration

where the optional start-up ramp ``r`` rises as a half cosine,
``r(t) = 0.5 (1 - cos(pi t / ramp))`` for ``t < ramp`` and 1 afterwards. A sine
switched on abruptly excites the free vibration of every mode (the start-up
transient, see Chopra, *Dynamics of Structures*, ch. 3); a smooth ramp of a few
periods of the structure reduces that transient, so the steady-state response
is reached sooner and is easier to read.
"""

from __future__ import annotations

import math
import operator
from numbers import Real

import numpy as np

from simulate.errors import InputError
from simulate.excitation.loads import FloorForces
from simulate.excitation.record import Record, normalise_units

__all__ = ["harmonic_ground_motion", "harmonic_floor_force", "MAX_CYCLE_FRACTION_PER_STEP"]

#: Largest allowed ``frequency * dt``: at least 10 samples per cycle, so that the
#: sampled sine keeps its peak within about 5 % (cos(pi / 10) = 0.951).
MAX_CYCLE_FRACTION_PER_STEP = 0.1


def _number(value, what: str, *, positive: bool = False, non_negative: bool = False) -> float:
    """Return ``value`` as a finite float, with an optional sign check."""
    if isinstance(value, bool) or not isinstance(value, Real) or not math.isfinite(value):
        raise InputError(f"harmonic load: {what} must be a finite number, got {value!r}")
    value = float(value)
    if positive and value <= 0.0:
        raise InputError(f"harmonic load: {what} must be > 0, got {value!r}")
    if non_negative and value < 0.0:
        raise InputError(f"harmonic load: {what} must be >= 0, got {value!r}")
    return value


def _time_and_shape(frequency, duration, dt, ramp, phase):
    """Check the common parameters and return (t, r(t) sin(2 pi f t + phase))."""
    frequency = _number(frequency, "frequency (Hz)", positive=True)
    duration = _number(duration, "duration (s)", positive=True)
    dt = _number(dt, "time step dt (s)", positive=True)
    ramp = _number(ramp, "ramp (s)", non_negative=True)
    phase = _number(phase, "phase (rad)")
    if frequency * dt > MAX_CYCLE_FRACTION_PER_STEP:
        raise InputError(
            f"harmonic load: time step dt = {dt:g} s is too coarse for frequency "
            f"{frequency:g} Hz ({1.0 / (frequency * dt):.3g} samples per cycle); use "
            f"dt <= {MAX_CYCLE_FRACTION_PER_STEP / frequency:g} s (at least "
            f"{1.0 / MAX_CYCLE_FRACTION_PER_STEP:g} samples per cycle)"
        )
    if dt > duration:
        raise InputError(
            f"harmonic load: duration {duration:g} s is shorter than one time step dt = {dt:g} s"
        )
    # The small allowance keeps the last grid point when duration is a multiple
    # of dt but the division lands just below an integer.
    n_steps = int(math.floor(duration / dt + 1e-9)) + 1
    t = np.arange(n_steps, dtype=np.float64) * dt
    shape = np.sin(2.0 * math.pi * frequency * t + phase)
    if ramp > 0.0:
        rising = t < ramp
        shape[rising] *= 0.5 * (1.0 - np.cos(math.pi * t[rising] / ramp))
    parameters = {
        "generator": "harmonic",
        "frequency": frequency,
        "duration": duration,
        "ramp": ramp,
        "phase": phase,
    }
    return dt, shape, parameters


def harmonic_ground_motion(
    amplitude, frequency, duration, dt, *, units="g", ramp=0.0, phase=0.0, name=None
) -> Record:
    """Sinusoidal base acceleration ``amplitude * r(t) * sin(2 pi f t + phase)``.

    Parameters
    ----------
    amplitude : float
        Peak acceleration of the steady part, in ``units``.
    frequency : float
        Excitation frequency, Hz (> 0).
    duration : float
        Last sample time, s; samples are ``0, dt, ...`` up to ``duration``
        inclusive (or the last grid point before it).
    dt : float
        Time step, s. Must give at least 10 samples per cycle
        (``frequency * dt <= 0.1``).
    units : str, optional
        Units of ``amplitude`` and of the record (``"g"``, ``"m/s2"``, ``"cm/s2"``).
    ramp : float, optional
        Length of the half-cosine start-up ramp, s (0: none). A ramp reduces the
        start-up transient (free vibration triggered by switching the sine on).
    phase : float, optional
        Phase angle, rad.
    name : str, optional
        Record name; default like ``"harmonic-2.50Hz"``.

    Returns
    -------
    Record
        Shape (n_steps,) with ``n_steps = floor(duration / dt) + 1``.

    Raises
    ------
    simulate.errors.InputError
        For a non-finite amplitude, non-positive frequency, duration or time
        step, a negative ramp, or a time step too coarse for the frequency.

    References
    ----------
    A. K. Chopra, *Dynamics of Structures*, ch. 3 (response to harmonic excitation).
    """
    amplitude = _number(amplitude, "amplitude")
    units = normalise_units(units, label="harmonic load")
    dt, shape, parameters = _time_and_shape(frequency, duration, dt, ramp, phase)
    parameters["amplitude"] = amplitude
    if name is None:
        name = f"harmonic-{parameters['frequency']:.2f}Hz"
    return Record(
        acceleration=amplitude * shape, dt=dt, units=units, name=name, metadata=parameters
    )


def _floor_numbers(floors, n_floors: int) -> list[int]:
    """Return the 1-based floor numbers as ints after range and duplicate checks."""
    if isinstance(floors, (str, bytes)):
        raise InputError(f"harmonic load: floors must be floor numbers, got {floors!r}")
    try:
        items = list(floors)
    except TypeError:
        items = [floors]
    if not items:
        raise InputError("harmonic load: floors is empty; give at least one floor number")
    numbers = []
    for item in items:
        try:
            if isinstance(item, bool):
                raise TypeError
            number = operator.index(item)
        except TypeError:
            raise InputError(
                f"harmonic load: floor numbers must be whole numbers, got {item!r}"
            ) from None
        if not 1 <= number <= n_floors:
            raise InputError(
                f"harmonic load: floor {number} does not exist; floors are numbered "
                f"1..{n_floors} from the ground up"
            )
        if number in numbers:
            raise InputError(f"harmonic load: floor {number} is listed twice")
        numbers.append(number)
    return numbers


def harmonic_floor_force(
    amplitude, frequency, duration, dt, *, floors, n_floors, ramp=0.0, phase=0.0, name=None
) -> FloorForces:
    """Sinusoidal horizontal forces ``amplitude * r(t) * sin(2 pi f t + phase)`` at chosen floors.

    Parameters
    ----------
    amplitude : float or sequence of float
        Force amplitude, N: one value for every listed floor, or one per entry
        of ``floors``.
    frequency, duration, dt, ramp, phase
        As for :func:`harmonic_ground_motion` (Hz, s, s, s, rad).
    floors : iterable of int
        1-based floor numbers that carry the force (floor 1 is the first floor
        above the ground).
    n_floors : int
        Number of floors of the building (columns of the result).
    name : str, optional
        Default like ``"harmonic-2.50Hz"``.

    Returns
    -------
    FloorForces
        ``force`` of shape (n_steps, n_floors), N; columns of floors not listed
        are zero.

    Raises
    ------
    simulate.errors.InputError
        For the cases of :func:`harmonic_ground_motion`, a floor outside
        ``1..n_floors`` or listed twice, or an amplitude sequence whose length
        differs from ``floors``.
    """
    if isinstance(n_floors, bool):
        raise InputError(f"harmonic load: n_floors must be a whole number >= 1, got {n_floors!r}")
    try:
        n_floors = operator.index(n_floors)
    except TypeError:
        raise InputError(
            f"harmonic load: n_floors must be a whole number >= 1, got {n_floors!r}"
        ) from None
    if n_floors < 1:
        raise InputError(f"harmonic load: n_floors must be >= 1, got {n_floors}")
    numbers = _floor_numbers(floors, n_floors)
    if np.ndim(amplitude) == 0:
        amplitudes = [_number(amplitude, "amplitude (N)")] * len(numbers)
    else:
        amplitudes = [_number(a, "amplitude (N)") for a in np.asarray(amplitude, dtype=object).ravel()]
        if np.ndim(amplitude) != 1 or len(amplitudes) != len(numbers):
            raise InputError(
                f"harmonic load: {len(amplitudes)} amplitudes given for {len(numbers)} floors "
                f"{numbers}; give one amplitude, or one per floor"
            )
    dt, shape, parameters = _time_and_shape(frequency, duration, dt, ramp, phase)
    force = np.zeros((shape.shape[0], n_floors), dtype=np.float64)
    for number, value in zip(numbers, amplitudes):
        force[:, number - 1] = value * shape
    parameters["floors"] = numbers
    parameters["amplitude"] = amplitudes
    if name is None:
        name = f"harmonic-{parameters['frequency']:.2f}Hz"
    return FloorForces(force=force, dt=dt, name=name, metadata=parameters)
