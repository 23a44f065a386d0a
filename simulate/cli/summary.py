"""``swaysim summary RESULTS.nc``: suite statistics of a results file per storey and floor.

Prints (or writes with ``-o``) the median, 84th percentile, dispersion and
maximum of the envelopes over the analyses that ended ok, the status counts and
the analyses exceeding the limits given with ``--limit``; CSV and JSON carry
every statistic of ``simulate.results.statistics.suite_statistics`` for
machines.
"""

from __future__ import annotations

import csv
import io
import itertools
import json
import math
import re
from pathlib import Path

import click
import numpy as np

from simulate.files import write_text_atomic
from simulate.cli.options import check_output_file, debug_option
from simulate.cli.tables import Column, caution_text, percent, plural, render_table, sig, wrap
from simulate.errors import InputError
from simulate.results import read_dataset
from simulate.results.statistics import (
    DEFORMATION, QUANTITIES, LOCATIONS, envelope_quantities, quantities, suite_statistics,
)
from simulate.settings import CAUTION, STANDARD_GRAVITY

#: How the table shows each quantity: (label, display units, factor from the stored SI units).
DISPLAY = {
    "peak_drift_ratio": ("peak drift ratio", "%", 100.0),
    "residual_drift_ratio": ("|residual drift ratio|", "%", 100.0),
    "peak_floor_acceleration": ("peak floor acceleration", "g", 1.0 / STANDARD_GRAVITY),
    "peak_storey_shear": ("peak storey shear", "kN", 1.0e-3),
    "peak_base_shear": ("peak base shear", "kN", 1.0e-3),
    "peak_roof_displacement": ("peak roof displacement", "m", 1.0),
    "ductility": ("ductility", "", 1.0),
}

#: Statistics in the printed tables, with their column headers.
TABLE_STATISTICS = (("median", "median"), ("p84", "84th"), ("dispersion", "beta"), ("max", "max"))

#: Suffixes a --limit value may carry: suffix -> (stored units it applies to, factor to those units).
LIMIT_SUFFIXES = {"%": ("1", 0.01), "g": ("m/s2", STANDARD_GRAVITY)}

_LIMIT = re.compile(r"^\s*([A-Za-z_][A-Za-z0-9_]*)\s*=\s*(\S+?)\s*(%|g)?\s*$")


def display(quantity: str, value) -> str:
    """A value of ``quantity`` in the table's units (3 significant digits, ``-`` for NaN)."""
    if quantity.endswith("dispersion"):
        return sig(value)
    factor = DISPLAY[quantity][2]
    return sig(float(value) * factor)


def _units_text(quantity: str) -> str:
    units = DISPLAY[quantity][1]
    return "" if not units else (" %" if units == "%" else f" {units}")


def parse_limits(values, ds, path) -> dict:
    """``NAME=VALUE`` texts of ``--limit`` -> {quantity: limit in the stored SI units}.

    VALUE is in the quantity's stored units (ratio, m/s2, N, m) or ends in ``%``
    (drift ratios) or ``g`` (accelerations, standard gravity).
    """
    present = envelope_quantities(ds)
    limits = {}
    for text in values:
        match = _LIMIT.match(text)
        if not match:
            raise InputError(f"option --limit: expected NAME=VALUE such as peak_drift_ratio=0.02, got {text!r}")
        name, number, suffix = match.groups()
        if name not in QUANTITIES:
            raise InputError(f"option --limit: unknown variable {name!r} in {text!r}; "
                             f"use one of {', '.join(QUANTITIES)}")
        if name not in present:
            raise InputError(f"option --limit: {path} has no {name}; limits can be set on {', '.join(present)}")
        if name in limits:
            raise InputError(f"option --limit: {name} is given twice")
        try:
            value = float(number)
        except ValueError:
            raise InputError(f"option --limit: {name}: expected a number, got {number!r} in {text!r}") from None
        if suffix:
            units = ds[name].attrs.get("units", "1")
            applies, factor = LIMIT_SUFFIXES[suffix]
            if units != applies:
                raise InputError(f"option --limit: {name} is in {units}; the suffix {suffix!r} "
                                 f"is for quantities in {applies}")
            value *= factor
        if not (math.isfinite(value) and value > 0):
            raise InputError(f"option --limit: {name} must be a finite number > 0, got {text!r}")
        limits[name] = value
    return limits


def levels(stats):
    """``(level, selection)`` pairs: one per combination of the dimensions other than storey and floor."""
    dims = [d for d in stats.dims if d not in LOCATIONS]
    if not dims:
        yield {}, stats
        return
    for index in itertools.product(*(range(stats.sizes[d]) for d in dims)):
        pick = dict(zip(dims, index))
        level = {d: stats[d].values[i].item() if hasattr(stats[d].values[i], "item") else stats[d].values[i]
                 for d, i in pick.items()}
        yield level, stats.isel(pick)


def _analyses(count: int) -> str:
    """``"1 analysis"``, ``"3 analyses"``."""
    return f"{count} {'analysis' if count == 1 else 'analyses'}"


def _level_text(level: dict) -> str:
    return ", ".join(f"{name} = {value:g}" if isinstance(value, float) else f"{name} = {value}"
                     for name, value in level.items())


def _number(value):
    """A JSON / CSV number: int for counts, float otherwise, None for NaN."""
    if isinstance(value, (np.integer, int)):
        return int(value)
    value = float(value)
    return None if math.isnan(value) else value


def _entries(sub):
    """(quantity, statistic, location dim or None, location index list, values list, units) per variable."""
    for name in sub.data_vars:
        var = sub[name]
        loc = next((d for d in var.dims if d in LOCATIONS), None)
        index = [int(k) for k in sub[loc].values] if loc else []
        values = [_number(v) for v in var.values] if loc else _number(var.values[()])
        yield var.attrs["quantity"], var.attrs["statistic"], loc, index, values, var.attrs.get("units", "1")


def _limits(stats) -> dict:
    out = {}
    for q in quantities(stats):
        name = f"{q}_exceedance_count"
        if name in stats:
            out[q] = {"value": float(stats[name].attrs["limit"]), "units": stats[name].attrs["limit_units"]}
    return out


def _notes(stats) -> dict:
    return {key: value for key, value in stats.attrs.items()
            if key not in ("title", "caution") and not key.startswith("limit_")}


def summary_json(stats, source: str) -> str:
    """Nested dict: status counts and, per quantity, units, location and every statistic; caution last."""

    def block(sub):
        status, qs = {}, {}
        for quantity, statistic, loc, index, values, units in _entries(sub):
            if quantity == "status":
                status[statistic] = values
                continue
            entry = qs.setdefault(quantity, {"units": None, "along": loc, "index": index, "statistics": {}})
            if statistic == "median":
                entry["units"] = units   # the quantity's units (counts and ratios are "1")
            if loc is not None:
                entry["along"], entry["index"] = loc, index
            entry["statistics"][statistic] = values
        return {"status": status, "quantities": qs}

    doc = {"title": stats.attrs.get("title", "swaysim suite statistics"), "source": source,
           "limits": _limits(stats)}
    parts = list(levels(stats))
    if len(parts) == 1 and not parts[0][0]:
        doc.update(block(parts[0][1]))
    else:
        doc["by"] = [d for d in stats.dims if d not in LOCATIONS]
        doc["levels"] = [{"level": level, **block(sub)} for level, sub in parts]
    doc["notes"] = _notes(stats)
    doc["caution"] = CAUTION
    return json.dumps(doc, indent=2, allow_nan=False) + "\n"


def summary_csv(stats, source: str) -> str:
    """One row per level, quantity, statistic and storey or floor; ``#`` comment lines first (notes, caution)."""
    out = io.StringIO()
    out.write(f"# {stats.attrs.get('title', 'swaysim suite statistics')}\n")
    out.write(f"# source: {source}\n")
    for key, value in _notes(stats).items():
        out.write(f"# {key}: {value}\n")
    for q, limit in _limits(stats).items():
        out.write(f"# limit {q}: {limit['value']!r} {limit['units']}\n")
    out.write(f"# caution: {CAUTION}\n")
    writer = csv.writer(out, lineterminator="\n")
    level_dims = [d for d in stats.dims if d not in LOCATIONS]
    writer.writerow(level_dims + ["quantity", "statistic", "location", "index", "value", "units"])

    def cell(value) -> str:
        if value is None:
            return ""
        return str(value) if isinstance(value, int) else repr(value)

    for level, sub in levels(stats):
        head = [level[d] for d in level_dims]
        for quantity, statistic, loc, index, values, units in _entries(sub):
            if loc is None:
                writer.writerow(head + [quantity, statistic, "", "", cell(values), units])
            else:
                for k, value in zip(index, values):
                    writer.writerow(head + [quantity, statistic, loc, k, cell(value), units])
    return out.getvalue()


def _storey_table(sub, title: str, qs: list[str], n: int) -> str:
    """Rows per storey (top down), a group of TABLE_STATISTICS columns per quantity."""
    columns = [Column("storey", "<")]
    groups = [("", 1)]
    for q in qs:
        columns += [Column(header) for _, header in TABLE_STATISTICS]
        label, units, _ = DISPLAY[q]
        groups.append((f"{label} ({units})" if units else label, len(TABLE_STATISTICS)))
    rows = []
    for i in reversed(range(n)):
        row = [str(i + 1)]
        for q in qs:
            for statistic, _ in TABLE_STATISTICS:
                value = sub[f"{q}_{statistic}"].values[i]
                row.append(sig(value) if statistic == "dispersion" else display(q, value))
        rows.append(row)
    return render_table(title, columns, rows, groups=groups)


def _status_line(sub) -> str:
    count = {k: int(sub[f"{k}_count"]) for k in ("analysis", "ok", "collapse", "not_converged", "failed")}
    return (f"{count['analysis']}: {count['ok']} ok, {count['collapse']} collapsed, "
            f"{count['not_converged']} not-converged, {count['failed']} failed; "
            f"collapse fraction {percent(float(sub['collapse_fraction']))} %")


def _excluded_note(sub, qs) -> str | None:
    parts = []
    for q in qs:
        excluded = np.atleast_1d(sub[f"{q}_log_excluded"].values)
        counts = np.atleast_1d(sub[f"{q}_count"].values)
        loc = next((d for d in sub[f"{q}_log_excluded"].dims if d in LOCATIONS), None)
        for i, k in enumerate(excluded):
            if k > 0:
                where = f" {loc} {i + 1}" if loc else ""
                parts.append(f"{DISPLAY[q][0]}{where} ({int(k)} of {int(counts[i])})")
    if not parts:
        return None
    return "beta and the geometric statistics leave out values <= 0: " + "; ".join(parts) + "."


def _exceedance_lines(sub, limits: dict) -> list[str]:
    """One wrapped line per limit: analyses exceeding it (of all analyses), then per storey or floor."""
    n_all = int(sub["analysis_count"])
    n_collapsed = int(sub["collapse_count"])
    lines = [f"Limits, over all {_analyses(n_all)}:"]
    for q, limit in limits.items():
        text = f"{q} > {display(q, limit['value'])}{_units_text(q)}: "
        loc = next((d for d in sub[f"{q}_exceedance_count"].dims if d in LOCATIONS), None)
        total = "_any" if loc else ""
        k = int(sub[f"{q}_exceedance_count{total}"])
        text += f"{_analyses(k)} ({percent(float(sub[f'{q}_exceedance_fraction{total}']))} %)"
        if loc:
            text += f" in at least one {loc}"
        if q in DEFORMATION and n_collapsed:
            text += f", {n_collapsed} of them collapsed"
        if loc:
            per = ", ".join(str(int(c)) for c in sub[f"{q}_exceedance_count"].values)
            text += f"; per {loc} from 1 up: {per}"
        lines.append(wrap(text, indent="  ").replace("\n  ", "\n    "))
    unknown = int(sub["not_converged_count"]) + int(sub["failed_count"])
    notes = []
    if any(q in DEFORMATION for q in limits):
        notes.append("A collapsed analysis counts as exceeding every deformation limit (drift ratio, "
                     "residual drift, ductility, roof displacement) in every storey.")
    if unknown:
        notes.append(f"{_analyses(unknown)} that did not converge or failed count as not exceeding: "
                     "their demand is unknown.")
    if notes:
        lines.append(wrap(" ".join(notes)))
    return lines


def _scalar_line(sub, q: str) -> str:
    label, _, _ = DISPLAY[q]
    units = _units_text(q)
    parts = [f"{header} {display(q, sub[f'{q}_{statistic}'].values[()])}{units}"
             if statistic != "dispersion" else f"beta {sig(sub[f'{q}_dispersion'].values[()])}"
             for statistic, header in TABLE_STATISTICS]
    return f"{label:<24}{', '.join(parts)}"


def summary_table(stats, source: str) -> str:
    """The printed report: header, per level the status counts, storey tables, limits; caution last."""
    out = []
    qs = quantities(stats)
    n = stats.sizes.get("storey", stats.sizes.get("floor", 0))
    frame = stats.attrs.get("source_frame")
    out.append(f"results    {source}" + (f": {frame}" if frame else "") + (f", {plural(n, 'storey')}" if n else ""))
    limits = _limits(stats)
    for level, sub in levels(stats):
        if level:
            out.append("")
            out.append(f"[{_level_text(level)}]")
        out.append(f"analyses   {_status_line(sub)}")
        n_ok = int(sub["ok_count"])
        first = [q for q in ("peak_drift_ratio", "peak_floor_acceleration") if q in qs]
        second = [q for q in ("residual_drift_ratio", "ductility") if q in qs]
        out.append("")
        if n_ok == 0:
            out.append("Storey statistics: none, no analysis finished with status ok.")
        else:
            title = f"Over the {_analyses(n_ok)} with status ok"
            if first and n:
                out.append(_storey_table(sub, title, first, n))
                title = None
            if second and n:
                if title is None:
                    out.append("")
                out.append(_storey_table(sub, title, second, n))
            scalars = [q for q in ("peak_base_shear", "peak_roof_displacement") if q in qs]
            if scalars:
                out.append("")
                out.extend(_scalar_line(sub, q) for q in scalars)
            out.append(wrap("Median, 84th percentile (numpy's linear interpolation) and max over the "
                            "analyses with status ok; beta: dispersion, standard deviation of ln x "
                            "(ddof=1). Storey i joins floor i-1 and floor i; its floor acceleration is "
                            "that of floor i. Residual: |storey drift ratio| at the end of the analysis."))
            note = _excluded_note(sub, qs)
            if note:
                out.append(wrap(note))
            if int(sub["collapse_count"]) or int(sub["not_converged_count"]) or int(sub["failed_count"]):
                out.append(wrap("The statistics describe only the analyses that ended ok; analyses that "
                                "collapsed, did not converge or failed are left out, so the statistics "
                                "understate the demands of the suite."))
        if limits:
            out.append("")
            out.extend(_exceedance_lines(sub, limits))
    out.append("")
    out.append(caution_text())
    return "\n".join(out) + "\n"


#: Output formats of ``--format``: name -> function (statistics, source text) -> text.
FORMATS = {"table": summary_table, "csv": summary_csv, "json": summary_json}


def check_output(path: Path) -> None:
    """Fail before reading, not after, when the summary cannot be written to ``path``."""
    check_output_file(path)


def write_text(text: str, path: Path) -> Path:
    """Write ``text`` to ``path`` durably and atomically (``simulate.files``)."""
    return write_text_atomic(path, text)


def load_results(path: Path):
    """A results file, or the finished analyses of a run folder (a suite still running or interrupted).

    Returns the dataset and the text naming its source.
    """
    if path.is_dir():
        from simulate.suite.store import MANIFEST, RunFolder, open_results

        if not (path / MANIFEST).is_file():
            raise InputError(f"{path}: a folder, but not a run folder of swaysim run (no {MANIFEST})")
        folder = RunFolder.open(path)
        jobs = [row for row in folder.manifest["jobs"] if row["variant"] == "frame"]
        ds = open_results(path, partial=True, histories=False).load()
        source = f"{path} (run folder: {ds.sizes['record']} of {len(jobs)} analyses finished)"
        return ds, source
    return read_dataset(path), str(path)


@click.command("summary", short_help="Suite statistics of a results file per storey and floor.")
@click.argument("results", metavar="RESULTS", type=click.Path(path_type=Path))
@click.option("--format", "fmt", type=click.Choice(list(FORMATS)), default="table", show_default=True,
              help="table for reading; csv or json (every statistic, SI units) for machines.")
@click.option("--limit", "limit_texts", multiple=True, metavar="NAME=VALUE",
              help="Count the analyses exceeding a limit, e.g. peak_drift_ratio=0.02 (or 2%), "
                   "peak_floor_acceleration=9.81 (m/s2, or 1g). Repeat for more.")
@click.option("--by", metavar="NAME", default=None,
              help="Statistics per value of a per-record variable (e.g. scale_factor) or per level "
                   "of a dimension such as scale.")
@click.option("-o", "--output", type=click.Path(path_type=Path), metavar="FILE",
              help="Write the summary to FILE (atomically) instead of the screen.")
@debug_option
def summary_command(results: Path, fmt: str, limit_texts, by: str | None, output: Path | None):
    """Statistics over the records of RESULTS: a file written by swaysim run, or a
    run folder (--run-dir) of a suite still running or interrupted, whose finished
    analyses are summarised.

    Per storey and floor: median, 84th percentile, dispersion (standard deviation
    of ln x) and maximum of the peak drift ratio, floor acceleration, residual drift
    and ductility, over the analyses that ended ok; the counts of analyses that
    collapsed, did not converge or failed; and with --limit the analyses exceeding
    each limit (a collapsed analysis exceeds every deformation limit).
    """
    if output is not None:
        check_output(output)
    ds, source = load_results(results)
    try:
        envelope_quantities(ds)
    except InputError as exc:
        raise InputError(f"{results}: {exc}") from None
    limits = parse_limits(limit_texts, ds, results)
    try:
        stats = suite_statistics(ds, limits=limits, by=by)
    except InputError as exc:
        # the file and the limits are checked above: what is left is the --by choice
        raise InputError(f"{results}: option --{exc}" if by is not None else f"{results}: {exc}") from None
    text = FORMATS[fmt](stats, source)
    if output is None:
        click.echo(text, nl=False)
        return
    write_text(text, output)
    click.echo(f"summary ({fmt}) written to {output}")
    click.echo()
    click.echo(caution_text())
