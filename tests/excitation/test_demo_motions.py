"""The shipped synthetic demo records: reproducible bytes, readable, stated PGA and band."""

import importlib.util
import re
from pathlib import Path

import numpy as np
import pytest
from scipy import signal

from simulate.excitation import read_record

MOTIONS = Path(__file__).resolve().parents[2] / "motions"


@pytest.fixture(scope="module")
def script():
    spec = importlib.util.spec_from_file_location("make_demo_motions", MOTIONS / "make_demo_motions.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


@pytest.fixture(scope="module")
def fresh(script, tmp_path_factory):
    """Two independent runs of the script into two temporary folders."""
    first = script.write_demo_motions(tmp_path_factory.mktemp("first"))
    second = script.write_demo_motions(tmp_path_factory.mktemp("second"))
    return first, second


def header_value(path, key):
    for line in path.read_text().splitlines():
        match = re.match(rf"#\s*{key}:\s*(\S+)", line)
        if match:
            return match.group(1)
    raise AssertionError(f"{path}: no '{key}:' in the header")


def test_four_records_written(script, fresh):
    first, _ = fresh
    assert len(first) == 4
    assert sorted(p.name for p in first) == sorted(f"{name}.txt" for name in script.DEMO_MOTIONS)


def test_two_runs_give_same_bytes(fresh):
    """Seeded generator (numpy default_rng): the same seed gives the same bytes."""
    first, second = fresh
    for a, b in zip(first, second):
        assert a.read_bytes() == b.read_bytes(), a.name


def test_shipped_files_equal_a_fresh_run(fresh):
    """The files in motions/ are exactly what the script writes (regenerate them if this fails)."""
    for path in fresh[0]:
        shipped = MOTIONS / path.name
        assert shipped.exists(), shipped
        assert shipped.read_bytes() == path.read_bytes(), path.name


@pytest.mark.parametrize("name", ["demo_lakeshore_a", "demo_lakeshore_b", "demo_terrace", "demo_ridge"])
def test_demo_record_reads_back_with_stated_values(name):
    """Each record reads with read_record; dt, units and PGA match its header; size and
    duration stay within the demo limits (20-40 s, PGA 0.15-0.45 g, under 100 kB)."""
    path = MOTIONS / f"{name}.txt"
    text = path.read_text()
    assert "SYNTHETIC" in text.splitlines()[0]
    rec = read_record(path)
    stated_pga = float(header_value(path, "PGA"))
    assert rec.pga == pytest.approx(stated_pga, rel=1e-9)
    assert 0.15 <= stated_pga <= 0.45
    assert rec.dt == pytest.approx(float(header_value(path, "dt")), rel=1e-9)
    assert rec.dt == pytest.approx(0.01, rel=1e-9)
    assert 20.0 <= rec.duration <= 40.0
    assert "acceleration g" in text
    assert path.stat().st_size < 100_000


@pytest.mark.parametrize("name", ["demo_lakeshore_a", "demo_terrace", "demo_ridge"])
def test_power_lies_in_the_stated_band(script, name):
    """Most of the signal power lies inside the Butterworth pass band
    (power spectral density from scipy.signal.welch)."""
    low, high = script.DEMO_MOTIONS[name]["band"]
    rec = read_record(MOTIONS / f"{name}.txt")
    f, psd = signal.welch(rec.acceleration, fs=1.0 / rec.dt, nperseg=512)
    inside = (f >= low) & (f <= high)
    assert psd[inside].sum() / psd.sum() > 0.9


def test_linear_baseline_removed():
    """After the least-squares linear baseline correction the best-fit line through each
    record is zero (numpy.polyfit degree 1 as the independent check)."""
    for path in sorted(MOTIONS.glob("demo_*.txt")):
        rec = read_record(path)
        slope, intercept = np.polyfit(rec.time, rec.acceleration, 1)
        assert abs(intercept) < 1e-4 * rec.pga
        assert abs(slope) * rec.duration < 1e-4 * rec.pga


def test_command_line_argument(script, tmp_path):
    assert script.main([str(tmp_path / "out")]) == 0
    assert len(list((tmp_path / "out").glob("demo_*.txt"))) == 4
    assert script.main(["a", "b"]) == 2
