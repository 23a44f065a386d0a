"""``swaysim compare A.nc B.nc``: demand ratios b / a of two results files, record by record."""

from __future__ import annotations

import io
from pathlib import Path

import click
import numpy as np

from simulate.cli.options import debug_option
from simulate.cli.pushover import check_output, write_output
from simulate.cli.tables import Column, caution_text, percent, render_table, sig, wrap
from simulate.results import read_dataset
from simulate.results.compare import COMPARED, compare

#: Per-record rows are printed up to this many records (the medians always).
MAX_RECORD_ROWS = 20


def compare_csv(ds) -> str:
    """The comparison as CSV text: one row per record and storey (floor = storey), then median rows.

    Floor acceleration columns belong to floor i, the floor above storey i; base
    shear and R repeat on every storey row of a record.
    """
    n = ds.sizes["storey"]
    names = []
    for var, dim in COMPARED.items():
        names += [f"{var}_a", f"{var}_b", f"ratio_{var}"]
    names.append("strength_reduction_factor")
    out = io.StringIO()
    out.write(",".join(["record", "storey"] + names + ["status_a", "status_b"]) + "\n")

    def cell(value) -> str:
        return repr(float(value))

    for r, label in enumerate(ds["record"].values):
        for i in range(n):
            values = []
            for name in names:
                var = ds[name]
                values.append(cell(var.values[r, i] if var.ndim == 2 else var.values[r]))
            out.write(",".join([_quote(str(label)), str(i + 1)] + values
                               + [_quote(str(ds["status_a"].values[r])), _quote(str(ds["status_b"].values[r]))])
                      + "\n")
    for i in range(n):
        values = []
        for name in names:
            median = f"median_{name}" if name.startswith("ratio_") or name == "strength_reduction_factor" else None
            if median is None:
                values.append("")
                continue
            var = ds[median]
            values.append(cell(var.values[i] if var.ndim == 1 else var.values))
        out.write(",".join(["median", str(i + 1)] + values + ["", ""]) + "\n")
    return out.getvalue()


def _median(values) -> float:
    """Median of the finite values, NaN if there are none."""
    finite = values[np.isfinite(values)]
    return float(np.median(finite)) if finite.size else float("nan")


def _quote(text: str) -> str:
    if any(c in text for c in ',"\n'):
        return '"' + text.replace('"', '""') + '"'
    return text


@click.command("compare", short_help="Demand ratios of two results files (b / a), record by record.")
@click.argument("reference", metavar="A.nc", type=click.Path(path_type=Path))
@click.argument("other", metavar="B.nc", type=click.Path(path_type=Path))
@click.option("-o", "--output", type=click.Path(dir_okay=False, path_type=Path), metavar="OUT.nc|OUT.csv",
              help="Write the ratios (NetCDF, or CSV with one row per record and storey).")
@debug_option
def compare_command(reference: Path, other: Path, output: Path | None):
    """Compare results file B with the reference A (usually the linear twin).

    Records are matched by their labels. Prints the median over records of the
    storey drift and floor acceleration ratios b / a, the residual drifts, the
    strength reduction factor R = peak base shear of A / that of B, and any
    analysis that did not end ok.
    """
    if output is not None:
        check_output(output)
    ds_a = read_dataset(reference)
    ds_b = read_dataset(other)
    ds = compare(ds_a, ds_b, names=(str(reference), str(other)))
    written = write_output(ds, output, compare_csv) if output is not None else None
    print_report(ds, written)


def print_report(ds, written: Path | None) -> None:
    """Header, per-storey medians, R, statuses that are not ok, output file and caution."""
    echo = click.echo
    n = ds.sizes["storey"]
    nrec = ds.sizes["record"]
    a, b = ds.attrs["a"], ds.attrs["b"]
    frame_a = f": {ds.attrs['frame_a']}" if ds.attrs.get("frame_a") else ""
    frame_b = f": {ds.attrs['frame_b']}" if ds.attrs.get("frame_b") else ""
    echo(f"a (reference)   {a}{frame_a}, {ds.attrs['records_a']} records")
    echo(f"b               {b}{frame_b}, {ds.attrs['records_b']} records")
    echo(f"compared        {nrec} record{'s' if nrec != 1 else ''} found in both")

    drift = ds["median_ratio_peak_drift_ratio"].values
    pfa = ds["median_ratio_peak_floor_acceleration"].values
    res_a = np.abs(ds["residual_drift_ratio_a"].transpose("record", "storey").values)
    res_b = np.abs(ds["residual_drift_ratio_b"].transpose("record", "storey").values)
    rows = [[str(i + 1), sig(drift[i]), percent(_median(res_a[:, i])), percent(_median(res_b[:, i])), sig(pfa[i])]
            for i in reversed(range(n))]
    echo()
    echo(render_table(f"Median over {nrec} record{'s' if nrec != 1 else ''}", [
        Column("storey", "<"), Column("peak drift\nb / a"), Column("|residual drift|\na (%)"),
        Column("|residual drift|\nb (%)"), Column("floor acceleration\nb / a"),
    ], rows))
    echo(wrap("Floor acceleration of storey i: the absolute acceleration of floor i, the floor above it. "
              "Residual drifts are shown as values, not ratios: an elastic reference keeps almost none."))

    R = ds["strength_reduction_factor"].values
    echo()
    if nrec <= MAX_RECORD_ROWS:
        va = ds["peak_base_shear_a"].values / 1000.0
        vb = ds["peak_base_shear_b"].values / 1000.0
        worst = ds["ratio_peak_drift_ratio"].transpose("record", "storey").values
        rows = [[str(label), sig(va[r]), sig(vb[r]), sig(R[r]),
                 sig(np.nanmax(worst[r]) if np.isfinite(worst[r]).any() else np.nan)]
                for r, label in enumerate(ds["record"].values)]
        echo(render_table("Per record", [
            Column("record", "<"), Column("peak base shear\na (kN)"), Column("peak base shear\nb (kN)"),
            Column("R = a / b"), Column("drift b / a, max\nover storeys"),
        ], rows))
        echo()
    finite = R[np.isfinite(R)]
    if finite.size:
        echo(f"strength reduction factor R = peak base shear a / b: median "
             f"{sig(float(ds['median_strength_reduction_factor']))}, min {sig(finite.min())}, "
             f"max {sig(finite.max())}")
    else:
        echo("strength reduction factor R = peak base shear a / b: no record with a base shear in b")

    bad = [(str(label), str(sa), str(sb)) for label, sa, sb in
           zip(ds["record"].values, ds["status_a"].values, ds["status_b"].values) if sa != "ok" or sb != "ok"]
    if bad:
        echo()
        echo("analyses that did not end ok:")
        for label, sa, sb in bad:
            echo(f"  {label}: a {sa}, b {sb}")
    if written is not None:
        echo()
        echo(f"results written to {written}")
    echo()
    echo(caution_text())
