"""The run folder of a suite: manifest, one results file per finished batch, resume, combining.

Layout::

    RUN_DIR/
      manifest.json           config SHA-256, software version, settings, job list, batches, created
      batches/
        frame-00000.npz       one file per finished batch (the records of its jobs; suite/batchfile.py)
        frame-00001.npz
        linear-twin-00000.npz (with [analysis] linear_twin)

A batch counts as finished only once its file is durably on disk: it is written
to a temporary file in ``batches/``, flushed with fsync, renamed to its final
name (an atomic step) and the folder is flushed too. A run killed at any moment
therefore loses at most the batches in flight; the temporary file it may leave
behind is removed when the run is resumed. Jobs whose record file could not be
read never run: the manifest keeps their reason and they become rows with status
``failed: <reason>``.

``resume`` continues a run folder after checking that the config (SHA-256 of its
bytes), the settings and the job list (with the SHA-256 of each record file) are
the ones it was made for; a mismatch is a one-line error and nothing is touched.

:func:`open_results` merges the batches of a run folder into one dataset, records
in job order, with the schema of a single ``simulate.run`` dataset; with dask
installed, histories too large for memory stay on disk until used (dask arrays)
and are written to the results file piece by piece.
"""

from __future__ import annotations

import functools
import json
import shutil
from datetime import datetime, timezone
from pathlib import Path

import numpy as np
import xarray as xr

from simulate.files import fsync_folder, write_atomic
from simulate._version import __version__
from simulate.errors import InputError, StorageError
from simulate.results.netcdf import COMPRESS_HISTORIES, encoding, history_layout
from simulate.suite.batchfile import SUFFIX, BatchFile, BatchFileError, write_batch
from simulate.suite.executors import InProcess
from simulate.suite.jobs import FRAME, TWIN, Storage, run_batch
from simulate.suite.progress import SuiteProgress

__all__ = ["RunFolder", "run_suite", "open_results", "collect", "write_combined", "default_run_dir", "remove_run_folder",
           "variant_output", "failure_reason", "MANIFEST", "BATCH_FOLDER"]

MANIFEST = "manifest.json"
BATCH_FOLDER = "batches"
#: Identifies the layout of the run folder (bumped when it changes).
FOLDER_FORMAT = "swaysim run folder 2"

#: Histories larger than this (bytes in memory) stay on disk as dask arrays when combined.
LAZY_BYTES = 512 * 2 ** 20


def default_run_dir(output) -> Path:
    """``<output stem>.run`` next to the output file."""
    output = Path(output)
    return output.with_name(f"{output.stem}.run")


def variant_output(output, variant: str) -> Path:
    """Results file of ``variant``: ``output`` itself, ``<stem>-linear<suffix>`` for the linear twin."""
    output = Path(output)
    if variant == FRAME:
        return output
    return output.with_name(f"{output.stem}-linear{output.suffix}")


# ------------------------------------------------------------------ durable writes
def _write_json(path: Path, data: dict) -> None:
    write_atomic(path, lambda tmp: tmp.write_text(json.dumps(data, indent=1) + "\n", encoding="utf-8"))


def _plain(value):
    """``value`` as JSON would give it back (so settings compare equal after a round trip)."""
    return json.loads(json.dumps(value))


# ------------------------------------------------------------------ the folder
class RunFolder:
    """A run folder: its manifest and its finished batch files."""

    def __init__(self, path, manifest: dict):
        self.path = Path(path)
        self.manifest = manifest
        self._exists = (self.path / MANIFEST).is_file()

    @property
    def batch_folder(self) -> Path:
        return self.path / BATCH_FOLDER

    def batch_path(self, batch_id: str) -> Path:
        return self.batch_folder / f"{batch_id}{SUFFIX}"

    # -------------------------------------------------------- opening
    @classmethod
    def open(cls, path) -> "RunFolder":
        """An existing run folder (InputError when ``path`` holds none)."""
        path = Path(path)
        manifest_path = path / MANIFEST
        if not path.is_dir():
            raise InputError(f"{path}: no such run folder")
        try:
            manifest = json.loads(manifest_path.read_text(encoding="utf-8"))
        except FileNotFoundError:
            raise InputError(f"{path}: not a run folder (no {MANIFEST})") from None
        except (OSError, ValueError) as exc:
            raise InputError(f"{manifest_path}: cannot be read ({exc})") from None
        found = manifest.get("format") if isinstance(manifest, dict) else None
        if isinstance(found, str) and found.startswith(FOLDER_FORMAT.rpartition(" ")[0]) and found != FOLDER_FORMAT:
            raise InputError(f"{path}: a run folder of another swaysim version ({manifest.get('software', '?')}, "
                             f"layout {found!r}; this version reads {FOLDER_FORMAT!r}); finish or collect it "
                             "with that version, or start the suite afresh")
        if found != FOLDER_FORMAT:
            raise InputError(f"{manifest_path}: not a manifest of this program's run folders "
                             f"(expected format {FOLDER_FORMAT!r})")
        return cls(path, manifest)

    @classmethod
    def prepare(cls, path, suite, resume: bool = False) -> "RunFolder":
        """The run folder for ``suite``, checked but not yet touched.

        A folder that holds a run of the same config, settings and jobs is
        continued (its finished batches are kept: they equal what a new run would
        compute); one made for anything else is refused. ``resume`` insists on an
        existing run folder.
        """
        path = Path(path)
        if (path / MANIFEST).is_file():
            folder = cls.open(path)
            folder._check(suite, resume)
            return folder
        if resume:
            raise InputError(f"--resume: {path} is not a run folder to resume (no {MANIFEST}); "
                             "run without --resume to start")
        if path.exists() and (not path.is_dir() or any(path.iterdir())):
            what = "a file" if not path.is_dir() else "a folder that is not a run folder"
            raise InputError(f"{path} exists already ({what}); remove it or choose another --run-dir")
        if not path.parent.is_dir():
            raise InputError(f"{path}: folder {path.parent} does not exist")
        return cls(path, _manifest(suite))

    @property
    def exists(self) -> bool:
        """True when the folder was made by an earlier run (its finished batches count)."""
        return self._exists

    def _check(self, suite, resume: bool) -> None:
        m = self.manifest
        lead = "--resume: " if resume else ""
        fix = "start a new run folder" if resume else "remove it to start afresh, or choose another --run-dir"
        if m.get("config_sha256") != suite.config_sha256:
            raise InputError(
                f"{lead}{self.path} holds a run of a different config (SHA-256 "
                f"{str(m.get('config_sha256'))[:12]}..., {suite.config_path} now has {suite.config_sha256[:12]}...); "
                f"restore that config, or {fix}")
        old, new = m.get("settings", {}), _plain(suite.settings())
        for group in sorted(set(old) | set(new)):
            a, b = old.get(group), new.get(group)
            if a == b:
                continue
            if isinstance(a, dict) and isinstance(b, dict):
                key = next(k for k in sorted(set(a) | set(b)) if a.get(k) != b.get(k))
                a, b, group = a.get(key), b.get(key), key
            raise InputError(f"{lead}{self.path} holds a run made with {group} = {a!r}, this run has {b!r}; "
                             f"use the same options, or {fix}")
        old_jobs = {row["id"]: row for row in m.get("jobs", [])}
        new_jobs = suite.job_table()
        if [row["id"] for row in m.get("jobs", [])] != [row["id"] for row in new_jobs]:
            raise InputError(f"{lead}{self.path} holds a run of another job list (the records changed); {fix}")
        for row in new_jobs:
            before = old_jobs[row["id"]]
            if before.get("sha256") != row["sha256"]:
                raise InputError(f"{lead}record file {row['source']} changed since the run in {self.path} "
                                 f"started (its contents, or its options in the suite file); restore it, "
                                 f"or {fix}")
            if before.get("batch") != row["batch"]:
                raise InputError(f"{lead}{self.path} groups the jobs into other batches (--batch-size); "
                                 f"use the same batch size, or {fix}")

    def begin(self) -> None:
        """Create the folder and its manifest (new run) or clear temporary files (resumed run)."""
        if self._exists:
            for stray in self.batch_folder.glob(".*.part"):
                stray.unlink()
            return
        self.path.mkdir(exist_ok=True)
        self.batch_folder.mkdir(exist_ok=True)
        fsync_folder(self.path.parent)
        _write_json(self.path / MANIFEST, self.manifest)
        self._exists = True

    # -------------------------------------------------------- batches
    def batches(self, variant: str | None = None) -> list[dict]:
        return [b for b in self.manifest["batches"] if variant is None or b["variant"] == variant]

    def finished(self, check: bool = True) -> set[str]:
        """Ids of the batches whose file is on disk (``check``: and opens with the right records)."""
        done = set()
        for batch in self.manifest["batches"]:
            path = self.batch_path(batch["id"])
            if not path.is_file():
                continue
            if check:
                labels = self._labels(batch)
                try:
                    with BatchFile(path) as batch_file:
                        ok = [str(x) for x in batch_file.array("record")] == labels
                except BatchFileError:
                    ok = False
                if not ok:
                    continue
            done.add(batch["id"])
        return done

    def _labels(self, batch: dict) -> list[str]:
        rows = {row["id"]: row for row in self.manifest["jobs"]}
        return [rows[j]["label"] for j in batch["jobs"]]

    def save(self, batch_id: str, ds: xr.Dataset) -> Path:
        """Write one finished batch durably; from then on its jobs count as done."""
        return write_batch(ds, self.batch_path(batch_id))


def _manifest(suite) -> dict:
    return {
        "format": FOLDER_FORMAT,
        "software": f"swaysim {__version__}",
        "created": datetime.now(timezone.utc).isoformat(timespec="seconds"),
        "config_path": str(Path(suite.config_path).resolve()),
        "config_sha256": suite.config_sha256,
        "settings": _plain(suite.settings()),
        "jobs": _plain(suite.job_table()),
        "batches": [{"id": b.id, "variant": b.variant, "jobs": list(b.jobs)} for b in suite.batches],
    }


# ------------------------------------------------------------------ failures
def failure_reason(ds: xr.Dataset, r: int) -> tuple[str, str]:
    """``(status, reason)`` of record ``r`` of a results dataset whose status is not ok."""
    status = str(ds["status"].values[r])
    if status.startswith("failed"):
        return "failed", status.partition(":")[2].strip() or status
    dt = float(ds.attrs.get("analysis_dt", float("nan")))
    last = max(int(ds["n_steps"].values[r]) - 1, 0)
    if status == "collapsed":
        drift = ds["peak_drift_ratio"].transpose("record", "storey").values[r]
        storey = int(np.nanargmax(drift)) + 1 if np.isfinite(drift).any() else 0
        return status, (f"storey {storey} drift ratio {drift[storey - 1]:.4g} passed the collapse limit "
                        f"{float(ds.attrs.get('collapse_drift', float('nan'))):g} at {last * dt:.2f} s")
    if status == "not-converged":
        return status, f"Newton-Raphson did not converge in the step after {last * dt:.2f} s"
    return status, status


# ------------------------------------------------------------------ running
def run_suite(suite, run_dir, *, resume: bool = False, executor=None, quiet: bool = False,
              analyse=None, folder: RunFolder | None = None) -> RunFolder:
    """Run every unfinished batch of ``suite``, saving each to ``run_dir`` as it finishes.

    Parameters
    ----------
    suite : simulate.suite.jobs.Suite
    run_dir : path
        Run folder; it must not exist yet unless ``resume``.
    resume : bool
        Continue the run folder (checked against ``suite`` first).
    executor : optional
        :class:`~simulate.suite.executors.InProcess` (default),
        :class:`~simulate.suite.executors.ProcessPool` or
        :class:`~simulate.suite.executors.DaskExecutor`.
    quiet : bool
        No progress bar or progress lines, only one line per failure.
    analyse : callable, optional
        The analysis function (default :func:`simulate.run`).
    folder : RunFolder, optional
        From :meth:`RunFolder.prepare`, when the caller checked the folder already.

    Returns
    -------
    RunFolder
        The folder, all its batches finished; :func:`open_results` combines them.
    """
    folder = folder or RunFolder.prepare(run_dir, suite, resume)
    executor = executor or InProcess()
    folder.begin()
    done = folder.finished(check=True)
    for stale in folder.batch_folder.glob(f"*{SUFFIX}"):
        if stale.stem not in done:
            stale.unlink()          # a batch file that does not open with its records runs again
    pending = [b for b in suite.batches if b.id not in done]
    done_jobs = sum(len(b.jobs) for b in suite.batches if b.id in done)
    earlier_failures = 0
    for batch in suite.batches:
        if batch.id in done:
            with BatchFile(folder.batch_path(batch.id)) as batch_file:
                earlier_failures += int((batch_file.array("status").astype(str) != "ok").sum())
    failed = suite.failed_jobs()
    fn = run_batch if analyse is None else functools.partial(run_batch, analyse=analyse)
    with SuiteProgress(len(suite.jobs), done=done_jobs + len(failed), failures=earlier_failures,
                       quiet=quiet) as progress:
        for job in failed:
            progress.failure(job.id, job.label, "failed", job.failure)
        specs = (suite.spec(batch, executor.threads) for batch in pending)
        for position, ds in executor.map(fn, specs):
            batch = pending[position]
            try:
                folder.save(batch.id, ds)
            except StorageError as exc:
                done_now = len(folder.finished(check=False))
                kept = f"{done_now} finished batch{'es are' if done_now != 1 else ' is'} kept"
                raise StorageError(f"{exc}; {kept} in {folder.path}: make room, then run the same command "
                                   "again with --resume") from exc
            for r, status in enumerate(ds["status"].values):
                if str(status) != "ok":
                    status, reason = failure_reason(ds, r)
                    progress.failure(batch.jobs[r], str(ds["record"].values[r]), status, reason)
            progress.advance(len(batch.jobs))
    return folder


# ------------------------------------------------------------------ combining
def _have_dask() -> bool:
    try:
        import dask  # noqa: F401
    except ImportError:
        return False
    return True


def _history_bytes(path: Path, n_records: int, time_axis) -> int:
    """Memory the histories of ``n_records`` records would take, estimated from one batch file."""
    if time_axis is None:
        return 0
    with BatchFile(path) as batch_file:
        per_step = 0
        for name in batch_file.history_names():
            info = batch_file.variables[name]
            sizes = dict(zip(info["dims"], info["shape"]))
            per_step += np.dtype(info["dtype"]).itemsize * int(np.prod(
                [size for dim, size in sizes.items() if dim not in ("record", "time")]))
    return per_step * n_records * len(time_axis)


def _open_batch(path: Path, time_axis, lazy: bool, histories: bool = True) -> xr.Dataset:
    """One batch file on the suite's common time axis, text as Python str.

    Per-record and frame variables are read at once (they are small); with ``lazy``
    the histories are dask arrays that read the file when computed, else they are
    read too. Histories of batches shorter than the suite are padded with NaN, as
    ``simulate.run`` pads records shorter than the longest. Without ``histories``
    they are left out (the ``time`` coordinate stays).
    """
    with BatchFile(path) as batch_file:
        ds = batch_file.dataset(histories=histories, lazy=lazy)
    if time_axis is None or "time" not in ds.dims:
        return ds
    n_time = len(time_axis)
    if ds.sizes["time"] < n_time:
        ds = ds.pad({"time": (0, n_time - ds.sizes["time"])}, constant_values=np.nan)
    return ds.assign_coords(time=("time", np.asarray(time_axis), ds["time"].attrs))


def _fill(var: xr.DataArray, n: int):
    """An array like ``var`` with ``n`` records of missing values."""
    shape = tuple(n if d == "record" else var.sizes[d] for d in var.dims)
    kind = var.dtype.kind
    if kind == "f":
        return np.full(shape, np.nan, dtype=var.dtype)
    if kind in "iub":
        return np.zeros(shape, dtype=var.dtype)
    return np.full(shape, "", dtype=object)


def _failed_rows(template: xr.Dataset, rows: list[dict]) -> xr.Dataset:
    """Rows for jobs that never ran (record file unreadable): status and provenance, NaN results."""
    n = len(rows)
    data = {}
    for name, var in template.data_vars.items():
        if "record" in var.dims:
            data[name] = xr.Variable(var.dims, _fill(var, n), var.attrs)
    given = {
        "status": np.array([f"failed: {row['failed']}" for row in rows], dtype=object),
        "scale_factor": np.array([row["scale"] for row in rows], dtype=float),
        "record_source": np.array([row["source"] for row in rows], dtype=object),
        "excitation": np.array([row["excitation"] for row in rows], dtype=object),
        "n_steps": np.zeros(n, dtype=template["n_steps"].dtype),
    }
    for name, values in given.items():
        if name in data:
            data[name] = xr.Variable(data[name].dims, values.astype(data[name].dtype), data[name].attrs)
    coords = {k: v for k, v in template.coords.items() if "record" not in v.dims}
    coords["record"] = ("record", np.array([row["label"] for row in rows], dtype=object))
    return xr.Dataset(data, coords=coords)


def _pieces(jobs: list[dict], finished: set[str], batch_jobs: dict) -> list[tuple]:
    """Job order as pieces: ``("batch", id, start, stop)`` slices and ``("failed", rows)`` runs."""
    pieces: list[tuple] = []
    for row in jobs:
        if row["failed"] is not None:
            if pieces and pieces[-1][0] == "failed":
                pieces[-1][1].append(row)
            else:
                pieces.append(("failed", [row]))
            continue
        if row["batch"] not in finished:
            continue
        index = batch_jobs[row["batch"]].index(row["id"])
        last = pieces[-1] if pieces else None
        if last and last[0] == "batch" and last[1] == row["batch"] and last[3] == index:
            pieces[-1] = ("batch", row["batch"], last[2], index + 1)
        else:
            pieces.append(("batch", row["batch"], index, index + 1))
    return pieces


def _layout(run_dir, variant: str, partial: bool):
    """The run folder, the pieces of ``variant`` in job order and the suite's time axis."""
    folder = RunFolder.open(run_dir)
    m = folder.manifest
    jobs = [row for row in m["jobs"] if row["variant"] == variant]
    if not jobs:
        variants = sorted({row["variant"] for row in m["jobs"]})
        raise InputError(f"{folder.path}: no analyses of {variant!r} (it holds {', '.join(variants)})")
    finished = folder.finished(check=False)
    missing = [row for row in jobs if row["failed"] is None and row["batch"] not in finished]
    if missing and not partial:
        raise InputError(f"{folder.path}: {len(missing)} of {len(jobs)} analyses have not finished; resume the "
                         "run (swaysim run CONFIG --resume), or ask for the partial results")
    settings = m["settings"]
    storage = Storage(**{**settings["storage"], "floors": tuple(settings["storage"]["floors"] or ()) or None})
    time_axis = storage.time(int(settings["n_time"]), float(settings["analysis"]["dt"]))
    batch_jobs = {b["id"]: b["jobs"] for b in folder.batches(variant)}
    pieces = _pieces(jobs, finished, batch_jobs)
    if not any(kind == "batch" for kind, *_ in pieces):
        raise InputError(f"{folder.path}: no analysis of {variant!r} has finished yet")
    return folder, jobs, pieces, time_axis


def open_results(run_dir, variant: str = FRAME, partial: bool = False, lazy: bool | None = None,
                 histories: bool = True) -> xr.Dataset:
    """The results of a run folder as one dataset, records in job order.

    Parameters
    ----------
    run_dir : path
        A run folder made by ``swaysim run`` (or :func:`run_suite`).
    variant : {"frame", "linear-twin"}
        Which analyses: the frame's, or its linear twin's.
    partial : bool
        Leave out the jobs whose batch has not finished instead of refusing.
    lazy : bool, optional
        Keep the histories on disk as dask arrays until they are used. Default: when
        dask is installed and the histories would take more than :data:`LAZY_BYTES`
        of memory; otherwise everything is read into memory.
    histories : bool
        False leaves out every variable along ``time`` (envelopes, statuses and frame
        properties only; the ``time`` coordinate stays).

    Returns
    -------
    xarray.Dataset
        The schema of ``simulate.run``: jobs whose record file could not be read are
        rows with status ``failed: <reason>`` and missing values. Lazy histories
        open their batch file each time they are read; nothing stays open.
    """
    folder, jobs, pieces, time_axis = _layout(run_dir, variant, partial)
    if not histories:
        lazy = False
    elif lazy is None:
        first = next(rest[0] for kind, *rest in pieces if kind == "batch")
        size = _history_bytes(folder.batch_path(first), len(jobs), time_axis)
        lazy = _have_dask() and size > LAZY_BYTES
    if lazy:
        combined = _combine_lazily(folder, pieces, time_axis)
    else:
        combined = _combine_in_memory(folder, pieces, time_axis, histories)
    attrs = dict(combined.attrs)
    attrs.pop("batch", None)
    attrs["created"] = datetime.now(timezone.utc).isoformat(timespec="seconds")
    combined.attrs = attrs
    return combined


def _combine_lazily(folder: RunFolder, pieces: list[tuple], time_axis) -> xr.Dataset:
    """The pieces as one dataset whose histories are dask arrays reading the batch files."""
    opened: dict[str, xr.Dataset] = {}
    for kind, *rest in pieces:
        if kind == "batch" and rest[0] not in opened:
            opened[rest[0]] = _open_batch(folder.batch_path(rest[0]), time_axis, lazy=True)
    template = next(iter(opened.values()))
    parts = []
    for kind, *rest in pieces:
        if kind == "batch":
            parts.append(opened[rest[0]].isel(record=slice(rest[1], rest[2])))
        else:
            parts.append(_failed_rows(template, rest[0]))
    if len(parts) == 1:
        return parts[0]
    return xr.concat(parts, dim="record", data_vars="minimal", coords="minimal", compat="override",
                     join="exact", combine_attrs="override")


def _combine_in_memory(folder: RunFolder, pieces: list[tuple], time_axis, histories: bool) -> xr.Dataset:
    """The pieces as one dataset in memory, each per-record variable joined with one numpy concatenate.

    Equal to concatenating the batch datasets with xarray, without its cost per batch;
    histories of batches shorter than the suite are padded with NaN.
    """
    first = next(rest[0] for kind, *rest in pieces if kind == "batch")
    template = _open_batch(folder.batch_path(first), time_axis, lazy=False, histories=histories)
    n_time = template.sizes.get("time")
    per_record = [name for name, var in template.variables.items() if "record" in var.dims]
    parts: dict[str, list] = {name: [] for name in per_record}

    def add(name: str, values: np.ndarray, dims) -> None:
        if "time" in dims and values.shape[dims.index("time")] < n_time:
            pad = [(0, 0)] * values.ndim
            pad[dims.index("time")] = (0, n_time - values.shape[dims.index("time")])
            values = np.pad(values, pad, constant_values=np.nan)
        parts[name].append(values)

    for kind, *rest in pieces:
        if kind == "failed":
            failed = _failed_rows(template, rest[0])
            for name in per_record:
                add(name, failed[name].values, failed[name].dims)
            continue
        batch, start, stop = rest
        with BatchFile(folder.batch_path(batch)) as batch_file:
            for name in per_record:
                dims = tuple(batch_file.variables[name]["dims"])
                index = [slice(None)] * len(dims)
                index[dims.index("record")] = slice(start, stop)
                add(name, batch_file.array(name)[tuple(index)], dims)
    variables = {}
    for name, var in template.variables.items():
        data = var.values
        if name in parts:
            data = np.concatenate(parts[name], axis=var.dims.index("record"))
        variables[name] = xr.Variable(var.dims, data, var.attrs)
    coords = {name: variables.pop(name) for name in template.coords}
    return xr.Dataset(variables, coords=coords, attrs=dict(template.attrs))


def _append_histories(path: Path, folder: RunFolder, pieces: list[tuple], compress: bool) -> None:
    """Add the histories of ``pieces`` to the results file at ``path``, one batch at a time.

    The file holds every other variable already (and so the ``time`` dimension of
    the suite); each history is created (``history_layout``) and filled from the
    batch files in job order. Memory stays at one batch's history of one variable,
    whatever the size of the suite. Rows of jobs that never ran and time steps
    after a batch's last one are NaN, as in ``simulate.run``; every value is
    written once (the library's pre-filling is switched off).
    """
    import netCDF4

    first = next(folder.batch_path(rest[0]) for kind, *rest in pieces if kind == "batch")
    with netCDF4.Dataset(path, "a") as out:
        out.set_fill_off()
        with BatchFile(first) as batch_file:
            names = batch_file.history_names()
            for name in names:
                info = batch_file.variables[name]
                shape = tuple(len(out.dimensions[d]) for d in info["dims"])
                target = out.createVariable(name, np.dtype(info["dtype"]), tuple(info["dims"]), fill_value=np.nan,
                                            **history_layout(shape, compress))
                target.setncatts(info["attrs"])
        row = 0
        for kind, *rest in pieces:
            if kind == "failed":
                for name in names:
                    target = out.variables[name]
                    target[row:row + len(rest[0])] = np.full((len(rest[0]),) + target.shape[1:], np.nan,
                                                             dtype=target.dtype)
                row += len(rest[0])
                continue
            batch, start, stop = rest
            with BatchFile(folder.batch_path(batch)) as batch_file:
                for name in names:
                    target = out.variables[name]
                    values = batch_file.array(name)[start:stop]
                    if values.shape[1] < target.shape[1]:
                        pad = [(0, 0)] * values.ndim
                        pad[1] = (0, target.shape[1] - values.shape[1])
                        values = np.pad(values, pad, constant_values=np.nan)
                    target[row:row + stop - start] = values
            row += stop - start


def write_combined(run_dir, variant: str, target, partial: bool = False,
                   compress_histories: bool = COMPRESS_HISTORIES, attrs: dict | None = None) -> Path:
    """Write the results of ``variant`` in a run folder to ``target``, durably and atomically.

    Per-record and frame variables are combined in memory (they are small); the
    histories are copied batch by batch (:func:`_append_histories`), so the memory
    needed does not grow with the suite. The file reads back as
    :func:`open_results` gives the folder.
    """
    folder, jobs, pieces, time_axis = _layout(run_dir, variant, partial)
    small = open_results(folder.path, variant, partial=partial, histories=False)
    if attrs:
        small.attrs.update(attrs)

    def write(tmp: Path) -> None:
        small.to_netcdf(tmp, engine="netcdf4", format="NETCDF4", encoding=encoding(small))
        if time_axis is not None:
            _append_histories(tmp, folder, pieces, compress_histories)

    try:
        return write_atomic(Path(target), write)
    finally:
        small.close()


def collect(run_dir, output, partial: bool = False,
            compress_histories: bool = COMPRESS_HISTORIES) -> dict[str, Path]:
    """Write the results of a run folder: ``output`` for the frame, ``<stem>-linear.nc`` for its twin.

    Returns the written file of each variant.
    """
    folder = RunFolder.open(run_dir)
    variants = list(dict.fromkeys(row["variant"] for row in folder.manifest["jobs"]))
    targets = {variant: variant_output(output, variant) for variant in variants}
    written = {}
    for variant in variants:
        attrs = {}
        if TWIN in targets:
            if variant == FRAME:
                attrs["linear_twin_results_file"] = targets[TWIN].name
            else:
                attrs["nonlinear_results_file"] = targets[FRAME].name
        written[variant] = write_combined(folder.path, variant, targets[variant], partial=partial,
                                          compress_histories=compress_histories, attrs=attrs)
    return written


def remove_run_folder(folder: RunFolder) -> None:
    """Delete a run folder whose results have been written."""
    shutil.rmtree(folder.path)
