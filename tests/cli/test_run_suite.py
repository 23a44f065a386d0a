"""``swaysim run`` suite options and ``swaysim collect``: workers, failures, storage options, run folder."""

from __future__ import annotations

import re

import numpy as np
from click.testing import CliRunner

import simulate as ss
from simulate.cli import main
from simulate.cli.collect import collect_command

from suite.test_runner import assert_same_results, write_case, write_record

if "collect" not in main.commands:
    main.add_command(collect_command)


def invoke(*args):
    return CliRunner().invoke(main, [str(a) for a in args])


def test_two_workers_give_the_same_file_as_one(tmp_path):
    """One thread, two threads and two worker processes write identical results."""
    config = write_case(tmp_path / "case", 3)
    for name, extra in (("one", ["--workers", "1"]), ("two", ["--workers", "2"]),
                        ("processes", ["--workers", "2", "--processes"])):
        (tmp_path / name).mkdir()
        result = invoke("run", config, "-o", tmp_path / name / "out.nc", "--batch-size", "1", *extra)
        assert result.exit_code == 0, result.output
        assert result.stderr == ""
        assert sorted(p.name for p in (tmp_path / name).iterdir()) == ["out.nc"]
    one = ss.read_dataset(tmp_path / "one" / "out.nc")
    for name in ("two", "processes"):
        assert_same_results(ss.read_dataset(tmp_path / name / "out.nc"), one)


def test_mixed_failures_are_explained_and_the_suite_finishes(tmp_path):
    """A good record, a file that cannot be read and an analysis that does not converge (max_iter 2
    and no step splitting: the first yielding step fails) finish with exit 0; the two failures
    get one stderr line each, their status and reason in the file, and a line in the report."""
    case = tmp_path / "case"
    config = write_case(case, 0, analysis="max_iter = 2\nmax_depth = 0",
                        files='["quiet.txt", "broken.txt", "strong.txt"]')
    write_record(case / "quiet.txt", seed=5, n=300, peak=0.02)
    write_record(case / "strong.txt", seed=6, n=300, peak=0.8)
    (case / "broken.txt").write_text("0.00 0.0\n0.01 0.1x\n0.02 0.0\n")
    out = tmp_path / "mixed.nc"
    result = invoke("run", config, "-o", out)
    assert result.exit_code == 0, result.output
    ds = ss.read_dataset(out)
    status = [str(s) for s in ds["status"].values]
    assert status[0] == "ok" and status[2] == "not-converged"
    assert status[1] == "failed: " + status[1].partition(": ")[2] and "broken.txt:2" in status[1]
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 2
    assert lines[0].startswith("swaysim: failure job=frame/broken/1.0 record=broken status=failed reason=")
    assert "broken.txt:2" in lines[0]
    assert re.match(r"swaysim: failure job=frame/strong/1\.0 record=strong status=not-converged "
                    r"reason=\"Newton-Raphson did not converge in the step after \d+\.\d\d s\"$", lines[1])
    stdout = " ".join(result.stdout.split())
    assert "2 of 3 analyses did not finish (1 not-converged, 1 failed)" in stdout
    assert "Left out: broken failed: " in stdout and "strong did not converge" in stdout
    assert "over the 1 excitation with status ok (2 of 3 left out)" in stdout
    assert np.isnan(ds["displacement"].isel(record=1).values).all()


def test_linear_report_leaves_failed_records_out(tmp_path):
    case = tmp_path / "case"
    config = write_case(case, 2, strength="", files='["r01.txt", "broken.txt", "r02.txt"]')
    (case / "broken.txt").write_text("")
    result = invoke("run", config, "-o", tmp_path / "lin.nc")
    assert result.exit_code == 0, result.output
    ds = ss.read_dataset(tmp_path / "lin.nc")
    drift = ds["peak_drift_ratio"].transpose("record", "storey").values[[0, 2]]
    from simulate.cli.tables import percent
    assert "max and mean of the peaks over 2 excitations" in result.stdout
    row = next(line for line in result.stdout.splitlines() if line.startswith("1 "))
    assert row.split()[1] == percent(drift[:, 0].max())
    assert "Failed, left out of the tables: broken (" in " ".join(result.stdout.split())
    assert len(result.stderr.strip().splitlines()) == 1


def test_keep_floors_decimate_shape_the_file(tmp_path):
    config = write_case(tmp_path / "case", 2)
    full = tmp_path / "full.nc"
    assert invoke("run", config, "-o", full).exit_code == 0
    ref = ss.read_dataset(full)
    cases = {"env.nc": ["--keep", "envelopes"], "floors.nc": ["--floors", "1,3"], "dec.nc": ["--decimate", "5"],
             "single.nc": ["--precision", "single", "--compress"]}
    for name, extra in cases.items():
        result = invoke("run", config, "-o", tmp_path / name, *extra)
        assert result.exit_code == 0, result.output
        ds = ss.read_dataset(tmp_path / name)
        np.testing.assert_array_equal(ds["peak_drift_ratio"].values, ref["peak_drift_ratio"].values)
        np.testing.assert_array_equal(ds["residual_drift_ratio"].values, ref["residual_drift_ratio"].values)
        assert result.stdout.split("Storey envelopes")[1] == invoke("run", config, "-o", full).stdout.split(
            "Storey envelopes")[1].replace(str(full), str(tmp_path / name))
    env = ss.read_dataset(tmp_path / "env.nc")
    assert "time" not in env.dims and "displacement" not in env and "ground_acceleration" not in env
    floors = ss.read_dataset(tmp_path / "floors.nc")
    assert floors["displacement"].dims == ("record", "time", "history_floor")
    assert list(floors["history_storey"].values) == [1, 3]
    np.testing.assert_array_equal(floors["storey_shear"].values, ref["storey_shear"].sel(storey=[1, 3]).values)
    dec = ss.read_dataset(tmp_path / "dec.nc")
    np.testing.assert_array_equal(dec["time"].values, ref["time"].values[::5])
    np.testing.assert_array_equal(dec["velocity"].values, ref["velocity"].values[:, ::5])
    assert dec.attrs["history_decimation"] == 5
    single = ss.read_dataset(tmp_path / "single.nc")
    assert single["velocity"].dtype == np.float32
    np.testing.assert_array_equal(single["velocity"].values, ref["velocity"].values.astype(np.float32))
    import netCDF4

    with netCDF4.Dataset(tmp_path / "single.nc") as nc:
        assert nc.variables["velocity"].dtype == np.float32 and nc.variables["velocity"].filters()["zlib"]


def test_storage_option_mistakes_name_the_option(tmp_path):
    config = write_case(tmp_path / "case", 1)
    for extra, words in ((["--floors", "1,7"], ["--floors", "floor 7", "1..3"]),
                         (["--floors", "a,b"], ["--floors"]),
                         (["--keep", "envelopes", "--decimate", "2"], ["--decimate", "envelopes"]),
                         (["--decimate", "0"], ["--decimate"]),
                         (["--keep", "envelopes", "--precision", "single"], ["--precision", "envelopes"])):
        result = invoke("run", config, "-o", tmp_path / "x.nc", *extra)
        assert result.exit_code == 2, result.output
        for word in words:
            assert word in result.stderr
    assert sorted(p.name for p in tmp_path.iterdir()) == ["case"]


def test_collect_writes_the_same_file_as_run(tmp_path):
    config = write_case(tmp_path / "case", 3, analysis="linear_twin = true\nscale = [1.0, 0.5]")
    run_dir = tmp_path / "keep.run"
    result = invoke("run", config, "-o", tmp_path / "out.nc", "--run-dir", run_dir, "--batch-size", "4")
    assert result.exit_code == 0, result.output
    assert f"run folder {run_dir} kept" in " ".join(result.stdout.split())
    result = invoke("collect", run_dir, "-o", tmp_path / "again.nc")
    assert result.exit_code == 0, result.output
    assert "results written to" in result.stdout and "6 analyses" in result.stdout
    for a, b in (("out.nc", "again.nc"), ("out-linear.nc", "again-linear.nc")):
        x, y = ss.read_dataset(tmp_path / a), ss.read_dataset(tmp_path / b)
        for ds in (x, y):
            for key in ("linear_twin_results_file", "nonlinear_results_file"):
                ds.attrs.pop(key, None)
        assert_same_results(x, y)
    assert list(x["record"].values) == ["r01@1", "r01@0.5", "r02@1", "r02@0.5", "r03@1", "r03@0.5"]
    result = invoke("collect", tmp_path / "case", "-o", tmp_path / "x.nc")
    assert result.exit_code == 2 and "not a run folder" in result.stderr


def test_full_disk_keeps_finished_batches_and_resume_completes(tmp_path, monkeypatch):
    """A disk that fills up during the run (simulated: the third batch write fails with ENOSPC,
    as the operating system reports it) stops the run with one line naming the run folder and
    --resume, exit status 2; the finished batches stay, and resuming gives the same results as
    a run that never stopped."""
    import errno

    import simulate.suite.batchfile as batchfile

    config = write_case(tmp_path / "case", 4)
    reference = tmp_path / "ref.nc"
    assert invoke("run", config, "-o", reference, "--batch-size", "1").exit_code == 0
    calls = {"n": 0}
    savez = batchfile.np.savez

    def filling(handle, **arrays):
        calls["n"] += 1
        if calls["n"] == 3:
            raise OSError(errno.ENOSPC, "No space left on device")
        return savez(handle, **arrays)

    monkeypatch.setattr(batchfile.np, "savez", filling)
    out, run_dir = tmp_path / "out.nc", tmp_path / "out.run"
    result = invoke("run", config, "-o", out, "--batch-size", "1")
    assert result.exit_code == 2, result.output
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1 and "no space left" in lines[0] and "2 finished batches are kept" in lines[0]
    assert "--resume" in lines[0] and str(run_dir) in lines[0]
    assert not out.exists() and len(list((run_dir / "batches").glob("*.npz"))) == 2
    assert not list((run_dir / "batches").glob(".*.part"))
    monkeypatch.setattr(batchfile.np, "savez", savez)
    again = invoke("run", config, "-o", out, "--batch-size", "1", "--resume")
    assert again.exit_code == 0, again.output
    assert_same_results(ss.read_dataset(out), ss.read_dataset(reference))


def test_full_disk_while_writing_the_results_file_keeps_the_run_folder(tmp_path, monkeypatch):
    """When only the results file does not fit (simulated ENOSPC), every analysis stays in the
    run folder and the one-line message says how to write the file later."""
    import errno

    import simulate.suite.store as store

    config = write_case(tmp_path / "case", 2)

    def full(*args, **kwargs):
        raise OSError(errno.ENOSPC, "No space left on device")

    monkeypatch.setattr(store, "_append_histories", full)
    out = tmp_path / "out.nc"
    result = invoke("run", config, "-o", out)
    assert result.exit_code == 2, result.output
    line = result.stderr.strip()
    assert "\n" not in line and "no space left" in line and f"swaysim collect {tmp_path / 'out.run'}" in line
    assert not out.exists() and (tmp_path / "out.run" / "manifest.json").is_file()
    monkeypatch.undo()
    assert invoke("collect", tmp_path / "out.run", "-o", out).exit_code == 0
    assert ss.read_dataset(out).sizes["record"] == 2


def test_suite_file_config_runs_and_says_where_the_records_come_from(tmp_path):
    """[records] suite: the header names the suite file; the per-record scale of the suite file
    is applied (a linear frame's peaks scale with it, linearity: common practice)."""
    config = write_case(tmp_path / "case", 1, strength="")
    (tmp_path / "case" / "set.csv").write_text("file,name,scale,units\nr01.txt,plain,,g\nr01.txt,double,2.0,g\n")
    config.write_text(config.read_text().replace('files = ["r*.txt"]\nunits = "g"', 'suite = "set.csv"'))
    result = invoke("run", config, "-o", tmp_path / "out.nc")
    assert result.exit_code == 0, result.output
    assert "2 record files listed in set.csv" in " ".join(result.stdout.split())
    ds = ss.read_dataset(tmp_path / "out.nc")
    np.testing.assert_allclose(ds["peak_drift_ratio"].sel(record="double").values,
                               2.0 * ds["peak_drift_ratio"].sel(record="plain").values, rtol=1e-12)
