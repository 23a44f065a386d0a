"""Results datasets: schema, envelopes, NetCDF read/write, comparison and suite statistics."""

from importlib import import_module

from simulate.results.envelopes import envelopes
from simulate.results.netcdf import read_dataset, write_dataset

_LAZY = {"compare": "simulate.results.compare", "suite_statistics": "simulate.results.statistics"}

__all__ = ["compare", "envelopes", "read_dataset", "suite_statistics", "write_dataset"]


def __getattr__(name):
    try:
        module = _LAZY[name]
    except KeyError:
        raise AttributeError(f"module 'simulate.results' has no attribute {name!r}") from None
    value = getattr(import_module(module), name)
    globals()[name] = value
    return value
