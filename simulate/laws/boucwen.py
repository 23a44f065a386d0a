"""Smooth Bouc-Wen storey.

V = alpha k d + (1 - alpha) Vy z, with the dimensionless hysteretic variable z
following dz/dd = (1/dy) [A - |z|^n (beta sgn(dd z) + gamma)], dy = Vy / k
(Y. K. Wen (1976), "Method for random vibration of hysteretic systems", J. Eng.
Mech. Div. ASCE 102(2), 249-263; R. Bouc (1967)). With A = 1 and beta + gamma = 1
the hysteretic part saturates at Vy.

Within a step z is advanced by the trapezoidal rule over the deformation
increment (second order, like the Newmark average-acceleration scheme), solved by
Newton's method; the tangent is the consistent derivative of that update.

Admissible parameters here: A > 0, n >= 1, beta > 0, -beta <= gamma <= beta.
State: s[0] = z.
"""

from __future__ import annotations

import math

from numba import njit

from simulate.errors import InputError
from simulate.laws.base import StoreyLaw
from simulate.settings import JIT_INLINE


@njit(**JIT_INLINE)
def _g(z, sgn_dd, A, beta, gamma, n):
    """Bouc-Wen rate function g(z) = dz/d(d/dy) and its derivative in z."""
    az = abs(z)
    sz = 1.0 if z >= 0.0 else -1.0
    c = beta * (1.0 if sgn_dd * z >= 0.0 else -1.0) + gamma
    if n == 1.0:
        zn1 = 1.0
    elif n == 2.0:
        zn1 = az        # az ** 1.0: pow returns a representable result exactly; no library call
    else:
        zn1 = az ** (n - 1.0)
    return A - az * zn1 * c, -n * zn1 * sz * c


@njit(**JIT_INLINE)
def _shear(d, dc, k, vy, alpha, A, beta, gamma, n, s0, s1, s2, s3, s4):
    """Bouc-Wen storey shear and consistent tangent (s0 = z)."""
    dy = vy / k
    z0 = s0
    dd = d - dc
    sgn = 1.0 if dd >= 0.0 else -1.0
    h = 0.5 * dd / dy
    g0, _ = _g(z0, sgn, A, beta, gamma, n)
    if dd == 0.0:
        return alpha * k * d + (1.0 - alpha) * vy * z0, alpha * k + (1.0 - alpha) * k * g0, z0, s1, s2, s3, s4
    z = z0 + 2.0 * h * g0
    for _ in range(60):
        g, dg = _g(z, sgn, A, beta, gamma, n)
        dz = (z - z0 - h * (g0 + g)) / (1.0 - h * dg)
        z -= dz
        if abs(dz) <= 1e-14 * (1.0 + abs(z)):
            break
    g, dg = _g(z, sgn, A, beta, gamma, n)
    dz_dd = 0.5 * (g0 + g) / dy / (1.0 - h * dg)
    return (alpha * k * d + (1.0 - alpha) * vy * z, alpha * k + (1.0 - alpha) * vy * dz_dd,
            z, s1, s2, s3, s4)


class BoucWen(StoreyLaw):
    name = "bouc-wen"
    law_id = 2
    extra = {"A": 1.0, "beta": 0.5, "gamma": 0.5, "n": 2.0}
    summary = "smooth Bouc-Wen (k, yield_shear, hardening, A, beta, gamma, n)"

    @classmethod
    def check(cls, storey, k, vy, alpha, params):
        super().check(storey, k, vy, alpha, params)
        A = float(params.get("A", cls.extra["A"]))
        beta = float(params.get("beta", cls.extra["beta"]))
        gamma = float(params.get("gamma", cls.extra["gamma"]))
        n = float(params.get("n", cls.extra["n"]))
        if not (math.isfinite(A) and A > 0):
            raise InputError(f"storey {storey}: Bouc-Wen A must be > 0, got {A!r}")
        if not (math.isfinite(n) and n >= 1.0):
            raise InputError(f"storey {storey}: Bouc-Wen n must be >= 1, got {n!r}")
        if not (math.isfinite(beta) and beta > 0):
            raise InputError(f"storey {storey}: Bouc-Wen beta must be > 0, got {beta!r}")
        if not (math.isfinite(gamma) and -beta <= gamma <= beta):
            raise InputError(f"storey {storey}: Bouc-Wen gamma must lie in [-beta, beta] = "
                             f"[{-beta:g}, {beta:g}], got {gamma!r}")
