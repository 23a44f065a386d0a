"""``swaysim pushover``: capacity-curve table, peak, output files, errors."""

from __future__ import annotations

import click
import numpy as np
import pytest
import scipy.linalg
from click.testing import CliRunner

import simulate
from simulate.cli.options import ErrorReportingGroup
from simulate.cli.pushover import pushover_command, table_steps
from simulate.cli.tables import percent, sig
from simulate.settings import CAUTION, STANDARD_GRAVITY

#: Three linear storeys; the loader wants an excitation, which pushover does not read.
LINEAR_CONFIG = """\
title = "pushover test frame"
[building]
name = "tiny"
mass = [3.0e5, 3.0e5, 2.5e5]
height = [4.0, 3.2, 3.2]
stiffness = [4.0e8, 3.2e8, 2.4e8]
{extra}
[[harmonic]]
amplitude = 0.01
mode = 1
duration = 1.0
"""


@click.group(cls=ErrorReportingGroup)
def cli():
    """The command under the project's error policy (one line, exit 2 for user mistakes)."""


cli.add_command(pushover_command)


def flat(text: str) -> str:
    return " ".join(text.split())


def write_config(folder, extra=""):
    path = folder / "frame.toml"
    path.write_text(LINEAR_CONFIG.format(extra=extra))
    return path


def table_rows(stdout: str) -> list[list[str]]:
    lines = stdout.splitlines()
    start = next(i for i, line in enumerate(lines) if line.startswith("Capacity curve"))
    rule = next(i for i in range(start, len(lines)) if lines[i] and set(lines[i]) == {"-"})
    rows = []
    for line in lines[rule + 1:]:
        fields = line.split()
        if not fields or not fields[0].isdigit():
            break
        rows.append(fields)
    return rows


def test_linear_frame_table_and_netcdf(tmp_path):
    """The table shows every 20th of 400 steps; its base shears are those of the static
    solution K u = lambda F (numpy.linalg.solve) with F = M phi_1, phi_1 from
    scipy.linalg.eigh; the peak line and the caution close the report."""
    config = write_config(tmp_path)
    out = tmp_path / "curve.nc"
    result = CliRunner().invoke(cli, ["pushover", str(config), "-o", str(out)])
    assert result.exit_code == 0, result.output
    ds = simulate.read_dataset(out)
    assert ds.sizes["step"] == 401 and ds.attrs["pattern"] == "first-mode"
    mass = np.array([3.0e5, 3.0e5, 2.5e5])
    k = np.array([4.0e8, 3.2e8, 2.4e8])
    A = np.eye(3) - np.eye(3, k=-1)
    K = A.T @ np.diag(k) @ A
    _, vec = scipy.linalg.eigh(K, np.diag(mass))
    F = mass * vec[:, 0] / (mass * vec[:, 0]).sum()
    x1 = np.linalg.solve(K, F)
    weight = mass.sum() * STANDARD_GRAVITY
    rows = table_rows(result.stdout)
    assert [int(r[0]) for r in rows] == list(range(20, 401, 20))
    for row in rows:
        i = int(row[0])
        roof = 0.04 * 10.4 * i / 400
        lam = roof / x1[-1]
        drift = np.diff(lam * x1, prepend=0.0) / np.array([4.0, 3.2, 3.2])
        assert row[1] == percent(roof / 10.4)
        assert row[2] == sig(lam / 1000.0)
        assert row[3] == sig(lam / weight)
        assert row[4] == percent(drift.max())
        assert row[5] == str(int(np.argmax(drift)) + 1)
    peak = float(ds["base_shear"].max())
    assert f"peak base shear     {sig(peak / 1000.0)} kN = {sig(peak / weight)} W at roof drift 4.00 %" \
        in result.stdout
    assert f"results written to {out}" in result.stdout
    assert flat(CAUTION) in flat(result.stdout)
    assert result.stdout.rstrip().endswith(CAUTION.split()[-1])
    assert result.stderr == ""


def test_csv_has_one_row_per_step(tmp_path):
    """CSV output: a header, then one row per step equal to the dataset."""
    config = write_config(tmp_path)
    runner = CliRunner()
    args = ["pushover", str(config), "--pattern", "inverted-triangle", "--roof-drift", "0.02", "--steps", "30"]
    assert runner.invoke(cli, args + ["-o", str(tmp_path / "c.csv")]).exit_code == 0
    assert runner.invoke(cli, args + ["-o", str(tmp_path / "c.nc")]).exit_code == 0
    table = np.genfromtxt(tmp_path / "c.csv", delimiter=",", names=True)
    ds = simulate.read_dataset(tmp_path / "c.nc")
    assert table.shape == (31,)
    np.testing.assert_array_equal(table["step"], np.arange(31))
    np.testing.assert_array_equal(table["base_shear_N"], ds["base_shear"].values)
    np.testing.assert_array_equal(table["roof_drift_ratio"], ds["roof_drift_ratio"].values)
    np.testing.assert_array_equal(table["drift_ratio_2"], ds["drift_ratio"].sel(storey=2).values)
    np.testing.assert_array_equal(table["storey_shear_N_3"], ds["storey_shear"].sel(storey=3).values)
    np.testing.assert_array_equal(table["displacement_m_1"], ds["displacement"].sel(floor=1).values)


def test_yielding_frame_from_config(tmp_path):
    """One elastoplastic storey with a gravity load: the curve peaks at yield with base shear
    Vy - P dy / h at roof drift dy / h and then descends (linearised P-Delta, common
    practice); the config's storey keys feed the frame."""
    config = tmp_path / "one.toml"
    config.write_text("""\
[building]
storeys = 1
mass = 2.0e5
height = 3.0
stiffness = 1.0e8
yield_shear = 1.0e6
hardening = 0.0
gravity_load = 3.0e6
[[harmonic]]
amplitude = 0.01
mode = 1
duration = 1.0
""")
    result = CliRunner().invoke(cli, ["pushover", str(config), "--roof-drift", "0.03", "--steps", "90"])
    assert result.exit_code == 0, result.output
    vy, dy, kg = 1.0e6, 0.01, 1.0e6
    peak = vy - kg * dy
    weight = 2.0e5 * STANDARD_GRAVITY
    assert (f"peak base shear     {sig(peak / 1000.0)} kN = {sig(peak / weight)} W at roof drift "
            f"{percent(dy / 3.0)} %") in result.stdout
    rows = table_rows(result.stdout)
    last = rows[-1]
    roof = 0.03 * 3.0
    assert last[2] == sig((vy - kg * roof) / 1000.0)
    assert "with P-Delta" in result.stdout and "bilinear" in result.stdout


def test_collapse_is_reported(tmp_path):
    """With P/h above alpha k the base shear reaches zero at u_c = Vy / (P/h) for alpha = 0
    (closed form); the report says the frame collapsed and stops the curve there."""
    config = tmp_path / "weak.toml"
    config.write_text("""\
[building]
storeys = 1
mass = 2.0e5
height = 3.0
stiffness = 1.0e8
yield_shear = 1.0e6
gravity_load = 1.4e7
[[harmonic]]
amplitude = 0.01
mode = 1
duration = 1.0
""")
    result = CliRunner().invoke(cli, ["pushover", str(config), "--roof-drift", "0.1"])
    assert result.exit_code == 0, result.output
    assert "collapsed: past the peak the base shear fell to zero" in flat(result.stdout)
    u_c = 1.0e6 / (1.4e7 / 3.0)
    rows = table_rows(result.stdout)
    assert abs(float(rows[-1][1]) / 100.0 * 3.0 - u_c) <= 0.1 * 3.0 / 400 + 0.005 * u_c
    assert flat(CAUTION) in flat(result.stdout)


@pytest.mark.parametrize("args, message", [
    (["-o", "curve.txt"], "option -o: "),
    (["--roof-drift", "-0.01"], "--roof-drift"),
    (["--roof-drift", "0"], "--roof-drift"),
    (["--steps", "0"], "--steps"),
    (["--pattern", "parabolic"], "--pattern"),
])
def test_option_mistakes_exit_2_with_one_line(tmp_path, args, message):
    config = write_config(tmp_path)
    result = CliRunner().invoke(cli, ["pushover", str(config)] + args)
    assert result.exit_code == 2
    assert message in result.stderr
    assert not list(tmp_path.glob("curve*"))


def test_missing_folder_and_missing_config(tmp_path):
    config = write_config(tmp_path)
    result = CliRunner().invoke(cli, ["pushover", str(config), "-o", str(tmp_path / "no" / "c.nc")])
    assert result.exit_code == 2
    assert result.stderr.count("\n") == 1 and "does not exist" in result.stderr
    result = CliRunner().invoke(cli, ["pushover", str(tmp_path / "absent.toml")])
    assert result.exit_code == 2
    assert "absent.toml" in result.stderr and result.stderr.startswith("swaysim: error:")


@pytest.mark.parametrize("n, expected", [
    (401, list(range(20, 401, 20))),
    (31, list(range(2, 31, 2))),
    (8, list(range(1, 8))),
    (44, list(range(3, 43, 3)) + [43]),
    (1, []),
])
def test_table_steps(n, expected):
    """About 20 rows: every k-th step with k = ceil(last / 20), and the last step."""
    assert table_steps(n) == expected
