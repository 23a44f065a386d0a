"""``swaysim pushover CONFIG``: static pushover (capacity curve) of the building in a config."""

from __future__ import annotations

import io
import math
from pathlib import Path

import click
import numpy as np

from simulate import files
from simulate.analysis.pushover import PATTERNS, pushover
from simulate.cli.options import check_output_file, config_argument, debug_option
from simulate.cli.tables import Column, caution_text, percent, render_table, sig, wrap
from simulate.config import load_config
from simulate.results import write_dataset

#: Output formats by file suffix.
OUTPUT_SUFFIXES = (".nc", ".csv")

#: About this many rows in the printed capacity-curve table.
TABLE_ROWS = 20


def check_output(path: Path) -> None:
    """Fail before the analysis, not after it, when the results cannot be written to ``path``."""
    check_output_file(path, tuple(OUTPUT_SUFFIXES))


def write_text_atomic(text: str, path: Path) -> Path:
    """Write ``text`` to ``path`` durably and atomically (``simulate.files``)."""
    return files.write_text_atomic(path, text)


def write_output(ds, path: Path, csv_text) -> Path:
    """NetCDF through ``simulate.write_dataset``, CSV (``csv_text(ds)``) written atomically."""
    if path.suffix.lower() == ".csv":
        return write_text_atomic(csv_text(ds), path)
    return write_dataset(ds, path)


def pushover_csv(ds) -> str:
    """The pushover dataset as plain CSV text: a header, then one row per step (SI units).

    Attributes (pattern, status, caution) stay in the NetCDF form and the printed report.
    """
    n = ds.sizes["storey"]
    columns = {
        "step": ds["step"].values,
        "roof_drift_ratio": ds["roof_drift_ratio"].values,
        "roof_displacement_m": ds["roof_displacement"].values,
        "base_shear_N": ds["base_shear"].values,
        "load_factor_N": ds["load_factor"].values,
    }
    drift = ds["drift_ratio"].transpose("step", "storey").values
    shear = ds["storey_shear"].transpose("step", "storey").values
    disp = ds["displacement"].transpose("step", "floor").values
    for i in range(n):
        columns[f"drift_ratio_{i + 1}"] = drift[:, i]
    for i in range(n):
        columns[f"storey_shear_N_{i + 1}"] = shear[:, i]
    for i in range(n):
        columns[f"displacement_m_{i + 1}"] = disp[:, i]
    out = io.StringIO()
    out.write(",".join(columns) + "\n")
    values = list(columns.values())
    for k in range(ds.sizes["step"]):
        out.write(",".join(str(int(values[0][k])) if c == 0 else repr(float(values[c][k]))
                           for c in range(len(values))) + "\n")
    return out.getvalue()


def _roof_drift(ctx, param, value):
    if not (math.isfinite(value) and value > 0.0):
        raise click.BadParameter(f"expected a positive roof drift ratio such as 0.04, got {value!r}")
    return value


def table_steps(n_steps: int, rows: int = TABLE_ROWS) -> list[int]:
    """Every k-th step (k chosen for about ``rows`` rows) and the last one, step 0 left out."""
    last = n_steps - 1
    if last < 1:
        return []
    k = max(1, math.ceil(last / rows))
    shown = list(range(k, last + 1, k))
    if shown[-1] != last:
        shown.append(last)
    return shown


@click.command("pushover", short_help="Static pushover (capacity curve) of CONFIG's building.")
@config_argument
@click.option("--pattern", type=click.Choice(list(PATTERNS)), default="first-mode", show_default=True,
              help="Lateral load pattern: " + "; ".join(f"{name}: {text}" for name, (_, text) in PATTERNS.items())
                   + ".")
@click.option("--roof-drift", type=float, default=0.04, show_default=True, callback=_roof_drift,
              metavar="RATIO", help="Final roof drift ratio (roof displacement / total height).")
@click.option("--steps", type=click.IntRange(min=1), default=400, show_default=True,
              help="Number of equal roof displacement increments.")
@click.option("-o", "--output", type=click.Path(dir_okay=False, path_type=Path), metavar="OUT.nc|OUT.csv",
              help="Write the capacity curve and storey histories: NetCDF (with the attributes and the "
                   "caution) or CSV (one row per step).")
@debug_option
def pushover_command(config: Path, pattern: str, roof_drift: float, steps: int, output: Path | None):
    """Push CONFIG's building under a fixed lateral load pattern (roof displacement control).

    Prints the capacity curve (base shear against roof drift) with the largest
    storey drift, the peak base shear and the initial stiffness. Record files
    are not read.
    """
    cfg = load_config(config)
    if output is not None:
        check_output(output)
    frame = cfg.frame
    ds = pushover(frame, pattern=pattern, roof_drift=roof_drift, steps=steps)
    written = write_output(ds, output, pushover_csv) if output is not None else None
    print_report(cfg.title, frame, ds, written)


def print_report(title, frame, ds, written: Path | None) -> None:
    """Header, capacity-curve table, peak, status, output file and caution."""
    echo = click.echo
    n = frame.n_storeys
    weight = float(ds.attrs["weight_N"])
    if title:
        echo(title)
        echo()
    kinds = sorted(set(frame.law))
    pdelta = "with P-Delta (gravity loads)" if ds.attrs["p_delta"] == "yes" else "without P-Delta"
    header = [
        ("building", f"{frame.name}, {n} storey{'s' if n != 1 else ''}, {sig(frame.total_height)} m tall, "
                     f"weight W = {sig(weight / 1000.0, 4)} kN"),
        ("storeys", f"{', '.join(kinds)}; {pdelta}"),
        ("pattern", f"{ds.attrs['pattern']}"
                    + (f" ({PATTERNS[ds.attrs['pattern']][1]})" if ds.attrs["pattern"] in PATTERNS else "")),
        ("control", f"roof displacement to {percent(ds.attrs['roof_drift_target'])} % of the height "
                    f"in {ds.attrs['steps_planned']} equal steps"),
    ]
    width = max(len(label) for label, _ in header)
    for label, text in header:
        echo(f"{label:<{width}}   {text}")

    roof = ds["roof_drift_ratio"].values
    base = ds["base_shear"].values
    drift = np.abs(ds["drift_ratio"].transpose("step", "storey").values)
    rows = []
    for k in table_steps(ds.sizes["step"]):
        worst = int(np.argmax(drift[k]))
        rows.append([str(k), percent(roof[k]), sig(base[k] / 1000.0), sig(base[k] / weight),
                     percent(drift[k, worst]), str(worst + 1)])
    echo()
    echo(render_table("Capacity curve", [
        Column("step", "<"), Column("roof drift\n(%)"), Column("base shear\n(kN)"), Column("base shear\n/ W"),
        Column("max storey\ndrift (%)"), Column("in\nstorey"),
    ], rows))
    echo(wrap("Base shear: the shear resisted by storey 1 (spring shear minus the P-Delta shear), equal to "
              "the sum of the applied floor forces."))
    echo()
    peak = float(ds.attrs["peak_base_shear"])
    echo(f"peak base shear     {sig(peak / 1000.0)} kN = {sig(peak / weight)} W "
         f"at roof drift {percent(ds.attrs['roof_drift_ratio_at_peak'])} %")
    echo(f"initial stiffness   {sig(float(ds.attrs['initial_stiffness']) / 1000.0)} kN/m "
         f"(base shear per roof displacement)")
    status = ds.attrs["status"]
    if status == "not-converged":
        echo(wrap(f"status              not-converged: the step after roof drift {percent(roof[-1])} % "
                  f"did not converge, even split in smaller steps; the curve stops there "
                  f"({ds.attrs['steps_done']} of {ds.attrs['steps_planned']} steps)."))
    elif status == "collapsed":
        echo(wrap(f"status              collapsed: past the peak the base shear fell to zero at roof drift "
                  f"{percent(roof[-1])} %; the frame no longer stands under its gravity loads (P-Delta) "
                  f"and the curve stops there."))
    if written is not None:
        echo()
        echo(f"results written to {written}")
    echo()
    echo(caution_text())
