"""``swaysim run``: tables, output file, options."""

from __future__ import annotations

import hashlib
import math
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner

import simulate
from simulate.cli import main
from simulate.cli.tables import percent, sig
from simulate.settings import CAUTION, STANDARD_GRAVITY

from . import write_tiny_case

REPO = Path(__file__).resolve().parents[2]


def flat(text: str) -> str:
    return " ".join(text.split())


def storey_rows(stdout: str) -> dict[int, list[str]]:
    """Rows of the storey envelope table, by storey number."""
    lines = stdout.splitlines()
    start = next(i for i, line in enumerate(lines) if line.startswith("Storey envelopes"))
    rule = next(i for i in range(start, len(lines)) if set(lines[i]) == {"-"})
    rows = {}
    for line in lines[rule + 1:]:
        fields = line.split()
        if not fields or not fields[0].isdigit():
            break
        rows[int(fields[0])] = fields[1:]
    return rows


def test_run_tiny_config(tmp_path):
    config = write_tiny_case(tmp_path / "case")
    out = tmp_path / "results" / "tiny.nc"
    out.parent.mkdir()
    result = CliRunner().invoke(main, ["run", str(config), "-o", str(out)])
    assert result.exit_code == 0, result.output
    assert out.is_file()
    ds = simulate.read_dataset(out)
    assert ds.sizes["record"] == 1 and ds.sizes["storey"] == 3 and ds.sizes["floor"] == 3
    # 2 s record at 0.01 s plus a 0.5 s tail
    assert ds.sizes["time"] == 251
    assert ds.attrs["config_sha256"] == hashlib.sha256(config.read_bytes()).hexdigest()

    periods = simulate.load_config(config).frame.modes()["period"].values
    assert f"T1 {sig(periods[0])} s, T2 {sig(periods[1])} s, T3 {sig(periods[2])} s" in result.stdout
    rows = storey_rows(result.stdout)
    assert sorted(rows) == [1, 2, 3]
    drift = ds["peak_drift_ratio"].sel(record=ds["record"].values[0])
    pfa = ds["peak_floor_acceleration"].sel(record=ds["record"].values[0])
    shear = ds["peak_storey_shear"].sel(record=ds["record"].values[0])
    for i in (1, 2, 3):
        assert rows[i][0] == percent(float(drift.sel(storey=i)))         # max over records
        assert rows[i][1] == percent(float(drift.sel(storey=i)))         # one record: mean = max
        assert rows[i][2] == sig(float(pfa.sel(floor=i)) / STANDARD_GRAVITY)
        assert rows[i][4] == sig(float(shear.sel(storey=i)) / 1000.0)
    assert f"max {sig(float(ds['peak_base_shear'].max()) / 1000.0)} kN" in result.stdout
    assert str(out) in result.stdout
    assert flat(CAUTION) in flat(result.stdout)
    assert result.stdout.rstrip().endswith(CAUTION.split()[-1])
    assert result.stderr == ""


def test_max_and_mean_over_records(tmp_path):
    """With two records of different amplitude the table shows their max and their mean."""
    case = tmp_path / "case"
    config = write_tiny_case(case, files='["*.txt"]')
    a = np.loadtxt(case / "sine.txt")
    np.savetxt(case / "weak.txt", np.column_stack([a[:, 0], 0.3 * a[:, 1]]), fmt="%.8f")
    out = tmp_path / "two.nc"
    result = CliRunner().invoke(main, ["run", str(config), "-o", str(out)])
    assert result.exit_code == 0, result.output
    ds = simulate.read_dataset(out)
    drift = ds["peak_drift_ratio"].transpose("record", "storey").values
    rows = storey_rows(result.stdout)
    for i in (1, 2, 3):
        assert rows[i][0] == percent(drift[:, i - 1].max())
        assert rows[i][1] == percent(drift[:, i - 1].mean())
    assert drift[:, 0].max() > 2.0 * drift[:, 0].min()   # the two records really differ


def test_quasi_static_harmonic_matches_closed_form(tmp_path):
    """One storey under a slow ground sine: steady drift = (m a0 / k) / sqrt((1 - r^2)^2 + (2 zeta r)^2) / h.

    Steady-state amplitude of a damped SDOF system under harmonic force
    p0 sin(w t) with p0 = m a0: A. K. Chopra, Dynamics of Structures, section 3.2,
    deformation response factor R_d (formula quoted from memory). A 4 s half-cosine
    ramp keeps the start-up transient small, so the peak is the steady amplitude
    to ~0.1 %; a wrong unit conversion (g to m/s2) would be off by a factor ~10.
    """
    m, k, h, a0, f, zeta = 2.0e5, 2.0e8, 3.0, 0.1, 0.5, 0.05
    config = tmp_path / "sdof.toml"
    config.write_text(f"""
[building]
mass = [{m}]
height = [{h}]
stiffness = [{k}]
[damping]
model = "modal"
ratio = {zeta}
[[harmonic]]
amplitude = {a0}
units = "g"
frequency = {f}
duration = 12.0
ramp = 4.0
dt = 0.005
""")
    out = tmp_path / "sdof.nc"
    result = CliRunner().invoke(main, ["run", str(config), "-o", str(out)])
    assert result.exit_code == 0, result.output
    wn = math.sqrt(k / m)
    r = 2 * math.pi * f / wn
    u0 = m * a0 * STANDARD_GRAVITY / k / math.sqrt((1 - r * r) ** 2 + (2 * zeta * r) ** 2)
    ds = simulate.read_dataset(out)
    assert float(ds["peak_drift_ratio"].max()) == pytest.approx(u0 / h, rel=2e-3)
    assert storey_rows(result.stdout)[1][0] == percent(float(ds["peak_drift_ratio"].max()))


def test_output_file_choice(tmp_path, monkeypatch):
    """-o wins over [output] file, which wins over <config stem>.nc in the current folder."""
    case = tmp_path / "case"
    config = write_tiny_case(case)
    work = tmp_path / "work"
    work.mkdir()
    monkeypatch.chdir(work)
    runner = CliRunner()
    assert runner.invoke(main, ["run", str(config)]).exit_code == 0
    assert (work / "tiny.nc").is_file()

    config.write_text(config.read_text() + '\n[output]\nfile = "named.nc"\n')
    assert runner.invoke(main, ["run", str(config)]).exit_code == 0
    assert (work / "named.nc").is_file()

    result = runner.invoke(main, ["run", str(config), "-o", "chosen.nc"])
    assert result.exit_code == 0
    assert (work / "chosen.nc").is_file()
    assert sorted(p.name for p in work.iterdir()) == ["chosen.nc", "named.nc", "tiny.nc"]


def test_method_and_dt_options(tmp_path):
    config = write_tiny_case(tmp_path / "case")
    out = tmp_path / "ss.nc"
    result = CliRunner().invoke(main, ["run", str(config), "-o", str(out), "--method", "state-space",
                                       "--dt", "0.005"])
    assert result.exit_code == 0, result.output
    ds = simulate.read_dataset(out)
    assert ds.attrs["method"] == "state-space"
    assert ds.attrs["analysis_dt"] == 0.005
    assert "state-space" in result.stdout and "[from --method]" in result.stdout


def test_demo_config(tmp_path, monkeypatch):
    """The shipped demo runs from the repository root."""
    monkeypatch.chdir(REPO)
    out = tmp_path / "demo.nc"
    result = CliRunner().invoke(main, ["run", "configs/demo.toml", "-o", str(out)])
    assert result.exit_code == 0, result.output
    ds = simulate.read_dataset(out)
    cfg = simulate.load_config(REPO / "configs" / "demo.toml")
    assert ds.sizes["record"] == cfg.n_excitations >= 2
    assert ds.sizes["storey"] == cfg.frame.n_storeys
    assert 0.6 <= cfg.frame.periods()[0] <= 1.0
    assert sorted(storey_rows(result.stdout)) == list(range(1, cfg.frame.n_storeys + 1))
    assert flat(CAUTION) in flat(result.stdout)


def test_sig_agrees_with_python_formatting():
    """sig() equals Python's '#.3g' (3 significant digits, trailing zeros kept) wherever that
    format prints plain decimals with a fractional part, and rounds large values to 3 digits."""
    rng = np.random.default_rng(7)
    for x in np.concatenate([10.0 ** rng.uniform(-3, 1.99, 300), [0.1, 1.0, 0.0995, 9.995]]):
        for value in (x, -x):
            assert sig(value) == format(value, "#.3g"), value
            assert percent(value / 100.0) == sig(value)
    for x in 10.0 ** rng.uniform(3, 6.9, 50):
        assert float(sig(x)) == float(format(x, ".3g"))
    assert sig(float("nan")) == "-"


def test_linear_report_has_no_nonlinear_parts(tmp_path):
    """A linear frame keeps the linear report: no status, ductility, P-Delta or Newton lines."""
    config = write_tiny_case(tmp_path / "case")
    result = CliRunner().invoke(main, ["run", str(config), "-o", str(tmp_path / "lin.nc")])
    assert result.exit_code == 0, result.output
    lines = result.stdout.splitlines()
    assert "method        newmark (gamma = 0.5, beta = 0.25)" in lines
    for word in ("status", "ductility", "P-Delta", "Newton", "collapse", "linear twin"):
        assert word not in result.stdout, word
