"""The jobs of a suite: one analysis per (variant, excitation, scale factor), run in batches.

A config expands into a deterministic job list. Variants are the frame itself
and, with ``[analysis] linear_twin``, its linear twin; every ground-motion record
runs once per scale factor of ``[analysis] scale`` and every harmonic load once,
unscaled. Job ids read ``variant/record/scale`` (``frame/demo_ridge/1.0``) and do
not depend on the number of workers or on what has already run.

Jobs are grouped into batches of consecutive jobs of one variant. A batch is the
unit of work (one call of the batch kernels, which loop over its records with
``prange``) and the unit of storage in the run folder. The batches are fixed
when the job list is made, so a resumed run, a process pool and a Dask cluster
all run the very same batches and store the same bytes.

Record files are read once, when the job list is made: a file that cannot be
read becomes a job with status ``failed: <reason>`` instead of stopping the
suite.
"""

from __future__ import annotations

import contextlib
import dataclasses
import hashlib
import json
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import xarray as xr

from simulate.errors import InputError, RecordError
from simulate.excitation import FloorForces, Record
from simulate.kernels.methods import make_method
from simulate.suite.plan import make_plan
from simulate.suite.run import run

__all__ = ["Job", "Batch", "Storage", "Suite", "BatchSpec", "plan_suite", "run_batch",
           "VARIANTS", "KEEP_CHOICES", "PRECISION_CHOICES", "DEFAULT_BATCH_SIZE", "default_batch_size"]

#: Variant names: the frame as given and its linear twin.
FRAME, TWIN = "frame", "linear-twin"
VARIANTS = (FRAME, TWIN)

#: Most records per batch (the default batch size): enough for the ``prange`` loop of the
#: batch kernels to keep the cores busy and to spread the fixed cost of a batch (its
#: dataset and its file) thin, few enough that a killed run loses little.
DEFAULT_BATCH_SIZE = 32

#: The default batch size is lowered so that a batch's full-rate histories take at most
#: this many bytes of memory (long records, tall frames).
BATCH_BYTES = 64 * 2 ** 20

#: What a results file keeps: full histories, or the envelopes only.
KEEP_CHOICES = ("histories", "envelopes")

#: Storage precision of the histories: float64 or float32.
PRECISION_CHOICES = ("double", "single")

#: Dimensions of the histories when only some floors (storeys) are kept.
HISTORY_DIMS = {"floor": "history_floor", "storey": "history_storey"}


@dataclass(frozen=True)
class Storage:
    """What each results file keeps of the histories.

    ``keep="envelopes"`` drops every variable with a ``time`` dimension (the
    histories, the ground acceleration and the energy histories). ``floors``
    keeps the histories of these floors and of the storeys with the same
    numbers only, along the dimensions ``history_floor`` and ``history_storey``
    (the envelopes keep every floor and storey). ``decimate=K`` keeps every K-th
    time step of the histories. ``precision="single"`` stores them as float32
    (about seven significant digits, half the bytes to write and keep).
    Envelopes, residual drifts and status always come from the full-rate,
    all-floor, double-precision histories before anything is dropped.
    """

    keep: str = "histories"
    floors: tuple[int, ...] | None = None
    decimate: int = 1
    precision: str = "double"

    def check(self, n_floors: int, names=("keep", "floors", "decimate", "precision")) -> None:
        """Raise InputError for a value that does not fit a frame with ``n_floors`` floors."""
        keep, floors, decimate, precision = names
        if self.precision not in PRECISION_CHOICES:
            raise InputError(f"{precision}: unknown value {self.precision!r}; choose one of "
                             f"{', '.join(PRECISION_CHOICES)}")
        if self.precision != "double" and self.keep == "envelopes":
            raise InputError(f"{precision}: only used when histories are kept, not with {keep} envelopes")
        if self.keep not in KEEP_CHOICES:
            raise InputError(f"{keep}: unknown value {self.keep!r}; choose one of {', '.join(KEEP_CHOICES)}")
        if self.floors is not None:
            if not self.floors:
                raise InputError(f"{floors}: give at least one floor number")
            for f in self.floors:
                if not 1 <= f <= n_floors:
                    raise InputError(f"{floors}: floor {f} does not exist; the frame has floors 1..{n_floors}")
            if len(set(self.floors)) != len(self.floors):
                raise InputError(f"{floors}: a floor is listed twice")
            if self.keep == "envelopes":
                raise InputError(f"{floors}: only used when histories are kept, not with {keep} envelopes")
        if int(self.decimate) != self.decimate or self.decimate < 1:
            raise InputError(f"{decimate}: expected a whole number >= 1, got {self.decimate!r}")
        if self.decimate > 1 and self.keep == "envelopes":
            raise InputError(f"{decimate}: only used when histories are kept, not with {keep} envelopes")

    def as_dict(self) -> dict:
        return {"keep": self.keep, "floors": list(self.floors) if self.floors else None,
                "decimate": int(self.decimate), "precision": self.precision}

    def attributes(self) -> dict:
        """Dataset attributes saying what was kept (none when everything was)."""
        attrs = {}
        if self.keep == "envelopes":
            attrs["histories_kept"] = ("none: envelopes only; they were computed from the full histories "
                                       "before these were dropped")
        else:
            if self.floors:
                attrs["history_floors"] = ",".join(str(f) for f in self.floors)
            if self.decimate > 1:
                attrs["history_decimation"] = int(self.decimate)
            if self.precision == "single":
                attrs["history_precision"] = ("single (float32, about 7 significant digits); envelopes "
                                              "and statuses come from the double-precision analysis")
            if self.floors or self.decimate > 1:
                attrs["histories_kept"] = (
                    "part: " + (f"one time step in {self.decimate}" if self.decimate > 1 else "every time step")
                    + (f", floors and storeys {attrs['history_floors']}" if self.floors else ", every floor")
                    + "; envelopes, residual drifts and n_steps come from the full-rate histories of every storey")
        return attrs

    def apply(self, ds: xr.Dataset) -> xr.Dataset:
        """``ds`` with the histories reduced as asked (envelopes untouched)."""
        timed = [name for name, var in ds.data_vars.items() if "time" in var.dims]
        if self.keep == "envelopes":
            ds = ds.drop_vars(timed + ["time"])
        else:
            if self.floors:
                chosen = list(self.floors)
                data = {}
                for name in ds.data_vars:
                    var = ds[name]
                    if name in timed:
                        for dim, new in HISTORY_DIMS.items():
                            if dim in var.dims:
                                var = var.sel({dim: chosen}).rename({dim: new})
                                var[new].attrs["long_name"] = f"{dim}s whose histories are kept"
                    data[name] = var
                ds = xr.Dataset(data, attrs=ds.attrs).assign_coords(
                    {k: v for k, v in ds.coords.items() if k not in HISTORY_DIMS.values()})
            if self.decimate > 1:
                ds = ds.isel(time=slice(None, None, int(self.decimate)))
            if self.precision == "single":
                ds = ds.assign({name: ds[name].astype(np.float32) for name in timed
                                if ds[name].dtype.kind == "f"})
        ds.attrs.update(self.attributes())
        return ds

    def time(self, n_time: int, dt: float) -> np.ndarray | None:
        """The time axis the stored histories have (None when no history is kept)."""
        if self.keep == "envelopes":
            return None
        return (np.arange(n_time) * dt)[::int(self.decimate)]


@dataclass(frozen=True)
class Excitation:
    """One excitation of the config as read: the load, or why it could not be read."""

    name: str
    source: str
    kind: str                       # "record" or "harmonic"
    load: Record | FloorForces | None
    sha256: str | None = None
    failure: str | None = None

    @property
    def excitation(self) -> str:
        return "floor-forces" if isinstance(self.load, FloorForces) else "base-acceleration"


@dataclass(frozen=True)
class Job:
    """One analysis: an excitation at one scale factor through one variant of the frame."""

    id: str
    variant: str
    label: str                      # the record label in the results dataset
    excitation: int                 # index into Suite.excitations
    scale: float
    batch: str | None               # None for a job that failed before it could run
    failure: str | None = None


@dataclass(frozen=True)
class Batch:
    """Consecutive runnable jobs of one variant, run by one call of the batch kernels."""

    id: str
    variant: str
    jobs: tuple[str, ...]


@dataclass(frozen=True)
class BatchSpec:
    """Everything a worker needs to run one batch (plain, picklable objects)."""

    batch: str
    frame: object
    loads: tuple
    scales: tuple[float, ...]
    labels: tuple[str, ...]
    run_kwargs: dict
    storage: Storage
    threads: int | None = None


@dataclass
class Suite:
    """A config expanded into jobs and batches, with the settings every batch shares."""

    config_path: str
    config_sha256: str
    frames: dict
    excitations: list[Excitation]
    jobs: list[Job]
    batches: list[Batch]
    run_kwargs: dict
    storage: Storage
    n_time: int
    attrs: dict = field(default_factory=dict)

    @property
    def dt(self) -> float:
        return float(self.run_kwargs["dt"])

    @property
    def variants(self) -> list[str]:
        return list(self.frames)

    def job(self, job_id: str) -> Job:
        return self._by_id[job_id]

    def __post_init__(self):
        self._by_id = {job.id: job for job in self.jobs}

    def failed_jobs(self) -> list[Job]:
        return [job for job in self.jobs if job.failure is not None]

    def spec(self, batch: Batch, threads: int | None = None) -> BatchSpec:
        """The worker's input for ``batch``."""
        jobs = [self.job(j) for j in batch.jobs]
        kwargs = dict(self.run_kwargs)
        kwargs["attrs"] = dict(kwargs.get("attrs") or {}, **self.attrs.get(batch.variant, {}))
        return BatchSpec(batch=batch.id, frame=self.frames[batch.variant],
                         loads=tuple(self.excitations[j.excitation].load for j in jobs),
                         scales=tuple(j.scale for j in jobs), labels=tuple(j.label for j in jobs),
                         run_kwargs=kwargs, storage=self.storage, threads=threads)

    def settings(self) -> dict:
        """The settings a resumed run must share with the run it continues (JSON-ready)."""
        params = {k: v for k, v in self.run_kwargs.items() if k not in ("attrs",)}
        return {"analysis": params, "storage": self.storage.as_dict(), "n_time": int(self.n_time),
                "variants": self.variants}

    def job_table(self) -> list[dict]:
        """The job list as JSON-ready rows (what the manifest stores)."""
        rows = []
        for job in self.jobs:
            exc = self.excitations[job.excitation]
            rows.append({"id": job.id, "variant": job.variant, "label": job.label, "record": exc.name,
                         "scale": job.scale, "source": exc.source, "sha256": exc.sha256,
                         "excitation": exc.excitation, "batch": job.batch, "failed": job.failure})
        return rows

    def loads_in_order(self, variant: str) -> list:
        """The load of each job of ``variant`` in job order (None for jobs that failed to read)."""
        return [self.excitations[job.excitation].load for job in self.jobs if job.variant == variant]


def _unique(names) -> list[str]:
    """Labels with repeats numbered ``name~2``, ``name~3`` (the convention of ``simulate.run``)."""
    seen: dict[str, int] = {}
    out = []
    for name in names:
        seen[name] = seen.get(name, 0) + 1
        out.append(name if seen[name] == 1 else f"{name}~{seen[name]}")
    return out


def _read_records(cfg) -> list[Excitation]:
    """Each record file of ``cfg`` read on its own; an unreadable one is kept with its reason.

    The digest of each covers the file's bytes and the options it is read with (a
    suite file's units, dt, scale...), so a resumed run notices a change of either.
    """
    out = []
    for entry in cfg.record_entries:
        path = Path(entry.path)
        try:
            digest = hashlib.sha256(path.read_bytes())
            digest.update(json.dumps([entry.options, entry.scale, entry.component], sort_keys=True,
                                     default=str).encode())
            digest = digest.hexdigest()
        except OSError:
            digest = None
        try:
            rec = entry.read_one()
        except RecordError as exc:
            out.append(Excitation(name=path.stem, source=str(path), kind="record", load=None,
                                  sha256=digest, failure=str(exc)))
            continue
        out.append(Excitation(name=rec.name, source=str(path), kind="record", load=rec, sha256=digest))
    return out


def default_batch_size(n_storeys: int, n_time: int) -> int:
    """Records per batch: :data:`DEFAULT_BATCH_SIZE`, fewer when their histories pass :data:`BATCH_BYTES`.

    It depends on the frame and the records only, never on the workers, so a resumed
    run finds the same batches.
    """
    per_record = 8 * n_time * (3 * (n_storeys + 1) + 2 * n_storeys + 1 + 5)
    return int(max(1, min(DEFAULT_BATCH_SIZE, BATCH_BYTES // per_record)))


def plan_suite(cfg, *, method: str | None = None, dt: float | None = None, storage: Storage | None = None,
               batch_size: int | None = None) -> Suite:
    """Expand a config into the jobs and batches of a suite.

    Parameters
    ----------
    cfg : simulate.Config
    method, dt : optional
        Overrides of ``[analysis] method`` and ``dt`` (command-line options).
    storage : Storage, optional
        What the results keep of the histories.
    batch_size : int, optional
        Jobs per batch (default :func:`default_batch_size`).

    Returns
    -------
    Suite

    Raises
    ------
    simulate.errors.InputError
        For mistakes that would make every analysis fail (a time step larger than
        a record's, a method that does not fit the frame, no readable excitation);
        a single unreadable record file is not an error but a failed job.
    """
    storage = storage or Storage()
    storage.check(cfg.frame.n_storeys)
    if batch_size is not None and (int(batch_size) != batch_size or batch_size < 1):
        raise InputError(f"batch size must be a whole number >= 1, got {batch_size!r}")
    excitations = _read_records(cfg)
    excitations += [Excitation(name=load.name, source=f"[[harmonic]] #{spec.index}", kind="harmonic", load=load)
                    for spec, load in zip(cfg.harmonics, cfg.harmonic_loads())]
    readable = [e.load for e in excitations if e.load is not None]
    if not readable:
        failed = [e for e in excitations if e.failure]
        raise RecordError(failed[0].failure if failed else f"{cfg.path}: nothing to run")

    scales = tuple(float(s) for s in cfg.analysis.scales)
    kwargs = cfg.run_kwargs(method=method, dt=dt, scale=scales[0])
    kwargs.pop("scale")
    frames = {FRAME: cfg.frame}
    if cfg.analysis.linear_twin:
        frames[TWIN] = cfg.frame.linear_twin()
    # everything simulate.run would refuse for the whole suite is refused now, before any work
    plan = make_plan(readable, cfg.frame.n_storeys, dt=kwargs["dt"], scale=1.0, tail=kwargs["tail"])
    params = {k: v for k, v in kwargs.items() if k not in ("dt", "method", "tail", "collapse_drift", "attrs")}
    integrator = make_method(kwargs["method"], **params)
    for frame in frames.values():
        integrator.prepare(frame, plan.dt)
    kwargs["dt"] = plan.dt              # every batch uses the step chosen over the whole suite
    if batch_size is None:
        batch_size = default_batch_size(cfg.frame.n_storeys, plan.n_time)

    base = _unique([e.name for e in excitations])
    several = len(scales) > 1
    jobs: list[Job] = []
    batches: list[Batch] = []
    for variant in frames:
        pending: list[int] = []
        groups: list[list[int]] = []
        for index, (exc, name) in enumerate(zip(excitations, base)):
            factors = scales if exc.kind == "record" else (1.0,)
            for scale in factors:
                label = f"{name}@{scale:g}" if several and exc.kind == "record" else name
                if exc.failure is None:
                    pending.append(len(jobs))
                    if len(pending) == batch_size:
                        groups.append(pending)
                        pending = []
                jobs.append(Job(id=f"{variant}/{name}/{scale!r}", variant=variant, label=label,
                                excitation=index, scale=scale, batch=None, failure=exc.failure))
        if pending:
            groups.append(pending)
        for k, group in enumerate(groups):
            batch_id = f"{variant}-{k:05d}"
            for position in group:
                jobs[position] = dataclasses.replace(jobs[position], batch=batch_id)
            batches.append(Batch(id=batch_id, variant=variant, jobs=tuple(jobs[p].id for p in group)))
    labels = [j.label for j in jobs if j.variant == FRAME]
    if len(set(labels)) != len(labels):
        raise InputError(f"{cfg.path}: record labels are not unique once scaled ({', '.join(labels)})")
    attrs = {TWIN: {"linear_twin_of": cfg.frame.name}} if TWIN in frames else {}
    return Suite(config_path=str(cfg.path), config_sha256=cfg.sha256, frames=frames, excitations=excitations,
                 jobs=jobs, batches=batches, run_kwargs=kwargs, storage=storage, n_time=plan.n_time,
                 attrs=attrs)


@contextlib.contextmanager
def numba_threads(n: int | None):
    """Run the block with ``n`` numba threads in this thread (all of them when ``n`` is None)."""
    if not n:
        yield
        return
    import numba

    old = numba.get_num_threads()
    numba.set_num_threads(max(1, min(int(n), numba.config.NUMBA_NUM_THREADS)))
    try:
        yield
    finally:
        numba.set_num_threads(old)


def run_batch(spec: BatchSpec, analyse=None) -> xr.Dataset:
    """Run one batch: the same function in-process, in a process pool and on a Dask worker.

    ``analyse`` defaults to :func:`simulate.run`. Returns the batch's results dataset,
    its records labelled with the job labels and its histories reduced as
    ``spec.storage`` asks (envelopes come from the full histories).
    """
    analyse = run if analyse is None else analyse
    with numba_threads(spec.threads):
        ds = analyse(spec.frame, list(spec.loads), scale=list(spec.scales), **spec.run_kwargs)
    ds = ds.assign_coords(record=("record", np.asarray(spec.labels, dtype=object)))
    ds.attrs["batch"] = spec.batch
    return spec.storage.apply(ds)
