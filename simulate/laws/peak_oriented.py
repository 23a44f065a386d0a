"""Peak-oriented stiffness-degrading bilinear storey.

Skeleton: bilinear (elastic k up to Vy, then alpha k). Unloading is elastic with
slope k. Reloading after the shear has crossed zero aims at the largest
deformation reached so far in the loading direction (on the skeleton), or at the
yield point if that direction has not yielded yet, so the reloading stiffness
degrades as the peaks grow (R. W. Clough and S. B. Johnston (1966), "Effect of
stiffness degradation on earthquake ductility requirements"; the peak-oriented
rule as used in L. F. Ibarra, R. A. Medina, H. Krawinkler (2005), Earthquake
Eng. Struct. Dyn. 34, without strength deterioration). A partial unloading
followed by reloading runs elastically until it meets the reloading line.

State: s[0] largest positive deformation reached (>= dy), s[1] largest negative
(<= -dy), s[2] zero-shear intercept of the positive reloading line, s[3] that of
the negative one, s[4] the shear at the last converged state.
"""

from __future__ import annotations

import numpy as np
from numba import njit

from simulate.laws.base import N_STATE, StoreyLaw
from simulate.settings import JIT_INLINE


@njit(**JIT_INLINE)
def _skeleton(d, k, vy, alpha):
    """Bilinear skeleton shear and slope at deformation d."""
    dy = vy / k
    if d > dy:
        return vy + alpha * k * (d - dy), alpha * k
    if d < -dy:
        return -vy + alpha * k * (d + dy), alpha * k
    return k * d, k


@njit(**JIT_INLINE)
def _shear(d, dc, k, vy, alpha, x0, x1, x2, x3, dmax, dmin, xpos, xneg, vc):
    """Peak-oriented storey shear and tangent (state: dmax, dmin, xpos, xneg, vc)."""
    ve = vc + k * (d - dc)
    if d >= dc:
        x = dc - vc / k if vc < 0.0 else xpos
        if d >= dmax or x >= dmax:
            bound, kb = _skeleton(d, k, vy, alpha)
        else:
            vt, _ = _skeleton(dmax, k, vy, alpha)
            kb = vt / (dmax - x)
            bound = kb * (d - x)
        if ve <= bound:
            v, kt = ve, k
        else:
            v, kt = bound, kb
        if vc < 0.0:
            xpos = x
        if d > dmax:
            dmax = d
    else:
        x = dc - vc / k if vc > 0.0 else xneg
        if d <= dmin or x <= dmin:
            bound, kb = _skeleton(d, k, vy, alpha)
        else:
            vt, _ = _skeleton(dmin, k, vy, alpha)
            kb = vt / (dmin - x)
            bound = kb * (d - x)
        if ve >= bound:
            v, kt = ve, k
        else:
            v, kt = bound, kb
        if vc > 0.0:
            xneg = x
        if d < dmin:
            dmin = d
    return v, kt, dmax, dmin, xpos, xneg, v


class PeakOriented(StoreyLaw):
    name = "peak-oriented"
    law_id = 3
    summary = "peak-oriented stiffness-degrading bilinear (k, yield_shear, hardening)"

    @classmethod
    def initial_state(cls, p):
        s = np.zeros(N_STATE)
        dy = p[1] / p[0]
        s[0], s[1] = dy, -dy
        return s
