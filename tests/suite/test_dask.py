"""The Dask path: a LocalCluster on 127.0.0.1 gives the same results as one process; a
scheduler address where nothing answers is a one-line user error."""

from __future__ import annotations

import socket

import pytest
from click.testing import CliRunner

import simulate as ss
from simulate.cli import main

from .test_runner import assert_same_results, write_case

pytest.importorskip("distributed")


def test_local_cluster_gives_the_same_results_as_one_process(tmp_path):
    config = write_case(tmp_path / "case", 4, analysis="linear_twin = true")
    outputs = {}
    for name, extra in (("one", []), ("dask", ["--cluster", "local", "--workers", "2"])):
        folder = tmp_path / name
        folder.mkdir()
        result = CliRunner().invoke(main, ["run", str(config), "-o", str(folder / "out.nc"), "--batch-size", "1"]
                                    + extra)
        assert result.exit_code == 0, result.output
        outputs[name] = folder
        assert sorted(p.name for p in folder.iterdir()) == ["out-linear.nc", "out.nc"]
    for file in ("out.nc", "out-linear.nc"):
        assert_same_results(ss.read_dataset(outputs["dask"] / file), ss.read_dataset(outputs["one"] / file))


def test_scheduler_that_does_not_answer_is_a_user_error(tmp_path):
    with socket.socket() as sock:
        sock.bind(("127.0.0.1", 0))
        port = sock.getsockname()[1]
    # the port is closed again: nothing listens there
    config = write_case(tmp_path / "case", 1)
    out = tmp_path / "out" / "r.nc"
    out.parent.mkdir()
    result = CliRunner().invoke(main, ["run", str(config), "-o", str(out), "--scheduler", f"tcp://127.0.0.1:{port}"])
    assert result.exit_code == 2, result.output
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("swaysim: error: --scheduler tcp://127.0.0.1:")
    assert "no Dask scheduler answered" in lines[0]
    assert list(out.parent.iterdir()) == []


def test_scheduler_option_mistakes(tmp_path):
    config = write_case(tmp_path / "case", 1)
    runner = CliRunner()
    for extra, words in ((["--scheduler", "127.0.0.1"], "expected an address"),
                         (["--scheduler", "tcp://127.0.0.1:1", "--cluster", "local"], "give one of them"),
                         (["--scheduler", "tcp://127.0.0.1:1", "--workers", "2"], "--workers"),
                         (["--cluster", "local", "--processes"], "--processes")):
        result = runner.invoke(main, ["run", str(config), "-o", str(tmp_path / "r.nc")] + extra)
        assert result.exit_code == 2, result.output
        assert words in result.stderr and len(result.stderr.strip().splitlines()) == 1
    assert not (tmp_path / "r.nc").exists() and not (tmp_path / "r.run").exists()
