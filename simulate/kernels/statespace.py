"""Exact integration of the linear first-order form for piecewise-linear loading.

For x = [u; v], x' = A x + B q(t) with B = [0; I] and q = M^-1 p(t) (floor
accelerations imposed by the load), a load varying linearly within each step
(first-order hold) gives the exact recurrence

    x_{i+1} = Phi x_i + G0 q_i + G1 q_{i+1},   Phi = exp(A dt),

with G0, G1 from one matrix exponential of an augmented matrix, computed once
per (frame, dt) by ``simulate.kernels.methods.foh_matrices``. One step costs
O(N^2) (dense 2N x 2N matrix-vector products).

References
----------
G. F. Franklin, J. D. Powell, M. L. Workman, *Digital Control of Dynamic
Systems*, 3rd ed., section 6.3 (triangle-hold equivalent); C. F. Van Loan (1978),
"Computing integrals involving the matrix exponential", IEEE Trans. Automatic
Control 23(3), 395-404.
"""

from __future__ import annotations

import numpy as np
from numba import njit, prange

from simulate.kernels.newmark import _fill_nan, _write_row
from simulate.settings import JIT, JIT_PARALLEL


@njit(**JIT)
def _state_space_foh(m, k, h, Phi, G0, G1, Alow, ag, force, has_force, nsteps,
                     u_out, v_out, acc_out, drift_out, shear_out):
    """Exact first-order-hold recurrence over ``nsteps`` steps.

    Phi (2N, 2N); G0, G1 (2N, N); Alow (N, 2N) the lower block row of A, used to
    recover the relative acceleration a = Alow x + q. ag (T,), force (T, N) as in
    the Newmark kernels. Outputs (T, N).
    """
    n = m.shape[0]
    n2 = 2 * n
    # Transposed copies: the matrix-vector products run column by column, so each
    # row still adds its terms in column order (the same rounding as a row-by-row
    # dot product) while the loop over rows is unit-stride and vectorises.
    PhiT = np.empty((n2, n2))
    for r in range(n2):
        for c in range(n2):
            PhiT[c, r] = Phi[r, c]
    AlowT = np.empty((n2, n))
    for j in range(n):
        for c in range(n2):
            AlowT[c, j] = Alow[j, c]
    G0T = np.empty((n, n2))
    G1T = np.empty((n, n2))
    for r in range(n2):
        for j in range(n):
            G0T[j, r] = G0[r, j]
            G1T[j, r] = G1[r, j]
    x = np.zeros(n2)
    xn = np.empty(n2)
    q0 = np.zeros(n)
    q1 = np.zeros(n)
    a = np.empty(n)
    # G0 and G1 applied to the base-excitation part q = -ag * iota, precomputed
    g0 = np.zeros(n2)
    g1 = np.zeros(n2)
    for r in range(n2):
        s0 = 0.0
        s1 = 0.0
        for j in range(n):
            s0 -= G0[r, j]
            s1 -= G1[r, j]
        g0[r] = s0
        g1[r] = s1

    ag0 = ag[0]
    for j in range(n):
        q0[j] = force[0, j] / m[j] if has_force else 0.0
        a[j] = q0[j] - ag0
    _write_row(0, x[:n], x[n:], a, ag0, h, k, u_out, v_out, acc_out, drift_out, shear_out)

    c4 = n2 - n2 % 4
    for i in range(1, nsteps):
        agp = ag[i - 1]
        agi = ag[i]
        if has_force:
            for j in range(n):
                q1[j] = force[i, j] / m[j]
        # x_new = g0 agp + g1 agi + Phi x (+ G0 q0 + G1 q1), four columns per sweep
        for r in range(n2):
            xn[r] = g0[r] * agp + g1[r] * agi
        for c in range(0, c4, 4):
            x0 = x[c]
            x1 = x[c + 1]
            x2 = x[c + 2]
            x3 = x[c + 3]
            for r in range(n2):
                xn[r] = (((xn[r] + PhiT[c, r] * x0) + PhiT[c + 1, r] * x1)
                         + PhiT[c + 2, r] * x2) + PhiT[c + 3, r] * x3
        for c in range(c4, n2):
            xc = x[c]
            for r in range(n2):
                xn[r] += PhiT[c, r] * xc
        if has_force:
            for j in range(n):
                qa = q0[j]
                qb = q1[j]
                for r in range(n2):
                    xn[r] += G0T[j, r] * qa + G1T[j, r] * qb
            for j in range(n):
                q0[j] = q1[j]
        for r in range(n2):
            x[r] = xn[r]
        # a = q - ag + Alow x
        if has_force:
            for j in range(n):
                a[j] = q1[j] - agi
        else:
            for j in range(n):
                a[j] = -agi
        for c in range(0, c4, 4):
            x0 = x[c]
            x1 = x[c + 1]
            x2 = x[c + 2]
            x3 = x[c + 3]
            for j in range(n):
                a[j] = (((a[j] + AlowT[c, j] * x0) + AlowT[c + 1, j] * x1)
                        + AlowT[c + 2, j] * x2) + AlowT[c + 3, j] * x3
        for c in range(c4, n2):
            xc = x[c]
            for j in range(n):
                a[j] += AlowT[c, j] * xc
        below = 0.0
        for j in range(n):
            uj = x[j]
            u_out[i, j] = uj
            v_out[i, j] = x[n + j]
            acc_out[i, j] = a[j] + agi
            d = uj - below
            drift_out[i, j] = d / h[j]
            shear_out[i, j] = k[j] * d
            below = uj
    _fill_nan(nsteps, u_out, v_out, acc_out, drift_out, shear_out)


@njit(**JIT_PARALLEL)
def _state_space_foh_batch(m, k, h, Phi, G0, G1, Alow, ag, force, has_force, nsteps,
                           u_out, v_out, acc_out, drift_out, shear_out):
    """``_state_space_foh`` over records in parallel."""
    for r in prange(ag.shape[0]):
        _state_space_foh(m, k, h, Phi, G0, G1, Alow, ag[r], force[r], has_force, nsteps[r],
                         u_out[r], v_out[r], acc_out[r], drift_out[r], shear_out[r])
