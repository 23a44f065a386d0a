"""Linear elastic storey: V = k d."""

from __future__ import annotations

from numba import njit

from simulate.laws.base import StoreyLaw
from simulate.settings import JIT_INLINE


@njit(**JIT_INLINE)
def _shear(d, dc, k, vy, alpha, x0, x1, x2, x3, s0, s1, s2, s3, s4):
    """Linear storey shear and tangent; the state is unused."""
    return k * d, k, s0, s1, s2, s3, s4


class Linear(StoreyLaw):
    name = "linear"
    law_id = 0
    needs_yield = False
    summary = "linear elastic, V = k d"
