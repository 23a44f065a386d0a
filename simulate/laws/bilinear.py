"""Bilinear storey with kinematic hardening (rate-independent plasticity, return mapping).

Elastic stiffness k, yield shear Vy, post-yield stiffness alpha k. With the
hardening modulus H = alpha k / (1 - alpha), the trial shear k (d - dp) is
checked against the yield surface |V - q| <= Vy centred on the back force
q = H dp; a plastic step moves dp by the consistency increment f / (k + H)
(J. C. Simo and T. J. R. Hughes, *Computational Inelasticity*, 1998, section
1.3, one-dimensional kinematic hardening, from memory on the section).
Unloading is elastic with slope k; the elastic range keeps the width 2 Vy and
translates with the back force (kinematic hardening).

State: s[0] = plastic deformation dp, s[1] = back force q.
"""

from __future__ import annotations

from numba import njit

from simulate.laws.base import StoreyLaw
from simulate.settings import JIT


@njit(**JIT)
def _shear(d, dc, p, s, s_new):
    """Bilinear kinematic-hardening storey shear and tangent."""
    k = p[0]
    vy = p[1]
    alpha = p[2]
    H = alpha * k / (1.0 - alpha)
    dp = s[0]
    q = s[1]
    v_trial = k * (d - dp)
    xi = v_trial - q
    f = abs(xi) - vy
    if f <= 0.0:
        s_new[0] = dp
        s_new[1] = q
        return v_trial, k
    sign = 1.0 if xi > 0.0 else -1.0
    dgamma = f / (k + H)
    dp_new = dp + dgamma * sign
    s_new[0] = dp_new
    s_new[1] = q + H * dgamma * sign
    return k * (d - dp_new), k * H / (k + H)


class Bilinear(StoreyLaw):
    name = "bilinear"
    law_id = 1
    summary = "bilinear with kinematic hardening (k, yield_shear, hardening)"
