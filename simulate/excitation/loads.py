"""Time histories of horizontal forces applied at the floors (wind, harmonic shakers)."""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from simulate.excitation.record import Sampled, _check_dt, _check_samples, _copy_metadata, _label

__all__ = ["FloorForces"]


@dataclass(frozen=True, eq=False, repr=False)
class FloorForces(Sampled):
    """Uniformly sampled horizontal forces at floors 1..N.

    Parameters
    ----------
    force : array_like, shape (n_steps, n_floors)
        Force at each floor, N. Column ``j`` is floor ``j + 1`` (floor 1, the
        first suspended floor, first). Stored as a read-only contiguous
        float64 copy.
    dt : float
        Time step, s (finite, > 0).
    name : str, optional
        Label used in results and messages.
    metadata : dict, optional
        Provenance (``"source"``, ``"processing"``, generator parameters...).

    Raises
    ------
    simulate.errors.RecordError
        If the array is not 2-D, has fewer than 2 time steps or no floor
        column, holds non-finite values, or ``dt`` is not finite and > 0.
    """

    force: np.ndarray
    dt: float
    name: str = "forces"
    metadata: dict = field(default_factory=dict)

    def __post_init__(self):
        label = _label("floor forces", self.name, self.metadata)
        object.__setattr__(self, "metadata", _copy_metadata(self.metadata, label))
        object.__setattr__(self, "name", str(self.name))
        object.__setattr__(self, "dt", _check_dt(self.dt, label))
        object.__setattr__(self, "force", _check_samples(self.force, 2, "force", label))

    def __repr__(self) -> str:
        return (
            f"FloorForces(name={self.name!r}, n_steps={self.n_steps}, "
            f"n_floors={self.n_floors}, dt={self.dt!r})"
        )

    @property
    def n_steps(self) -> int:
        """Number of time samples."""
        return int(self.force.shape[0])

    @property
    def n_floors(self) -> int:
        """Number of floor columns."""
        return int(self.force.shape[1])

