"""Analyses other than time histories: static pushover."""

from simulate.analysis.pushover import PATTERNS, load_pattern, pushover

__all__ = ["PATTERNS", "load_pattern", "pushover"]
