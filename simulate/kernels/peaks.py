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


@njit(**JIT_PARALLEL)
def _peak_abs_many(a, b, c, d, out_a, out_b, out_c, out_d):
    """``_peak_abs`` of four (R, T, N) histories in one parallel pass over records."""
    R, T, N = a.shape
    for r in prange(R):
        for j in range(N):
            out_a[r, j] = -1.0
            out_b[r, j] = -1.0
            out_c[r, j] = -1.0
            out_d[r, j] = -1.0
        for t in range(T):
            for j in range(N):
                v = abs(a[r, t, j])
                if v > out_a[r, j]:
                    out_a[r, j] = v
                v = abs(b[r, t, j])
                if v > out_b[r, j]:
                    out_b[r, j] = v
                v = abs(c[r, t, j])
                if v > out_c[r, j]:
                    out_c[r, j] = v
                v = abs(d[r, t, j])
                if v > out_d[r, j]:
                    out_d[r, j] = v
        for j in range(N):
            if out_a[r, j] < 0.0:
                out_a[r, j] = np.nan
            if out_b[r, j] < 0.0:
                out_b[r, j] = np.nan
            if out_c[r, j] < 0.0:
                out_c[r, j] = np.nan
            if out_d[r, j] < 0.0:
                out_d[r, j] = np.nan
