"""Reading and writing results datasets (NetCDF-4, chunked, compressed where it pays), written atomically.

Writers and readers register by file suffix, one function each, so another format
can be added without touching the callers.
"""

from __future__ import annotations

from pathlib import Path

import xarray as xr

from simulate.files import write_atomic
from simulate.errors import InputError

#: zlib level for compressed NetCDF variables.
COMPRESSION_LEVEL = 4

#: Histories (variables along ``time``) are written without zlib unless asked: they are
#: float64 response signals whose low-order bits are noise, and zlib saved about 15 % of
#: their size at about fifteen times the write time (benchmarks/README.md, suite table).
COMPRESS_HISTORIES = False


def is_history(name: str, dims) -> bool:
    """True for a variable along ``time`` (not the ``time`` coordinate itself)."""
    return "time" in dims and name != "time"


def history_layout(shape, compress: bool = COMPRESS_HISTORIES) -> dict:
    """netCDF4 storage of a history of ``shape`` (record first).

    Uncompressed: contiguous, where one record's history of every floor is one
    block already and writing is fastest (about three times faster than chunks).
    Compressed: zlib with byte shuffling in chunks of one record, so reading a
    record for a plot decompresses that record only.
    """
    if not compress:
        return {"zlib": False, "contiguous": True}
    return {"zlib": True, "complevel": COMPRESSION_LEVEL, "shuffle": True, "chunksizes": (1,) + tuple(shape[1:])}


def encoding(ds: xr.Dataset, compress_histories: bool = COMPRESS_HISTORIES) -> dict:
    """Encoding of every float variable: small ones zlib-compressed, histories as asked."""
    enc = {}
    for name, var in ds.variables.items():
        if var.dtype.kind != "f" or var.ndim == 0:
            continue
        if is_history(name, var.dims) and var.dims[0] == "record" and var.shape[0] > 0:
            enc[name] = history_layout(var.shape, compress_histories)
        else:
            enc[name] = {"zlib": True, "complevel": COMPRESSION_LEVEL, "shuffle": True}
    return enc


def _write_netcdf(ds: xr.Dataset, path: Path, compress_histories: bool = COMPRESS_HISTORIES) -> None:
    ds.to_netcdf(path, engine="netcdf4", format="NETCDF4", encoding=encoding(ds, compress_histories))


def _read_netcdf(path: Path) -> xr.Dataset:
    with xr.open_dataset(path, engine="netcdf4") as ds:
        return ds.load()


WRITERS = {".nc": _write_netcdf}
READERS = {".nc": _read_netcdf}


def write_dataset(ds: xr.Dataset, path, compress_histories: bool = COMPRESS_HISTORIES) -> Path:
    """Write ``ds`` to ``path`` durably and atomically (``simulate.files.write_atomic``).

    A crash or a full disk leaves either the old file or none, never half a file.
    Envelopes and other small variables are zlib-compressed; histories only with
    ``compress_histories`` (see :data:`COMPRESS_HISTORIES`).
    """
    path = Path(path)
    try:
        writer = WRITERS[path.suffix.lower()]
    except KeyError:
        raise InputError(f"{path}: unknown results format {path.suffix!r}; use one of {', '.join(WRITERS)}") from None
    return write_atomic(path, lambda tmp: writer(ds, tmp, compress_histories))


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
