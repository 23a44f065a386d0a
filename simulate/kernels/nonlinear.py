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

from simulate.laws.dispatch import storey_shear
from simulate.settings import JIT, JIT_INLINE, JIT_PARALLEL

#: Status codes written by the kernels.
OK = 0
NOT_CONVERGED = 1
COLLAPSED = 2

#: Columns of the energy history.
ENERGY_COLUMNS = ("input", "kinetic", "damping", "strain", "hysteretic")


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
    (atomic operations) that dominated the run time.
    """
    n = m.shape[0]
    ns = S_init.shape[1]
    cd = cd_in.copy()
    co = co_in.copy()
    k0 = np.empty(n)
    for j in range(n):
        k0[j] = P[j, 0]
    # converged state
    u = np.zeros(n)
    v = np.zeros(n)
    a = np.zeros(n)
    S = S_init.copy()
    dcom = np.zeros(n)
    Vc = np.zeros(n)
    fdc = np.zeros(n)
    ktc = k0.copy()
    W = np.zeros(n)
    plastic = np.zeros(n)
    # trial state and work arrays
    u_new = np.empty(n)
    v_new = np.empty(n)
    a_new = np.empty(n)
    V_new = np.empty(n)
    kt = np.empty(n)
    fd_new = np.empty(n)
    St = np.empty_like(S)
    w = np.empty(n)
    y = np.empty(n)
    cp = np.empty(n)
    # factors of the tridiagonal tangent, kept while no input to them changes
    fact_inv = np.empty(n)
    fact_off = np.zeros(n)
    fact_kt = np.empty(n)
    fact_from = 0
    fact_c1 = 0.0
    fact_g1 = 0.0
    J = np.empty((n, n)) if dense else np.empty((1, 1))
    p_prev = np.empty(n)
    p_next = np.empty(n)
    p0 = np.empty(n)
    p1 = np.empty(n)
    # the state at the start of a step, for substepping
    bu = np.empty(n)
    bv = np.empty(n)
    ba = np.empty(n)
    bS = np.empty_like(S)
    bd = np.empty(n)
    bV = np.empty(n)
    bfd = np.empty(n)
    bkt = np.empty(n)
    bW = np.empty(n)
    bpl = np.empty(n)
    e_in = 0.0
    e_d = 0.0
    be_in = 0.0
    be_d = 0.0

    for j in range(n):
        a[j] = (-m[j] * ag[0] + (force[0, j] if has_force else 0.0)) / m[j]
    status = 0
    n_valid = nsteps
    iterations = 0
    substepped = 0
    for i in range(nsteps):
        if i > 0:
            for j in range(n):
                p0[j] = -m[j] * ag[i - 1] + (force[i - 1, j] if has_force else 0.0)
                p1[j] = -m[j] * ag[i] + (force[i, j] if has_force else 0.0)
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
                for ksub in range(nsub):
                    th0 = ksub / nsub
                    th1 = (ksub + 1) / nsub
                    for j in range(n):
                        p_prev[j] = p0[j] + th0 * (p1[j] - p0[j])
                        p_next[j] = p0[j] + th1 * (p1[j] - p0[j])
                        u_new[j] = u[j]
                    if tangent_damping:
                        for j in range(n):
                            cdj = a0 * m[j] + a1 * ktc[j]
                            if j < n - 1:
                                cdj += a1 * ktc[j + 1]
                                coj = -a1 * ktc[j + 1]
                                if not _same(coj, co[j]):
                                    fact_from = 0
                                co[j] = coj
                            if not _same(cdj, cd[j]):
                                fact_from = 0
                            cd[j] = cdj
                    if c1 != fact_c1 or g1 != fact_g1:
                        fact_from = 0
                        fact_c1 = c1
                        fact_g1 = g1
                    # ---- Newton iterations on u_new
                    conv = False
                    last_du = np.inf
                    for it in range(max_iter + 1):
                        below = 0.0
                        for j in range(n):
                            d = u_new[j] - below
                            below = u_new[j]
                            Vs, kts, t0, t1, t2, t3, t4 = storey_shear(
                                law[j], d, dcom[j], P[j, 0], P[j, 1], P[j, 2], P[j, 3], P[j, 4], P[j, 5],
                                P[j, 6], S[j, 0], S[j, 1], S[j, 2], S[j, 3], S[j, 4])
                            St[j, 0] = t0
                            St[j, 1] = t1
                            St[j, 2] = t2
                            St[j, 3] = t3
                            St[j, 4] = t4
                            V_new[j] = Vs
                            kt[j] = kts
                            w[j] = Vs - kg[j] * d          # total storey shear with P-Delta
                            du = u_new[j] - u[j]
                            a_new[j] = c1 * du - c2 * v[j] - c3 * a[j]
                            v_new[j] = g1 * du + g2 * v[j] + g3 * a[j]
                        # damping forces C v_new
                        if dense:
                            for j in range(n):
                                sacc = 0.0
                                for l in range(n):
                                    sacc += C[j, l] * v_new[l]
                                fd_new[j] = sacc
                        else:
                            for j in range(n):
                                sacc = cd[j] * v_new[j]
                                if j > 0:
                                    sacc += co[j - 1] * v_new[j - 1]
                                if j < n - 1:
                                    sacc += co[j] * v_new[j + 1]
                                fd_new[j] = sacc
                        # residual R = p - M a - f_D - f_S
                        rmax = 0.0
                        for j in range(n):
                            fs = w[j] - (w[j + 1] if j < n - 1 else 0.0)
                            r = p_next[j] - m[j] * a_new[j] - fd_new[j] - fs
                            y[j] = r
                            if abs(r) > rmax:
                                rmax = abs(r)
                        for j in range(fact_from):
                            if not _same(kt[j], fact_kt[j]):
                                fact_from = j
                                break
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
                                J[j, j] += c1 * m[j] + kt[j] - kg[j]
                                if j < n - 1:
                                    kn = kt[j + 1] - kg[j + 1]
                                    J[j, j] += kn
                                    J[j, j + 1] -= kn
                                    J[j + 1, j] -= kn
                            dx = np.linalg.solve(J, y)
                            last_du = 0.0
                            for j in range(n):
                                u_new[j] += dx[j]
                                if abs(dx[j]) > last_du:
                                    last_du = abs(dx[j])
                        else:
                            # Thomas algorithm on the symmetric tridiagonal tangent. Row j of
                            # the elimination depends on kt[:j + 2] only, so rows before the
                            # first storey whose tangent changed keep their factors (same
                            # operations on the same numbers, hence the same bits).
                            if fact_from < n:
                                j0 = fact_from - 1 if fact_from > 0 else 0
                                off_prev = fact_off[j0 - 1] if j0 > 0 else 0.0
                                for j in range(j0, n):
                                    diag = c1 * m[j] + g1 * cd[j] + kt[j] - kg[j]
                                    off = 0.0
                                    if j < n - 1:
                                        kn = kt[j + 1] - kg[j + 1]
                                        diag += kn
                                        off = g1 * co[j] - kn
                                    if j > 0:
                                        diag -= off_prev * cp[j - 1]
                                    inv = 1.0 / diag
                                    fact_inv[j] = inv
                                    fact_off[j] = off
                                    cp[j] = off * inv
                                    off_prev = off
                                for j in range(fact_from, n):
                                    fact_kt[j] = kt[j]
                                fact_from = n
                            yj = y[0] * fact_inv[0]
                            y[0] = yj
                            for j in range(1, n):
                                yj = (y[j] - fact_off[j - 1] * yj) * fact_inv[j]
                                y[j] = yj
                            last_du = 0.0
                            x = 0.0
                            for j in range(n - 1, -1, -1):
                                x = y[j] - cp[j] * x if j < n - 1 else y[j]
                                u_new[j] += x
                                if abs(x) > last_du:
                                    last_du = abs(x)
                    if not conv:
                        ok = False
                        break
                    # commit the substep; energies by the trapezoidal rule over du
                    below = 0.0
                    for j in range(n):
                        du = u_new[j] - u[j]
                        e_in += 0.5 * (p_prev[j] + p_next[j]) * du
                        e_d += 0.5 * (fdc[j] + fd_new[j]) * du
                        d = u_new[j] - below
                        below = u_new[j]
                        dd = d - dcom[j]
                        W[j] += 0.5 * (Vc[j] + V_new[j]) * dd
                        plastic[j] += abs(dd - (V_new[j] - Vc[j]) / k0[j])
                        dcom[j] = d
                        Vc[j] = V_new[j]
                        fdc[j] = fd_new[j]
                        ktc[j] = kt[j]
                        u[j] = u_new[j]
                        v[j] = v_new[j]
                        a[j] = a_new[j]
                        for q in range(ns):
                            S[j, q] = St[j, q]
                if ok:
                    break
                if depth == max_depth and nsub == 1:
                    status = 1
                    break
                if nsub == 1:
                    substepped += 1
                    for j in range(n):
                        bu[j] = u[j]
                        bv[j] = v[j]
                        ba[j] = a[j]
                        bd[j] = dcom[j]
                        bV[j] = Vc[j]
                        bfd[j] = fdc[j]
                        bkt[j] = ktc[j]
                        bW[j] = W[j]
                        bpl[j] = plastic[j]
                        for q in range(ns):
                            bS[j, q] = S[j, q]
                    be_in = e_in
                    be_d = e_d
                else:
                    for j in range(n):
                        u[j] = bu[j]
                        v[j] = bv[j]
                        a[j] = ba[j]
                        dcom[j] = bd[j]
                        Vc[j] = bV[j]
                        fdc[j] = bfd[j]
                        ktc[j] = bkt[j]
                        W[j] = bW[j]
                        plastic[j] = bpl[j]
                        for q in range(ns):
                            S[j, q] = bS[j, q]
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
            u_out[i, j] = u[j]
            v_out[i, j] = v[j]
            acc_out[i, j] = a[j] + agi
            d = u[j] - below
            below = u[j]
            dr = d / h[j]
            drift_out[i, j] = dr
            shear_out[i, j] = Vc[j]
            if abs(dr) > collapse_drift:
                collapsed = True
            e_k += 0.5 * m[j] * v[j] * v[j]
            rec = 0.5 * Vc[j] * Vc[j] / k0[j]
            e_s += rec - 0.5 * kg[j] * d * d
            e_h += W[j] - rec
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
        storey_out[j, 0] = W[j] - 0.5 * Vc[j] * Vc[j] / k0[j]
        storey_out[j, 1] = plastic[j]
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
