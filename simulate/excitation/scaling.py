"""Amplitude scaling of ground-motion records to a target spectrum.

Two ways of choosing the factors, registered in :data:`SCALING_METHODS`:

``"sa-t1"``
    Scale to the target at one period T1: factor = target Sa(T1) / record
    Sa(T1) per record, or one factor for the suite that brings the suite's
    mean Sa(T1) to the target.
``"spectrum"``
    Scale to the target over a period range [Ta, Tb], minimising the misfit of
    the log spectra, sum over the periods T_j of (ln target(T_j) - ln(f Sa(T_j)))^2.
    Its minimiser has a closed form: ln f is the mean of ln(target / Sa) over
    the periods (per record), or over the periods and all records (one factor
    for the suite).

Spectra are 5 %-damped (or the target's damping) pseudo-spectral accelerations
from :func:`simulate.excitation.spectra.response_spectrum`, on ``n_periods``
log-spaced periods over the range plus T1.

Optional factor limits (min, max) clip the factors; every clipped factor is
listed in the report's warnings.

The report (:class:`ScalingReport`) holds each record's factor, the scaled
suite's mean spectrum against the target, and the check common in building
codes that the suite mean is not below ``ratio`` (default 0.9) times the target
anywhere over the period range (default 0.2 T1 to 2 T1; ASCE/SEI 7-16 section
16.2.3, quoted from memory). The check is evaluated at the spectrum periods
(a dense log-spaced grid), not continuously. When it fails the report says at
which period, by how much, and the extra factor on the whole suite that would
make it pass.

Caution
-------
The target, the period range, the acceptance ratio, the number of records
and the factor limits must come from the building code in force where the
structure stands and licensed professional practice. The defaults here are
placeholders for the user to set, not recommendations.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from numbers import Integral, Real

import numpy as np
import xarray as xr

from simulate.errors import InputError, RecordError
from simulate.excitation.record import Record
from simulate.excitation.targets import TARGET_CAUTION
from simulate.settings import CAUTION

__all__ = [
    "SCALING_METHODS",
    "ScalingReport",
    "scale_records",
    "scale_to_sa",
    "scale_to_spectrum",
    "sa_factor",
    "log_misfit_factor",
]

#: Scaling method name -> one-line description.
SCALING_METHODS = {
    "sa-t1": "match the target at the period T1",
    "spectrum": "least-squares fit of the log spectra over the period range",
}

#: Default check range as multiples of T1 (ASCE/SEI 7-16 16.2.3, from memory).
DEFAULT_RANGE_FACTORS = (0.2, 2.0)

#: Default acceptance ratio of the suite mean to the target (ASCE/SEI 7-16 16.2.3, from memory).
DEFAULT_RATIO = 0.9


def sa_factor(target_sa, record_sa) -> np.ndarray:
    """Factors that bring each record's Sa(T1) to the target: ``target_sa / record_sa``.

    Parameters
    ----------
    target_sa : float
        Target Sa(T1), g.
    record_sa : array_like, shape (R,)
        Each record's Sa(T1), g.
    """
    return float(target_sa) / np.asarray(record_sa, dtype=np.float64)


def log_misfit_factor(target_sa, record_sa, *, per_record: bool = True):
    """Scale factor(s) minimising the squared misfit of the log spectra.

    For one record the misfit sum_j (ln t_j - ln f - ln s_j)^2 is a parabola
    in ln f with its minimum at ln f = mean_j ln(t_j / s_j).

    Parameters
    ----------
    target_sa : array_like, shape (P,)
        Target Sa at the fitting periods, g.
    record_sa : array_like, shape (R, P)
        Record spectra at the same periods, g.
    per_record : bool, optional
        One factor per record (shape (R,)), else one factor for all records
        (mean over records and periods; returned as a float).
    """
    log_ratio = np.log(np.asarray(target_sa, dtype=np.float64)) - np.log(
        np.asarray(record_sa, dtype=np.float64))
    if per_record:
        return np.exp(log_ratio.mean(axis=-1))
    return float(np.exp(log_ratio.mean()))


@dataclass(frozen=True)
class ScalingReport:
    """What :func:`scale_records` did and how the scaled suite compares with the target.

    Attributes
    ----------
    method : str
        ``"sa-t1"`` or ``"spectrum"``.
    per_record : bool
        One factor per record, else one factor for the suite.
    target : str
        The target's description.
    period : float
        T1, s.
    period_range : (float, float)
        Fitting (``"spectrum"``) and checking range, s.
    ratio : float
        Acceptance ratio of the check.
    damping : float
        Damping ratio of the spectra.
    names : tuple of str
        Record names, in order.
    factors : numpy.ndarray, shape (R,)
        Scale factors applied.
    unclipped : numpy.ndarray, shape (R,)
        Factors before the limits.
    periods : numpy.ndarray, shape (P,)
        Spectrum periods, s (the range grid and T1).
    target_sa : numpy.ndarray, shape (P,)
        Target Sa, g.
    record_sa : numpy.ndarray, shape (R, P)
        Unscaled record spectra (pseudo-acceleration), g.
    mean_sa : numpy.ndarray, shape (P,)
        Arithmetic mean of the scaled spectra, g.
    passed : bool
        Whether mean_sa >= ratio * target_sa at every period in the range.
    lowest_ratio : float
        Smallest mean_sa / target_sa over the range.
    lowest_period : float
        Where that smallest ratio occurs, s.
    extra_factor : float
        Factor on every scaled record that makes the check pass
        (``ratio / lowest_ratio``; 1.0 when it passes).
    warnings : tuple of str
        Factors clipped by the limits, and similar notes.
    caution : str
        The target caution and the general caution.
    """

    method: str
    per_record: bool
    target: str
    period: float
    period_range: tuple
    ratio: float
    damping: float
    names: tuple
    factors: np.ndarray
    unclipped: np.ndarray
    periods: np.ndarray
    target_sa: np.ndarray
    record_sa: np.ndarray
    mean_sa: np.ndarray
    passed: bool
    lowest_ratio: float
    lowest_period: float
    extra_factor: float
    limits: tuple = (None, None)
    warnings: tuple = field(default_factory=tuple)
    caution: str = f"{TARGET_CAUTION} {CAUTION}"

    @property
    def in_range(self) -> np.ndarray:
        """Boolean mask of the periods inside the check range, shape (P,)."""
        low, high = self.period_range
        return (self.periods >= low * (1 - 1e-12)) & (self.periods <= high * (1 + 1e-12))

    @property
    def shortfall(self) -> float:
        """How far below ``ratio`` the lowest mean / target is (0 when the check passes)."""
        return max(0.0, self.ratio - self.lowest_ratio)

    def check_text(self) -> str:
        """One sentence: the check and its result."""
        low, high = self.period_range
        head = (f"suite mean >= {self.ratio:g} x target from {low:.3g} s to {high:.3g} s: ")
        lowest = (f"lowest mean/target {self.lowest_ratio:.3f} at {self.lowest_period:.3g} s")
        if self.passed:
            return head + f"passed ({lowest})"
        return (head + f"FAILED ({lowest}, {100 * self.shortfall:.1f} % of the target short); "
                f"multiplying every factor by {self.extra_factor:.4f} would pass")

    def to_dataset(self) -> xr.Dataset:
        """The report as an ``xarray.Dataset`` with dims ``record`` and ``period``."""
        scaled = self.record_sa * self.factors[:, None]
        low, high = self.period_range
        attrs = {
            "title": "swaysim record scaling report",
            "method": self.method,
            "method_description": SCALING_METHODS[self.method],
            "factors": "one per record" if self.per_record else "one for the suite",
            "target": self.target,
            "period_t1": self.period,
            "range_low": low,
            "range_high": high,
            "ratio": self.ratio,
            "damping": self.damping,
            "check": self.check_text(),
            "passed": int(self.passed),
            "lowest_ratio": self.lowest_ratio,
            "lowest_period": self.lowest_period,
            "extra_factor": self.extra_factor,
            "warnings": "; ".join(self.warnings),
            "caution": self.caution,
        }
        return xr.Dataset(
            {
                "scale_factor": ("record", self.factors, {"units": "1"}),
                "unclipped_scale_factor": ("record", self.unclipped, {"units": "1"}),
                "record_psa": (("record", "period"), self.record_sa,
                               {"units": "g", "long_name": "pseudo-spectral acceleration, unscaled"}),
                "scaled_psa": (("record", "period"), scaled,
                               {"units": "g", "long_name": "pseudo-spectral acceleration, scaled"}),
                "suite_mean_psa": ("period", self.mean_sa,
                                   {"units": "g", "long_name": "mean of the scaled spectra"}),
                "target_sa": ("period", self.target_sa, {"units": "g", "long_name": "target spectrum"}),
                "mean_to_target": ("period", self.mean_sa / self.target_sa, {"units": "1"}),
                "in_check_range": ("period", self.in_range),
            },
            coords={
                "record": ("record", np.asarray(self.names, dtype=object)),
                "period": ("period", self.periods, {"units": "s"}),
            },
            attrs=attrs,
        )


def _number(value, label: str) -> float:
    if isinstance(value, bool) or not isinstance(value, Real) or not math.isfinite(value):
        raise InputError(f"{label} must be a finite number, got {value!r}")
    return float(value)


def _check_records(records) -> list[Record]:
    if isinstance(records, Record):
        records = [records]
    records = list(records)
    if not records:
        raise InputError("scaling: no records given")
    for i, rec in enumerate(records):
        if not isinstance(rec, Record):
            raise InputError(f"scaling: item {i} is a {type(rec).__name__}, not a Record")
    return records


def _check_limits(limits) -> tuple:
    if limits is None:
        return (None, None)
    try:
        low, high = limits
    except (TypeError, ValueError):
        raise InputError(f"scaling: limits must be (min, max), got {limits!r}") from None
    low = None if low is None else _number(low, "scaling: lower factor limit")
    high = None if high is None else _number(high, "scaling: upper factor limit")
    if (low is not None and low <= 0.0) or (high is not None and high <= 0.0):
        raise InputError(f"scaling: factor limits must be > 0, got {limits!r}")
    if low is not None and high is not None and low > high:
        raise InputError(f"scaling: lower factor limit {low:g} is above the upper {high:g}")
    return (low, high)


def scale_records(records, target, period, *, method="spectrum", per_record=True,
                  period_range=None, ratio=DEFAULT_RATIO, limits=None, damping=None,
                  n_periods=100):
    """Scale records to a target spectrum and check the scaled suite mean.

    Parameters
    ----------
    records : Record or sequence of Record
        The suite.
    target : simulate.excitation.targets.Target
        Target spectrum (Sa in g at periods in s); its ``damping`` is used for
        the record spectra unless ``damping`` is given.
    period : float
        T1, the fundamental period of the structure, s.
    method : {"sa-t1", "spectrum"}, optional
        See :data:`SCALING_METHODS` and the module docstring.
    per_record : bool, optional
        One factor per record (default) or one factor for the whole suite.
    period_range : (float, float), optional
        Range for the fit (``"spectrum"``) and the check, s. Default
        (0.2 T1, 2.0 T1).
    ratio : float, optional
        The suite mean must not fall below ``ratio`` times the target over
        the range (default 0.9).
    limits : (float or None, float or None), optional
        Smallest and largest allowed factor; factors outside are clipped and
        a warning is added to the report.
    damping : float, optional
        Damping ratio of the record spectra (default: the target's).
    n_periods : int, optional
        Number of log-spaced spectrum periods over the range (T1 is added).

    Returns
    -------
    (list of Record, ScalingReport)
        The scaled records (``Record.scaled``, so the factor is kept in each
        record's provenance) and the report.

    Raises
    ------
    simulate.errors.InputError
        For bad options, a period outside the target's range, or a record
        whose spectrum is zero in the range (``RecordError``, naming it).

    Notes
    -----
    The target, the range, the ratio and the limits must come from the
    building code in force and licensed practice (see the report's caution).

    References
    ----------
    ASCE/SEI 7-16, section 16.2.3 (amplitude scaling of ground motions; the
    0.9 ratio and the 0.2 T to 2 T range are quoted from memory).
    """
    from simulate.excitation.spectra import response_spectrum

    records = _check_records(records)
    if method not in SCALING_METHODS:
        raise InputError(f"scaling: unknown method {method!r} (known: {', '.join(SCALING_METHODS)})")
    period = _number(period, "scaling: period T1 (s)")
    if period <= 0.0:
        raise InputError(f"scaling: period T1 must be > 0 s, got {period:g}")
    if period_range is None:
        period_range = (DEFAULT_RANGE_FACTORS[0] * period, DEFAULT_RANGE_FACTORS[1] * period)
    try:
        low, high = (_number(v, "scaling: period range (s)") for v in period_range)
    except (TypeError, ValueError):
        raise InputError(f"scaling: period range must be two periods (s), got {period_range!r}") from None
    if not 0.0 < low < high:
        raise InputError(f"scaling: period range must be two increasing periods > 0 s, "
                         f"got {low:g} to {high:g}")
    ratio = _number(ratio, "scaling: ratio")
    if not 0.0 < ratio:
        raise InputError(f"scaling: ratio must be > 0, got {ratio:g}")
    lo_limit, hi_limit = _check_limits(limits)
    if isinstance(n_periods, bool) or not isinstance(n_periods, Integral) or n_periods < 2:
        raise InputError(f"scaling: n_periods must be an integer >= 2, got {n_periods!r}")
    if damping is None:
        damping = getattr(target, "damping", 0.05)
    damping = _number(damping, "scaling: damping")

    grid = np.geomspace(low, high, int(n_periods))
    periods = np.unique(np.concatenate([grid, [period]]))
    target_sa = np.asarray(target(periods), dtype=np.float64)
    spectra = response_spectrum(records, periods, damping=damping)
    record_sa = np.ascontiguousarray(spectra["psa"].values, dtype=np.float64)
    names = tuple(rec.name for rec in records)

    in_range = (periods >= low) & (periods <= high)
    i1 = int(np.flatnonzero(periods == period)[0])
    fit_columns = in_range if method == "spectrum" else np.zeros_like(in_range)
    fit_columns[i1] = fit_columns[i1] or method == "sa-t1"
    for r, rec in enumerate(records):
        if not np.all(record_sa[r, fit_columns] > 0.0):
            raise RecordError(f"record '{rec.name}': its response spectrum is zero in the scaling "
                              "range; it cannot be scaled")

    if method == "sa-t1":
        if per_record:
            raw = sa_factor(target_sa[i1], record_sa[:, i1])
        else:
            raw = np.full(len(records), target_sa[i1] / record_sa[:, i1].mean())
    else:
        fitted = log_misfit_factor(target_sa[in_range], record_sa[:, in_range],
                                   per_record=per_record)
        raw = np.asarray(fitted, dtype=np.float64) if per_record else np.full(len(records), fitted)
    factors = np.clip(raw, lo_limit if lo_limit is not None else -np.inf,
                      hi_limit if hi_limit is not None else np.inf)
    notes = []
    for name, before, after in zip(names, raw, factors):
        if after != before:
            side = "upper" if after < before else "lower"
            who = f"record '{name}'" if per_record else "suite"
            notes.append(f"{who}: factor {before:.4g} clipped to the {side} limit {after:g}")
            if not per_record:
                break

    mean_sa = (record_sa * factors[:, None]).mean(axis=0)
    check = mean_sa[in_range] / target_sa[in_range]
    k = int(np.argmin(check))
    lowest = float(check[k])
    passed = bool(lowest >= ratio)
    report = ScalingReport(
        method=method, per_record=bool(per_record), target=getattr(target, "label", repr(target)),
        period=period, period_range=(low, high), ratio=ratio, damping=damping, names=names,
        factors=factors, unclipped=np.asarray(raw, dtype=np.float64), periods=periods,
        target_sa=target_sa, record_sa=record_sa, mean_sa=mean_sa, passed=passed,
        lowest_ratio=lowest, lowest_period=float(periods[in_range][k]),
        extra_factor=1.0 if passed else ratio / lowest, limits=(lo_limit, hi_limit),
        warnings=tuple(notes),
        caution=f"{getattr(target, 'caution', TARGET_CAUTION)} {CAUTION}",
    )
    scaled = [rec.scaled(float(f)) for rec, f in zip(records, factors)]
    return scaled, report


def scale_to_sa(records, target, period, **options):
    """:func:`scale_records` with ``method="sa-t1"``: factor = target Sa(T1) / record Sa(T1)."""
    return scale_records(records, target, period, method="sa-t1", **options)


def scale_to_spectrum(records, target, period, **options):
    """:func:`scale_records` with ``method="spectrum"``: least-squares fit of the log spectra."""
    return scale_records(records, target, period, method="spectrum", **options)
