"""Results datasets: schema, envelopes, NetCDF read/write."""

from simulate.results.compare import compare
from simulate.results.envelopes import envelopes
from simulate.results.netcdf import read_dataset, write_dataset
from simulate.results.statistics import suite_statistics

__all__ = ["compare", "envelopes", "read_dataset", "suite_statistics", "write_dataset"]
