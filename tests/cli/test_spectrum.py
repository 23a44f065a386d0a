"""``swaysim spectrum``: tables, CSV and NetCDF output, period and ductility options, errors."""

from __future__ import annotations

import csv

import numpy as np
import pytest
import xarray as xr
from click.testing import CliRunner

import simulate as ss
from simulate.cli.options import ErrorReportingGroup
from simulate.cli.spectrum import parse_periods, spectrum_command, table_periods
from simulate.cli.tables import sig
from simulate.errors import InputError
from simulate.excitation.spectra import inelastic_spectrum, response_spectrum

from .test_motions import table_rows, write_sine


def cli():
    """A group like ``swaysim`` (same error policy) holding the command under test."""
    group = ErrorReportingGroup("swaysim")
    group.add_command(spectrum_command)
    return group


def noisy(path, seed, n=600, dt=0.01):
    """Invented two-column record in g: seeded noise with a sine, tapered to rest at both ends."""
    rng = np.random.default_rng(seed)
    t = np.arange(n) * dt
    a = 0.1 * np.sin(2 * np.pi * 1.3 * t) + 0.03 * rng.standard_normal(n)
    a *= np.sin(np.pi * t / t[-1])
    np.savetxt(path, np.column_stack([t, a]), fmt="%.10f")
    return path


def test_parse_periods():
    np.testing.assert_allclose(parse_periods("0.05:4:100"), np.geomspace(0.05, 4, 100))
    np.testing.assert_array_equal(parse_periods("0, 0.2,1.5"), [0.0, 0.2, 1.5])
    for text, fragment in (("1:2", "start:stop:count"), ("a:b:3", "start:stop:count"),
                           ("0.1:4:2.5", "start:stop:count"), ("0.1,x", "comma-separated"),
                           ("4:0.1:10", "larger than start"), ("0.2,0.2", "more than once"), ("", "no periods")):
        with pytest.raises(InputError, match=fragment) as info:
            parse_periods(text)
        assert str(info.value).startswith("option --periods")


def test_table_periods_pick_round_values_from_the_grid():
    periods = np.geomspace(0.05, 4, 100)
    shown = table_periods(periods)
    assert len(shown) <= 8 and shown == sorted(shown, key=lambda i: periods[i])
    assert periods[shown[0]] == pytest.approx(0.05) and periods[shown[-1]] == pytest.approx(4.0)
    assert table_periods(np.array([1.0, 0.0, 0.5])) == [1, 2, 0]


def test_tables_and_csv(tmp_path):
    """Printed cells are the library's values at the periods shown; the CSV holds every record and
    period with the same numbers as response_spectrum and inelastic_spectrum."""
    a, b = noisy(tmp_path / "a.txt", 1), noisy(tmp_path / "b.txt", 2)
    out = tmp_path / "spec.csv"
    args = ["spectrum", str(a), str(b), "--periods", "0,0.1,0.3,1,2",
            "--ductility", "2,4", "-o", str(out)]
    result = CliRunner().invoke(cli(), args)
    assert result.exit_code == 0, result.output
    periods = [0.0, 0.1, 0.3, 1.0, 2.0]
    records = [ss.read_record(a), ss.read_record(b)]
    el = response_spectrum(records, periods)
    inel = inelastic_spectrum(records, periods, ductility=[2, 4])
    text = result.stdout
    blocks = text.split("\n\n")
    psa_block = next(bk for bk in blocks if bk.startswith("Pseudo-spectral acceleration"))
    rows = table_rows(psa_block, ["a", "b"])
    assert rows["a"] == [sig(x) for x in el["psa"].values[0]]
    assert rows["b"] == [sig(x) for x in el["psa"].values[1]]
    header = psa_block.splitlines()[1].split()
    assert header == ["record", "PGA", "0.1", "s", "0.3", "s", "1", "s", "2", "s"]
    r_block = next(bk for bk in blocks if bk.startswith("Strength reduction factor R_y, ductility 4"))
    want = inel["strength_reduction"].sel(ductility=4).values[1]
    assert table_rows(r_block, ["a", "b"])["b"] == [sig(x) for x in want]
    assert f"spectra written to {out}" in text
    assert text.rstrip().endswith(ss.CAUTION.split()[-1])

    lines = out.read_text().splitlines()
    assert all(line.startswith("# ") for line in lines[:3])
    assert "caution" in lines[2]
    table = list(csv.DictReader(lines[3:]))
    assert len(table) == 2 * len(periods)
    assert table[0]["record"] == "a" and float(table[0]["period_s"]) == 0.0
    for row in table:
        r = ["a", "b"].index(row["record"])
        p = periods.index(float(row["period_s"]))
        assert float(row["psa_g"]) == el["psa"].values[r, p]
        assert float(row["sd_m"]) == el["sd"].values[r, p]
        assert float(row["sa_g"]) == el["sa"].values[r, p]
        assert float(row["strength_reduction_mu4"]) == inel["strength_reduction"].sel(ductility=4).values[r, p]
        assert float(row["sd_inelastic_mu2_m"]) == inel["sd_inelastic"].sel(ductility=2).values[r, p]


def test_netcdf_output(tmp_path):
    a = noisy(tmp_path / "a.txt", 3)
    out = tmp_path / "spec.nc"
    result = CliRunner().invoke(cli(), ["spectrum", str(a), "--periods", "0.1:3:7", "--damping", "0.02",
                                        "--ductility", "3", "--hardening", "0.05", "-o", str(out)])
    assert result.exit_code == 0, result.output
    ds = ss.read_dataset(out)
    rec = ss.read_record(a)
    el = response_spectrum(rec, np.geomspace(0.1, 3, 7), 0.02)
    inel = inelastic_spectrum(rec, np.geomspace(0.1, 3, 7), [3], 0.02, 0.05)
    xr.testing.assert_allclose(ds["psa"], el["psa"], rtol=1e-15)
    xr.testing.assert_allclose(ds["strength_reduction"], inel["strength_reduction"], rtol=1e-15)
    assert ds.attrs["damping"] == 0.02 and ds.attrs["hardening"] == 0.05
    assert ds.attrs["caution"] == ss.CAUTION
    assert ds["sd"].attrs["units"] == "m" and ds["psa"].attrs["units"] == "g"
    assert [p.name for p in tmp_path.iterdir() if p.name.startswith(".")] == []


def test_default_grid_without_output(tmp_path):
    a = noisy(tmp_path / "a.txt", 4)
    result = CliRunner().invoke(cli(), ["spectrum", str(a)])
    assert result.exit_code == 0, result.output
    assert "100 from 0.05 to 4 s; 8 of the 100 shown" in result.stdout
    assert "written" not in result.stdout
    assert sorted(p.name for p in tmp_path.iterdir()) == ["a.txt"]


@pytest.mark.parametrize("args, fragments", [
    (["{a}", "--periods", "1:2"], ["option --periods", "start:stop:count"]),
    (["{a}", "--periods", "0.1,-1"], ["option --periods", "-1"]),
    (["{a}", "--ductility", "0.5"], ["option --ductility", "0.5"]),
    (["{a}", "--ductility", "2,x"], ["option --ductility", "2,x"]),
    (["{a}", "--ductility", "2", "--hardening", "1"], ["option --hardening"]),
    (["{a}", "--damping", "-0.1"], ["option --damping"]),
    (["{a}", "-o", "{tmp}/out.xlsx"], ["option -o", "out.xlsx", ".csv or .nc"]),
    (["{a}", "-o", "{tmp}/nowhere/out.csv"], ["option -o", "does not exist"]),
    (["{a}", "{tmp}/absent.txt", "-o", "{tmp}/out.csv"], ["absent.txt", "no such file"]),
    (["{a}", "--units", "kg"], ["option --units", "'kg'"]),
])
def test_user_mistakes_give_one_line_exit_2_and_write_nothing(tmp_path, args, fragments):
    data = tmp_path / "data"
    data.mkdir()
    a = noisy(data / "a.txt", 5, n=200)
    args = [x.format(a=a, tmp=tmp_path) for x in args]
    result = CliRunner().invoke(cli(), ["spectrum", *args])
    assert result.exit_code == 2, result.output
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("swaysim: error: "), result.stderr
    for fragment in fragments:
        assert fragment in lines[0], (fragment, lines[0])
    assert sorted(p.name for p in tmp_path.iterdir()) == ["data"]
    assert sorted(p.name for p in data.iterdir()) == ["a.txt"]


def test_records_with_one_value_per_line_need_dt(tmp_path):
    path = write_sine(tmp_path / "one.txt", columns=1)
    result = CliRunner().invoke(cli(), ["spectrum", str(path), "--periods", "0.5,1"])
    assert result.exit_code == 2 and "one.txt" in result.stderr
    result = CliRunner().invoke(cli(), ["spectrum", str(path), "--periods", "0.5,1", "--dt", "0.01"])
    assert result.exit_code == 0, result.output
