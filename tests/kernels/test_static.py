"""The pushover kernel: the bordered solve and the step loop, on plain arrays."""

from __future__ import annotations

import numpy as np
import pytest

from simulate.kernels.static import NOT_CONVERGED, OK, _bordered_solve, _pushover
from simulate.laws import LAWS, N_PARAMS, N_STATE


def bordered_reference(kte, G, R, c):
    """Dense (N+1) x (N+1) bordered system solved with numpy.linalg.solve.

    K_t = A^T diag(kte) A for a chain fixed at floor 0 (common practice for a
    shear building); unknowns (du, dlambda): K_t du - F dlambda = R, du_N = c,
    with F the floor loads whose storey sums are G.
    """
    n = kte.size
    A = np.eye(n) - np.eye(n, k=-1)
    K = A.T @ np.diag(kte) @ A
    F = G - np.append(G[1:], 0.0)
    M = np.zeros((n + 1, n + 1))
    M[:n, :n] = K
    M[:n, n] = -F
    M[n, n - 1] = 1.0
    x = np.linalg.solve(M, np.append(R, c))
    return x[:n], x[n]


def solve(kte, kel, G, R, c, V=None, inc=None):
    """Call the kernel's bordered solve on plain arrays; returns (du, dlambda)."""
    n = kte.size
    V = np.ones(n) if V is None else V
    inc = np.zeros(n) if inc is None else inc
    du = np.empty(n)
    t = _bordered_solve(kte, kel, V, inc, np.zeros(n), G, R, c, 1e-6, np.empty(n), np.empty(n), np.empty(n), du,
                        np.empty(n), np.zeros(n, dtype=np.bool_))
    return du, t


def random_system(n, seed=7):
    rng = np.random.default_rng(seed)
    kte = rng.uniform(1e7, 5e8, n)
    F = rng.uniform(0.1, 1.0, n)
    F /= F.sum()
    G = np.ascontiguousarray(np.cumsum(F[::-1])[::-1])
    R = rng.normal(0.0, 1e4, n)
    return kte, G, R


@pytest.mark.parametrize("case", ["elastic", "one-negative", "one-zero", "single"])
def test_bordered_solve_matches_dense_solve(case):
    """The O(N) bordered solve equals numpy.linalg.solve of the full bordered system,
    also when one storey tangent is negative (descending branch) or exactly zero
    (elastoplastic storey: K_t singular, the bordered system regular)."""
    n = 1 if case == "single" else 6
    kte, G, R = random_system(n)
    kel = kte.copy()
    if case == "one-negative":
        kte[2] = -2e6
    if case == "one-zero":
        kte[3] = 0.0
    c = 3e-3
    du, t = solve(kte, kel, G, R, c)
    ref_du, ref_t = bordered_reference(kte, G, R, c)
    np.testing.assert_allclose(du, ref_du, rtol=1e-10, atol=1e-12 * np.abs(ref_du).max())
    assert t == pytest.approx(ref_t, rel=1e-10)
    assert du[-1] == pytest.approx(c, rel=1e-12)


def test_two_zero_tangents_keep_the_most_overloaded_storey():
    """Two storeys with a zero tangent make K_t and the bordered system singular; the
    solve keeps the zero tangent of the storey whose shear most exceeds its share of the
    load (largest Rs_i / G_i) and gives the other its elastic tangent: the result equals
    numpy.linalg.solve of the bordered system with that tangent."""
    kte, G, R = random_system(5, seed=11)
    kel = kte.copy()
    kte[1] = kte[3] = 0.0
    Rs = np.cumsum(R[::-1])[::-1]
    keep = 1 if Rs[1] / G[1] > Rs[3] / G[3] else 3
    other = 4 - keep
    c = 2e-3
    du, t = solve(kte, kel, G, R, c)
    used = kte.copy()
    used[other] = kel[other]
    ref_du, ref_t = bordered_reference(used, G, R, c)
    np.testing.assert_allclose(du, ref_du, rtol=1e-10, atol=1e-12 * np.abs(ref_du).max())
    assert t == pytest.approx(ref_t, rel=1e-10)


def linear_arrays(k):
    n = len(k)
    law = np.full(n, LAWS["linear"].law_id, dtype=np.int64)
    P = np.zeros((n, N_PARAMS))
    P[:, 0] = k
    return law, P, np.zeros((n, N_STATE))


def run_kernel(law, P, S0, kg, F, targets, max_iter=20, max_depth=0, tol_u=1e-12, tol_r=1e-6):
    T, n = targets.size, F.size
    u = np.empty((T, n))
    lam = np.empty(T)
    shear = np.empty((T, n))
    k0 = np.empty(n)
    info = np.zeros(4, dtype=np.int64)
    _pushover(law, P, S0, kg, F, targets, tol_u, tol_r, max_iter, max_depth, u, lam, shear, k0, info)
    return u, lam, shear, k0, info


def test_linear_chain_matches_static_solution():
    """Linear storeys with P-Delta: each step solves (K - K_G) u = lambda F with u_N = target,
    checked with numpy.linalg.solve (K_G = A^T diag(P/h) A, linearised P-Delta, common practice)."""
    k = np.array([4e8, 3e8, 2.5e8, 1.5e8])
    kg = np.array([4e6, 3e6, 2e6, 1e6])
    F = np.array([0.1, 0.2, 0.3, 0.4])
    targets = np.linspace(0.0, 0.2, 5)
    u, lam, shear, k0, info = run_kernel(*linear_arrays(k), kg, F, targets)
    assert info[0] == OK and info[1] == targets.size
    A = np.eye(4) - np.eye(4, k=-1)
    x1 = np.linalg.solve(A.T @ np.diag(k - kg) @ A, F)
    for i, target in enumerate(targets):
        scale = target / x1[-1]
        np.testing.assert_allclose(u[i], scale * x1, rtol=1e-10, atol=1e-14)
        assert lam[i] == pytest.approx(scale, rel=1e-10, abs=1e-6)
        np.testing.assert_allclose(shear[i], k * np.diff(u[i], prepend=0.0), rtol=1e-12, atol=1e-6)
    np.testing.assert_array_equal(k0, k - kg)


def test_step_that_fails_stops_and_keeps_the_converged_steps():
    """Two storeys, the lower one bilinear: the step where it yields needs more than two
    corrections, so with max_iter = 2 the kernel stops there, reports NOT_CONVERGED and
    the valid step count, keeps the elastic steps (two springs in series: u_1 = u_2 k_2 /
    (k_1 + k_2), lambda = u_2 k_1 k_2 / (k_1 + k_2) under a roof load, statics) and fills
    later rows with NaN."""
    k1, k2, vy = 2e8, 1e8, 1e6
    law = np.array([LAWS["bilinear"].law_id, LAWS["linear"].law_id], dtype=np.int64)
    P = np.zeros((2, N_PARAMS))
    P[0, :3] = k1, vy, 0.05
    P[1, 0] = k2
    F = np.array([0.0, 1.0])
    roof_at_yield = vy / k1 + vy / k2
    targets = np.arange(11) * 0.22 * roof_at_yield       # yield between steps 4 and 5
    S0 = np.zeros((2, N_STATE))
    u, lam, shear, k0, info = run_kernel(law, P, S0, np.zeros(2), F, targets, max_iter=2)
    assert info[0] == NOT_CONVERGED
    assert info[1] == 5
    np.testing.assert_allclose(u[:5, 0], targets[:5] * k2 / (k1 + k2), rtol=1e-12)
    np.testing.assert_allclose(lam[:5], targets[:5] * k1 * k2 / (k1 + k2), rtol=1e-12)
    assert np.isnan(u[5:]).all() and np.isnan(lam[5:]).all() and np.isnan(shear[5:]).all()
    u, lam, shear, k0, info = run_kernel(law, P, S0, np.zeros(2), F, targets)
    assert info[0] == OK and info[1] == targets.size
    assert shear[-1, 0] > vy
