"""Shared reporting helpers of the benchmark scripts (machine line, README sections)."""

from __future__ import annotations

import contextlib
import os
import platform
import re
import subprocess
from pathlib import Path

import numba
import numpy as np
import scipy

README = Path(__file__).with_name("README.md")


def machine() -> str:
    """CPU model, logical CPUs and the versions that matter for the kernels."""
    model = platform.processor() or "unknown CPU"
    with contextlib.suppress(OSError, subprocess.SubprocessError):
        out = subprocess.run(["lscpu"], capture_output=True, text=True).stdout
        found = re.search(r"^Model name:\s*(.+)$", out, re.M)
        if found:
            model = found.group(1).strip()
    try:
        layer = numba.threading_layer()
    except ValueError:  # no parallel kernel has run in this process
        layer = "not started"
    return (f"{model}, {os.cpu_count()} logical CPUs; Python {platform.python_version()}, "
            f"numba {numba.__version__} (threading layer {layer}), "
            f"numpy {np.__version__}, scipy {scipy.__version__}")


def write_section(marker: str, heading: str, table: str) -> None:
    """Replace the ``<!-- marker -->`` block of benchmarks/README.md, or append it under ``heading``."""
    text = README.read_text()
    block = f"<!-- {marker} -->\n{table}\n<!-- end {marker} -->"
    if f"<!-- {marker} -->" in text:
        text = re.sub(rf"<!-- {marker} -->.*?<!-- end {marker} -->", lambda _: block, text, flags=re.S)
    else:
        text += f"\n## {heading}\n\n{block}\n"
    README.write_text(text)
