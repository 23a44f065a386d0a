"""Reading ground-motion records from files.

One function per format, registered in :data:`READERS`; :data:`SUFFIXES` maps a
file suffix to a format name. Every reader takes ``(path, dt, units, name)`` and
returns a :class:`~simulate.excitation.record.Record`.

Plain text format (``"text"``)
------------------------------
* Blank lines and lines whose first non-blank characters are ``#``, ``%``,
  ``!`` or ``//`` are comments.
* Either one acceleration value per line (the time step ``dt`` must then be
  given), or two columns ``time acceleration`` separated by blanks, a comma or
  a semicolon. In the two-column layout the time column may start at any time
  but must be uniform: every spacing must lie within a relative tolerance of
  :data:`TIME_STEP_TOLERANCE` (1e-3) of the median spacing, and the time step
  is the mean spacing. A ``dt`` given as well must agree with it to the same
  tolerance.
* Line numbers in messages are 1-based physical lines of the file.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np

from simulate.errors import RecordError, where
from simulate.excitation.record import Record

__all__ = ["read_record", "READERS", "SUFFIXES", "TIME_STEP_TOLERANCE"]

#: Relative tolerance on the spacing of a time column, and between a given dt and the column.
TIME_STEP_TOLERANCE = 1e-3

_COMMENT_PREFIXES = ("#", "%", "!", "//")
_SEPARATORS = str.maketrans({",": " ", ";": " "})


def _parse_text(path: Path, source: str) -> tuple[np.ndarray, list[int]]:
    """Return the numeric rows of a text file, shape (n_rows, n_columns), and their 1-based lines."""
    try:
        with open(path, encoding="utf-8", errors="replace") as handle:
            lines = handle.read().splitlines()
    except FileNotFoundError:
        raise RecordError(f"{source}: no such file") from None
    except IsADirectoryError:
        raise RecordError(f"{source}: is a folder, not a record file") from None
    except OSError as exc:
        raise RecordError(f"{source}: cannot be read ({exc.strerror or exc})") from None

    rows: list[list[float]] = []
    line_numbers: list[int] = []
    n_columns = 0
    first_data_line = 0
    comment = _COMMENT_PREFIXES
    separators = _SEPARATORS
    for number, line in enumerate(lines, start=1):
        text = line.strip()
        if not text or text.startswith(comment):
            continue
        fields = text.translate(separators).split()
        if len(fields) != n_columns:
            _check_columns(fields, n_columns, first_data_line, source, number)
            n_columns, first_data_line = len(fields), number
        try:
            rows.append([float(item) for item in fields])
        except ValueError:
            _finite_rows(rows, line_numbers, source)  # an earlier non-finite value is reported first
            bad = next(item for item in fields if not _is_number(item))
            raise RecordError(
                f"{where(source, line=number)}: cannot read {bad!r} as a number"
            ) from None
        line_numbers.append(number)
    return _finite_rows(rows, line_numbers, source), line_numbers


def _finite_rows(rows, line_numbers, source: str) -> np.ndarray:
    """Return ``rows`` as a float64 array, or raise naming the line of the first non-finite value."""
    if not rows:
        return np.empty((0, 1), dtype=np.float64)
    # One vectorised check instead of one per value keeps the line loop short.
    data = np.array(rows, dtype=np.float64)
    finite = np.isfinite(data).all(axis=1)
    if not finite.all():
        number = line_numbers[int(np.argmin(finite))]
        raise RecordError(f"{where(source, line=number)}: value is not finite")
    return data


def _is_number(item: str) -> bool:
    try:
        float(item)
    except ValueError:
        return False
    return True


def _check_columns(fields, n_columns: int, first_data_line: int, source: str, number: int):
    """Raise for a column count other than 1 or 2, or one differing from the first data line."""
    if len(fields) > 2 or not fields:
        raise RecordError(
            f"{where(source, line=number)}: {len(fields)} columns found; expected one "
            "acceleration value per line or two columns (time, acceleration)"
        )
    if n_columns:
        raise RecordError(
            f"{where(source, line=number)}: {len(fields)} column(s) found but line "
            f"{first_data_line} has {n_columns}; use one layout for the whole file"
        )


def _time_step_from_column(time: np.ndarray, line_numbers: list[int], source: str) -> float:
    """Return the mean spacing of a uniform time column, or raise naming the first bad line."""
    spacing = np.diff(time)
    median = float(np.median(spacing))
    if not median > 0.0:
        raise RecordError(
            f"{source}: the time column does not increase (median spacing {median:g} s)"
        )
    bad = np.flatnonzero(np.abs(spacing - median) > TIME_STEP_TOLERANCE * median)
    if bad.size:
        i = int(bad[0])
        raise RecordError(
            f"{where(source, line=line_numbers[i + 1])}: time step {spacing[i]:.6g} s "
            f"(from {time[i]:.6g} to {time[i + 1]:.6g} s) differs from the median "
            f"{median:.6g} s by more than {TIME_STEP_TOLERANCE:g} relative; "
            "records must be uniformly sampled"
        )
    return float((time[-1] - time[0]) / (time.shape[0] - 1))


def _read_text(path: Path, dt, units, name) -> Record:
    """Read the plain text format described in the module docstring."""
    source = str(path)
    data, line_numbers = _parse_text(path, source)
    if not data.shape[0]:
        raise RecordError(f"{source}: no acceleration values found")
    if data.shape[0] < 2:
        raise RecordError(
            f"{source}: only 1 acceleration value found (line {line_numbers[0]}); "
            "a record needs at least 2"
        )
    metadata = {"source": source, "format": "text"}
    if data.shape[1] == 1:
        if dt is None:
            raise RecordError(f"{source}: one value per line needs dt (none given)")
        dt = _given_dt(dt, source)
        acceleration = data[:, 0]
        metadata["layout"] = "one value per line"
    else:
        time, acceleration = data[:, 0], data[:, 1]
        column_dt = _time_step_from_column(time, line_numbers, source)
        if dt is not None:
            given = _given_dt(dt, source)
            if abs(given - column_dt) > TIME_STEP_TOLERANCE * column_dt:
                raise RecordError(
                    f"{source}: dt = {given:g} s was given but the time column has a "
                    f"step of {column_dt:.6g} s"
                )
        dt = column_dt
        metadata["layout"] = "time, acceleration"
        metadata["start_time"] = float(time[0])
    return Record(
        acceleration=acceleration,
        dt=dt,
        units=units,
        name=path.stem if name is None else name,
        metadata=metadata,
    )


def _given_dt(dt, source: str) -> float:
    """Return a user-given time step as a float, or raise naming the file."""
    try:
        value = float(dt)
    except (TypeError, ValueError):
        raise RecordError(f"{source}: dt must be a number of seconds, got {dt!r}") from None
    if not math.isfinite(value) or value <= 0.0:
        raise RecordError(f"{source}: dt must be finite and > 0 s, got {dt!r}")
    return value


#: Format name -> reader function ``(path, dt, units, name) -> Record``.
READERS = {"text": _read_text}

#: File suffix (lower case) -> format name in :data:`READERS`.
SUFFIXES = {
    ".txt": "text",
    ".dat": "text",
    ".csv": "text",
    ".acc": "text",
    ".at2": "text",
    ".asc": "text",
}


def read_record(path, dt=None, units="g", name=None, *, format=None) -> Record:
    """Read one ground-motion record from a file.

    Parameters
    ----------
    path : str or os.PathLike
        Record file. The format is chosen from the suffix (see :data:`SUFFIXES`;
        ``.txt``, ``.dat``, ``.csv``, ``.acc``, ``.at2``, ``.asc`` are plain
        text) unless ``format`` is given.
    dt : float, optional
        Time step, s. Required for one value per line; checked against the
        time column otherwise.
    units : str, optional
        Units of the acceleration values in the file (``"g"``, ``"m/s2"``,
        ``"cm/s2"`` or an alias).
    name : str, optional
        Record name; default is the file name without suffix.
    format : str, optional
        A key of :data:`READERS`, overriding the suffix.

    Returns
    -------
    Record
        With ``metadata["source"] = str(path)``.

    Raises
    ------
    simulate.errors.RecordError
        For a missing or unreadable file, an unknown format, or any content
        problem; the message names the file and, where it applies, the line.
    """
    path = Path(path)
    source = str(path)
    if format is None:
        format = SUFFIXES.get(path.suffix.lower())
        if format is None:
            known = ", ".join(sorted(SUFFIXES))
            raise RecordError(
                f"{source}: unknown record file suffix {path.suffix or '(none)'!r} "
                f"(known: {known})"
            )
    reader = READERS.get(format)
    if reader is None:
        raise RecordError(
            f"{source}: unknown record format {format!r} (known: {', '.join(sorted(READERS))})"
        )
    return reader(path, dt, units, name)
