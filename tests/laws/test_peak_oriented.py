"""Peak-oriented (Clough) storey against the geometry of its rules.

The drift path below visits every rule of the model once: loading on the bilinear
skeleton, elastic unloading with slope k, reloading after the shear has crossed
zero toward the yield point of a direction not yet yielded, reloading toward the
previous peak on the skeleton, recovery of the skeleton beyond that peak, and a
partial unloading followed by elastic reloading. The expected shear of every stage
is written below from those rules (R. W. Clough and S. B. Johnston (1966), "Effect
of stiffness degradation on earthquake ductility requirements", Proc. Japan
Earthquake Engineering Symposium; L. F. Ibarra, R. A. Medina and H. Krawinkler
(2005), "Hysteretic models that incorporate strength and stiffness deterioration",
Earthquake Eng. Struct. Dyn. 34, 1489-1511, peak-oriented model without
deterioration; both from memory).
"""

import numpy as np
import pytest

from laws import Storey

K = 2.0e7           # N/m
VY = 1.0e5          # N
DY = VY / K         # 5 mm


def skeleton(d, alpha):
    """Bilinear skeleton: k d up to the yield points, then slope alpha k."""
    d = np.asarray(d, dtype=float)
    beyond = np.sign(d) * (VY + alpha * K * (np.abs(d) - DY))
    return np.where(np.abs(d) <= DY, K * d, beyond)


def skeleton_slope(d, alpha):
    return np.where(np.abs(np.asarray(d)) <= DY, K, alpha * K)


def line(x0, x1, v1):
    """Shear and slope of the straight line from (x0, 0) to (x1, v1)."""
    slope = v1 / (x1 - x0)
    return lambda d: (slope * (d - x0), np.full_like(d, slope))


def elastic(d0, v0):
    """Elastic branch with slope k through (d0, v0)."""
    return lambda d: (v0 + K * (d - d0), np.full_like(d, K))


def on_skeleton(alpha):
    return lambda d: (skeleton(d, alpha), skeleton_slope(d, alpha))


def stages(alpha):
    """(end of stage, [(branch start, branch end, branch shear and slope), ...]) for each stage."""
    sk = on_skeleton(alpha)
    v3 = float(skeleton(3 * DY, alpha))
    vm2 = float(skeleton(-2 * DY, alpha))
    out = []
    # 1. virgin loading to 3 dy along the skeleton
    out.append((3 * DY, [(0.0, 3 * DY, sk)]))
    # 2. unloading with slope k to zero shear at xa; the negative side has not yielded,
    #    so reloading aims at the yield point (-dy, -Vy); the skeleton beyond it
    xa = 3 * DY - v3 / K
    out.append((-2 * DY, [(3 * DY, xa, elastic(3 * DY, v3)), (xa, -DY, line(xa, -DY, -VY)),
                          (-DY, -2 * DY, sk)]))
    # 3. unloading with slope k to zero at xb, then reloading toward the positive peak (3 dy, v3)
    xb = -2 * DY - vm2 / K
    to_peak = line(xb, 3 * DY, v3)
    out.append((1.5 * DY, [(-2 * DY, xb, elastic(-2 * DY, vm2)), (xb, 1.5 * DY, to_peak)]))
    # 4. partial unloading (the shear stays positive) with slope k
    v15 = float(to_peak(np.array(1.5 * DY))[0])
    out.append((1.2 * DY, [(1.5 * DY, 1.2 * DY, elastic(1.5 * DY, v15))]))
    # 5. reloading: elastic back to the reloading line, along it through the peak, then the skeleton
    out.append((4.5 * DY, [(1.2 * DY, 1.5 * DY, elastic(1.5 * DY, v15)), (1.5 * DY, 3 * DY, to_peak),
                           (3 * DY, 4.5 * DY, sk)]))
    # 6. partial unloading from the skeleton and elastic reloading onto it again
    v45 = float(skeleton(4.5 * DY, alpha))
    out.append((4.0 * DY, [(4.5 * DY, 4.0 * DY, elastic(4.5 * DY, v45))]))
    out.append((5.0 * DY, [(4.0 * DY, 4.5 * DY, elastic(4.5 * DY, v45)), (4.5 * DY, 5.0 * DY, sk)]))
    # 7. unloading to zero at xc; the negative side has yielded: reloading aims at its
    #    peak (-2 dy, skeleton), the skeleton beyond it
    v5 = float(skeleton(5 * DY, alpha))
    xc = 5 * DY - v5 / K
    out.append((-3 * DY, [(5 * DY, xc, elastic(5 * DY, v5)), (xc, -2 * DY, line(xc, -2 * DY, vm2)),
                          (-2 * DY, -3 * DY, sk)]))
    return out


def expected(d, branches):
    """Shear and slope of the samples d from the branch that covers each; slope NaN at a branch end."""
    V = np.full(d.size, np.nan)
    slope = np.full(d.size, np.nan)
    for a, b, fn in branches:
        lo, hi = min(a, b), max(a, b)
        inside = (d >= lo - 1e-12 * DY) & (d <= hi + 1e-12 * DY)
        v, s = fn(d[inside])
        V[inside] = v
        near_end = (np.abs(d[inside] - a) < 1e-9 * DY) | (np.abs(d[inside] - b) < 1e-9 * DY)
        slope[inside] = np.where(near_end, np.nan, s)
    return V, slope


@pytest.mark.parametrize("alpha", [0.0, 0.05, 0.2])
@pytest.mark.parametrize("per_unit", [25.0, 1.3])
def test_peak_oriented_rules_along_a_designed_path(alpha, per_unit):
    """Every stage of the path matches its branch point by point to round-off: loading on the
    bilinear skeleton, unloading with slope k, after zero shear reloading along the line
    through the zero-shear point and the previous peak on the skeleton (or the yield point
    when that direction has not yielded), the skeleton recovered beyond the peak, partial
    unloading and reloading elastic with slope k until the reloading line or skeleton is met
    (Clough and Johnston 1966; Ibarra, Medina and Krawinkler 2005 without deterioration).
    The tangent equals the slope of the branch. With 1.3 samples per dy several branches
    are crossed inside one step, so the law must also place its corners right."""
    s = Storey("peak-oriented", K, VY, alpha)
    start = 0.0
    for end, branches in stages(alpha):
        n = max(2, int(np.ceil(abs(end - start) / DY * per_unit)))
        d = np.linspace(start, end, n + 1)[1:]
        V, kt = s.drive(d)
        V_ref, slope_ref = expected(d, branches)
        assert np.isfinite(V_ref).all()
        np.testing.assert_allclose(V, V_ref, rtol=0, atol=1e-11 * VY)
        sharp = np.isfinite(slope_ref)
        np.testing.assert_allclose(kt[sharp], slope_ref[sharp], rtol=1e-10, atol=1e-10 * K)
        start = end


@pytest.mark.parametrize("alpha", [0.0, 0.05])
def test_reloading_line_passes_through_the_stored_peak(alpha):
    """Reloading after a zero crossing aims at the largest previous excursion on the
    skeleton: with the path stopped at the peak deformation of each direction in turn, the
    shear there is the skeleton shear of that peak (Clough and Johnston 1966, from memory),
    and the reloading stiffness degrades as the peaks grow (each reloading slope is smaller
    than the previous one in the same direction)."""
    s = Storey("peak-oriented", K, VY, alpha)
    peaks = [2.0, -2.5, 3.5, -4.0, 5.0, -6.0]
    slopes = {1: [], -1: []}
    last = {1: 1.0, -1: -1.0}        # yield points until a direction has yielded
    for p in peaks:
        sign = 1 if p > 0 else -1
        # first go back to the previous peak of this direction along the reloading line
        target = last[sign] * DY
        d = np.linspace(s.dc, target, 40)[1:]
        V, kt = s.drive(d)
        assert V[-1] == pytest.approx(float(skeleton(target, alpha)), rel=1e-12)
        slopes[sign].append(kt[-5])
        # then beyond it on the skeleton
        d = np.linspace(target, p * DY, 20)[1:]
        V, _ = s.drive(d)
        np.testing.assert_allclose(V, skeleton(d, alpha), rtol=1e-12)
        last[sign] = p
    for sign in (1, -1):
        assert np.all(np.diff(np.abs(slopes[sign][1:])) < 0)
        assert all(abs(x) < K for x in slopes[sign][1:])
