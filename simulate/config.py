"""Reading and validating TOML configuration files.

A config describes one building (``[building]``, ``[damping]``), how to analyse
it (``[analysis]``), what shakes it (``[records]`` files and ``[[harmonic]]``
loads) and where the results go (``[output]``)::

    title = "..."                     # optional
    [building]
    name = "..."                      # optional; default the config file's stem
    storeys = 6                       # needed when mass, height and stiffness are single numbers
    mass = 4.2e5                      # kg per floor; number or list, floor 1 first
    height = 3.6                      # m; number or list, storey 1 first
    stiffness = 6.0e8                 # N/m; number or list
    # or, instead of stiffness:
    period = 0.9                      # target fundamental period, s
    stiffness_profile = "uniform"     # "uniform" | "linear" | list of relative values

    # Yielding storeys (optional; without them the storeys are linear). At most one of:
    yield_shear = 4.0e6               # N; number or list, storey 1 first
    yield_drift_ratio = 0.004         # Vy_i = k_i * ratio * h_i (number or list)
    yield_base_shear_coefficient = 0.15   # Vy_i = coefficient * g * (mass of floors i..N): storey 1
                                      # gets coefficient * total weight, every storey the same
                                      # coefficient times the weight it carries (a convenience of
                                      # this program, not a code's lateral force distribution)
    hardening = 0.03                  # post-yield stiffness ratio alpha in [0, 1); number or list
    law = "bilinear"                  # default with a yield key; any name of simulate.laws.LAWS,
                                      # one for all storeys or a list
    # P-Delta (optional), at most one of:
    gravity_load = 2.0e7              # N carried by each storey; number or list
    floor_gravity_load = 4.0e6        # N applied at each floor; storey i carries floors i..N
    gravity = "mass"                  # P_i = g * (mass of floors i..N), g = 9.80665 m/s2

    [building.bouc_wen]               # optional parameters of the "bouc-wen" law
    A = 1.0                           # each a number or a list, storey 1 first
    beta = 0.5
    gamma = 0.5
    n = 2.0

    [damping]                         # optional; default Rayleigh, 5 % in modes 1 and 3
    model = "rayleigh"                # rayleigh | modal | mass | stiffness | none
    ratio = 0.05
    modes = [1, 3]                    # rayleigh only
    mode = 1                          # mass and stiffness only
    stiffness = "initial"             # rayleigh and stiffness only: "initial" or "tangent"

    [analysis]                        # optional
    method = "newmark"                # or "state-space"
    scheme = "average-acceleration"   # newmark only; or gamma and beta
    dt = 0.005                        # optional; default the smallest record step
    tail = 0.0                        # s of free vibration after each excitation
    scale = 1.0                       # factor on every ground-motion record, or a list of
                                      # factors: one analysis per record and factor (swaysim run)
    collapse_drift = 0.10             # storey drift ratio that stops a nonlinear analysis
    tol_drift = 1e-10                 # newmark only: Newton tolerances and step splitting
    tol_force = 1e-8
    max_iter = 25
    max_depth = 8
    linear_twin = false               # also run the frame's linear twin (same excitations)

    [records]
    files = ["../motions/*.txt"]      # relative to the config file's folder
    units = "g"                       # g | m/s2 | cm/s2
    dt = 0.01                         # only for one-value-per-line files
    # or, instead of files/units/dt: a suite file (TOML or CSV) listing the records with
    # their own options (see simulate.excitation.suites)
    # suite = "far_field.toml"

    [[harmonic]]                      # any number
    kind = "ground"                   # or "force"
    amplitude = 0.05                  # ground: in units; force: N (one or one per floor)
    frequency = 1.2                   # Hz; or mode = 1
    duration = 30.0

    [output]
    file = "demo.nc"                  # relative to the current working folder

Every mistake raises :class:`~simulate.errors.ConfigError` with a one-line
message naming the file and the table and key (or the line of a TOML syntax
error); record-file errors are :class:`~simulate.errors.RecordError` and name
the record file.
"""

from __future__ import annotations

import difflib
import glob
import hashlib
import math
import os
import re
import tomllib
from dataclasses import dataclass, field
from numbers import Real
from pathlib import Path

import numpy as np

from simulate.files import read_input
from simulate.errors import ConfigError, InputError
from simulate.excitation import FloorForces, Record, harmonic_floor_force, harmonic_ground_motion
from simulate.excitation.record import normalise_units
from simulate.excitation.suites import SuiteEntry, suite_entries
from simulate.kernels import METHODS, NEWMARK_SCHEMES
from simulate.laws import LAWS
from simulate.model import (
    DAMPING_MODELS, MassProportional, ModalDamping, NoDamping, Rayleigh, STIFFNESS_PROFILES,
    ShearFrame, StiffnessProportional, stiffness_for_period,
)
from simulate.model.damping import DAMPING_STIFFNESS
from simulate.results.netcdf import WRITERS
from simulate.settings import STANDARD_GRAVITY

__all__ = ["Config", "Analysis", "Harmonic", "load_config"]

#: Top-level keys and tables of a config file.
TOP_LEVEL_KEYS = ("title", "building", "damping", "analysis", "records", "harmonic", "output")
#: Alternative ways to give the storey strengths (at most one).
YIELD_KEYS = ("yield_shear", "yield_drift_ratio", "yield_base_shear_coefficient")
#: Alternative ways to give the gravity loads for P-Delta (at most one).
GRAVITY_KEYS = ("gravity_load", "floor_gravity_load", "gravity")
#: ``gravity = "..."`` values: where the storey gravity loads come from.
GRAVITY_SOURCES = ("mass",)
#: ``[building.<law>]`` sub-table names of the laws with parameters of their own ("bouc-wen" -> "bouc_wen").
LAW_TABLES = {cls.name.replace("-", "_"): cls.name for cls in LAWS.values() if cls.extra}
BUILDING_KEYS = (("name", "storeys", "mass", "height", "stiffness", "period", "stiffness_profile")
                 + YIELD_KEYS + ("hardening", "law") + GRAVITY_KEYS + tuple(LAW_TABLES))
DAMPING_KEYS = ("model", "ratio", "modes", "mode", "stiffness")
#: Newton-Newmark parameters a config may set (newmark only).
NEWMARK_SOLVER_KEYS = ("tol_drift", "tol_force", "max_iter", "max_depth")
ANALYSIS_KEYS = (("method", "scheme", "gamma", "beta", "dt", "tail", "scale", "collapse_drift")
                 + NEWMARK_SOLVER_KEYS + ("linear_twin",))

#: Default storey drift ratio that stops a nonlinear analysis as collapsed.
DEFAULT_COLLAPSE_DRIFT = 0.10
#: Largest ``max_depth``: beyond 2^20 substeps a step is better rerun with a smaller dt.
MAX_SPLIT_DEPTH = 20
RECORDS_KEYS = ("files", "suite", "units", "dt")
HARMONIC_KEYS = ("kind", "name", "amplitude", "units", "frequency", "mode", "duration", "dt",
                 "ramp", "floors")
OUTPUT_KEYS = ("file",)

HARMONIC_KINDS = ("ground", "force")

#: Default harmonic time step: this fraction of the load period, at most HARMONIC_MAX_DT.
HARMONIC_STEPS_PER_CYCLE = 50
HARMONIC_MAX_DT = 0.01

_GLOB_CHARS = re.compile(r"[*?\[]")
_TOML_LINE = re.compile(r"at line (\d+)")


# ---------------------------------------------------------------------- tables
class _Table:
    """One TOML table with its location, for checked access and error messages."""

    def __init__(self, source: str, name: str, data: dict, allowed: tuple[str, ...]):
        self.source = source
        self.name = name
        self.data = data
        unknown = [key for key in data if key not in allowed]
        if unknown:
            key = unknown[0]
            hint = difflib.get_close_matches(key, allowed, n=1, cutoff=0.6)
            suggestion = f"; did you mean {hint[0]!r}?" if hint else f"; expected one of {', '.join(allowed)}"
            raise ConfigError(f"{self.where()}unknown key {key!r}{suggestion}")

    def where(self, key: str | None = None) -> str:
        """Message prefix such as ``demo.toml: [building] mass: ``."""
        parts = f"{self.source}: "
        if self.name:
            parts += f"{self.name} "
        if key:
            parts += f"{key}: "
        return parts

    def error(self, key: str | None, message: str) -> ConfigError:
        return ConfigError(f"{self.where(key)}{message}")

    def __contains__(self, key: str) -> bool:
        return key in self.data

    def get(self, key: str, default=None):
        return self.data.get(key, default)

    # -------------------------------------------------------- typed getters
    def number(self, key: str, default=None, *, positive=False, non_negative=False,
               nonzero=False, required=False):
        """A finite float (ints accepted, booleans not), optionally sign-checked."""
        if key not in self.data:
            if required:
                raise self.error(key, "missing; expected a number")
            return default
        return self.check_number(key, self.data[key], None, positive=positive,
                                  non_negative=non_negative, nonzero=nonzero)

    def check_number(self, key, value, item_label, *, positive=False, non_negative=False,
                      nonzero=False) -> float:
        kind = ("a positive number" if positive else "a number >= 0" if non_negative
                else "a non-zero number" if nonzero else "a number")
        has = f"{item_label} has" if item_label else "got"
        if isinstance(value, bool) or not isinstance(value, Real):
            raise self.error(key, f"{has} {_show(value)}, expected {kind}")
        value = float(value)
        if not math.isfinite(value):
            raise self.error(key, f"{has} {_show(value)}, expected a finite number")
        if ((positive and value <= 0.0) or (non_negative and value < 0.0)
                or (nonzero and value == 0.0)):
            raise self.error(key, f"{has} {_show(value)}, expected {kind}")
        return value

    def numbers(self, key: str, item: str, *, positive=True, non_negative=False) -> float | list[float]:
        """A number or a non-empty flat list of numbers (``item`` names the entries)."""
        value = self.data[key]
        if isinstance(value, list):
            if not value:
                raise self.error(key, "the list is empty; give a number or one per " + item)
            return [self.check_number(key, v, f"{item} {i}", positive=positive, non_negative=non_negative)
                    for i, v in enumerate(value, start=1)]
        return self.check_number(key, value, None, positive=positive, non_negative=non_negative)

    def ratios(self, key: str, item: str, low: float, high: float, text: str) -> float | list[float]:
        """Like :meth:`numbers`, each value in [low, high); ``text`` says what was expected."""
        value = self.numbers(key, item, positive=False)
        for i, v in enumerate(value if isinstance(value, list) else [value], start=1):
            if not low <= v < high:
                has = f"{item} {i} has" if isinstance(value, list) else "got"
                raise self.error(key, f"{has} {_show(v)}, expected {text}")
        return value

    def boolean(self, key: str, default: bool = False) -> bool:
        if key not in self.data:
            return default
        value = self.data[key]
        if not isinstance(value, bool):
            raise self.error(key, f"got {_show(value)}, expected true or false (no quotes)")
        return value

    def integer(self, key: str, default=None, *, minimum: int | None = None, required=False):
        if key not in self.data:
            if required:
                raise self.error(key, "missing; expected a whole number")
            return default
        return self.check_integer(key, self.data[key], None, minimum)

    def check_integer(self, key, value, item_label, minimum) -> int:
        has = f"{item_label} has" if item_label else "got"
        if isinstance(value, bool) or not isinstance(value, int):
            raise self.error(key, f"{has} {_show(value)}, expected a whole number")
        if minimum is not None and value < minimum:
            raise self.error(key, f"{has} {value}, expected a whole number >= {minimum}")
        return value

    def string(self, key: str, default=None, *, choices=None, required=False):
        if key not in self.data:
            if required:
                raise self.error(key, "missing; expected text")
            return default
        value = self.data[key]
        if not isinstance(value, str):
            raise self.error(key, f"got {_show(value)}, expected text in quotes")
        if choices is not None and value not in choices:
            raise self.error(key, _choice_message(value, choices))
        return value


def _show(value) -> str:
    """A short rendering of a TOML value for messages."""
    if isinstance(value, dict):
        return "a table"
    if isinstance(value, list):
        return "a list"
    return repr(value)


def _choice_message(value: str, choices) -> str:
    choices = list(choices)
    hint = difflib.get_close_matches(value, choices, n=1, cutoff=0.6)
    text = f"unknown value {value!r}; choose one of {', '.join(repr(c) for c in choices)}"
    if hint:
        text = f"unknown value {value!r}; did you mean {hint[0]!r}? (choices: {', '.join(choices)})"
    return text


def _table(source: str, doc: dict, key: str, allowed: tuple[str, ...], *, required=False) -> _Table | None:
    """The sub-table ``[key]`` of the document, checked for unknown keys."""
    if key not in doc:
        if required:
            raise ConfigError(f"{source}: [{key}] table is missing")
        return None
    data = doc[key]
    if not isinstance(data, dict):
        raise ConfigError(f"{source}: {key}: got {_show(data)}, expected a table [{key}]")
    return _Table(source, f"[{key}]", data, allowed)


# ---------------------------------------------------------------------- result
@dataclass(frozen=True)
class Analysis:
    """The ``[analysis]`` table: method and parameters, time step, tail, scale, collapse limit.

    ``linear_twin`` asks for a second run of the frame's linear twin on the same
    excitations (see :func:`simulate.linear_twin`). ``scales`` holds every factor of
    ``scale`` (a list in the config: one analysis per record and factor); ``scale``
    is the first of them.
    """

    method: str = "newmark"
    params: dict = field(default_factory=dict)
    dt: float | None = None
    tail: float = 0.0
    scale: float = 1.0
    collapse_drift: float = DEFAULT_COLLAPSE_DRIFT
    linear_twin: bool = False
    scales: tuple[float, ...] = (1.0,)


@dataclass(frozen=True)
class Harmonic:
    """One validated ``[[harmonic]]`` entry (index is 1-based, for messages)."""

    index: int
    kind: str
    amplitude: float | list[float]
    frequency: float
    duration: float
    dt: float
    ramp: float = 0.0
    units: str = "g"
    floors: tuple[int, ...] = ()
    name: str | None = None


@dataclass(frozen=True, eq=False)
class Config:
    """A validated configuration file.

    Attributes
    ----------
    path : Path
        The config file as given.
    text : str
        Its text, kept so results can carry it.
    sha256 : str
        Hex digest of the file's bytes.
    title : str or None
    frame : ShearFrame
    analysis : Analysis
    record_files : tuple of Path
        Ground-motion record files (globs expanded, sorted per pattern).
    record_units : str or None
        Units of the record files; None lets each file's own header decide (else g).
    record_dt : float or None
    record_entries : tuple of SuiteEntry
        The record files with their reading options (from ``files``, or from the
        suite file of ``[records] suite``), checked to exist but not read.
    harmonics : tuple of Harmonic
    output : Path or None
        ``[output] file``, relative to the current working folder.
    strength_from : str or None
        The ``[building]`` key the storey strengths came from (one of YIELD_KEYS).
    gravity_from : str or None
        Where the P-Delta gravity loads came from: ``"gravity_load"``,
        ``"floor_gravity_load"`` or ``"mass"`` (``gravity = "mass"``).
    """

    path: Path
    text: str
    sha256: str
    title: str | None
    frame: ShearFrame
    analysis: Analysis
    record_files: tuple[Path, ...] = ()
    record_units: str | None = None
    record_dt: float | None = None
    record_entries: tuple[SuiteEntry, ...] = ()
    harmonics: tuple[Harmonic, ...] = ()
    output: Path | None = None
    strength_from: str | None = None
    gravity_from: str | None = None

    @property
    def n_excitations(self) -> int:
        return len(self.record_entries) + len(self.harmonics)

    def excitations(self) -> list[Record | FloorForces]:
        """Read the record files and build the harmonic loads, records first.

        Raises
        ------
        simulate.errors.RecordError
            For a record file that cannot be used (the message names the file).
        simulate.errors.ConfigError
            For a harmonic load that cannot be built.
        """
        loads: list[Record | FloorForces] = [entry.read_one() for entry in self.record_entries]
        for spec in self.harmonics:
            loads.append(self._harmonic(spec))
        return loads

    def harmonic_loads(self) -> list[Record | FloorForces]:
        """The ``[[harmonic]]`` loads, in config order (ConfigError for one that cannot be built)."""
        return [self._harmonic(spec) for spec in self.harmonics]

    def _harmonic(self, spec: Harmonic) -> Record | FloorForces:
        try:
            if spec.kind == "ground":
                return harmonic_ground_motion(spec.amplitude, spec.frequency, spec.duration, spec.dt,
                                              units=spec.units, ramp=spec.ramp, name=spec.name)
            return harmonic_floor_force(spec.amplitude, spec.frequency, spec.duration, spec.dt,
                                        floors=list(spec.floors), n_floors=self.frame.n_storeys,
                                        ramp=spec.ramp, name=spec.name)
        except InputError as exc:
            raise ConfigError(f"{self.path}: [[harmonic]] #{spec.index}: {exc}") from None

    def scale_factors(self, scale: float | None = None) -> list[float]:
        """One factor per excitation: ``[analysis] scale`` on records, 1 on harmonic loads.

        ``scale`` replaces the config's factor; it is needed when ``[analysis] scale``
        lists several factors (a suite runs each record once per factor).
        """
        if scale is None:
            if len(self.analysis.scales) > 1:
                raise ConfigError(
                    f"{self.path}: [analysis] scale: lists {len(self.analysis.scales)} factors; one run "
                    "of simulate.run takes one factor per record (swaysim run runs every factor)")
            scale = self.analysis.scale
        return [float(scale)] * len(self.record_entries) + [1.0] * len(self.harmonics)

    def attributes(self) -> dict:
        """Dataset attributes that tie results to this config."""
        attrs = {
            "config_path": str(self.path.resolve()),
            "config_sha256": self.sha256,
            "config_text": self.text,
        }
        if self.title:
            attrs["config_title"] = self.title
        return attrs

    def run_kwargs(self, method: str | None = None, dt: float | None = None,
                   scale: float | None = None) -> dict:
        """Keyword arguments for ``simulate.run(frame, excitations, **kwargs)``.

        ``method`` and ``dt`` override the config (command-line options); the
        config's method parameters apply only when the method stays the same.
        ``scale`` picks the record factor when ``[analysis] scale`` lists several.
        """
        chosen = self.analysis.method if method is None else method
        params = dict(self.analysis.params) if chosen == self.analysis.method else {}
        return dict(
            dt=self.analysis.dt if dt is None else dt,
            method=chosen,
            scale=self.scale_factors(scale),
            tail=self.analysis.tail,
            collapse_drift=self.analysis.collapse_drift,
            attrs=self.attributes(),
            **params,
        )


# ---------------------------------------------------------------------- loading
def load_config(path) -> Config:
    """Read and validate the TOML config file ``path``.

    Parameters
    ----------
    path : str or os.PathLike

    Returns
    -------
    Config

    Raises
    ------
    simulate.errors.ConfigError
        For an unreadable file, a TOML syntax error (naming the line), an
        unknown key (with a suggestion), or a missing, mistyped or out-of-range
        value (naming the table and key).
    """
    path = Path(path)
    source = str(path)
    raw = read_input(path, ConfigError, "config file", missing="no such config file")
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        line = raw[:exc.start].count(b"\n") + 1
        raise ConfigError(f"{source}:{line}: not UTF-8 text; save the config as UTF-8") from None
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        message = str(exc)
        match = _TOML_LINE.search(message)
        prefix = f"{source}:{match.group(1)}" if match else source
        raise ConfigError(f"{prefix}: TOML syntax error: {message}") from None

    title = _Table(source, "", doc, TOP_LEVEL_KEYS).string("title")
    frame = _frame(source, doc, default_name=path.stem)
    analysis = _analysis(source, doc)
    if analysis.linear_twin and frame.is_linear:
        raise ConfigError(f"{source}: [analysis] linear_twin: the building is already linear (no yield "
                          f"strength, no gravity load in [building]); there is no twin to compare with")
    files, units, record_dt, entries = _records(source, doc, path.parent)
    harmonics = _harmonics(source, doc, frame, has_records=bool(files))
    output = None
    table = _table(source, doc, "output", OUTPUT_KEYS)
    if table is not None and "file" in table:
        output = Path(table.string("file"))
        if output.suffix.lower() not in WRITERS:
            raise table.error("file", f"{str(output)!r} has an unknown results format; "
                                      f"use a file name ending in {', '.join(WRITERS)}")
    building = doc["building"]
    gravity_from = next((key for key in GRAVITY_KEYS if key in building), None)
    if gravity_from == "gravity":
        gravity_from = building["gravity"]
    return Config(path=path, text=text, sha256=hashlib.sha256(raw).hexdigest(), title=title,
                  frame=frame, analysis=analysis, record_files=files, record_units=units,
                  record_dt=record_dt, record_entries=entries, harmonics=harmonics, output=output,
                  strength_from=next((key for key in YIELD_KEYS if key in building), None),
                  gravity_from=gravity_from)


def _frame(source: str, doc: dict, default_name: str) -> ShearFrame:
    """Build the ShearFrame from ``[building]`` (with its law sub-tables) and ``[damping]``."""
    b = _table(source, doc, "building", BUILDING_KEYS, required=True)
    name = b.string("name", default_name)
    for key in ("mass", "height"):
        if key not in b:
            raise b.error(key, "missing; expected a number or a list with one value per "
                               + ("floor" if key == "mass" else "storey"))
    if "stiffness" in b and "period" in b:
        raise b.error(None, "give either stiffness or period, not both")
    if "stiffness" not in b and "period" not in b:
        raise b.error(None, "stiffness is missing; give stiffness (N/m) or a target period (s)")
    if "stiffness_profile" in b and "period" not in b:
        raise b.error("stiffness_profile", "only used with period; with stiffness, give the "
                                           "storey stiffnesses directly")
    yield_key = _one_of(b, YIELD_KEYS, "the storey strengths")
    gravity_key = _one_of(b, GRAVITY_KEYS, "the gravity loads for P-Delta")

    values = {
        "mass": b.numbers("mass", "floor"),
        "height": b.numbers("height", "storey"),
    }
    if "stiffness" in b:
        values["stiffness"] = b.numbers("stiffness", "storey")
    period = b.number("period", positive=True)
    profile = b.get("stiffness_profile", "uniform")
    if isinstance(profile, list):
        values["stiffness_profile"] = b.numbers("stiffness_profile", "storey")
    elif not isinstance(profile, str):
        raise b.error("stiffness_profile", f"got {_show(profile)}, expected one of "
                                           f"{', '.join(STIFFNESS_PROFILES)} or a list of numbers")
    elif profile not in STIFFNESS_PROFILES:
        raise b.error("stiffness_profile", _choice_message(profile, STIFFNESS_PROFILES))

    # storey strengths, hardening, laws and gravity loads (validated before the sizes are known)
    if yield_key == "yield_shear":
        values["yield_shear"] = b.numbers("yield_shear", "storey")
    elif yield_key == "yield_drift_ratio":
        values["yield_drift_ratio"] = b.ratios("yield_drift_ratio", "storey", 0.0, 1.0,
                                               "a drift ratio > 0 such as 0.005")
        _nonzero(b, "yield_drift_ratio", "storey", values["yield_drift_ratio"])
    elif yield_key == "yield_base_shear_coefficient":
        coefficient = b.number("yield_base_shear_coefficient", positive=True)
    if "hardening" in b:
        if yield_key is None:
            raise b.error("hardening", "only used with yielding storeys; give one of "
                                       f"{', '.join(YIELD_KEYS)}")
        values["hardening"] = b.ratios("hardening", "storey", 0.0, 1.0,
                                       "a post-yield stiffness ratio in [0, 1), e.g. 0.03 for 3 %")
    laws = _laws(b)
    if isinstance(laws, list):
        values["law"] = laws
    if gravity_key == "gravity_load":
        values["gravity_load"] = b.numbers("gravity_load", "storey", positive=False, non_negative=True)
    elif gravity_key == "floor_gravity_load":
        values["floor_gravity_load"] = b.numbers("floor_gravity_load", "floor", positive=False,
                                                 non_negative=True)
    elif gravity_key == "gravity":
        b.string("gravity", choices=GRAVITY_SOURCES)

    storeys = b.integer("storeys", minimum=1)
    lengths = {key: len(v) for key, v in values.items() if isinstance(v, list)}
    if lengths:
        first_key, n = next(iter(lengths.items()))
        for key, size in lengths.items():
            if size != n:
                raise b.error(key, f"has {size} values but {first_key} has {n}; give one value "
                                   "per storey (or a single number)")
        if storeys is not None and storeys != n:
            raise b.error("storeys", f"is {storeys} but {first_key} lists {n} values")
    elif storeys is None:
        keys = [k for k in ("mass", "height", "stiffness") if k in values]
        keys = ", ".join(keys[:-1]) + " and " + keys[-1]
        raise b.error("storeys", f"missing; needed when {keys} are single numbers")
    else:
        n = storeys

    def per_storey(key):
        return np.broadcast_to(np.asarray(values[key], float), (n,)).copy()

    mass = per_storey("mass")
    height = per_storey("height")
    if "stiffness" in values:
        stiffness = per_storey("stiffness")
    else:
        rel = values.get("stiffness_profile")
        rel = STIFFNESS_PROFILES[profile](n) if rel is None else np.asarray(rel, float)
        try:
            stiffness = stiffness_for_period(mass, height, period, rel)
        except InputError as exc:
            raise b.error("period", str(exc)) from None

    weight_above = STANDARD_GRAVITY * _sum_from_roof(mass)
    yield_shear = None
    if yield_key == "yield_shear":
        yield_shear = per_storey("yield_shear")
    elif yield_key == "yield_drift_ratio":
        yield_shear = stiffness * per_storey("yield_drift_ratio") * height
    elif yield_key == "yield_base_shear_coefficient":
        yield_shear = coefficient * weight_above
    hardening = per_storey("hardening") if "hardening" in values else 0.0

    law_names = None if laws is None else tuple(np.broadcast_to(np.asarray(laws, dtype=object), (n,)))
    if yield_key is None and law_names is not None:
        needy = [name for name in law_names if LAWS[name].needs_yield]
        if needy:
            raise b.error("law", f"the {needy[0]} law needs storey strengths; give one of "
                                 f"{', '.join(YIELD_KEYS)}")
    if yield_key is not None and law_names is not None and not any(LAWS[k].needs_yield for k in law_names):
        raise b.error(yield_key, "not used: every storey's law is " + ", ".join(sorted(set(law_names)))
                                 + "; drop it or choose a yielding law")
    if law_names is None:
        law_names = ("bilinear" if yield_key is not None else "linear",) * n
    law_params = _law_params(source, b, law_names, n, stiffness, yield_shear, hardening)

    gravity_load = None
    if gravity_key == "gravity_load":
        gravity_load = per_storey("gravity_load")
    elif gravity_key == "floor_gravity_load":
        gravity_load = _sum_from_roof(per_storey("floor_gravity_load"))
    elif gravity_key == "gravity":
        gravity_load = weight_above

    damping = _damping(source, doc, n)
    try:
        frame = ShearFrame(mass=mass, stiffness=stiffness, height=height, yield_shear=yield_shear,
                           hardening=hardening, gravity_load=gravity_load, damping=damping, name=name,
                           law=None if laws is None else law_names, law_params=law_params or None)
    except InputError as exc:
        raise ConfigError(f"{source}: [building] {exc}") from None
    try:
        frame.damping_matrix()
    except InputError as exc:
        raise ConfigError(f"{source}: [damping] {exc}") from None
    return frame


def _one_of(table: _Table, keys: tuple[str, ...], what: str) -> str | None:
    """The one key of ``keys`` present in ``table`` (or None); an error if several are."""
    given = [key for key in keys if key in table]
    if len(given) > 1:
        listed = " and ".join(given) if len(given) == 2 else ", ".join(given[:-1]) + " and " + given[-1]
        raise table.error(None, f"{listed} {'both' if len(given) == 2 else 'all'} give {what}; "
                                f"keep one of {', '.join(keys)}")
    return given[0] if given else None


def _nonzero(table: _Table, key: str, item: str, value) -> None:
    for i, v in enumerate(value if isinstance(value, list) else [value], start=1):
        if v <= 0.0:
            has = f"{item} {i} has" if isinstance(value, list) else "got"
            raise table.error(key, f"{has} {_show(v)}, expected a drift ratio > 0 such as 0.005")


def _sum_from_roof(per_floor: np.ndarray) -> np.ndarray:
    """Storey i carries floors i..N: the running sum from the roof down."""
    return np.cumsum(np.asarray(per_floor, float)[::-1])[::-1].copy()


def _laws(b: _Table) -> str | list[str] | None:
    """``law``: one name for every storey or a list, each a key of ``simulate.laws.LAWS``."""
    if "law" not in b:
        return None
    raw = b.get("law")
    if isinstance(raw, str):
        if raw not in LAWS:
            raise b.error("law", _choice_message(raw, LAWS))
        return raw
    if not isinstance(raw, list) or not raw:
        raise b.error("law", f"got {_show(raw)}, expected a law name such as \"bilinear\" "
                             "or a list with one per storey")
    for i, name in enumerate(raw, start=1):
        if not isinstance(name, str):
            raise b.error("law", f"storey {i} has {_show(name)}, expected a law name in quotes")
        if name not in LAWS:
            raise b.error("law", f"storey {i}: {_choice_message(name, LAWS)}")
    return list(raw)


def _law_params(source, b: _Table, law_names, n, stiffness, yield_shear, hardening) -> dict:
    """Parameters from the ``[building.<law>]`` sub-tables, checked by the laws themselves."""
    params: dict = {}
    for table_key, law in LAW_TABLES.items():
        if table_key not in b:
            continue
        data = b.get(table_key)
        if not isinstance(data, dict):
            raise b.error(table_key, f"got {_show(data)}, expected a table [building.{table_key}]")
        t = _Table(source, f"[building.{table_key}]", data, tuple(LAWS[law].extra))
        if law not in law_names:
            raise t.error(None, f"only used by storeys with law = \"{law}\"; no storey has that law")
        for key in t.data:
            value = t.numbers(key, "storey", positive=False)
            if isinstance(value, list) and len(value) != n:
                raise t.error(key, f"has {len(value)} values but the frame has {n} storeys; give one "
                                   "value per storey (or a single number)")
            params[key] = value
        cls = LAWS[law]
        alpha = np.broadcast_to(np.asarray(hardening, float), (n,))
        for i, name in enumerate(law_names):
            if name != law:
                continue
            row = {key: float(np.broadcast_to(np.asarray(v, float), (n,))[i]) for key, v in params.items()
                   if key in cls.extra}
            try:
                cls.check(i + 1, float(stiffness[i]), float(yield_shear[i]), float(alpha[i]), row)
            except InputError as exc:
                raise t.error(None, str(exc)) from None
    return params


def _default_rayleigh_modes(n: int) -> tuple[int, int]:
    """Modes 1 and 3, or 1 and 2 for frames with fewer than 3 storeys."""
    return (1, 3) if n >= 3 else (1, 2)


def _damping(source: str, doc: dict, n: int):
    """The damping model from ``[damping]`` (default: Rayleigh 5 % in modes 1 and 3)."""
    d = _table(source, doc, "damping", DAMPING_KEYS)
    if d is None:
        return Rayleigh(ratio=0.05, modes=_default_rayleigh_modes(n))
    model = d.string("model", "rayleigh", choices=DAMPING_MODELS)
    only = {"modes": ("rayleigh",), "mode": ("mass", "stiffness"),
            "ratio": ("rayleigh", "modal", "mass", "stiffness"), "stiffness": ("rayleigh", "stiffness")}
    for key, models in only.items():
        if key in d and model not in models:
            used = " and ".join(models)
            raise d.error(key, f"not used by model {model!r} (only by {used})")

    def ratio_value(key, value, label=None) -> float:
        r = d.check_number(key, value, label, non_negative=True)
        if r >= 1.0:
            has = f"{label} has" if label else "got"
            raise d.error(key, f"{has} {r!r}, expected a damping ratio in [0, 1), e.g. 0.05 for 5 %")
        return r

    def mode_number(key, value, label=None) -> int:
        m = d.check_integer(key, value, label, 1)
        if m > n:
            raise d.error(key, f"mode {m} does not exist; the frame has {n} storeys and {n} modes")
        return m

    stiffness = d.string("stiffness", "initial", choices=DAMPING_STIFFNESS)
    try:
        if model == "none":
            return NoDamping()
        raw = d.get("ratio", 0.05)
        if model == "rayleigh":
            if isinstance(raw, list):
                if len(raw) != 2:
                    raise d.error("ratio", f"has {len(raw)} values, expected one number or two [z_i, z_j]")
                ratio = tuple(ratio_value("ratio", v, f"entry {i}") for i, v in enumerate(raw, 1))
            else:
                ratio = ratio_value("ratio", raw)
            if "modes" in d:
                modes = d.get("modes")
                if not isinstance(modes, list) or len(modes) != 2:
                    raise d.error("modes", f"got {_show(modes)}, expected two mode numbers such as [1, 3]")
                modes = tuple(mode_number("modes", v, f"entry {i}") for i, v in enumerate(modes, 1))
                if modes[0] == modes[1]:
                    raise d.error("modes", f"gives mode {modes[0]} twice; expected two different modes")
            else:
                modes = _default_rayleigh_modes(n)
            return Rayleigh(ratio=ratio, modes=modes, stiffness=stiffness)
        if model == "modal":
            if isinstance(raw, list):
                if not raw:
                    raise d.error("ratio", "the list is empty; give a number or one per mode")
                if len(raw) > n:
                    raise d.error("ratio", f"has {len(raw)} values but the frame has {n} modes")
                ratios = tuple(ratio_value("ratio", v, f"mode {i}") for i, v in enumerate(raw, 1))
            else:
                ratios = ratio_value("ratio", raw)
            return ModalDamping(ratios=ratios)
        ratio = ratio_value("ratio", raw)
        mode = mode_number("mode", d.get("mode", 1))
        if model == "mass":
            return MassProportional(ratio=ratio, mode=mode)
        return StiffnessProportional(ratio=ratio, mode=mode, stiffness=stiffness)
    except ConfigError:
        raise
    except InputError as exc:
        raise ConfigError(f"{source}: [damping] {exc}") from None


def _analysis(source: str, doc: dict) -> Analysis:
    a = _table(source, doc, "analysis", ANALYSIS_KEYS)
    if a is None:
        return Analysis()
    method = a.string("method", "newmark", choices=METHODS)
    params: dict = {}
    newmark_keys = [k for k in ("scheme", "gamma", "beta") + NEWMARK_SOLVER_KEYS if k in a]
    if newmark_keys and method != "newmark":
        raise a.error(newmark_keys[0], f"only used with method 'newmark', not {method!r}")
    if "scheme" in a:
        if "gamma" in a or "beta" in a:
            raise a.error("scheme", "give either scheme or gamma and beta, not both")
        params = dict(NEWMARK_SCHEMES[a.string("scheme", choices=NEWMARK_SCHEMES)])
    for key in ("gamma", "beta", "tol_drift", "tol_force"):
        if key in a:
            params[key] = a.number(key, positive=True)
    if "max_iter" in a:
        params["max_iter"] = a.integer("max_iter", minimum=1)
    if "max_depth" in a:
        params["max_depth"] = a.integer("max_depth", minimum=0)
        if params["max_depth"] > MAX_SPLIT_DEPTH:
            raise a.error("max_depth", f"got {params['max_depth']}, expected a whole number from 0 to "
                                       f"{MAX_SPLIT_DEPTH} (a step is split into at most 2^max_depth substeps)")
    scales = _scales(a)
    collapse_drift = a.number("collapse_drift", DEFAULT_COLLAPSE_DRIFT, positive=True)
    if collapse_drift > 1.0:
        raise a.error("collapse_drift", f"got {collapse_drift!r}, expected a storey drift ratio in (0, 1], "
                                        "e.g. 0.10 for 10 %")
    return Analysis(
        method=method,
        params=params,
        dt=a.number("dt", positive=True),
        tail=a.number("tail", 0.0, non_negative=True),
        scale=scales[0],
        collapse_drift=collapse_drift,
        linear_twin=a.boolean("linear_twin"),
        scales=scales,
    )


def _scales(a: _Table) -> tuple[float, ...]:
    """``scale``: one non-zero factor or a list of different non-zero factors."""
    if not isinstance(a.get("scale"), list):
        return (a.number("scale", 1.0, nonzero=True),)
    values = a.numbers("scale", "factor", positive=False)
    for i, value in enumerate(values, start=1):
        if value == 0.0:
            raise a.error("scale", f"factor {i} is 0, which removes the record; expected non-zero factors")
        if value in values[:i - 1]:
            raise a.error("scale", f"factor {i} ({value:g}) is listed twice")
    return tuple(values)


def _records(source: str, doc: dict, folder: Path):
    """``[records]``: the record files, their units and dt, and the files with their reading options."""
    r = _table(source, doc, "records", RECORDS_KEYS)
    if r is None:
        return (), None, None, ()
    if r.get("suite") is not None:
        return _suite_records(r, folder)
    # without [records] units, each file's own "# units = ..." header decides (else g)
    units = r.string("units", None)
    if units is not None:
        try:
            units = normalise_units(units, label="units")
        except InputError as exc:
            raise r.error(None, str(exc)) from None
    dt = r.number("dt", positive=True)
    patterns = r.get("files")
    if patterns is None:
        raise r.error("files", "missing; expected a list of record files or patterns such as "
                               "[\"motions/*.txt\"], or a suite file (suite = \"records.toml\")")
    if isinstance(patterns, str):
        patterns = [patterns]
    if not isinstance(patterns, list) or not patterns:
        raise r.error("files", f"got {_show(patterns)}, expected a non-empty list of file names")
    files: list[Path] = []
    for i, pattern in enumerate(patterns, start=1):
        if not isinstance(pattern, str) or not pattern.strip():
            raise r.error("files", f"entry {i} is {_show(pattern)}, expected a file name in quotes")
        full = os.path.normpath(os.path.join(folder, os.path.expanduser(pattern)))
        if _GLOB_CHARS.search(pattern):
            matches = sorted(p for p in glob.glob(full) if os.path.isfile(p))
            if not matches:
                raise r.error("files", f"{pattern!r} matches no file (looked for {full})")
        else:
            if not os.path.isfile(full):
                what = "is a folder" if os.path.isdir(full) else "not found"
                raise r.error("files", f"{pattern!r} {what} (looked for {full})")
            matches = [full]
        for match in matches:
            if Path(match) not in files:
                files.append(Path(match))
    options = {key: value for key, value in (("dt", dt), ("units", units)) if value is not None}
    entries = tuple(SuiteEntry(path=path, options=options) for path in files)
    return tuple(files), units, dt, entries


def _suite_records(r, folder: Path):
    """``[records] suite = "FILE"``: the suite file's entries (it gives units and dt itself)."""
    for key in ("files", "units", "dt"):
        if r.get(key) is not None:
            raise r.error(key, "give either a suite file or files (with units and dt), not both; "
                               "a suite file sets units and dt per record or in its [defaults]")
    name = r.string("suite")
    if not name.strip():
        raise r.error("suite", "expected the name of a suite file (.toml or .csv)")
    path = Path(os.path.normpath(os.path.join(folder, os.path.expanduser(name))))
    if not path.is_file():
        what = "is a folder" if path.is_dir() else "not found"
        raise r.error("suite", f"{name!r} {what} (looked for {path})")
    try:
        entries = tuple(suite_entries(path))
    except ConfigError as exc:
        raise r.error("suite", str(exc)) from None
    files = tuple(dict.fromkeys(entry.path for entry in entries))
    return files, None, None, entries


def _harmonics(source: str, doc: dict, frame: ShearFrame, has_records: bool) -> tuple[Harmonic, ...]:
    entries = doc.get("harmonic", [])
    if isinstance(entries, dict):
        raise ConfigError(f"{source}: [harmonic]: write [[harmonic]] (double brackets), one per load")
    if not isinstance(entries, list):
        raise ConfigError(f"{source}: harmonic: got {_show(entries)}, expected [[harmonic]] tables")
    if not entries and not has_records:
        raise ConfigError(f"{source}: nothing to run: give record files in [records] files "
                          "or at least one [[harmonic]] load")
    out = []
    n = frame.n_storeys
    for index, data in enumerate(entries, start=1):
        if not isinstance(data, dict):
            raise ConfigError(f"{source}: [[harmonic]] #{index}: expected a table")
        h = _Table(source, f"[[harmonic]] #{index}", data, HARMONIC_KEYS)
        kind = h.string("kind", "ground", choices=HARMONIC_KINDS)
        if kind == "ground":
            if "floors" in h:
                raise h.error("floors", "only used with kind = \"force\"")
            units = h.string("units", "g")
            try:
                units = normalise_units(units, label="units")
            except InputError as exc:
                raise h.error(None, str(exc)) from None
            amplitude = h.number("amplitude", required=True)
            floors: tuple[int, ...] = ()
        else:
            if "units" in h:
                raise h.error("units", "only used with kind = \"ground\" (floor forces are in N)")
            units = "g"
            floors_raw = h.get("floors", [n])
            if isinstance(floors_raw, int) and not isinstance(floors_raw, bool):
                floors_raw = [floors_raw]
            if not isinstance(floors_raw, list) or not floors_raw:
                raise h.error("floors", f"got {_show(floors_raw)}, expected a list of floor numbers such as [{n}]")
            floors = tuple(h.check_integer("floors", v, f"entry {i}", 1) for i, v in enumerate(floors_raw, 1))
            for f in floors:
                if f > n:
                    raise h.error("floors", f"floor {f} does not exist; floors are 1..{n} from the ground up")
            if "amplitude" not in h:
                raise h.error("amplitude", "missing; expected a force in N (one, or one per floor)")
            amplitude = h.numbers("amplitude", "floor", positive=False)
            if isinstance(amplitude, list) and len(amplitude) != len(floors):
                raise h.error("amplitude", f"has {len(amplitude)} values for {len(floors)} floors; "
                                           "give one, or one per floor")
        if ("frequency" in h) == ("mode" in h):
            raise h.error(None, "give either frequency (Hz) or mode (a natural mode of the frame), not "
                                + ("both" if "mode" in h else "neither"))
        name = h.string("name")
        if "mode" in h:
            mode = h.integer("mode", minimum=1)
            if mode > n:
                raise h.error("mode", f"mode {mode} does not exist; the frame has {n} modes")
            frequency = 1.0 / float(frame.periods()[mode - 1])
            if name is None:
                name = f"harmonic-mode{mode}"
        else:
            frequency = h.number("frequency", positive=True)
        duration = h.number("duration", required=True, positive=True)
        default_dt = min(HARMONIC_MAX_DT, 1.0 / (HARMONIC_STEPS_PER_CYCLE * frequency))
        dt = h.number("dt", default_dt, positive=True)
        ramp = h.number("ramp", 0.0, non_negative=True)
        out.append(Harmonic(index=index, kind=kind, amplitude=amplitude, frequency=frequency,
                            duration=duration, dt=dt, ramp=ramp, units=units, floors=floors, name=name))
    return tuple(out)
