"""Reading and writing results datasets (NetCDF-4 with compression), written atomically.

Writers and readers register by file suffix, one function each, so another format
can be added without touching the callers.
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

import numpy as np
import xarray as xr

from simulate.errors import InputError

#: zlib level for NetCDF variables: a good size/speed balance for float histories.
COMPRESSION_LEVEL = 4


def _encoding(ds: xr.Dataset) -> dict:
    enc = {}
    for name, var in ds.variables.items():
        if var.dtype.kind == "f" and var.ndim > 0:
            enc[name] = {"zlib": True, "complevel": COMPRESSION_LEVEL, "shuffle": True}
            if var.ndim == 3:
                # one record's history of one floor per chunk reads fast for plots and envelopes
                enc[name]["chunksizes"] = (1, var.shape[1], var.shape[2])
    return enc


def _write_netcdf(ds: xr.Dataset, path: Path) -> None:
    ds.to_netcdf(path, engine="netcdf4", format="NETCDF4", encoding=_encoding(ds))


def _read_netcdf(path: Path) -> xr.Dataset:
    with xr.open_dataset(path, engine="netcdf4") as ds:
        return ds.load()


WRITERS = {".nc": _write_netcdf}
READERS = {".nc": _read_netcdf}


def write_dataset(ds: xr.Dataset, path) -> Path:
    """Write ``ds`` to ``path`` atomically: a temporary file in the same folder, then a rename.

    A crash or a full disk leaves either the old file or none, never half a file.
    """
    path = Path(path)
    try:
        writer = WRITERS[path.suffix.lower()]
    except KeyError:
        raise InputError(f"{path}: unknown results format {path.suffix!r}; use one of {', '.join(WRITERS)}") from None
    folder = path.parent if str(path.parent) else Path(".")
    if not folder.is_dir():
        raise InputError(f"{path}: folder {folder} does not exist")
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".part", dir=folder)
    os.close(fd)
    try:
        writer(ds, Path(tmp))
        # mkstemp creates the file private (0600); give it the usual permissions
        umask = os.umask(0)
        os.umask(umask)
        os.chmod(tmp, 0o666 & ~umask)
        os.replace(tmp, path)
    except BaseException:
        if os.path.exists(tmp):
            os.unlink(tmp)
        raise
    return path


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
    for name in ("record", "status", "record_source", "excitation"):
        if name in ds.variables and ds[name].dtype.kind in "SU":
            ds[name] = ds[name].astype(object)
    return ds
