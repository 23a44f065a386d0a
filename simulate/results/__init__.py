"""Results datasets: schema, envelopes, NetCDF read/write."""

from simulate.results.envelopes import envelopes
from simulate.results.netcdf import read_dataset, write_dataset

__all__ = ["envelopes", "read_dataset", "write_dataset"]
