"""The calling shape every storey law shares, and its Python-side description.

A storey law gives the storey (spring) shear V as a function of the storey
deformation d = u_i - u_(i-1) and its history. Inside numba every law is one
function of the same shape::

    V, kt, n0, n1, n2, n3, n4 = _shear(d, dc, k, vy, alpha, x0, x1, x2, x3, s0, s1, s2, s3, s4)

with ``d`` the trial deformation (m), ``dc`` the deformation at the last
converged state, ``k`` the elastic stiffness (N/m), ``vy`` the yield shear (N),
``alpha`` the post-yield stiffness ratio, ``x0..x3`` law-specific parameters and
``s0..s4`` the storey's converged state. It returns the shear (N), the tangent
stiffness dV/dd (N/m) and the trial state; the caller keeps the trial state and
makes it the converged state once the step has converged, so a law never commits
itself. Only scalars cross the call: passing arrays would cost reference
counting (atomic operations) on every storey of every iteration.

Parameter rows (``N_PARAMS`` = 7: k, vy, alpha, x0..x3) and state rows
(``N_STATE`` = 5) are stored per storey in (N, 7) and (N, 5) arrays by
``ShearFrame.law_arrays``; ``dispatch.storey_shear`` picks the law by its id.

On the Python side a law is a ``StoreyLaw`` subclass: its name, its numeric id
(the kernel's dispatch key), its parameter names with defaults, validation, and
the initial state.
"""

from __future__ import annotations

import math

import numpy as np

from simulate.errors import InputError

#: Width of a storey's parameter row and of its state row.
N_PARAMS = 7
N_STATE = 5


class StoreyLaw:
    """Python-side description of one storey law."""

    #: name used in configs and the API
    name: str = ""
    #: dispatch key inside the kernels
    law_id: int = -1
    #: law-specific parameter names (beyond k, Vy, alpha) and their defaults, in p[3:] order
    extra: dict = {}
    #: True if the law needs a yield shear
    needs_yield: bool = True
    summary: str = ""

    @classmethod
    def check(cls, storey: int, k: float, vy: float, alpha: float, params: dict) -> None:
        """Raise InputError naming the storey and key if a parameter is outside its range."""
        if cls.needs_yield:
            if not (math.isfinite(vy) and vy > 0):
                raise InputError(f"storey {storey}: yield_shear must be > 0 for the {cls.name} law, got {vy!r}")
            if not (math.isfinite(alpha) and 0.0 <= alpha < 1.0):
                raise InputError(f"storey {storey}: hardening must be in [0, 1), got {alpha!r}")

    @classmethod
    def row(cls, k: float, vy: float, alpha: float, params: dict) -> np.ndarray:
        p = np.zeros(N_PARAMS)
        p[0], p[1], p[2] = k, vy, alpha
        for i, (key, default) in enumerate(cls.extra.items()):
            p[3 + i] = float(params.get(key, default))
        return p

    @classmethod
    def initial_state(cls, p: np.ndarray) -> np.ndarray:
        return np.zeros(N_STATE)
