"""Tests of the ``swaysim`` command line; small helpers that write configs and records."""

from __future__ import annotations

from pathlib import Path

import numpy as np

#: A three-storey frame with one short record; ``{files}`` and ``{extra}`` are filled in.
TINY_CONFIG = """\
title = "tiny test frame"
[building]
name = "tiny"
mass = [3.0e5, 3.0e5, 2.5e5]
height = [4.0, 3.2, 3.2]
stiffness = [4.0e8, 3.2e8, 2.4e8]
[analysis]
tail = 0.5
[records]
files = {files}
units = "g"
{extra}"""


def write_sine_record(path: Path, *, dt=0.01, duration=2.0, frequency=2.0, amplitude=0.2) -> Path:
    """A two-column (time s, acceleration g) sine record."""
    t = np.arange(int(round(duration / dt)) + 1) * dt
    a = amplitude * np.sin(2.0 * np.pi * frequency * t)
    lines = ["# test record: time (s), acceleration (g)"]
    lines += [f"{ti:.4f} {ai:.8f}" for ti, ai in zip(t, a)]
    path.write_text("\n".join(lines) + "\n")
    return path


def write_tiny_case(folder: Path, *, extra: str = "", record_text: str | None = None,
                    record_name: str = "sine.txt", files: str | None = None) -> Path:
    """Write ``tiny.toml`` and its record into ``folder``; return the config path."""
    folder.mkdir(parents=True, exist_ok=True)
    record = folder / record_name
    if record_text is None:
        write_sine_record(record)
    else:
        record.write_text(record_text)
    config = folder / "tiny.toml"
    config.write_text(TINY_CONFIG.format(files=files or f'["{record_name}"]', extra=extra))
    return config
