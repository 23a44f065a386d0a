"""Turning frames and records into analyses: plan, run."""

from simulate.suite.run import run

__all__ = ["run"]
