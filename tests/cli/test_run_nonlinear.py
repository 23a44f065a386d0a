"""``swaysim run`` on frames with yielding storeys and P-Delta: status, ductility, linear twin.

The printed numbers are checked against values computed here with numpy from the
histories in the written files (peak of |drift ratio| over time, storey-1 shear),
not from the envelopes the program stored.
"""

from __future__ import annotations

import re
from pathlib import Path

import numpy as np
from click.testing import CliRunner

import simulate
from simulate.cli import main
from simulate.cli.tables import percent, sig
from simulate.settings import CAUTION

REPO = Path(__file__).resolve().parents[2]


def flat(text: str) -> str:
    return " ".join(text.split())


def table_rows(stdout: str, title_start: str) -> list[list[str]]:
    """Whitespace-split rows of the table whose title line starts with ``title_start``."""
    lines = stdout.splitlines()
    start = next(i for i, line in enumerate(lines) if line.startswith(title_start))
    rule = next(i for i in range(start, len(lines)) if lines[i] and set(lines[i]) == {"-"})
    rows = []
    for line in lines[rule + 1:]:
        if not line.strip() or line.startswith(("PGA:", "Storey i ", "effective ", "Left out")):
            break
        rows.append(line.split())
    return rows


def peaks_from_histories(ds):
    """Peak |drift ratio| (record, storey) and peak |storey-1 shear| (record) over the valid steps."""
    drift = np.abs(ds["drift_ratio"].transpose("record", "time", "storey").values)
    shear = np.abs(ds["storey_shear"].transpose("record", "time", "storey").values[:, :, 0])
    return np.nanmax(drift, axis=1), np.nanmax(shear, axis=1)


def last_valid(history: np.ndarray) -> np.ndarray:
    """Value at each record's last finite step; history (record, time, storey)."""
    finite = np.isfinite(history[:, :, 0])
    last = history.shape[1] - 1 - np.argmax(finite[:, ::-1], axis=1)
    return history[np.arange(history.shape[0]), last, :]


def test_nonlinear_demo(tmp_path, monkeypatch):
    """The shipped nonlinear demo: statuses, ductility, both files, and the twin comparison.

    Storey ductility is peak storey deformation / yield deformation Vy / k (common
    practice). The effective strength reduction is the elastic (linear twin) peak
    base shear over the inelastic one, median over records; the drift comparison
    is the median over records of peak drift ratio nonlinear / linear.
    """
    monkeypatch.chdir(REPO)
    out = tmp_path / "nl.nc"
    result = CliRunner().invoke(main, ["run", "configs/demo_nonlinear.toml", "-o", str(out)])
    assert result.exit_code == 0, result.output
    twin_file = tmp_path / "nl-linear.nc"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["nl-linear.nc", "nl.nc"]
    ds = simulate.read_dataset(out)
    lin = simulate.read_dataset(twin_file)
    cfg = simulate.load_config(REPO / "configs" / "demo_nonlinear.toml")
    frame = cfg.frame
    stdout = result.stdout

    # header
    assert "bilinear, hardening 0.03" in stdout
    assert re.search(r"^P-Delta\s+on", stdout, re.M)
    assert re.search(r"^collapse limit\s+storey drift ratio 10\.0 %", stdout, re.M)
    assert flat(CAUTION) in flat(stdout)

    # the twin is the linear frame on the same records, in its own file
    assert list(lin["record"].values) == list(ds["record"].values)
    assert "storey_law" not in lin and "energy_balance_error" not in lin
    assert ds.attrs["linear_twin_results_file"] == "nl-linear.nc"
    np.testing.assert_array_equal(lin["storey_stiffness"].values, frame.stiffness)

    status = [str(s) for s in ds["status"].values]
    ok = np.array([s == "ok" for s in status])
    nl_drift, nl_base = peaks_from_histories(ds)
    li_drift, li_base = peaks_from_histories(lin)
    yield_drift = frame.yield_shear / frame.stiffness
    ductility = nl_drift * frame.height / yield_drift

    # per-excitation table: status and peak ductility of each record
    rows = {row[0]: row for row in table_rows(stdout, "Peaks per excitation")}
    assert sorted(rows) == sorted(str(r) for r in ds["record"].values)
    for r, label in enumerate(ds["record"].values):
        row = rows[str(label)]
        assert row[-1] == status[r]
        assert row[5] == sig(ductility[r].max())

    # storey table: ductility and residual drift over the records with status ok
    residual = np.abs(last_valid(ds["drift_ratio"].transpose("record", "time", "storey").values))
    storeys = {int(row[0]): row[1:] for row in table_rows(stdout, "Storey envelopes")}
    assert sorted(storeys) == list(range(1, frame.n_storeys + 1))
    for i in range(frame.n_storeys):
        row = storeys[i + 1]
        assert row[0] == percent(nl_drift[ok, i].max())
        assert row[6] == sig(ductility[ok, i].max()) and row[7] == sig(ductility[ok, i].mean())
        assert row[8] == percent(residual[ok, i].max()) and row[9] == percent(residual[ok, i].mean())

    # comparison with the linear twin
    ratios = {int(row[0]): row[1] for row in table_rows(stdout, "Against the linear twin")}
    expected = np.median(nl_drift[ok] / li_drift[ok], axis=0)
    assert ratios == {i + 1: sig(expected[i]) for i in range(frame.n_storeys)}
    match = re.search(r"^effective strength reduction R = .*: (\S+)$", stdout, re.M)
    assert match and match.group(1) == sig(np.median(li_base[ok] / nl_base[ok]))
    assert f"linear twin results written to {twin_file}" in stdout

    # what the demo's comments promise: every record finishes, the three stronger motions
    # reach ductility demands of about 1.5 to 4.5 and the weak demo_ridge motion stays elastic
    assert all(status_ == "ok" for status_ in status)
    peak_mu = dict(zip((str(r) for r in ds["record"].values), ductility.max(axis=1)))
    assert peak_mu.pop("demo_ridge") < 1.0
    assert all(1.5 <= mu <= 5.0 for mu in peak_mu.values()), peak_mu


COLLAPSE_CONFIG = """\
title = "weak frame"
[building]
mass = [3.0e5, 3.0e5, 2.5e5]
height = [4.0, 3.2, 3.2]
stiffness = [4.0e8, 3.2e8, 2.4e8]
yield_base_shear_coefficient = 0.05
hardening = 0.0
gravity = "mass"
[analysis]
tail = 1.0
[records]
files = ["*.txt"]
units = "g"
"""


def test_collapse_is_a_result_not_a_crash(tmp_path):
    """A frame made to collapse: 5 % of its weight as base strength, no hardening, P-Delta.

    With P-Delta and no hardening the post-yield storey stiffness is negative
    (-P/h), so a 0.6 g sine sways storey 1 past 10 % drift (it would need more than
    ten times its strength to stay elastic). The collapsed record is reported and
    left out of the storey statistics; the weak record still counts; the run exits 0
    and writes its file.
    """
    t = np.arange(601) * 0.01
    for name, amplitude in (("strong", 0.6), ("weak", 0.02)):
        np.savetxt(tmp_path / f"{name}.txt", np.column_stack([t, amplitude * np.sin(2 * np.pi * 1.5 * t)]),
                   fmt="%.6f")
    config = tmp_path / "weak.toml"
    config.write_text(COLLAPSE_CONFIG)
    out = tmp_path / "weak.nc"
    result = CliRunner().invoke(main, ["run", str(config), "-o", str(out)])
    assert result.exit_code == 0, result.output
    assert out.is_file() and not (tmp_path / "weak-linear.nc").exists()
    ds = simulate.read_dataset(out)
    stdout = result.stdout

    rows = {row[0]: row for row in table_rows(stdout, "Peaks per excitation")}
    assert rows["strong"][-1] == "collapsed" and rows["weak"][-1] == "ok"
    # the collapsed analysis stopped early: the time analysed is shorter than the record
    assert float(rows["strong"][2]) < 6.0 < float(rows["weak"][2]) == 7.0
    assert "Left out: strong collapsed at" in flat(stdout)

    drift, _ = peaks_from_histories(ds)
    weak = list(ds["record"].values).index("weak")
    assert drift[list(ds["record"].values).index("strong")].max() > 0.10
    assert "over the 1 excitation with status ok (1 of 2 left out)" in stdout
    storeys = {int(row[0]): row[1:] for row in table_rows(stdout, "Storey envelopes")}
    for i in range(3):
        # max and mean are the weak record's own peak: the collapsed record is left out
        assert storeys[i + 1][0] == storeys[i + 1][1] == percent(drift[weak, i])


def test_twin_file_goes_next_to_the_output(tmp_path):
    """-o elsewhere: the twin's file is <stem>-linear.nc in the same folder; nothing else is left there."""
    t = np.arange(201) * 0.01
    np.savetxt(tmp_path / "r.txt", np.column_stack([t, 0.3 * np.sin(2 * np.pi * 2.0 * t)]), fmt="%.6f")
    config = tmp_path / "c.toml"
    config.write_text(COLLAPSE_CONFIG.replace("0.05", "0.3").replace("tail = 1.0", "tail = 0.5\nlinear_twin = true"))
    out_dir = tmp_path / "results"
    out_dir.mkdir()
    result = CliRunner().invoke(main, ["run", str(config), "-o", str(out_dir / "case.nc")])
    assert result.exit_code == 0, result.output
    assert sorted(p.name for p in out_dir.iterdir()) == ["case-linear.nc", "case.nc"]
    assert simulate.read_dataset(out_dir / "case-linear.nc").attrs["nonlinear_results_file"] == "case.nc"
