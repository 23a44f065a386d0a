"""Bilinear storey with kinematic hardening against the geometry of its loop, and checks
every storey law must pass (consistent tangent, odd symmetry).

The reference loop (tests/reference.py::bilinear_kinematic_loop) is built from the two
bounding lines of slope alpha k and elastic branches of slope k between them, not
from the law's return mapping.
"""

import numpy as np
import pytest

from simulate.laws import LAWS
from reference import bilinear_kinematic_loop

from laws import Storey, cyclic_path

K = 2.0e7           # N/m
VY = 1.0e5          # N
DY = VY / K         # 5 mm

#: growing cycles with a smaller excursion and a half cycle back in the middle
TURNS = [0.6, -1.5, 2.3, -3.1, 4.2, -2.0, 5.5, -6.8, 1.0, -0.4, 7.3]

#: per law, extra parameters used by the law-generic tests
LAW_PARAMS = {
    "linear": {},
    "bilinear": {},
    "peak-oriented": {},
    "bouc-wen": {"A": 1.0, "beta": 0.6, "gamma": 0.4, "n": 2.0},
}


@pytest.mark.parametrize("alpha", [0.0, 0.05, 0.3])
@pytest.mark.parametrize("per_unit", [20.0, 0.7])
def test_cyclic_drift_path_follows_the_bilinear_loop(alpha, per_unit):
    """Drift-controlled cycles of growing amplitude, the law stepped sample by sample with the
    state committed after each step: the shear equals the analytical bilinear loop with
    kinematic hardening point by point - yield at Vy, post-yield slope alpha k, elastic
    unloading slope k, elastic range 2 Vy translated along the bounding lines (common
    practice; Chopra, Dynamics of Structures, ch. 7, bilinear systems, from memory) - to
    round-off, and the tangent returned equals the slope of the branch. The return
    mapping is exact for any increment of a linear-hardening law (Simo and Hughes,
    Computational Inelasticity, ch. 1, from memory), so coarse steps (0.7 samples per dy,
    several yield points inside one step) must match as well as fine ones."""
    d = cyclic_path(TURNS, per_unit, DY)
    V, kt = Storey("bilinear", K, VY, alpha).drive(d)
    V_ref, slope_ref = bilinear_kinematic_loop(np.concatenate(([0.0], d)), K, VY, alpha)
    np.testing.assert_allclose(V, V_ref[1:], rtol=0, atol=1e-12 * VY)
    sharp = np.isfinite(slope_ref[1:])
    assert sharp.sum() > 0.95 * d.size
    np.testing.assert_allclose(kt[sharp], slope_ref[1:][sharp], rtol=1e-12, atol=0)
    # the path does yield in both directions and unloads elastically in between
    assert (slope_ref[1:] == alpha * K).sum() > 3 and (slope_ref[1:] == K).sum() > 3
    assert V.max() > VY and V.min() < -VY


@pytest.mark.parametrize("alpha", [0.0, 0.1])
def test_first_yield_and_translated_elastic_range(alpha):
    """Monotonic loading stays elastic (V = k d, tangent k) up to d = Vy / k and then follows
    V = Vy + alpha k (d - dy); after a reversal from a point on the upper bounding line the
    storey is elastic for exactly 2 Vy of shear change (2 dy of drift) before it yields in
    the other direction: kinematic hardening translates the elastic range, it keeps its
    width (common practice; Simo and Hughes, Computational Inelasticity, sec. 1.3, from
    memory)."""
    s = Storey("bilinear", K, VY, alpha)
    for x in (0.3, 0.9, 0.999):
        V, kt = s.step(x * DY)
        assert V == pytest.approx(K * x * DY, rel=1e-14) and kt == K
    V, kt = s.step(1.001 * DY)
    assert V == pytest.approx(VY + alpha * K * 0.001 * DY, rel=1e-13)
    assert kt == pytest.approx(alpha * K, rel=1e-13, abs=1e-9 * K)
    V1, _ = s.step(3.0 * DY)
    assert V1 == pytest.approx(VY + alpha * K * 2.0 * DY, rel=1e-13)
    # from (3 dy, V1): elastic down to 3 dy - 2 dy, yielding beyond
    V, kt = s.trial(3.0 * DY - 2.0 * DY * (1 - 1e-6))
    assert kt == K and V == pytest.approx(V1 - 2.0 * VY * (1 - 1e-6), rel=1e-12)
    V, kt = s.trial(3.0 * DY - 2.0 * DY * (1 + 1e-3))
    assert kt == pytest.approx(alpha * K, rel=1e-13, abs=1e-9 * K)
    lower = alpha * K * (DY - 2e-3 * DY) - (1 - alpha) * VY
    assert V == pytest.approx(lower, rel=1e-12)
    # nothing was committed by the trials: stepping back to 3 dy gives V1 again
    assert s.step(3.0 * DY)[0] == pytest.approx(V1, rel=1e-14)


# --------------------------------------------------------------------- every law


def _storey(law, alpha=0.05):
    return Storey(law, K, VY, alpha, **LAW_PARAMS[law])


@pytest.mark.parametrize("law", list(LAWS))
def test_tangent_is_the_derivative_of_the_shear_update(law):
    """The tangent a law returns is the derivative of the shear it returns with respect to
    the trial deformation, from the same committed state (the consistent tangent that gives
    Newton's method its quadratic convergence; Simo and Hughes, Computational Inelasticity,
    ch. 1-3, from memory). Checked by central differences (step 1e-7 dy) at points of a
    cyclic path away from the kinks of piecewise-linear laws."""
    s = _storey(law)
    d = cyclic_path([2.5, -3.0, 4.0], 6.0, DY)
    eps = 1e-7 * DY
    checked = 0
    for x in d:
        for target in (x + 0.37 * DY, x - 0.29 * DY):
            Vp, _ = s.trial(target + eps)
            Vm, _ = s.trial(target - eps)
            V0, kt = s.trial(target)
            Vp2, _ = s.trial(target + 2 * eps)
            Vm2, _ = s.trial(target - 2 * eps)
            fd = (Vp - Vm) / (2 * eps)
            # a kink within 2 eps shows up as unequal one-sided slopes: skip those points
            if abs((Vp2 - Vp) - (Vm - Vm2)) > 1e-6 * K * eps:
                continue
            assert kt == pytest.approx(fd, rel=1e-5, abs=1e-6 * K), (law, x, target)
            checked += 1
        s.step(x)
    assert checked > 0.8 * 2 * d.size


@pytest.mark.parametrize("law", list(LAWS))
def test_response_is_odd_in_the_drift_path(law):
    """Every law here has a skeleton symmetric about the origin, so the path -d gives the
    shear -V and the same tangent (common practice)."""
    d = cyclic_path(TURNS, 5.0, DY)
    V, kt = _storey(law).drive(d)
    Vn, ktn = _storey(law).drive(-d)
    np.testing.assert_allclose(Vn, -V, rtol=0, atol=1e-12 * VY)
    np.testing.assert_allclose(ktn, kt, rtol=1e-9, atol=1e-9 * K)
