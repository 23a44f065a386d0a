"""Formatting helpers for the command-line reports: numbers and plain aligned tables.

Tables are plain text (no colours, no box characters) so they read the same on a
terminal, in a pipe and in a log file.
"""

from __future__ import annotations

import math
import textwrap
from dataclasses import dataclass

from simulate.settings import CAUTION

#: Width used to wrap prose (the caution, notes).
TEXT_WIDTH = 88

#: Spaces between table columns.
GAP = 3


def sig(value, digits: int = 3) -> str:
    """``value`` rounded to ``digits`` significant digits, trailing zeros kept.

    Plain decimals for magnitudes from 1e-4 to 1e7, scientific notation outside;
    ``"-"`` for a missing (NaN) value.
    """
    value = float(value)
    if math.isnan(value):
        return "-"
    if math.isinf(value):
        return "inf" if value > 0 else "-inf"
    if value == 0.0:
        return "0"
    exponent = math.floor(math.log10(abs(value)))
    rounded = round(value, digits - 1 - exponent)
    if rounded != 0.0:
        exponent = math.floor(math.log10(abs(rounded)))
    if -4 <= exponent < 7:
        return f"{rounded:.{max(0, digits - 1 - exponent)}f}"
    return f"{value:.{digits - 1}e}"


def percent(ratio, digits: int = 3) -> str:
    """A ratio shown in per cent with ``digits`` significant digits (no % sign)."""
    return sig(100.0 * float(ratio), digits)


@dataclass
class Column:
    """A table column: header (lines separated by newlines) and alignment ``"<"`` or ``">"``."""

    header: str
    align: str = ">"


def render_table(title: str | None, columns: list[Column], rows: list[list[str]],
                 groups: list[tuple[str, int]] | None = None) -> str:
    """Plain text table with an optional row of group labels spanning several columns.

    ``groups`` lists ``(label, number of columns)`` from the left and must cover
    every column; an empty label leaves its columns without a group heading.
    """
    headers = [c.header.split("\n") for c in columns]
    depth = max(len(h) for h in headers)
    headers = [[""] * (depth - len(h)) + h for h in headers]
    widths = [max([len(line) for line in h] + [len(row[i]) for row in rows])
              for i, h in enumerate(headers)]
    if groups:
        if sum(span for _, span in groups) != len(columns):
            raise ValueError("groups must cover every column")
        start = 0
        for label, span in groups:
            spanned = sum(widths[start:start + span]) + GAP * (span - 1)
            if len(label) > spanned:
                widths[start + span - 1] += len(label) - spanned
            start += span

    def line(cells) -> str:
        parts = [f"{cell:{col.align}{w}}" for cell, col, w in zip(cells, columns, widths)]
        return (" " * GAP).join(parts).rstrip()

    out = []
    if title:
        out.append(title)
    if groups:
        parts, start = [], 0
        for label, span in groups:
            spanned = sum(widths[start:start + span]) + GAP * (span - 1)
            parts.append(f"{label:^{spanned}}" if label else " " * spanned)
            start += span
        out.append((" " * GAP).join(parts).rstrip())
    for k in range(depth):
        out.append(line([h[k] for h in headers]))
    out.append("-" * (sum(widths) + GAP * (len(widths) - 1)))
    out.extend(line(row) for row in rows)
    return "\n".join(out)


def wrap(text: str, indent: str = "") -> str:
    """``text`` wrapped to :data:`TEXT_WIDTH` columns."""
    return textwrap.fill(text, width=TEXT_WIDTH, initial_indent=indent, subsequent_indent=indent)


def caution_text() -> str:
    """The caution that ends every report."""
    return wrap(f"Caution: {CAUTION}")


def plural(count: int, word: str) -> str:
    """``"1 record"``, ``"3 records"``."""
    return f"{count} {word}{'' if count == 1 else 's'}"


def number_ranges(numbers) -> str:
    """Sorted whole numbers with runs shortened: ``[1, 2, 3, 5]`` -> ``"1-3, 5"``."""
    numbers = sorted(int(k) for k in numbers)
    parts = []
    start = prev = None
    for k in numbers + [None]:
        if start is not None and (k is None or k != prev + 1):
            parts.append(str(start) if start == prev else f"{start}-{prev}")
            start = None
        if k is not None and start is None:
            start = k
        prev = k
    return ", ".join(parts)


def spread(values) -> str:
    """One value when all are equal, else ``"lowest to highest"`` (3 significant digits, no trailing zeros)."""
    values = [float(v) for v in values]
    low, high = f"{min(values):.3g}", f"{max(values):.3g}"
    return low if low == high else f"{low} to {high}"


def energy_percent(ratio) -> str:
    """An energy balance error in per cent with two decimals; ``"<0.01"`` below that, ``"-"`` for NaN."""
    value = 100.0 * float(ratio)
    if math.isnan(value):
        return "-"
    if 0.0 < abs(value) < 0.005:
        return "<0.01"
    return f"{value:.2f}"
