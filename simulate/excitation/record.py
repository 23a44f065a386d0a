"""Base-acceleration records: one uniformly sampled ground-motion history.

A :class:`Record` is the hand-over object between the readers (and the
generators of synthetic motions) and the analysis: a checked, read-only,
contiguous float64 array with its time step and declared units.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from numbers import Real

import numpy as np

from simulate.errors import RecordError, where
from simulate.settings import ACCELERATION_UNITS, UNIT_ALIASES

__all__ = ["Record", "normalise_units"]


def normalise_units(units, *, label: str = "record") -> str:
    """Return the canonical spelling (``"g"``, ``"m/s2"``, ``"cm/s2"``) of ``units``.

    Aliases from :data:`simulate.settings.UNIT_ALIASES` and differences of case
    or surrounding blanks are accepted. ``label`` prefixes the error message.
    """
    if not isinstance(units, str):
        raise RecordError(f"{label}: units must be text such as 'g', got {units!r}")
    key = units.strip()
    for candidate in (key, key.lower()):
        if candidate in ACCELERATION_UNITS:
            return candidate
        if candidate in UNIT_ALIASES:
            return UNIT_ALIASES[candidate]
    known = ", ".join(sorted(ACCELERATION_UNITS) + sorted(UNIT_ALIASES))
    raise RecordError(f"{label}: unknown acceleration units {units!r} (known: {known})")


def _label(kind: str, name, metadata) -> str:
    """Message prefix naming the source file (if known) and the object's name."""
    source = metadata.get("source") if isinstance(metadata, dict) else None
    text = f"{kind} '{name}'"
    return f"{where(source)}: {text}" if source else text


def _check_dt(dt, label: str) -> float:
    """Return ``dt`` as a float, or raise if it is not a finite positive number."""
    if isinstance(dt, bool) or not isinstance(dt, Real):
        raise RecordError(f"{label}: time step dt must be a number of seconds, got {dt!r}")
    dt = float(dt)
    if not math.isfinite(dt) or dt <= 0.0:
        raise RecordError(f"{label}: time step dt must be finite and > 0 s, got {dt!r}")
    return dt


def _check_samples(values, ndim: int, what: str, label: str) -> np.ndarray:
    """Return a read-only contiguous float64 copy of ``values`` after shape and finiteness checks."""
    if np.iscomplexobj(values):
        raise RecordError(f"{label}: {what} must be real numbers, got complex values")
    try:
        array = np.array(values, dtype=np.float64, copy=True, order="C")
    except (TypeError, ValueError) as exc:
        raise RecordError(f"{label}: {what} must be numbers ({exc})") from None
    if array.ndim != ndim:
        shape = "(n_steps,)" if ndim == 1 else "(n_steps, n_floors)"
        raise RecordError(
            f"{label}: {what} must be a {ndim}-D array of shape {shape}, got shape {array.shape}"
        )
    if array.shape[0] < 2:
        raise RecordError(
            f"{label}: {what} needs at least 2 time steps, got {array.shape[0]}"
        )
    if ndim == 2 and array.shape[1] < 1:
        raise RecordError(f"{label}: {what} needs at least one floor column, got none")
    finite = np.isfinite(array)
    if not finite.all():
        bad = np.argwhere(~finite)[0]
        step = int(bad[0])
        raise RecordError(
            f"{label}: {what} is not finite at step {step} (value {array[tuple(bad)]!r})"
        )
    array.flags.writeable = False
    return array


def _copy_metadata(metadata, label: str) -> dict:
    if not isinstance(metadata, dict):
        raise RecordError(f"{label}: metadata must be a dict, got {type(metadata).__name__}")
    return dict(metadata)


class Sampled:
    """Time axis of a uniformly sampled excitation (needs ``n_steps`` and ``dt``)."""

    @property
    def duration(self) -> float:
        """Time from the first to the last sample, ``(n_steps - 1) * dt``, s."""
        return (self.n_steps - 1) * self.dt

    @property
    def time(self) -> np.ndarray:
        """Sample times ``0, dt, 2 dt, ...``, s, shape (n_steps,)."""
        return np.arange(self.n_steps, dtype=np.float64) * self.dt


@dataclass(frozen=True, eq=False, repr=False)
class Record(Sampled):
    """A uniformly sampled base (ground) acceleration history.

    Parameters
    ----------
    acceleration : array_like, shape (n_steps,)
        Ground acceleration in ``units``; stored as a read-only contiguous
        float64 copy.
    dt : float
        Time step, s (finite, > 0).
    units : str, optional
        ``"g"`` (standard gravity, 9.80665 m/s^2), ``"m/s2"`` or ``"cm/s2"``.
        Aliases such as ``"gal"`` or ``"m/s^2"`` are normalised.
    name : str, optional
        Label used in results and messages.
    metadata : dict, optional
        Provenance: ``"source"`` (file the record came from), ``"processing"``
        (list of steps applied, e.g. scaling), and anything else.

    Raises
    ------
    simulate.errors.RecordError
        If the array is not 1-D, has fewer than 2 samples or non-finite
        values, if ``dt`` is not a finite positive number, or if the units
        are unknown. The message names the record and, when known, its file.
    """

    acceleration: np.ndarray
    dt: float
    units: str = "g"
    name: str = "record"
    metadata: dict = field(default_factory=dict)

    def __post_init__(self):
        label = _label("record", self.name, self.metadata)
        metadata = _copy_metadata(self.metadata, label)
        object.__setattr__(self, "metadata", metadata)
        object.__setattr__(self, "name", str(self.name))
        object.__setattr__(self, "units", normalise_units(self.units, label=label))
        object.__setattr__(self, "dt", _check_dt(self.dt, label))
        object.__setattr__(
            self, "acceleration", _check_samples(self.acceleration, 1, "acceleration", label)
        )

    def __repr__(self) -> str:
        return (
            f"Record(name={self.name!r}, n_steps={self.n_steps}, dt={self.dt!r}, "
            f"units={self.units!r}, pga={self.pga:.6g})"
        )

    @property
    def n_steps(self) -> int:
        """Number of samples."""
        return int(self.acceleration.shape[0])


    @property
    def pga(self) -> float:
        """Peak ground acceleration: the largest absolute value, in the record's own units."""
        return float(np.max(np.abs(self.acceleration)))

    def to_si(self) -> np.ndarray:
        """Return the acceleration in m/s^2 as a new contiguous float64 array, shape (n_steps,)."""
        return self.acceleration * ACCELERATION_UNITS[self.units]

    def scaled(self, factor) -> Record:
        """Return a copy with the acceleration multiplied by ``factor``.

        The factor is appended to ``metadata["processing"]`` so the scaling
        stays visible in the provenance of results.
        """
        label = _label("record", self.name, self.metadata)
        if isinstance(factor, bool) or not isinstance(factor, Real) or not math.isfinite(factor):
            raise RecordError(f"{label}: scale factor must be a finite number, got {factor!r}")
        factor = float(factor)
        metadata = dict(self.metadata)
        metadata["processing"] = list(metadata.get("processing", [])) + [
            {"step": "scale", "factor": factor}
        ]
        metadata["scale_factor"] = float(metadata.get("scale_factor", 1.0)) * factor
        return Record(
            acceleration=self.acceleration * factor,
            dt=self.dt,
            units=self.units,
            name=self.name,
            metadata=metadata,
        )

    def in_units(self, units) -> Record:
        """Return the same motion expressed in other ``units`` (metadata kept)."""
        label = _label("record", self.name, self.metadata)
        target = normalise_units(units, label=label)
        if target == self.units:
            return self
        factor = ACCELERATION_UNITS[self.units] / ACCELERATION_UNITS[target]
        return Record(
            acceleration=self.acceleration * factor,
            dt=self.dt,
            units=target,
            name=self.name,
            metadata=dict(self.metadata),
        )
