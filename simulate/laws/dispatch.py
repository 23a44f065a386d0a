"""One numba entry point that calls a storey's law by its id (the kernels' only view of laws)."""

from __future__ import annotations

from numba import njit

from simulate.laws import bilinear, boucwen, linear, peak_oriented
from simulate.settings import JIT


@njit(**JIT)
def storey_shear(law, d, dc, p, s, s_new):
    """Shear and tangent of a storey with law id ``law`` (see simulate.laws.LAWS)."""
    if law == 1:
        return bilinear._shear(d, dc, p, s, s_new)
    if law == 2:
        return boucwen._shear(d, dc, p, s, s_new)
    if law == 3:
        return peak_oriented._shear(d, dc, p, s, s_new)
    return linear._shear(d, dc, p, s, s_new)
