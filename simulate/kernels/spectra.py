"""Single-degree-of-freedom oscillators for response spectra (numba kernels).

Kernels take contiguous float64 arrays and scalars and write into output arrays
they are given; the public functions without the leading underscore convert the
input and allocate the output. Everything is per unit mass: an oscillator of
natural circular frequency w = 2 pi / T and damping ratio z under ground
acceleration ag (m/s^2) obeys

    u'' + 2 z w u' + f(u) = -ag(t),      f(u) = w^2 u when elastic,

with u the displacement relative to the ground.

Elastic oscillators
-------------------
The ground acceleration is taken to vary linearly between samples, and each
step is integrated exactly for that input by the recurrence of Nigam and
Jennings (1969)::

    [u, v]_{i+1} = A [u, v]_i + B [ag_i, ag_{i+1}]

A and B come from the closed-form free vibration and the particular solution of
a linearly varying load. When w h < ``THETA_SERIES`` (long periods) the closed
forms lose digits to cancellation (terms of order 1/(w^3 h) cancel), so the same
coefficients are taken from the Taylor series of the matrix exponential of the
augmented first-order system (``_propagator``). The recurrence is exact for the
interpolated record at any step, so also when dt > T/10; only the peaks would be
sampled coarsely. Steps are therefore split into ``nsub`` equal sub-steps (the
record interpolated linearly, so nothing changes but where the peaks are
looked for), chosen by the callers so that each oscillator period holds at least
``samples_per_period`` points. Peaks are the largest absolute values at those
points. After the record's last sample the ground acceleration is zero and the
response may be followed for ``ntail`` more steps of free vibration.

Bilinear oscillators
--------------------
The restoring force follows the bilinear law with kinematic hardening: initial
stiffness k = w^2, yield force fy (per unit mass), post-yield stiffness alpha k,
and the force bounded by alpha k u +- (1 - alpha) fy. Viscous damping 2 z w stays
that of the initial stiffness. On each branch (elastic, or yielding upwards or
downwards) the equation is linear with constant coefficients, and the step is
integrated exactly by the same augmented matrix exponential. Branch changes are
events located inside the step (safeguarded Newton on the exact solution):
elastic -> yielding where the force reaches a bound, yielding -> elastic where
the velocity changes sign. The result is exact for the interpolated record, up
to events that begin and end inside one sub-step. With a very large fy the
oscillator is the elastic one above, computed by other means.

Constant-ductility strength
---------------------------
For a target ductility mu the normalised strength fy_bar = fy / f0 (f0 = w^2 u0,
u0 the elastic peak displacement) is searched from fy_bar = 1 downwards on a
geometric grid (ratio ``STRENGTH_GRID_RATIO``); the first grid interval where the
ductility u_m / (fy_bar u0) reaches mu holds the largest strength with that
ductility (the ductility is not a monotonic function of strength, so smaller
strengths may give the same ductility as well), and bisection on log fy_bar
narrows it to ``STRENGTH_TOLERANCE``.

References
----------
N. C. Nigam and P. C. Jennings (1969), "Calculation of response spectra from
strong-motion earthquake records", Bull. Seismol. Soc. Am. 59(2), 909-922.
A. K. Chopra, *Dynamics of Structures*, 4th ed., ch. 5 (interpolation of
excitation) and ch. 7 (elastoplastic systems, constant-ductility spectra).
C. F. Van Loan (1978), "Computing integrals involving the matrix exponential",
IEEE Trans. Automatic Control 23(3), 395-404 (the augmented matrix).
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit, prange

from simulate.settings import JIT, JIT_PARALLEL

#: Below this value of w h the elastic coefficients come from the series, not the closed forms.
THETA_SERIES = 0.05

#: Default least number of points per oscillator period at which peaks are looked for.
SAMPLES_PER_PERIOD = 20

#: Upper limit on the sub-steps of one record step (very short periods respond quasi-statically).
MAX_SUBSTEPS = 256

#: Ratio between successive strengths of the constant-ductility scan (fy_bar = 1, r, r^2, ...).
STRENGTH_GRID_RATIO = 0.95

#: Relative width on fy_bar at which the bisection stops.
STRENGTH_TOLERANCE = 1e-5

#: The scan gives up below this fy_bar (strength reduction factor 1000); the result is NaN.
MIN_STRENGTH_RATIO = 1e-3

#: Most branch changes handled inside one sub-step before the step is accepted as is.
MAX_EVENTS = 16


# ----------------------------------------------------------------------------- exact steps


@njit(**JIT)
def _propagator(r, d, theta, P):
    """Top rows of expm(A theta), A = [[0,1,0,0],[-r,-d,1,0],[0,0,0,1],[0,0,0,0]], into P (2, 4).

    A is the oscillator u'' + d u' + r u = q (time and states scaled by w) with a
    load q = q0 + q1 t carried along as two extra states; theta = w t. Taylor
    series on theta / 2^s with ||A theta / 2^s|| <= 1/2, then s squarings of the
    block-triangular matrix (the lower right block is expm([[0,1],[0,0]] t)).
    """
    nu = 1.0 + d + r
    th = theta
    s = 0
    while th * nu > 0.5:
        th *= 0.5
        s += 1
    t00 = 1.0
    t01 = 0.0
    t02 = 0.0
    t03 = 0.0
    t10 = 0.0
    t11 = 1.0
    t12 = 0.0
    t13 = 0.0
    p00, p01, p02, p03 = 1.0, 0.0, 0.0, 0.0
    p10, p11, p12, p13 = 0.0, 1.0, 0.0, 0.0
    for k in range(1, 60):
        f = th / k
        # rows of T A (A is sparse): columns -r T1, T0 - d T1, T1, T2
        n00 = -r * t01 * f
        n01 = (t00 - d * t01) * f
        n02 = t01 * f
        n03 = t02 * f
        n10 = -r * t11 * f
        n11 = (t10 - d * t11) * f
        n12 = t11 * f
        n13 = t12 * f
        t00, t01, t02, t03 = n00, n01, n02, n03
        t10, t11, t12, t13 = n10, n11, n12, n13
        p00 += t00
        p01 += t01
        p02 += t02
        p03 += t03
        p10 += t10
        p11 += t11
        p12 += t12
        p13 += t13
        tol = 1e-17
        if (abs(t00) <= tol * abs(p00) and abs(t01) <= tol * abs(p01)
                and abs(t02) <= tol * abs(p02) and abs(t03) <= tol * abs(p03)
                and abs(t10) <= tol * abs(p10) and abs(t11) <= tol * abs(p11)
                and abs(t12) <= tol * abs(p12) and abs(t13) <= tol * abs(p13)):
            break
    for _ in range(s):
        # [E F; 0 G]^2 = [E E, E F + F G; 0, G G] with G = [[1, th], [0, 1]]
        e00 = p00 * p00 + p01 * p10
        e01 = p00 * p01 + p01 * p11
        e10 = p10 * p00 + p11 * p10
        e11 = p10 * p01 + p11 * p11
        f00 = p00 * p02 + p01 * p12 + p02
        f01 = p00 * p03 + p01 * p13 + p02 * th + p03
        f10 = p10 * p02 + p11 * p12 + p12
        f11 = p10 * p03 + p11 * p13 + p12 * th + p13
        p00, p01, p10, p11 = e00, e01, e10, e11
        p02, p03, p12, p13 = f00, f01, f10, f11
        th *= 2.0
    P[0, 0] = p00
    P[0, 1] = p01
    P[0, 2] = p02
    P[0, 3] = p03
    P[1, 0] = p10
    P[1, 1] = p11
    P[1, 2] = p12
    P[1, 3] = p13


@njit(**JIT)
def _nj_coefficients(w, z, h, P):
    """(a11, a12, a21, a22, b11, b12, b21, b22) of the Nigam-Jennings step h; P (2, 4) is scratch.

    u_{i+1} = a11 u_i + a12 v_i + b11 ag_i + b12 ag_{i+1}, v likewise with a2*, b2*.
    """
    theta = w * h
    w2 = w * w
    if theta < THETA_SERIES:
        _propagator(1.0, 2.0 * z, theta, P)
        a11 = P[0, 0]
        a12 = P[0, 1] / w
        a21 = w * P[1, 0]
        a22 = P[1, 1]
        # state x = [u, v/w, q/w^2, q'/w^3] with q = -ag, q' = -(ag_{i+1} - ag_i)/h
        b11 = (-P[0, 2] + P[0, 3] / theta) / w2
        b12 = -P[0, 3] / (theta * w2)
        b21 = (-P[1, 2] + P[1, 3] / theta) / w
        b22 = -P[1, 3] / (theta * w)
        return a11, a12, a21, a22, b11, b12, b21, b22
    s = math.sqrt(1.0 - z * z)
    wd = w * s
    E = math.exp(-z * theta)
    S = math.sin(wd * h)
    C = math.cos(wd * h)
    a11 = E * (C + z / s * S)
    a12 = E * S / wd
    a21 = -E * w / s * S
    a22 = E * (C - z / s * S)
    # Particular solution of u'' + 2 z w u' + w^2 u = p0 + p1 t: u = c0 + c1 t with
    # c1 = p1 / w^2, c0 = p0 / w^2 - 2 z p1 / w^3; the rest is free vibration of u - (c0 + c1 t).
    # ag_i = 1, ag_{i+1} = 0: p = -ag gives p0 = -1, p1 = 1/h
    c1 = 1.0 / (w2 * h)
    c0 = -1.0 / w2 - 2.0 * z / (w2 * w * h)
    b11 = -a11 * c0 - a12 * c1 + c0 + c1 * h
    b21 = -a21 * c0 - a22 * c1 + c1
    # ag_i = 0, ag_{i+1} = 1: p0 = 0, p1 = -1/h
    c1 = -1.0 / (w2 * h)
    c0 = 2.0 * z / (w2 * w * h)
    b12 = -a11 * c0 - a12 * c1 + c0 + c1 * h
    b22 = -a21 * c0 - a22 * c1 + c1
    return a11, a12, a21, a22, b11, b12, b21, b22


# ---------------------------------------------------------------------------- elastic


@njit(**JIT)
def _elastic_peaks(ag, n, ntail, nsub, dt, w, z, P):
    """(peak |u|, peak |v|, peak |absolute acceleration|) of one elastic oscillator; P (2, 4) scratch.

    ag (>= n,) m/s^2, n samples used, then ntail steps with ag = 0; nsub sub-steps per step.
    """
    h = dt / nsub
    a11, a12, a21, a22, b11, b12, b21, b22 = _nj_coefficients(w, z, h, P)
    c = 2.0 * z * w
    k = w * w
    inv = 1.0 / nsub
    u = 0.0
    v = 0.0
    umax = 0.0
    vmax = 0.0
    amax = 0.0
    for i in range(n - 1 + ntail):
        if i + 1 < n:
            g0 = ag[i]
            g1 = ag[i + 1]
        else:
            g0 = 0.0
            g1 = 0.0
        dg = (g1 - g0) * inv
        for j in range(nsub):
            e0 = g0 + dg * j
            e1 = g1 if j == nsub - 1 else e0 + dg
            un = a11 * u + a12 * v + b11 * e0 + b12 * e1
            v = a21 * u + a22 * v + b21 * e0 + b22 * e1
            u = un
            au = abs(u)
            if au > umax:
                umax = au
            av = abs(v)
            if av > vmax:
                vmax = av
            aa = abs(c * v + k * u)
            if aa > amax:
                amax = aa
    return umax, vmax, amax


@njit(**JIT_PARALLEL)
def _elastic_spectra(ag, nsteps, dt, periods, z, nsub, ntail, sd, sv, sa):
    """Peaks of elastic oscillators for every record and period, in parallel over both.

    ag (R, T) m/s^2 (row r valid up to nsteps[r]); dt (R,) s; periods (P,) s (0 = rigid:
    sd = sv = 0, sa = peak |ag|); nsub, ntail (R, P) int64; outputs sd, sv, sa (R, P)
    in m, m/s, m/s^2.
    """
    R = ag.shape[0]
    NP = periods.shape[0]
    for job in prange(R * NP):
        r = job // NP
        p = job - r * NP
        n = nsteps[r]
        T = periods[p]
        if T > 0.0:
            P = np.empty((2, 4))
            w = 2.0 * np.pi / T
            a, b, c = _elastic_peaks(ag[r], n, ntail[r, p], nsub[r, p], dt[r], w, z, P)
            sd[r, p] = a
            sv[r, p] = b
            sa[r, p] = c
        else:
            peak = 0.0
            for i in range(n):
                x = abs(ag[r, i])
                if x > peak:
                    peak = x
            sd[r, p] = 0.0
            sv[r, p] = 0.0
            sa[r, p] = peak


# ---------------------------------------------------------------------------- bilinear


@njit(**JIT)
def _locate(kind, sgn, u0, x1, x2, x3, q0, q1, r, d, w, rem, target, g_end, Pt):
    """Time (within rem) and state (u, v) of a branch change; see ``_bilinear_peak``.

    kind 0: g = sgn (u - target) rises through zero (the force reaches a bound);
    kind 1: g = -sgn v rises through zero (the velocity reverses). x1 = v0 / w,
    x2 = q0 / w^2, x3 = q1 / w^3 at the segment start; g(0) <= 0 < g_end.
    """
    w2 = w * w
    if kind == 0:
        g0 = sgn * (u0 - target)
    else:
        g0 = -sgn * w * x1
    if g0 > 0.0:
        g0 = 0.0
    lo = 0.0
    hi = rem
    tau = rem * (-g0) / (g_end - g0)
    u = u0
    v = w * x1
    for _ in range(100):
        _propagator(r, d, w * tau, Pt)
        u = Pt[0, 0] * u0 + Pt[0, 1] * x1 + Pt[0, 2] * x2 + Pt[0, 3] * x3
        v = w * (Pt[1, 0] * u0 + Pt[1, 1] * x1 + Pt[1, 2] * x2 + Pt[1, 3] * x3)
        if kind == 0:
            g = sgn * (u - target)
            dg = sgn * v
        else:
            acc = q0 + q1 * tau - d * w * v - r * w2 * u
            g = -sgn * v
            dg = -sgn * acc
        if g > 0.0:
            hi = tau
        else:
            lo = tau
        if dg > 0.0:
            new = tau - g / dg
            if not (lo < new < hi):
                new = 0.5 * (lo + hi)
        else:
            new = 0.5 * (lo + hi)
        if abs(new - tau) <= 1e-15 * rem or hi - lo <= 1e-15 * rem or g == 0.0:
            break
        tau = new
    return tau, u, v


@njit(**JIT)
def _bilinear_peak(ag, n, ntail, nsub, dt, w, z, alpha, fy, Pe, Py, Pt):
    """Peak |u| of the bilinear (kinematic hardening) oscillator, exact between events.

    ag (>= n,) m/s^2; fy yield force per unit mass, m/s^2; alpha post-yield
    stiffness ratio (0 <= alpha < 1); Pe, Py (2, 4) ``_propagator`` of one
    sub-step on the elastic (r = 1) and yielding (r = alpha) branch; Pt (2, 4) scratch.
    """
    h = dt / nsub
    k = w * w
    w3 = k * w
    d = 2.0 * z
    one_a = 1.0 - alpha
    inv = 1.0 / nsub
    u = 0.0
    v = 0.0
    umax = 0.0
    branch = 0          # 0 elastic, +1 yielding upwards, -1 downwards
    f0 = 0.0            # restoring force = stiffness of the branch * u + f0
    u_plus = fy / k     # elastic range [u_minus, u_plus]
    u_minus = -fy / k
    for i in range(n - 1 + ntail):
        if i + 1 < n:
            g0 = ag[i]
            g1 = ag[i + 1]
        else:
            g0 = 0.0
            g1 = 0.0
        dg = (g1 - g0) * inv
        slope = dg / h
        for j in range(nsub):
            e0 = g0 + dg * j
            t = 0.0
            events = 0
            while True:
                rem = h - t
                if rem <= 1e-14 * h:
                    break
                r = 1.0 if branch == 0 else alpha
                q0 = -(e0 + slope * t) - f0
                q1 = -slope
                x1 = v / w
                x2 = q0 / k
                x3 = q1 / w3
                if t == 0.0:
                    P = Pe if branch == 0 else Py
                else:
                    _propagator(r, d, w * rem, Pt)
                    P = Pt
                u1 = P[0, 0] * u + P[0, 1] * x1 + P[0, 2] * x2 + P[0, 3] * x3
                v1 = w * (P[1, 0] * u + P[1, 1] * x1 + P[1, 2] * x2 + P[1, 3] * x3)
                if events < MAX_EVENTS:
                    if branch == 0 and (u1 > u_plus or u1 < u_minus):
                        sgn = 1.0 if u1 > u_plus else -1.0
                        target = u_plus if sgn > 0.0 else u_minus
                        tau, u, v = _locate(0, sgn, u, x1, x2, x3, q0, q1, r, d, w, rem, target,
                                            sgn * (u1 - target), Pt)
                        branch = 1 if sgn > 0.0 else -1
                        f0 = sgn * one_a * fy
                        t += tau
                        events += 1
                        if abs(u) > umax:
                            umax = abs(u)
                        continue
                    if branch != 0 and branch * v1 < 0.0:
                        sgn = float(branch)
                        tau, u, v = _locate(1, sgn, u, x1, x2, x3, q0, q1, r, d, w, rem, 0.0,
                                            -sgn * v1, Pt)
                        f0 = sgn * one_a * fy - one_a * k * u
                        u_plus = (one_a * fy - f0) / (one_a * k)
                        u_minus = (-one_a * fy - f0) / (one_a * k)
                        branch = 0
                        t += tau
                        events += 1
                        if abs(u) > umax:
                            umax = abs(u)
                        continue
                u = u1
                v = v1
                break
            if abs(u) > umax:
                umax = abs(u)
    return umax


@njit(**JIT)
def _branch_propagators(w, z, alpha, h):
    """(Pe, Py, Pt): one-sub-step propagators of the elastic and yielding branch, and scratch."""
    Pe = np.empty((2, 4))
    Py = np.empty((2, 4))
    Pt = np.empty((2, 4))
    _propagator(1.0, 2.0 * z, w * h, Pe)
    _propagator(alpha, 2.0 * z, w * h, Py)
    return Pe, Py, Pt


@njit(**JIT)
def _ductility_search(ag, n, ntail, nsub, dt, w, z, alpha, u0, mu, fy_bar, umax, mu_got):
    """Largest fy_bar whose ductility reaches each target mu (D,); outputs fy_bar, umax, mu_got (D,).

    u0 is the elastic peak displacement of the same oscillator; NaN where no strength
    down to ``MIN_STRENGTH_RATIO`` reaches the target or u0 is zero.
    """
    D = mu.shape[0]
    hi = np.ones(D)
    lo = np.zeros(D)
    lo_u = np.zeros(D)
    for q in range(D):
        fy_bar[q] = np.nan
        umax[q] = np.nan
        mu_got[q] = np.nan
    if not (u0 > 0.0):
        return
    h = dt / nsub
    k = w * w
    Pe, Py, Pt = _branch_propagators(w, z, alpha, h)
    found = np.zeros(D, dtype=np.bool_)
    left = 0
    for q in range(D):
        if mu[q] <= 1.0:
            found[q] = True        # the elastic oscillator: fy_bar = 1, mu = 1
            lo[q] = 1.0
            hi[q] = 1.0
            lo_u[q] = u0
        else:
            left += 1
    f = 1.0
    while left > 0 and f > MIN_STRENGTH_RATIO:
        f *= STRENGTH_GRID_RATIO
        um = _bilinear_peak(ag, n, ntail, nsub, dt, w, z, alpha, f * k * u0, Pe, Py, Pt)
        got = um / (f * u0)
        for q in range(D):
            if not found[q] and got >= mu[q]:
                found[q] = True
                lo[q] = f
                lo_u[q] = um
                hi[q] = f / STRENGTH_GRID_RATIO
                left -= 1
    for q in range(D):
        if not found[q]:
            continue
        while hi[q] > lo[q] * (1.0 + STRENGTH_TOLERANCE):
            mid = math.sqrt(hi[q] * lo[q])
            um = _bilinear_peak(ag, n, ntail, nsub, dt, w, z, alpha, mid * k * u0, Pe, Py, Pt)
            if um / (mid * u0) >= mu[q]:
                lo[q] = mid
                lo_u[q] = um
            else:
                hi[q] = mid
        fy_bar[q] = lo[q]
        umax[q] = lo_u[q]
        mu_got[q] = lo_u[q] / (lo[q] * u0)


@njit(**JIT_PARALLEL)
def _inelastic_spectra(ag, nsteps, dt, periods, z, alpha, mu, nsub, ntail, u0, fy_bar, umax, mu_got):
    """Constant-ductility strengths for every record and period, in parallel over both.

    ag (R, T) m/s^2; dt (R,); periods (P,) s, all > 0; mu (D,) target ductilities;
    nsub, ntail (R, P) int64; u0 (R, P) elastic peak displacements, m; outputs
    fy_bar, umax, mu_got (R, D, P).
    """
    R = ag.shape[0]
    NP = periods.shape[0]
    D = mu.shape[0]
    for job in prange(R * NP):
        r = job // NP
        p = job - r * NP
        w = 2.0 * np.pi / periods[p]
        a = np.empty(D)
        b = np.empty(D)
        c = np.empty(D)
        _ductility_search(ag[r], nsteps[r], ntail[r, p], nsub[r, p], dt[r], w, z, alpha, u0[r, p], mu,
                          a, b, c)
        for q in range(D):
            fy_bar[r, q, p] = a[q]
            umax[r, q, p] = b[q]
            mu_got[r, q, p] = c[q]


# ------------------------------------------------------------------------ thin wrappers


def _records_array(ag):
    ag = np.ascontiguousarray(ag, dtype=np.float64)
    if ag.ndim == 1:
        ag = ag[None, :]
    return ag


def substeps(dt, periods, samples_per_period=SAMPLES_PER_PERIOD) -> np.ndarray:
    """Sub-steps per record step, shape (R, P): ceil(samples_per_period dt / T), 1 to MAX_SUBSTEPS.

    ``samples_per_period = 0`` gives 1 everywhere (peaks at the record samples only).
    """
    dt = np.atleast_1d(np.asarray(dt, dtype=np.float64))[:, None]
    periods = np.atleast_1d(np.asarray(periods, dtype=np.float64))[None, :]
    with np.errstate(divide="ignore", invalid="ignore"):
        wanted = np.ceil(samples_per_period * dt / periods)
    wanted = np.where(periods > 0.0, wanted, 1.0)
    return np.clip(np.nan_to_num(wanted, nan=1.0), 1, MAX_SUBSTEPS).astype(np.int64)


def tail_steps(dt, periods, damping, free_vibration=True) -> np.ndarray:
    """Steps of free vibration after each record, shape (R, P): one damped period, or none."""
    dt = np.atleast_1d(np.asarray(dt, dtype=np.float64))[:, None]
    periods = np.atleast_1d(np.asarray(periods, dtype=np.float64))[None, :]
    if not free_vibration:
        return np.zeros((dt.shape[0], periods.shape[1]), dtype=np.int64)
    damped = periods / math.sqrt(1.0 - damping * damping)
    return np.ceil(damped / dt).astype(np.int64)


def elastic_spectra(ag, nsteps, dt, periods, damping, samples_per_period=SAMPLES_PER_PERIOD,
                    free_vibration=True):
    """Peak responses of elastic oscillators to each record.

    Parameters
    ----------
    ag : array, shape (R, T) or (T,)
        Ground acceleration, m/s^2; row r is read up to ``nsteps[r]``.
    nsteps : array of int, shape (R,)
    dt : array, shape (R,)
        Time step of each record, s.
    periods : array, shape (P,)
        Natural periods, s (>= 0; 0 is the rigid oscillator).
    damping : float
        Damping ratio, 0 <= damping < 1.
    samples_per_period : int
        Least number of points per period at which peaks are looked for.
    free_vibration : bool
        Follow each oscillator for one damped period after the record ends.

    Returns
    -------
    sd, sv, sa : arrays, shape (R, P)
        Peak relative displacement (m), peak relative velocity (m/s) and peak
        absolute acceleration (m/s^2).

    References
    ----------
    Nigam and Jennings (1969); see the module docstring.
    """
    ag = _records_array(ag)
    nsteps = np.ascontiguousarray(np.atleast_1d(nsteps), dtype=np.int64)
    dt = np.ascontiguousarray(np.atleast_1d(dt), dtype=np.float64)
    periods = np.ascontiguousarray(np.atleast_1d(periods), dtype=np.float64)
    nsub = substeps(dt, periods, samples_per_period)
    ntail = tail_steps(dt, periods, damping, free_vibration)
    shape = (ag.shape[0], periods.shape[0])
    sd, sv, sa = np.empty(shape), np.empty(shape), np.empty(shape)
    _elastic_spectra(ag, nsteps, dt, periods, float(damping), nsub, ntail, sd, sv, sa)
    return sd, sv, sa


def bilinear_peak(ag, dt, period, damping, yield_force, hardening=0.0,
                  samples_per_period=SAMPLES_PER_PERIOD, free_vibration=True) -> float:
    """Peak relative displacement (m) of one bilinear oscillator under one record.

    ``ag`` (T,) m/s^2; ``yield_force`` is fy per unit mass, m/s^2; ``hardening``
    the post-yield stiffness ratio alpha (kinematic hardening).
    """
    ag = np.ascontiguousarray(ag, dtype=np.float64)
    nsub = int(substeps(dt, period, samples_per_period)[0, 0])
    ntail = int(tail_steps(dt, period, damping, free_vibration)[0, 0])
    w = 2.0 * math.pi / float(period)
    Pe, Py, Pt = _branch_propagators(w, float(damping), float(hardening), float(dt) / nsub)
    return float(_bilinear_peak(ag, ag.shape[0], ntail, nsub, float(dt), w, float(damping),
                                float(hardening), float(yield_force), Pe, Py, Pt))


def constant_ductility(ag, nsteps, dt, periods, damping, ductility, hardening=0.0, sd_elastic=None,
                       samples_per_period=SAMPLES_PER_PERIOD, free_vibration=True):
    """Largest normalised strengths fy / f0 of bilinear oscillators reaching each target ductility.

    Arrays as in :func:`elastic_spectra`; ``periods`` all > 0; ``ductility`` (D,).
    ``sd_elastic`` (R, P), the elastic peak displacements computed with the same
    settings, is computed when not given.

    Returns
    -------
    fy_bar, u_max, achieved : arrays, shape (R, D, P)
        Normalised yield strength, peak displacement (m) and the ductility reached
        (at least the target, equal to it unless the ductility jumps there); NaN
        where the search failed.
    """
    ag = _records_array(ag)
    nsteps = np.ascontiguousarray(np.atleast_1d(nsteps), dtype=np.int64)
    dt = np.ascontiguousarray(np.atleast_1d(dt), dtype=np.float64)
    periods = np.ascontiguousarray(np.atleast_1d(periods), dtype=np.float64)
    mu = np.ascontiguousarray(np.atleast_1d(ductility), dtype=np.float64)
    if sd_elastic is None:
        sd_elastic = elastic_spectra(ag, nsteps, dt, periods, damping, samples_per_period,
                                     free_vibration)[0]
    sd_elastic = np.ascontiguousarray(sd_elastic, dtype=np.float64)
    nsub = substeps(dt, periods, samples_per_period)
    ntail = tail_steps(dt, periods, damping, free_vibration)
    shape = (ag.shape[0], mu.shape[0], periods.shape[0])
    fy_bar, u_max, achieved = np.empty(shape), np.empty(shape), np.empty(shape)
    _inelastic_spectra(ag, nsteps, dt, periods, float(damping), float(hardening), mu, nsub, ntail,
                       sd_elastic, fy_bar, u_max, achieved)
    return fy_bar, u_max, achieved
