"""Static pushover: the capacity curve of a shear frame under a fixed lateral load pattern.

The frame is pushed monotonically by floor forces lambda F, F a fixed pattern
normalised to sum F = 1, with the roof displacement raised in equal increments
up to ``roof_drift`` times the total height (displacement control, so the curve
continues past the peak when P-Delta makes it descend). The storey laws and
their P-Delta terms are the ones ``simulate.run`` uses (``simulate.laws``,
``ShearFrame.geometric_stiffness``); the Newton iterations run in
``simulate.kernels.static``.
"""

from __future__ import annotations

import math

import numpy as np
import xarray as xr

from simulate.errors import InputError
from simulate.kernels.static import COLLAPSED, NOT_CONVERGED, OK, _pushover
from simulate.model.modal import undamped_modes
from simulate.results.schema import base_attributes
from simulate.settings import CAUTION, STANDARD_GRAVITY

#: Status labels by kernel status code.
STATUS = {OK: "ok", NOT_CONVERGED: "not-converged", COLLAPSED: "collapsed"}


def _first_mode(frame) -> np.ndarray:
    # the undamped modes only: the pattern does not depend on the damping model
    _, phi = undamped_modes(frame.mass, *frame.stiffness_diagonals())
    return frame.mass * phi[:, 0] / phi[-1, 0]


def _inverted_triangle(frame) -> np.ndarray:
    return frame.mass * np.cumsum(frame.height)


def _uniform(frame) -> np.ndarray:
    return np.asarray(frame.mass, dtype=float).copy()


#: Named lateral load patterns: name -> (floor forces before normalisation, description).
PATTERNS = {
    "first-mode": (_first_mode, "m_i phi_i1, phi the roof-normalised first elastic mode shape"),
    "inverted-triangle": (_inverted_triangle, "m_i z_i, z_i the height of floor i above the ground"),
    "uniform": (_uniform, "m_i, proportional to the floor masses"),
}

#: Default convergence tolerances (see ``pushover``).
DEFAULT_TOL_DRIFT = 1e-10
DEFAULT_TOL_FORCE = 1e-8
#: Default number of halvings of a roof increment that does not converge.
DEFAULT_MAX_DEPTH = 8

#: name -> (dimensions, units, description) of the pushover dataset's variables.
VARIABLES = {
    "roof_displacement": (("step",), "m", "roof displacement relative to the ground"),
    "roof_drift_ratio": (("step",), "1", "roof displacement / total height"),
    "base_shear": (("step",), "N",
                   "base shear resisted by storey 1: spring shear minus P-Delta shear P_1 d_1 / h_1"),
    "load_factor": (("step",), "N", "load factor lambda: floor forces are lambda * load_pattern"),
    "displacement": (("step", "floor"), "m", "floor displacement relative to the ground"),
    "drift_ratio": (("step", "storey"), "1", "storey drift ratio (u_i - u_i-1) / h_i"),
    "storey_shear": (("step", "storey"), "N", "storey spring shear (P-Delta shear not included)"),
    "load_pattern": (("floor",), "1", "lateral floor forces per unit load factor (sum 1)"),
    "floor_height": (("floor",), "m", "height of the floor above the ground"),
    "floor_mass": (("floor",), "kg", "lumped floor mass"),
    "storey_height": (("storey",), "m", "storey height"),
    "storey_stiffness": (("storey",), "N/m", "elastic storey stiffness"),
    "storey_initial_tangent": (("storey",), "N/m",
                               "storey tangent stiffness at the unloaded state, minus P_i / h_i"),
    "storey_yield_shear": (("storey",), "N", "storey yield shear (NaN for linear storeys)"),
    "storey_hardening": (("storey",), "1", "post-yield stiffness ratio"),
    "storey_gravity_load": (("storey",), "N", "axial gravity load carried by the storey (P-Delta)"),
    "storey_law": (("storey",), "", "storey force-deformation law"),
}


def _variable(name: str, data) -> xr.Variable:
    dims, units, description = VARIABLES[name]
    attrs = {"long_name": description}
    if units:
        attrs["units"] = units
    return xr.Variable(dims, data, attrs)


def load_pattern(frame, pattern="first-mode") -> np.ndarray:
    """Lateral floor forces (N,) per unit load factor, normalised so that they sum to 1.

    Parameters
    ----------
    frame : ShearFrame
    pattern : str or (N,) array
        A name from :data:`PATTERNS` or floor forces (finite, >= 0, positive sum),
        floor 1 first.
    """
    if isinstance(pattern, str):
        try:
            make, _ = PATTERNS[pattern]
        except KeyError:
            raise InputError(f"pattern: unknown load pattern {pattern!r}; choose one of "
                             f"{', '.join(PATTERNS)} or give one force per floor") from None
        forces = np.asarray(make(frame), dtype=float)
    else:
        try:
            forces = np.array(pattern, dtype=float)
        except (TypeError, ValueError):
            raise InputError(f"pattern: expected a pattern name or a list of floor forces, got {pattern!r}") from None
        if forces.shape != (frame.n_storeys,):
            raise InputError(f"pattern: expected {frame.n_storeys} floor forces (one per floor), "
                             f"got shape {forces.shape}")
    if not np.isfinite(forces).all() or (forces < 0.0).any() or not forces.sum() > 0.0:
        raise InputError("pattern: floor forces must be finite and >= 0 with a positive sum")
    return np.ascontiguousarray(forces / forces.sum())


def _check_positive(name: str, value) -> float:
    try:
        value = float(value)
    except (TypeError, ValueError):
        raise InputError(f"{name}: expected a positive number, got {value!r}") from None
    if not (math.isfinite(value) and value > 0.0):
        raise InputError(f"{name}: expected a positive number, got {value!r}")
    return value


def _check_count(name: str, value, minimum: int) -> int:
    if isinstance(value, bool) or not isinstance(value, (int, np.integer)) or value < minimum:
        raise InputError(f"{name}: expected a whole number >= {minimum}, got {value!r}")
    return int(value)


def pushover(frame, pattern="first-mode", roof_drift: float = 0.04, steps: int = 400, max_iter: int = 50,
             tol_drift: float = DEFAULT_TOL_DRIFT, tol_force: float = DEFAULT_TOL_FORCE,
             max_depth: int = DEFAULT_MAX_DEPTH) -> xr.Dataset:
    """Push ``frame`` under a fixed lateral load pattern up to a roof drift ratio.

    Parameters
    ----------
    frame : ShearFrame
        Storey laws, yield shears, hardening and gravity loads (P-Delta) as for
        ``simulate.run``; damping and masses other than in the pattern play no part.
    pattern : {"first-mode", "inverted-triangle", "uniform"} or (N,) array
        Floor forces proportional to m_i phi_i1 (first elastic mode, roof-normalised),
        to m_i z_i (z_i the floor height above the ground), to m_i, or to the given
        values (see :data:`PATTERNS`); normalised so that they sum to 1.
    roof_drift : float
        Final roof drift ratio (roof displacement / total height), > 0.
    steps : int
        Number of equal roof displacement increments.
    max_iter : int
        Newton corrections allowed per step (>= 2: a step converges at the earliest
        after the correction that confirms it).
    max_depth : int
        A step that does not converge is split into 2, 4, ... 2^max_depth equal roof
        increments from the last converged state before the analysis stops.
    tol_drift, tol_force : float
        A step converges when the largest floor displacement correction is below
        ``tol_drift`` times the lowest storey height (m) and the largest unbalanced
        floor force below ``tol_force`` times the reference storey strength (the
        largest yield shear, or k h / 100 for linear storeys), the same tolerances as
        the Newton-Newmark integrator.

    Returns
    -------
    xarray.Dataset
        Dimensions ``step`` (0 = unloaded, then one per converged increment),
        ``floor`` and ``storey`` (1..N). Variables ``base_shear``, ``load_factor`` (N),
        ``roof_displacement`` (m), ``roof_drift_ratio`` (step); ``displacement``
        (step, floor); ``drift_ratio``, ``storey_shear`` (step, storey; spring shear);
        the pattern and the frame's storey properties. Attributes ``pattern``,
        ``status`` ("ok"; "not-converged": a step did not converge, even split
        max_depth times, and the analysis stopped there, keeping the converged steps;
        "collapsed": past the peak the base shear fell to zero, the frame no longer
        stands under its gravity loads, and the analysis stopped at that point), ``initial_stiffness`` (N/m, base
        shear per roof displacement at the unloaded state), ``peak_base_shear`` (N),
        ``roof_drift_ratio_at_peak``, ``roof_displacement_at_peak`` (m), the
        tolerances and the caution.

    Notes
    -----
    The base shear is the shear resisted by storey 1 (spring shear minus the P-Delta
    shear P_1 d_1 / h_1); at each converged step it equals the sum of the applied
    floor forces, the load factor, within the force tolerance.

    References
    ----------
    Pushover (nonlinear static analysis) under a fixed lateral load pattern with
    displacement control: common practice. Displacement control: J.-L. Batoz and
    G. Dhatt (1979), Int. J. Numer. Methods Eng. 14, 1262-1267 (from memory on the
    pages). P-Delta as a linearised geometric stiffness -P/h per storey: common
    practice.
    """
    roof_drift = _check_positive("roof_drift", roof_drift)
    steps = _check_count("steps", steps, 1)
    max_iter = _check_count("max_iter", max_iter, 2)
    max_depth = _check_count("max_depth", max_depth, 0)
    tol_drift = _check_positive("tol_drift", tol_drift)
    tol_force = _check_positive("tol_force", tol_force)
    F = load_pattern(frame, pattern)
    pattern_name = pattern if isinstance(pattern, str) else "user-defined"

    n = frame.n_storeys
    kg = np.ascontiguousarray(frame.geometric_stiffness(), dtype=float)
    unstable = frame.stiffness - kg <= 0.0
    if unstable.any():
        i = int(np.flatnonzero(unstable)[0])
        raise InputError(f"gravity_load: storey {i + 1} carries P = {frame.gravity_load[i]:.6g} N, so "
                         f"P/h = {kg[i]:.6g} N/m is not below its stiffness {frame.stiffness[i]:.6g} N/m; "
                         f"the frame is unstable under gravity alone")
    law, P, S0 = frame.law_arrays()
    strength = np.where(np.isfinite(P[:, 1]) & (P[:, 1] > 0), P[:, 1], P[:, 0] * frame.height / 100.0)
    tol_u = tol_drift * float(frame.height.min())
    tol_r = tol_force * float(strength.max())
    H = frame.total_height
    targets = np.ascontiguousarray(np.arange(steps + 1) * (roof_drift * H / steps))
    targets[-1] = roof_drift * H

    T = steps + 1
    u = np.empty((T, n))
    lam = np.empty(T)
    shear = np.empty((T, n))
    k0 = np.empty(n)
    info = np.zeros(4, dtype=np.int64)
    _pushover(np.ascontiguousarray(law), np.ascontiguousarray(P), np.ascontiguousarray(S0), kg, F, targets,
              tol_u, tol_r, max_iter, max_depth, u, lam, shear, k0, info)
    status, n_valid, iterations, split = (int(x) for x in info)
    u, lam, shear = u[:n_valid], lam[:n_valid], shear[:n_valid]

    d = np.diff(u, axis=1, prepend=0.0)
    drift = d / frame.height[None, :]
    base = shear[:, 0] - kg[0] * d[:, 0]
    roof = u[:, -1]
    G = np.cumsum(F[::-1])[::-1]
    initial = 1.0 / float(np.sum(G / k0))
    peak = int(np.argmax(base))

    data = {
        "roof_displacement": roof,
        "roof_drift_ratio": roof / H,
        "base_shear": base,
        "load_factor": lam,
        "displacement": u,
        "drift_ratio": drift,
        "storey_shear": shear,
        "load_pattern": F,
        "floor_height": np.cumsum(frame.height),
        "floor_mass": np.asarray(frame.mass),
        "storey_height": np.asarray(frame.height),
        "storey_stiffness": np.asarray(frame.stiffness),
        "storey_initial_tangent": k0,
        "storey_law": np.array(frame.law, dtype=object),
    }
    if frame.yield_shear is not None:
        data["storey_yield_shear"] = np.where([name == "linear" for name in frame.law], np.nan,
                                              frame.yield_shear)
        data["storey_hardening"] = np.asarray(frame.hardening)
    if frame.gravity_load is not None:
        data["storey_gravity_load"] = np.asarray(frame.gravity_load)
    coords = {"step": ("step", np.arange(n_valid)), "floor": ("floor", np.arange(1, n + 1)),
              "storey": ("storey", np.arange(1, n + 1))}
    ds = xr.Dataset({name: _variable(name, value) for name, value in data.items()}, coords=coords)
    ds.attrs.update(base_attributes())
    ds.attrs.update(
        title="swaysim pushover (static, monotonic, roof displacement control)",
        frame=frame.name,
        storeys=n,
        pattern=pattern_name,
        status=STATUS[status],
        steps_planned=steps,
        steps_done=n_valid - 1,
        roof_drift_target=roof_drift,
        max_iter=max_iter,
        tol_drift=tol_drift,
        tol_force=tol_force,
        tol_displacement_m=tol_u,
        tol_unbalanced_force_N=tol_r,
        max_depth=max_depth,
        newton_iterations=iterations,
        split_steps=split,
        p_delta="yes" if frame.gravity_load is not None and np.any(kg > 0) else "no",
        weight_N=frame.total_mass * STANDARD_GRAVITY,
        initial_stiffness=initial,
        peak_base_shear=float(base[peak]),
        roof_drift_ratio_at_peak=float(roof[peak] / H),
        roof_displacement_at_peak=float(roof[peak]),
        caution=CAUTION,
    )
    return ds
