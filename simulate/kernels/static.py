"""Static pushover under a fixed lateral load pattern, roof displacement control.

Unknowns are the floor displacements u (N,) and the load factor lambda; the
floor forces are lambda F with F a fixed pattern (sum F = 1, so lambda is the
applied base shear, N). Each step enforces

    f_S(u) = lambda F,        u_N = target roof displacement,

with f_S from the storey laws and linearised P-Delta (total storey shear
V_i - (P_i / h_i) d_i, tangent kt_i - P_i / h_i), by Newton's method on the
bordered system

    [ K_t  -F ] [du     ]   [ R            ]
    [ e_N^T 0 ] [dlambda] = [ target - u_N ],     R = lambda F - f_S(u).

Bordered solve. With x1 = K_t^-1 F and x2 = K_t^-1 R, dlambda = (target - u_N -
x2_N) / x1_N and du = x2 + dlambda x1 (displacement control: it follows a
descending branch as long as the system is not singular). In a shear frame
K_t = A^T diag(kt) A (A the storey-difference matrix), so K_t x = b is solved in
O(N) by summing b from the roof down (the storey shears of b), dividing by the
storey tangents and summing the storey deformations from the ground up: the
Thomas algorithm for this tridiagonal matrix, eliminated from the roof. In storey
terms the step reads kt_i dd_i - G_i dlambda = Rs_i, sum dd_i = target - u_N
(G_i = F_i + ... + F_N and Rs_i = R_i + ... + R_N, the shares of storey i), and
the load factor is eliminated against one storey without dividing by its
tangent, so an elastoplastic storey (kt = 0 exactly, K_t singular) does not stop
the analysis: the border keeps the system regular.

Tangents of a correction. A trial state may put a storey on the wrong branch of
its law, so two rules shape each correction.

* Localisation: along a monotonic push a storey reaches a zero or descending
  tangent (a plateau, or its peak with P-Delta) only when the load factor can no
  longer grow, and then only one storey keeps deforming on that branch. When
  several have a tangent <= 0 (after a predictor overshoot) the one whose shear
  most exceeds its share of the load (largest Rs_i / G_i; within the force
  tolerance, the one that has deformed furthest in the step, so that equally
  strong storeys do not trade the plastic deformation between iterations) keeps it, the others
  take their elastic tangent k - P/h (two zero tangents would make the system
  singular), and the load factor is eliminated against it.
* Branch consistency: another storey on a yielded branch (tangent below its
  elastic value) that the correction would take back behind its converged
  deformation, from which the laws compute the trial state, unloads: it is
  modelled as elastic from its converged state (d = d_c + (w - w_c) / (k - P/h)),
  and the system is solved again (at most N times, each
  storey switched between the two models until the result agrees with the model
  it was given). While a storey is on a zero or descending tangent the other
  yielded storeys start as unloading, since the load factor cannot grow.

These land each iterate on the branch the law will report, notably at the peak,
where the load factor starts to fall and every storey but the softening one
unloads; without them Newton wanders there to spurious equilibria (storeys
yielding in opposite directions).

Predictor: the first correction of a step uses the tangents of the last
converged iteration (a storey on its yielded branch keeps loading on it), not
those of the converged state, where a storey exactly on its yield surface reports
its elastic stiffness and the predictor would overshoot.

Convergence: a step converges when the largest floor displacement correction is
below ``tol_u`` (m) and the largest unbalanced floor force below ``tol_r`` (N),
both after at least one correction. The laws' states are committed after each
converged step (as in ``simulate.kernels.nonlinear``). A step that does not
converge in ``max_iter`` corrections is split into 2, 4, ... 2^max_depth equal
roof increments from the last converged state; if that fails too the analysis
stops (status NOT_CONVERGED) and the converged steps before it are kept.

Collapse: when the load factor falls to zero or below (past the peak, with
P-Delta) the frame can no longer carry its gravity loads without a restraining
lateral force; the analysis stops there (status COLLAPSED), the last row being
the (sub)step where the base shear reached zero. Beyond that point storeys would
yield backwards under a pulling load, which has no meaning for a pushover.

References
----------
Displacement control by two solves with the tangent (x1, x2 above): J.-L. Batoz
and G. Dhatt (1979), "Incremental displacement algorithms for nonlinear
problems", Int. J. Numer. Methods Eng. 14, 1262-1267 (from memory on the
pages). Pushover under a fixed lateral load pattern: common practice.
"""

from __future__ import annotations

import numpy as np
from numba import njit

from simulate.laws.dispatch import storey_shear_rows
from simulate.settings import JIT

#: Status codes written by the kernel.
OK = 0
NOT_CONVERGED = 1
COLLAPSED = 2

#: A storey tangent below this fraction of its elastic value counts as zero (singular).
ZERO_TANGENT = 1e-6


@njit(**JIT)
def _state(u, law, P, S, dcom, S_trial, kg, V, kte, w):
    """Storey spring shears V, total storey shears w and tangents kte (incl. -P/h) at floor displacements u."""
    n = u.shape[0]
    below = 0.0
    for j in range(n):
        d = u[j] - below
        below = u[j]
        Vs, kts = storey_shear_rows(law[j], d, dcom[j], P, S, S_trial, j)
        V[j] = Vs
        kte[j] = kts - kg[j]
        w[j] = Vs - kg[j] * d


@njit(**JIT)
def _bordered_solve(kte, kel, V, inc, wd, G, R, c, tie, Rs, ks, dd, du, bb, kink):
    """Solve K_t du - F dlambda = R, du_N = c for (du, dlambda); returns dlambda.

    kte (N,) storey tangents at the trial state, kel (N,) elastic storey tangents
    (k - P/h, > 0), V (N,) trial spring shears, inc (N,) and wd (N,) trial storey
    deformations and total storey shears minus the converged ones, G (N,) pattern shears G_i = F_i + ... + F_N, R (N,)
    unbalanced floor forces, c the roof displacement still to go, tie (N) the
    force below which two storeys' excess shares count as equal. Rs, ks, dd, bb
    and kink are work arrays; du (N,) receives the floor displacement
    corrections. The tangents are chosen as described in the module notes.

    In storey terms the system reads ks_i dd_i - G_i t = Rs_i (Rs the storey sums
    of R, t = dlambda) and sum dd_i = c; it is eliminated against the pivot m (the
    softening storey, else the storey with the largest |G_i / ks_i|), so one zero
    tangent is no division by zero. Every other storey answers its shear change
    Rs_i + G_i t with dd_i = a_i + b_i t (a_i = Rs_i / ks_i, b_i = G_i / ks_i, or
    the two-segment unloading model of the module notes).
    """
    n = kte.shape[0]
    acc = 0.0
    for j in range(n - 1, -1, -1):
        acc += R[j]
        Rs[j] = acc
    # localisation
    soft = -1
    for j in range(n):
        ks[j] = kte[j]
        kink[j] = False
        if kte[j] <= ZERO_TANGENT * kel[j] and G[j] > 0.0:
            if soft < 0:
                soft = j
                continue
            # compare Rs_j / G_j with Rs_soft / G_soft; within tie (N) they are equal
            # and the storey already deformed furthest in the step stays the one
            x = Rs[j] * G[soft]
            y = Rs[soft] * G[j]
            margin = tie * G[j] * G[soft]
            ahead = inc[j] * V[j] * abs(V[soft]) > inc[soft] * V[soft] * abs(V[j])
            if x > y + margin or (x >= y - margin and ahead):
                soft = j
    for j in range(n):
        if j != soft and ks[j] <= ZERO_TANGENT * kel[j]:
            ks[j] = kel[j]
    if soft >= 0 and abs(ks[soft]) <= ZERO_TANGENT * kel[soft]:
        ks[soft] = 0.0
    # pivot: the softening storey, else the storey most flexible for its share of the load
    m = soft
    if m < 0:
        m = 0
        for j in range(1, n):
            if abs(G[j]) * abs(ks[m]) > abs(G[m]) * abs(ks[j]):
                m = j
    # past a peak the other yielded storeys unload: start from that, then check
    for j in range(n):
        kink[j] = soft >= 0 and j != m and kte[j] < kel[j]
    t = 0.0
    for sweep in range(n + 1):
        alpha = c
        beta = 0.0
        for j in range(n):
            if j == m:
                continue
            if kink[j]:
                # unloading: elastic from the converged state to the new shear
                a = -inc[j] + (Rs[j] + wd[j]) / kel[j]
                b = G[j] / kel[j]
            else:
                a = Rs[j] / ks[j]
                b = G[j] / ks[j]
            dd[j] = a
            bb[j] = b
            alpha -= a
            beta += b
        t = (ks[m] * alpha - Rs[m]) / (G[m] + ks[m] * beta)
        for j in range(n):
            if j != m:
                dd[j] += bb[j] * t
        dd[m] = alpha - beta * t
        # branch consistency
        changed = False
        for j in range(n):
            if j == m or not kte[j] < kel[j]:
                continue
            back = (inc[j] + dd[j]) * V[j] < 0.0
            if back != kink[j]:
                kink[j] = back
                changed = True
        if not changed:
            break
    acc = 0.0
    for j in range(n):
        acc += dd[j]
        du[j] = acc
    return t


@njit(**JIT)
def _newton(law, P, S, dcom, S_trial, kg, kel, F, G, target, u, lam, k_pred, tol_u, tol_r, max_iter,
            Vc, u_new, V, kte, w, R, Rs, ks, dd, du, inc, wd, bb, kink):
    """Newton iterations from the converged (u, lam, S, dcom) to roof displacement ``target``.

    Returns (converged, new load factor, corrections made). On success u_new, V,
    kte (tangents of the converged iteration) and S_trial hold the new state.
    k_pred: tangents for the first correction; Vc: converged spring shears.
    """
    n = u.shape[0]
    for j in range(n):
        u_new[j] = u[j]
    lam_new = lam
    last_du = np.inf
    for it in range(max_iter + 1):
        _state(u_new, law, P, S, dcom, S_trial, kg, V, kte, w)
        rmax = 0.0
        for j in range(n):
            r = lam_new * F[j] - (w[j] - (w[j + 1] if j < n - 1 else 0.0))
            R[j] = r
            if abs(r) > rmax:
                rmax = abs(r)
        if not (rmax < np.inf):
            return False, lam_new, it
        if it > 0 and rmax <= tol_r and last_du <= tol_u:
            return True, lam_new, it
        if it == max_iter:
            return False, lam_new, it
        if it == 0:
            for j in range(n):
                kte[j] = k_pred[j]
        below = 0.0
        for j in range(n):
            inc[j] = u_new[j] - below - dcom[j]
            below = u_new[j]
            wd[j] = w[j] - (Vc[j] - kg[j] * dcom[j])
        dlam = _bordered_solve(kte, kel, V, inc, wd, G, R, target - u_new[n - 1], tol_r, Rs, ks, dd, du, bb, kink)
        last_du = 0.0
        for j in range(n):
            u_new[j] += du[j]
            if abs(du[j]) > last_du:
                last_du = abs(du[j])
        lam_new += dlam
        if not (last_du < np.inf) or not (abs(lam_new) < np.inf):
            return False, lam_new, it + 1
    return False, lam_new, max_iter


@njit(**JIT)
def _pushover(law, P, S_init, kg, F, targets, tol_u, tol_r, max_iter, max_depth,
              u_out, lam_out, shear_out, k0_out, info):
    """Displacement-controlled pushover through the roof targets.

    kg, F (N,): geometric stiffnesses P_i / h_i and the load pattern (floor
    forces per unit load factor, sum 1). law (N,) int64 law ids, P (N,
    N_PARAMS) parameter rows (P[:, 0] the elastic stiffness), S_init (N,
    N_STATE) initial law states. targets (T,) roof displacements, targets[0] =
    0. Outputs: u_out (T, N) floor displacements, lam_out (T,) load factor,
    shear_out (T, N) storey spring shears, k0_out (N,) storey tangents incl.
    -P/h at the unloaded state, info (4,) int64: status, valid steps, Newton
    corrections, split steps. After a collapse the last valid row holds the
    sub-step where the load factor reached zero (its roof displacement may fall
    short of the step's target).
    """
    n = F.shape[0]
    ns = S_init.shape[1]
    nsteps = targets.shape[0]
    # converged state
    S = S_init.copy()
    dcom = np.zeros(n)
    u = np.zeros(n)
    lam = 0.0
    k_pred = np.empty(n)
    Vc = np.empty(n)
    # trial state and work arrays
    S_trial = np.empty_like(S)
    u_new = np.empty(n)
    V = np.empty(n)
    kte = np.empty(n)
    w = np.empty(n)
    R = np.empty(n)
    Rs = np.empty(n)
    ks = np.empty(n)
    dd = np.empty(n)
    du = np.empty(n)
    inc = np.empty(n)
    wd = np.empty(n)
    bb = np.empty(n)
    kink = np.zeros(n, dtype=np.bool_)
    # state at the start of a step, for splitting it
    bS = np.empty_like(S)
    bd = np.empty(n)
    bu = np.empty(n)
    bk = np.empty(n)
    bV = np.empty(n)
    G = np.empty(n)
    kel = np.empty(n)
    acc = 0.0
    for j in range(n - 1, -1, -1):
        acc += F[j]
        G[j] = acc
    for j in range(n):
        kel[j] = P[j, 0] - kg[j]

    _state(u, law, P, S, dcom, S_trial, kg, V, kte, w)
    for j in range(n):
        k0_out[j] = kte[j]
        k_pred[j] = kte[j]
        Vc[j] = V[j]
        u_out[0, j] = 0.0
        shear_out[0, j] = V[j]
    lam_out[0] = 0.0

    status = OK
    n_valid = nsteps
    iterations = 0
    split = 0
    for i in range(1, nsteps):
        nsub = 1
        depth = 0
        blam = lam
        while True:
            ok = True
            for ksub in range(nsub):
                target = targets[i - 1] + (ksub + 1) / nsub * (targets[i] - targets[i - 1])
                conv, lam_new, its = _newton(law, P, S, dcom, S_trial, kg, kel, F, G, target, u, lam, k_pred,
                                             tol_u, tol_r, max_iter, Vc, u_new, V, kte, w, R, Rs, ks, dd, du,
                                             inc, wd, bb, kink)
                iterations += its
                if not conv:
                    ok = False
                    break
                # commit the (sub)step
                below = 0.0
                for j in range(n):
                    u[j] = u_new[j]
                    dcom[j] = u_new[j] - below
                    below = u_new[j]
                    k_pred[j] = kte[j]
                    Vc[j] = V[j]
                    for q in range(ns):
                        S[j, q] = S_trial[j, q]
                lam = lam_new
                if lam <= 0.0:
                    # lateral strength exhausted: the frame no longer stands under its gravity loads
                    status = COLLAPSED
                    break
            if ok or status == COLLAPSED:
                break
            if depth == max_depth:
                status = NOT_CONVERGED
                break
            if nsub == 1:
                split += 1
                for j in range(n):
                    bu[j] = u[j]
                    bd[j] = dcom[j]
                    bk[j] = k_pred[j]
                    bV[j] = Vc[j]
                    for q in range(ns):
                        bS[j, q] = S[j, q]
            else:
                for j in range(n):
                    u[j] = bu[j]
                    dcom[j] = bd[j]
                    k_pred[j] = bk[j]
                    Vc[j] = bV[j]
                    for q in range(ns):
                        S[j, q] = bS[j, q]
                lam = blam
            nsub *= 2
            depth += 1
        if status == NOT_CONVERGED:
            n_valid = i
            break
        for j in range(n):
            u_out[i, j] = u[j]
            shear_out[i, j] = Vc[j]
        lam_out[i] = lam
        if status == COLLAPSED:
            n_valid = i + 1
            break
    for i in range(n_valid, nsteps):
        lam_out[i] = np.nan
        for j in range(n):
            u_out[i, j] = np.nan
            shear_out[i, j] = np.nan
    info[0] = status
    info[1] = n_valid
    info[2] = iterations
    info[3] = split
