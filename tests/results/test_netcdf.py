"""NetCDF round trip, compression and atomic writing of results datasets."""

import os

import numpy as np
import pytest
import xarray as xr

import simulate as ss
import simulate.results.netcdf as netcdf
from simulate.results.schema import HISTORIES

from conftest import DAMPING, FRAME5


@pytest.fixture(scope="module")
def results():
    """Two smooth harmonic records of different lengths (one name repeated) and floor forces."""
    frame = ss.ShearFrame(**FRAME5, damping=DAMPING["rayleigh"])
    a = ss.harmonic_ground_motion(0.2, 1.5, 6.0, 0.01, ramp=1.0, name="sine")
    b = ss.harmonic_ground_motion(0.1, 3.0, 4.0, 0.01, ramp=0.5, name="sine")
    f = ss.harmonic_floor_force(5.0e4, 2.0, 3.0, 0.01, floors=[5], n_floors=5, name="shaker")
    return ss.run(frame, [a, b, f], tail=1.0, attrs={"config": "[building]\nstoreys = 5\n"})


def test_round_trip_is_identical(results, tmp_path):
    """write_dataset then read_dataset gives back the same dataset: values, NaN padding,
    dims, coordinates, attributes and text labels (xarray.testing.assert_identical, the
    general-purpose reference for dataset equality)."""
    path = ss.write_dataset(results, tmp_path / "run.nc")
    assert path == tmp_path / "run.nc"
    back = ss.read_dataset(path)
    xr.testing.assert_identical(back, results)
    assert list(back["record"].values) == ["sine", "sine~2", "shaker"]
    assert back["status"].dtype == object
    assert back.attrs["config"] == "[building]\nstoreys = 5\n"
    assert np.isnan(back["displacement"].sel(record="shaker").values[-1]).all()
    envelopes = ss.envelopes(results)
    xr.testing.assert_identical(ss.envelopes(back), envelopes)


def test_envelopes_alone_round_trip(results, tmp_path):
    """An envelopes dataset also survives the round trip (xarray.testing.assert_identical)."""
    env = ss.envelopes(results)
    back = ss.read_dataset(ss.write_dataset(env, tmp_path / "env.nc"))
    xr.testing.assert_identical(back, env)


def test_file_is_compressed_when_asked(results, tmp_path):
    """Smooth histories compress with zlib and byte shuffling: with compress_histories the
    whole file is smaller than the raw float64 bytes of its history variables alone
    (common practice for NetCDF-4/HDF5 storage), and it reads back identical."""
    path = ss.write_dataset(results, tmp_path / "run.nc", compress_histories=True)
    raw = sum(results[name].size * 8 for name in HISTORIES)
    assert os.path.getsize(path) < raw
    xr.testing.assert_identical(ss.read_dataset(path), results)


def test_storage_layout(results, tmp_path):
    """By default histories are stored uncompressed and contiguous; compressed, in chunks of one
    record; envelopes and other small variables are always zlib-compressed (read back with
    netCDF4's own inspection)."""
    import netCDF4

    path = ss.write_dataset(results, tmp_path / "run.nc")
    with netCDF4.Dataset(path) as nc:
        for name in (*HISTORIES, "ground_acceleration"):
            var = nc.variables[name]
            assert var.filters()["zlib"] is False
            assert var.chunking() == "contiguous"
        assert nc.variables["peak_drift_ratio"].filters()["zlib"] is True
    with netCDF4.Dataset(ss.write_dataset(results, tmp_path / "z.nc", compress_histories=True)) as nc:
        assert nc.variables["displacement"].filters()["zlib"] is True
        assert nc.variables["displacement"].chunking() == [1, *nc.variables["displacement"].shape[1:]]


def _partial_writer(ds, path, compress_histories=False):
    with open(path, "wb") as fh:
        fh.write(b"\x89HDF\r\n\x1a\n partial")
    raise OSError("disk full")


def test_failed_write_leaves_the_old_file_and_no_temporary(results, tmp_path, monkeypatch):
    """Atomic write (common practice: write a temporary file in the same folder, then
    rename): a writer that fails half-way leaves an existing destination unchanged and
    no temporary file behind."""
    path = tmp_path / "run.nc"
    ss.write_dataset(results, path)
    before = path.read_bytes()
    monkeypatch.setitem(netcdf.WRITERS, ".nc", _partial_writer)
    with pytest.raises(OSError, match="disk full"):
        ss.write_dataset(results, path)
    assert path.read_bytes() == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["run.nc"]
    xr.testing.assert_identical(ss.read_dataset(path), results)


def test_failed_first_write_leaves_nothing(results, tmp_path, monkeypatch):
    """With no earlier file, a failed write leaves the folder empty (atomic write)."""
    monkeypatch.setitem(netcdf.WRITERS, ".nc", _partial_writer)
    with pytest.raises(OSError):
        ss.write_dataset(results, tmp_path / "new.nc")
    assert list(tmp_path.iterdir()) == []


@pytest.mark.parametrize("name", ["run.csv", "run", "run.nc4"])
def test_unknown_suffix_is_refused(results, tmp_path, name):
    """Formats register by suffix; anything else is a user error naming the file."""
    with pytest.raises(ss.InputError, match="format"):
        ss.write_dataset(results, tmp_path / name)
    assert list(tmp_path.iterdir()) == []


def test_reading_missing_or_broken_files_raises_input_error(tmp_path):
    """A missing file or one that is not NetCDF is a user error naming the file."""
    with pytest.raises(ss.InputError, match="missing.nc"):
        ss.read_dataset(tmp_path / "missing.nc")
    broken = tmp_path / "broken.nc"
    broken.write_bytes(b"not a netcdf file")
    with pytest.raises(ss.InputError, match="broken.nc"):
        ss.read_dataset(broken)
    with pytest.raises(ss.InputError):
        ss.write_dataset(xr.Dataset(), tmp_path / "no-such-folder" / "x.nc")
