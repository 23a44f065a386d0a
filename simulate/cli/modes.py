"""``swaysim modes CONFIG``: natural modes and state-space eigenvalues of the building."""

from __future__ import annotations

from pathlib import Path

import click

from simulate.cli.options import config_argument, debug_option
from simulate.cli.tables import Column, caution_text, percent, render_table, sig, wrap
from simulate.config import load_config

#: Mode shapes shown without --all.
DEFAULT_SHAPES_SHOWN = 6


@click.command("modes", short_help="Natural periods, participation and mode shapes.")
@config_argument
@click.option("--all", "show_all", is_flag=True,
              help=f"Show every mode shape (default: the first {DEFAULT_SHAPES_SHOWN}).")
@debug_option
def modes_command(config: Path, show_all: bool):
    """Print the natural modes of CONFIG's building: periods, participation, shapes.

    Record files are not read.
    """
    cfg = load_config(config)
    frame = cfg.frame
    ds = frame.modes()
    n = frame.n_storeys
    echo = click.echo

    if cfg.title:
        echo(cfg.title)
        echo()
    echo(f"building   {frame.name}, {n} storey{'s' if n != 1 else ''}, {sig(frame.total_height)} m tall, "
         f"total mass {sig(frame.total_mass / 1000.0, 4)} t")
    echo(f"damping    {frame.damping.describe()}")
    if not frame.is_linear:
        echo(wrap("The frame has yielding storeys or P-Delta: these are the modes of its elastic "
                  "frame (initial stiffness, no geometric stiffness); they change once storeys yield."))

    rows = [[str(m + 1), sig(ds["period"].values[m], 4), sig(ds["frequency"].values[m], 4),
             percent(ds["damping_ratio"].values[m]), sig(ds["participation_factor"].values[m], 4),
             percent(ds["effective_mass_ratio"].values[m]),
             percent(ds["cumulative_effective_mass_ratio"].values[m])] for m in range(n)]
    echo()
    echo(render_table("Natural modes", [
        Column("mode", "<"), Column("period\n(s)"), Column("frequency\n(Hz)"),
        Column("damping\nratio (%)"), Column("participation\nfactor"),
        Column("effective mass\n(% of total)"), Column("cumulative\n(% of total)"),
    ], rows))
    echo(wrap("Participation factor of the roof-normalised shape (roof = 1)."))

    lam = ds["eigenvalue"].values
    rows = []
    for m in range(n):
        modulus = abs(lam[m])
        rows.append([str(m + 1), sig(lam[m].real, 4), sig(lam[m].imag, 4), sig(modulus, 4),
                     percent(-lam[m].real / modulus) if modulus > 0 else "-"])
    echo()
    echo(render_table("State-space eigenvalues (upper member of each conjugate pair)", [
        Column("mode", "<"), Column("real part\n(1/s)"), Column("imaginary part\n(rad/s)"),
        Column("modulus\n(rad/s)"), Column("-real / modulus\n(%)"),
    ], rows))
    echo(wrap("With classical damping the modulus equals the undamped angular frequency and "
              "-real / modulus the damping ratio of the mode."))

    shown = n if show_all else min(n, DEFAULT_SHAPES_SHOWN)
    shape = ds["shape"].transpose("mode", "floor").values
    rows = [[str(f + 1)] + [f"{shape[m, f]:.4f}" for m in range(shown)] for f in reversed(range(n))]
    echo()
    echo(render_table("Mode shapes, roof = 1 (floor 0 is the ground)",
                      [Column("floor", "<")] + [Column(f"mode {m + 1}") for m in range(shown)], rows))
    if shown < n:
        echo(f"First {shown} of {n} mode shapes shown; use --all for every mode.")
    echo()
    echo(caution_text())
