"""Target spectra for record scaling and spectrum-compatible motions.

A target gives the 5 %-damped (or other damping) pseudo-spectral acceleration
Sa(T), in g, at an array of periods T, in s. Three kinds are registered in
:data:`TARGETS`:

* ``"asce7"`` - :class:`ASCE7Spectrum`, the two-parameter design response
  spectrum of ASCE/SEI 7-16, section 11.4.6 (S_DS, S_D1, T_L);
* ``"ec8"`` - :class:`EC8Spectrum`, the elastic horizontal response spectrum of
  EN 1998-1:2004, section 3.2.2.2 (a_g, ground type A-E, Type 1 or 2, damping);
* ``"file"`` - :class:`FileSpectrum`, a user spectrum read from a two-column
  text file (period s, Sa g), interpolated log-log.

Caution
-------
swaysim does not choose a target. The spectrum shape, its parameters (hazard
values, ground type, importance, damping) and any national choices must come
from the building code in force where the structure stands and from licensed
professional practice; every target carries that caution in ``.caution``.
"""

from __future__ import annotations

import inspect
import math
from numbers import Real
from pathlib import Path

import numpy as np

from simulate.files import read_input
from simulate.errors import InputError, where

__all__ = [
    "TARGET_CAUTION",
    "Target",
    "ASCE7Spectrum",
    "EC8Spectrum",
    "FileSpectrum",
    "TARGETS",
    "EC8_GROUND_TYPES",
    "make_target",
]

#: Caution carried by every target (``.caution``), printed by the command line and stored
#: in scaling reports.
TARGET_CAUTION = (
    "The target spectrum and its parameters (hazard values, ground type, importance, "
    "damping, period range, acceptance ratio) must come from the building code in force "
    "where the structure stands and from licensed professional practice; swaysim does "
    "not choose them and its defaults are not a recommendation."
)

#: EN 1998-1:2004 recommended parameters, ground type -> (S, T_B s, T_C s, T_D s), for the
#: Type 1 (Table 3.2) and Type 2 (Table 3.3) elastic horizontal spectra. Values quoted
#: from memory of the recommended values (National Annexes may set others).
EC8_GROUND_TYPES = {
    1: {
        "A": (1.00, 0.15, 0.40, 2.0),
        "B": (1.20, 0.15, 0.50, 2.0),
        "C": (1.15, 0.20, 0.60, 2.0),
        "D": (1.35, 0.20, 0.80, 2.0),
        "E": (1.40, 0.15, 0.50, 2.0),
    },
    2: {
        "A": (1.00, 0.05, 0.25, 1.2),
        "B": (1.35, 0.05, 0.25, 1.2),
        "C": (1.50, 0.10, 0.25, 1.2),
        "D": (1.80, 0.10, 0.30, 1.2),
        "E": (1.60, 0.05, 0.25, 1.2),
    },
}

#: Lower bound of the EC8 damping correction factor eta (EN 1998-1:2004, Eq. 3.6).
EC8_ETA_MIN = 0.55

#: Upper end of the EC8 elastic spectrum's Eq. 3.5 (EN 1998-1:2004, 3.2.2.2(1)P), s.
EC8_MAX_PERIOD = 4.0


def _number(value, label: str, *, positive: bool = True) -> float:
    """Return ``value`` as a finite float (> 0 if ``positive``), or raise naming ``label``."""
    if isinstance(value, bool) or not isinstance(value, Real):
        raise InputError(f"{label} must be a number, got {value!r}")
    value = float(value)
    if not math.isfinite(value) or (positive and value <= 0.0):
        raise InputError(f"{label} must be a finite number{' > 0' if positive else ''}, got {value!r}")
    return value


def _damping_ratio(value, label: str) -> float:
    value = _number(value, label)
    if value >= 1.0:
        raise InputError(f"{label} is a ratio (0.05 for 5 %), must be < 1, got {value!r}")
    return value


def _periods(periods, label: str) -> np.ndarray:
    """Return ``periods`` as a float64 array after checking they are finite and >= 0."""
    try:
        array = np.asarray(periods, dtype=np.float64)
    except (TypeError, ValueError):
        raise InputError(f"{label}: periods must be numbers of seconds, got {periods!r}") from None
    if not np.all(np.isfinite(array)) or np.any(array < 0.0):
        bad = array[~(np.isfinite(array) & (array >= 0.0))].ravel()[0]
        raise InputError(f"{label}: periods must be finite and >= 0 s, got {bad!r}")
    return array


def _result(values: np.ndarray, periods) -> np.ndarray | float:
    """A float for a scalar period, else the array."""
    return float(values) if np.ndim(periods) == 0 else values


class Target:
    """Base class of target spectra: ``target(periods)`` -> Sa in g.

    Subclasses set :attr:`name` (the key in :data:`TARGETS`), fill
    :attr:`parameters` and implement :meth:`_sa` on a float64 array of periods.

    Attributes
    ----------
    name : str
        Registry key.
    damping : float
        Viscous damping ratio the spectrum stands for (0.05 = 5 %). Record
        spectra are computed with this damping when scaled to the target.
    parameters : dict
        The parameters as given (for reports and provenance).
    caution : str
        :data:`TARGET_CAUTION`.
    """

    name = "target"
    caution = TARGET_CAUTION
    damping = 0.05

    def __init__(self):
        self.parameters: dict = {}

    def __call__(self, periods):
        """Pseudo-spectral acceleration Sa in g at ``periods`` (s; scalar or array)."""
        array = _periods(periods, self.label)
        return _result(self._sa(np.atleast_1d(array)).reshape(array.shape), periods)

    def sa(self, periods):
        """Same as calling the target."""
        return self(periods)

    @property
    def label(self) -> str:
        """Short description with the parameters, e.g. ``ASCE 7-16 (S_DS 1 g, ...)``."""
        return self.name

    @property
    def period_range(self) -> tuple[float, float]:
        """Periods (s) where the spectrum is defined, ``(low, high)``."""
        return (0.0, math.inf)

    def _sa(self, periods: np.ndarray) -> np.ndarray:  # pragma: no cover - abstract
        raise NotImplementedError

    def __repr__(self) -> str:
        return f"{type(self).__name__}({self.label})"


class ASCE7Spectrum(Target):
    """Design response spectrum of ASCE/SEI 7-16, section 11.4.6 (5 % damping).

    With T_0 = 0.2 S_D1 / S_DS and T_S = S_D1 / S_DS::

        Sa = S_DS (0.4 + 0.6 T / T_0)   for T < T_0            (Eq. 11.4-5)
        Sa = S_DS                       for T_0 <= T <= T_S
        Sa = S_D1 / T                   for T_S < T <= T_L      (Eq. 11.4-6)
        Sa = S_D1 T_L / T^2             for T > T_L             (Eq. 11.4-7)

    (equation numbers from memory).

    Parameters
    ----------
    sds : float
        Design spectral acceleration at short periods S_DS, g.
    sd1 : float
        Design spectral acceleration at 1 s S_D1, g.
    tl : float
        Long-period transition period T_L, s.

    Notes
    -----
    The hazard values, site class and the choice of this spectrum must come
    from the building code in force and licensed practice (:attr:`caution`).
    Later editions (ASCE/SEI 7-22) replace this shape by multi-period spectra.

    References
    ----------
    ASCE/SEI 7-16, Minimum Design Loads and Associated Criteria for Buildings
    and Other Structures, section 11.4.6 (Design response spectrum).
    """

    name = "asce7"

    def __init__(self, sds, sd1, tl):
        super().__init__()
        self.sds = _number(sds, "ASCE 7 target: S_DS (g)")
        self.sd1 = _number(sd1, "ASCE 7 target: S_D1 (g)")
        self.tl = _number(tl, "ASCE 7 target: T_L (s)")
        if self.tl < self.ts:
            raise InputError(
                f"ASCE 7 target: T_L = {self.tl:g} s is shorter than T_S = S_D1 / S_DS = "
                f"{self.ts:g} s; check S_DS, S_D1 and T_L"
            )
        self.parameters = {"sds": self.sds, "sd1": self.sd1, "tl": self.tl}

    @property
    def t0(self) -> float:
        """T_0 = 0.2 S_D1 / S_DS, s."""
        return 0.2 * self.sd1 / self.sds

    @property
    def ts(self) -> float:
        """T_S = S_D1 / S_DS, s."""
        return self.sd1 / self.sds

    @property
    def label(self) -> str:
        return (f"ASCE 7-16 11.4.6 design spectrum (S_DS {self.sds:g} g, S_D1 {self.sd1:g} g, "
                f"T_L {self.tl:g} s)")

    def _sa(self, T: np.ndarray) -> np.ndarray:
        sds, sd1, tl, t0, ts = self.sds, self.sd1, self.tl, self.t0, self.ts
        safe = np.where(T > 0.0, T, 1.0)
        return np.select(
            [T < t0, T <= ts, T <= tl],
            [sds * (0.4 + 0.6 * T / t0), np.full_like(T, sds), sd1 / safe],
            sd1 * tl / safe**2,
        )


class EC8Spectrum(Target):
    """Elastic horizontal response spectrum of EN 1998-1:2004, section 3.2.2.2.

    ::

        Se = a_g S [1 + T / T_B (2.5 eta - 1)]   0 <= T <= T_B    (Eq. 3.2)
        Se = a_g S eta 2.5                       T_B <= T <= T_C  (Eq. 3.3)
        Se = a_g S eta 2.5 T_C / T               T_C <= T <= T_D  (Eq. 3.4)
        Se = a_g S eta 2.5 T_C T_D / T^2         T_D <= T <= 4 s  (Eq. 3.5)

    with the damping correction eta = sqrt(10 / (5 + xi)) >= 0.55, xi the
    viscous damping in per cent (Eq. 3.6), and S, T_B, T_C, T_D of the ground
    type from Table 3.2 (Type 1) or Table 3.3 (Type 2), the recommended values
    (quoted from memory in :data:`EC8_GROUND_TYPES`).

    Parameters
    ----------
    ag : float
        Design ground acceleration on type A ground, a_g = gamma_I a_gR, in g.
    ground_type : {"A", "B", "C", "D", "E"}
        Ground type of Table 3.1.
    spectrum_type : {1, 2}
        Type 1 (larger earthquakes) or Type 2 (surface-wave magnitude not
        above 5.5), chosen by the National Annex.
    damping : float, optional
        Viscous damping ratio (0.05 = 5 %, eta = 1).
    extrapolate : bool, optional
        The standard states Eq. 3.5 up to 4 s. By default periods above 4 s
        raise :class:`~simulate.errors.InputError`; with ``True`` Eq. 3.5 is
        continued beyond 4 s (outside the standard).
    soil_factor, tb, tc, td : float, optional
        Override the table values (for example with National Annex values).

    References
    ----------
    EN 1998-1:2004, Eurocode 8: Design of structures for earthquake
    resistance, Part 1, section 3.2.2.2, Eq. 3.2-3.6, Tables 3.2 and 3.3.
    """

    name = "ec8"

    def __init__(self, ag, ground_type="C", spectrum_type=1, damping=0.05, *,
                 extrapolate=False, soil_factor=None, tb=None, tc=None, td=None):
        super().__init__()
        self.ag = _number(ag, "EC8 target: a_g (g)")
        try:
            kind = int(str(spectrum_type).strip().lower().removeprefix("type").strip())
        except ValueError:
            kind = None
        if kind not in EC8_GROUND_TYPES:
            raise InputError(f"EC8 target: spectrum type must be 1 or 2, got {spectrum_type!r}")
        ground = str(ground_type).strip().upper()
        if ground not in EC8_GROUND_TYPES[kind]:
            raise InputError(
                f"EC8 target: ground type must be one of A, B, C, D, E, got {ground_type!r}"
            )
        self.spectrum_type = kind
        self.ground_type = ground
        self.damping = _damping_ratio(damping, "EC8 target: damping")
        S, TB, TC, TD = EC8_GROUND_TYPES[kind][ground]
        self.soil_factor = S if soil_factor is None else _number(soil_factor, "EC8 target: S")
        self.tb = TB if tb is None else _number(tb, "EC8 target: T_B (s)")
        self.tc = TC if tc is None else _number(tc, "EC8 target: T_C (s)")
        self.td = TD if td is None else _number(td, "EC8 target: T_D (s)")
        if not self.tb < self.tc < self.td:
            raise InputError(
                f"EC8 target: corner periods must increase, got T_B {self.tb:g} s, "
                f"T_C {self.tc:g} s, T_D {self.td:g} s"
            )
        self.extrapolate = bool(extrapolate)
        self.parameters = {
            "ag": self.ag, "ground_type": ground, "spectrum_type": kind,
            "damping": self.damping, "soil_factor": self.soil_factor,
            "tb": self.tb, "tc": self.tc, "td": self.td,
        }

    @property
    def eta(self) -> float:
        """Damping correction factor sqrt(10 / (5 + xi)) >= 0.55, xi in per cent (Eq. 3.6)."""
        return max(math.sqrt(10.0 / (5.0 + 100.0 * self.damping)), EC8_ETA_MIN)

    @property
    def plateau(self) -> float:
        """a_g S eta 2.5, g (Eq. 3.3)."""
        return self.ag * self.soil_factor * self.eta * 2.5

    @property
    def period_range(self) -> tuple[float, float]:
        return (0.0, math.inf if self.extrapolate else EC8_MAX_PERIOD)

    @property
    def label(self) -> str:
        return (f"EN 1998-1 3.2.2.2 elastic spectrum, Type {self.spectrum_type}, ground type "
                f"{self.ground_type} (a_g {self.ag:g} g, S {self.soil_factor:g}, T_B {self.tb:g} s, "
                f"T_C {self.tc:g} s, T_D {self.td:g} s, damping {100 * self.damping:g} %)")

    def _sa(self, T: np.ndarray) -> np.ndarray:
        if not self.extrapolate and np.any(T > EC8_MAX_PERIOD):
            raise InputError(
                f"EC8 target: period {float(T.max()):g} s is above {EC8_MAX_PERIOD:g} s, the end "
                "of Eq. 3.5 in EN 1998-1 3.2.2.2; shorten the period range or allow extrapolation"
            )
        top = self.plateau
        tb, tc, td = self.tb, self.tc, self.td
        safe = np.where(T > 0.0, T, 1.0)
        return np.select(
            [T <= tb, T <= tc, T <= td],
            [self.ag * self.soil_factor * (1.0 + T / tb * (2.5 * self.eta - 1.0)),
             np.full_like(T, top), top * tc / safe],
            top * tc * td / safe**2,
        )


_COMMENT_PREFIXES = ("#", "%", "!", "//")
_SEPARATORS = str.maketrans({",": " ", ";": " "})


class FileSpectrum(Target):
    """A user target spectrum read from a text file.

    File format: blank lines and lines starting with ``#``, ``%``, ``!`` or
    ``//`` are comments; every other line holds two numbers, period (s) and
    Sa (g), separated by blanks, a comma or a semicolon. Periods must be
    strictly increasing; Sa must be > 0. A first row at period 0 (the peak
    ground acceleration) is allowed.

    Between points Sa is interpolated linearly in log(T)-log(Sa); between
    T = 0 and the first positive period, linearly in T and Sa. Outside the
    tabulated periods an :class:`~simulate.errors.InputError` is raised unless
    ``extrapolate=True``, which continues the first and last log-log segments
    (a power law); a period of 0 then takes the first tabulated value.

    Parameters
    ----------
    path : str or os.PathLike
        The spectrum file.
    damping : float, optional
        The damping ratio the spectrum stands for (0.05 = 5 %).
    extrapolate : bool, optional
        Allow periods outside the file's range.

    Raises
    ------
    simulate.errors.InputError
        For a missing file, unreadable lines, periods that do not increase,
        Sa <= 0, or fewer than two points; the message names the file and line.
    """

    name = "file"

    def __init__(self, path, damping=0.05, *, extrapolate=False):
        super().__init__()
        self.path = Path(path)
        self.damping = _damping_ratio(damping, f"{self.path}: damping")
        self.extrapolate = bool(extrapolate)
        self.periods, self.values = self._read(self.path)
        self.parameters = {"file": str(self.path), "damping": self.damping,
                           "extrapolate": self.extrapolate}

    @staticmethod
    def _read(path: Path) -> tuple[np.ndarray, np.ndarray]:
        source = str(path)
        raw = read_input(path, InputError, "target spectrum file", missing="no such target spectrum file")
        lines = raw.decode("utf-8", errors="replace").splitlines()
        periods, values, previous = [], [], None
        for number, line in enumerate(lines, start=1):
            text = line.strip()
            if not text or text.startswith(_COMMENT_PREFIXES):
                continue
            fields = text.translate(_SEPARATORS).split()
            here = where(source, line=number)
            if len(fields) != 2:
                raise InputError(
                    f"{here}: {len(fields)} columns found; expected two (period s, Sa g)"
                )
            try:
                period, value = float(fields[0]), float(fields[1])
            except ValueError:
                raise InputError(f"{here}: cannot read {text!r} as two numbers") from None
            if not (math.isfinite(period) and math.isfinite(value)):
                raise InputError(f"{here}: value is not finite")
            if period < 0.0:
                raise InputError(f"{here}: period {period:g} s is negative")
            if value <= 0.0:
                raise InputError(f"{here}: Sa {value:g} g must be > 0 (log-log interpolation)")
            if previous is not None and period <= previous[0]:
                raise InputError(
                    f"{here}: period {period:g} s does not increase (line {previous[1]} has "
                    f"{previous[0]:g} s); periods must be strictly increasing"
                )
            periods.append(period)
            values.append(value)
            previous = (period, number)
        if len(periods) < 2:
            raise InputError(f"{source}: a target spectrum needs at least two points, "
                             f"found {len(periods)}")
        if periods[0] == 0.0 and len(periods) < 3:
            raise InputError(f"{source}: a target spectrum needs at least two points at periods "
                             "> 0 besides the one at period 0")
        return np.array(periods), np.array(values)

    @property
    def period_range(self) -> tuple[float, float]:
        if self.extrapolate:
            return (0.0, math.inf)
        return (float(self.periods[0]), float(self.periods[-1]))

    @property
    def label(self) -> str:
        return (f"spectrum from {self.path} ({self.periods.size} points, "
                f"{self.periods[0]:g}-{self.periods[-1]:g} s, damping {100 * self.damping:g} %)")

    def _sa(self, T: np.ndarray) -> np.ndarray:
        p, v = self.periods, self.values
        low, high = self.period_range
        outside = (T < low) | (T > high)
        if np.any(outside):
            bad = float(T[outside][0])
            raise InputError(
                f"{self.path}: period {bad:g} s is outside the target spectrum's "
                f"{p[0]:g}-{p[-1]:g} s; widen the file or allow extrapolation"
            )
        positive = p > 0.0
        lp, lv = np.log(p[positive]), np.log(v[positive])
        out = np.empty_like(T)
        pos = T > 0.0
        logT = np.log(T[pos])
        # log-log interpolation inside, power-law continuation of the end segments outside
        inner = np.interp(logT, lp, lv)
        first = lv[0] + (logT - lp[0]) * (lv[1] - lv[0]) / (lp[1] - lp[0])
        last = lv[-1] + (logT - lp[-1]) * (lv[-1] - lv[-2]) / (lp[-1] - lp[-2])
        logv = np.where(logT < lp[0], first, np.where(logT > lp[-1], last, inner))
        out[pos] = np.exp(logv)
        if p[0] == 0.0:
            # below the first positive period: linear in T from the value at T = 0
            below = T < p[1]
            out[below] = v[0] + (v[1] - v[0]) * T[below] / p[1]
        else:
            # T = 0 below a file starting above 0 (only with extrapolate): hold the first value
            out[~pos] = v[0]
        return out


#: Target name -> class; ``make_target(name, **parameters)`` builds one.
TARGETS = {
    ASCE7Spectrum.name: ASCE7Spectrum,
    EC8Spectrum.name: EC8Spectrum,
    FileSpectrum.name: FileSpectrum,
}


def make_target(name: str, **parameters) -> Target:
    """Build the target registered as ``name`` in :data:`TARGETS` with ``parameters``.

    Raises :class:`~simulate.errors.InputError` for an unknown name or
    parameters the target does not take.
    """
    cls = TARGETS.get(str(name).strip().lower())
    if cls is None:
        raise InputError(f"unknown target {name!r} (known: {', '.join(TARGETS)})")
    try:
        inspect.signature(cls).bind(**parameters)
    except TypeError as exc:
        raise InputError(f"target {name!r}: {exc}") from None
    return cls(**parameters)
