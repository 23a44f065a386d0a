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
from simulate.settings import JIT_INLINE


@njit(**JIT_INLINE)
def _shear(d, dc, k, vy, alpha, x0, x1, x2, x3, s0, s1, s2, s3, s4):
    """Bilinear kinematic-hardening storey shear and tangent (s0 = dp, s1 = q)."""
    H = alpha * k / (1.0 - alpha)
    v_trial = k * (d - s0)
    xi = v_trial - s1
    f = abs(xi) - vy
    if f <= 0.0:
        return v_trial, k, s0, s1, s2, s3, s4
    sign = 1.0 if xi > 0.0 else -1.0
    dgamma = f / (k + H)
    dp_new = s0 + dgamma * sign
    return k * (d - dp_new), k * H / (k + H), dp_new, s1 + H * dgamma * sign, s2, s3, s4


class Bilinear(StoreyLaw):
    name = "bilinear"
    law_id = 1
    summary = "bilinear with kinematic hardening (k, yield_shear, hardening)"
