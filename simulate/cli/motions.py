"""``swaysim motions FILE...``: intensity measures of ground-motion record files.

Also holds the record-file argument and options that ``swaysim spectrum`` shares.
"""

from __future__ import annotations

from pathlib import Path

import click
import numpy as np

from simulate.cli.options import debug_option, positive_float
from simulate.cli.tables import Column, caution_text, render_table, sig, wrap
from simulate.errors import InputError
from simulate.excitation.intensity import intensity_measures
from simulate.excitation.readers import read_record
from simulate.excitation.record import normalise_units
from simulate.excitation.spectra import check_damping, check_periods

#: FILE... : one or more record files (plain text; see the README's record format).
files_argument = click.argument("files", metavar="FILE...", nargs=-1, required=True,
                                type=click.Path(path_type=Path))

#: --units: units of the acceleration values in the files.
units_option = click.option("--units", default=None, metavar="UNITS",
                            help="Units of the acceleration values in the files: g, m/s2 or cm/s2 "
                                 "(default: as the file declares, else g).")

#: --dt: time step of files with one value per line.
dt_option = click.option("--dt", type=float, default=None, callback=positive_float, metavar="SECONDS",
                         help="Time step, s, for files with one value per line "
                              "(checked against the time column otherwise).")

#: --damping: damping ratio of the spectral values.
damping_option = click.option("--damping", type=float, default=0.05, show_default=True, metavar="RATIO",
                              help="Damping ratio of the oscillators (0.05 = 5 %).")


def read_records(files, units, dt):
    """Read every file with ``simulate.read_record`` (a one-line RecordError naming the first bad one)."""
    if units is not None:
        units = normalise_units(units, label="option --units")
    return [read_record(path, dt=dt, units=units) for path in files]


def option_damping(damping) -> float:
    """The --damping value, or a one-line error naming the option."""
    try:
        return check_damping(damping)
    except InputError as exc:
        raise InputError(f"option --damping: {exc}") from None


def damping_text(damping: float) -> str:
    return f"{100.0 * damping:g} % damping"


@click.command("motions", short_help="Intensity measures of ground-motion record files.")
@files_argument
@units_option
@dt_option
@click.option("--period", "periods", type=float, multiple=True, metavar="SECONDS",
              help="Also give Sa at this period, s (repeat for several).")
@damping_option
@debug_option
def motions_command(files, units, dt, periods, damping: float):
    """Print the intensity measures of each record FILE.

    PGA, PGV, PGD, Arias intensity, significant duration D5-95, cumulative
    absolute velocity and, for each --period, the pseudo-spectral acceleration.
    Records are used as given (no filtering, no baseline correction).
    """
    periods = check_periods(list(periods), label="option --period", allow_empty=True)
    damping = option_damping(damping)
    records = read_records(files, units, dt)
    ds = intensity_measures(records, periods, damping)
    echo = click.echo

    columns = [Column("record", "<"), Column("dt\n(s)"), Column("length\n(s)"), Column("PGA\n(g)"),
               Column("PGV\n(m/s)"), Column("PGD\n(m)"), Column("Arias\n(m/s)"), Column("D5-95\n(s)"),
               Column("CAV\n(m/s)")]
    columns += [Column(f"Sa({T:.3g} s)\n(g)") for T in periods]
    rows = []
    for r, label in enumerate(ds["record"].values):
        row = [str(label), f"{float(ds['record_dt'][r]):g}", f"{float(ds['duration'][r]):.2f}"]
        row += [sig(float(ds[name][r])) for name in
                ("pga", "pgv", "pgd", "arias_intensity", "significant_duration",
                 "cumulative_absolute_velocity")]
        if periods.size:
            row += [sig(x) for x in np.asarray(ds["sa"][r])]
        rows.append(row)
    n = len(rows)
    echo(render_table(f"Intensity measures of {n} record{'s' if n != 1 else ''}", columns, rows))
    notes = ("PGV and PGD integrated from rest, without filtering or baseline correction; "
             "Arias intensity pi/(2g) * integral of a^2 dt; D5-95 the time between 5 % and 95 % of it; "
             "CAV the integral of |a| dt.")
    if periods.size:
        notes += f" Sa: pseudo-spectral acceleration at {damping_text(damping)}."
    echo(wrap(notes))
    echo()
    echo(caution_text())


__all__ = ["motions_command", "files_argument", "units_option", "dt_option", "damping_option",
           "read_records"]
