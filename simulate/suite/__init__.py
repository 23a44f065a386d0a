"""Turning frames and records into analyses: plan, run, and suites of jobs.

``run`` analyses a list of excitations in this process. A suite (``plan_suite``)
expands a config into jobs, one per (variant, record, scale factor), runs them in
batches on an executor (in-process, process pool, Dask) with a run folder that
survives a crash (``run_suite``), and combines the batches (``open_results``,
``collect``). The suite machinery imports on first use.
"""

from importlib import import_module

from simulate.suite.run import run

_LAZY = {
    **dict.fromkeys(("Storage", "Suite", "plan_suite", "run_batch"), "simulate.suite.jobs"),
    **dict.fromkeys(("DaskExecutor", "InProcess", "ProcessPool", "make_executor"), "simulate.suite.executors"),
    **dict.fromkeys(("RunFolder", "collect", "open_results", "run_suite"), "simulate.suite.store"),
}

__all__ = ["run", *_LAZY]


def __getattr__(name):
    try:
        module = _LAZY[name]
    except KeyError:
        raise AttributeError(f"module 'simulate.suite' has no attribute {name!r}") from None
    value = getattr(import_module(module), name)
    globals()[name] = value
    return value
