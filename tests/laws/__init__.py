"""Storey-law tests: each law driven alone along a prescribed drift path.

``Storey.drive`` calls a law's numba ``_shear`` step by step in the calling shape
all laws share (simulate/laws/base.py)::

    V, kt, n0, ..., n4 = _shear(d, dc, k, vy, alpha, x0, ..., x3, s0, ..., s4)

and commits the trial state after every step, as the Newton-Newmark kernel does
once a step has converged, so a law can be checked point by point against the
geometry of its loop.
"""

from __future__ import annotations

import inspect

import numpy as np

from simulate.laws import LAWS, N_PARAMS, N_STATE


class Storey:
    """One storey of a given law, driven by prescribed deformations."""

    def __init__(self, law: str, k: float, vy: float, alpha: float, **params):
        cls = LAWS[law]
        cls.check(1, k, vy, alpha, params)
        self._shear = inspect.getmodule(cls)._shear
        self.p = tuple(float(x) for x in cls.row(k, vy, alpha, params)[:N_PARAMS])
        self.s = tuple(float(x) for x in cls.initial_state(np.asarray(self.p))[:N_STATE])
        self.dc = 0.0

    def _call(self, d):
        V, kt, *state = self._shear(float(d), self.dc, *self.p, *self.s)
        return V, kt, tuple(state)

    def trial(self, d: float):
        """Shear and tangent at trial deformation d from the committed state (nothing committed)."""
        V, kt, _ = self._call(d)
        return V, kt

    def step(self, d: float):
        """Shear and tangent at d; the new state is committed."""
        V, kt, self.s = self._call(d)
        self.dc = float(d)
        return V, kt

    def drive(self, d) -> tuple[np.ndarray, np.ndarray]:
        """Shear and tangent at every sample of the path d (the storey starts at rest, d = 0)."""
        out = np.array([self.step(x) for x in np.asarray(d, dtype=float)])
        return out[:, 0], out[:, 1]


def cyclic_path(turning_points, per_unit: float, dy: float) -> np.ndarray:
    """Samples of a piecewise-linear drift path from 0 through ``turning_points`` (multiples
    of dy), about ``per_unit`` samples per dy of travel; every turning point is a sample."""
    pts = np.concatenate(([0.0], np.asarray(turning_points, dtype=float))) * dy
    pieces = []
    for a, b in zip(pts[:-1], pts[1:]):
        n = max(1, int(np.ceil(abs(b - a) / dy * per_unit)))
        pieces.append(np.linspace(a, b, n + 1)[1:])
    return np.concatenate(pieces)
