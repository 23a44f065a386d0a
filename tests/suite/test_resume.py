"""Checkpoint and resume: a run killed with SIGKILL and resumed equals an uninterrupted run.

The run folder counts a batch as done only once its file is on disk (fsync, atomic
rename), so a kill at any moment loses at most the batches in flight.
"""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest
from click.testing import CliRunner

import simulate as ss
from simulate.cli import main
from simulate.suite.store import BATCH_FOLDER, MANIFEST
from simulate.suite.batchfile import SUFFIX

from .test_runner import assert_same_results, write_case

SWAYSIM = [sys.executable, "-c", "from simulate.cli import main; main()"]


def start_run(config: Path, out: Path, run_dir: Path) -> subprocess.Popen:
    return subprocess.Popen(SWAYSIM + ["run", str(config), "-o", str(out), "--run-dir", str(run_dir),
                                       "--batch-size", "1", "--quiet"],
                            stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, start_new_session=True)


def kill_after_first_batch(config: Path, out: Path, run_dir: Path) -> int:
    """Start ``swaysim run`` and SIGKILL it as soon as one batch file exists; return the batches left."""
    proc = start_run(config, out, run_dir)
    batches = run_dir / BATCH_FOLDER
    try:
        deadline = time.monotonic() + 120.0
        while time.monotonic() < deadline and proc.poll() is None:
            if batches.is_dir() and any(p.suffix == SUFFIX for p in batches.iterdir()):
                break
            time.sleep(0.002)
        os.killpg(proc.pid, signal.SIGKILL)
    finally:
        proc.wait()
        proc.stderr.close()
    return proc.returncode


def test_resume_after_sigkill_equals_an_uninterrupted_run(tmp_path):
    config = write_case(tmp_path / "case", 6, n_steps=1500, analysis="scale = [1.0, 1.5]")
    n_batches = 12
    # the uninterrupted run
    whole = tmp_path / "whole"
    whole.mkdir()
    result = CliRunner().invoke(main, ["run", str(config), "-o", str(whole / "out.nc"), "--batch-size", "1"])
    assert result.exit_code == 0, result.output

    killed = tmp_path / "killed"
    for attempt in range(3):
        # a very fast machine may finish before the kill lands: then try again in a fresh folder
        if killed.exists():
            for path in sorted(killed.rglob("*"), reverse=True):
                path.rmdir() if path.is_dir() else path.unlink()
        killed.mkdir(exist_ok=True)
        run_dir = killed / "out.run"
        code = kill_after_first_batch(config, killed / "out.nc", run_dir)
        finished = sorted(p.name for p in (run_dir / BATCH_FOLDER).glob(f"*{SUFFIX}"))
        if code == -signal.SIGKILL and 0 < len(finished) < n_batches:
            break
    assert code == -signal.SIGKILL
    assert 0 < len(finished) < n_batches
    assert not (killed / "out.nc").exists()
    # a temporary file left by a write that was in flight is ignored and removed
    stray = run_dir / BATCH_FOLDER / ".frame-00011.npz.abcd.part"
    stray.write_bytes(b"half a file")
    before = {name: (run_dir / BATCH_FOLDER / name).read_bytes() for name in finished}

    result = CliRunner().invoke(main, ["run", str(config), "-o", str(killed / "out.nc"),
                                       "--run-dir", str(run_dir), "--resume", "--batch-size", "1"])
    assert result.exit_code == 0, result.output
    assert not stray.exists()
    # the batches that had finished were kept as they were, not run again
    for name, data in before.items():
        assert (run_dir / BATCH_FOLDER / name).read_bytes() == data
    assert len(list((run_dir / BATCH_FOLDER).glob(f"*{SUFFIX}"))) == n_batches
    assert_same_results(ss.read_dataset(killed / "out.nc"), ss.read_dataset(whole / "out.nc"))
    assert "run folder" in result.stdout and "kept" in result.stdout


def test_resume_refuses_a_changed_config_and_touches_nothing(tmp_path):
    config = write_case(tmp_path / "case", 2)
    run_dir = tmp_path / "r.run"
    out = tmp_path / "r.nc"
    result = CliRunner().invoke(main, ["run", str(config), "-o", str(out), "--run-dir", str(run_dir)])
    assert result.exit_code == 0, result.output
    out.unlink()
    snapshot = {p: (p.stat().st_mtime_ns, p.read_bytes()) for p in run_dir.rglob("*") if p.is_file()}
    config.write_text(config.read_text().replace("tail = 0.3", "tail = 0.4"))
    for args in (["--resume"], []):
        result = CliRunner().invoke(main, ["run", str(config), "-o", str(out), "--run-dir", str(run_dir)] + args)
        assert result.exit_code == 2, result.output
        lines = result.stderr.strip().splitlines()
        assert len(lines) == 1 and lines[0].startswith("swaysim: error: ")
        assert str(run_dir) in lines[0] and "different config" in lines[0]
        assert {p: (p.stat().st_mtime_ns, p.read_bytes()) for p in run_dir.rglob("*") if p.is_file()} == snapshot
        assert not out.exists()


def test_resume_refuses_changed_options_and_records(tmp_path):
    config = write_case(tmp_path / "case", 2)
    run_dir = tmp_path / "r.run"
    base = ["run", str(config), "-o", str(tmp_path / "r.nc"), "--run-dir", str(run_dir)]
    assert CliRunner().invoke(main, base).exit_code == 0
    cases = [(["--decimate", "2"], "decimate = 1"), (["--dt", "0.005"], "dt = 0.01"),
             (["--batch-size", "1"], "--batch-size")]
    for extra, words in cases:
        result = CliRunner().invoke(main, base + ["--resume"] + extra)
        assert result.exit_code == 2, result.output
        assert words in result.stderr and len(result.stderr.strip().splitlines()) == 1
    record = tmp_path / "case" / "r01.txt"
    record.write_text(record.read_text() + "\n# edited\n")
    result = CliRunner().invoke(main, base + ["--resume"])
    assert result.exit_code == 2 and "r01.txt changed" in result.stderr


def test_resume_without_a_run_folder_is_a_user_error(tmp_path):
    config = write_case(tmp_path / "case", 1)
    result = CliRunner().invoke(main, ["run", str(config), "-o", str(tmp_path / "r.nc"), "--resume"])
    assert result.exit_code == 2
    assert "--resume" in result.stderr and "r.run" in result.stderr
    assert sorted(p.name for p in tmp_path.iterdir()) == ["case"]


@pytest.mark.parametrize("explicit", [False, True])
def test_an_interrupted_run_folder_is_continued_by_the_same_command(tmp_path, explicit):
    """Running the same command again continues the run folder it left (its finished batches
    are what a new run would compute); the default folder is removed once the results are written."""
    config = write_case(tmp_path / "case", 3)
    out = tmp_path / "r.nc"
    run_dir = tmp_path / ("mine" if explicit else "r.run")
    args = ["run", str(config), "-o", str(out), "--batch-size", "1"] + (["--run-dir", str(run_dir)] if explicit else [])
    assert CliRunner().invoke(main, args).exit_code == 0
    reference = ss.read_dataset(out)
    out.unlink()
    if not explicit:
        # leave a default run folder behind as an interrupted run would
        from simulate.suite import plan_suite, run_suite
        folder = run_suite(plan_suite(ss.load_config(config), batch_size=1), run_dir, quiet=True)
        folder.batch_path("frame-00001").unlink()
    else:
        (run_dir / BATCH_FOLDER / f"frame-00001{SUFFIX}").unlink()
    result = CliRunner().invoke(main, args)
    assert result.exit_code == 0, result.output
    assert "continuing the run in" in result.stderr
    assert_same_results(ss.read_dataset(out), reference)
    assert run_dir.exists() == explicit
    if explicit:
        assert (run_dir / MANIFEST).is_file()
