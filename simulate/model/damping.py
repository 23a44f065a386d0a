"""Damping models for shear frames.

Each model turns the mass matrix, the elastic stiffness matrix and the undamped
modes into a viscous damping matrix C. Rayleigh, mass- and stiffness-proportional
damping keep C tridiagonal (M is diagonal, K tridiagonal), so a Newmark step stays
O(N); modal damping gives a full C and an O(N^2) step.

References
----------
A. K. Chopra, *Dynamics of Structures*, 4th ed., ch. 11 (classical damping matrices:
Rayleigh damping, Eq. 11.4.5-11.4.8; superposition of modal damping matrices,
Eq. 11.4.21).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from simulate.errors import InputError


def _check_ratio(value: float, key: str) -> float:
    value = float(value)
    if not np.isfinite(value) or value < 0.0 or value >= 1.0:
        raise InputError(f"damping {key} must be a ratio in [0, 1), got {value!r}")
    return value


class Damping:
    """Base class: a damping model builds C from M, K and the undamped modes."""

    #: short name used in configs and dataset attributes
    kind: str = ""
    #: True when C has the tridiagonal pattern of K (O(N) Newmark step)
    tridiagonal: bool = True

    def matrix(self, M: np.ndarray, K: np.ndarray, omega: np.ndarray, phi: np.ndarray) -> np.ndarray:
        """Return the (N, N) damping matrix in N s/m.

        Parameters
        ----------
        M, K : (N, N) arrays, mass (kg) and stiffness (N/m) matrices.
        omega : (N,) undamped angular frequencies, rad/s, ascending.
        phi : (N, N) mass-normalised mode shapes, one mode per column.
        """
        raise NotImplementedError

    def describe(self) -> str:
        raise NotImplementedError

    #: which stiffness a stiffness-proportional part uses in a yielding frame
    stiffness: str = "initial"

    def proportional_coefficients(self, omega: np.ndarray) -> tuple[float, float]:
        """(a0, a1) of C = a0 M + a1 K, for models that have that form."""
        raise InputError(f"{self.kind} damping has no mass/stiffness-proportional form")


def _check_stiffness(value: str) -> None:
    if value not in DAMPING_STIFFNESS:
        raise InputError(f"damping stiffness must be one of {', '.join(DAMPING_STIFFNESS)}, got {value!r}")


#: Stiffness used by stiffness-proportional damping in a yielding frame:
#: "initial" keeps C constant (a1 K_0); "tangent" uses a1 K_t of the last converged
#: state, which avoids the spurious damping forces of a1 K_0 once storeys yield
#: (J. F. Hall (2006), "Problems encountered from the use (or misuse) of Rayleigh
#: damping", Earthquake Eng. Struct. Dyn. 35; F. A. Charney (2008), J. Struct. Eng.
#: 134(4), 581-592 - from memory).
DAMPING_STIFFNESS = ("initial", "tangent")


@dataclass(frozen=True)
class Rayleigh(Damping):
    """Rayleigh damping C = a0 M + a1 K with ``ratio`` in modes ``modes`` (1-based).

    ``ratio`` may be one value for both modes or a pair. Chopra Eq. 11.4.8.
    """

    ratio: float | tuple[float, float] = 0.05
    modes: tuple[int, int] = (1, 3)
    stiffness: str = "initial"
    kind = "rayleigh"

    def __post_init__(self):
        _check_stiffness(self.stiffness)
        r = np.broadcast_to(np.asarray(self.ratio, dtype=float), (2,))
        for v in r:
            _check_ratio(v, "ratio")
        modes = tuple(int(m) for m in self.modes)
        if len(modes) != 2 or modes[0] < 1 or modes[1] < 1 or modes[0] == modes[1]:
            raise InputError(f"Rayleigh damping needs two different modes >= 1, got {self.modes!r}")
        object.__setattr__(self, "modes", modes)

    def ratios(self) -> tuple[float, float]:
        r = np.broadcast_to(np.asarray(self.ratio, dtype=float), (2,))
        return float(r[0]), float(r[1])

    def coefficients(self, omega: np.ndarray) -> tuple[float, float]:
        """Return (a0, a1) such that zeta_n = a0 / (2 w_n) + a1 w_n / 2 matches in both modes."""
        n = len(omega)
        i, j = self.modes
        if max(i, j) > n:
            if n == 1:
                # a one-storey frame has one mode: mass- and stiffness-parts split evenly
                z = self.ratios()[0]
                w = omega[0]
                return z * w, z / w
            raise InputError(
                f"Rayleigh damping modes {self.modes} exceed the {n} modes of the frame"
            )
        wi, wj = omega[i - 1], omega[j - 1]
        zi, zj = self.ratios()
        # Solve [1/(2wi) wi/2; 1/(2wj) wj/2] [a0 a1]^T = [zi zj]^T
        A = np.array([[1.0 / (2 * wi), wi / 2.0], [1.0 / (2 * wj), wj / 2.0]])
        a0, a1 = np.linalg.solve(A, np.array([zi, zj]))
        return float(a0), float(a1)

    def matrix(self, M, K, omega, phi):
        a0, a1 = self.coefficients(omega)
        return a0 * M + a1 * K

    def proportional_coefficients(self, omega):
        return self.coefficients(omega)

    def describe(self) -> str:
        zi, zj = self.ratios()
        text = f"Rayleigh, ratio {zi:g} in mode {self.modes[0]} and {zj:g} in mode {self.modes[1]}"
        return text + (", tangent stiffness" if self.stiffness == "tangent" else "")


@dataclass(frozen=True)
class MassProportional(Damping):
    """C = a0 M with ``ratio`` in mode ``mode`` (zeta_n = a0 / (2 w_n))."""

    ratio: float = 0.05
    mode: int = 1
    kind = "mass"

    def __post_init__(self):
        _check_ratio(self.ratio, "ratio")
        if int(self.mode) < 1:
            raise InputError(f"damping mode must be >= 1, got {self.mode!r}")

    def matrix(self, M, K, omega, phi):
        w = omega[_mode_index(self.mode, len(omega))]
        return 2.0 * self.ratio * w * M

    def proportional_coefficients(self, omega):
        return 2.0 * self.ratio * omega[_mode_index(self.mode, len(omega))], 0.0

    def describe(self) -> str:
        return f"mass-proportional, ratio {self.ratio:g} in mode {self.mode}"


@dataclass(frozen=True)
class StiffnessProportional(Damping):
    """C = a1 K with ``ratio`` in mode ``mode`` (zeta_n = a1 w_n / 2)."""

    ratio: float = 0.05
    mode: int = 1
    stiffness: str = "initial"
    kind = "stiffness"

    def __post_init__(self):
        _check_stiffness(self.stiffness)
        _check_ratio(self.ratio, "ratio")
        if int(self.mode) < 1:
            raise InputError(f"damping mode must be >= 1, got {self.mode!r}")

    def matrix(self, M, K, omega, phi):
        w = omega[_mode_index(self.mode, len(omega))]
        return (2.0 * self.ratio / w) * K

    def proportional_coefficients(self, omega):
        return 0.0, 2.0 * self.ratio / omega[_mode_index(self.mode, len(omega))]

    def describe(self) -> str:
        text = f"stiffness-proportional, ratio {self.ratio:g} in mode {self.mode}"
        return text + (", tangent stiffness" if self.stiffness == "tangent" else "")


@dataclass(frozen=True)
class ModalDamping(Damping):
    """Classical damping with a ratio per mode, C = M (sum_n 2 z_n w_n / M_n phi_n phi_n^T) M.

    ``ratios`` is one value for every mode or a sequence; modes beyond the sequence
    take its last value. Chopra Eq. 11.4.21. C is full, so Newmark costs O(N^2) a step.
    """

    ratios: float | tuple[float, ...] = 0.05
    kind = "modal"
    tridiagonal = False

    def __post_init__(self):
        r = np.atleast_1d(np.asarray(self.ratios, dtype=float))
        if r.ndim != 1 or r.size == 0:
            raise InputError("modal damping needs one ratio or a list of ratios")
        for v in r:
            _check_ratio(v, "ratios")
        object.__setattr__(self, "ratios", tuple(float(v) for v in r))

    def per_mode(self, n: int) -> np.ndarray:
        r = np.asarray(self.ratios, dtype=float)
        if r.size >= n:
            return r[:n].copy()
        return np.concatenate([r, np.full(n - r.size, r[-1])])

    def matrix(self, M, K, omega, phi):
        z = self.per_mode(len(omega))
        # phi is mass-normalised (M_n = 1)
        Mphi = M @ phi
        return (Mphi * (2.0 * z * omega)) @ Mphi.T

    def describe(self) -> str:
        if len(set(self.ratios)) == 1:
            return f"modal, ratio {self.ratios[0]:g} in every mode"
        return "modal, ratios " + ", ".join(f"{v:g}" for v in self.ratios)


@dataclass(frozen=True)
class NoDamping(Damping):
    """No viscous damping (C = 0)."""

    kind = "none"

    def matrix(self, M, K, omega, phi):
        return np.zeros_like(K)

    def proportional_coefficients(self, omega):
        return 0.0, 0.0

    def describe(self) -> str:
        return "none"


def _mode_index(mode: int, n: int) -> int:
    mode = int(mode)
    if mode > n:
        raise InputError(f"damping mode {mode} exceeds the {n} modes of the frame")
    return mode - 1


#: Damping models by their config name.
DAMPING_MODELS = {
    "rayleigh": Rayleigh,
    "modal": ModalDamping,
    "mass": MassProportional,
    "stiffness": StiffnessProportional,
    "none": NoDamping,
}
