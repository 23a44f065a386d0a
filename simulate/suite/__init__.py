"""Turning frames and records into analyses: plan, run, and suites of jobs.

``run`` analyses a list of excitations in this process. A suite (``plan_suite``)
expands a config into jobs, one per (variant, record, scale factor), runs them in
batches on an executor (in-process, process pool, Dask) with a run folder that
survives a crash (``run_suite``), and combines the batches (``open_results``,
``collect``).
"""

from simulate.suite.run import run
from simulate.suite.jobs import Storage, Suite, plan_suite, run_batch
from simulate.suite.executors import DaskExecutor, InProcess, ProcessPool, make_executor
from simulate.suite.store import RunFolder, collect, open_results, run_suite

__all__ = ["run", "Storage", "Suite", "plan_suite", "run_batch", "InProcess", "ProcessPool", "DaskExecutor",
           "make_executor", "RunFolder", "run_suite", "open_results", "collect"]
