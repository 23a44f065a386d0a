"""``swaysim summary RESULTS.nc``: printed, CSV and JSON statistics against numpy on the stored envelopes.

Expected numbers are computed here with numpy (``numpy.median``, ``numpy.percentile``
with its default linear interpolation, ``numpy.std(numpy.log(x), ddof=1)``,
``numpy.max``) on the envelopes read back from the file, over the analyses whose
status is ok, and formatted with the report's own helpers. g = 9.80665 m/s2
(standard gravity, CGPM 1901).
"""

from __future__ import annotations

import csv
import json
import re

import numpy as np
import pytest
import xarray as xr
from click.testing import CliRunner

import simulate as ss
from simulate.cli.options import ErrorReportingGroup
from simulate.cli.summary import summary_command
from simulate.cli.tables import caution_text, sig
from simulate.settings import CAUTION, STANDARD_GRAVITY

from conftest import band_limited_acceleration

G = STANDARD_GRAVITY

FRAME = dict(mass=[3.0e5, 2.8e5, 2.5e5], stiffness=[4.0e8, 3.2e8, 2.4e8], height=[4.0, 3.2, 3.2])


@pytest.fixture(scope="module")
def files(tmp_path_factory):
    """A yielding three-storey frame under six seeded records (three collapse at a low
    collapse limit), its linear version under three, and a file with every status."""
    folder = tmp_path_factory.mktemp("summary")
    recs = [ss.Record(band_limited_acceleration(s, 600, 0.01, peak=p), dt=0.01, units="m/s2", name=f"r{s}")
            for s, p in zip(range(1, 7), (2.0, 3.0, 4.0, 5.0, 9.0, 14.0))]
    frame = ss.ShearFrame(**FRAME, yield_shear=[1.6e6, 1.3e6, 0.9e6], hardening=0.03,
                          damping=ss.Rayleigh(ratio=0.05, modes=(1, 3)))
    nonlinear = ss.run(frame, recs, tail=1.0, collapse_drift=0.03, scale=[1, 1, 1, 2, 2, 2])
    linear = ss.run(ss.ShearFrame(**FRAME, damping=ss.Rayleigh(ratio=0.05, modes=(1, 3))), recs[:3], tail=1.0)
    mixed = linear.isel(record=[0, 1, 2, 0, 1]).assign_coords(record=["a", "b", "c", "d", "e"])
    mixed["status"] = ("record", np.array(["ok", "ok", "not-converged", "collapsed", "failed: worker lost"],
                                          dtype=object))
    paths = {"nonlinear": folder / "nonlinear.nc", "linear": folder / "linear.nc", "mixed": folder / "mixed.nc"}
    for key, ds in (("nonlinear", nonlinear), ("linear", linear), ("mixed", mixed)):
        ss.write_dataset(ds, paths[key])
    return paths


def invoke(*args):
    """Run the command under the project's error policy (one line, exit 2 for user mistakes)."""
    group = ErrorReportingGroup("swaysim")
    group.add_command(summary_command)
    return CliRunner().invoke(group, ["summary", *[str(a) for a in args]])


def ok_envelope(path, name):
    """Envelope values of the analyses with status ok, as stored in the file."""
    ds = ss.read_dataset(path)
    x = ds[name].values[np.array([str(s) == "ok" for s in ds["status"].values])]
    return np.abs(x) if name == "residual_drift_ratio" else x


def table_rows(stdout: str, header_start: str, occurrence: int = 0) -> list[list[str]]:
    """Whitespace-split rows of the ``occurrence``-th table whose group line starts with ``header_start``."""
    lines = stdout.splitlines()
    starts = [i for i, line in enumerate(lines) if line.strip().startswith(header_start)]
    start = starts[occurrence]
    rule = next(i for i in range(start, len(lines)) if lines[i] and set(lines[i]) == {"-"})
    rows = []
    for line in lines[rule + 1:]:
        if not line.strip():
            break
        rows.append(line.split())
    return rows


def expected_cells(x, factor):
    """median, 84th, beta, max of each column of x (numpy), formatted as the table formats them."""
    return [[sig(np.median(col) * factor), sig(np.percentile(col, 84) * factor),
             sig(np.std(np.log(col[col > 0]), ddof=1)), sig(np.max(col) * factor)] for col in x.T]


def flat(text: str) -> str:
    return " ".join(text.split())


def test_table_numbers_equal_numpy(files):
    """Per storey (top down): median, 84th percentile, beta and max of the peak drift ratio
    (%) and the floor acceleration (g), residual drift (%) and ductility, over the ok
    analyses only; status counts; the caution ends the report."""
    path = files["nonlinear"]
    result = invoke(path)
    assert result.exit_code == 0, result.output
    out = result.stdout
    drift = expected_cells(ok_envelope(path, "peak_drift_ratio"), 100.0)
    pfa = expected_cells(ok_envelope(path, "peak_floor_acceleration"), 1.0 / G)
    rows = table_rows(out, "peak drift ratio (%)")
    assert [r[0] for r in rows] == ["3", "2", "1"]
    for row in rows:
        i = int(row[0]) - 1
        assert row[1:] == drift[i] + pfa[i]
    residual = expected_cells(ok_envelope(path, "residual_drift_ratio"), 100.0)
    mu = expected_cells(ok_envelope(path, "ductility"), 1.0)
    for row in table_rows(out, "|residual drift ratio| (%)"):
        i = int(row[0]) - 1
        assert row[1:] == residual[i] + mu[i]
    status = [str(s) for s in ss.read_dataset(path)["status"].values]
    n_ok, n_col = status.count("ok"), status.count("collapsed")
    assert n_ok and n_col
    assert (f"analyses   6: {n_ok} ok, {n_col} collapsed, 0 not-converged, 0 failed; "
            f"collapse fraction {sig(100.0 * n_col / 6)} %") in out
    assert f"Over the {n_ok} analyses with status ok" in out
    base = ok_envelope(path, "peak_base_shear")
    assert (f"peak base shear         median {sig(np.median(base) / 1000.0)} kN, "
            f"84th {sig(np.percentile(base, 84) / 1000.0)} kN, beta {sig(np.std(np.log(base), ddof=1))}, "
            f"max {sig(base.max() / 1000.0)} kN") in out
    assert "left out" in flat(out)
    assert out.rstrip().endswith(caution_text())


def test_limit_lines_count_exactly(files):
    """Exceedance counts over all analyses: ok analyses above the limit, plus every
    collapsed analysis for the drift limit (collapse exceeds every deformation limit,
    common practice); limits given in %, in g and in the stored units (N)."""
    path = files["nonlinear"]
    result = invoke(path, "--limit", "peak_drift_ratio=0.6%", "--limit", "peak_floor_acceleration=0.42g",
                    "--limit", "peak_base_shear=1.8e6")
    assert result.exit_code == 0, result.output
    out = flat(result.stdout)
    ds = ss.read_dataset(path)
    status = np.array([str(s) for s in ds["status"].values])
    ok, col = status == "ok", status == "collapsed"
    drift = (ds["peak_drift_ratio"].values > 0.006) & ok[:, None] | col[:, None]
    pfa = (ds["peak_floor_acceleration"].values > 0.42 * G) & ok[:, None]
    base = (ds["peak_base_shear"].values > 1.8e6) & ok

    def phrase(count):
        return f"{count} {'analysis' if count == 1 else 'analyses'} ({sig(100.0 * count / 6)} %)"

    k = int(drift.any(axis=1).sum())
    per = ", ".join(str(c) for c in drift.sum(axis=0))
    assert (f"peak_drift_ratio > 0.600 %: {phrase(k)} in at least one storey, {col.sum()} of them collapsed; "
            f"per storey from 1 up: {per}") in out
    k = int(pfa.any(axis=1).sum())
    per = ", ".join(str(c) for c in pfa.sum(axis=0))
    assert f"peak_floor_acceleration > 0.420 g: {phrase(k)} in at least one floor; per floor from 1 up: {per}" in out
    assert f"peak_base_shear > 1800 kN: {phrase(int(base.sum()))}" in out
    assert "Limits, over all 6 analyses:" in out


def test_every_status_is_counted(files):
    """ok, collapsed, not-converged and failed ('failed: reason') are each counted and only
    ok analyses enter the statistics; unknown demands never count as exceeding."""
    path = files["mixed"]
    result = invoke(path, "--limit", "peak_floor_acceleration=1e-9")
    assert result.exit_code == 0, result.output
    out = flat(result.stdout)
    assert "analyses 5: 2 ok, 1 collapsed, 1 not-converged, 1 failed; collapse fraction 20.0 %" in out
    assert "peak_floor_acceleration > 1.02e-10 g: 2 analyses (40.0 %)" in out
    assert "2 analyses that did not converge or failed count as not exceeding" in out
    drift = expected_cells(ok_envelope(path, "peak_drift_ratio"), 100.0)
    for row in table_rows(result.stdout, "peak drift ratio (%)"):
        assert row[1:5] == drift[int(row[0]) - 1]


def test_linear_file_has_no_ductility(files):
    result = invoke(files["linear"])
    assert result.exit_code == 0, result.output
    assert "ductility" not in result.stdout
    assert "|residual drift ratio| (%)" in result.stdout


def read_csv(text: str):
    rows = list(csv.reader(line for line in text.splitlines() if not line.startswith("#")))
    return rows[0], rows[1:]


def test_csv_values_equal_numpy(files):
    """Every statistic at full precision (repr of the float): median and max exactly,
    the rest to round-off; SI units; comment lines carry the notes and the caution."""
    path = files["nonlinear"]
    result = invoke(path, "--format", "csv", "--limit", "peak_drift_ratio=0.02")
    assert result.exit_code == 0, result.output
    text = result.stdout
    assert f"# caution: {CAUTION}" in text
    assert "ddof=1" in text and "linear interpolation" in text
    header, rows = read_csv(text)
    assert header == ["quantity", "statistic", "location", "index", "value", "units"]
    table = {(q, s, k): (v, u) for q, s, loc, k, v, u in rows}
    x = ok_envelope(path, "peak_floor_acceleration")
    for i in range(3):
        col = x[:, i]
        value, units = table[("peak_floor_acceleration", "median", str(i + 1))]
        assert units == "m/s2"
        assert float(value) == np.median(col)
        assert float(table[("peak_floor_acceleration", "max", str(i + 1))][0]) == col.max()
        np.testing.assert_allclose(float(table[("peak_floor_acceleration", "dispersion", str(i + 1))][0]),
                                   np.std(np.log(col), ddof=1), rtol=1e-13)
        np.testing.assert_allclose(float(table[("peak_floor_acceleration", "p16", str(i + 1))][0]),
                                   np.percentile(col, 16), rtol=1e-13)
        assert table[("peak_floor_acceleration", "count", str(i + 1))][0] == str(col.size)
    status = [str(s) for s in ss.read_dataset(path)["status"].values]
    assert table[("status", "collapsed", "")][0] == str(status.count("collapsed"))
    base = ok_envelope(path, "peak_base_shear")
    assert float(table[("peak_base_shear", "median", "")][0]) == np.median(base)
    assert ("peak_drift_ratio", "exceedance_count", "1") in table


def test_csv_by_scale_has_a_level_column(files):
    """--by scale groups the records by their scale factor (scale falls back to scale_factor)."""
    path = files["nonlinear"]
    result = invoke(path, "--format", "csv", "--by", "scale")
    assert result.exit_code == 0, result.output
    header, rows = read_csv(result.stdout)
    assert header[0] == "scale"
    ds = ss.read_dataset(path)
    factors = ds["scale_factor"].values
    for level in np.unique(factors):
        count = [r for r in rows if float(r[0]) == level and r[1:3] == ["status", "analyses"]]
        assert count[0][5] == str(int((factors == level).sum()))


def test_json_round_trips_and_equals_numpy(files):
    """json.loads reads the output; nested quantities carry units, location and statistics;
    NaN is written as null (valid JSON)."""
    path = files["nonlinear"]
    result = invoke(path, "--format", "json", "--limit", "peak_drift_ratio=0.02")
    assert result.exit_code == 0, result.output
    doc = json.loads(result.stdout)
    assert doc["caution"] == CAUTION
    assert doc["limits"] == {"peak_drift_ratio": {"value": 0.02, "units": "1"}}
    status = [str(s) for s in ss.read_dataset(path)["status"].values]
    assert doc["status"]["analyses"] == 6
    assert doc["status"]["collapsed"] == status.count("collapsed")
    drift = doc["quantities"]["peak_drift_ratio"]
    assert drift["units"] == "1" and drift["along"] == "storey" and drift["index"] == [1, 2, 3]
    x = ok_envelope(path, "peak_drift_ratio")
    assert drift["statistics"]["median"] == np.median(x, axis=0).tolist()
    np.testing.assert_allclose(drift["statistics"]["p84"], np.percentile(x, 84, axis=0), rtol=1e-13)
    np.testing.assert_allclose(drift["statistics"]["lognormal_p84"],
                               np.exp(np.mean(np.log(x), axis=0) + np.std(np.log(x), axis=0, ddof=1)), rtol=1e-12)
    assert doc["quantities"]["peak_floor_acceleration"]["units"] == "m/s2"
    assert doc["quantities"]["peak_floor_acceleration"]["along"] == "floor"
    assert doc["quantities"]["peak_base_shear"]["along"] is None
    assert isinstance(doc["quantities"]["peak_base_shear"]["statistics"]["max"], float)
    assert "collapse_fraction_note" in doc["notes"]
    # a level with no ok analysis gives null statistics
    grouped = json.loads(invoke(path, "--format", "json", "--by", "scale_factor").stdout)
    empty = [lv for lv in grouped["levels"] if lv["status"]["ok"] == 0]
    assert empty, "the fixture's scale-2 records all collapse"
    assert empty[0]["quantities"]["peak_drift_ratio"]["statistics"]["median"] == [None] * 3


@pytest.mark.parametrize("fmt", ["table", "csv", "json"])
def test_output_file_is_written_whole(files, tmp_path, fmt):
    """-o writes the same text the screen would show, through a temporary file that is renamed."""
    path = files["nonlinear"]
    target = tmp_path / f"summary.{'txt' if fmt == 'table' else fmt}"
    shown = invoke(path, "--format", fmt)
    result = invoke(path, "--format", fmt, "-o", target)
    assert result.exit_code == 0, result.output
    assert target.read_text() == shown.stdout
    assert sorted(p.name for p in tmp_path.iterdir()) == [target.name]
    assert f"summary ({fmt}) written to {target}" in result.stdout
    assert result.stdout.rstrip().endswith(caution_text())


@pytest.mark.parametrize("args,fragments", [
    (["{missing}"], ["absent.nc", "no such file"]),
    (["{other}"], ["other.nc", "no 'record' dimension"]),
    (["{junk}"], ["junk.nc", "cannot read results"]),
    (["{nonlinear}", "--limit", "peak_drift=0.02"], ["option --limit", "unknown variable 'peak_drift'"]),
    (["{nonlinear}", "--limit", "peak_drift_ratio:0.02"], ["option --limit", "NAME=VALUE"]),
    (["{nonlinear}", "--limit", "peak_drift_ratio=two"], ["option --limit", "expected a number", "'two'"]),
    (["{nonlinear}", "--limit", "peak_drift_ratio=1g"], ["option --limit", "suffix 'g'"]),
    (["{nonlinear}", "--limit", "peak_drift_ratio=-0.01"], ["option --limit", "finite number > 0"]),
    (["{nonlinear}", "--limit", "peak_drift_ratio=0.01", "--limit", "peak_drift_ratio=0.02"],
     ["option --limit", "given twice"]),
    (["{linear}", "--limit", "ductility=2"], ["option --limit", "linear.nc has no ductility"]),
    (["{nonlinear}", "--by", "site"], ["nonlinear.nc", "option --by", "'site'"]),
    (["{nonlinear}", "-o", "{nowhere}"], ["option -o", "does not exist"]),
])
def test_mistakes_print_one_line_and_exit_2(files, tmp_path, args, fragments):
    """User mistakes: one line on stderr naming the file or option, exit 2, nothing written."""
    xr.Dataset({"a": ("x", [1.0, 2.0])}).to_netcdf(tmp_path / "other.nc")
    (tmp_path / "junk.nc").write_text("not a results file\n")
    names = {"missing": tmp_path / "absent.nc", "other": tmp_path / "other.nc", "junk": tmp_path / "junk.nc",
             "nowhere": tmp_path / "no-folder" / "s.csv", **files}
    result = invoke(*[a.format(**names) for a in args])
    assert result.exit_code == 2, result.output
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1, result.stderr
    assert lines[0].startswith("swaysim: error: ")
    for fragment in fragments:
        assert fragment in lines[0]
    assert result.stdout == ""
    assert sorted(p.name for p in tmp_path.iterdir()) == ["junk.nc", "other.nc"]


def test_help_names_the_options():
    result = CliRunner().invoke(summary_command, ["--help"])
    assert result.exit_code == 0
    for option in ("--format", "--limit", "--by", "-o"):
        assert re.search(rf"(^|\s){re.escape(option)}[\s,]", result.stdout)


def test_run_folder_of_an_unfinished_suite(tmp_path):
    """A run folder (a suite interrupted or still running) is summarised over its finished
    analyses: the header says how many, and the medians equal numpy's on those envelopes."""
    from simulate.suite import open_results, plan_suite, run_suite

    from suite.test_runner import write_case

    config = write_case(tmp_path / "case", 4)
    suite = plan_suite(ss.load_config(config), batch_size=1)
    folder = run_suite(suite, tmp_path / "run", quiet=True)
    folder.batch_path(suite.batches[2].id).unlink()
    result = invoke(tmp_path / "run", "--format", "json")
    assert result.exit_code == 0, result.output
    doc = json.loads(result.stdout)
    assert doc["source"].endswith("(run folder: 3 of 4 analyses finished)")
    ds = open_results(tmp_path / "run", partial=True)
    x = ds["peak_drift_ratio"].values[[str(s) == "ok" for s in ds["status"].values]]
    assert doc["status"]["analyses"] == 3
    assert doc["quantities"]["peak_drift_ratio"]["statistics"]["median"] == np.median(x, axis=0).tolist()
    other = invoke(tmp_path / "case")
    assert other.exit_code == 2 and "not a run folder" in other.stderr
