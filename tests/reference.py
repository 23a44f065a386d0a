"""Slow, obviously correct reference solutions for the tests.

Nothing here imports ``simulate``: every function is written from the published
formula it names, in plain NumPy, so that the library's fast kernels and modal
routines can be compared against something built independently.

References
----------
A. K. Chopra, *Dynamics of Structures*, 4th ed. (chapter numbers below; equation
numbers marked "from memory" were not checked against the book).
T. J. R. Hughes, *The Finite Element Method: Linear Static and Dynamic Finite
Element Analysis*, ch. 9 (Newmark's method in predictor-corrector form).
"""

from __future__ import annotations

import numpy as np

# ----------------------------------------------------------------------------- matrices


def shear_frame_matrices(mass, stiffness):
    """Diagonal M and tridiagonal K of a fixed-base shear frame, assembled storey by storey.

    Direct stiffness assembly (common practice): storey spring i joins floor i-1
    (the ground for i = 1) and floor i, and adds k_i [[1, -1], [-1, 1]] to those
    two degrees of freedom; the ground row and column are dropped.
    """
    m = np.asarray(mass, dtype=float)
    k = np.asarray(stiffness, dtype=float)
    n = m.size
    K_full = np.zeros((n + 1, n + 1))
    for i in range(n):
        K_full[i:i + 2, i:i + 2] += k[i] * np.array([[1.0, -1.0], [-1.0, 1.0]])
    return np.diag(m), K_full[1:, 1:]


def drift_matrix(height):
    """(N, N) matrix D with (D u)_i = (u_i - u_{i-1}) / h_i, u_0 = 0 (storey drift ratio)."""
    h = np.asarray(height, dtype=float)
    n = h.size
    D = np.eye(n) - np.eye(n, k=-1)
    return D / h[:, None]


# ------------------------------------------------------------------ uniform shear chain


def uniform_chain_frequencies(k: float, m: float, n: int) -> np.ndarray:
    """omega_j = 2 sqrt(k/m) sin((2j - 1) pi / (2 (2N + 1))), j = 1..N.

    Natural frequencies of a uniform fixed-free chain of N equal masses and N
    equal springs (common practice; the closed form of the eigenvalues of the
    fixed-free second-difference matrix).
    """
    j = np.arange(1, n + 1)
    return 2.0 * np.sqrt(k / m) * np.sin((2 * j - 1) * np.pi / (2.0 * (2 * n + 1)))


def uniform_chain_shapes(n: int) -> np.ndarray:
    """(N, N) shapes, column j-1 = mode j, phi_j(i) = sin((2j - 1) i pi / (2N + 1)), i = 1..N."""
    i = np.arange(1, n + 1)[:, None]
    j = np.arange(1, n + 1)[None, :]
    return np.sin((2 * j - 1) * i * np.pi / (2 * n + 1))


# --------------------------------------------------------------------- classical damping


def rayleigh_coefficients(omega_i, omega_j, zeta_i, zeta_j):
    """(a0, a1) of C = a0 M + a1 K with ratio zeta_i at omega_i and zeta_j at omega_j.

    From zeta_n = a0 / (2 omega_n) + a1 omega_n / 2 (Chopra ch. 11, Eq. 11.4.5,
    equation number from memory) written at the two frequencies and solved by hand:
    a1 = 2 (zeta_j w_j - zeta_i w_i) / (w_j^2 - w_i^2),
    a0 = 2 w_i w_j (zeta_i w_j - zeta_j w_i) / (w_j^2 - w_i^2).
    """
    wi, wj = float(omega_i), float(omega_j)
    den = wj**2 - wi**2
    a1 = 2.0 * (zeta_j * wj - zeta_i * wi) / den
    a0 = 2.0 * wi * wj * (zeta_i * wj - zeta_j * wi) / den
    return a0, a1


def free_vibration_classical(M, K, C, u0, v0, t):
    """Free vibration of a classically damped frame by modal superposition, (len(t), N).

    Each mode is an SDOF with q(0), q'(0) from the initial state (Chopra ch. 10 and
    ch. 11, mode superposition) and
    q(t) = exp(-zeta w t) [q0 cos(wD t) + (q0' + zeta w q0) / wD sin(wD t)]
    (Chopra ch. 2, damped free vibration, Eq. 2.2.4 from memory). Underdamped modes only.
    """
    import scipy.linalg

    w2, phi = scipy.linalg.eigh(K, M)
    w = np.sqrt(w2)
    zeta = np.diag(phi.T @ C @ phi) / (2.0 * w)
    q0 = phi.T @ M @ u0
    qd0 = phi.T @ M @ v0
    wd = w * np.sqrt(1.0 - zeta**2)
    t = np.asarray(t, dtype=float)[:, None]
    q = np.exp(-zeta * w * t) * (q0 * np.cos(wd * t) + (qd0 + zeta * w * q0) / wd * np.sin(wd * t))
    return q @ phi.T


# ------------------------------------------------------------------ SDOF closed forms


def sdof_harmonic_steady_state(p0, k, zeta, r, omega, t):
    """Steady-state response of a damped SDOF to p0 sin(omega t), r = omega / omega_n.

    u = (p0 / k) [(1 - r^2) sin(omega t) - 2 zeta r cos(omega t)] / [(1 - r^2)^2 + (2 zeta r)^2]
    (Chopra ch. 3, Eq. 3.2.3-3.2.4, from memory); its amplitude is
    (p0 / k) / sqrt((1 - r^2)^2 + (2 zeta r)^2).
    """
    den = (1.0 - r**2) ** 2 + (2.0 * zeta * r) ** 2
    return (p0 / k) * ((1.0 - r**2) * np.sin(omega * t) - 2.0 * zeta * r * np.cos(omega * t)) / den


def sdof_undamped_harmonic_from_rest(p0, k, omega_n, omega, t):
    """Undamped SDOF from rest under p0 sin(omega t).

    Off resonance: u = (p0 / k) / (1 - r^2) [sin(omega t) - r sin(omega_n t)]
    (Chopra ch. 3, Eq. 3.1.6 with u(0) = u'(0) = 0, from memory).
    At resonance: u = (p0 / 2k) [sin(omega_n t) - omega_n t cos(omega_n t)]
    (Chopra ch. 3, Eq. 3.1.13, from memory).
    """
    t = np.asarray(t, dtype=float)
    if omega == omega_n:
        wt = omega_n * t
        return p0 / (2.0 * k) * (np.sin(wt) - wt * np.cos(wt))
    r = omega / omega_n
    return (p0 / k) / (1.0 - r**2) * (np.sin(omega * t) - r * np.sin(omega_n * t))


def sdof_half_sine_pulse(p0, k, omega_n, td, t):
    """Undamped SDOF from rest under p0 sin(pi t / td) for 0 <= t <= td, zero afterwards.

    Forced phase: the harmonic solution from rest with omega = pi / td (Chopra
    ch. 4, section 4.8, half-cycle sine pulse force; section number from memory).
    Free phase: free vibration from the displacement and velocity at t = td
    (Chopra ch. 2, Eq. 2.1.3). Requires td != T_n / 2.
    """
    t = np.asarray(t, dtype=float)
    w = np.pi / td
    r = w / omega_n
    if abs(r - 1.0) < 1e-9:
        raise ValueError("td = T_n / 2 is the resonant case; use another pulse length")
    amp = (p0 / k) / (1.0 - r**2)
    forced = amp * (np.sin(w * t) - r * np.sin(omega_n * t))
    ud = amp * (np.sin(w * td) - r * np.sin(omega_n * td))
    vd = amp * (w * np.cos(w * td) - r * omega_n * np.cos(omega_n * td))
    s = t - td
    free = ud * np.cos(omega_n * s) + vd / omega_n * np.sin(omega_n * s)
    return np.where(t <= td, forced, free)


def sdof_piecewise_linear_exact(m, c, k, p, dt):
    """Exact response of an SDOF from rest to the piecewise-linear interpolant of samples p.

    On each step the load is p_i + (p_{i+1} - p_i) tau / dt; the particular solution
    of m u'' + c u' + k u = a + b' tau is the straight line u_p = (a - c b) / k + b tau
    with b = b' / k, and the homogeneous part is the damped free vibration
    (Chopra ch. 2 and ch. 5.2, interpolation of excitation). Underdamped only.
    Returns displacement and velocity, each (len(p),).
    """
    p = np.asarray(p, dtype=float)
    wn = np.sqrt(k / m)
    zeta = c / (2.0 * m * wn)
    wd = wn * np.sqrt(1.0 - zeta**2)
    e = np.exp(-zeta * wn * dt)
    cs, sn = np.cos(wd * dt), np.sin(wd * dt)
    u = np.zeros(p.size)
    v = np.zeros(p.size)
    for i in range(p.size - 1):
        b = (p[i + 1] - p[i]) / dt / k          # slope of the particular solution
        a = (p[i] - c * b) / k                  # its value at tau = 0
        A = u[i] - a
        B = (v[i] - b + zeta * wn * A) / wd
        u[i + 1] = a + b * dt + e * (A * cs + B * sn)
        v[i + 1] = b + e * ((-zeta * wn * A + wd * B) * cs + (-zeta * wn * B - wd * A) * sn)
    return u, v


# ----------------------------------------------------------------- dense Newmark-beta


def newmark_dense(M, C, K, P, dt, gamma=0.5, beta=0.25):
    """Newmark-beta from rest in predictor-corrector (acceleration) form, dense matrices.

    For each step (Hughes, The Finite Element Method, ch. 9, Newmark's method):
        u~ = u + dt v + dt^2 (1/2 - beta) a,   v~ = v + dt (1 - gamma) a
        (M + gamma dt C + beta dt^2 K) a_{n+1} = p_{n+1} - C v~ - K u~
        u_{n+1} = u~ + beta dt^2 a_{n+1},     v_{n+1} = v~ + gamma dt a_{n+1}
    with a_0 = M^-1 p_0 at rest. This is the same scheme as Chopra's Table 15.3.3
    arranged differently, solved with numpy.linalg.solve at every step.

    Parameters
    ----------
    M, C, K : (N, N) arrays
    P : (T, N) load samples p(t_i) (for base excitation P = -M iota a_g)
    Returns
    -------
    u, v, a : (T, N) relative displacement, velocity, acceleration
    """
    M, C, K = (np.asarray(x, dtype=float) for x in (M, C, K))
    P = np.asarray(P, dtype=float)
    T, n = P.shape
    u = np.zeros((T, n))
    v = np.zeros((T, n))
    a = np.zeros((T, n))
    a[0] = np.linalg.solve(M, P[0])
    lhs = M + gamma * dt * C + beta * dt * dt * K
    for i in range(T - 1):
        ut = u[i] + dt * v[i] + dt * dt * (0.5 - beta) * a[i]
        vt = v[i] + dt * (1.0 - gamma) * a[i]
        a[i + 1] = np.linalg.solve(lhs, P[i + 1] - C @ vt - K @ ut)
        u[i + 1] = ut + beta * dt * dt * a[i + 1]
        v[i + 1] = vt + gamma * dt * a[i + 1]
    return u, v, a


def zero_crossings(t, x):
    """Times where x changes sign, by linear interpolation between samples."""
    s = np.signbit(x)
    i = np.flatnonzero(s[:-1] != s[1:])
    return t[i] - x[i] * (t[i + 1] - t[i]) / (x[i + 1] - x[i])


# ----------------------------------------------------------- hysteretic storey laws


def bilinear_kinematic_loop(d, k, vy, alpha):
    """Shear and branch slope of a bilinear kinematic-hardening spring along a sampled drift path.

    Built from the geometry of the loop (common practice; e.g. Chopra, Dynamics of
    Structures, ch. 7, elastoplastic and bilinear systems, from memory): with
    kinematic hardening the shear stays between two parallel bounding lines of slope
    alpha k through the yield points,

        V_up(d) = alpha k d + (1 - alpha) Vy,   V_lo(d) = alpha k d - (1 - alpha) Vy,

    and between them every branch is elastic with slope k. Over a monotonic
    increment the elastic line (slope k > alpha k) meets a bounding line at most
    once and then follows it, so the shear at the end of the increment is the
    elastic trial value clipped to the band, V_{i+1} = clip(V_i + k (d_{i+1} - d_i),
    V_lo, V_up). The elastic range between the lines is 2 Vy wide in shear (2 Vy / k
    in drift) and translates with the lines. The path must start at rest (d = V = 0)
    and turn only at samples.

    Returns V (len(d),) and the branch slope (k inside the band, alpha k on a
    bounding line) at each sample after the first; NaN where the elastic trial lands
    on a bounding line to within 1e-9 Vy (both branches meet there).
    """
    d = np.asarray(d, dtype=float)
    V = np.zeros(d.size)
    slope = np.full(d.size, float(k))
    half = (1.0 - alpha) * vy
    for i in range(d.size - 1):
        trial = V[i] + k * (d[i + 1] - d[i])
        up = alpha * k * d[i + 1] + half
        lo = alpha * k * d[i + 1] - half
        if trial > up:
            V[i + 1], slope[i + 1] = up, alpha * k
        elif trial < lo:
            V[i + 1], slope[i + 1] = lo, alpha * k
        else:
            V[i + 1], slope[i + 1] = trial, k
        if min(abs(trial - up), abs(trial - lo)) <= 1e-9 * vy:
            slope[i + 1] = np.nan
    return V, slope


def bouc_wen_rate(z, d_dot, dy, A, beta, gamma, n):
    """dz/dt of the Bouc-Wen hysteretic variable (dimensionless z, deformation rate d_dot).

    Y. K. Wen (1976), "Method for random vibration of hysteretic systems", J. Eng.
    Mech. Div. ASCE 102(2), 249-263 (from memory):
        dz/dt = [A d_dot - beta |d_dot| |z|^(n-1) z - gamma d_dot |z|^n] / dy,
    with z normalised by the yield deformation dy so that the storey shear is
    V = alpha k d + (1 - alpha) Vy z.
    """
    az = np.abs(z)
    return (A * d_dot - beta * np.abs(d_dot) * az ** (n - 1.0) * z - gamma * d_dot * az**n) / dy


def bouc_wen_along_path(d, dy, A, beta, gamma, n, z0=0.0, rtol=1e-12, atol=1e-14):
    """Bouc-Wen z at the samples of a drift path, by scipy.integrate.solve_ivp.

    The path is linear between samples; on each monotonic run the deformation
    itself serves as the independent variable (dz/dd = (dz/dt) / d_dot with d_dot of
    constant sign), integrated by DOP853 with dense output at the samples.
    """
    from scipy.integrate import solve_ivp

    d = np.asarray(d, dtype=float)
    z = np.empty(d.size)
    z[0] = z0
    i = 0
    while i < d.size - 1:
        s = np.sign(d[i + 1] - d[i])
        j = i + 1
        while j < d.size - 1 and np.sign(d[j + 1] - d[j]) == s:
            j += 1
        if s == 0:
            z[i + 1:j + 1] = z[i]
        else:
            sol = solve_ivp(lambda x, y: bouc_wen_rate(y, s, dy, A, beta, gamma, n) * s,
                            (d[i], d[j]), [z[i]], method="DOP853", t_eval=d[i:j + 1],
                            rtol=rtol, atol=atol)
            z[i:j + 1] = sol.y[0]
        i = j
    return z


def bouc_wen_frame_ivp(mass, stiffness, yield_shear, alpha, A, beta, gamma, n, C, ag, dt,
                       rtol=1e-10, atol_scale=1e-12):
    """Shear frame with Bouc-Wen storeys under ground acceleration, by scipy.integrate.solve_ivp.

    First-order form with the hysteretic variables as extra states, y = [u, v, z]:
        u' = v,  M v' = -M 1 a_g(t) - C v - f_s(u, z),  z_i' = bouc_wen_rate(z_i, d_i', ...),
    f_s the floor forces of the storey shears V_i = alpha k_i d_i + (1 - alpha) Vy_i z_i
    (Wen 1976; shear-frame assembly as in ``shear_frame_matrices``). a_g is the
    piecewise-linear interpolant of the samples ``ag`` (step ``dt``); each interval
    between samples is one solve_ivp call (DOP853), so the kinks of a_g fall on
    interval ends. Returns u (len(ag), N) at the samples, from rest.
    """
    from scipy.integrate import solve_ivp

    m = np.asarray(mass, dtype=float)
    k = np.asarray(stiffness, dtype=float)
    vy = np.asarray(yield_shear, dtype=float)
    N = m.size
    dy = vy / k
    C = np.asarray(C, dtype=float)
    ag = np.asarray(ag, dtype=float)

    def rhs(t, y, a_start, a_slope):
        u, v, z = y[:N], y[N:2 * N], y[2 * N:]
        d = np.diff(np.concatenate(([0.0], u)))
        d_dot = np.diff(np.concatenate(([0.0], v)))
        V = alpha * k * d + (1.0 - alpha) * vy * z
        fs = V - np.concatenate((V[1:], [0.0]))
        acc = -(a_start + a_slope * t) - (C @ v + fs) / m
        return np.concatenate((v, acc, bouc_wen_rate(z, d_dot, dy, A, beta, gamma, n)))

    scale = np.concatenate((np.full(N, dy.max()), np.full(N, dy.max() * 10.0), np.ones(N)))
    y = np.zeros(3 * N)
    u = np.zeros((ag.size, N))
    for i in range(ag.size - 1):
        slope = (ag[i + 1] - ag[i]) / dt
        sol = solve_ivp(rhs, (0.0, dt), y, method="DOP853", args=(ag[i], slope),
                        rtol=rtol, atol=atol_scale * scale)
        y = sol.y[:, -1]
        u[i + 1] = y[:N]
    return u


# ------------------------------------------------------- elastoplastic SDOF closed forms


def elastoplastic_rectangular_pulse_peak(m, k, vy, p0, td):
    """Peak displacement of an undamped elastoplastic SDOF from rest under a rectangular pulse.

    p(t) = p0 for 0 <= t <= td, then 0; restoring force k u up to Vy, then Vy
    (perfectly plastic). Derived here phase by phase from m u'' + f_s = p (the
    problem of Biggs, Introduction to Structural Dynamics, 1964, ch. 2, and Chopra,
    Dynamics of Structures, ch. 7, elastoplastic systems; both from memory):

    1. elastic, u = (p0 / k)(1 - cos wt), until u = uy = Vy / k at cos(w t1) = 1 - Vy / p0
       (no yield during the pulse if t1 > td or p0 < Vy / 2);
    2. plastic while the pulse acts, m u'' = p0 - Vy (constant acceleration); if p0 < Vy
       the motion may stop before td: u_max = uy + m v1^2 / (2 (Vy - p0));
    3. plastic after the pulse, m u'' = -Vy until the velocity vanishes, so by energy
       u_max = u(td) + m v(td)^2 / (2 Vy).
    If the pulse ends before yielding, the free vibration from (u(td), v(td)) has the
    amplitude a = sqrt(u^2 + (v / w)^2); if a > uy the system yields on its way out
    and, with m v^2 / 2 = k (a^2 - uy^2) / 2 at u = uy, u_max = (a^2 + uy^2) / (2 uy).
    """
    w = np.sqrt(k / m)
    uy = vy / k
    ust = p0 / k
    t1 = np.arccos(1.0 - vy / p0) / w if p0 >= vy / 2.0 else np.inf
    if t1 >= td:
        u_td = ust * (1.0 - np.cos(w * td))
        v_td = ust * w * np.sin(w * td)
        during = ust * (1.0 - np.cos(w * min(td, np.pi / w)))
        a = np.hypot(u_td, v_td / w)
        if a <= uy:
            return max(during, a)
        return (a**2 + uy**2) / (2.0 * uy)
    v1 = ust * w * np.sin(w * t1)
    acc = (p0 - vy) / m
    tau = td - t1
    if acc < 0.0 and v1 + acc * tau <= 0.0:
        return uy + v1**2 / (2.0 * -acc)
    u2 = uy + v1 * tau + 0.5 * acc * tau**2
    v2 = v1 + acc * tau
    return u2 + m * v2**2 / (2.0 * vy)


def undamped_rectangular_pulse_energy(k, p0, w, td):
    """Energy left in an undamped linear SDOF after a rectangular pulse p0 of length td.

    At td, u = (p0/k)(1 - cos w td) and v / w = (p0/k) sin w td (Chopra, Dynamics of
    Structures, ch. 4, rectangular pulse force, from memory); the free-vibration
    amplitude is (p0/k) 2 |sin(w td / 2)|, so E = k a^2 / 2 = 2 (p0^2 / k) sin^2(w td / 2).
    """
    return 2.0 * p0**2 / k * np.sin(0.5 * w * td) ** 2


def pdelta_period(m, k, gravity_load, height):
    """Small-amplitude period of a one-storey frame with gravity load: 2 pi sqrt(m / (k - P / h)).

    Linearised P-Delta (common practice): the gravity load P on the storey drift d
    adds the overturning shear P d / h, a negative geometric stiffness -P / h.
    """
    return 2.0 * np.pi * np.sqrt(m / (k - gravity_load / height))


def energy_balance_error(e_input, e_kinetic, e_damping, e_strain, e_hysteretic):
    """Relative energy balance error of each record (rows; NaN padding ignored).

    Relative energy equation E_I = E_K + E_D + E_S + E_H (C.-M. Uang and V. V. Bertero
    (1990), "Evaluation of seismic energy in structures", Earthquake Eng. Struct. Dyn.
    19, 77-90, from memory); the error is max over time of the imbalance over max over
    time of |E_I| (common practice as an accuracy check of a nonlinear analysis).
    """
    e_input = np.atleast_2d(e_input)
    imbalance = e_input - (np.atleast_2d(e_kinetic) + np.atleast_2d(e_damping) + np.atleast_2d(e_strain)
                           + np.atleast_2d(e_hysteretic))
    return np.nanmax(np.abs(imbalance), axis=1) / np.nanmax(np.abs(e_input), axis=1)
