"""Newmark-beta time stepping for linear shear frames (numba kernels).

Kernels take contiguous float64 arrays and write into output arrays they are
given; they know nothing of configs, records or xarray. The methods in
``simulate.kernels.methods`` prepare the arrays.

The scheme is Newmark's family (gamma, beta) in total (not incremental) form:

    Khat u_{i+1} = p_{i+1} + M (c1 u_i + c2 v_i + c3 a_i) + C (q1 u_i + q2 v_i + q3 a_i)
    Khat = K + c1 M + q1 C
    c1 = 1/(beta dt^2), c2 = 1/(beta dt), c3 = 1/(2 beta) - 1,
    q1 = gamma/(beta dt), q2 = gamma/beta - 1, q3 = dt (gamma/(2 beta) - 1)

followed by the Newmark velocity and acceleration updates. With a diagonal M and
tridiagonal K and C, Khat is tridiagonal and factorised once (Thomas algorithm),
so one step costs O(N).

References
----------
N. M. Newmark (1959), "A method of computation for structural dynamics",
J. Eng. Mech. Div. ASCE 85(EM3), 67-94. A. K. Chopra, *Dynamics of Structures*,
4th ed., sections 5.4 and 15.3 (Tables 5.4.2 and 15.3.3).
"""

from __future__ import annotations

import numpy as np
from numba import njit, prange

from simulate.settings import JIT, JIT_PARALLEL


@njit(**JIT)
def _write_row(row, u, v, a, agi, h, k, u_out, v_out, acc_out, drift_out, shear_out):
    """Store the state of one step: displacement, velocity, absolute acceleration, drift, shear."""
    n = u.shape[0]
    below = 0.0
    for j in range(n):
        u_out[row, j] = u[j]
        v_out[row, j] = v[j]
        acc_out[row, j] = a[j] + agi
        d = u[j] - below
        drift_out[row, j] = d / h[j]
        shear_out[row, j] = k[j] * d
        below = u[j]


@njit(**JIT)
def _fill_nan(first, u_out, v_out, acc_out, drift_out, shear_out):
    """Pad rows from ``first`` on with NaN (records shorter than the longest)."""
    nt, n = u_out.shape
    for row in range(first, nt):
        for j in range(n):
            u_out[row, j] = np.nan
            v_out[row, j] = np.nan
            acc_out[row, j] = np.nan
            drift_out[row, j] = np.nan
            shear_out[row, j] = np.nan


@njit(**JIT)
def _newmark_tridiagonal(m, k, h, kd, ko, cd, co, ag, force, has_force, nsteps, dt, gamma, beta,
                         u_out, v_out, acc_out, drift_out, shear_out):
    """Linear Newmark-beta over ``nsteps`` steps, tridiagonal K and C, O(N) per step.

    m (N,) floor masses; k, h (N,) storey stiffness and height; kd (N,), ko (N-1,)
    diagonals of K; cd (N,), co (N-1,) diagonals of C; ag (T,) ground acceleration,
    m/s^2; force (T, N) floor forces, N (read only when ``has_force``). Outputs
    (T, N): rows 0..nsteps-1 hold the response, later rows NaN.
    """
    n = m.shape[0]
    c1 = 1.0 / (beta * dt * dt)
    c2 = 1.0 / (beta * dt)
    c3 = 0.5 / beta - 1.0
    q1 = gamma / (beta * dt)
    q2 = gamma / beta - 1.0
    q3 = dt * (0.5 * gamma / beta - 1.0)
    g1 = gamma / (beta * dt)
    g2 = 1.0 - gamma / beta
    g3 = dt * (1.0 - 0.5 * gamma / beta)

    # Thomas factors of Khat = K + c1 M + q1 C (symmetric tridiagonal)
    inv_den = np.empty(n)
    cp = np.empty(n)
    off = np.empty(n)
    for j in range(n - 1):
        off[j] = ko[j] + q1 * co[j]
    off[n - 1] = 0.0
    den = kd[0] + c1 * m[0] + q1 * cd[0]
    inv_den[0] = 1.0 / den
    cp[0] = off[0] * inv_den[0]
    for j in range(1, n):
        den = kd[j] + c1 * m[j] + q1 * cd[j] - off[j - 1] * cp[j - 1]
        inv_den[j] = 1.0 / den
        cp[j] = off[j] * inv_den[j]

    u = np.zeros(n)
    v = np.zeros(n)
    a = np.empty(n)
    w = np.empty(n)
    y = np.empty(n)
    # initial acceleration from equilibrium at rest: M a0 = p0
    for j in range(n):
        p0 = -m[j] * ag[0]
        if has_force:
            p0 += force[0, j]
        a[j] = p0 / m[j]
    _write_row(0, u, v, a, ag[0], h, k, u_out, v_out, acc_out, drift_out, shear_out)
    # w = q1 u + q2 v + q3 a is the damping part of the right-hand side; the back
    # substitution of each step leaves it ready for the next one
    for j in range(n):
        w[j] = q1 * u[j] + q2 * v[j] + q3 * a[j]
    # the constant has_force at each call site lets the compiler drop the floor-force
    # branch from the step loop when there are no floor forces
    if has_force:
        _tridiagonal_steps(m, k, h, cd, co, off, inv_den, cp, ag, force, True, nsteps,
                           c1, c2, c3, q1, q2, q3, g1, g2, g3, u, v, a, w, y,
                           u_out, v_out, acc_out, drift_out, shear_out)
    else:
        _tridiagonal_steps(m, k, h, cd, co, off, inv_den, cp, ag, force, False, nsteps,
                           c1, c2, c3, q1, q2, q3, g1, g2, g3, u, v, a, w, y,
                           u_out, v_out, acc_out, drift_out, shear_out)
    _fill_nan(nsteps, u_out, v_out, acc_out, drift_out, shear_out)


@njit(**JIT)
def _tridiagonal_steps(m, k, h, cd, co, off, inv_den, cp, ag, force, has_force, nsteps,
                       c1, c2, c3, q1, q2, q3, g1, g2, g3, u, v, a, w, y,
                       u_out, v_out, acc_out, drift_out, shear_out):
    """Steps 1..nsteps-1 of ``_newmark_tridiagonal``: state u, v, a, w updated in place, output rows written."""
    n = m.shape[0]
    last = n - 1
    for i in range(1, nsteps):
        agi = ag[i]
        # forward sweep of the Thomas algorithm on the right-hand side
        prev = 0.0
        for j in range(n):
            r = m[j] * (c1 * u[j] + c2 * v[j] + c3 * a[j] - agi) + cd[j] * w[j]
            if j > 0:
                r += co[j - 1] * w[j - 1]
            if j < last:
                r += co[j] * w[j + 1]
            if has_force:
                r += force[i, j]
            if j > 0:
                r -= off[j - 1] * prev
            prev = r * inv_den[j]
            y[j] = prev
        # back substitution, the Newmark updates and the output row in one pass
        # from the roof down; the drift of storey j+1 is known once u_j is
        uo = u_out[i]
        vo = v_out[i]
        ao = acc_out[i]
        do = drift_out[i]
        so = shear_out[i]
        unext = y[last]
        above = 0.0
        for j in range(last, -1, -1):
            if j < last:
                unext = y[j] - cp[j] * unext
                d = above - unext
                do[j + 1] = d / h[j + 1]
                so[j + 1] = k[j + 1] * d
            vj = v[j]
            aj = a[j]
            du = unext - u[j]
            anew = c1 * du - c2 * vj - c3 * aj
            vnew = g1 * du + g2 * vj + g3 * aj
            u[j] = unext
            v[j] = vnew
            a[j] = anew
            w[j] = q1 * unext + q2 * vnew + q3 * anew
            uo[j] = unext
            vo[j] = vnew
            ao[j] = anew + agi
            above = unext
        d = above - 0.0
        do[0] = d / h[0]
        so[0] = k[0] * d


@njit(**JIT)
def _newmark_dense(m, k, h, kd, ko, C, khat_inv, ag, force, has_force, nsteps, dt, gamma, beta,
                   u_out, v_out, acc_out, drift_out, shear_out):
    """Linear Newmark-beta with a full damping matrix C (modal damping), O(N^2) per step.

    ``khat_inv`` (N, N) is the inverse of Khat = K + M/(beta dt^2) + gamma C/(beta dt),
    computed once by the caller. Other arguments as ``_newmark_tridiagonal``.
    """
    n = m.shape[0]
    c1 = 1.0 / (beta * dt * dt)
    c2 = 1.0 / (beta * dt)
    c3 = 0.5 / beta - 1.0
    q1 = gamma / (beta * dt)
    q2 = gamma / beta - 1.0
    q3 = dt * (0.5 * gamma / beta - 1.0)
    g1 = gamma / (beta * dt)
    g2 = 1.0 - gamma / beta
    g3 = dt * (1.0 - 0.5 * gamma / beta)

    u = np.zeros(n)
    v = np.zeros(n)
    a = np.empty(n)
    w = np.empty(n)
    r = np.empty(n)
    for j in range(n):
        p0 = -m[j] * ag[0]
        if has_force:
            p0 += force[0, j]
        a[j] = p0 / m[j]
    _write_row(0, u, v, a, ag[0], h, k, u_out, v_out, acc_out, drift_out, shear_out)

    for i in range(1, nsteps):
        agi = ag[i]
        for j in range(n):
            w[j] = q1 * u[j] + q2 * v[j] + q3 * a[j]
        for j in range(n):
            s = m[j] * (c1 * u[j] + c2 * v[j] + c3 * a[j] - agi)
            for l in range(n):
                s += C[j, l] * w[l]
            if has_force:
                s += force[i, j]
            r[j] = s
        for j in range(n):
            unext = 0.0
            for l in range(n):
                unext += khat_inv[j, l] * r[l]
            w[j] = unext
        for j in range(n):
            du = w[j] - u[j]
            anew = c1 * du - c2 * v[j] - c3 * a[j]
            v[j] = g1 * du + g2 * v[j] + g3 * a[j]
            a[j] = anew
            u[j] = w[j]
        _write_row(i, u, v, a, agi, h, k, u_out, v_out, acc_out, drift_out, shear_out)
    _fill_nan(nsteps, u_out, v_out, acc_out, drift_out, shear_out)


@njit(**JIT_PARALLEL)
def _newmark_tridiagonal_batch(m, k, h, kd, ko, cd, co, ag, force, has_force, nsteps, dt, gamma, beta,
                               u_out, v_out, acc_out, drift_out, shear_out):
    """``_newmark_tridiagonal`` over records in parallel: ag (R, T), force (R, T|1, N), outputs (R, T, N)."""
    for r in prange(ag.shape[0]):
        _newmark_tridiagonal(m, k, h, kd, ko, cd, co, ag[r], force[r], has_force, nsteps[r], dt, gamma,
                             beta, u_out[r], v_out[r], acc_out[r], drift_out[r], shear_out[r])


@njit(**JIT_PARALLEL)
def _newmark_dense_batch(m, k, h, kd, ko, C, khat_inv, ag, force, has_force, nsteps, dt, gamma, beta,
                         u_out, v_out, acc_out, drift_out, shear_out):
    """``_newmark_dense`` over records in parallel."""
    for r in prange(ag.shape[0]):
        _newmark_dense(m, k, h, kd, ko, C, khat_inv, ag[r], force[r], has_force, nsteps[r], dt, gamma,
                       beta, u_out[r], v_out[r], acc_out[r], drift_out[r], shear_out[r])
