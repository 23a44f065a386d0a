"""Linear elastic storey: V = k d."""

from __future__ import annotations

from numba import njit

from simulate.laws.base import StoreyLaw
from simulate.settings import JIT


@njit(**JIT)
def _shear(d, dc, p, s, s_new):
    """Linear storey shear and tangent."""
    return p[0] * d, p[0]


class Linear(StoreyLaw):
    name = "linear"
    law_id = 0
    needs_yield = False
    summary = "linear elastic, V = k d"
