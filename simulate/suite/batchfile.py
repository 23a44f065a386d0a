"""The working file of one finished batch in a run folder: NumPy ``.npz`` arrays and a JSON description.

A batch file holds every variable of the batch's results dataset as an
uncompressed array (text as fixed-width Unicode, so nothing is pickled) and one
more entry, ``__meta__``, with the dataset's attributes and each variable's
dimensions, attributes, shape and dtype. It is written and read without xarray's
or HDF5's per-variable costs (about 2 ms against about 60 ms for a batch of
envelopes), which matters because a suite writes one per batch; the results file
the user gets is NetCDF (``store.write_combined``). A file that cannot be read
back (a crash of the machine while it was written) simply does not count as
finished, and the batch runs again.
"""

from __future__ import annotations

import json
import zipfile
from pathlib import Path

import numpy as np
import xarray as xr

from simulate.files import write_atomic
from simulate.results.netcdf import is_history

__all__ = ["SUFFIX", "write_batch", "read_batch", "BatchFile", "BatchFileError"]

SUFFIX = ".npz"
META = "__meta__"


class BatchFileError(ValueError):
    """A batch file that cannot be read (incomplete or not one of ours)."""


def _plain(value):
    """An attribute value as JSON can hold it (NumPy scalars and arrays to Python)."""
    if isinstance(value, np.generic):
        return value.item()
    if isinstance(value, np.ndarray):
        return value.tolist()
    if isinstance(value, (list, tuple)):
        return [_plain(v) for v in value]
    return value


def _attrs(attrs: dict) -> dict:
    return {str(key): _plain(value) for key, value in attrs.items()}


def write_batch(ds: xr.Dataset, path) -> Path:
    """Write the results dataset of one batch to ``path`` durably (temporary file, fsync, rename)."""
    arrays, variables = {}, {}
    for name, var in ds.variables.items():
        values = np.asarray(var.values)
        text = values.dtype == object or values.dtype.kind in "SU"
        if text:
            values = values.astype(str)
        arrays[name] = values
        variables[name] = {"dims": list(var.dims), "attrs": _attrs(var.attrs), "shape": list(values.shape),
                           "dtype": values.dtype.str, "text": bool(text)}
    meta = {"attrs": _attrs(ds.attrs), "variables": variables, "coords": list(ds.coords)}
    arrays[META] = np.frombuffer(json.dumps(meta).encode("utf-8"), dtype=np.uint8)

    def write(tmp: Path) -> None:
        with open(tmp, "wb") as handle:
            np.savez(handle, **arrays)

    return write_atomic(Path(path), write)


class BatchFile:
    """An open batch file: its description at once, its arrays when asked for."""

    def __init__(self, path):
        self.path = Path(path)
        try:
            self._npz = np.load(self.path, allow_pickle=False)
            self.meta = json.loads(self._npz[META].tobytes().decode("utf-8"))
        except (OSError, ValueError, KeyError, EOFError, zipfile.BadZipFile) as exc:
            raise BatchFileError(f"{self.path}: not a readable batch file ({exc})") from None
        self.variables: dict = self.meta["variables"]

    def close(self) -> None:
        self._npz.close()

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.close()

    def array(self, name: str) -> np.ndarray:
        """The values of ``name`` (text as Python ``str`` objects)."""
        try:
            values = self._npz[name]
        except (OSError, ValueError, KeyError, EOFError, zipfile.BadZipFile) as exc:
            raise BatchFileError(f"{self.path}: variable {name!r} cannot be read ({exc})") from None
        return values.astype(object) if self.variables[name]["text"] else values

    def history_names(self) -> list[str]:
        """Variables along ``time`` (not the ``time`` coordinate)."""
        return [name for name, v in self.variables.items() if is_history(name, v["dims"])]

    def variable(self, name: str, lazy: bool = False) -> xr.Variable:
        """``name`` as an xarray Variable; ``lazy``: a dask array that reads the file when computed."""
        info = self.variables[name]
        if lazy:
            import dask
            import dask.array

            data = dask.array.from_delayed(dask.delayed(_read_array)(self.path, name, info["text"]),
                                           shape=tuple(info["shape"]),
                                           dtype=object if info["text"] else np.dtype(info["dtype"]))
        else:
            data = self.array(name)
        return xr.Variable(tuple(info["dims"]), data, info["attrs"])

    def dataset(self, histories: bool = True, lazy: bool = False) -> xr.Dataset:
        """The batch's results dataset (``histories=False`` leaves the variables along ``time`` out)."""
        variables = {}
        for name, info in self.variables.items():
            timed = is_history(name, info["dims"])
            if timed and not histories:
                continue
            variables[name] = self.variable(name, lazy=lazy and timed)
        coords = {name: variables.pop(name) for name in self.meta["coords"] if name in variables}
        return xr.Dataset(variables, coords=coords, attrs=dict(self.meta["attrs"]))


def _read_array(path: Path, name: str, text: bool) -> np.ndarray:
    with np.load(path, allow_pickle=False) as npz:
        values = npz[name]
    return values.astype(object) if text else values


def read_batch(path) -> xr.Dataset:
    """A batch file's dataset, read whole into memory."""
    with BatchFile(path) as batch:
        return batch.dataset()
