"""Synthetic ground motions: filtered white noise and spectrum-compatible records.

Two generators, both seeded (``numpy.random.default_rng(seed)``: the same seed
gives the same arrays, bit for bit, on one machine):

* :func:`kanai_tajimi_record` - stationary Gaussian white noise through the
  Kanai-Tajimi ground filter (ground frequency ``wg``, damping ``zg``),
  optionally followed by the Clough-Penzien second filter (``wf``, ``zf``) that
  removes the low-frequency content, times a time envelope, baseline
  corrected.
* :func:`spectrum_compatible` - a record whose response spectrum matches a
  target spectrum over a period band, by iterative adjustment of the Fourier
  amplitudes (Gasparini and Vanmarcke 1976).

Generation method (stationary part)
-----------------------------------
The filters are written as one linear state-space system driven by white
noise w(t) of two-sided power spectral density S0 (autocorrelation
2 pi S0 delta(tau)). The system is discretised *covariance-equivalently*: over
one step dt the state obeys x[k+1] = Phi x[k] + e[k] with Phi = expm(A dt) and
e[k] Gaussian with covariance Qd = int_0^dt expm(A s) B q B^T expm(A^T s) ds,
q = 2 pi S0, both from one matrix exponential (Van Loan 1978). The first state
is drawn from the stationary covariance (continuous Lyapunov equation), so the
samples have exactly the autocovariance of the continuous filtered process at
the sample times: stationary from the first sample, with no start-up transient
and no error from holding the noise over a step. The acceleration then has
the two-sided power spectral density (rad/s)::

    S(w) = S0 (wg^4 + 4 zg^2 wg^2 w^2) / ((wg^2 - w^2)^2 + 4 zg^2 wg^2 w^2)
           [ x w^4 / ((wf^2 - w^2)^2 + 4 zf^2 wf^2 w^2)   with the second filter ]

(:func:`kanai_tajimi_psd`), apart from aliasing above the Nyquist frequency.

Baseline correction (:func:`polynomial_baseline`) fits a polynomial
c2 t^2 + ... + cn t^n to the displacement (the acceleration integrated twice
from rest) by least squares, constrained so that the record ends at rest (zero
final velocity and displacement), and subtracts its second derivative from the
acceleration (common practice in record processing).

References
----------
K. Kanai (1957), Semi-empirical formula for the seismic characteristics of the
ground, Bulletin of the Earthquake Research Institute, University of Tokyo 35.
H. Tajimi (1960), A statistical method of determining the maximum response of
a building structure during an earthquake, Proc. 2nd World Conference on
Earthquake Engineering, Tokyo.
R. W. Clough and J. Penzien, Dynamics of Structures (McGraw-Hill), chapter on
stochastic ground motion (the second filter).
G. R. Saragoni and G. C. Hart (1974), Simulation of artificial earthquakes,
Earthquake Engineering and Structural Dynamics 2, 249-267.
P. C. Jennings, G. W. Housner and N. C. Tsai (1968), Simulated earthquake
motions, report, Earthquake Engineering Research Laboratory, Caltech.
D. A. Gasparini and E. H. Vanmarcke (1976), Simulated earthquake motions
compatible with prescribed response spectra, MIT report R76-4.
C. F. Van Loan (1978), Computing integrals involving the matrix exponential,
IEEE Transactions on Automatic Control 23(3), 395-404.

Caution
-------
Synthetic motions are idealisations. Whether they may be used, the target
they are matched to and its parameters must come from the building code in
force where the structure stands and licensed professional practice.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass
from numbers import Integral, Real

import numpy as np
import scipy.linalg

from simulate.errors import InputError
from simulate.excitation.record import Record
from simulate.settings import STANDARD_GRAVITY

__all__ = [
    "SaragoniHart",
    "JenningsHousnerTsai",
    "Trapezoid",
    "ENVELOPES",
    "SYNTHETIC_CAUTION",
    "kanai_tajimi_psd",
    "stationary_kanai_tajimi",
    "polynomial_baseline",
    "kanai_tajimi_record",
    "spectrum_compatible",
]

SYNTHETIC_CAUTION = (
    "Synthetic ground motions are idealisations; whether they may be used, and the target "
    "spectrum and parameters they are matched to, must come from the building code in force "
    "where the structure stands and licensed professional practice."
)


def _positive(value, label: str, *, allow_zero: bool = False) -> float:
    if isinstance(value, bool) or not isinstance(value, Real):
        raise InputError(f"{label} must be a number, got {value!r}")
    value = float(value)
    if not math.isfinite(value) or value < 0.0 or (value == 0.0 and not allow_zero):
        raise InputError(f"{label} must be finite and {'>=' if allow_zero else '>'} 0, got {value!r}")
    return value


def _seed(seed, label: str) -> int:
    if isinstance(seed, bool) or not isinstance(seed, Integral) or seed < 0:
        raise InputError(f"{label}: seed must be a non-negative integer, got {seed!r}")
    return int(seed)


def _steps(duration, dt, label: str) -> int:
    duration = _positive(duration, f"{label}: duration (s)")
    dt = _positive(dt, f"{label}: dt (s)")
    n = int(round(duration / dt)) + 1
    if n < 8:
        raise InputError(f"{label}: duration {duration:g} s gives only {n} steps of {dt:g} s")
    return n


# --------------------------------------------------------------------------- envelopes


@dataclass(frozen=True)
class SaragoniHart:
    """Saragoni-Hart envelope ``(t / t_peak)^shape exp(shape (1 - t / t_peak))``.

    The form a t^b exp(-c t) of Saragoni and Hart (1974), normalised to a
    peak of 1 at ``t_peak`` (s); ``shape`` is the exponent b (c = b / t_peak).
    """

    t_peak: float
    shape: float = 2.0

    def __post_init__(self):
        _positive(self.t_peak, "Saragoni-Hart envelope: t_peak (s)")
        _positive(self.shape, "Saragoni-Hart envelope: shape")

    def __call__(self, t) -> np.ndarray:
        x = np.asarray(t, dtype=np.float64) / self.t_peak
        return x**self.shape * np.exp(self.shape * (1.0 - x))

    def describe(self) -> str:
        return f"Saragoni-Hart envelope (t_peak {self.t_peak:g} s, b {self.shape:g})"


@dataclass(frozen=True)
class JenningsHousnerTsai:
    """Jennings-Housner-Tsai (1968) envelope: (t / rise)^2, then 1, then exp(-decay (t - strong_end)).

    ``rise`` and ``strong_end`` in s (``rise <= strong_end``), ``decay`` in 1/s.
    """

    rise: float
    strong_end: float
    decay: float

    def __post_init__(self):
        _positive(self.rise, "Jennings-Housner-Tsai envelope: rise (s)")
        _positive(self.decay, "Jennings-Housner-Tsai envelope: decay (1/s)")
        if not self.strong_end >= self.rise:
            raise InputError("Jennings-Housner-Tsai envelope: strong_end must be >= rise, got "
                             f"{self.strong_end!r} < {self.rise!r}")

    def __call__(self, t) -> np.ndarray:
        t = np.asarray(t, dtype=np.float64)
        return np.where(t < self.rise, (t / self.rise) ** 2,
                        np.where(t <= self.strong_end, 1.0,
                                 np.exp(-self.decay * (t - self.strong_end))))

    def describe(self) -> str:
        return (f"Jennings-Housner-Tsai envelope (rise {self.rise:g} s, strong phase to "
                f"{self.strong_end:g} s, decay {self.decay:g} 1/s)")


@dataclass(frozen=True)
class Trapezoid:
    """Trapezoidal envelope: linear rise to 1 at ``rise``, 1 to ``strong_end``, linear to 0 at ``end`` (s)."""

    rise: float
    strong_end: float
    end: float

    def __post_init__(self):
        _positive(self.rise, "trapezoid envelope: rise (s)")
        if not self.rise <= self.strong_end < self.end:
            raise InputError("trapezoid envelope: need rise <= strong_end < end, got "
                             f"{self.rise!r}, {self.strong_end!r}, {self.end!r}")

    def __call__(self, t) -> np.ndarray:
        t = np.asarray(t, dtype=np.float64)
        return np.interp(t, [0.0, self.rise, self.strong_end, self.end], [0.0, 1.0, 1.0, 0.0])

    def describe(self) -> str:
        return (f"trapezoid envelope (rise to {self.rise:g} s, strong phase to "
                f"{self.strong_end:g} s, zero at {self.end:g} s)")


#: Envelope name -> class.
ENVELOPES = {
    "saragoni-hart": SaragoniHart,
    "jennings-housner-tsai": JenningsHousnerTsai,
    "trapezoid": Trapezoid,
}


def _envelope(envelope, label: str):
    if not callable(envelope):
        raise InputError(f"{label}: envelope must be one of {', '.join(ENVELOPES)} (an object), "
                         f"got {envelope!r}")
    return envelope


# --------------------------------------------------------------------------- Kanai-Tajimi


def _filter_parameters(wg, zg, wf, zf, label: str):
    wg = _positive(wg, f"{label}: wg (rad/s)")
    zg = _positive(zg, f"{label}: zg")
    if (wf is None) != (zf is None):
        raise InputError(f"{label}: give both wf and zf for the Clough-Penzien filter, or neither")
    if wf is not None:
        wf = _positive(wf, f"{label}: wf (rad/s)")
        zf = _positive(zf, f"{label}: zf")
    return wg, zg, wf, zf


def kanai_tajimi_psd(omega, s0, wg, zg, wf=None, zf=None) -> np.ndarray:
    """Two-sided power spectral density of Kanai-Tajimi (Clough-Penzien) ground acceleration.

    Parameters
    ----------
    omega : array_like
        Circular frequencies, rad/s.
    s0 : float
        Two-sided PSD of the driving white noise (autocorrelation
        2 pi S0 delta(tau)), (acceleration units)^2 s / rad.
    wg, zg : float
        Ground filter frequency (rad/s) and damping ratio (Kanai 1957, Tajimi 1960).
    wf, zf : float, optional
        Clough-Penzien second filter frequency (rad/s) and damping ratio.

    Returns
    -------
    numpy.ndarray
        S(omega), same shape as ``omega``: S0 (wg^4 + 4 zg^2 wg^2 w^2) /
        ((wg^2 - w^2)^2 + 4 zg^2 wg^2 w^2), times w^4 / ((wf^2 - w^2)^2 +
        4 zf^2 wf^2 w^2) with the second filter.
    """
    wg, zg, wf, zf = _filter_parameters(wg, zg, wf, zf, "Kanai-Tajimi PSD")
    s0 = _positive(s0, "Kanai-Tajimi PSD: s0", allow_zero=True)
    w2 = np.asarray(omega, dtype=np.float64) ** 2
    cross = 4.0 * zg**2 * wg**2 * w2
    out = s0 * (wg**4 + cross) / ((wg**2 - w2) ** 2 + cross)
    if wf is not None:
        out = out * w2**2 / ((wf**2 - w2) ** 2 + 4.0 * zf**2 * wf**2 * w2)
    return out


def _state_space(wg, zg, wf, zf):
    """(A, B, C) of the filter chain; state [x_g, v_g] or [x_g, v_g, x_f, v_f], output acceleration."""
    kg, cg = wg**2, 2.0 * zg * wg
    if wf is None:
        A = np.array([[0.0, 1.0], [-kg, -cg]])
        B = np.array([0.0, -1.0])
        C = np.array([-kg, -cg])
        return A, B, C
    kf, cf = wf**2, 2.0 * zf * wf
    A = np.array([
        [0.0, 1.0, 0.0, 0.0],
        [-kg, -cg, 0.0, 0.0],
        [0.0, 0.0, 0.0, 1.0],
        [-kg, -cg, -kf, -cf],   # the second filter is driven by the ground filter's output
    ])
    B = np.array([0.0, -1.0, 0.0, 0.0])
    C = np.array([-kg, -cg, -kf, -cf])
    return A, B, C


def _covariance_root(Q: np.ndarray) -> np.ndarray:
    """A matrix L with L L^T = Q for a symmetric positive semi-definite Q."""
    values, vectors = np.linalg.eigh(0.5 * (Q + Q.T))
    return vectors * np.sqrt(np.clip(values, 0.0, None))


def stationary_kanai_tajimi(n_steps, dt, wg, zg, *, wf=None, zf=None, s0=1.0, seed) -> np.ndarray:
    """Samples of stationary Kanai-Tajimi (optionally Clough-Penzien) filtered white noise.

    Parameters
    ----------
    n_steps : int
        Number of samples.
    dt : float
        Time step, s.
    wg, zg, wf, zf : float
        Filter parameters as in :func:`kanai_tajimi_psd`.
    s0 : float, optional
        Two-sided PSD of the driving white noise; the result is in the
        matching acceleration units.
    seed : int
        Seed of ``numpy.random.default_rng``.

    Returns
    -------
    numpy.ndarray, shape (n_steps,)
        Acceleration samples whose autocovariance equals that of the continuous
        process at the sample times (covariance-equivalent discretisation,
        see the module docstring).
    """
    label = "Kanai-Tajimi motion"
    wg, zg, wf, zf = _filter_parameters(wg, zg, wf, zf, label)
    dt = _positive(dt, f"{label}: dt (s)")
    s0 = _positive(s0, f"{label}: s0", allow_zero=True)
    if isinstance(n_steps, bool) or not isinstance(n_steps, Integral) or n_steps < 1:
        raise InputError(f"{label}: n_steps must be a positive integer, got {n_steps!r}")
    rng = np.random.default_rng(_seed(seed, label))

    A, B, C = _state_space(wg, zg, wf, zf)
    n = A.shape[0]
    BqB = 2.0 * math.pi * s0 * np.outer(B, B)
    # Van Loan (1978): one exponential gives Phi = expm(A dt) and the step covariance Qd.
    M = np.zeros((2 * n, 2 * n))
    M[:n, :n] = -A
    M[:n, n:] = BqB
    M[n:, n:] = A.T
    E = scipy.linalg.expm(M * dt)
    Phi = E[n:, n:].T
    Qd = Phi @ E[:n, n:]
    P = scipy.linalg.solve_continuous_lyapunov(A, -BqB)

    z = rng.standard_normal((n_steps, n))
    noise = z @ _covariance_root(Qd).T
    x = np.empty((n_steps, n))
    x[0] = _covariance_root(P) @ z[0]
    for k in range(n_steps - 1):
        x[k + 1] = Phi @ x[k] + noise[k]
    return x @ C


# --------------------------------------------------------------------------- processing


def polynomial_baseline(acceleration, dt, degree: int = 5, *, end_at_rest: bool = True) -> np.ndarray:
    """Remove a polynomial baseline fitted to the displacement.

    The acceleration is integrated twice from rest (trapezoidal rule); the
    polynomial c2 t^2 + ... + c_degree t^degree that best fits that
    displacement in the least-squares sense is found, and its second
    derivative is subtracted from the acceleration (common practice). With
    ``end_at_rest`` the fit is constrained so that the corrected velocity and
    displacement are zero at the last sample (equality-constrained least
    squares, solved through its KKT system). The fit uses the second
    derivatives integrated back by the same rule, so the corrected
    displacement is exactly the (constrained) least-squares residual.

    This works on a plain array inside the generators; for records see also
    :func:`simulate.excitation.processing.baseline_correct`.

    Parameters
    ----------
    acceleration : array_like, shape (n_steps,)
    dt : float
        Time step, s.
    degree : int, optional
        Highest power of the displacement polynomial (>= 2, >= 3 with
        ``end_at_rest``). Degree 2 removes a constant from the acceleration,
        degree 3 a straight line.
    end_at_rest : bool, optional
        Make the record end with zero velocity and displacement.

    Returns
    -------
    numpy.ndarray, shape (n_steps,)
        The corrected acceleration (same units).
    """
    a = np.asarray(acceleration, dtype=np.float64)
    dt = _positive(dt, "baseline correction: dt (s)")
    least = 3 if end_at_rest else 2
    if isinstance(degree, bool) or not isinstance(degree, Integral) or degree < least:
        raise InputError(f"baseline correction: degree must be an integer >= {least}, got {degree!r}")
    n = a.shape[0]
    # scaled time keeps the least-squares problem well conditioned
    tau = np.arange(n) / (n - 1)
    powers = np.arange(2, degree + 1)
    # acceleration shapes of the displacement terms tau^k, and those shapes integrated twice
    # by the same rule as the record, so the fit removes exactly what it subtracts
    shapes = powers * (powers - 1) * tau[:, None] ** (powers - 2) / ((n - 1) * dt) ** 2
    v, d = _integrals(a, dt)
    basis_v, basis = _integrals(shapes, dt)
    if not end_at_rest:
        coef = np.linalg.lstsq(basis, d, rcond=None)[0]
        return a - shapes @ coef
    # minimise |d - basis c|^2 subject to basis_v[-1] c = v[-1] and basis[-1] c = d[-1]
    m = powers.size
    G = np.vstack([basis_v[-1], basis[-1]])
    kkt = np.zeros((m + 2, m + 2))
    kkt[:m, :m] = basis.T @ basis
    kkt[:m, m:] = G.T
    kkt[m:, :m] = G
    rhs = np.concatenate([basis.T @ d, [v[-1], d[-1]]])
    coef = np.linalg.lstsq(kkt, rhs, rcond=None)[0][:m]
    return a - shapes @ coef


def _integrals(a: np.ndarray, dt: float) -> tuple[np.ndarray, np.ndarray]:
    """Trapezoidal velocity and displacement from rest of acceleration ``a`` (along axis 0)."""
    zero = np.zeros((1,) + a.shape[1:])
    v = np.concatenate((zero, np.cumsum(0.5 * (a[1:] + a[:-1]) * dt, axis=0)))
    d = np.concatenate((zero, np.cumsum(0.5 * (v[1:] + v[:-1]) * dt, axis=0)))
    return v, d


def kanai_tajimi_record(duration, dt=0.01, *, wg, zg, wf=None, zf=None, envelope,
                        pga=None, s0=None, seed, name="kanai-tajimi", baseline_degree=5) -> Record:
    """A nonstationary synthetic record: Kanai-Tajimi (Clough-Penzien) noise times an envelope.

    Parameters
    ----------
    duration : float
        Length, s (the record has ``round(duration / dt) + 1`` samples).
    dt : float, optional
        Time step, s.
    wg, zg, wf, zf : float
        Filter parameters (rad/s and ratios), see :func:`kanai_tajimi_psd`.
    envelope : callable
        Time envelope, e.g. :class:`SaragoniHart`, :class:`JenningsHousnerTsai`
        or :class:`Trapezoid`.
    pga : float, optional
        Peak ground acceleration of the result, g. Give ``pga`` or ``s0``.
    s0 : float, optional
        White-noise intensity, (m/s^2)^2 s/rad; the record is then not rescaled.
    seed : int
        Seed of ``numpy.random.default_rng``.
    name : str, optional
        Record name.
    baseline_degree : int, optional
        Degree of :func:`polynomial_baseline`.

    Returns
    -------
    Record
        In g, with the generator and its parameters in ``metadata``.
    """
    label = f"synthetic record '{name}'"
    if (pga is None) == (s0 is None):
        raise InputError(f"{label}: give exactly one of pga (g) or s0")
    if pga is not None:
        pga = _positive(pga, f"{label}: pga (g)")
    n = _steps(duration, dt, label)
    envelope = _envelope(envelope, label)
    t = np.arange(n) * dt
    intensity = 1.0 if s0 is None else _positive(s0, f"{label}: s0", allow_zero=True)
    stationary = stationary_kanai_tajimi(n, dt, wg, zg, wf=wf, zf=zf, s0=intensity, seed=seed)
    motion = polynomial_baseline(stationary * envelope(t), dt, baseline_degree) / STANDARD_GRAVITY
    if pga is not None:
        motion = motion * (pga / np.max(np.abs(motion)))
    method = "Kanai-Tajimi" + (" + Clough-Penzien" if wf is not None else "")
    metadata = {
        "source": f"synthetic:{method}",
        "generator": "simulate.excitation.synthetic.kanai_tajimi_record",
        "method": f"{method} filtered white noise (covariance-equivalent discretisation), "
                  f"{envelope.describe() if hasattr(envelope, 'describe') else 'envelope'}, "
                  f"baseline polynomial degree {baseline_degree} on displacement, ending at rest",
        "seed": int(seed),
        "wg": float(wg), "zg": float(zg),
        "caution": SYNTHETIC_CAUTION,
    }
    if wf is not None:
        metadata.update(wf=float(wf), zf=float(zf))
    return Record(acceleration=motion, dt=float(dt), units="g", name=name, metadata=metadata)


# --------------------------------------------------------------------------- spectrum matching


def spectrum_compatible(target, duration, dt=0.01, *, band=(0.1, 3.0), envelope, seed,
                        tolerance=0.10, max_iterations=30, stationary_iterations=8,
                        n_periods=200, damping=None, filter=None, name="spectrum-compatible",
                        baseline_degree=5) -> Record:
    """A synthetic record whose response spectrum matches ``target`` over ``band``.

    Iterative adjustment of Fourier amplitudes (Gasparini and Vanmarcke 1976):

    1. Seeded stationary noise (white, or Kanai-Tajimi filtered with
       ``filter=(wg, zg)``) is multiplied by the envelope and baseline
       corrected.
    2. The pseudo-acceleration response spectrum is computed at ``n_periods``
       log-spaced periods over ``band`` with
       :func:`simulate.excitation.spectra.response_spectrum`, and the ratio
       target / computed is formed.
    3. The Fourier amplitudes are multiplied by that ratio, interpolated in
       log period at each frequency f (period 1/f; held at the band's end
       values outside the band), keeping the phases. For the first
       ``stationary_iterations`` iterations the correction acts on the
       stationary noise and the envelope is re-applied (the original
       scheme); after them it acts on the enveloped motion itself, zero-padded
       to twice its length so the correction does not wrap around (this
       converges further, because the envelope no longer spreads each
       correction over neighbouring frequencies; the correction is a smooth
       zero-phase filter and keeps the time envelope). Every iterate is
       baseline corrected.
    4. Stop when the largest relative deviation |Sa / target - 1| over the
       ``n_periods`` periods is at most ``tolerance``, or after
       ``max_iterations`` corrections; the iterate with the smallest deviation
       is returned. Its deviation is then measured again on a grid four times
       denser (``4 (n_periods - 1) + 1`` log-spaced periods over the band),
       reported as ``max_deviation``, and a warning is issued if it is above
       ``tolerance``.

    Parameters
    ----------
    target : simulate.excitation.targets.Target or callable
        Sa(T) in g for an array of periods in s.
    duration, dt : float
        Length and time step, s.
    band : (float, float)
        Periods (s) where the spectrum is matched.
    envelope : callable
        Time envelope (:class:`SaragoniHart`, :class:`JenningsHousnerTsai`,
        :class:`Trapezoid`).
    seed : int
        Seed of ``numpy.random.default_rng``.
    tolerance : float, optional
        Wanted largest relative deviation over the matching periods.
    max_iterations : int, optional
        Upper limit on the number of corrections.
    stationary_iterations : int, optional
        Corrections of the stationary noise before those of the motion itself.
    n_periods : int, optional
        Number of log-spaced matching periods over the band (both ends included).
    damping : float, optional
        Damping ratio of the spectra; default the target's ``damping`` (0.05).
    filter : (float, float), optional
        ``(wg, zg)`` of a Kanai-Tajimi filter for the starting noise.
    name : str, optional
        Record name.
    baseline_degree : int, optional
        Degree of :func:`polynomial_baseline`.

    Returns
    -------
    Record
        In g. ``metadata`` holds ``iterations`` (corrections made before the
        returned iterate), ``max_deviation`` (its largest relative deviation
        over the band, on the denser grid of step 4), ``band``, ``n_periods``, ``tolerance``,
        ``seed`` and the target's description.

    References
    ----------
    D. A. Gasparini and E. H. Vanmarcke (1976), Simulated earthquake motions
    compatible with prescribed response spectra, MIT report R76-4.
    """
    from simulate.excitation.spectra import response_spectrum

    label = f"spectrum-compatible record '{name}'"
    n = _steps(duration, dt, label)
    envelope = _envelope(envelope, label)
    try:
        low, high = (float(v) for v in band)
    except (TypeError, ValueError):
        raise InputError(f"{label}: band must be two periods (s), got {band!r}") from None
    if not (0.0 < low < high and math.isfinite(high)):
        raise InputError(f"{label}: band must be two increasing periods > 0 s, got {band!r}")
    if low < 2.0 * dt:
        raise InputError(f"{label}: band starts at {low:g} s, below twice the time step "
                         f"({2 * dt:g} s)")
    tolerance = _positive(tolerance, f"{label}: tolerance")
    for key, value, least in (("max_iterations", max_iterations, 0),
                              ("stationary_iterations", stationary_iterations, 0),
                              ("n_periods", n_periods, 2)):
        if isinstance(value, bool) or not isinstance(value, Integral) or value < least:
            raise InputError(f"{label}: {key} must be an integer >= {least}, got {value!r}")
    if damping is None:
        damping = getattr(target, "damping", 0.05)
    damping = _positive(damping, f"{label}: damping")

    periods = np.geomspace(low, high, n_periods)
    wanted = np.asarray(target(periods), dtype=np.float64)
    if not np.all(np.isfinite(wanted) & (wanted > 0.0)):
        raise InputError(f"{label}: the target spectrum must be finite and > 0 over the band")
    seed = _seed(seed, label)

    if filter is None:
        stationary = np.random.default_rng(seed).standard_normal(n)
        start = "white noise"
    else:
        wg, zg = filter
        stationary = stationary_kanai_tajimi(n, dt, wg, zg, seed=seed)
        start = f"Kanai-Tajimi noise (wg {wg:g} rad/s, zg {zg:g})"
    shape = envelope(np.arange(n) * dt)
    log_periods = np.log(periods)
    fade = np.array([1.0 / (2.5 * high), 1.0 / (1.25 * high)])

    def gain(n_fft, ratio):
        """Correction factor at each FFT frequency of a length-n_fft signal (0 at f = 0)."""
        frequency = np.fft.rfftfreq(n_fft, dt)
        log_period = np.full(frequency.shape, np.inf)
        log_period[1:] = -np.log(frequency[1:])
        out = np.interp(log_period, log_periods, ratio)
        # Below the band's lowest frequency the content fades out (half-cosine from 1/(1.25 Tb)
        # to 1/(2.5 Tb), none below): long-period noise would only add baseline drift.
        x = np.clip((frequency - fade[0]) / (fade[1] - fade[0]), 0.0, 1.0)
        out *= 0.5 * (1.0 - np.cos(np.pi * x))
        return out

    motion = polynomial_baseline(stationary * shape, dt, baseline_degree)
    best, best_deviation, best_iteration = motion, math.inf, 0
    for iteration in range(max_iterations + 1):
        record = Record(acceleration=motion, dt=dt, units="g", name=name)
        computed = response_spectrum([record], periods, damping=damping)["psa"].values.reshape(-1)
        deviation = float(np.max(np.abs(computed / wanted - 1.0)))
        if deviation < best_deviation:
            best, best_deviation, best_iteration = motion, deviation, iteration
        if deviation <= tolerance or iteration == max_iterations:
            break
        ratio = wanted / computed
        if iteration < stationary_iterations:
            stationary = np.fft.irfft(np.fft.rfft(stationary) * gain(n, ratio), n)
            motion = stationary * shape
        else:
            motion = np.fft.irfft(np.fft.rfft(motion, 2 * n) * gain(2 * n, ratio), 2 * n)[:n]
        motion = polynomial_baseline(motion, dt, baseline_degree)
    # The reported deviation is measured on a grid four times denser than the matching
    # periods (it contains them), so narrow dips between matching periods are not missed.
    dense = np.geomspace(low, high, 4 * (n_periods - 1) + 1)
    record = Record(acceleration=best, dt=dt, units="g", name=name)
    computed = response_spectrum([record], dense, damping=damping)["psa"].values.reshape(-1)
    best_deviation = max(best_deviation,
                         float(np.max(np.abs(computed / np.asarray(target(dense)) - 1.0))))
    if best_deviation > tolerance:
        warnings.warn(
            f"{label}: largest deviation from the target over {low:g}-{high:g} s is "
            f"{100 * best_deviation:.1f} % after {max_iterations} iterations "
            f"(asked {100 * tolerance:g} %)",
            stacklevel=2,
        )
    metadata = {
        "source": "synthetic:spectrum-compatible",
        "generator": "simulate.excitation.synthetic.spectrum_compatible",
        "method": f"Gasparini-Vanmarcke Fourier amplitude iteration from seeded {start}, "
                  f"{envelope.describe() if hasattr(envelope, 'describe') else 'envelope'}, "
                  f"baseline polynomial degree {baseline_degree} on displacement, ending at rest",
        "target": getattr(target, "label", repr(target)),
        "seed": seed,
        "band": (low, high),
        "n_periods": int(n_periods),
        "damping": damping,
        "tolerance": tolerance,
        "iterations": best_iteration,
        "max_deviation": best_deviation,
        "caution": SYNTHETIC_CAUTION,
    }
    return Record(acceleration=best, dt=float(dt), units="g", name=name, metadata=metadata)
