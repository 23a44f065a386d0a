"""Static pushover: capacity curves against closed forms and static solutions."""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.linalg
import scipy.optimize

import simulate as ss
from simulate.analysis import PATTERNS, load_pattern, pushover
from simulate.settings import CAUTION


def chain_matrix(k):
    """Tridiagonal stiffness A^T diag(k) A of a shear building fixed at floor 0 (common practice)."""
    n = len(k)
    A = np.eye(n) - np.eye(n, k=-1)
    return A.T @ np.diag(k) @ A


def storey_shares(F):
    """G_i = F_i + ... + F_N: the share of the pattern carried by storey i (statics)."""
    return np.cumsum(np.asarray(F)[::-1])[::-1]


# ------------------------------------------------------------------ one storey
@pytest.mark.parametrize("law", ["bilinear", "peak-oriented"])
@pytest.mark.parametrize("gravity", [0.0, 4.5e6])
def test_one_storey_slopes_and_yield_point(law, gravity):
    """One storey pushed monotonically: the capacity curve is the bilinear skeleton minus the
    P-Delta shear P u / h, i.e. slope k - P/h up to yield, base shear Vy - P dy / h at
    dy = Vy / k, then slope alpha k - P/h (linearised P-Delta on a bilinear storey, common
    practice; the peak-oriented law follows its skeleton under monotonic loading, Ibarra,
    Medina and Krawinkler 2005)."""
    k, vy, alpha, h = 1.2e8, 1.5e6, 0.04, 3.0
    frame = ss.ShearFrame(mass=[2e5], stiffness=[k], height=[h], yield_shear=[vy], hardening=alpha,
                          gravity_load=None if gravity == 0 else [gravity], law=law)
    ds = pushover(frame, roof_drift=0.03, steps=360)      # dy = 0.0125 m falls on step 50
    assert ds.attrs["status"] == "ok"
    u = ds["roof_displacement"].values
    base = ds["base_shear"].values
    dy = vy / k
    kg = gravity / h
    spring = np.where(u <= dy, k * u, vy + alpha * k * (u - dy))
    np.testing.assert_allclose(base, spring - kg * u, rtol=1e-9, atol=1e-6 * vy)
    np.testing.assert_allclose(ds["storey_shear"].values[:, 0], spring, rtol=1e-9, atol=1e-6 * vy)
    elastic = u[1:] <= dy
    slopes = np.diff(base) / np.diff(u)
    before = slopes[elastic & (u[1:] < dy)]
    after = slopes[u[:-1] >= dy]
    np.testing.assert_allclose(before, k - kg, rtol=1e-8)
    np.testing.assert_allclose(after, alpha * k - kg, rtol=1e-6)
    assert np.interp(dy, u, base) == pytest.approx(vy - kg * dy, rel=1e-9)
    assert ds.attrs["initial_stiffness"] == pytest.approx(k - kg, rel=1e-12)


def test_descending_branch_past_the_peak():
    """With alpha k < P/h the curve peaks at yield, Vy - P dy / h at roof drift dy / h, and
    then descends with slope alpha k - P/h; displacement control follows it to the target
    drift (closed form as above, common practice)."""
    k, vy, alpha, h, P = 1.0e8, 1.0e6, 0.01, 3.0, 9.0e6          # alpha k = 1e6 < P/h = 3e6
    frame = ss.ShearFrame(mass=[2e5], stiffness=[k], height=[h], yield_shear=[vy], hardening=alpha,
                          gravity_load=[P])
    ds = pushover(frame, roof_drift=0.05, steps=300)            # dy = 0.01 m falls on step 20
    assert ds.attrs["status"] == "ok" and ds.sizes["step"] == 301
    dy = vy / k
    assert ds.attrs["peak_base_shear"] == pytest.approx(vy - P / h * dy, rel=1e-9)
    assert ds.attrs["roof_drift_ratio_at_peak"] == pytest.approx(dy / h, rel=1e-9)
    u = ds["roof_displacement"].values
    base = ds["base_shear"].values
    late = u > 2 * dy
    slope = np.polyfit(u[late], base[late], 1)[0]
    assert slope == pytest.approx(alpha * k - P / h, rel=1e-6)
    u_end = 0.05 * h
    assert base[-1] == pytest.approx(vy + alpha * k * (u_end - dy) - P / h * u_end, rel=1e-9)
    assert np.all(np.diff(base[u >= dy]) < 0.0)


# ------------------------------------------------------------ multi-storey frames
@pytest.mark.parametrize("strengths, critical", [
    ([2.0e6, 1.7e6, 1.2e6, 0.35e6], 4),
    ([2.0e6, 1.7e6, 0.8e6, 0.6e6], 3),
    ([0.9e6, 1.7e6, 1.2e6, 0.6e6], 1),
])
def test_elastoplastic_plateau_is_the_weakest_storey_capacity(strengths, critical):
    """Elastoplastic storeys (alpha = 0) under a uniform pattern: storey i carries lambda G_i
    (statics), so storey m = argmin Vy_i / G_i yields first and lambda stays at Vy_m / G_m
    while the others keep their elastic drifts lambda G_i / k_i (closed form from statics;
    K_t is singular on the plateau and the bordered solve must still work)."""
    mass = np.array([3.0e5, 2.8e5, 2.8e5, 2.2e5])
    k = np.array([4.0e8, 3.4e8, 2.8e8, 2.0e8])
    h = np.array([4.0, 3.2, 3.2, 3.2])
    vy = np.array(strengths)
    frame = ss.ShearFrame(mass=mass, stiffness=k, height=h, yield_shear=vy, hardening=0.0)
    ds = pushover(frame, pattern="uniform", roof_drift=0.03, steps=300)
    assert ds.attrs["status"] == "ok"
    G = storey_shares(mass / mass.sum())
    capacity = vy / G
    m = int(np.argmin(capacity))
    assert m + 1 == critical
    assert ds.attrs["peak_base_shear"] == pytest.approx(capacity[m], rel=1e-9)
    base = ds["base_shear"].values
    np.testing.assert_allclose(base[-50:], capacity[m], rtol=1e-9)
    d_final = ds["drift_ratio"].values[-1] * h
    others = np.arange(4) != m
    np.testing.assert_allclose(d_final[others], capacity[m] * G[others] / k[others], rtol=1e-8)
    assert d_final[m] > 5 * vy[m] / k[m]
    # the roof displacement is the sum of the storey deformations (compatibility)
    np.testing.assert_allclose(ds["roof_displacement"].values[-1], d_final.sum(), rtol=1e-12)


@pytest.mark.parametrize("law", ["bilinear", "peak-oriented", "bouc-wen"])
def test_equal_storey_capacities(law):
    """Storey strengths proportional to their share of a uniform pattern, Vy_i = C G_i (as a
    base-shear coefficient on the weight above gives): every storey reaches its capacity
    at lambda = C together (statics), the plateau is C for the bilinear and peak-oriented
    laws and the Bouc-Wen curve rises towards it without passing it (z <= 1, Wen 1976)."""
    mass = np.full(6, 3.0e5)
    k = np.linspace(5e8, 2e8, 6)
    h = np.full(6, 3.2)
    G = storey_shares(mass / mass.sum())
    C = 2.0e6
    frame = ss.ShearFrame(mass=mass, stiffness=k, height=h, yield_shear=C * G, hardening=0.0, law=law)
    ds = pushover(frame, pattern="uniform", roof_drift=0.05, steps=300)
    assert ds.attrs["status"] == "ok"
    base = ds["base_shear"].values
    if law == "bouc-wen":
        assert base.max() <= C * (1 + 1e-9)
        assert base[-1] == pytest.approx(C, rel=1e-6)
    else:
        np.testing.assert_allclose(base[-100:], C, rtol=1e-9)
    shares = ds["storey_shear"].values[-1]
    np.testing.assert_allclose(shares, base[-1] * G, rtol=1e-8, atol=1e-7 * C)    # force tolerance 1e-8 Vy


def test_elastoplastic_plateau_with_p_delta_follows_statics():
    """With gravity loads the plateau descends: once storey m yields, lambda G_m = Vy_m -
    P_m d_m / h_m (equilibrium of the total storey shear, linearised P-Delta, common
    practice), and every other storey keeps (k_i - P_i/h_i) d_i = lambda G_i."""
    mass = np.array([3.0e5, 2.8e5, 2.2e5])
    k = np.array([4.0e8, 3.0e8, 2.0e8])
    h = np.array([4.0, 3.2, 3.2])
    vy = np.array([1.0e6, 1.6e6, 1.2e6])
    P = np.array([8.0e6, 5.0e6, 2.2e6])
    frame = ss.ShearFrame(mass=mass, stiffness=k, height=h, yield_shear=vy, hardening=0.0, gravity_load=P)
    ds = pushover(frame, pattern="inverted-triangle", roof_drift=0.03, steps=200)
    assert ds.attrs["status"] == "ok"
    G = storey_shares(ds["load_pattern"].values)
    kg = P / h
    m = int(np.argmin(vy * (1 - kg / k) / G))
    assert m == 0
    d = ds["drift_ratio"].values * h
    lam = ds["load_factor"].values
    yielded = d[:, m] > vy[m] / k[m] * 1.001
    assert yielded.sum() > 100
    np.testing.assert_allclose(lam[yielded] * G[m], vy[m] - kg[m] * d[yielded, m], rtol=1e-9)
    for i in (1, 2):
        np.testing.assert_allclose((k[i] - kg[i]) * d[:, i], lam * G[i], rtol=1e-9, atol=1e-6)
    np.testing.assert_allclose(ds["base_shear"].values, lam, rtol=1e-9, atol=1e-3)


def test_peak_with_hardening_storey_unloading_matches_statics_reference():
    """Four bilinear storeys with P-Delta: storey 3 (alpha k > P/h) yields first and keeps
    hardening; storey 1 (alpha k < P/h) yields at lambda* = (Vy_1 - P_1 dy_1 / h_1) / G_1,
    the peak; past it storey 1 softens and every other storey, storey 3 included, unloads
    elastically. Reference: statics (storey i carries lambda G_i) with the bilinear
    skeleton and elastic unloading, the roof displacement U(lambda) = sum d_i(lambda) on
    the rising and on the falling branch, solved for lambda with scipy.optimize.brentq.
    The steps are chosen so that one lands on the peak."""
    mass = np.array([3e5, 3e5, 3e5, 2e5])
    k = np.array([4.0e8, 3.5e8, 3.0e8, 2.5e8])
    h = np.array([4.0, 3.2, 3.2, 3.2])
    P = np.array([1.6e7, 1.2e7, 0.8e7, 0.4e7])
    alpha = np.array([0.005, 0.03, 0.05, 0.03])
    vy = np.array([3.0e6, 2.6e6, 1.1e6, 0.7e6])
    kg = P / h
    G = storey_shares(mass / mass.sum())
    dy = vy / k
    wy = vy - kg * dy                        # total storey shear at yield
    kel, kpl = k - kg, alpha * k - kg
    assert kpl[0] < 0 < kpl[2] and np.argmin(wy / G) == 2
    lam_peak = wy[0] / G[0]
    assert np.all(wy[[1, 3]] / G[[1, 3]] > lam_peak)

    def rising(lam):
        w = lam * G
        return np.where(w <= wy, w / kel, dy + (w - wy) / kpl)

    d_peak = rising(lam_peak)
    U_peak = d_peak.sum()

    def falling(lam):
        d = d_peak - (lam_peak - lam) * G / kel
        d[0] = dy[0] + (lam * G[0] - wy[0]) / kpl[0]
        return d

    H = h.sum()
    steps, at_peak = 200, 80
    roof_drift = U_peak * steps / at_peak / H
    frame = ss.ShearFrame(mass=mass, stiffness=k, height=h, yield_shear=vy, hardening=alpha, gravity_load=P)
    ds = pushover(frame, pattern="uniform", roof_drift=roof_drift, steps=steps)
    assert ds.attrs["status"] == "ok"
    U = ds["roof_displacement"].values
    lam = ds["load_factor"].values
    d = ds["drift_ratio"].values * h
    for i in range(1, steps + 1):
        if i == at_peak:
            assert U[i] == pytest.approx(U_peak, rel=1e-14)
            ref, d_ref = lam_peak, d_peak
        elif i < at_peak:
            ref = scipy.optimize.brentq(lambda x: rising(x).sum() - U[i], 0.0, lam_peak, xtol=1e-6)
            d_ref = rising(ref)
        else:
            ref = scipy.optimize.brentq(lambda x: falling(x).sum() - U[i], 0.0, lam_peak, xtol=1e-6)
            d_ref = falling(ref)
        assert lam[i] == pytest.approx(ref, rel=1e-8), i
        np.testing.assert_allclose(d[i], d_ref, rtol=1e-7, atol=1e-12)
    assert ds.attrs["peak_base_shear"] == pytest.approx(lam_peak, rel=1e-8)
    assert int(np.argmax(ds["base_shear"].values)) == at_peak


def test_p_delta_collapse_stops_where_the_base_shear_reaches_zero():
    """One storey with alpha k < P/h: past yield the base shear Vy + alpha k (u - dy) - P u / h
    falls to zero at u_c = (Vy - alpha k dy) / (P/h - alpha k) (closed form, linearised
    P-Delta, common practice); the analysis stops there with status collapsed."""
    k, vy, alpha, h, P = 1.0e8, 1.0e6, 0.0, 3.0, 1.4e7      # u_c = 0.2143 m, between steps
    frame = ss.ShearFrame(mass=[2e5], stiffness=[k], height=[h], yield_shear=[vy], hardening=alpha,
                          gravity_load=[P])
    ds = pushover(frame, roof_drift=0.1, steps=300)
    assert ds.attrs["status"] == "collapsed"
    dy = vy / k
    u_c = (vy - alpha * k * dy) / (P / h - alpha * k)
    U = ds["roof_displacement"].values
    step = 0.1 * h / 300
    assert u_c <= U[-1] < u_c + step
    base = ds["base_shear"].values
    assert base[-1] <= 0.0 < base[-2]
    assert base[-1] == pytest.approx(vy - P / h * U[-1], rel=1e-9)


@pytest.mark.parametrize("pattern", ["first-mode", "inverted-triangle", "uniform", "array"])
@pytest.mark.parametrize("gravity", [False, True])
def test_linear_frame_matches_static_solution(pattern, gravity):
    """Linear storeys: at every step (K - K_G) u = lambda F with u_N the target, K_G from
    P_i / h_i (linearised P-Delta); the reference solves it with numpy.linalg.solve."""
    mass = np.array([3.0e5, 2.8e5, 2.8e5, 2.6e5, 2.0e5])
    k = np.array([4.0e8, 3.6e8, 3.2e8, 2.6e8, 2.0e8])
    h = np.array([4.0, 3.2, 3.2, 3.2, 3.2])
    P = np.array([1.2e7, 9e6, 6.5e6, 4e6, 1.8e6]) if gravity else None
    frame = ss.ShearFrame(mass=mass, stiffness=k, height=h, gravity_load=P)
    chosen = [1.0, 0.0, 2.0, 0.5, 3.0] if pattern == "array" else pattern
    ds = pushover(frame, pattern=chosen, roof_drift=0.02, steps=40)
    F = load_pattern(frame, chosen)
    kg = np.zeros(5) if P is None else P / h
    x1 = np.linalg.solve(chain_matrix(k - kg), F)
    lam = ds["roof_displacement"].values / x1[-1]
    np.testing.assert_allclose(ds["base_shear"].values, lam, rtol=1e-9, atol=1e-3)
    np.testing.assert_allclose(ds["displacement"].values, lam[:, None] * x1[None, :], rtol=1e-9, atol=1e-15)
    assert ds.attrs["initial_stiffness"] == pytest.approx(1.0 / x1[-1], rel=1e-10)
    assert ds["roof_displacement"].values[-1] == pytest.approx(0.02 * h.sum(), rel=1e-14)


def test_first_mode_pattern_on_uniform_frame_deflects_in_the_closed_form_mode():
    """Uniform linear shear building (N equal masses m and stiffnesses k): the modes are
    phi_j = sin(j theta_r), theta_r = (2r - 1) pi / (2N + 1), w_r^2 = 4 k/m sin^2(theta_r / 2)
    (from the difference equation k (-u_j-1 + 2 u_j - u_j+1) = w^2 m u_j with a free top;
    derived here, also checked with scipy.linalg.eigh). Under F = M phi_1, K u = lambda M phi_1
    gives u = lambda / w_1^2 phi_1, so the deflected shape is phi_1 and the base shear per
    roof displacement w_1^2 m sum_j phi_j (phi roof-normalised)."""
    n, m, k = 6, 2.5e5, 3.0e8
    frame = ss.ShearFrame(mass=[m] * n, stiffness=[k] * n, height=[3.5] * n)
    theta = math.pi / (2 * n + 1)
    j = np.arange(1, n + 1)
    phi = np.sin(j * theta) / np.sin(n * theta)
    w2 = 4.0 * k / m * math.sin(theta / 2) ** 2
    w2_ref = scipy.linalg.eigh(chain_matrix([k] * n), np.diag([m] * n), eigvals_only=True)[0]
    assert w2 == pytest.approx(w2_ref, rel=1e-12)
    ds = pushover(frame, pattern="first-mode", roof_drift=0.01, steps=10)
    u = ds["displacement"].values
    np.testing.assert_allclose(u[1:] / u[1:, -1:], np.tile(phi, (10, 1)), rtol=1e-9)
    assert ds.attrs["initial_stiffness"] == pytest.approx(w2 * m * phi.sum(), rel=1e-9)


def test_named_patterns():
    """The named patterns: m_i phi_i1, m_i z_i and m_i, normalised to sum 1 (definitions of
    the patterns; z_i the floor height above the ground)."""
    mass = np.array([3.0e5, 2.0e5, 1.0e5])
    h = np.array([4.0, 3.0, 3.0])
    k = np.array([3e8, 2e8, 1e8])
    frame = ss.ShearFrame(mass=mass, stiffness=k, height=h)
    z = np.array([4.0, 7.0, 10.0])
    np.testing.assert_allclose(load_pattern(frame, "inverted-triangle"), mass * z / (mass * z).sum(), rtol=1e-15)
    np.testing.assert_allclose(load_pattern(frame, "uniform"), mass / mass.sum(), rtol=1e-15)
    w2, vec = scipy.linalg.eigh(chain_matrix(k), np.diag(mass))
    phi = vec[:, 0] / vec[-1, 0]
    np.testing.assert_allclose(load_pattern(frame, "first-mode"), mass * phi / (mass * phi).sum(), rtol=1e-10)
    assert set(PATTERNS) == {"first-mode", "inverted-triangle", "uniform"}


# ------------------------------------------------------------------ smooth laws
@pytest.mark.parametrize("n_exp, closed_form", [
    (1.0, lambda x: 1.0 - np.exp(-x)),
    (2.0, np.tanh),
])
def test_bouc_wen_monotonic_curve_follows_the_integrated_equation(n_exp, closed_form):
    """Bouc-Wen under monotonic loading with A = 1, beta + gamma = 1, z >= 0: dz/dx = 1 - z^n
    (x = d / dy), so z = 1 - exp(-x) for n = 1 and z = tanh(x) for n = 2, and
    V = alpha k d + (1 - alpha) Vy z -> alpha k d + (1 - alpha) Vy (Wen 1976, integrated
    here). The law integrates z with the trapezoidal rule, hence the tolerance."""
    k, vy, alpha, h = 1.0e8, 1.0e6, 0.05, 3.0
    frame = ss.ShearFrame(mass=[2e5], stiffness=[k], height=[h], yield_shear=[vy], hardening=alpha,
                          law="bouc-wen", law_params={"A": 1.0, "beta": 0.5, "gamma": 0.5, "n": n_exp})
    ds = pushover(frame, roof_drift=0.04, steps=600)
    assert ds.attrs["status"] == "ok"
    d = ds["roof_displacement"].values
    dy = vy / k
    expected = alpha * k * d + (1 - alpha) * vy * closed_form(d / dy)
    np.testing.assert_allclose(ds["base_shear"].values, expected, rtol=2e-4, atol=1e-6 * vy)
    skeleton = alpha * k * d[-1] + (1 - alpha) * vy
    assert abs(ds["base_shear"].values[-1] - skeleton) < 1e-3 * vy
    assert ds.attrs["initial_stiffness"] == pytest.approx(k, rel=1e-12)


def test_peak_oriented_multi_storey_equals_bilinear_under_monotonic_push():
    """Under a monotonic push the peak-oriented law never unloads, so a frame of them gives
    the same curve as the bilinear frame (both follow the bilinear skeleton; Ibarra, Medina
    and Krawinkler 2005) - checked against the bilinear closed form at the plateau too."""
    common = dict(mass=[3e5, 3e5, 2e5], stiffness=[4e8, 3e8, 2e8], height=[4.0, 3.2, 3.2],
                  yield_shear=[2.2e6, 1.4e6, 0.9e6], hardening=0.0)
    a = pushover(ss.ShearFrame(**common, law="bilinear"), pattern="uniform", roof_drift=0.02, steps=100)
    b = pushover(ss.ShearFrame(**common, law="peak-oriented"), pattern="uniform", roof_drift=0.02, steps=100)
    np.testing.assert_allclose(b["base_shear"].values, a["base_shear"].values, rtol=1e-9, atol=1e-3)
    G = storey_shares(np.array(common["mass"]) / sum(common["mass"]))
    assert a.attrs["peak_base_shear"] == pytest.approx(min(np.array(common["yield_shear"]) / G), rel=1e-9)


# ------------------------------------------------------------- bookkeeping
def test_dataset_layout_units_and_caution():
    frame = ss.ShearFrame(mass=[3e5, 2e5], stiffness=[3e8, 2e8], height=[4.0, 3.0],
                          yield_shear=[1.5e6, 1.0e6], hardening=0.02, gravity_load=[5e6, 2e6])
    ds = pushover(frame, pattern="inverted-triangle", roof_drift=0.01, steps=20)
    assert dict(ds.sizes) == {"step": 21, "floor": 2, "storey": 2}
    for name, units in (("base_shear", "N"), ("roof_displacement", "m"), ("roof_drift_ratio", "1"),
                        ("displacement", "m"), ("drift_ratio", "1"), ("storey_shear", "N"), ("load_factor", "N")):
        assert ds[name].attrs["units"] == units
    assert ds["displacement"].dims == ("step", "floor")
    assert ds["drift_ratio"].dims == ("step", "storey")
    assert ds.attrs["caution"] == CAUTION
    assert ds.attrs["pattern"] == "inverted-triangle" and ds.attrs["status"] == "ok"
    assert ds.attrs["p_delta"] == "yes"
    np.testing.assert_allclose(ds["roof_drift_ratio"].values, np.arange(21) * 0.01 / 20, rtol=1e-12)
    np.testing.assert_allclose(ds["load_pattern"].sum(), 1.0, rtol=1e-15)
    peak = int(np.argmax(ds["base_shear"].values))
    assert ds.attrs["peak_base_shear"] == ds["base_shear"].values[peak]
    assert ds.attrs["roof_drift_ratio_at_peak"] == ds["roof_drift_ratio"].values[peak]


def test_failed_step_keeps_what_was_done():
    """A step that does not converge stops the analysis with status not-converged; the
    converged steps are those of the unhindered run."""
    frame = ss.ShearFrame(mass=[3e5, 2e5], stiffness=[3e8, 2e8], height=[4.0, 3.0],
                          yield_shear=[1.0e6, 1.5e6], hardening=0.02)
    full = pushover(frame, pattern="uniform", roof_drift=0.02, steps=50)
    cut = pushover(frame, pattern="uniform", roof_drift=0.02, steps=50, max_iter=2)
    assert full.attrs["status"] == "ok"
    assert cut.attrs["status"] == "not-converged"
    n = cut.sizes["step"]
    assert 1 < n < 51 and cut.attrs["steps_done"] == n - 1
    np.testing.assert_allclose(cut["base_shear"].values, full["base_shear"].values[:n], rtol=1e-12)
    assert np.isfinite(cut["displacement"].values).all()


@pytest.mark.parametrize("kwargs, key", [
    (dict(pattern="triangle"), "pattern"),
    (dict(pattern=[1.0, 2.0, 3.0]), "pattern"),
    (dict(pattern=[1.0, -1.0]), "pattern"),
    (dict(pattern=[0.0, 0.0]), "pattern"),
    (dict(roof_drift=0.0), "roof_drift"),
    (dict(roof_drift=float("nan")), "roof_drift"),
    (dict(steps=0), "steps"),
    (dict(steps=2.5), "steps"),
    (dict(max_iter=1), "max_iter"),
])
def test_input_errors_name_the_key(kwargs, key):
    frame = ss.ShearFrame(mass=[3e5, 2e5], stiffness=[3e8, 2e8], height=[4.0, 3.0])
    with pytest.raises(ss.InputError, match=key) as info:
        pushover(frame, **kwargs)
    assert "\n" not in str(info.value)


def test_frame_unstable_under_gravity_is_an_input_error():
    """P / h >= k leaves a storey with no lateral stiffness at all (linearised P-Delta)."""
    frame = ss.ShearFrame(mass=[3e5, 2e5], stiffness=[3e8, 2e8], height=[4.0, 3.0],
                          gravity_load=[1e7, 7e8])
    with pytest.raises(ss.InputError, match="gravity_load: storey 2"):
        pushover(frame)
