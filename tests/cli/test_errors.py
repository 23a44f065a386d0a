"""User mistakes: one line on stderr naming the file and key or line, exit 2, nothing written."""

from __future__ import annotations

import pytest
from click.testing import CliRunner

from simulate.cli import main

from . import write_tiny_case

GOOD = "0.00 0.0\n0.01 0.1\n0.02 0.2\n0.03 0.1\n0.04 0.0\n"

#: The stiffness line of the tiny config; new [building] keys go after it.
STIFFNESS = "stiffness = [4.0e8, 3.2e8, 2.4e8]"

#: case -> (config extra text or replacement, record text, fragments the message must hold)
CASES = {
    "typo in key": dict(edit=("stiffness =", "stifness ="),
                        expect=["tiny.toml", "[building]", "'stifness'", "did you mean 'stiffness'"]),
    "missing record file": dict(files='["absent.txt"]', expect=["tiny.toml", "[records] files", "absent.txt"]),
    "record with NaN": dict(record="0.00 0.0\n0.01 nan\n0.02 0.1\n", expect=["sine.txt:2", "not finite"]),
    "text in a number column": dict(record="# header\n0.00 0.0\n0.01 0.1x\n0.02 0.1\n",
                                    expect=["sine.txt:3", "'0.1x'"]),
    "empty record file": dict(record="# only a comment\n\n", expect=["sine.txt", "no acceleration values"]),
    "non-uniform time column": dict(record="0.00 0.0\n0.01 0.1\n0.02 0.2\n0.05 0.1\n0.06 0.0\n",
                                    expect=["sine.txt:4", "time step"]),
    "negative mass": dict(edit=("mass = [3.0e5, 3.0e5, 2.5e5]", "mass = [3.0e5, -3.0e5, 2.5e5]"),
                          expect=["tiny.toml", "[building] mass", "floor 2", "-300000.0"]),
    "toml syntax": dict(edit=("[analysis]", "[analysis"), expect=["tiny.toml:7", "TOML"]),
    # yielding storeys, P-Delta and the new [damping] / [analysis] keys
    "yield shear zero": dict(edit=(STIFFNESS, STIFFNESS + "\nyield_shear = [1e6, 0, 1e6]"),
                             expect=["tiny.toml", "[building] yield_shear", "storey 2"]),
    "hardening outside [0, 1)": dict(edit=(STIFFNESS, STIFFNESS + "\nyield_shear = 1e6\nhardening = 1.5"),
                                     expect=["tiny.toml", "[building] hardening", "1.5", "[0, 1)"]),
    "unknown law": dict(edit=(STIFFNESS, STIFFNESS + "\nyield_shear = 1e6\nlaw = \"bilnear\""),
                        expect=["tiny.toml", "[building] law", "did you mean 'bilinear'?"]),
    "bouc-wen gamma": dict(edit=(STIFFNESS, STIFFNESS + "\nyield_shear = 1e6\nlaw = \"bouc-wen\"\n"
                                 "[building.bouc_wen]\nbeta = 0.5\ngamma = -0.8"),
                           expect=["tiny.toml", "[building.bouc_wen]", "storey 1", "gamma"]),
    "two strength keys": dict(edit=(STIFFNESS, STIFFNESS + "\nyield_shear = 1e6\nyield_drift_ratio = 0.004"),
                              expect=["tiny.toml", "[building]", "yield_shear and yield_drift_ratio"]),
    "gravity two ways": dict(edit=(STIFFNESS, STIFFNESS + "\ngravity = \"mass\"\nfloor_gravity_load = 1e6"),
                             expect=["tiny.toml", "[building]", "floor_gravity_load and gravity"]),
    "tangent with modal damping": dict(edit=("[analysis]", "[damping]\nmodel = \"modal\"\n"
                                             "stiffness = \"tangent\"\n[analysis]"),
                                       expect=["tiny.toml", "[damping] stiffness", "'modal'"]),
    "twin of a linear frame": dict(edit=("tail = 0.5", "tail = 0.5\nlinear_twin = true"),
                                   expect=["tiny.toml", "[analysis] linear_twin"]),
}


def make_case(tmp_path, case):
    spec = CASES[case]
    config = write_tiny_case(tmp_path / "case", record_text=spec.get("record", GOOD),
                             files=spec.get("files"))
    if "edit" in spec:
        old, new = spec["edit"]
        text = config.read_text()
        assert old in text
        config.write_text(text.replace(old, new, 1))
    return config


@pytest.mark.parametrize("case", list(CASES))
def test_one_line_exit_2_nothing_written(tmp_path, monkeypatch, case):
    config = make_case(tmp_path, case)
    out_dir = tmp_path / "out"
    out_dir.mkdir()
    monkeypatch.chdir(out_dir)
    for args in (["run", str(config), "-o", str(out_dir / "r.nc")], ["run", str(config)]):
        result = CliRunner().invoke(main, args)
        assert result.exit_code == 2, result.output
        lines = result.stderr.strip().splitlines()
        assert len(lines) == 1, result.stderr
        assert lines[0].startswith("swaysim: error: ")
        for fragment in CASES[case]["expect"]:
            assert fragment in lines[0], (fragment, lines[0])
        assert "Traceback" not in result.output
        assert list(out_dir.iterdir()) == []            # no .nc, no temporary part file
    assert sorted(p.name for p in config.parent.iterdir()) == ["sine.txt", "tiny.toml"]


@pytest.mark.parametrize("where", ["before", "after"])
def test_debug_shows_traceback(tmp_path, where):
    config = make_case(tmp_path, "negative mass")
    args = ["--debug", "run", str(config)] if where == "before" else ["run", str(config), "--debug"]
    result = CliRunner().invoke(main, args)
    assert result.exit_code == 2
    assert "Traceback" in result.stderr
    assert result.stderr.strip().splitlines()[-1].startswith("swaysim: error: ")


def test_modes_errors_too(tmp_path):
    config = make_case(tmp_path, "typo in key")
    result = CliRunner().invoke(main, ["modes", str(config)])
    assert result.exit_code == 2
    assert len(result.stderr.strip().splitlines()) == 1 and "'stifness'" in result.stderr


def test_missing_config_file(tmp_path):
    result = CliRunner().invoke(main, ["run", str(tmp_path / "nope.toml")])
    assert result.exit_code == 2
    assert result.stderr.strip() == f"swaysim: error: {tmp_path / 'nope.toml'}: no such config file"


def test_option_mistakes(tmp_path):
    """Click's own usage errors keep exit 2; a --dt coarser than the record names the option."""
    config = make_case(tmp_path, "negative mass")   # never loaded: the option is checked first
    runner = CliRunner()
    assert runner.invoke(main, ["run", str(config), "--method", "leapfrog"]).exit_code == 2
    assert runner.invoke(main, ["run", str(config), "--dt", "-0.1"]).exit_code == 2
    assert runner.invoke(main, ["run", str(config), "--dt", "nan"]).exit_code == 2

    good = write_tiny_case(tmp_path / "good")
    out = tmp_path / "coarse.nc"
    result = runner.invoke(main, ["run", str(good), "--dt", "0.02", "-o", str(out)])
    assert result.exit_code == 2
    assert "--dt 0.02" in result.stderr and "larger than the step" in result.stderr
    assert len(result.stderr.strip().splitlines()) == 1
    assert not out.exists()

    for bad in ("results.csv", str(tmp_path / "no-such-folder" / "r.nc")):
        result = runner.invoke(main, ["run", str(good), "-o", bad])
        assert result.exit_code == 2 and "option -o" in result.stderr


def test_internal_error_is_one_line_exit_1(tmp_path, monkeypatch):
    import simulate.cli.run as run_module

    def broken(*args, **kwargs):
        raise RuntimeError("kernel exploded")

    monkeypatch.setattr(run_module, "run_analysis", broken)
    config = write_tiny_case(tmp_path)
    result = CliRunner().invoke(main, ["run", str(config), "-o", str(tmp_path / "x.nc")])
    assert result.exit_code == 1
    assert result.stderr.strip().splitlines() == [
        "swaysim: internal error: RuntimeError: kernel exploded (run with --debug for the traceback)"]
    debug = CliRunner().invoke(main, ["--debug", "run", str(config), "-o", str(tmp_path / "x.nc")])
    assert debug.exit_code == 1 and "Traceback" in debug.stderr
    assert not (tmp_path / "x.nc").exists()


def test_version():
    result = CliRunner().invoke(main, ["--version"])
    assert result.exit_code == 0 and result.stdout.startswith("swaysim ")
