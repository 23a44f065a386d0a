"""``swaysim scale``: factors, suite mean against the target, check, caution, suite file."""

from __future__ import annotations

import tomllib
from pathlib import Path

import click
import numpy as np
import pytest
from click.testing import CliRunner

from simulate.cli.options import ErrorReportingGroup, debug_option
from simulate.cli.scale import scale_command
from simulate.excitation import read_record
from simulate.excitation.scaling import scale_records
from simulate.excitation.suites import read_suite
from simulate.excitation.targets import ASCE7Spectrum, EC8Spectrum

from conftest import band_limited_acceleration


@click.group(cls=ErrorReportingGroup)
@debug_option
def cli():
    """The scale command under the command line's error policy."""


cli.add_command(scale_command)


def invoke(*args):
    return CliRunner().invoke(cli, ["scale", *map(str, args)])


def write_records(folder: Path, n=3) -> list[Path]:
    """Invented two-column records (time s, acceleration g) of seeded band-limited noise."""
    folder.mkdir(parents=True, exist_ok=True)
    paths = []
    for i in range(n):
        acc = band_limited_acceleration(30 + i, 1200, 0.01, corner=3.0 + 2.0 * i, peak=0.2 + 0.1 * i)
        path = folder / f"rec{i}.txt"
        lines = ["# invented test record", "# time (s), acceleration (g)"]
        lines += [f"{k * 0.01:.2f} {a:.8e}" for k, a in enumerate(acc)]
        path.write_text("\n".join(lines) + "\n")
        paths.append(path)
    return paths


def factor_rows(stdout: str) -> dict[str, list[str]]:
    lines = stdout.splitlines()
    start = next(i for i, line in enumerate(lines) if line.startswith("Scale factors"))
    rule = next(i for i in range(start, len(lines)) if lines[i] and set(lines[i]) == {"-"})
    rows = {}
    for line in lines[rule + 1:]:
        if not line.strip():
            break
        fields = line.split()
        rows[fields[0]] = fields[1:]
    return rows


def test_asce7_factors_match_the_library(tmp_path):
    paths = write_records(tmp_path / "records")
    result = invoke(*paths, "--target", "asce7", "--sds", 1.0, "--sd1", 0.6, "--tl", 8,
                    "--period", 0.8)
    assert result.exit_code == 0, result.output
    records = [read_record(p) for p in paths]
    _, report = scale_records(records, ASCE7Spectrum(1.0, 0.6, 8.0), 0.8)
    rows = factor_rows(result.stdout)
    assert sorted(rows) == ["rec0", "rec1", "rec2"]
    for name, factor in zip(report.names, report.factors):
        assert rows[name][2] == f"{factor:.4f}"
    assert "ASCE 7-16 11.4.6" in result.stdout
    assert "Scaled suite mean against the target" in result.stdout
    assert "Check: suite mean >= 0.9 x target from 0.16 s to 1.6 s" in result.stdout
    assert "building code in force" in " ".join(result.stdout.split())
    assert "licensed professional practice" in " ".join(result.stdout.split())


def test_sa_t1_fit_brings_every_record_to_the_target(tmp_path):
    """--fit sa-t1: the scaled Sa(T1) column equals the target at T1 (EN 1998-1 Eq. 3.4,
    Type 1 ground type B, a_g 0.3 g: 0.3 x 1.2 x 2.5 x 0.5 / 0.7 g at 0.7 s; S and T_C
    from Table 3.2, from memory)."""
    paths = write_records(tmp_path)
    result = invoke(*paths, "--target", "ec8", "--ag", 0.3, "--ground-type", "b",
                    "--period", 0.7, "--fit", "sa-t1")
    assert result.exit_code == 0, result.output
    expected = 0.3 * 1.2 * 2.5 * 0.5 / 0.7
    assert f"target Sa(T1) = {expected:.3f} g" in result.stdout
    for row in factor_rows(result.stdout).values():
        assert float(row[3]) == pytest.approx(expected, abs=6e-4)


def test_suite_file_round_trip(tmp_path):
    """-o writes [[record]] entries (file relative to the suite file, name, scale) that the
    suite reader reads back into the same scaled records."""
    paths = write_records(tmp_path / "records")
    out = tmp_path / "suites" / "scaled.toml"
    out.parent.mkdir()
    result = invoke(*paths, "--target", "ec8", "--ag", 0.25, "--ground-type", "C",
                    "--spectrum-type", "1", "--period", 0.6, "--range", "0.5,1.5", "-o", out)
    assert result.exit_code == 0, result.output
    assert f"suite written to {out}" in result.stdout
    doc = tomllib.loads(out.read_text())
    assert set(doc) == {"title", "record"}
    assert [entry["file"] for entry in doc["record"]] == [f"../records/rec{i}.txt" for i in range(3)]
    assert all(set(entry) == {"file", "name", "scale"} for entry in doc["record"])
    assert "building code in force" in " ".join(out.read_text().split())

    records = [read_record(p) for p in paths]
    scaled, report = scale_records(records, EC8Spectrum(0.25, "C", 1), 0.6,
                                   period_range=(0.5 * 0.6, 1.5 * 0.6))
    back = read_suite(out)
    assert [r.name for r in back] == ["rec0", "rec1", "rec2"]
    for got, want, factor in zip(back, scaled, report.factors):
        assert got.metadata["scale_factor"] == factor
        np.testing.assert_array_equal(got.acceleration, want.acceleration)


def test_one_value_per_line_files_keep_dt_and_units(tmp_path):
    path = tmp_path / "values.txt"
    acc = band_limited_acceleration(5, 800, 0.005, corner=5.0, peak=150.0)
    path.write_text("\n".join(f"{a:.8e}" for a in acc) + "\n")
    out = tmp_path / "suite.toml"
    result = invoke(path, "--units", "cm/s2", "--dt", 0.005, "--target", "asce7", "--sds", 0.8,
                    "--sd1", 0.4, "--tl", 6, "--period", 0.5, "-o", out)
    assert result.exit_code == 0, result.output
    doc = tomllib.loads(out.read_text())
    assert doc["defaults"] == {"units": "cm/s2", "dt": 0.005}
    (rec,) = read_suite(out)
    assert rec.units == "cm/s2" and rec.dt == pytest.approx(0.005)


def test_suite_factor_and_failed_check(tmp_path):
    paths = write_records(tmp_path)
    result = invoke(*paths, "--target", "asce7", "--sds", 1.0, "--sd1", 0.6, "--tl", 8,
                    "--period", 1.0, "--suite", "--ratio", 1.4)
    assert result.exit_code == 0, result.output
    factors = {row[2] for row in factor_rows(result.stdout).values()}
    assert len(factors) == 1
    text = " ".join(result.stdout.split())
    assert "FAILED" in text and "multiplying every factor by" in text


def test_limits_warn(tmp_path):
    paths = write_records(tmp_path)
    result = invoke(*paths, "--target", "asce7", "--sds", 1.0, "--sd1", 0.6, "--tl", 8,
                    "--period", 0.8, "--max-factor", 1.0, "--min-factor", 0.99)
    assert result.exit_code == 0, result.output
    assert "Warning: record" in result.stdout and "clipped" in result.stdout


def test_file_target(tmp_path):
    spectrum = tmp_path / "target.txt"
    spectrum.write_text("# period s, Sa g\n0.05 0.4\n0.2 0.9\n0.6 0.9\n2.0 0.25\n4.0 0.08\n")
    paths = write_records(tmp_path / "r", n=2)
    result = invoke(*paths, "--target", f"file:{spectrum}", "--period", 0.6, "--fit", "sa-t1")
    assert result.exit_code == 0, result.output
    assert "target Sa(T1) = 0.900 g" in result.stdout
    assert f"spectrum from {spectrum}" in " ".join(result.stdout.split())


@pytest.mark.parametrize("args, message", [
    (["--target", "asce7", "--sds", "1", "--tl", "8"], "option --target asce7 needs --sd1"),
    (["--target", "asce7", "--sds", "1", "--sd1", "0.5", "--tl", "8", "--ag", "0.2"],
     "option --ag applies to --target ec8, not asce7"),
    (["--target", "nz"], "unknown target 'nz'"),
    (["--target", "file:missing.txt"], "missing.txt: no such target spectrum file"),
    (["--target", "ec8", "--ag", "0.2", "--ground-type", "C", "--damping", "5"], "ratio"),
    (["--target", "ec8", "--ag", "0.2", "--ground-type", "C", "-o", "out.csv"],
     "a suite file name must end in .toml"),
])
def test_user_errors_print_one_line(tmp_path, monkeypatch, args, message):
    monkeypatch.chdir(tmp_path)
    paths = write_records(tmp_path, n=1)
    result = invoke(*paths, *args, "--period", "0.8")
    assert result.exit_code == 2
    assert result.stderr.startswith("swaysim: error: ")
    assert message in result.stderr
    assert result.stderr.count("\n") == 1


def test_target_range_beyond_ec8_is_a_user_error(tmp_path):
    """EN 1998-1 Eq. 3.5 ends at 4 s: T1 = 3 s with the default range (to 6 s) is refused."""
    paths = write_records(tmp_path, n=1)
    result = invoke(*paths, "--target", "ec8", "--ag", "0.2", "--ground-type", "D", "--period", 3)
    assert result.exit_code == 2
    assert "above 4 s" in result.stderr


def test_bad_range_and_missing_record(tmp_path):
    paths = write_records(tmp_path, n=1)
    result = invoke(*paths, "--target", "asce7", "--sds", 1, "--sd1", 0.5, "--tl", 8,
                    "--period", 0.8, "--range", "2,1")
    assert result.exit_code == 2 and "--range" in result.output
    result = invoke(tmp_path / "none.txt", "--target", "asce7", "--sds", 1, "--sd1", 0.5,
                    "--tl", 8, "--period", 0.8)
    assert result.exit_code == 2 and "none.txt" in result.stderr
