"""miniSEED and SAC records through the optional ObsPy extra ('swaysim[seismo]')."""

import sys

import numpy as np
import pytest

from simulate.errors import RecordError
from simulate.excitation import read_record, read_records
from simulate.excitation.readers import SEISMO_CAUTION


@pytest.mark.parametrize("suffix, what", [(".mseed", "miniSEED"), (".miniseed", "miniSEED"),
                                          (".sac", "SAC")])
def test_without_obspy_the_message_says_how_to_install(tmp_path, monkeypatch, suffix, what):
    """With ObsPy missing (its import made to fail), the one-line message names the file
    and the extra to install."""
    monkeypatch.setitem(sys.modules, "obspy", None)   # makes 'import obspy' raise ImportError
    path = tmp_path / f"station{suffix}"
    path.write_bytes(b"\x00" * 64)
    with pytest.raises(RecordError) as info:
        read_record(path)
    assert str(info.value) == f"{path}: reading {what} needs ObsPy: pip install 'swaysim[seismo]'"


def test_missing_file_is_reported_before_obspy(tmp_path, monkeypatch):
    monkeypatch.setitem(sys.modules, "obspy", None)
    with pytest.raises(RecordError, match="no such file"):
        read_record(tmp_path / "absent.mseed")


# ------------------------------------------------------------ with ObsPy installed
def _traces(obspy):
    """Two invented traces (network XX is an invented code)."""
    rng = np.random.default_rng(3)
    a = rng.standard_normal(500) * 0.05
    b = rng.standard_normal(300) * 0.02
    head = {"network": "XX", "station": "LAKE", "location": "00", "channel": "HNE", "delta": 0.01}
    first = obspy.Trace(data=a, header=dict(head))
    second = obspy.Trace(data=b, header=dict(head, channel="HNN", delta=0.005))
    return first, second


def test_miniseed_traces_become_records(tmp_path):
    """Traces written by ObsPy's own miniSEED writer (FLOAT64 encoding, lossless) read back
    with their samples, delta as dt, trace id as name and the caution in the metadata."""
    obspy = pytest.importorskip("obspy")
    first, second = _traces(obspy)
    path = tmp_path / "pair.mseed"
    obspy.Stream([first, second]).write(str(path), format="MSEED", encoding="FLOAT64")
    records = read_records(path)
    assert [r.name for r in records] == ["XX.LAKE.00.HNE", "XX.LAKE.00.HNN"]
    np.testing.assert_array_equal(records[0].acceleration, first.data)
    np.testing.assert_array_equal(records[1].acceleration, second.data)
    assert records[0].dt == 0.01 and records[1].dt == 0.005
    assert all(r.units == "m/s2" for r in records)
    meta = records[0].metadata
    assert meta["caution"] == SEISMO_CAUTION and "instrument response" in meta["caution"]
    assert meta["station"] == "LAKE" and meta["format"] == "mseed" and meta["source"] == str(path)

    one = read_record(path, select="XX.LAKE.00.HNN", units="cm/s2", name="north")
    assert one.name == "north" and one.units == "cm/s2" and one.n_steps == 300
    with pytest.raises(RecordError, match="holds 2 records"):
        read_record(path)
    with pytest.raises(RecordError, match="no trace 'XX.LAKE.00.HNZ'.*did you mean"):
        read_record(path, select="XX.LAKE.00.HNZ")
    with pytest.raises(RecordError, match="dt = 0.01 s was given but trace 'XX.LAKE.00.HNN'"):
        read_records(path, dt=0.01)


def test_sac_trace_becomes_a_record(tmp_path):
    """SAC stores float32 samples: they come back as the float32 values ObsPy wrote."""
    obspy = pytest.importorskip("obspy")
    first, _ = _traces(obspy)
    path = tmp_path / "east.sac"
    first.write(str(path), format="SAC")
    rec = read_record(path, units="g")
    np.testing.assert_array_equal(rec.acceleration, first.data.astype(np.float32).astype(np.float64))
    assert rec.dt == pytest.approx(0.01, rel=1e-6) and rec.units == "g"
    assert rec.name == "XX.LAKE.00.HNE" and rec.metadata["format"] == "sac"


def test_not_a_seismic_file(tmp_path):
    pytest.importorskip("obspy")
    path = tmp_path / "text.mseed"
    path.write_text("0.1\n0.2\n")
    with pytest.raises(RecordError) as info:
        read_record(path)
    assert str(info.value).startswith(f"{path}: cannot be read as miniSEED")
