"""``swaysim compare A.nc B.nc``: per-storey medians, R, statuses, output files, errors."""

from __future__ import annotations

import click
import numpy as np
import pytest
from click.testing import CliRunner

import simulate as ss
from simulate.cli.compare import compare_command
from simulate.cli.options import ErrorReportingGroup
from simulate.cli.tables import percent, sig
from simulate.settings import CAUTION

from conftest import band_limited_acceleration


@click.group(cls=ErrorReportingGroup)
def cli():
    """The command under the project's error policy (one line, exit 2 for user mistakes)."""


cli.add_command(compare_command)


def flat(text: str) -> str:
    return " ".join(text.split())


@pytest.fixture(scope="module")
def result_files(tmp_path_factory):
    """A yielding three-storey frame and its linear twin through three invented records;
    the third record is strong enough to pass the collapse drift of the yielding frame."""
    folder = tmp_path_factory.mktemp("cmp")
    frame = ss.ShearFrame(mass=[3e5, 3e5, 2e5], stiffness=[4e8, 3e8, 2e8], height=[4.0, 3.2, 3.2],
                          yield_shear=[1.2e6, 0.9e6, 0.5e6], hardening=0.03)
    recs = [ss.Record(band_limited_acceleration(s, 800, 0.01, corner=3.0, peak=p), dt=0.01, units="m/s2",
                      name=f"r{s}") for s, p in ((1, 2.0), (2, 3.0), (3, 12.0))]
    a = ss.run(frame.linear_twin(), recs, tail=1.0)
    b = ss.run(frame, recs, tail=1.0, collapse_drift=0.03)
    ss.write_dataset(a, folder / "linear.nc")
    ss.write_dataset(b, folder / "yielding.nc")
    return folder / "linear.nc", folder / "yielding.nc"


def storey_rows(stdout: str) -> dict[int, list[str]]:
    lines = stdout.splitlines()
    start = next(i for i, line in enumerate(lines) if line.startswith("Median over"))
    rule = next(i for i in range(start, len(lines)) if lines[i] and set(lines[i]) == {"-"})
    rows = {}
    for line in lines[rule + 1:]:
        fields = line.split()
        if not fields or not fields[0].isdigit():
            break
        rows[int(fields[0])] = fields[1:]
    return rows


def test_report_shows_medians_r_and_statuses(result_files, tmp_path):
    """The table holds the medians over records of the drift and floor acceleration ratios
    b / a and the median absolute residual drifts; R = peak base shear a / b per record;
    a record that did not end ok is listed; the caution ends the report. The printed
    numbers are recomputed here from the two files with numpy."""
    lin, yie = result_files
    out = tmp_path / "cmp.nc"
    result = CliRunner().invoke(cli, ["compare", str(lin), str(yie), "-o", str(out)])
    assert result.exit_code == 0, result.output
    a, b = ss.read_dataset(lin), ss.read_dataset(yie)
    drift = (b["peak_drift_ratio"] / a["peak_drift_ratio"]).transpose("record", "storey").values
    pfa = (b["peak_floor_acceleration"] / a["peak_floor_acceleration"]).transpose("record", "floor").values
    res_a = np.abs(a["residual_drift_ratio"].transpose("record", "storey").values)
    res_b = np.abs(b["residual_drift_ratio"].transpose("record", "storey").values)
    rows = storey_rows(result.stdout)
    assert sorted(rows) == [1, 2, 3]
    for i in (1, 2, 3):
        assert rows[i] == [sig(np.median(drift[:, i - 1])), percent(np.median(res_a[:, i - 1])),
                           percent(np.median(res_b[:, i - 1])), sig(np.median(pfa[:, i - 1]))]
    R = a["peak_base_shear"].values / b["peak_base_shear"].values
    assert f"median {sig(np.median(R))}, min {sig(R.min())}, max {sig(R.max())}" in result.stdout
    for label, r in zip(a["record"].values, R):
        assert any(line.split()[:1] == [label] and sig(r) in line.split() for line in result.stdout.splitlines())
    assert "r3: a ok, b collapsed" in result.stdout
    assert "r1: a" not in result.stdout
    assert flat(CAUTION) in flat(result.stdout)
    assert result.stdout.rstrip().endswith(CAUTION.split()[-1])
    saved = ss.read_dataset(out)
    np.testing.assert_allclose(saved["strength_reduction_factor"].values, R, rtol=1e-14)
    assert saved.attrs["caution"] == CAUTION


def test_csv_rows_per_record_and_storey(result_files, tmp_path):
    lin, yie = result_files
    out = tmp_path / "cmp.csv"
    result = CliRunner().invoke(cli, ["compare", str(lin), str(yie), "-o", str(out)])
    assert result.exit_code == 0, result.output
    table = np.genfromtxt(out, delimiter=",", names=True, dtype=None, encoding="utf-8")
    assert len(table) == 3 * 3 + 3                     # records x storeys, then one median row per storey
    a, b = ss.read_dataset(lin), ss.read_dataset(yie)
    r2 = table[(table["record"] == "r2") & (table["storey"] == 2)][0]
    assert r2["ratio_peak_drift_ratio"] == pytest.approx(
        float(b["peak_drift_ratio"].sel(record="r2", storey=2) / a["peak_drift_ratio"].sel(record="r2", storey=2)),
        rel=1e-14)
    assert r2["status_b"] == "ok"
    medians = table[table["record"] == "median"]
    assert len(medians) == 3


def test_no_common_record_is_one_line_naming_both_files(result_files, tmp_path):
    lin, _ = result_files
    other = tmp_path / "other.nc"
    frame = ss.ShearFrame(mass=[3e5, 3e5, 2e5], stiffness=[4e8, 3e8, 2e8], height=[4.0, 3.2, 3.2])
    rec = ss.Record(band_limited_acceleration(9, 200, 0.01), dt=0.01, units="m/s2", name="elsewhere")
    ss.write_dataset(ss.run(frame, rec), other)
    result = CliRunner().invoke(cli, ["compare", str(lin), str(other)])
    assert result.exit_code == 2
    assert result.stderr.count("\n") == 1
    assert str(lin) in result.stderr and str(other) in result.stderr and "no record in common" in result.stderr


def test_missing_file_and_bad_output(result_files, tmp_path):
    lin, yie = result_files
    result = CliRunner().invoke(cli, ["compare", str(lin), str(tmp_path / "absent.nc")])
    assert result.exit_code == 2 and "absent.nc" in result.stderr
    result = CliRunner().invoke(cli, ["compare", str(lin), str(yie), "-o", str(tmp_path / "cmp.xlsx")])
    assert result.exit_code == 2 and "option -o" in result.stderr
    assert not (tmp_path / "cmp.xlsx").exists()
