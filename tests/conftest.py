"""Shared fixtures: a five-storey frame and seeded, band-limited test accelerations."""

from __future__ import annotations

import numpy as np
import pytest
import scipy.signal

import simulate as ss

#: A five-storey frame with storey properties that vary up the height (kg, N/m, m).
#: T1 is about 0.59 s and T5 about 0.10 s.
FRAME5 = dict(
    mass=[3.0e5, 2.8e5, 2.8e5, 2.6e5, 2.0e5],
    stiffness=[4.0e8, 3.6e8, 3.2e8, 2.6e8, 2.0e8],
    height=[4.0, 3.2, 3.2, 3.2, 3.2],
)

#: Damping models the tests loop over (tridiagonal C and full C).
DAMPING = {
    "rayleigh": ss.Rayleigh(ratio=0.05, modes=(1, 3)),
    "rayleigh-unequal": ss.Rayleigh(ratio=(0.02, 0.06), modes=(1, 4)),
    "modal": ss.ModalDamping((0.02, 0.05, 0.03, 0.07, 0.04)),
    "mass": ss.MassProportional(ratio=0.05, mode=1),
    "stiffness": ss.StiffnessProportional(ratio=0.03, mode=2),
    "none": ss.NoDamping(),
}


def band_limited_acceleration(seed: int, n: int, dt: float, corner: float = 8.0,
                              peak: float = 2.0) -> np.ndarray:
    """Seeded white noise, low-pass filtered (4th-order Butterworth, zero phase), tapered.

    An invented test input: the peak absolute value is ``peak`` (m/s^2); the first
    and last 5 % rise and fall with a half-cosine so the record starts and ends at rest.
    """
    rng = np.random.default_rng(seed)
    sos = scipy.signal.butter(4, corner, btype="low", fs=1.0 / dt, output="sos")
    x = scipy.signal.sosfiltfilt(sos, rng.standard_normal(n))
    taper = np.ones(n)
    m = max(2, n // 20)
    ramp = 0.5 * (1.0 - np.cos(np.pi * np.arange(m) / m))
    taper[:m] = ramp
    taper[-m:] = ramp[::-1]
    x *= taper
    return peak * x / np.abs(x).max()


@pytest.fixture
def frame5():
    """Factory: the five-storey frame with a chosen damping model."""

    def make(damping=DAMPING["rayleigh"], **changes):
        return ss.ShearFrame(**{**FRAME5, **changes}, damping=damping)

    return make


@pytest.fixture
def noise_record():
    """Factory: a ``Record`` in m/s2 built by ``band_limited_acceleration``."""

    def make(seed=1, n=1000, dt=0.01, corner=8.0, peak=2.0, name=None):
        acc = band_limited_acceleration(seed, n, dt, corner, peak)
        return ss.Record(acc, dt=dt, units="m/s2", name=name or f"noise-{seed}")

    return make
