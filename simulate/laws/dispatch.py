"""One numba entry point that calls a storey's law by its id (the kernels' only view of laws)."""

from __future__ import annotations

import numpy as np
from numba import njit

from simulate.laws import bilinear, boucwen, linear, peak_oriented
from simulate.settings import JIT, JIT_INLINE


@njit(**JIT_INLINE)
def storey_shear(law, d, dc, k, vy, alpha, x0, x1, x2, x3, s0, s1, s2, s3, s4):
    """Shear, tangent and new state (s0..s4) of a storey with law id ``law`` (see LAWS)."""
    if law == 1:
        return bilinear._shear(d, dc, k, vy, alpha, x0, x1, x2, x3, s0, s1, s2, s3, s4)
    if law == 2:
        return boucwen._shear(d, dc, k, vy, alpha, x0, x1, x2, x3, s0, s1, s2, s3, s4)
    if law == 3:
        return peak_oriented._shear(d, dc, k, vy, alpha, x0, x1, x2, x3, s0, s1, s2, s3, s4)
    return linear._shear(d, dc, k, vy, alpha, x0, x1, x2, x3, s0, s1, s2, s3, s4)


@njit(**JIT)
def storey_shear_rows(law, d, dc, P, S, S_new, j):
    """``storey_shear`` for row j of the parameter and state arrays; writes S_new[j].

    For code outside the hot loops (tests, static analyses): passing arrays costs
    reference counting on every call, so time-stepping kernels unpack the rows and
    call ``storey_shear`` with scalars instead.
    """
    v, kt, n0, n1, n2, n3, n4 = storey_shear(law, d, dc, P[j, 0], P[j, 1], P[j, 2], P[j, 3], P[j, 4],
                                             P[j, 5], P[j, 6], S[j, 0], S[j, 1], S[j, 2], S[j, 3], S[j, 4])
    S_new[j, 0] = n0
    S_new[j, 1] = n1
    S_new[j, 2] = n2
    S_new[j, 3] = n3
    S_new[j, 4] = n4
    return v, kt


def evaluate(law_id: int, d: float, dc: float, p, s):
    """Python-level call of a law: (shear, tangent, new state array) for one storey."""
    p = np.asarray(p, dtype=float)
    s = np.asarray(s, dtype=float)
    v, kt, *state = storey_shear(int(law_id), float(d), float(dc), *p[:7], *s[:5])
    return v, kt, np.array(state)
