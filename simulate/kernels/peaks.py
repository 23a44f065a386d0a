"""Peak absolute values over time of response histories (one pass, NaN-aware)."""

from __future__ import annotations

import numpy as np
from numba import njit, prange

from simulate.settings import JIT_PARALLEL


@njit(**JIT_PARALLEL)
def _peak_abs(x, out):
    """out[r, j] = max over t of |x[r, t, j]|, skipping NaN (NaN when all are NaN)."""
    R, T, N = x.shape
    for r in prange(R):
        for j in range(N):
            out[r, j] = -1.0
        for t in range(T):
            for j in range(N):
                v = abs(x[r, t, j])
                if v > out[r, j]:
                    out[r, j] = v
        for j in range(N):
            if out[r, j] < 0.0:
                out[r, j] = np.nan
