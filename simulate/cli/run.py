"""``swaysim run CONFIG``: time-history analysis of every excitation in a config.

Every run is a suite of jobs (``simulate.suite.jobs``): each record at each scale
factor, and each harmonic load, through the frame (and its linear twin). The jobs
run in batches on the cores of this process (``--workers``), in a process pool
(``--processes``) or on a Dask cluster (``--scheduler``, ``--cluster local``);
each finished batch is saved in the run folder (default ``<output stem>.run``
next to the output) before it counts as done, so ``--resume`` continues a run
that was killed. When all jobs are done the results file is written and the
default run folder is removed; a run folder given with ``--run-dir`` is kept
(``swaysim collect`` rebuilds the results from it).
"""

from __future__ import annotations

import textwrap
import warnings
from pathlib import Path

import click
import numpy as np
import xarray as xr

from simulate.cli.options import check_output_file, config_argument, debug_option, positive_float
from simulate.cli.tables import (
    Column, caution_text, energy_percent, number_ranges, percent, plural, render_table, sig,
    spread, wrap,
)
from simulate.config import NEWMARK_SOLVER_KEYS, load_config
from simulate.errors import ConfigError, InputError, RecordError, StorageError
from simulate.kernels import METHODS
from simulate.laws import LAWS
from simulate.results.compare import compare
from simulate.results.netcdf import WRITERS
from simulate.settings import STANDARD_GRAVITY
from simulate.suite import run as run_analysis
from simulate.suite.executors import make_executor
from simulate.suite.jobs import (
    BATCH_BYTES, DEFAULT_BATCH_SIZE, FRAME, KEEP_CHOICES, PRECISION_CHOICES, TWIN, Storage, plan_suite,
)
from simulate.suite.store import RunFolder, collect, default_run_dir, remove_run_folder, run_suite, variant_output

#: Width of the nonlinear header lines before they wrap.
HEADER_WIDTH = 100
#: A space the header wrapping must not break at (printed as a plain space).
KEEP = "\u00a0"

#: Energy balance errors above this fraction are pointed out under the table.
ENERGY_ERROR_NOTE = 0.01

NONLINEAR_CAUTION = (
    "Nonlinear results: 'collapsed' means a storey drift ratio passed the collapse limit in this "
    "model, not a prediction of when the real building falls. The storey laws do not lose "
    "strength with repeated cycles and P-Delta is the linearised storey form P/h, so the model "
    "can overstate the margin against collapse; records that collapsed or did not converge are "
    "left out of the storey statistics, which therefore describe only the records the frame "
    "survived."
)

#: How the P-Delta gravity loads were given, for the header.
GRAVITY_FROM = {
    "gravity_load": "as given",
    "floor_gravity_load": "floor loads summed from the roof down",
    "mass": "from the floor masses",
}


def _check_output(path: Path, origin: str) -> None:
    """Fail before the analysis, not after it, when the results cannot be written to ``path``."""
    check_output_file(path, tuple(WRITERS), "results", origin)


def twin_path(target: Path) -> Path:
    """Where the linear twin's results go: ``<stem>-linear<suffix>`` next to ``target``."""
    return variant_output(target, TWIN)


def floor_list(ctx, param, value):
    """Callback: ``"1,3,6"`` -> (1, 3, 6)."""
    if value is None:
        return None
    try:
        floors = tuple(int(part) for part in value.replace(" ", "").split(",") if part)
    except ValueError:
        raise click.BadParameter(f"expected floor numbers separated by commas such as 1,3,6, got {value!r}")
    if not floors:
        raise click.BadParameter("expected at least one floor number such as 1,3,6")
    return floors


@click.command("run", short_help="Run the records and harmonic loads of CONFIG.")
@config_argument
@click.option("-o", "--output", type=click.Path(dir_okay=False, path_type=Path), metavar="OUT.nc",
              help="Results file (NetCDF). Default: [output] file of the config, "
                   "else <config name>.nc in the current folder. With [analysis] linear_twin, "
                   "the linear twin's results go to OUT-linear.nc next to it.")
@click.option("--method", type=click.Choice(list(METHODS)), default=None,
              help="Integration method (overrides [analysis] method).")
@click.option("--dt", type=float, default=None, callback=positive_float, metavar="SECONDS",
              help="Analysis time step, s (overrides [analysis] dt).")
@click.option("--run-dir", type=click.Path(path_type=Path), default=None, metavar="DIR",
              help="Run folder: manifest and one results file per finished batch of analyses. "
                   "Default: OUT.run next to the output, removed once the results file is written; "
                   "a folder given here is kept.")
@click.option("--resume", is_flag=True,
              help="Continue the run folder of an interrupted run: finished analyses are kept, the "
                   "others run. The config and options must be those the folder was made with.")
@click.option("--workers", type=click.IntRange(min=1), default=None, metavar="N",
              help="Cores to use (default: all). The analyses of a batch run on N threads of this "
                   "process; with --processes, in N worker processes; with --cluster local, the "
                   "number of Dask workers.")
@click.option("--processes", is_flag=True,
              help="Run the batches in worker processes (one thread each) instead of threads of "
                   "this process: each worker starts in a second or two and keeps its memory apart.")
@click.option("--scheduler", default=None, metavar="tcp://HOST:PORT",
              help="Run on the running Dask scheduler at this address (dask.distributed).")
@click.option("--cluster", type=click.Choice(["local"]), default=None,
              help="Start a Dask cluster on this machine (127.0.0.1) with --workers processes.")
@click.option("--batch-size", type=click.IntRange(min=1), default=None, metavar="N",
              help=f"Analyses per batch (one call of the compiled kernels, one file in the run folder). "
                   f"Default: {DEFAULT_BATCH_SIZE}, fewer when their histories would pass "
                   f"{BATCH_BYTES // 2 ** 20} MB.")
@click.option("--keep", type=click.Choice(KEEP_CHOICES), default="histories", show_default=True,
              help="'envelopes': drop every variable with a time dimension from the results.")
@click.option("--floors", callback=floor_list, default=None, metavar="1,3,6",
              help="Keep the histories of these floors (and storeys) only, along the dimensions "
                   "history_floor and history_storey. Envelopes keep every floor and storey.")
@click.option("--decimate", type=click.IntRange(min=1), default=1, metavar="K",
              help="Keep every K-th time step of the histories. Envelopes, residual drifts and "
                   "statuses are always computed from the full-rate histories.")
@click.option("--precision", type=click.Choice(PRECISION_CHOICES), default="double", show_default=True,
              help="Storage precision of the histories: 'single' (float32, about 7 significant "
                   "digits) halves the bytes written. Envelopes always come from the double-precision "
                   "analysis.")
@click.option("--compress", is_flag=True,
              help="zlib-compress the histories in the results file too (envelopes always are): "
                   "about 15 % smaller, several times slower to write.")
@click.option("--quiet", is_flag=True,
              help="No progress bar or progress lines on stderr; one line per failed analysis only.")
@debug_option
def run_command(config: Path, output: Path | None, method: str | None, dt: float | None,
                run_dir: Path | None, resume: bool, workers: int | None, processes: bool,
                scheduler: str | None, cluster: str | None, batch_size: int | None, keep: str, floors,
                decimate: int, precision: str, compress: bool, quiet: bool):
    """Run the records and harmonic loads of CONFIG through its building.

    Writes the full response histories and envelopes to a NetCDF file and
    prints the storey envelopes over all excitations. For a building with
    yielding storeys or P-Delta it also prints each record's status (ok,
    not-converged, collapsed), storey ductility and residual drift, and, with
    [analysis] linear_twin = true, a comparison with the linear twin.

    Each record runs once per scale factor of [analysis] scale. A record file
    that cannot be read, an analysis that does not converge and one that
    collapses are results (status and reason), not errors: the suite goes on,
    stderr gets one line per failure and the exit status is 0.
    """
    cfg = load_config(config)
    if output is not None:
        target, origin = output, "option -o"
    elif cfg.output is not None:
        target, origin = cfg.output, f"{cfg.path}: [output] file"
    else:
        target, origin = Path(f"{cfg.path.stem}.nc"), "default output"
    _check_output(target, origin)
    twin_target = twin_path(target) if cfg.analysis.linear_twin else None
    if twin_target is not None:
        _check_output(twin_target, f"{origin} (linear twin)")

    storage = Storage(keep=keep, floors=floors, decimate=decimate, precision=precision)
    storage.check(cfg.frame.n_storeys, names=("--keep", "--floors", "--decimate", "--precision"))
    suite = _plan(cfg, method, dt, storage, batch_size)
    kept = run_dir is not None
    folder = RunFolder.prepare(run_dir if kept else default_run_dir(target), suite, resume)
    if folder.exists and not resume:
        click.echo(f"swaysim: continuing the run in {folder.path} (same config, options and records)", err=True)
    with make_executor(workers, scheduler, cluster, processes=processes) as executor:
        # run_analysis is looked up here, at call time, so the analysis function can be swapped
        run_suite(suite, folder.path, folder=folder, executor=executor, quiet=quiet, analyse=run_analysis)
    try:
        written = collect(folder.path, target, compress_histories=compress)
    except StorageError as exc:
        raise StorageError(f"{exc}; every analysis is finished and kept in {folder.path}: make room, then "
                           f"swaysim collect {folder.path} -o {target}") from exc
    ds = _open_written(written[FRAME])
    twin = _open_written(written[TWIN]) if TWIN in written else None
    try:
        print_report(cfg, ds, written[FRAME], method_from_option=method is not None,
                     loads=suite.loads_in_order(FRAME), twin=twin, twin_written=written.get(TWIN),
                     run_dir=folder.path if kept else None)
    finally:
        ds.close()
        if twin is not None:
            twin.close()
    if not kept:
        remove_run_folder(folder)


def _plan(cfg, method, dt, storage, batch_size):
    """The suite's jobs, with mistakes that would fail every analysis named against the config or options."""
    try:
        return plan_suite(cfg, method=method, dt=dt, storage=storage, batch_size=batch_size)
    except (ConfigError, RecordError):
        raise
    except InputError as exc:
        overrides = [f"--{name} {value}" for name, value in (("method", method), ("dt", dt))
                     if value is not None]
        where = f"{cfg.path} with {' '.join(overrides)}" if overrides else f"{cfg.path}: [analysis]"
        raise InputError(f"{where}: {exc}") from exc


def _open_written(path: Path) -> xr.Dataset:
    """A results file opened lazily (variables are read when used), text as Python str."""
    ds = xr.open_dataset(path, engine="netcdf4")
    for name in ("record", "status", "record_source", "excitation"):
        if name in ds.variables and ds[name].dtype.kind in "SU":
            ds[name] = ds[name].astype(object)
    return ds


def _suite_lines(ds, twin, run_dir: Path | None, written: Path) -> None:
    """Failures over the suite and the kept run folder, after the report's tables."""
    echo = click.echo
    for data, what in ((ds, "analyses"), (twin, "linear twin analyses")):
        if data is None:
            continue
        status = [str(s) for s in data["status"].values]
        bad = [s for s in status if s != "ok"]
        if bad:
            echo()
            counts = {}
            for s in bad:
                key = "failed" if s.startswith("failed") else s
                counts[key] = counts.get(key, 0) + 1
            order = ["not-converged", "collapsed", "failed"]
            listed = ", ".join(f"{counts[key]} {key}" for key in sorted(
                counts, key=lambda k: order.index(k) if k in order else len(order)))
            echo(wrap(f"{len(bad)} of {len(status)} {what} did not finish ({listed}); stderr has one "
                      "'swaysim: failure' line for each and the results file their reasons."))
    if run_dir is not None:
        echo()
        echo(wrap(f"run folder {run_dir} kept: swaysim collect {run_dir} -o {written} writes the "
                  "results again."))


# ------------------------------------------------------------------ header
def _method_text(ds) -> str:
    params = [(key[len("method_"):], ds.attrs[key]) for key in ds.attrs if key.startswith("method_")]
    # the Newton-Raphson settings have a line of their own (nonlinear frames only)
    params = [(k, v) for k, v in params if k not in NEWMARK_SOLVER_KEYS]
    text = str(ds.attrs.get("method", "?"))
    if params:
        text += " (" + ", ".join(f"{k} = {float(v):.6g}" for k, v in params) + ")"
    return text


def _harmonic_text(spec) -> str:
    if spec.kind == "ground":
        load = f"ground, {spec.amplitude:g} {spec.units}"
    else:
        floors = ", ".join(str(f) for f in spec.floors)
        amplitude = (" / ".join(f"{a:g}" for a in spec.amplitude) if isinstance(spec.amplitude, list)
                     else f"{spec.amplitude:g}")
        load = f"force {amplitude} N at floor{'s' if len(spec.floors) > 1 else ''} {floors}"
    return (f"{spec.name or 'harmonic #' + str(spec.index)}: {load} at {sig(spec.frequency, 4)} Hz "
            f"for {spec.duration:g} s" + (f" ({spec.ramp:g} s ramp)" if spec.ramp else ""))


def _laws_text(frame) -> str:
    """``"bilinear, hardening 0.03"``; several laws: each with its storeys."""
    groups: dict[str, list[int]] = {}
    for i, name in enumerate(frame.law, start=1):
        groups.setdefault(name, []).append(i)
    parts = []
    for name, storeys in groups.items():
        text = name
        if len(groups) > 1:
            text += f" (storey{'s' if len(storeys) > 1 else ''} {number_ranges(storeys)})"
        cls = LAWS[name]
        index = np.asarray(storeys) - 1
        if cls.needs_yield:
            text += f", hardening {spread(np.asarray(frame.hardening)[index])}"
        for key, default in cls.extra.items():
            values = np.broadcast_to(np.asarray(frame.law_params.get(key, default), float), (frame.n_storeys,))
            text += f", {key} {spread(values[index])}"
        parts.append(text)
    return "; ".join(parts)


def _kn_list(values, n_max: int = 8) -> str:
    """Storey values in kN, storey 1 first ('-' for none); first and last only for tall frames."""
    kn = [sig(v / 1000.0) for v in values]
    if len(kn) <= n_max:
        return ", ".join(kn) + f"{KEEP}kN"
    return f"{kn[0]}{KEEP}kN in storey{KEEP}1 to {kn[-1]}{KEEP}kN in storey{KEEP}{len(kn)}"


def _strength_text(cfg, frame) -> str | None:
    if frame.yield_shear is None:
        return None
    vy = np.where([not LAWS[name].needs_yield for name in frame.law], np.nan, frame.yield_shear)
    weight = frame.total_mass * STANDARD_GRAVITY
    text = f"yield shear {_kn_list(vy)}, storey{KEEP}1 up"
    if np.isfinite(vy[0]):
        text += f"; storey{KEEP}1: {sig(vy[0] / weight)}{KEEP}W"
    if cfg.strength_from and cfg.strength_from != "yield_shear":
        text += f" (from {cfg.strength_from})"
    return text


def _pdelta_text(cfg, frame) -> str:
    if frame.gravity_load is None:
        return "off (no gravity load in [building])"
    source = GRAVITY_FROM.get(cfg.gravity_from, "")
    return (f"on; storey gravity loads {_kn_list(frame.gravity_load)}, storey{KEEP}1 up"
            + (f", {source}" if source else ""))


def _solver_text(ds) -> str:
    p = {key: ds.attrs.get(f"method_{key}") for key in NEWMARK_SOLVER_KEYS}
    if any(v is None for v in p.values()):
        return ""
    return (f"Newton-Raphson: tol_drift {float(p['tol_drift']):g}, tol_force {float(p['tol_force']):g}, "
            f"max_iter {int(p['max_iter'])}, max_depth {int(p['max_depth'])} (a step is split into "
            f"at most {2 ** int(p['max_depth'])} substeps)")


# ------------------------------------------------------------------ report
def print_report(cfg, ds, written: Path, *, method_from_option: bool = False, loads=None,
                 twin=None, twin_written: Path | None = None, run_dir: Path | None = None) -> None:
    """The header, per-excitation and per-storey tables, peaks, comparison, files and caution.

    ``loads`` are the excitations in the order of the dataset's records (None for a
    record file that could not be read); ``run_dir`` a run folder that was kept.
    """
    echo = click.echo
    frame = cfg.frame
    nonlinear = not frame.is_linear
    n = frame.n_storeys
    n_rec, n_harm = len(cfg.record_entries), len(cfg.harmonics)

    if cfg.title:
        echo(cfg.title)
        echo()
    counts = f"{n_rec} record file{'s' if n_rec != 1 else ''}"
    suites = sorted({entry.suite for entry in cfg.record_entries if entry.suite})
    if suites:
        counts += f" listed in {', '.join(Path(name).name for name in suites)}"
    if n_harm:
        counts += f" + {n_harm} harmonic load{'s' if n_harm != 1 else ''}"
    if len(cfg.analysis.scales) > 1:
        counts += "; each record at scale factors " + ", ".join(f"{s:g}" for s in cfg.analysis.scales)
    elif cfg.analysis.scale != 1.0:
        counts += f"; records scaled by {cfg.analysis.scale:g}"
    if cfg.analysis.tail:
        counts += f"; {cfg.analysis.tail:g} s of free vibration after each"
    header = [
        ("building", f"{frame.name}, {n} storey{'s' if n != 1 else ''}, {sig(frame.total_height)} m tall, "
                     f"total mass {sig(frame.total_mass / 1000.0, 4)} t"),
        ("periods", ", ".join(f"T{m + 1} {sig(t)} s" for m, t in enumerate(frame.periods()[:3]))
         + (" ..." if n > 3 else "") + (" (elastic)" if nonlinear else "")),
    ]
    if nonlinear:
        header.append(("storeys", _laws_text(frame)))
        strength = _strength_text(cfg, frame)
        if strength:
            header.append(("strength", strength))
        header.append(("P-Delta", _pdelta_text(cfg, frame)))
        header.append(("collapse limit", f"storey drift ratio {percent(ds.attrs['collapse_drift'])} % "
                                         "(an analysis stops there as collapsed)"))
    header += [
        ("damping", frame.damping.describe()),
        ("method", _method_text(ds) + (" [from --method]" if method_from_option else "")),
    ]
    if nonlinear and _solver_text(ds):
        header.append(("", _solver_text(ds)))
    header += [
        ("time step", f"{float(ds.attrs['analysis_dt']):g} s"),
        ("excitations", counts),
    ]
    header += [("", _harmonic_text(spec)) for spec in cfg.harmonics]
    width = max(len(label) for label, _ in header)
    for label, text in header:
        if nonlinear:
            # the nonlinear header has long lines (strengths, gravity loads): hanging indent
            lines = textwrap.fill(text, width=HEADER_WIDTH, initial_indent=f"{label:<{width}}   ",
                                  subsequent_indent=" " * (width + 3), break_on_hyphens=False)
            echo(lines.replace(KEEP, " "))
        else:
            echo(f"{label:<{width}}   {text}")

    if nonlinear:
        _nonlinear_tables(cfg, ds, loads)
    else:
        _linear_tables(cfg, ds, loads)
    if twin is not None:
        _twin_comparison(ds, twin)
    _suite_lines(ds, twin, run_dir, written)
    echo()
    echo(f"results written to {written}")
    if twin_written is not None:
        echo(f"linear twin results written to {twin_written}")
    echo()
    if nonlinear:
        echo(wrap(NONLINEAR_CAUTION))
        echo()
    echo(caution_text())


def _linear_tables(cfg, ds, loads=None) -> None:
    """Per-excitation and storey tables of a linear frame (every excitation counts)."""
    echo = click.echo
    frame = cfg.frame
    n = frame.n_storeys
    g = STANDARD_GRAVITY
    drift = ds["peak_drift_ratio"].transpose("record", "storey").values
    ground = _ground(ds)
    kinds = ds["excitation"].values
    scale_factor = ds["scale_factor"].values
    n_steps = ds["n_steps"].values
    base_shear, roof = ds["peak_base_shear"].values, ds["peak_roof_displacement"].values
    status = np.array([str(s) for s in ds["status"].values])
    ok = status == "ok"
    rows = []
    for r, label in enumerate(ds["record"].values):
        if not ok[r]:
            continue
        pga = _pga(scale_factor, r, ground, loads) if kinds[r] == "base-acceleration" else np.nan
        worst = int(np.argmax(drift[r]))
        rows.append([
            str(label), sig(pga), f"{(int(n_steps[r]) - 1) * ds.attrs['analysis_dt']:.2f}",
            percent(drift[r, worst]), str(worst + 1),
            sig(base_shear[r] / 1000.0), sig(roof[r]),
        ])
    echo()
    echo(render_table("Peaks per excitation", [
        Column("excitation", "<"), Column("PGA\n(g)"), Column("length\n(s)"),
        Column("drift ratio\nmax (%)"), Column("in\nstorey"), Column("base shear\n(kN)"),
        Column("roof displ.\n(m)"),
    ], rows))
    echo(wrap("PGA: peak ground acceleration as applied (after scaling), '-' for floor forces; "
              "length includes the free-vibration tail."))

    nrec = int(ok.sum())
    if nrec == 0:
        echo()
        echo("Storey envelopes: none, no excitation could be analysed.")
        _failed_lines(ds, ok)
        return
    drift = drift[ok]
    pfa = ds["peak_floor_acceleration"].transpose("record", "floor").values[ok] / g
    shear = ds["peak_storey_shear"].transpose("record", "storey").values[ok] / 1000.0
    rows = [[str(i + 1), percent(drift[:, i].max()), percent(drift[:, i].mean()),
             sig(pfa[:, i].max()), sig(pfa[:, i].mean()),
             sig(shear[:, i].max()), sig(shear[:, i].mean())] for i in reversed(range(n))]
    echo()
    echo(render_table(
        f"Storey envelopes: max and mean of the peaks over {nrec} excitation{'s' if nrec != 1 else ''}",
        [Column("storey", "<"), Column("max (%)"), Column("mean (%)"), Column("max (g)"),
         Column("mean (g)"), Column("max (kN)"), Column("mean (kN)")],
        rows,
        groups=[("", 1), ("drift ratio", 2), ("floor acceleration", 2), ("storey shear", 2)],
    ))
    echo(wrap("Storey i joins floor i-1 and floor i; its floor acceleration is the absolute "
              "acceleration of floor i, the floor above it."))
    _failed_lines(ds, ok)
    _peak_lines(frame, ds["peak_base_shear"].values[ok], ds["peak_roof_displacement"].values[ok])


def _failed_lines(ds, ok) -> None:
    """The excitations that could not be analysed, with their reasons."""
    failed = [f"{ds['record'].values[r]} ({str(ds['status'].values[r]).partition(':')[2].strip()})"
              for r in range(len(ok)) if not ok[r]]
    if failed:
        echo = click.echo
        echo(wrap("Failed, left out of the tables: " + "; ".join(failed) + "."))


def _ground(ds):
    """The applied ground accelerations (record, time), or None when they were not kept at full rate."""
    if "ground_acceleration" not in ds or "history_decimation" in ds.attrs:
        return None
    return ds["ground_acceleration"].transpose("record", "time").values


def _pga(scale_factor, r: int, ground, loads) -> float:
    """Peak ground acceleration of record ``r`` in g: from the stored motion, else from the record
    times its ``scale_factor`` (the dataset's per-record array)."""
    if ground is not None:
        return np.nanmax(np.abs(ground[r])) / STANDARD_GRAVITY
    if loads is not None and loads[r] is not None:
        scale = abs(float(scale_factor[r]))
        return float(np.max(np.abs(loads[r].to_si()))) * scale / STANDARD_GRAVITY
    return np.nan


def _peak_lines(frame, base_shear, roof, blank: bool = True) -> None:
    """Max and mean peak base shear and roof displacement over the given records."""
    echo = click.echo
    weight_kn = frame.total_mass * STANDARD_GRAVITY / 1000.0
    base = base_shear / 1000.0
    if blank:
        echo()
    if base.size == 0:
        echo("peak base shear and roof displacement: no excitation finished with status ok")
        return
    echo(f"peak base shear          max {sig(base.max())} kN = {sig(base.max() / weight_kn)} W, "
         f"mean {sig(base.mean())} kN = {sig(base.mean() / weight_kn)} W "
         f"(W = weight {sig(weight_kn, 4)} kN)")
    echo(f"peak roof displacement   max {sig(roof.max())} m, mean {sig(roof.mean())} m "
         f"(relative to the ground; max roof drift ratio {percent(roof.max() / frame.total_height)} %)")


def _stop_reason(ds, r: int) -> str:
    """Why record ``r`` stopped, with the time and storey where that is known."""
    status = str(ds["status"].values[r])
    dt = float(ds.attrs["analysis_dt"])
    last = int(ds["n_steps"].values[r]) - 1
    if status == "collapsed":
        # the first step beyond the limit is the last one analysed: there every storey's peak is
        # reached or lower, so the largest peak drift ratio is the one that passed the limit
        drift = ds["peak_drift_ratio"].transpose("record", "storey").values[r]
        storey = int(np.nanargmax(np.abs(drift))) + 1
        return (f"collapsed at {last * dt:.2f} s: storey {storey} drift ratio "
                f"{percent(abs(drift[storey - 1]))} % passed the {percent(ds.attrs['collapse_drift'])} % limit")
    if status == "not-converged":
        depth = int(ds.attrs.get("method_max_depth", 0))
        split = (f"even with the step split into {2 ** depth} substeps" if depth
                 else "and max_depth = 0 allows no step splitting")
        return (f"did not converge in the step after {max(last, 0) * dt:.2f} s (Newton-Raphson "
                f"failed {split})")
    return status


def _nonlinear_tables(cfg, ds, loads) -> None:
    """Per-excitation table with status and energy error; storey table over the records that finished."""
    echo = click.echo
    frame = cfg.frame
    n = frame.n_storeys
    g = STANDARD_GRAVITY
    dt = float(ds.attrs["analysis_dt"])
    labels = [str(label) for label in ds["record"].values]
    status = np.array([str(s) for s in ds["status"].values])
    ok = status == "ok"
    drift = ds["peak_drift_ratio"].transpose("record", "storey").values
    ground = _ground(ds)
    kinds = ds["excitation"].values
    energy_error = ds["energy_balance_error"].values
    ductility = (ds["ductility"].transpose("record", "storey").values if "ductility" in ds
                 else np.full(drift.shape, np.nan))
    n_steps = ds["n_steps"].values
    scale_factor = ds["scale_factor"].values
    base_shear = ds["peak_base_shear"].values
    rows = []
    for r, label in enumerate(labels):
        if kinds[r] != "base-acceleration":
            pga = np.nan
        elif not ok[r] and loads is not None:
            # the stored ground motion ends where the analysis stopped; the record's peak may come later
            pga = _pga(scale_factor, r, None, loads)
        else:
            pga = _pga(scale_factor, r, ground, loads)
        if not np.isfinite(drift[r]).any():
            # the record could not be read: nothing was analysed
            rows.append([label, sig(pga), "-", "-", "-", "-", "-", "-", status[r].partition(":")[0]])
            continue
        worst = int(np.nanargmax(drift[r]))
        mu = np.nanmax(ductility[r]) if np.isfinite(ductility[r]).any() else np.nan
        rows.append([
            label, sig(pga), f"{(int(n_steps[r]) - 1) * dt:.2f}",
            percent(drift[r, worst]), str(worst + 1), sig(mu),
            sig(base_shear[r] / 1000.0), energy_percent(energy_error[r]), status[r],
        ])
    echo()
    echo(render_table("Peaks per excitation", [
        Column("excitation", "<"), Column("PGA\n(g)"), Column("analysed\n(s)"),
        Column("drift ratio\nmax (%)"), Column("in\nstorey"), Column("ductility\nmax"),
        Column("base shear\n(kN)"), Column("energy\nerror (%)"), Column("status", "<"),
    ], rows))
    echo(wrap("PGA: peak ground acceleration of the record as scaled, '-' for floor forces; "
              "analysed: time analysed, including the free-vibration tail (shorter when the "
              "analysis stopped); ductility: peak storey deformation / yield deformation Vy/k; "
              "energy error: largest energy balance error over the record, in % of the input energy."))
    high = [f"{labels[r]} ({energy_percent(energy_error[r])} %)" for r in range(len(labels))
            if ok[r] and energy_error[r] > ENERGY_ERROR_NOTE]
    if high:
        echo(wrap(f"Energy balance error above {ENERGY_ERROR_NOTE * 100:g} %: {', '.join(high)}; "
                  "a smaller time step (--dt) should reduce it."))

    n_ok = int(ok.sum())
    pfa = ds["peak_floor_acceleration"].transpose("record", "floor").values[ok] / g
    shear = ds["peak_storey_shear"].transpose("record", "storey").values[ok] / 1000.0
    resid = np.abs(ds["residual_drift_ratio"].transpose("record", "storey").values[ok])
    d_ok, mu_ok = drift[ok], ductility[ok]

    def pair(values, fmt):
        if values.size == 0 or not np.isfinite(values).any():
            return ["-", "-"]
        return [fmt(np.nanmax(values)), fmt(np.nanmean(values))]

    rows = [[str(i + 1)] + pair(d_ok[:, i], percent) + pair(pfa[:, i], sig) + pair(shear[:, i], sig)
            + pair(mu_ok[:, i], sig) + pair(resid[:, i], percent) for i in reversed(range(n))]
    echo()
    if n_ok == 0:
        echo("Storey envelopes: none, no excitation finished with status ok.")
    else:
        title = (f"Storey envelopes: max and mean over the {plural(n_ok, 'excitation')} with status ok"
                 + (f" ({len(labels) - n_ok} of {len(labels)} left out)" if n_ok < len(labels) else ""))
        echo(render_table(
            title,
            [Column("storey", "<")] + [Column(h) for h in ("max", "mean") * 5],
            rows,
            groups=[("", 1), ("drift ratio (%)", 2), ("floor acc. (g)", 2), ("shear (kN)", 2),
                    ("ductility", 2), ("residual (%)", 2)],
        ))
        echo(wrap("Storey i joins floor i-1 and floor i; its floor acceleration is that of floor i. "
                  "Residual: |storey drift ratio| at the end of the analysis. Max and mean are over "
                  "the excitations with status ok only."))
    stopped = [f"{labels[r]} {_stop_reason(ds, r)}" for r in range(len(labels)) if not ok[r]]
    if stopped:
        echo(wrap("Left out: " + "; ".join(stopped) + "."))
    if 0 < n_ok < len(labels):
        echo()
        echo(f"Over the {plural(n_ok, 'excitation')} with status ok:")
    _peak_lines(frame, ds["peak_base_shear"].values[ok], ds["peak_roof_displacement"].values[ok],
                blank=n_ok == len(labels) or n_ok == 0)


def _twin_comparison(ds, twin) -> None:
    """Median over the records that finished of nonlinear / linear peak drift, and R."""
    echo = click.echo
    table = twin_comparison(ds, twin)
    n_used = len(table["records"])
    if n_used == 0:
        echo()
        echo("Against the linear twin: no comparison, no excitation finished with status ok.")
        return
    rows = [[str(i + 1), sig(table["drift_ratio"][i])] for i in reversed(range(ds.sizes["storey"]))]
    echo()
    echo(render_table(
        f"Against the linear twin: medians over the {plural(n_used, 'excitation')} with status ok",
        [Column("storey", "<"), Column("peak drift ratio\nnonlinear / linear")], rows))
    echo(f"effective strength reduction R = elastic / inelastic peak base shear: "
         f"{sig(table['strength_reduction'])}")
    echo(wrap("Linear twin: same masses, heights, elastic stiffness and damping, linear storeys, "
              "no P-Delta, same excitations. Each ratio is taken record by record, then the "
              "median over the records is shown."))


def twin_comparison(ds, twin) -> dict:
    """Per storey: median over records with status ok of peak drift ratio nonlinear / linear;
    and R, the median of elastic / inelastic peak base shear over the same records.

    Uses ``simulate.results.compare.compare`` (a = the linear twin, b = the nonlinear frame) for the
    per-record ratios and keeps the records the nonlinear analysis finished.
    """
    both = compare(twin, ds, names=("linear twin", "nonlinear frame"))
    keep = np.array([str(s) == "ok" for s in both["status_b"].values])
    ratio = both["ratio_peak_drift_ratio"].transpose("record", "storey").values[keep]
    R = both["strength_reduction_factor"].values[keep]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)   # all-NaN columns when no record finished
        drift = np.nanmedian(ratio, axis=0) if ratio.size else np.full(ds.sizes["storey"], np.nan)
        r_median = float(np.nanmedian(R)) if R.size else float("nan")
    return {"records": [str(x) for x in both["record"].values[keep]], "drift_ratio": drift,
            "strength_reduction": r_median}
