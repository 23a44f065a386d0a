"""One exception family for mistakes a user can make (config, record files, options).

The message names the file, key or line and what was expected; the command line
prints it as one line and exits with status 2.
"""

from __future__ import annotations


class InputError(ValueError):
    """A user-caused error: bad config, bad record file, bad option value."""


class ConfigError(InputError):
    """A configuration file or config-like mapping is invalid."""


class RecordError(InputError):
    """A ground-motion record or load file cannot be used."""


class StorageError(InputError):
    """A file cannot be written for want of space (a full disk or quota): the user must make room."""


def where(source: str | None, key: str | None = None, line: int | None = None) -> str:
    """Format a location prefix such as ``demo.toml: [building] mass`` or ``r1.txt:12``."""
    parts = source or "<input>"
    if line is not None:
        parts = f"{parts}:{line}"
    if key:
        parts = f"{parts}: {key}"
    return parts
