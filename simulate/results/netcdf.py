"""Reading and writing results datasets (NetCDF-4 with compression), written atomically.

Writers and readers register by file suffix, one function each, so another format
can be added without touching the callers.
"""

from __future__ import annotations

from pathlib import Path

import xarray as xr

from simulate.files import write_atomic
from simulate.errors import InputError

#: zlib level for NetCDF variables: a good size/speed balance for float histories.
COMPRESSION_LEVEL = 4


def _encoding(ds: xr.Dataset, compress: bool = True) -> dict:
    enc = {}
    for name, var in ds.variables.items():
        if var.dtype.kind == "f" and var.ndim > 0:
            enc[name] = {"zlib": compress}
            if compress:
                enc[name].update(complevel=COMPRESSION_LEVEL, shuffle=True)
            if var.ndim == 3:
                # one record's history of one floor per chunk reads fast for plots and envelopes
                enc[name]["chunksizes"] = (1, var.shape[1], var.shape[2])
    return enc


def _write_netcdf(ds: xr.Dataset, path: Path, compress: bool = True) -> None:
    ds.to_netcdf(path, engine="netcdf4", format="NETCDF4", encoding=_encoding(ds, compress))


def write_uncompressed(ds: xr.Dataset, path: Path) -> None:
    """NetCDF-4 without zlib, for short-lived working files (a suite's batch files).

    zlib saves only about 15 % on float64 response histories but makes writing them
    about twenty times slower; the final results file keeps the compression.
    """
    _write_netcdf(ds, path, compress=False)


def _read_netcdf(path: Path) -> xr.Dataset:
    with xr.open_dataset(path, engine="netcdf4") as ds:
        return ds.load()


WRITERS = {".nc": _write_netcdf}
READERS = {".nc": _read_netcdf}


def write_dataset(ds: xr.Dataset, path) -> Path:
    """Write ``ds`` to ``path`` durably and atomically (``simulate.files.write_atomic``).

    A crash or a full disk leaves either the old file or none, never half a file.
    """
    path = Path(path)
    try:
        writer = WRITERS[path.suffix.lower()]
    except KeyError:
        raise InputError(f"{path}: unknown results format {path.suffix!r}; use one of {', '.join(WRITERS)}") from None
    return write_atomic(path, lambda tmp: writer(ds, tmp))


def read_dataset(path) -> xr.Dataset:
    """Read a results dataset written by ``write_dataset`` fully into memory."""
    path = Path(path)
    if not path.is_file():
        raise InputError(f"{path}: no such file")
    try:
        reader = READERS[path.suffix.lower()]
    except KeyError:
        raise InputError(f"{path}: unknown results format {path.suffix!r}; use one of {', '.join(READERS)}") from None
    try:
        ds = reader(path)
    except (OSError, ValueError) as exc:
        raise InputError(f"{path}: cannot read results ({exc})") from None
    # text variables come back as Python strings, as run() made them
    for name, var in ds.variables.items():
        if var.dtype.kind in "SU":
            ds[name] = ds[name].astype(object)
    return ds
