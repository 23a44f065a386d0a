"""``swaysim scale FILE...``: scale ground-motion records to a target spectrum.

Prints each record's factor, the scaled suite's mean spectrum against the
target at a few periods, the suite-mean check and the caution; with ``-o`` it
writes a suite file (TOML, ``[[record]]`` entries with ``file``, ``name`` and
``scale``, paths relative to the suite file) that ``read_suite`` reads back.
"""

from __future__ import annotations

import math
import os
from pathlib import Path

import click
import numpy as np

from simulate.files import write_text_atomic
from simulate.cli.options import check_output_file, debug_option
from simulate.cli.tables import Column, render_table, sig, wrap
from simulate.errors import InputError
from simulate.excitation.readers import read_record
from simulate.excitation.scaling import (
    DEFAULT_RANGE_FACTORS,
    DEFAULT_RATIO,
    SCALING_METHODS,
    scale_records,
)
from simulate.excitation.targets import EC8_GROUND_TYPES, TARGETS, make_target
from simulate.settings import CAUTION

#: Options of each target kind (command-line name -> keyword of the target class).
TARGET_OPTIONS = {
    "asce7": {"sds": "sds", "sd1": "sd1", "tl": "tl"},
    "ec8": {"ag": "ag", "ground_type": "ground_type", "spectrum_type": "spectrum_type",
            "damping": "damping", "extrapolate": "extrapolate"},
    "file": {"damping": "damping", "extrapolate": "extrapolate"},
}

#: Options a target cannot do without.
REQUIRED = {"asce7": ("sds", "sd1", "tl"), "ec8": ("ag", "ground_type"), "file": ()}

#: Multiples of T1 shown in the suite-mean table (clipped to the check range).
SHOWN_MULTIPLES = (0.2, 0.5, 1.0, 1.5, 2.0)


def _option_name(key: str) -> str:
    return "--" + key.replace("_", "-")


def _positive(ctx, param, value):
    """Callback: a finite number > 0 (or None)."""
    if value is None:
        return None
    if not (value > 0.0 and math.isfinite(value)):
        raise click.BadParameter(f"expected a finite number > 0, got {value!r}")
    return value


def _range_factors(ctx, param, value):
    """Callback: ``"0.2,2.0"`` -> (0.2, 2.0), multiples of T1."""
    if value is None:
        return None
    parts = [p.strip() for p in str(value).split(",")]
    try:
        low, high = (float(p) for p in parts)
    except ValueError:
        raise click.BadParameter(f"expected two multiples of T1 such as 0.2,2.0, got {value!r}") from None
    if not (0.0 < low < high and math.isfinite(high)):
        raise click.BadParameter(f"expected two increasing positive multiples of T1, got {value!r}")
    return (low, high)


def build_target(spec: str, values: dict):
    """The target named by ``--target`` (``asce7``, ``ec8`` or ``file:PATH``) with its options."""
    text = spec.strip()
    kind, _, path = text.partition(":")
    kind = kind.strip().lower()
    if kind not in TARGETS:
        raise InputError(f"option --target: unknown target {spec!r}; use one of asce7, ec8, file:PATH")
    if kind == "file" and not path.strip():
        raise InputError("option --target: give the spectrum file as file:PATH")
    if kind != "file" and path:
        raise InputError(f"option --target: {kind} takes no file, got {spec!r}")
    given = {key: value for key, value in values.items() if value not in (None, False)}
    for key in given:
        if key not in TARGET_OPTIONS[kind]:
            users = [k for k, keys in TARGET_OPTIONS.items() if key in keys]
            raise InputError(f"option {_option_name(key)} applies to --target "
                             f"{' or '.join(users)}, not {kind}")
    missing = [_option_name(key) for key in REQUIRED[kind] if key not in given]
    if missing:
        raise InputError(f"option --target {kind} needs {', '.join(missing)}")
    parameters = {TARGET_OPTIONS[kind][key]: value for key, value in given.items()}
    if kind == "file":
        parameters["path"] = Path(path.strip())
    return make_target(kind, **parameters)


def _check_output(path: Path) -> None:
    if path.suffix.lower() != ".toml":
        raise InputError(f"option -o: {path}: a suite file name must end in .toml")
    check_output_file(path, (".toml",))


def _toml_string(text: str) -> str:
    """A TOML basic string (quotes, backslashes and control characters escaped)."""
    out = ['"']
    for ch in str(text):
        code = ord(ch)
        if ch == '"':
            out.append('\\"')
        elif ch == "\\":
            out.append("\\\\")
        elif ch == "\t":
            out.append("\\t")
        elif code < 0x20 or code == 0x7F:
            out.append(f"\\u{code:04X}")
        else:
            out.append(ch)
    out.append('"')
    return "".join(out)


def _comment(text: str) -> list[str]:
    return ["# " + line if line else "#" for line in wrap(text).splitlines()]


def suite_text(files, names, factors, report, suite_path: Path, *, units=None, dt=None) -> str:
    """Text of a TOML suite file listing the scaled records (paths relative to ``suite_path``)."""
    folder = suite_path.resolve().parent
    lines = _comment(f"Suite written by swaysim scale: records scaled to {report.target}.")
    lines += _comment(f"Method: {report.method} ({SCALING_METHODS[report.method]}), "
                      f"T1 {report.period:g} s, "
                      f"{'one factor per record' if report.per_record else 'one factor for the suite'}; "
                      f"check: {report.check_text()}.")
    lines += _comment(f"Caution: {report.caution}")
    lines.append(f"title = {_toml_string('Records scaled to ' + report.target)}")
    defaults = []
    if units is not None:
        defaults.append(f"units = {_toml_string(units)}")
    if dt is not None:
        defaults.append(f"dt = {float(dt)!r}")
    if defaults:
        lines += ["", "[defaults]", *defaults]
    for path, name, factor in zip(files, names, factors):
        try:
            rel = Path(os.path.relpath(Path(path).resolve(), folder)).as_posix()
        except ValueError:  # another drive (Windows): keep the absolute path
            rel = Path(path).resolve().as_posix()
        lines += ["", "[[record]]", f"file = {_toml_string(rel)}", f"name = {_toml_string(name)}",
                  f"scale = {float(factor)!r}"]
    return "\n".join(lines) + "\n"


def write_suite(text: str, path: Path) -> Path:
    """Write the suite file ``text`` to ``path`` durably and atomically (``simulate.files``)."""
    return write_text_atomic(path, text)


def _shown_periods(report) -> list[int]:
    """Indices of the grid periods shown in the suite-mean table."""
    periods = report.periods
    inside = np.flatnonzero(report.in_range)
    low, high = report.period_range
    wanted = [low, high, report.lowest_period]
    wanted += [m * report.period for m in SHOWN_MULTIPLES if low <= m * report.period <= high]
    picks = {int(inside[np.argmin(np.abs(np.log(periods[inside] / w)))]) for w in wanted}
    return sorted(picks)


@click.command("scale", short_help="Scale records to a target spectrum.")
@click.argument("files", nargs=-1, required=True, metavar="FILE...",
                type=click.Path(path_type=Path))
@click.option("--target", "target_spec", required=True, metavar="asce7|ec8|file:PATH",
              help="Target spectrum: ASCE 7-16 11.4.6 design spectrum, EN 1998-1 3.2.2.2 "
                   "elastic spectrum, or a two-column file (period s, Sa g).")
@click.option("--sds", type=float, default=None, callback=_positive, metavar="G",
              help="asce7: S_DS, g.")
@click.option("--sd1", type=float, default=None, callback=_positive, metavar="G",
              help="asce7: S_D1, g.")
@click.option("--tl", type=float, default=None, callback=_positive, metavar="SECONDS",
              help="asce7: long-period transition period T_L, s.")
@click.option("--ag", type=float, default=None, callback=_positive, metavar="G",
              help="ec8: design ground acceleration on type A ground a_g, g.")
@click.option("--ground-type", type=click.Choice(sorted(EC8_GROUND_TYPES[1]), case_sensitive=False),
              default=None, help="ec8: ground type.")
@click.option("--spectrum-type", type=click.Choice(["1", "2"]), default=None,
              help="ec8: Type 1 or Type 2 spectrum [default: 1].")
@click.option("--damping", type=float, default=None, metavar="RATIO",
              help="ec8 and file: damping ratio of the target and the record spectra "
                   "(0.05 for 5 %) [default: 0.05].")
@click.option("--extrapolate", is_flag=True, default=False,
              help="ec8: continue Eq. 3.5 beyond 4 s; file: extend the spectrum beyond its periods.")
@click.option("--period", "t1", type=float, required=True, callback=_positive, metavar="SECONDS",
              help="Fundamental period T1 of the structure, s.")
@click.option("--range", "range_factors", default=None, callback=_range_factors, metavar="LOW,HIGH",
              help="Period range for the fit and the check, as multiples of T1 "
                   f"[default: {DEFAULT_RANGE_FACTORS[0]:g},{DEFAULT_RANGE_FACTORS[1]:g}].")
@click.option("--ratio", type=float, default=DEFAULT_RATIO, show_default=True, callback=_positive,
              help="The suite mean must not fall below RATIO x target over the range.")
@click.option("--fit", "method", type=click.Choice(list(SCALING_METHODS)), default="spectrum",
              show_default=True,
              help="sa-t1: match the target at T1; spectrum: least-squares fit of the log "
                   "spectra over the range.")
@click.option("--per-record/--suite", "per_record", default=True, show_default=True,
              help="One factor per record, or one factor for the whole suite.")
@click.option("--min-factor", type=float, default=None, callback=_positive, metavar="F",
              help="Smallest allowed factor (smaller ones are clipped, with a warning).")
@click.option("--max-factor", type=float, default=None, callback=_positive, metavar="F",
              help="Largest allowed factor (larger ones are clipped, with a warning).")
@click.option("--units", default=None, metavar="UNITS",
              help="Units of the record files (g, m/s2, cm/s2) [default: the file's header, else g].")
@click.option("--dt", type=float, default=None, callback=_positive, metavar="SECONDS",
              help="Time step of record files with one value per line, s.")
@click.option("-o", "--output", type=click.Path(dir_okay=False, path_type=Path), default=None,
              metavar="SUITE.toml", help="Write the scaled suite (TOML) to this file.")
@debug_option
def scale_command(files, target_spec, sds, sd1, tl, ag, ground_type, spectrum_type, damping,
                  extrapolate, t1, range_factors, ratio, method, per_record, min_factor, max_factor,
                  units, dt, output):
    """Scale the records in FILE... to a target spectrum.

    Prints each record's scale factor, the scaled suite's mean spectrum
    against the target and whether the mean stays above RATIO x target over
    the period range. The target and its parameters, the range, the ratio and
    the factor limits must come from the building code in force where the
    structure stands and from licensed professional practice.
    """
    target = build_target(target_spec, {
        "sds": sds, "sd1": sd1, "tl": tl, "ag": ag,
        "ground_type": ground_type, "spectrum_type": spectrum_type,
        "damping": damping, "extrapolate": extrapolate,
    })
    if output is not None:
        _check_output(output)
    factors_range = range_factors or DEFAULT_RANGE_FACTORS
    period_range = (factors_range[0] * t1, factors_range[1] * t1)
    records = [read_record(path, dt=dt, units=units) for path in files]
    try:
        scaled, report = scale_records(
            records, target, t1, method=method, per_record=per_record,
            period_range=period_range, ratio=ratio, limits=(min_factor, max_factor),
        )
    except InputError as exc:
        raise InputError(f"swaysim scale: {exc}") from exc
    print_report(files, records, report)
    if output is not None:
        text = suite_text(files, [rec.name for rec in records], report.factors, report, output,
                          units=units, dt=dt)
        written = write_suite(text, output)
        click.echo()
        click.echo(f"suite written to {written}")
    click.echo()
    click.echo(wrap(f"Caution: {target.caution}"))
    click.echo(wrap(f"Caution: {CAUTION}"))


def print_report(files, records, report) -> None:
    """Header, factor table, suite mean against the target, check and warnings."""
    echo = click.echo
    low, high = report.period_range
    header = [
        ("target", report.target),
        ("method", f"{report.method}: {SCALING_METHODS[report.method]}, "
                   f"{'one factor per record' if report.per_record else 'one factor for the suite'}"),
        ("period", f"T1 {sig(report.period)} s; range {sig(low)}-{sig(high)} s; spectra "
                   f"{100 * report.damping:g} % damped (pseudo-acceleration)"),
    ]
    width = max(len(label) for label, _ in header)
    for label, text in header:
        echo(f"{label:<{width}}   {text}")

    i1 = int(np.flatnonzero(report.periods == report.period)[0])
    target_t1 = report.target_sa[i1]
    rows = []
    for r, (path, rec) in enumerate(zip(files, records)):
        note = "clipped" if report.factors[r] != report.unclipped[r] else ""
        rows.append([rec.name, str(path), sig(report.record_sa[r, i1]), f"{report.factors[r]:.4f}",
                     sig(report.factors[r] * report.record_sa[r, i1]), note])
    echo()
    echo(render_table(f"Scale factors (target Sa(T1) = {sig(target_t1)} g)", [
        Column("record", "<"), Column("file", "<"), Column("Sa(T1)\n(g)"), Column("factor"),
        Column("scaled\nSa(T1) (g)"), Column("", "<"),
    ], rows))

    rows = []
    for k in _shown_periods(report):
        mark = "lowest" if report.periods[k] == report.lowest_period else ""
        rows.append([sig(report.periods[k]), sig(report.target_sa[k]), sig(report.mean_sa[k]),
                     f"{report.mean_sa[k] / report.target_sa[k]:.3f}", mark])
    echo()
    echo(render_table("Scaled suite mean against the target", [
        Column("period\n(s)"), Column("target\n(g)"), Column("suite mean\n(g)"),
        Column("mean /\ntarget"), Column("", "<"),
    ], rows))
    echo()
    echo(wrap(f"Check: {report.check_text()}."))
    for note in report.warnings:
        echo(wrap(f"Warning: {note}."))
