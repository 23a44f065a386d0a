"""The shear-frame model: one lumped mass per floor, one storey spring between floors.

Floors and storeys are numbered from the ground up. Floor 0 is the ground; floors
1..N carry the masses; storey i joins floor i-1 and floor i.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from functools import cached_property

import numpy as np

from simulate.errors import InputError
from simulate.model.damping import Damping, Rayleigh


def _storey_array(name: str, value, n: int | None, *, positive: bool = True,
                  allow_zero: bool = False) -> np.ndarray:
    """Broadcast a scalar or list to a float64 array of storey values and validate it."""
    try:
        arr = np.array(value, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"{name} must be a number or a list of numbers, got {value!r}") from None
    if arr.ndim == 0:
        if n is None:
            arr = arr.reshape(1)
        else:
            arr = np.full(n, float(arr))
    if arr.ndim != 1 or arr.size == 0:
        raise InputError(f"{name} must be a number or a flat list of numbers")
    if n is not None and arr.size != n:
        raise InputError(f"{name} has {arr.size} values but the frame has {n} storeys")
    bad = ~np.isfinite(arr)
    if positive:
        bad |= (arr < 0.0) if allow_zero else (arr <= 0.0)
    if bad.any():
        i = int(np.flatnonzero(bad)[0])
        kind = "non-negative" if allow_zero else "positive"
        raise InputError(f"{name} must be finite and {kind}; storey {i + 1} has {arr[i]!r}")
    return np.ascontiguousarray(arr)


@dataclass(frozen=True, eq=False)
class ShearFrame:
    """A shear frame with lumped floor masses and storey springs.

    Parameters
    ----------
    mass : float or (N,) array
        Floor masses, kg, floor 1 first.
    stiffness : float or (N,) array
        Elastic storey stiffnesses, N/m, storey 1 (bottom) first.
    height : float or (N,) array
        Storey heights, m.
    yield_shear : None or float or (N,) array
        Storey yield shears, N (None: linear storeys).
    hardening : float or (N,) array
        Post-yield stiffness ratio alpha (0 <= alpha < 1).
    gravity_load : None or float or (N,) array
        Axial gravity load carried by each storey, N (for P-Delta).
    damping : Damping, optional
        Damping model; default 5 % Rayleigh in modes 1 and 3 (modes 1 and 2 for a
        two-storey frame).
    name : str
        Label for reports.
    law : None, str or sequence of str
        Storey law per storey or for all (see ``simulate.laws.LAWS``: "linear",
        "bilinear", "bouc-wen", "peak-oriented"). None: bilinear with kinematic
        hardening where ``yield_shear`` is given, linear otherwise.
    law_params : dict, optional
        Law-specific parameters, each a number or one value per storey (for
        Bouc-Wen: A, beta, gamma, n).

    The length of the first array-like argument sets N; scalars are broadcast.
    """

    mass: np.ndarray
    stiffness: np.ndarray
    height: np.ndarray
    yield_shear: np.ndarray | None = None
    hardening: np.ndarray | float = 0.0
    gravity_load: np.ndarray | None = None
    damping: Damping | None = None
    name: str = "frame"
    law: str | tuple | None = None
    law_params: dict | None = None

    def __post_init__(self):
        lengths = {name: len(value) for name, value in
                   (("mass", self.mass), ("stiffness", self.stiffness), ("height", self.height),
                    ("yield_shear", self.yield_shear), ("hardening", self.hardening),
                    ("gravity_load", self.gravity_load))
                   if value is not None and np.ndim(value) == 1}
        if len(set(lengths.values())) > 1:
            listed = ", ".join(f"{name} {count}" for name, count in lengths.items())
            raise InputError(f"storey lists differ in length ({listed}); give one value per storey "
                             f"or a single number for each")
        n = next(iter(lengths.values()), 1)
        object.__setattr__(self, "mass", _storey_array("mass", self.mass, n))
        object.__setattr__(self, "stiffness", _storey_array("stiffness", self.stiffness, n))
        object.__setattr__(self, "height", _storey_array("height", self.height, n))
        if self.yield_shear is not None:
            object.__setattr__(self, "yield_shear", _storey_array("yield_shear", self.yield_shear, n))
        h = _storey_array("hardening", self.hardening, n, allow_zero=True)
        if (h >= 1.0).any():
            i = int(np.flatnonzero(h >= 1.0)[0])
            raise InputError(f"hardening must be in [0, 1); storey {i + 1} has {h[i]!r}")
        object.__setattr__(self, "hardening", h)
        if self.gravity_load is not None:
            object.__setattr__(self, "gravity_load",
                               _storey_array("gravity_load", self.gravity_load, n, allow_zero=True))
        if self.damping is None:
            object.__setattr__(self, "damping", Rayleigh(ratio=0.05, modes=(1, 3) if n >= 3 else (1, 2)))
        if not isinstance(self.damping, Damping):
            raise InputError(f"damping must be a damping model such as Rayleigh(...), got {self.damping!r}")
        self._check_laws(n)
        for arr in (self.mass, self.stiffness, self.height):
            arr.setflags(write=False)

    def _check_laws(self, n: int) -> None:
        from simulate.laws import LAWS

        law = self.law
        if law is None:
            names = ["bilinear" if self.yield_shear is not None else "linear"] * n
        elif isinstance(law, str):
            names = [law] * n
        else:
            names = list(law)
            if len(names) != n:
                raise InputError(f"law has {len(names)} values but the frame has {n} storeys")
        for i, name in enumerate(names):
            if name not in LAWS:
                raise InputError(f"storey {i + 1}: unknown law {name!r}; choose one of {', '.join(LAWS)}")
        object.__setattr__(self, "law", tuple(names))
        params = dict(self.law_params or {})
        known = {key for name in set(names) for key in LAWS[name].extra}
        for key in params:
            if key not in known:
                hint = f"; the laws used take {', '.join(sorted(known))}" if known else \
                    "; the laws used take no extra parameters"
                raise InputError(f"unknown storey-law parameter {key!r}{hint}")
        arrays = {key: _storey_array(key, value, n, positive=False) for key, value in params.items()}
        object.__setattr__(self, "law_params", arrays)
        vy = self.yield_shear
        for i, name in enumerate(names):
            cls = LAWS[name]
            if cls.needs_yield and vy is None:
                raise InputError(f"storey {i + 1}: the {name} law needs yield_shear")
            cls.check(i + 1, float(self.stiffness[i]), float(vy[i]) if vy is not None else float("nan"),
                      float(self.hardening[i]), {key: float(arr[i]) for key, arr in arrays.items()})

    # ------------------------------------------------------------------ sizes
    @property
    def n_storeys(self) -> int:
        return int(self.mass.size)

    @property
    def total_mass(self) -> float:
        return float(self.mass.sum())

    @property
    def total_height(self) -> float:
        return float(self.height.sum())

    @property
    def is_linear(self) -> bool:
        """True when every storey is linear elastic and no gravity load acts (no P-Delta)."""
        return all(name == "linear" for name in self.law) and self.gravity_load is None

    def yield_drift(self) -> np.ndarray:
        """Yield deformation Vy / k of each storey, m (NaN for linear storeys)."""
        if self.yield_shear is None:
            return np.full(self.n_storeys, np.nan)
        dy = self.yield_shear / self.stiffness
        return np.where([name == "linear" for name in self.law], np.nan, dy)

    def geometric_stiffness(self) -> np.ndarray:
        """Linearised P-Delta stiffness P_i / h_i of each storey, N/m (subtracted from k)."""
        if self.gravity_load is None:
            return np.zeros(self.n_storeys)
        return self.gravity_load / self.height

    def law_arrays(self):
        """Law ids (N,) int64, parameter rows (N, N_PARAMS) and initial states (N, N_STATE)."""
        from simulate.laws import LAWS, N_PARAMS, N_STATE

        n = self.n_storeys
        ids = np.empty(n, dtype=np.int64)
        P = np.zeros((n, N_PARAMS))
        S = np.zeros((n, N_STATE))
        vy = self.yield_shear if self.yield_shear is not None else np.full(n, np.nan)
        for i, name in enumerate(self.law):
            cls = LAWS[name]
            ids[i] = cls.law_id
            P[i] = cls.row(float(self.stiffness[i]), float(vy[i]), float(self.hardening[i]),
                           {key: float(arr[i]) for key, arr in self.law_params.items()})
            S[i] = cls.initial_state(P[i])
        return ids, P, S

    # --------------------------------------------------------------- matrices
    def mass_matrix(self) -> np.ndarray:
        """(N, N) diagonal mass matrix, kg."""
        return np.diag(self.mass)

    def stiffness_diagonals(self) -> tuple[np.ndarray, np.ndarray]:
        """Main diagonal (N,) and off-diagonal (N-1,) of the elastic stiffness matrix, N/m."""
        k = self.stiffness
        diag = k.copy()
        diag[:-1] += k[1:]
        off = -k[1:].copy()
        return diag, off

    def stiffness_matrix(self) -> np.ndarray:
        """(N, N) tridiagonal elastic stiffness matrix, N/m."""
        diag, off = self.stiffness_diagonals()
        return np.diag(diag) + np.diag(off, 1) + np.diag(off, -1)

    @cached_property
    def _undamped(self) -> tuple[np.ndarray, np.ndarray]:
        from simulate.model.modal import undamped_modes

        return undamped_modes(self.mass, *self.stiffness_diagonals())

    def damping_matrix(self) -> np.ndarray:
        """(N, N) viscous damping matrix, N s/m, from the frame's damping model."""
        omega, phi = self._undamped
        C = self.damping.matrix(self.mass_matrix(), self.stiffness_matrix(), omega, phi)
        return 0.5 * (C + C.T)

    def state_matrix(self) -> np.ndarray:
        """(2N, 2N) first-order system matrix A of x' = A x + B p, x = [u; v]."""
        from simulate.model.modal import state_matrix

        return state_matrix(self.mass, self.stiffness_matrix(), self.damping_matrix())

    # ------------------------------------------------------------------ modes
    def modes(self):
        """Modal and state-space properties as an ``xarray.Dataset`` (see ``simulate.model.modal``)."""
        from simulate.model.modal import modes_dataset

        return modes_dataset(self)

    def modal_damping_ratios(self) -> np.ndarray:
        """Damping ratio of each undamped mode, phi_n^T C phi_n / (2 w_n) with phi_n^T M phi_n = 1."""
        omega, phi = self._undamped
        C = self.damping_matrix()
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.einsum("in,ij,jn->n", phi, C, phi) / (2.0 * omega)

    def periods(self) -> np.ndarray:
        """Undamped natural periods, s, longest first."""
        return 2.0 * np.pi / self._undamped[0]

    def with_stiffness(self, stiffness) -> "ShearFrame":
        """A copy of this frame with other storey stiffnesses."""
        return replace(self, stiffness=stiffness, law_params=dict(self.law_params))

    def linear_twin(self) -> "ShearFrame":
        """The same mass, heights, elastic stiffness and damping, with linear storeys and no P-Delta."""
        return ShearFrame(mass=self.mass, stiffness=self.stiffness, height=self.height,
                          damping=self.damping, name=f"{self.name} (linear twin)")

    def __repr__(self) -> str:
        return (f"ShearFrame(name={self.name!r}, storeys={self.n_storeys}, "
                f"T1={self.periods()[0]:.4g} s, damping={self.damping.describe()!r})")


def stiffness_for_period(mass, height, period: float, profile) -> np.ndarray:
    """Storey stiffnesses with the relative ``profile`` that give fundamental ``period``.

    The fundamental eigenvalue w1^2 of K = kappa K(profile) scales linearly with
    kappa, so kappa = (2 pi / T1)^2 / w1^2(profile) is exact.

    Parameters
    ----------
    mass, height : (N,) arrays
    period : float, target fundamental period, s
    profile : (N,) array of relative storey stiffnesses (bottom first), all > 0
    """
    from simulate.model.modal import undamped_modes

    period = float(period)
    if not np.isfinite(period) or period <= 0:
        raise InputError(f"target period must be positive, got {period!r}")
    profile = _storey_array("stiffness_profile", profile, len(mass))
    diag = profile.copy()
    diag[:-1] += profile[1:]
    omega, _ = undamped_modes(np.asarray(mass, float), diag, -profile[1:])
    kappa = (2.0 * np.pi / period) ** 2 / omega[0] ** 2
    return kappa * profile


#: Named relative stiffness profiles (bottom storey first), as functions of N.
STIFFNESS_PROFILES = {
    "uniform": lambda n: np.ones(n),
    # decreasing linearly from 1 at the bottom storey to 1/N at the top
    "linear": lambda n: (n - np.arange(n)) / n,
}
