"""``swaysim spectrum FILE...``: elastic and constant-ductility spectra of record files."""

from __future__ import annotations

import csv
from pathlib import Path

import click
import numpy as np
import xarray as xr

from simulate.files import write_atomic
from simulate.cli.motions import (
    damping_option, damping_text, dt_option, files_argument, option_damping, read_records, units_option,
)
from simulate.cli.options import check_output_file, debug_option
from simulate.cli.tables import Column, caution_text, render_table, sig, wrap
from simulate.errors import InputError
from simulate.excitation.spectra import (
    check_ductility, check_periods, inelastic_spectrum, log_periods, response_spectrum,
)
from simulate.results import write_dataset
from simulate.settings import CAUTION

#: Default period grid: start:stop:count, log-spaced, s.
DEFAULT_PERIODS = "0.05:4:100"

#: Most period columns in the printed tables (the output file holds every period).
TABLE_PERIODS = 8

#: Periods preferred for the printed tables, s.
NICE_PERIODS = (0.01, 0.02, 0.03, 0.05, 0.1, 0.2, 0.3, 0.5, 0.75, 1.0, 1.5, 2.0, 3.0, 4.0, 5.0,
                7.5, 10.0, 15.0, 20.0, 30.0, 50.0, 100.0)

OUTPUT_SUFFIXES = (".csv", ".nc")


def parse_periods(text: str) -> np.ndarray:
    """``start:stop:count`` (log-spaced, both ends included) or a comma-separated list, s."""
    origin = "option --periods"
    text = text.strip()
    if ":" in text:
        parts = text.split(":")
        if len(parts) != 3:
            raise InputError(f"{origin}: expected start:stop:count such as {DEFAULT_PERIODS}, got {text!r}")
        try:
            start, stop = float(parts[0]), float(parts[1])
            count = int(parts[2])
        except ValueError:
            raise InputError(f"{origin}: expected start:stop:count such as {DEFAULT_PERIODS} "
                             f"(count a whole number), got {text!r}") from None
        try:
            return log_periods(start, stop, count)
        except InputError as exc:
            raise InputError(f"{origin}: {exc}") from None
    try:
        values = [float(item) for item in text.replace(" ", ",").split(",") if item]
    except ValueError:
        raise InputError(f"{origin}: expected start:stop:count or a comma-separated list of "
                         f"periods in s, got {text!r}") from None
    return check_periods(values, label=origin)


def parse_ductility(text: str) -> np.ndarray:
    """A comma-separated list of target ductilities >= 1."""
    origin = "option --ductility"
    try:
        values = [float(item) for item in text.replace(" ", ",").split(",") if item]
    except ValueError:
        raise InputError(f"{origin}: expected a comma-separated list of numbers >= 1 such as 2,4,6, "
                         f"got {text!r}") from None
    return check_ductility(values, label=origin)


def table_periods(periods: np.ndarray, limit: int = TABLE_PERIODS) -> list[int]:
    """Indices of at most ``limit`` periods for the printed tables, in increasing period."""
    order = list(np.argsort(periods))
    if len(order) <= limit:
        return order
    positive = periods[periods > 0.0]
    lo, hi = positive.min(), positive.max()
    chosen = []
    for nice in NICE_PERIODS:
        if lo * 0.98 <= nice <= hi * 1.02:
            i = int(np.argmin(np.abs(np.log(np.where(periods > 0.0, periods, np.inf) / nice))))
            if i not in chosen:
                chosen.append(i)
    if len(chosen) > limit:
        keep = np.unique(np.round(np.linspace(0, len(chosen) - 1, limit)).astype(int))
        chosen = [chosen[k] for k in keep]
    return sorted(chosen, key=lambda i: periods[i])


def check_output(path: Path) -> None:
    """Fail before computing, not after, when the spectra cannot be written to ``path``."""
    check_output_file(path, tuple(OUTPUT_SUFFIXES), "spectra")


def _mu_text(mu: float) -> str:
    return f"{mu:g}"


def write_csv(ds: xr.Dataset, path: Path) -> Path:
    """One row per record and period; '#' comment lines first. Written atomically (temporary file, rename)."""
    periods = ds["period"].values
    labels = [str(x) for x in ds["record"].values]
    header = ["record", "period_s", "sd_m", "sv_m_per_s", "psv_m_per_s", "psa_g", "sa_g"]
    columns = [ds[name].transpose("record", "period").values for name in ("sd", "sv", "psv", "psa", "sa")]
    if "ductility" in ds.dims:
        for q, mu in enumerate(ds["ductility"].values):
            tag = _mu_text(float(mu))
            header += [f"strength_reduction_mu{tag}", f"yield_strength_coefficient_mu{tag}",
                       f"sd_inelastic_mu{tag}_m"]
            columns += [ds[name].transpose("record", "ductility", "period").values[:, q, :]
                        for name in ("strength_reduction", "yield_strength_coefficient", "sd_inelastic")]

    def write(tmp):
        with open(tmp, "w", newline="", encoding="utf-8") as handle:
            handle.write(f"# {ds.attrs.get('title', 'swaysim spectra')}; damping ratio "
                         f"{float(ds.attrs['damping']):g}")
            if "hardening" in ds.attrs:
                handle.write(f"; post-yield stiffness ratio {float(ds.attrs['hardening']):g}")
            handle.write("\n")
            handle.write(f"# {ds.attrs.get('note', '')}\n")
            handle.write(f"# caution: {CAUTION}\n")
            writer = csv.writer(handle, lineterminator="\n")
            writer.writerow(header)
            for r, label in enumerate(labels):
                for p, period in enumerate(periods):
                    writer.writerow([label, repr(float(period))]
                                    + [repr(float(col[r, p])) for col in columns])

    return write_atomic(path, write)


def _table(title: str, ds: xr.Dataset, values: np.ndarray, shown: list[int], fmt=sig) -> str:
    periods = ds["period"].values
    columns = [Column("record", "<")]
    columns += [Column("PGA" if periods[i] == 0.0 else f"{periods[i]:.3g} s") for i in shown]
    rows = [[str(label)] + [fmt(values[r, i]) for i in shown] for r, label in enumerate(ds["record"].values)]
    return render_table(title, columns, rows)


@click.command("spectrum", short_help="Elastic and constant-ductility spectra of record files.")
@files_argument
@units_option
@dt_option
@damping_option
@click.option("--periods", "periods_text", default=DEFAULT_PERIODS, show_default=True, metavar="SPEC",
              help="Periods, s: start:stop:count (log-spaced, ends included) or a comma-separated list.")
@click.option("--ductility", "ductility_text", default=None, metavar="LIST",
              help="Also constant-ductility spectra for these target ductilities, e.g. 2,4,6.")
@click.option("--hardening", type=float, default=0.0, show_default=True, metavar="RATIO",
              help="Post-yield stiffness ratio of the bilinear oscillators (with --ductility).")
@click.option("-o", "--output", type=click.Path(dir_okay=False, path_type=Path), default=None,
              metavar="OUT.csv|OUT.nc",
              help="Write the full spectra: CSV (one row per record and period) or NetCDF.")
@debug_option
def spectrum_command(files, units, dt, damping: float, periods_text: str, ductility_text,
                     hardening: float, output: Path | None):
    """Print response spectra of each record FILE at a selection of periods.

    Elastic spectra by the piecewise-exact recurrence (Nigam and Jennings 1969)
    for ground acceleration linear between samples; with --ductility also the
    strength reduction factors of elastoplastic (or hardening) oscillators.
    The output file holds every period.
    """
    periods = parse_periods(periods_text)
    damping = option_damping(damping)
    mu = parse_ductility(ductility_text) if ductility_text is not None else None
    if not (0.0 <= hardening < 1.0):
        raise InputError(f"option --hardening: expected a ratio >= 0 and < 1, got {hardening:g}")
    if output is not None:
        check_output(output)
    records = read_records(files, units, dt)

    ds = response_spectrum(records, periods, damping)
    if mu is not None:
        inelastic = inelastic_spectrum(records, periods, mu, damping, hardening)
        extra = inelastic[["strength_reduction", "yield_strength_coefficient", "sd_inelastic",
                           "achieved_ductility"]]
        ds = xr.merge([ds, extra], combine_attrs="override")
        ds.attrs["title"] = "swaysim elastic and constant-ductility spectra"
        ds.attrs["hardening"] = inelastic.attrs["hardening"]
        ds.attrs["inelastic_method"] = inelastic.attrs["method"]

    echo = click.echo
    shown = table_periods(periods)
    n = len(records)
    where = "all" if len(shown) == periods.size else f"{len(shown)} of the {periods.size}"
    echo(f"records   {n} file{'s' if n != 1 else ''}")
    echo(f"damping   {100.0 * damping:g} % of critical")
    echo(f"periods   {periods.size} from {periods.min():.3g} to {periods.max():.3g} s; {where} shown")
    echo()
    echo(_table(f"Pseudo-spectral acceleration PSA (g), {damping_text(damping)}", ds,
                ds["psa"].transpose("record", "period").values, shown))
    echo()
    echo(_table("Peak relative displacement SD (m)", ds, ds["sd"].transpose("record", "period").values,
                shown))
    if mu is not None:
        reduction = ds["strength_reduction"].transpose("record", "ductility", "period").values
        for q, m in enumerate(mu):
            echo()
            echo(_table(f"Strength reduction factor R_y, ductility {_mu_text(m)}"
                        + (f", post-yield stiffness ratio {hardening:g}" if hardening else ""),
                        ds, reduction[:, q, :], shown))
        if np.isnan(reduction[:, :, periods > 0.0]).any():
            echo(wrap("'-': no strength down to 1/1000 of the elastic force reaches that ductility."))
    echo()
    echo(wrap("Ground acceleration taken as linear between samples and zero after the last one; "
              "peaks include one damped period of free vibration after the record. "
              "PSA = omega^2 SD; R_y = elastic peak force / yield strength."))
    if output is not None:
        written = write_csv(ds, output) if output.suffix.lower() == ".csv" else write_dataset(ds, output)
        echo()
        echo(f"spectra written to {written}")
    echo()
    echo(caution_text())


__all__ = ["spectrum_command", "parse_periods", "parse_ductility", "table_periods", "write_csv"]
