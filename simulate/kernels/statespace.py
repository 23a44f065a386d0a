"""Exact integration of the linear first-order form for piecewise-linear loading.

For x = [u; v], x' = A x + B q(t) with B = [0; I] and q = M^-1 p(t) (floor
accelerations imposed by the load), a load varying linearly within each step
(first-order hold) gives the exact recurrence

    x_{i+1} = Phi x_i + G0 q_i + G1 q_{i+1},   Phi = exp(A dt),

with G0, G1 from one matrix exponential of an augmented matrix, computed once
per (frame, dt) by ``simulate.kernels.linear.foh_matrices``. One step costs
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
    x = np.zeros(n2)
    xn = np.empty(n2)
    q0 = np.empty(n)
    q1 = np.empty(n)
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

    for j in range(n):
        q0[j] = force[0, j] / m[j] if has_force else 0.0
        a[j] = q0[j] - ag[0]
    _write_row(0, x[:n], x[n:], a, ag[0], h, k, u_out, v_out, acc_out, drift_out, shear_out)

    for i in range(1, nsteps):
        agp = ag[i - 1]
        agi = ag[i]
        if has_force:
            for j in range(n):
                q1[j] = force[i, j] / m[j]
        for r in range(n2):
            s = g0[r] * agp + g1[r] * agi
            for c in range(n2):
                s += Phi[r, c] * x[c]
            if has_force:
                for j in range(n):
                    s += G0[r, j] * q0[j] + G1[r, j] * q1[j]
            xn[r] = s
        for r in range(n2):
            x[r] = xn[r]
        for j in range(n):
            s = q1[j] - agi if has_force else -agi
            for c in range(n2):
                s += Alow[j, c] * x[c]
            a[j] = s
        if has_force:
            for j in range(n):
                q0[j] = q1[j]
        _write_row(i, x[:n], x[n:], a, agi, h, k, u_out, v_out, acc_out, drift_out, shear_out)
    _fill_nan(nsteps, u_out, v_out, acc_out, drift_out, shear_out)


@njit(**JIT_PARALLEL)
def _state_space_foh_batch(m, k, h, Phi, G0, G1, Alow, ag, force, has_force, nsteps,
                           u_out, v_out, acc_out, drift_out, shear_out):
    """``_state_space_foh`` over records in parallel."""
    for r in prange(ag.shape[0]):
        _state_space_foh(m, k, h, Phi, G0, G1, Alow, ag[r], force[r], has_force, nsteps[r],
                         u_out[r], v_out[r], acc_out[r], drift_out[r], shear_out[r])
