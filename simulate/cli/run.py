"""``swaysim run CONFIG``: time-history analysis of every excitation in a config."""

from __future__ import annotations

from pathlib import Path

import click
import numpy as np

from simulate.cli.options import config_argument, debug_option, positive_float
from simulate.cli.tables import Column, caution_text, percent, render_table, sig, wrap
from simulate.config import load_config
from simulate.errors import ConfigError, InputError
from simulate.kernels import METHODS
from simulate.results import write_dataset
from simulate.results.netcdf import WRITERS
from simulate.settings import STANDARD_GRAVITY
from simulate.suite import run as run_analysis


def _check_output(path: Path, origin: str) -> None:
    """Fail before the analysis, not after it, when the results cannot be written to ``path``."""
    if path.suffix.lower() not in WRITERS:
        raise InputError(f"{origin}: {path}: unknown results format {path.suffix or '(none)'!r}; "
                         f"use a file name ending in {', '.join(WRITERS)}")
    folder = path.parent if str(path.parent) else Path(".")
    if not folder.is_dir():
        raise InputError(f"{origin}: {path}: folder {folder} does not exist")
    if path.is_dir():
        raise InputError(f"{origin}: {path} is a folder; give a file name ending in .nc")


@click.command("run", short_help="Run the records and harmonic loads of CONFIG.")
@config_argument
@click.option("-o", "--output", type=click.Path(dir_okay=False, path_type=Path), metavar="OUT.nc",
              help="Results file (NetCDF). Default: [output] file of the config, "
                   "else <config name>.nc in the current folder.")
@click.option("--method", type=click.Choice(list(METHODS)), default=None,
              help="Integration method (overrides [analysis] method).")
@click.option("--dt", type=float, default=None, callback=positive_float, metavar="SECONDS",
              help="Analysis time step, s (overrides [analysis] dt).")
@debug_option
def run_command(config: Path, output: Path | None, method: str | None, dt: float | None):
    """Run the records and harmonic loads of CONFIG through its building.

    Writes the full response histories and envelopes to a NetCDF file and
    prints the storey envelopes over all excitations.
    """
    cfg = load_config(config)
    if output is not None:
        target, origin = output, "option -o"
    elif cfg.output is not None:
        target, origin = cfg.output, f"{cfg.path}: [output] file"
    else:
        target, origin = Path(f"{cfg.path.stem}.nc"), "default output"
    _check_output(target, origin)

    loads = cfg.excitations()
    kwargs = cfg.run_kwargs(method=method, dt=dt)
    try:
        ds = run_analysis(cfg.frame, loads, **kwargs)
    except ConfigError:
        raise
    except InputError as exc:
        overrides = [f"--{name} {value}" for name, value in (("method", method), ("dt", dt))
                     if value is not None]
        where = f"{cfg.path} with {' '.join(overrides)}" if overrides else f"{cfg.path}: [analysis]"
        raise InputError(f"{where}: {exc}") from exc
    written = write_dataset(ds, target)
    print_report(cfg, ds, written, method_from_option=method is not None)


def _method_text(ds) -> str:
    params = [(key[len("method_"):], ds.attrs[key]) for key in ds.attrs if key.startswith("method_")]
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


def print_report(cfg, ds, written: Path, *, method_from_option: bool = False) -> None:
    """The header, per-excitation and per-storey envelope tables, peaks, file and caution."""
    echo = click.echo
    frame = cfg.frame
    n = frame.n_storeys
    g = STANDARD_GRAVITY
    n_rec, n_harm = len(cfg.record_files), len(cfg.harmonics)

    if cfg.title:
        echo(cfg.title)
        echo()
    counts = f"{n_rec} record file{'s' if n_rec != 1 else ''}"
    if n_harm:
        counts += f" + {n_harm} harmonic load{'s' if n_harm != 1 else ''}"
    if cfg.analysis.scale != 1.0:
        counts += f"; records scaled by {cfg.analysis.scale:g}"
    if cfg.analysis.tail:
        counts += f"; {cfg.analysis.tail:g} s of free vibration after each"
    header = [
        ("building", f"{frame.name}, {n} storey{'s' if n != 1 else ''}, {sig(frame.total_height)} m tall, "
                     f"total mass {sig(frame.total_mass / 1000.0, 4)} t"),
        ("periods", ", ".join(f"T{m + 1} {sig(t)} s" for m, t in enumerate(frame.periods()[:3]))
         + (" ..." if n > 3 else "")),
        ("damping", frame.damping.describe()),
        ("method", _method_text(ds) + (" [from --method]" if method_from_option else "")),
        ("time step", f"{float(ds.attrs['analysis_dt']):g} s"),
        ("excitations", counts),
    ]
    header += [("", _harmonic_text(spec)) for spec in cfg.harmonics]
    width = max(len(label) for label, _ in header)
    for label, text in header:
        echo(f"{label:<{width}}   {text}")

    drift = ds["peak_drift_ratio"].transpose("record", "storey").values
    ground = ds["ground_acceleration"].values
    kinds = ds["excitation"].values
    rows = []
    for r, label in enumerate(ds["record"].values):
        pga = np.nanmax(np.abs(ground[r])) / g if kinds[r] == "base-acceleration" else np.nan
        worst = int(np.argmax(drift[r]))
        rows.append([
            str(label), sig(pga), f"{(int(ds['n_steps'].values[r]) - 1) * ds.attrs['analysis_dt']:.2f}",
            percent(drift[r, worst]), str(worst + 1),
            sig(ds["peak_base_shear"].values[r] / 1000.0), sig(ds["peak_roof_displacement"].values[r]),
        ])
    echo()
    echo(render_table("Peaks per excitation", [
        Column("excitation", "<"), Column("PGA\n(g)"), Column("length\n(s)"),
        Column("drift ratio\nmax (%)"), Column("in\nstorey"), Column("base shear\n(kN)"),
        Column("roof displ.\n(m)"),
    ], rows))
    echo(wrap("PGA: peak ground acceleration as applied (after scaling), '-' for floor forces; "
              "length includes the free-vibration tail."))

    nrec = ds.sizes["record"]
    pfa = ds["peak_floor_acceleration"].transpose("record", "floor").values / g
    shear = ds["peak_storey_shear"].transpose("record", "storey").values / 1000.0
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

    weight_kn = frame.total_mass * g / 1000.0
    base = ds["peak_base_shear"].values / 1000.0
    roof = ds["peak_roof_displacement"].values
    echo()
    echo(f"peak base shear          max {sig(base.max())} kN = {sig(base.max() / weight_kn)} W, "
         f"mean {sig(base.mean())} kN = {sig(base.mean() / weight_kn)} W "
         f"(W = weight {sig(weight_kn, 4)} kN)")
    echo(f"peak roof displacement   max {sig(roof.max())} m, mean {sig(roof.mean())} m "
         f"(relative to the ground; max roof drift ratio {percent(roof.max() / frame.total_height)} %)")
    echo()
    echo(f"results written to {written}")
    echo()
    echo(caution_text())
