"""Time-integration methods: a registry with a common contract.

Each method is a class with its parameters and their defaults as class
attributes. ``prepare(frame, dt)`` validates the parameters for that frame and
step and returns the plain arrays its kernel needs (computed once per frame and
dt); ``integrate(...)`` runs the batch kernel over records, fills the history
arrays it is given and returns a dict of further per-record results (empty for
linear frames; status, energies and storey demands for nonlinear ones).
``METHODS`` maps the names used in configs and on the command line to the classes.
"""

from __future__ import annotations

import math

import numpy as np
import scipy.linalg

from simulate.errors import InputError
from simulate.kernels.newmark import _newmark_dense_batch, _newmark_tridiagonal_batch
from simulate.kernels.nonlinear import ENERGY_COLUMNS, _newmark_nonlinear_batch
from simulate.kernels.statespace import _state_space_foh_batch


class Method:
    """Base contract: parameters as class attributes, ``prepare`` then ``integrate``."""

    name: str = ""
    #: parameter name -> default value
    defaults: dict = {}
    summary: str = ""

    def __init__(self, **params):
        unknown = set(params) - set(self.defaults)
        if unknown:
            raise InputError(
                f"method {self.name!r} has no parameter {sorted(unknown)[0]!r}; "
                f"it takes {', '.join(self.defaults) or 'no parameters'}"
            )
        self.params = {**self.defaults, **{k: float(v) for k, v in params.items()}}

    #: parameters that matter only for frames with yielding storeys or P-Delta
    nonlinear_only: tuple = ()

    def attributes(self, linear: bool = False) -> dict:
        """Method name and parameters for the dataset attributes."""
        return {"method": self.name, **{f"method_{k}": v for k, v in self.params.items()
                                        if not (linear and k in self.nonlinear_only)}}

    def prepare(self, frame, dt: float) -> tuple:
        raise NotImplementedError

    def integrate(self, frame, prepared, dt, ag, force, has_force, nsteps, outputs) -> dict:
        raise NotImplementedError


class Newmark(Method):
    """Newmark-beta, average acceleration (gamma = 1/2, beta = 1/4) by default.

    Unconditionally stable when 2 beta >= gamma >= 1/2; otherwise stable for
    dt <= T_N / (pi sqrt(2)) / sqrt(gamma - 2 beta), with T_N the shortest period
    (Chopra, *Dynamics of Structures*, Eq. 5.4.13-5.4.15; linear acceleration,
    gamma = 1/2 and beta = 1/6, gives dt <= 0.551 T_N).

    Frames with hysteretic storeys or P-Delta go through Newton-Raphson
    iterations in each step (``simulate.kernels.nonlinear``) with these
    parameters: ``tol_drift`` (largest displacement correction, as a fraction of
    the lowest storey height), ``tol_force`` (largest unbalanced floor force, as a
    fraction of the reference storey strength: the largest yield shear, or
    k h / 100 for linear storeys), ``max_iter`` Newton iterations before a step is
    split, and ``max_depth`` halvings (a step is split into at most 2^max_depth
    substeps) before the record stops as not converged.
    """

    name = "newmark"
    defaults = {"gamma": 0.5, "beta": 0.25, "tol_drift": 1e-10, "tol_force": 1e-8,
                "max_iter": 25, "max_depth": 8}
    nonlinear_only = ("tol_drift", "tol_force", "max_iter", "max_depth")
    summary = "Newmark-beta, implicit, O(N) per step for tridiagonal damping; Newton iterations when storeys yield"

    def prepare(self, frame, dt):
        gamma, beta = self.params["gamma"], self.params["beta"]
        if not (math.isfinite(gamma) and gamma >= 0.5):
            raise InputError(f"Newmark gamma must be >= 0.5 (no negative numerical damping), got {gamma!r}")
        if not (math.isfinite(beta) and 0.0 < beta <= 0.5):
            raise InputError(f"Newmark beta must be in (0, 0.5], got {beta!r}")
        if 2.0 * beta < gamma:
            t_min = float(frame.periods()[-1])
            dt_cr = t_min / (math.pi * math.sqrt(2.0)) / math.sqrt(gamma - 2.0 * beta)
            if dt > dt_cr:
                raise InputError(
                    f"Newmark gamma={gamma:g}, beta={beta:g} is only conditionally stable: analysis dt "
                    f"{dt:g} s exceeds the limit {dt_cr:.4g} s set by the shortest period {t_min:.4g} s; "
                    f"use a smaller dt or average acceleration (gamma=0.5, beta=0.25)"
                )
        if not frame.is_linear:
            return self._prepare_nonlinear(frame, dt)
        kd, ko = frame.stiffness_diagonals()
        C = frame.damping_matrix()
        common = (frame.mass, frame.stiffness, frame.height, kd, ko)
        if frame.damping.tridiagonal:
            cd = np.ascontiguousarray(np.diag(C))
            co = np.ascontiguousarray(np.diag(C, 1))
            return ("tridiagonal", common, (cd, co))
        khat = frame.stiffness_matrix() + np.diag(frame.mass) / (beta * dt * dt) + gamma / (beta * dt) * C
        khat_inv = np.ascontiguousarray(scipy.linalg.inv(khat))
        return ("dense", common, (np.ascontiguousarray(C), khat_inv))

    def _prepare_nonlinear(self, frame, dt):
        n = frame.n_storeys
        law, P, S0 = frame.law_arrays()
        kg = np.ascontiguousarray(frame.geometric_stiffness())
        C = np.ascontiguousarray(frame.damping_matrix())
        dense = not frame.damping.tridiagonal
        tangent = getattr(frame.damping, "stiffness", "initial") == "tangent"
        a0 = a1 = 0.0
        if tangent:
            a0, a1 = frame.damping.proportional_coefficients(2.0 * np.pi / frame.periods())
        cd = np.ascontiguousarray(np.diag(C))
        co = np.ascontiguousarray(np.diag(C, 1)) if n > 1 else np.zeros(0)
        for key in ("max_iter", "max_depth"):
            value = self.params[key]
            if value != int(value) or value < (1 if key == "max_iter" else 0):
                raise InputError(f"Newmark {key} must be a whole number >= {1 if key == 'max_iter' else 0}, got {value!r}")
        for key in ("tol_drift", "tol_force"):
            if not (math.isfinite(self.params[key]) and self.params[key] > 0):
                raise InputError(f"Newmark {key} must be > 0, got {self.params[key]!r}")
        strength = np.where(np.isfinite(P[:, 1]) & (P[:, 1] > 0), P[:, 1], P[:, 0] * frame.height / 100.0)
        tol_u = self.params["tol_drift"] * float(frame.height.min())
        tol_r = self.params["tol_force"] * float(strength.max())
        arrays = (frame.mass, frame.height, law, P, S0, kg, cd, co, C, dense, tangent, float(a0), float(a1))
        return ("nonlinear", arrays, (tol_u, tol_r, int(self.params["max_iter"]), int(self.params["max_depth"])))

    def integrate(self, frame, prepared, dt, ag, force, has_force, nsteps, outputs, collapse_drift=0.10):
        kind, common, extra = prepared
        if kind == "nonlinear":
            R, T, n = outputs[0].shape
            energy = np.empty((R, T, len(ENERGY_COLUMNS)))
            storey = np.empty((R, n, 2))
            info = np.zeros((R, 4), dtype=np.int64)
            _newmark_nonlinear_batch(*common, ag, force, has_force, nsteps, float(dt),
                                     self.params["gamma"], self.params["beta"], *extra,
                                     float(collapse_drift), *outputs, energy, storey, info)
            return {"energy": energy, "storey": storey, "info": info}
        kernel = _newmark_tridiagonal_batch if kind == "tridiagonal" else _newmark_dense_batch
        kernel(*common, *extra, ag, force, has_force, nsteps, float(dt),
               self.params["gamma"], self.params["beta"], *outputs)
        return {}


def foh_matrices(A: np.ndarray, dt: float):
    """Phi, G0, G1 of the exact first-order-hold recurrence for x' = A x + [0; I] q.

    One matrix exponential of the augmented matrix [[A, B, 0], [0, 0, I], [0, 0, 0]] dt
    (Van Loan 1978) gives Phi = exp(A dt), Ga = int_0^dt exp(A s) ds B and
    Gb = int_0^dt exp(A s) (dt - s) ds B / dt; then G0 = Ga - Gb and G1 = Gb.
    """
    n2 = A.shape[0]
    n = n2 // 2
    E = np.zeros((n2 + 2 * n, n2 + 2 * n))
    E[:n2, :n2] = A
    E[n:n2, n2:n2 + n] = np.eye(n)
    E[n2:n2 + n, n2 + n:] = np.eye(n)
    F = scipy.linalg.expm(E * dt)
    Phi = F[:n2, :n2]
    Ga = F[:n2, n2:n2 + n]
    Gb = F[:n2, n2 + n:] / dt
    # x_{i+1} = Phi x_i + Ga q_i + Gb (q_{i+1} - q_i)
    G0 = Ga - Gb
    G1 = Gb
    return (np.ascontiguousarray(Phi), np.ascontiguousarray(G0), np.ascontiguousarray(G1))


class StateSpace(Method):
    """Exact integration of the linear first-order form, load linear within each step.

    Exact (to round-off) for any dt when the load is piecewise linear between
    samples, which is how records are interpolated; O(N^2) per step. Linear frames only.
    """

    name = "state-space"
    defaults: dict = {}
    summary = "exact for piecewise-linear loading (first-order hold), O(N^2) per step"

    def prepare(self, frame, dt):
        if not frame.is_linear:
            raise InputError(
                "the exact state-space method integrates linear frames only; this frame has "
                "yielding storeys or P-Delta: use method 'newmark'"
            )
        A = frame.state_matrix()
        Phi, G0, G1 = foh_matrices(A, dt)
        n = frame.n_storeys
        Alow = np.ascontiguousarray(A[n:, :])
        return ((frame.mass, frame.stiffness, frame.height), (Phi, G0, G1, Alow))

    def integrate(self, frame, prepared, dt, ag, force, has_force, nsteps, outputs, collapse_drift=0.10):
        common, extra = prepared
        _state_space_foh_batch(*common, *extra, ag, force, has_force, nsteps, *outputs)
        return {}


#: Integration methods by name.
METHODS = {cls.name: cls for cls in (Newmark, StateSpace)}

#: Named Newmark parameter sets.
NEWMARK_SCHEMES = {
    "average-acceleration": {"gamma": 0.5, "beta": 0.25},
    "linear-acceleration": {"gamma": 0.5, "beta": 1.0 / 6.0},
}


def make_method(name: str, **params) -> Method:
    """Instantiate the method ``name`` with ``params`` (clear error for unknown names)."""
    try:
        cls = METHODS[name]
    except KeyError:
        raise InputError(f"unknown method {name!r}; choose one of {', '.join(METHODS)}") from None
    return cls(**params)
