"""Newmark-beta with Newton-Raphson iterations for frames with hysteretic storeys and P-Delta.

Each step solves the residual

    R(u) = p_{i+1} - M a(u) - f_D(v(u)) - f_S(u) = 0,

with a(u), v(u) from the Newmark relations, by Newton's method on the
tridiagonal effective tangent c1 M + g1 C + K_t (O(N) per iteration with
Rayleigh, mass- or stiffness-proportional damping; a full C from modal damping
makes it a dense solve). K_t includes the geometric stiffness -P_i / h_i of
each storey (linearised P-Delta). A step converges when both the largest
displacement correction and the largest unbalanced floor force fall below their
tolerances (``tol_u``, m, and ``tol_r``, N). A step that does not converge in
``max_iter`` iterations is split into 2, 4, ... 2^max_depth equal substeps (load
interpolated linearly) from the last converged state; if that fails too the
record stops with status NOT_CONVERGED. A storey drift ratio beyond
``collapse_drift`` stops the record with status COLLAPSED.

Energies (relative formulation; C.-M. Uang and V. V. Bertero (1990), "Evaluation
of seismic energy in structures", Earthquake Eng. Struct. Dyn. 19, 77-90) are
accumulated with the trapezoidal rule over each step's displacement increment:
input -sum m a_g du (+ floor forces), kinetic 1/2 v^T M v, damping work, the
recoverable strain energy V^2 / (2 k) of each storey spring plus the
geometric term -P d^2 / (2 h), and the hysteretic energy (spring work minus
recoverable strain energy).

References
----------
N. M. Newmark (1959); A. K. Chopra, *Dynamics of Structures*, 4th ed., section
5.7 and Table 5.7.2 (Newmark's method for nonlinear systems, Newton-Raphson
iteration).
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit, prange

from simulate.laws.base import N_PARAMS, N_STATE
from simulate.laws.dispatch import storey_shear
from simulate.settings import JIT, JIT_INLINE, JIT_PARALLEL

#: Status codes written by the kernels.
OK = 0
NOT_CONVERGED = 1
COLLAPSED = 2

#: Columns of the energy history.
ENERGY_COLUMNS = ("input", "kinetic", "damping", "strain", "hysteretic")


# Columns of the per-storey work array X (one row per storey). Keeping a storey's numbers
# side by side lets the hot loops run on one row pointer instead of some thirty array
# pointers, which the register allocator could not keep in registers.
# The converged state (the first _NB columns, backed up before a step is split):
_U, _V, _A = 0, 1, 2            # floor displacement, velocity, acceleration
_D, _VC, _FDC, _KTC = 3, 4, 5, 6  # storey deformation, spring shear, damping force, tangent
_W, _PL = 7, 8                  # spring work, cumulative plastic deformation
_S = 9                          # law state, N_STATE columns
_NB = _S + N_STATE
_B = _NB                        # backup of the columns above
# the trial state of the Newton iterations:
_UN = _B + _NB                  # displacement
_VN = _UN + 1                   # velocity
_AN = _UN + 2                   # acceleration
_VS = _UN + 3                   # spring shear
_KT = _UN + 4                   # tangent stiffness
_WS = _UN + 5                   # storey shear with P-Delta
_FD = _UN + 6                   # damping force
_Y = _UN + 7                    # residual, then the Newton correction
_ST = _UN + 8                   # law state, N_STATE columns
# factors of the tridiagonal tangent and the tangents they were made with:
_CP = _ST + N_STATE
_INV = _CP + 1
_OFF = _CP + 2
_KF = _CP + 3
# constants and loads:
_M = _KF + 1                    # floor mass
_KG = _M + 1                    # geometric stiffness P / h
_K0 = _M + 2                    # elastic stiffness
_H = _M + 3                     # storey height
_CD = _M + 4                    # damping matrix diagonal
_CO = _M + 5                    # damping matrix off-diagonal (row j, column j + 1)
_P0 = _M + 6                    # load at the start and the end of the step
_P1 = _M + 7
_PP = _M + 8                    # load at the start and the end of the substep
_PN = _M + 9
_P = _M + 10                    # law parameters, N_PARAMS columns
_NCOL = _P + N_PARAMS


@njit(**JIT_INLINE)
def _same(x, y):
    """True if x and y are the same number, signed zeros told apart (NaN is never the same)."""
    return x == y and (x != 0.0 or math.copysign(1.0, x) == math.copysign(1.0, y))


@njit(**JIT)
def _newmark_nonlinear(m, h, law, P, S_init, kg, cd_in, co_in, C, dense, tangent_damping, a0, a1,
                       ag, force, has_force, nsteps, dt, gamma, beta,
                       tol_u, tol_r, max_iter, max_depth, collapse_drift,
                       u_out, v_out, acc_out, drift_out, shear_out, energy_out, storey_out, info):
    """Nonlinear Newmark-beta over one record.

    m, h, kg (N,): floor masses, storey heights, geometric stiffnesses P_i / h_i.
    law (N,) int64 law ids; P (N, 7) parameter rows; S_init (N, 5) initial states.
    cd_in, co_in: tridiagonal C (initial stiffness); C (N, N) dense C when ``dense``.
    tangent_damping: C = a0 M + a1 K_t with K_t of the last converged state.
    ag (T,), force (T|1, N) as in the linear kernels. Outputs: (T, N) histories,
    energy_out (T, 5) (see ENERGY_COLUMNS), storey_out (N, 2) hysteretic energy and
    cumulative plastic deformation per storey, info (4,) int64: status, valid
    steps, Newton iterations, substepped steps.

    Everything per step lives in this one function and the laws are called with
    scalars only: array arguments to inner calls cost reference counting
    (atomic operations) that dominated the run time. The per-storey numbers live
    in one work array X (see the column names above).

    The factors of the tridiagonal tangent are kept while no storey tangent, Newmark
    constant or damping term changes, and remade only from the first row that
    changed (row j depends on the tangents of storeys up to j + 1): the same
    operations on the same numbers, so the results do not change.
    """
    n = m.shape[0]
    X = np.zeros((n, _NCOL))
    for j in range(n):
        X[j, _M] = m[j]
        X[j, _KG] = kg[j]
        X[j, _K0] = P[j, 0]
        X[j, _KTC] = P[j, 0]
        X[j, _H] = h[j]
        X[j, _CD] = cd_in[j]
        if j < n - 1:
            X[j, _CO] = co_in[j]
        for q in range(N_PARAMS):
            X[j, _P + q] = P[j, q]
        for q in range(N_STATE):
            X[j, _S + q] = S_init[j, q]
    J = np.empty((n, n)) if dense else np.empty((1, 1))
    rhs = np.empty(n) if dense else np.empty(1)
    fact_from = 0           # rows from here on need new factors
    fact_c1 = 0.0
    fact_g1 = 0.0
    e_in = 0.0
    e_d = 0.0
    be_in = 0.0
    be_d = 0.0

    for j in range(n):
        X[j, _A] = (-m[j] * ag[0] + (force[0, j] if has_force else 0.0)) / m[j]
        X[j, _P1] = -X[j, _M] * ag[0] + (force[0, j] if has_force else 0.0)
    status = 0
    n_valid = nsteps
    iterations = 0
    substepped = 0
    for i in range(nsteps):
        if i > 0:
            nsub = 1
            depth = 0
            while True:
                ok = True
                h_dt = dt / nsub
                c1 = 1.0 / (beta * h_dt * h_dt)
                c2 = 1.0 / (beta * h_dt)
                c3 = 0.5 / beta - 1.0
                g1 = gamma / (beta * h_dt)
                g2 = 1.0 - gamma / beta
                g3 = h_dt * (1.0 - 0.5 * gamma / beta)
                if c1 != fact_c1 or g1 != fact_g1:
                    fact_from = 0
                    fact_c1 = c1
                    fact_g1 = g1
                for ksub in range(nsub):
                    th0 = ksub / nsub
                    th1 = (ksub + 1) / nsub
                    for j in range(n):
                        if depth == 0:
                            # first attempt at step i: the load at its start is the one
                            # at the end of step i - 1
                            X[j, _P0] = X[j, _P1]
                            X[j, _P1] = -X[j, _M] * ag[i] + (force[i, j] if has_force else 0.0)
                        p0 = X[j, _P0]
                        p1 = X[j, _P1]
                        X[j, _PP] = p0 + th0 * (p1 - p0)
                        X[j, _PN] = p0 + th1 * (p1 - p0)
                        X[j, _UN] = X[j, _U]
                    if tangent_damping:
                        for j in range(n):
                            cdj = a0 * X[j, _M] + a1 * X[j, _KTC]
                            if j < n - 1:
                                cdj += a1 * X[j + 1, _KTC]
                                coj = -a1 * X[j + 1, _KTC]
                                if not _same(coj, X[j, _CO]):
                                    fact_from = 0
                                X[j, _CO] = coj
                            if not _same(cdj, X[j, _CD]):
                                fact_from = 0
                            X[j, _CD] = cdj
                    # ---- Newton iterations on the trial displacements X[:, _UN]
                    conv = False
                    last_du = np.inf
                    for it in range(max_iter + 1):
                        below = 0.0
                        for j in range(n):
                            uj = X[j, _UN]
                            d = uj - below
                            below = uj
                            Vs, kts, t0, t1, t2, t3, t4 = storey_shear(
                                law[j], d, X[j, _D], X[j, _P], X[j, _P + 1], X[j, _P + 2], X[j, _P + 3],
                                X[j, _P + 4], X[j, _P + 5], X[j, _P + 6],
                                X[j, _S], X[j, _S + 1], X[j, _S + 2], X[j, _S + 3], X[j, _S + 4])
                            X[j, _ST] = t0
                            X[j, _ST + 1] = t1
                            X[j, _ST + 2] = t2
                            X[j, _ST + 3] = t3
                            X[j, _ST + 4] = t4
                            X[j, _VS] = Vs
                            X[j, _KT] = kts
                            X[j, _WS] = Vs - X[j, _KG] * d          # total storey shear with P-Delta
                            du = uj - X[j, _U]
                            X[j, _AN] = c1 * du - c2 * X[j, _V] - c3 * X[j, _A]
                            X[j, _VN] = g1 * du + g2 * X[j, _V] + g3 * X[j, _A]
                        # damping forces C v_new and residual R = p - M a - f_D - f_S
                        rmax = 0.0
                        if dense:
                            for j in range(n):
                                sacc = 0.0
                                for l in range(n):
                                    sacc += C[j, l] * X[l, _VN]
                                X[j, _FD] = sacc
                            for j in range(n):
                                fs = X[j, _WS] - (X[j + 1, _WS] if j < n - 1 else 0.0)
                                r = X[j, _PN] - X[j, _M] * X[j, _AN] - X[j, _FD] - fs
                                X[j, _Y] = r
                                if abs(r) > rmax:
                                    rmax = abs(r)
                        else:
                            for j in range(n):
                                sacc = X[j, _CD] * X[j, _VN]
                                if j > 0:
                                    sacc += X[j - 1, _CO] * X[j - 1, _VN]
                                if j < n - 1:
                                    sacc += X[j, _CO] * X[j + 1, _VN]
                                X[j, _FD] = sacc
                                fs = X[j, _WS] - (X[j + 1, _WS] if j < n - 1 else 0.0)
                                r = X[j, _PN] - X[j, _M] * X[j, _AN] - sacc - fs
                                X[j, _Y] = r
                                if abs(r) > rmax:
                                    rmax = abs(r)
                                if j < fact_from and not _same(X[j, _KT], X[j, _KF]):
                                    fact_from = j
                        if not (rmax < np.inf):
                            iterations += it
                            break
                        if it > 0 and rmax <= tol_r and last_du <= tol_u:
                            conv = True
                            iterations += it
                            break
                        if it == max_iter:
                            iterations += it
                            break
                        # effective tangent c1 M + g1 C + K_t (K_t with geometric stiffness)
                        if dense:
                            for j in range(n):
                                for l in range(n):
                                    J[j, l] = g1 * C[j, l]
                            for j in range(n):
                                J[j, j] += c1 * X[j, _M] + X[j, _KT] - X[j, _KG]
                                if j < n - 1:
                                    kn = X[j + 1, _KT] - X[j + 1, _KG]
                                    J[j, j] += kn
                                    J[j, j + 1] -= kn
                                    J[j + 1, j] -= kn
                                rhs[j] = X[j, _Y]
                            dx = np.linalg.solve(J, rhs)
                            last_du = 0.0
                            for j in range(n):
                                X[j, _UN] += dx[j]
                                if abs(dx[j]) > last_du:
                                    last_du = abs(dx[j])
                        else:
                            # Thomas algorithm on the symmetric tridiagonal tangent
                            if fact_from < n:
                                j0 = fact_from - 1 if fact_from > 0 else 0
                                off_prev = X[j0 - 1, _OFF] if j0 > 0 else 0.0
                                for j in range(j0, n):
                                    diag = c1 * X[j, _M] + g1 * X[j, _CD] + X[j, _KT] - X[j, _KG]
                                    off = 0.0
                                    if j < n - 1:
                                        kn = X[j + 1, _KT] - X[j + 1, _KG]
                                        diag += kn
                                        off = g1 * X[j, _CO] - kn
                                    if j > 0:
                                        diag -= off_prev * X[j - 1, _CP]
                                    inv = 1.0 / diag
                                    X[j, _INV] = inv
                                    X[j, _OFF] = off
                                    X[j, _CP] = off * inv
                                    off_prev = off
                                for j in range(fact_from, n):
                                    X[j, _KF] = X[j, _KT]
                                fact_from = n
                            x = X[0, _Y] * X[0, _INV]
                            X[0, _Y] = x
                            for j in range(1, n):
                                x = (X[j, _Y] - X[j - 1, _OFF] * x) * X[j, _INV]
                                X[j, _Y] = x
                            X[n - 1, _UN] += x
                            last_du = 0.0
                            if abs(x) > last_du:
                                last_du = abs(x)
                            for j in range(n - 2, -1, -1):
                                x = X[j, _Y] - X[j, _CP] * x
                                X[j, _UN] += x
                                if abs(x) > last_du:
                                    last_du = abs(x)
                    if not conv:
                        ok = False
                        break
                    # commit the substep; energies by the trapezoidal rule over du
                    below = 0.0
                    for j in range(n):
                        uj = X[j, _UN]
                        du = uj - X[j, _U]
                        e_in += 0.5 * (X[j, _PP] + X[j, _PN]) * du
                        e_d += 0.5 * (X[j, _FDC] + X[j, _FD]) * du
                        d = uj - below
                        below = uj
                        dd = d - X[j, _D]
                        Vn = X[j, _VS]
                        Vo = X[j, _VC]
                        X[j, _W] += 0.5 * (Vo + Vn) * dd
                        X[j, _PL] += abs(dd - (Vn - Vo) / X[j, _K0])
                        X[j, _D] = d
                        X[j, _VC] = Vn
                        X[j, _FDC] = X[j, _FD]
                        X[j, _KTC] = X[j, _KT]
                        X[j, _U] = uj
                        X[j, _V] = X[j, _VN]
                        X[j, _A] = X[j, _AN]
                        for q in range(N_STATE):
                            X[j, _S + q] = X[j, _ST + q]
                if ok:
                    break
                if depth == max_depth and nsub == 1:
                    status = 1
                    break
                if nsub == 1:
                    substepped += 1
                    for j in range(n):
                        for q in range(_NB):
                            X[j, _B + q] = X[j, q]
                    be_in = e_in
                    be_d = e_d
                else:
                    for j in range(n):
                        for q in range(_NB):
                            X[j, q] = X[j, _B + q]
                    e_in = be_in
                    e_d = be_d
                    if depth == max_depth:
                        # give up: the state is back at the last converged step
                        status = 1
                        break
                nsub *= 2
                depth += 1
            if status != 0:
                n_valid = i
                break
        # store the converged state of step i
        agi = ag[i]
        e_k = 0.0
        e_s = 0.0
        e_h = 0.0
        collapsed = False
        below = 0.0
        for j in range(n):
            uj = X[j, _U]
            vj = X[j, _V]
            Vc = X[j, _VC]
            u_out[i, j] = uj
            v_out[i, j] = vj
            acc_out[i, j] = X[j, _A] + agi
            d = uj - below
            below = uj
            dr = d / X[j, _H]
            drift_out[i, j] = dr
            shear_out[i, j] = Vc
            if abs(dr) > collapse_drift:
                collapsed = True
            e_k += 0.5 * X[j, _M] * vj * vj
            rec = 0.5 * Vc * Vc / X[j, _K0]
            e_s += rec - 0.5 * X[j, _KG] * d * d
            e_h += X[j, _W] - rec
        energy_out[i, 0] = e_in
        energy_out[i, 1] = e_k
        energy_out[i, 2] = e_d
        energy_out[i, 3] = e_s
        energy_out[i, 4] = e_h
        if collapsed:
            status = 2
            n_valid = i + 1
            break
    for j in range(n):
        storey_out[j, 0] = X[j, _W] - 0.5 * X[j, _VC] * X[j, _VC] / X[j, _K0]
        storey_out[j, 1] = X[j, _PL]
    for row in range(n_valid, u_out.shape[0]):
        for j in range(n):
            u_out[row, j] = np.nan
            v_out[row, j] = np.nan
            acc_out[row, j] = np.nan
            drift_out[row, j] = np.nan
            shear_out[row, j] = np.nan
        for c in range(energy_out.shape[1]):
            energy_out[row, c] = np.nan
    info[0] = status
    info[1] = n_valid
    info[2] = iterations
    info[3] = substepped


@njit(**JIT_PARALLEL)
def _newmark_nonlinear_batch(m, h, law, P, S_init, kg, cd, co, C, dense, tangent_damping, a0, a1,
                             ag, force, has_force, nsteps, dt, gamma, beta,
                             tol_u, tol_r, max_iter, max_depth, collapse_drift,
                             u_out, v_out, acc_out, drift_out, shear_out, energy_out, storey_out, info):
    """``_newmark_nonlinear`` over records in parallel (leading record axis on loads and outputs)."""
    for r in prange(ag.shape[0]):
        _newmark_nonlinear(m, h, law, P, S_init, kg, cd, co, C, dense, tangent_damping, a0, a1,
                           ag[r], force[r], has_force, nsteps[r], dt, gamma, beta,
                           tol_u, tol_r, max_iter, max_depth, collapse_drift,
                           u_out[r], v_out[r], acc_out[r], drift_out[r], shear_out[r], energy_out[r],
                           storey_out[r], info[r])
