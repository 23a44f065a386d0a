"""The shipped synthetic demo records: reproducible bytes, readable, stated PGA, frequency
content and spectral match, ending at rest."""

import importlib.util
import re
from pathlib import Path

import numpy as np
import pytest
from scipy import integrate, signal

from simulate.excitation import read_record
from simulate.excitation.synthetic import kanai_tajimi_psd
from simulate.excitation.targets import EC8Spectrum

from .test_scaling import lsim_psa

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
        match = re.match(rf"#\s*{key}\s*[=:]\s*(\S+)", line, re.IGNORECASE)
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
    assert header_value(path, "units") == "g" and rec.units == "g"
    assert path.stat().st_size < 100_000


@pytest.mark.parametrize("name", ["demo_lakeshore_a", "demo_ridge"])
def test_power_lies_where_the_filter_puts_it(script, name):
    """Filtered-noise records: at least 75 % of the record's power (scipy.signal.welch) lies
    in the frequency band that holds the central 90 % of the power of the Kanai-Tajimi /
    Clough-Penzien spectral density of its stated parameters (Kanai 1957, Tajimi 1960;
    Clough and Penzien, Dynamics of Structures)."""
    params = script.DEMO_MOTIONS[name]
    assert params["kind"] == "kanai-tajimi"
    rec = read_record(MOTIONS / f"{name}.txt")
    f, psd = signal.welch(rec.acceleration, fs=1.0 / rec.dt, nperseg=512)
    formula = kanai_tajimi_psd(2.0 * np.pi * f, 1.0, **params["filter"])
    cumulative = np.cumsum(formula) / formula.sum()
    low, high = f[np.searchsorted(cumulative, 0.05)], f[np.searchsorted(cumulative, 0.95)]
    inside = (f >= low) & (f <= high)
    assert psd[inside].sum() / psd.sum() > 0.75


@pytest.mark.parametrize("name", ["demo_lakeshore_b", "demo_terrace"])
def test_matched_records_follow_their_target(script, name):
    """Spectrum-compatible records: the 5 %-damped spectrum (scipy.signal.lsim, 40 points
    per period) at 12 periods of the band lies within the deviation stated in the header
    (plus 0.5 % for the 6-digit rounding of the file) of the EN 1998-1 3.2.2.2 target, and
    that deviation is at most 10 %."""
    params = script.DEMO_MOTIONS[name]
    assert params["kind"] == "spectrum-compatible"
    path = MOTIONS / f"{name}.txt"
    match = re.search(r"^# match = largest deviation ([0-9.]+) %", path.read_text(), re.MULTILINE)
    stated = float(match.group(1)) / 100.0
    assert stated <= 0.10
    rec = read_record(path)
    target = EC8Spectrum(**params["target"])
    periods = np.geomspace(*params["band"], 12)
    ratio = lsim_psa(rec, periods, points_per_period=40) / target(periods)
    assert np.all(np.abs(ratio - 1.0) <= stated + 0.005), ratio


def test_records_end_at_rest():
    """Baseline correction: velocity and displacement (scipy.integrate.cumulative_trapezoid)
    end at zero, up to the rounding of the written values (0.1 % of their peaks)."""
    for path in sorted(MOTIONS.glob("demo_*.txt")):
        rec = read_record(path)
        v = integrate.cumulative_trapezoid(rec.acceleration, dx=rec.dt, initial=0.0)
        d = integrate.cumulative_trapezoid(v, dx=rec.dt, initial=0.0)
        assert abs(v[-1]) < 1e-3 * np.abs(v).max(), path.name
        assert abs(d[-1]) < 1e-3 * np.abs(d).max(), path.name


def test_command_line_argument(script, tmp_path):
    assert script.main([str(tmp_path / "out")]) == 0
    assert len(list((tmp_path / "out").glob("demo_*.txt"))) == 4
    assert script.main(["a", "b"]) == 2
