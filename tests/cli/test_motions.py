"""``swaysim motions``: the intensity-measure table, options and one-line errors."""

from __future__ import annotations

import math

import numpy as np
import pytest
from click.testing import CliRunner

import simulate as ss
from simulate.cli.motions import motions_command
from simulate.cli.options import ErrorReportingGroup
from simulate.cli.tables import sig
from simulate.excitation.intensity import intensity_measures


def cli():
    """A group like ``swaysim`` (same error policy) holding the command under test."""
    group = ErrorReportingGroup("swaysim")
    group.add_command(motions_command)
    return group


def write_sine(path, *, dt=0.01, duration=4.0, f=1.0, amplitude=0.2, columns=2):
    """Whole cycles of a sine in g; two columns (time, acceleration) or one value per line."""
    t = np.arange(int(round(duration / dt)) + 1) * dt
    a = amplitude * np.sin(2 * np.pi * f * t)
    rows = np.column_stack([t, a]) if columns == 2 else a[:, None]
    np.savetxt(path, rows, fmt="%.10f", header="invented test record")
    return path


def table_rows(stdout: str, labels) -> dict[str, list[str]]:
    """Cells of the first table's rows that start with one of ``labels``."""
    lines = stdout.splitlines()
    rule = next(i for i, line in enumerate(lines) if line and set(line) == {"-"})
    rows = {}
    for line in lines[rule + 1:]:
        fields = line.split()
        if not fields or fields[0] not in labels:
            break
        rows[fields[0]] = fields[1:]
    return rows


def test_table_values(tmp_path):
    """Each cell is the library's value, rounded as the tables round; the sine's Arias intensity
    and CAV also match their closed forms (pi / 2g) A^2 D / 2 and (2 / pi) A D (definitions)."""
    a = write_sine(tmp_path / "a.txt", amplitude=0.2)
    b = write_sine(tmp_path / "b.txt", amplitude=0.1, f=2.0)
    result = CliRunner().invoke(cli(), ["motions", str(a), str(b), "--period", "0.5", "--period", "1"])
    assert result.exit_code == 0, result.output
    rows = table_rows(result.stdout, ["a", "b"])
    assert sorted(rows) == ["a", "b"]
    records = [ss.read_record(a, units="g"), ss.read_record(b, units="g")]
    ds = intensity_measures(records, [0.5, 1.0])
    names = ["pga", "pgv", "pgd", "arias_intensity", "significant_duration", "cumulative_absolute_velocity"]
    for r, label in enumerate(["a", "b"]):
        cells = rows[label]
        assert cells[0] == "0.01" and cells[1] == "4.00"
        assert cells[2:8] == [sig(float(ds[name][r])) for name in names]
        assert cells[8:] == [sig(float(x)) for x in ds["sa"][r]]
    A = 0.2 * ss.STANDARD_GRAVITY
    assert float(ds["arias_intensity"][0]) == pytest.approx(math.pi / (2 * ss.STANDARD_GRAVITY) * A * A * 2,
                                                           rel=1e-3)
    assert float(ds["cumulative_absolute_velocity"][0]) == pytest.approx(2 / math.pi * A * 4, rel=1e-3)
    assert "Sa(0.5 s)" in result.stdout and "Sa(1 s)" in result.stdout
    assert "5 % damping" in result.stdout
    assert result.stdout.rstrip().endswith(ss.CAUTION.split()[-1])


def test_units_and_dt_options(tmp_path):
    """One value per line needs --dt; --units cm/s2 reads the values as cm/s^2 (200 cm/s^2 = 2 m/s^2)."""
    path = write_sine(tmp_path / "one.txt", columns=1, amplitude=200.0)
    result = CliRunner().invoke(cli(), ["motions", str(path), "--dt", "0.01", "--units", "cm/s2"])
    assert result.exit_code == 0, result.output
    pga = float(table_rows(result.stdout, ["one"])["one"][2])
    assert pga == pytest.approx(2.0 / ss.STANDARD_GRAVITY, rel=2e-3)
    # without --units the file's own declaration is used
    declared = tmp_path / "declared.txt"
    declared.write_text("# units = cm/s2\n" + path.read_text())
    result = CliRunner().invoke(cli(), ["motions", str(declared), "--dt", "0.01"])
    assert result.exit_code == 0, result.output
    assert float(table_rows(result.stdout, ["declared"])["declared"][2]) == pga


@pytest.mark.parametrize("args, fragments", [
    (["missing.txt"], ["missing.txt", "no such file"]),
    (["{one}"], ["one.txt", "dt"]),
    (["{two}", "--units", "furlongs"], ["option --units", "furlongs"]),
    (["{two}", "--period", "-0.5"], ["option --period", "-0.5"]),
    (["{two}", "--damping", "1.5"], ["option --damping", "1.5"]),
])
def test_user_mistakes_give_one_line_and_exit_2(tmp_path, args, fragments):
    one = write_sine(tmp_path / "one.txt", columns=1)
    two = write_sine(tmp_path / "two.txt")
    args = [x.format(one=one, two=two) for x in args]
    result = CliRunner().invoke(cli(), ["motions", *args])
    assert result.exit_code == 2, result.output
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("swaysim: error: ")
    for fragment in fragments:
        assert fragment in lines[0]
    assert "Traceback" not in result.output


def test_no_files_is_a_usage_error():
    result = CliRunner().invoke(cli(), ["motions"])
    assert result.exit_code == 2
    assert "FILE..." in result.output
