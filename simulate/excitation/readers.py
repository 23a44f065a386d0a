"""Reading ground-motion records from files, and writing swaysim's own record file.

One reader function per format, registered in :data:`READERS`; :data:`SUFFIXES`
maps a file suffix to a format name. A reader is called as
``reader(path, dt, units, name, options)`` (``options`` a dict holding only the
options the reader lists in its ``options`` attribute) and returns a list of
:class:`~simulate.excitation.record.Record` (one or more records per file).

Plain text format (``"text"``)
------------------------------
* Blank lines and lines whose first non-blank characters are ``#``, ``%``,
  ``!`` or ``//`` are comments.
* Values are separated by blanks, tabs, commas or semicolons; double quotes
  around values are ignored.
* Layouts, chosen from the first data line unless ``layout`` is given:

  - one acceleration value per line (the time step ``dt`` must be given);
  - two columns ``time acceleration``;
  - several values per line (``layout="values"``): every line holds the same
    number of values except the last, which may hold fewer; the values are
    read row by row, left to right (``dt`` must be given);
  - a table with a header row of column names, such as a CSV export
    (``column=`` picks the acceleration column by name or 0-based index;
    the time column is ``time_column=``, or else the column whose name is
    ``t`` or ``time``, optionally followed by a unit such as ``time (s)``;
    with no time column ``dt`` must be given). A two-column table whose names
    include such a time name needs no ``column=``. Two blank-separated words
    above two columns of which the first increases uniformly are taken for a
    title line above time, acceleration data.

* Header lines: the first ``skip`` physical lines are ignored (for header
  lines that happen to parse as numbers); after them, leading lines that do
  not parse as numbers are taken as header lines, and the last of them is the
  row of column names when it names as many columns as the data hold. Once
  the numeric block has started, a line that does not parse is an error
  naming that line.
* A small header of our own, in comment lines before the first data line,
  declares the time step, units and layout::

      # dt = 0.005          (seconds; a trailing "s" is allowed)
      # units = cm/s2       (g | m/s2 | cm/s2 or an alias such as gal)
      # layout = values     (values | columns)

  Keys are case-insensitive; other ``key = value`` comments are free text.
  Arguments given in the call win over the header. A time column is checked
  against the time step in force (call or header): a disagreement beyond the
  tolerance below is an error.
* A time column may start at any time but must be uniform: every spacing must
  lie within a relative tolerance of :data:`TIME_STEP_TOLERANCE` (1e-3) of the
  median spacing, and the time step is the mean spacing.
* Line numbers in messages are 1-based physical lines of the file.

NumPy format (``"npy"``)
------------------------
A ``.npy`` array of real numbers: 1-D (acceleration; ``dt`` must be given) or
2-D of shape (n, 2) (time, acceleration; the time column follows the text
rules above, with row numbers in messages counted from 0).

NetCDF (``"netcdf"``)
---------------------
Two kinds of our own files, told apart by their variables:

* a swaysim results file (``simulate.write_dataset``): ``ground_acceleration``
  (record, time) in m/s2 gives one record per label, trimmed of the NaN
  padding after the record's end (the free-vibration tail of zeros is kept;
  the motion is the one applied: scaled and resampled). Rows of floor-force
  excitations carry no ground motion and are left out;
* a record file written by :func:`write_record`: the variable
  ``acceleration`` (time) with ``units`` and ``dt`` attributes, the record's
  name in the global attribute ``record_name`` and its metadata as global
  attributes (text and numbers as they are; other values, and keys that
  would clash with the file's own attributes, JSON-encoded in the one
  attribute ``metadata_json``). Reading gives back the same record.

miniSEED and SAC (``"mseed"``, ``"sac"``), optional
---------------------------------------------------
Read through ObsPy (``pip install 'swaysim[seismo]'``): each trace becomes a
record with ``dt = trace.stats.delta``. The samples are taken as stored:
instrument response removal and unit conversion are the user's business, and
``units`` (default ``"m/s2"``) only declares what the samples already are.
"""

from __future__ import annotations

import difflib
import json
import math
import re
import warnings
from numbers import Integral
from pathlib import Path

import numpy as np

from simulate.files import read_input, write_atomic
from simulate.errors import RecordError, where
from simulate.excitation.record import Record, normalise_units

__all__ = [
    "read_record",
    "read_records",
    "write_record",
    "READERS",
    "SUFFIXES",
    "LAYOUTS",
    "TIME_STEP_TOLERANCE",
    "SEISMO_CAUTION",
]

#: Relative tolerance on the spacing of a time column, and between a given dt and the column.
TIME_STEP_TOLERANCE = 1e-3

#: Values of the ``layout`` option and of the ``# layout = ...`` header key.
LAYOUTS = ("values", "columns")

#: Stored in the metadata of every record read through ObsPy.
SEISMO_CAUTION = (
    "samples taken as stored in the file: instrument response removal, calibration "
    "and unit conversion are the user's business; the units are as declared when reading"
)

_COMMENT_PREFIXES = ("#", "%", "!", "//")
_SEPARATORS = str.maketrans({",": " ", ";": " ", '"': " "})
_HEADER_KEY = re.compile(r"^(?:#|%|!|//)\s*(dt|units|layout)\s*=\s*(.*?)\s*$", re.IGNORECASE)
_DT_VALUE = re.compile(r"^(\S+?)\s*(?:s|sec|seconds?)?$", re.IGNORECASE)
_TIME_NAME = re.compile(r"^(?:t|time)(?:[\s_\-\[\(].*)?$", re.IGNORECASE)


# ------------------------------------------------------------------ plain text
class _TextFile:
    """What a scan of a text record file found: numeric rows, header lines and declarations."""

    def __init__(self):
        self.rows: list[list[float]] = []
        self.lines: list[int] = []           # 1-based physical line of each row
        self.header: dict[str, tuple[object, int]] = {}   # key -> (value, line)
        self.header_lines = 0                # skipped leading lines that are not comments
        self.names_line: tuple[int, str] | None = None    # last leading non-numeric line


def _read_lines(path: Path, source: str) -> list[str]:
    raw = read_input(source, RecordError, "record file")
    return raw.decode("utf-8", errors="replace").splitlines()


def _scan_text(path: Path, source: str, skip: int, values_layout: bool | None) -> _TextFile:
    """Read the numeric block of a text file, its header lines and ``key = value`` declarations.

    ``values_layout`` is True for several values per line, False for columns and
    None when the header may still declare it; row lengths are checked as the
    lines are read so the first offending line is the one reported.
    """
    found = _TextFile()
    rows, line_numbers = found.rows, found.lines
    width = 0           # values on the first data line
    short_line = 0      # a shorter line seen in the values layout (must be the last)
    comment = _COMMENT_PREFIXES
    separators = _SEPARATORS
    lines = _read_lines(path, source)
    for number, line in enumerate(lines, start=1):
        if number <= skip:
            continue
        if rows and not values_layout and _scan_rest_fast(found, lines, number, width):
            break
        text = line.strip()
        if not text:
            continue
        if text.startswith(comment):
            if not rows:
                _header_declaration(found, text, source, number)
            continue
        fields = text.translate(separators).split()
        try:
            values = [float(item) for item in fields]
        except ValueError:
            if not rows:
                found.header_lines += 1
                found.names_line = (number, text)
                continue
            _finite_values(rows, line_numbers, source)  # an earlier non-finite value is reported first
            bad = next(item for item in fields if not _is_number(item))
            raise RecordError(
                f"{where(source, line=number)}: cannot read {bad!r} as a number"
            ) from None
        if not rows:
            width = len(values)
            if values_layout is None:
                values_layout = _declared_layout(found) == "values"
        elif values_layout:
            if short_line:
                raise RecordError(
                    f"{where(source, line=short_line)}: {len(rows[-1])} value(s) on this line "
                    f"but line {line_numbers[0]} has {width}; with several values per line "
                    "only the last line may hold fewer"
                )
            if len(values) > width:
                raise RecordError(
                    f"{where(source, line=number)}: {len(values)} values on this line but "
                    f"line {line_numbers[0]} has {width}; with several values per line "
                    "every line but the last holds the same count"
                )
            if len(values) < width:
                short_line = number
        elif len(values) != width:
            raise RecordError(
                f"{where(source, line=number)}: {len(values)} column(s) found but line "
                f"{line_numbers[0]} has {width}; use one layout for the whole file"
            )
        rows.append(values)
        line_numbers.append(number)
    _finite_values(found.rows, line_numbers, source)
    return found


def _scan_rest_fast(found: _TextFile, lines: list[str], number: int, width: int) -> bool:
    """Read the data lines from line ``number`` on in one call to numpy's C parser.

    Taken only for columns when the rest of the file holds no comment character;
    any line numpy does not accept (another column count, a word, a value Python
    reads but numpy does not) makes it give up, and the line-by-line scan that
    names the offending line carries on instead. Returns True when it read them.
    """
    rest = lines[number - 1:]
    body = "\n".join(rest)
    if any(prefix in body for prefix in ("#", "%", "!", "/")):
        return False
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("error")      # an empty rest is a warning in numpy
            data = np.loadtxt(body.translate(_SEPARATORS).splitlines(), dtype=np.float64, ndmin=2)
    except (ValueError, UserWarning):
        return False
    numbers = [n for n, line in enumerate(rest, start=number) if line.strip()]
    if data.shape[1] != width or len(numbers) != len(data):
        return False
    found.rows = np.concatenate([np.asarray(found.rows, dtype=np.float64), data])
    found.lines.extend(numbers)
    return True


def _too_many_columns(n: int, source: str, number: int, names=None):
    named = f" (named {', '.join(repr(n) for n in names)})" if names else ""
    raise RecordError(
        f"{where(source, line=number)}: {n} columns found{named}; expected one "
        "acceleration value per line or two columns (time, acceleration); pick the "
        "acceleration column with column=, or read several values per line with "
        "layout='values'"
    )


def _header_declaration(found: _TextFile, text: str, source: str, number: int) -> None:
    """Record a ``# dt = ...``, ``# units = ...`` or ``# layout = ...`` comment line."""
    match = _HEADER_KEY.match(text)
    if not match:
        return
    key, raw = match.group(1).lower(), match.group(2)
    here = where(source, line=number)
    if key == "dt":
        value_match = _DT_VALUE.match(raw)
        try:
            value = float(value_match.group(1)) if value_match else float("nan")
        except ValueError:
            value = float("nan")
        if not math.isfinite(value) or value <= 0.0:
            raise RecordError(f"{here}: header dt = {raw!r}: expected a number of seconds > 0")
    elif key == "units":
        value = normalise_units(raw, label=f"{here}: header units")
    else:
        value = raw.lower()
        if value not in LAYOUTS:
            raise RecordError(
                f"{here}: header layout = {raw!r}: expected one of {', '.join(LAYOUTS)}"
            )
    if key in found.header and found.header[key][0] != value:
        first_value, first_line = found.header[key]
        raise RecordError(
            f"{here}: header {key} = {raw!r} contradicts line {first_line} "
            f"({key} = {first_value!r})"
        )
    found.header.setdefault(key, (value, number))


def _declared_layout(found: _TextFile):
    entry = found.header.get("layout")
    return entry[0] if entry else None


def _finite_values(rows, line_numbers, source: str) -> None:
    """Raise naming the line of the first non-finite value in ``rows`` (rows may differ in length)."""
    if len(rows) == 0:
        return
    width = len(rows[0])
    if all(len(row) == width for row in rows):
        # one vectorised check instead of one per value keeps the line loop short
        finite = np.isfinite(np.array(rows, dtype=np.float64)).all(axis=1)
        if not finite.all():
            raise RecordError(f"{where(source, line=line_numbers[int(np.argmin(finite))])}: value is not finite")
        return
    for row, number in zip(rows, line_numbers):
        if not all(math.isfinite(v) for v in row):
            raise RecordError(f"{where(source, line=number)}: value is not finite")


def _is_number(item: str) -> bool:
    try:
        float(item)
    except ValueError:
        return False
    return True


def _split_names(text: str) -> list[str]:
    """Column names of a header row, split on its delimiter (comma, semicolon, tab or blanks)."""
    import csv

    for delimiter in (",", ";", "\t"):
        if delimiter in text:
            cells = next(csv.reader([text], delimiter=delimiter, skipinitialspace=True))
            return [cell.strip() for cell in cells]
    return text.split()


def _column_index(choice, names, n_columns: int, what: str, source: str, names_line) -> int:
    """Resolve a column given by 0-based index (negative from the end) or by name."""
    if isinstance(choice, bool) or not isinstance(choice, (Integral, str)):
        raise RecordError(f"{source}: {what} must be a column name or 0-based index, got {choice!r}")
    if isinstance(choice, Integral):
        index = int(choice)
        if not -n_columns <= index < n_columns:
            raise RecordError(
                f"{source}: {what} {index} is out of range: the file has {n_columns} "
                f"column(s) (0 to {n_columns - 1})"
            )
        return index % n_columns
    if names is None:
        if names_line is None:
            detail = "there is no header row of column names"
        else:
            detail = f"the last header line (line {names_line[0]}) does not name {n_columns} columns"
        raise RecordError(
            f"{source}: {what} {choice!r} is given by name, but {detail}; give a 0-based index"
        )
    folded = [name.casefold() for name in names]
    key = choice.strip().casefold()
    if key in folded:
        return folded.index(key)
    # column names are short ("NS", "EW"), so the hint accepts a looser match than usual
    hint = difflib.get_close_matches(key, folded, n=1, cutoff=0.5)
    suggestion = f"; did you mean {names[folded.index(hint[0])]!r}?" if hint else ""
    raise RecordError(
        f"{where(source, line=names_line[0])}: no column named {choice!r} "
        f"(columns: {', '.join(repr(n) for n in names)}){suggestion}"
    )


def _time_step_from_column(time: np.ndarray, positions, source: str, row_word: str = "") -> float:
    """Return the mean spacing of a uniform time column, or raise naming the first bad line or row.

    ``positions[i]`` is the line (text) or row (arrays) of sample ``i``; ``row_word``
    is ``""`` for file lines (``file:12``) or ``"row"`` for array rows (``file: row 12``).
    """
    spacing = np.diff(time)
    median = float(np.median(spacing))
    if not median > 0.0:
        raise RecordError(
            f"{source}: the time column does not increase (median spacing {median:g} s)"
        )
    bad = np.flatnonzero(np.abs(spacing - median) > TIME_STEP_TOLERANCE * median)
    if bad.size:
        i = int(bad[0])
        position = positions[i + 1]
        here = (where(source, key=f"{row_word} {position}") if row_word
                else where(source, line=position))
        raise RecordError(
            f"{here}: time step {spacing[i]:.6g} s "
            f"(from {time[i]:.6g} to {time[i + 1]:.6g} s) differs from the median "
            f"{median:.6g} s by more than {TIME_STEP_TOLERANCE:g} relative; "
            "records must be uniformly sampled"
        )
    return float((time[-1] - time[0]) / (time.shape[0] - 1))


def _uniformly_increasing(values: np.ndarray) -> bool:
    """True when ``values`` could be a time column (increasing with uniform spacing)."""
    spacing = np.diff(values)
    if not spacing.size:
        return False
    median = float(np.median(spacing))
    return median > 0.0 and bool(np.all(np.abs(spacing - median) <= TIME_STEP_TOLERANCE * median))


def _check_against_column(given: float, column_dt: float, source: str, origin: str) -> None:
    if abs(given - column_dt) > TIME_STEP_TOLERANCE * column_dt:
        raise RecordError(
            f"{source}: dt = {given:g} s was {origin} but the time column has a "
            f"step of {column_dt:.6g} s"
        )


def _read_text(path: Path, dt, units, name, options) -> list[Record]:
    """Read the plain text format described in the module docstring."""
    source = str(path)
    skip = _skip_option(options.get("skip"), source)
    layout = options.get("layout")
    if layout is not None and layout not in LAYOUTS:
        raise RecordError(f"{source}: layout must be one of {', '.join(LAYOUTS)}, got {layout!r}")
    column, time_column = options.get("column"), options.get("time_column")
    if layout == "values" and (column is not None or time_column is not None):
        raise RecordError(f"{source}: column= and time_column= do not apply to layout='values'")
    found = _scan_text(path, source, skip, None if layout is None else layout == "values")
    rows, line_numbers = found.rows, found.lines
    if len(rows) == 0:
        raise RecordError(f"{source}: no acceleration values found")
    if layout is None:
        layout = _declared_layout(found)
        if layout == "values" and (column is not None or time_column is not None):
            raise RecordError(
                f"{source}: the header declares layout = values, which has no columns to pick "
                "with column= or time_column="
            )

    header = {key: value for key, (value, _) in found.header.items()}
    metadata = {"source": source, "format": "text"}
    if found.header_lines or skip:
        metadata["header_lines"] = found.header_lines + skip
    if header:
        metadata["header"] = dict(header)
    if units is None:
        units = header.get("units", "g")
    given_dt = None if dt is None else _given_dt(dt, source)
    if given_dt is None and "dt" in header:
        given_dt, dt_origin = header["dt"], f"declared on line {found.header['dt'][1]}"
    else:
        dt_origin = "given"

    width = len(rows[0])
    time = None
    if layout == "values":
        acceleration = np.fromiter((v for row in rows for v in row), dtype=np.float64)
        metadata["layout"] = "one value per line" if width == 1 else f"{width} values per line"
        need = "one value per line" if width == 1 else "several values per line"
    else:
        data = np.array(rows, dtype=np.float64)
        names = None
        if found.names_line is not None:
            candidate = _split_names(found.names_line[1])
            if len(candidate) == width:
                names = candidate
            if (names and width == 2 and column is None and time_column is None
                    and not any(d in found.names_line[1] for d in ",;\t")
                    and not any(_TIME_NAME.match(n) for n in names)
                    and _uniformly_increasing(data[:, 0])):
                # a two-word title line above time, acceleration data, not column names
                names = None
        acc_index, time_index = _choose_columns(
            column, time_column, names, width, source, found.names_line, line_numbers[0])
        acceleration = data[:, acc_index]
        if time_index is not None:
            time = data[:, time_index]
        if names is None and column is None and time_column is None:
            metadata["layout"] = "one value per line" if width == 1 else "time, acceleration"
        else:
            metadata["layout"] = "columns"
            metadata["column"] = names[acc_index] if names else acc_index
            if time_index is not None:
                metadata["time_column"] = names[time_index] if names else time_index
        need = "one value per line" if width == 1 else f"column {metadata.get('column', acc_index)!r} without a time column"

    if acceleration.shape[0] < 2:
        raise RecordError(
            f"{source}: only 1 acceleration value found (line {line_numbers[0]}); "
            "a record needs at least 2"
        )
    if time is None:
        if given_dt is None:
            raise RecordError(
                f"{source}: {need} needs dt (none given); pass dt= or add a "
                "'# dt = 0.01' comment line before the data"
            )
        step = given_dt
    else:
        step = _time_step_from_column(time, line_numbers, source)
        if given_dt is not None:
            _check_against_column(given_dt, step, source, dt_origin)
        metadata["start_time"] = float(time[0])
    return [Record(
        acceleration=acceleration,
        dt=step,
        units=units,
        name=path.stem if name is None else name,
        metadata=metadata,
    )]


def _choose_columns(column, time_column, names, width, source, names_line, first_line):
    """Return (acceleration column, time column or None) for the column layouts."""
    def resolve(choice, what):
        return _column_index(choice, names, width, what, source, names_line)

    time_index = None if time_column is None else resolve(time_column, "time_column")
    if column is not None:
        acc_index = resolve(column, "column")
        if time_column is None and names:
            time_index = next((i for i, n in enumerate(names)
                               if i != acc_index and _TIME_NAME.match(n)), None)
    elif width == 1:
        acc_index = 0
    elif width == 2:
        if time_index is None and names:
            time_index = next((i for i, n in enumerate(names) if _TIME_NAME.match(n)), None)
            if time_index is None:
                raise RecordError(
                    f"{where(source, line=names_line[0])}: two columns named "
                    f"{names[0]!r} and {names[1]!r}, none of them a time column; "
                    "pick the acceleration column with column="
                )
        if time_index is None:
            time_index = 0
        acc_index = 1 - time_index
    else:
        _too_many_columns(width, source, first_line, names)
    if time_index is not None and time_index == acc_index:
        raise RecordError(f"{source}: the time column and the acceleration column are the same")
    return acc_index, time_index


def _skip_option(skip, source: str) -> int:
    if skip is None:
        return 0
    if isinstance(skip, bool) or not isinstance(skip, Integral) or skip < 0:
        raise RecordError(f"{source}: skip must be a whole number of lines >= 0, got {skip!r}")
    return int(skip)


def _given_dt(dt, source: str) -> float:
    """Return a user-given time step as a float, or raise naming the file."""
    try:
        value = float(dt)
    except (TypeError, ValueError):
        raise RecordError(f"{source}: dt must be a number of seconds, got {dt!r}") from None
    if not math.isfinite(value) or value <= 0.0:
        raise RecordError(f"{source}: dt must be finite and > 0 s, got {dt!r}")
    return value


# ------------------------------------------------------------------ NumPy .npy
def _read_npy(path: Path, dt, units, name, options) -> list[Record]:
    """Read a 1-D (acceleration) or (n, 2) (time, acceleration) ``.npy`` array."""
    source = str(path)
    try:
        data = np.load(path, allow_pickle=False)
    except FileNotFoundError:
        raise RecordError(f"{source}: no such file") from None
    except IsADirectoryError:
        raise RecordError(f"{source}: is a folder, not a record file") from None
    except (OSError, ValueError) as exc:
        raise RecordError(f"{source}: cannot be read as a NumPy .npy array ({exc})") from None
    if not isinstance(data, np.ndarray) or data.dtype.kind not in "iuf":
        kind = getattr(data, "dtype", type(data).__name__)
        raise RecordError(f"{source}: expected an array of real numbers, got {kind}")
    metadata = {"source": source, "format": "npy"}
    units = "g" if units is None else units
    if data.ndim == 1:
        if dt is None:
            raise RecordError(f"{source}: a 1-D array of accelerations needs dt (none given)")
        step, acceleration = _given_dt(dt, source), data
        metadata["layout"] = "acceleration"
    elif data.ndim == 2 and data.shape[1] == 2:
        data = data.astype(np.float64)
        finite = np.isfinite(data).all(axis=1)
        if not finite.all():
            raise RecordError(f"{where(source, key=f'row {int(np.argmin(finite))}')}: value is not finite")
        if data.shape[0] < 2:
            raise RecordError(f"{source}: only {data.shape[0]} row(s); a record needs at least 2")
        time, acceleration = data[:, 0], data[:, 1]
        step = _time_step_from_column(time, range(time.shape[0]), source, "row")
        if dt is not None:
            _check_against_column(_given_dt(dt, source), step, source, "given")
        metadata["layout"] = "time, acceleration"
        metadata["start_time"] = float(time[0])
    else:
        raise RecordError(
            f"{source}: expected a 1-D array (acceleration) or shape (n, 2) "
            f"(time, acceleration), got shape {data.shape}"
        )
    return [Record(acceleration=acceleration, dt=step, units=units,
                   name=path.stem if name is None else name, metadata=metadata)]


# ------------------------------------------------------------------ NetCDF
#: Global attributes of a record file that are the file's own, not the record's metadata.
_RECORD_FILE_ATTRIBUTES = ("title", "software", "conventions", "record_name", "metadata_json")
_ATTRIBUTE_NAME = re.compile(r"^[A-Za-z][A-Za-z0-9_]*$")
_RECORD_FILE_TITLE = "swaysim ground-motion record"


def _open_netcdf(path: Path, source: str):
    import xarray as xr

    if not path.exists():
        raise RecordError(f"{source}: no such file")
    if path.is_dir():
        raise RecordError(f"{source}: is a folder, not a record file")
    try:
        with xr.open_dataset(path, engine="netcdf4", decode_cf=False) as ds:
            return ds.load()
    except (OSError, ValueError, RuntimeError) as exc:
        raise RecordError(f"{source}: cannot be read as NetCDF ({exc})") from None


def _read_netcdf(path: Path, dt, units, name, options) -> list[Record]:
    """Read a swaysim results file or a record file written by :func:`write_record`."""
    source = str(path)
    ds = _open_netcdf(path, source)
    if "ground_acceleration" in ds.variables:
        records = _records_from_results(ds, source, options.get("select"))
    elif "acceleration" in ds.variables:
        records = [_record_from_record_file(ds, source)]
        if options.get("select") is not None:
            records = _select(records, options["select"], source, lambda r: r.name, "record")
    else:
        raise RecordError(
            f"{source}: holds neither 'ground_acceleration' (a swaysim results file) nor "
            "'acceleration' (a swaysim record file)"
        )
    for rec in records:
        if units is not None:
            if normalise_units(units, label=source) != rec.units:
                raise RecordError(
                    f"{source}: record {rec.name!r} is stored in {rec.units}, but units = "
                    f"{units!r} was given; leave units unset for this file"
                )
        if dt is not None:
            given = _given_dt(dt, source)
            if abs(given - rec.dt) > TIME_STEP_TOLERANCE * rec.dt:
                raise RecordError(
                    f"{source}: dt = {given:g} s was given but record {rec.name!r} has a step "
                    f"of {rec.dt:.6g} s"
                )
    return _renamed(records, name)


def _text(value) -> str:
    if isinstance(value, bytes):
        return value.decode("utf-8", errors="replace")
    if isinstance(value, np.ndarray) and value.ndim == 0:
        return _text(value.item())
    return str(value)


def _records_from_results(ds, source: str, select) -> list[Record]:
    var = ds["ground_acceleration"]
    if var.dims != ("record", "time"):
        raise RecordError(
            f"{source}: ground_acceleration has dimensions {var.dims}, expected ('record', 'time')"
        )
    labels = [_text(v) for v in ds["record"].values] if "record" in ds.variables \
        else [str(i) for i in range(var.shape[0])]
    time = np.asarray(ds["time"].values, dtype=np.float64) if "time" in ds.variables else None
    if "analysis_dt" in ds.attrs:
        step = float(ds.attrs["analysis_dt"])
    elif time is not None and time.shape[0] >= 2:
        step = _time_step_from_column(time, range(time.shape[0]), source, "time index")
    else:
        raise RecordError(f"{source}: no time coordinate or analysis_dt attribute to take dt from")
    unit_text = _text(var.attrs.get("units", "m/s2"))
    excitation = ([_text(v) for v in ds["excitation"].values] if "excitation" in ds.variables
                  else ["base-acceleration"] * len(labels))
    values = np.asarray(var.values, dtype=np.float64)
    fill = var.attrs.get("_FillValue")
    if fill is not None:
        values = np.where(values == fill, np.nan, values)
    extra = {key: ds[key].values for key in ("record_source", "scale_factor", "record_dt")
             if key in ds.variables}
    software = _text(ds.attrs.get("software", ""))
    rows = [i for i, kind in enumerate(excitation) if kind != "floor-forces"]
    if not rows:
        raise RecordError(f"{source}: the results hold no ground-motion records (floor forces only)")
    if select is not None:
        rows = _select(rows, select, source, lambda i: labels[i], "record")
    records = []
    for i in rows:
        row = values[i]
        finite = np.isfinite(row)
        n = int(np.argmin(finite)) if not finite.all() else row.shape[0]
        if finite[n:].any():
            raise RecordError(
                f"{source}: record {labels[i]!r}: ground_acceleration is not finite at time "
                f"index {n} but has values after it (expected NaN padding only at the end)"
            )
        results = {key: (_text(val[i]) if val.dtype.kind in "OSU" else float(val[i]))
                   for key, val in extra.items()}
        if software:
            results["software"] = software
        metadata = {"source": source, "format": "netcdf", "kind": "results",
                    "record": labels[i], "results": results}
        records.append(Record(acceleration=row[:n], dt=step, units=unit_text,
                              name=labels[i], metadata=metadata))
    return records


def _record_from_record_file(ds, source: str) -> Record:
    var = ds["acceleration"]
    if var.ndim != 1:
        raise RecordError(f"{source}: acceleration has dimensions {var.dims}, expected ('time',)")
    for key in ("units", "dt"):
        if key not in var.attrs:
            raise RecordError(f"{source}: acceleration has no {key!r} attribute")
    metadata = {}
    for key, value in ds.attrs.items():
        if key in _RECORD_FILE_ATTRIBUTES:
            continue
        metadata[key] = value.item() if isinstance(value, np.generic) else value
    if "metadata_json" in ds.attrs:
        try:
            metadata.update(json.loads(_text(ds.attrs["metadata_json"])))
        except ValueError as exc:
            raise RecordError(f"{source}: attribute metadata_json is not valid JSON ({exc})") from None
    dt_value = var.attrs["dt"]
    dt_value = dt_value.item() if isinstance(dt_value, np.generic) else dt_value
    try:
        return Record(acceleration=np.asarray(var.values, dtype=np.float64), dt=dt_value,
                      units=_text(var.attrs["units"]),
                      name=_text(ds.attrs.get("record_name", Path(source).stem)),
                      metadata=metadata)
    except RecordError as exc:
        raise RecordError(f"{source}: {exc}") from None


def _attribute_value(key: str, value):
    """The value stored as a NetCDF attribute, or None when it goes into metadata_json."""
    if not isinstance(key, str) or not _ATTRIBUTE_NAME.match(key) or key in _RECORD_FILE_ATTRIBUTES:
        return None
    if isinstance(value, str):
        return value
    if isinstance(value, float):
        return float(value)
    if isinstance(value, int) and not isinstance(value, bool) and -2**63 <= value < 2**63:
        return value
    return None


def _json_ready(value, key, label):
    """``value`` with NumPy scalars and arrays made plain, or raise if JSON cannot hold it."""
    if isinstance(value, np.generic):
        return value.item()
    if isinstance(value, np.ndarray):
        return value.tolist()
    if isinstance(value, (str, int, float, bool, type(None))):
        return value
    if isinstance(value, dict):
        return {str(k): _json_ready(v, key, label) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_json_ready(v, key, label) for v in value]
    raise RecordError(
        f"{label}: metadata {key!r} holds a {type(value).__name__}, which a record file "
        "cannot store (use text, numbers, lists and dicts)"
    )


def write_record(record: Record, path) -> Path:
    """Write ``record`` to a NetCDF record file that :func:`read_record` reads back unchanged.

    The file holds the variable ``acceleration`` (dimension ``time``, with a
    ``time`` coordinate in s) in the record's own units, with attributes
    ``units`` and ``dt``; the record's name is the global attribute
    ``record_name`` and its metadata are global attributes (text and numbers as
    they are; other values, and keys that are not plain names or clash with the
    file's own attributes, go JSON-encoded into ``metadata_json``; tuples come
    back as lists). The file is written to a temporary name in the same folder
    and then renamed, so it is never left half-written.

    Parameters
    ----------
    record : Record
    path : str or os.PathLike
        Destination, normally with the suffix ``.nc``.

    Returns
    -------
    pathlib.Path
        ``path``.

    Raises
    ------
    simulate.errors.RecordError
        If the folder does not exist or a metadata value cannot be stored.
    """
    import xarray as xr

    from simulate._version import __version__

    if not isinstance(record, Record):
        raise RecordError(f"write_record expects a Record, got {type(record).__name__}")
    path = Path(path)
    label = str(path)
    attrs = {
        "title": _RECORD_FILE_TITLE,
        "software": f"swaysim {__version__}",
        "conventions": "uniformly sampled ground acceleration; time in s",
        "record_name": record.name,
    }
    encoded = {}
    for key, value in record.metadata.items():
        stored = _attribute_value(key, value)
        if stored is None:
            encoded[str(key)] = _json_ready(value, key, label)
        else:
            attrs[key] = stored
    if encoded:
        attrs["metadata_json"] = json.dumps(encoded)
    acceleration = xr.Variable(
        ("time",), np.asarray(record.acceleration),
        {"units": record.units, "dt": record.dt, "long_name": "ground acceleration"})
    ds = xr.Dataset({"acceleration": acceleration},
                    coords={"time": ("time", record.time, {"units": "s"})}, attrs=attrs)
    encoding = {"acceleration": {"zlib": True, "complevel": 4, "shuffle": True, "_FillValue": None},
                "time": {"_FillValue": None}}
    folder = path.parent if str(path.parent) else Path(".")
    if not folder.is_dir():
        raise RecordError(f"{label}: folder {folder} does not exist")
    return write_atomic(path, lambda tmp: ds.to_netcdf(tmp, engine="netcdf4", format="NETCDF4",
                                                       encoding=encoding))


# ------------------------------------------------------------------ miniSEED, SAC
def _obspy(source: str, what: str):
    try:
        import obspy
    except ImportError:
        raise RecordError(f"{source}: reading {what} needs ObsPy: pip install 'swaysim[seismo]'") from None
    return obspy


def _read_seismo(path: Path, units, name, options, obspy_format: str, what: str) -> list[Record]:
    source = str(path)
    if not path.exists():
        raise RecordError(f"{source}: no such file")
    if path.is_dir():
        raise RecordError(f"{source}: is a folder, not a record file")
    obspy = _obspy(source, what)
    try:
        stream = obspy.read(str(path), format=obspy_format)
    except Exception as exc:  # ObsPy's parsers raise many kinds of errors on a bad file
        raise RecordError(f"{source}: cannot be read as {what} ({type(exc).__name__}: {exc})") from None
    if not len(stream):
        raise RecordError(f"{source}: holds no traces")
    units = "m/s2" if units is None else units
    traces = list(stream)
    if options.get("select") is not None:
        traces = _select(traces, options["select"], source, lambda tr: tr.id, "trace")
    records = []
    for index, trace in enumerate(traces):
        stats = trace.stats
        label = trace.id if trace.id.strip(".") else (
            path.stem if len(traces) == 1 else f"{path.stem}.{index}")
        metadata = {
            "source": source,
            "format": obspy_format.lower(),
            "trace_id": trace.id,
            "network": stats.network,
            "station": stats.station,
            "location": stats.location,
            "channel": stats.channel,
            "start_time": str(stats.starttime),
            "calib": float(stats.calib),
            "caution": SEISMO_CAUTION,
        }
        records.append(Record(acceleration=np.asarray(trace.data, dtype=np.float64),
                              dt=float(stats.delta), units=units, name=label, metadata=metadata))
    return _renamed(records, name)


def _read_mseed(path: Path, dt, units, name, options) -> list[Record]:
    """miniSEED through ObsPy (optional extra ``seismo``); see the module docstring."""
    return _check_dt(_read_seismo(path, units, name, options, "MSEED", "miniSEED"), dt, str(path))


def _read_sac(path: Path, dt, units, name, options) -> list[Record]:
    """SAC through ObsPy (optional extra ``seismo``); see the module docstring."""
    return _check_dt(_read_seismo(path, units, name, options, "SAC", "SAC"), dt, str(path))


def _check_dt(records, dt, source):
    if dt is not None:
        given = _given_dt(dt, source)
        for rec in records:
            if abs(given - rec.dt) > TIME_STEP_TOLERANCE * rec.dt:
                raise RecordError(
                    f"{source}: dt = {given:g} s was given but trace {rec.name!r} has a step "
                    f"of {rec.dt:.6g} s"
                )
    return records


# ------------------------------------------------------------------ helpers
def _select(items, select, source: str, label_of, what: str):
    """Keep the items whose label is ``select`` (one label or a list), in the order asked."""
    wanted = [select] if isinstance(select, str) else list(select)
    by_label = {}
    for item in items:
        by_label.setdefault(label_of(item), item)
    chosen = []
    for label in wanted:
        if label not in by_label:
            hint = difflib.get_close_matches(str(label), list(by_label), n=1, cutoff=0.6)
            suggestion = f"; did you mean {hint[0]!r}?" if hint else ""
            known = ", ".join(repr(k) for k in by_label)
            raise RecordError(f"{source}: no {what} {label!r} (found: {known}){suggestion}")
        chosen.append(by_label[label])
    return chosen


def _renamed(records: list[Record], name) -> list[Record]:
    """Apply a user-given name: the name itself for one record, ``name:label`` for several."""
    if name is None:
        return records
    out = []
    for rec in records:
        new = str(name) if len(records) == 1 else f"{name}:{rec.name}"
        out.append(Record(acceleration=rec.acceleration, dt=rec.dt, units=rec.units,
                          name=new, metadata=rec.metadata))
    return out


def _reader(function, options=()):
    function.options = frozenset(options)
    return function


#: Format name -> reader function ``(path, dt, units, name, options) -> list[Record]``;
#: each reader's ``options`` attribute lists the keyword options it understands.
READERS = {
    "text": _reader(_read_text, ("skip", "layout", "column", "time_column")),
    "npy": _reader(_read_npy),
    "netcdf": _reader(_read_netcdf, ("select",)),
    "mseed": _reader(_read_mseed, ("select",)),
    "sac": _reader(_read_sac, ("select",)),
}

#: File suffix (lower case) -> format name in :data:`READERS`.
SUFFIXES = {
    ".txt": "text",
    ".dat": "text",
    ".csv": "text",
    ".acc": "text",
    ".at2": "text",
    ".asc": "text",
    ".npy": "npy",
    ".nc": "netcdf",
    ".mseed": "mseed",
    ".miniseed": "mseed",
    ".sac": "sac",
}


def read_records(path, dt=None, units=None, name=None, *, format=None, skip=None, layout=None,
                 column=None, time_column=None, select=None) -> list[Record]:
    """Read every ground-motion record a file holds (one for most formats).

    Parameters
    ----------
    path : str or os.PathLike
        Record file. The format is chosen from the suffix (see :data:`SUFFIXES`)
        unless ``format`` is given: ``.txt``, ``.dat``, ``.csv``, ``.acc``,
        ``.at2``, ``.asc`` are plain text, ``.npy`` NumPy, ``.nc`` NetCDF
        (swaysim results or record files), ``.mseed``/``.miniseed`` miniSEED and
        ``.sac`` SAC (both need ObsPy).
    dt : float, optional
        Time step, s. Needed where the file has no time information; checked
        against the file's own time step otherwise (a disagreement beyond
        :data:`TIME_STEP_TOLERANCE` is an error). For text files it wins over a
        ``# dt = ...`` header line.
    units : str, optional
        Units of the acceleration values in the file (``"g"``, ``"m/s2"``,
        ``"cm/s2"`` or an alias). Default: the ``# units = ...`` header line of
        a text file or else ``"g"``; ``"g"`` for ``.npy``; the units stored in a
        NetCDF file (giving other units is an error); ``"m/s2"`` for miniSEED
        and SAC, whose samples are taken as stored (no instrument correction).
    name : str, optional
        Record name; default the file name without suffix (the record label or
        trace id for files holding several records). With several records it
        becomes a prefix: ``name:label``.
    format : str, optional
        A key of :data:`READERS`, overriding the suffix.
    skip : int, optional
        Text: physical lines to ignore at the top of the file.
    layout : {"values", "columns"}, optional
        Text: ``"values"`` reads several values per line row by row.
    column, time_column : str or int, optional
        Text tables: acceleration and time columns, by name or 0-based index.
    select : str or list of str, optional
        NetCDF results: record labels; miniSEED/SAC: trace ids
        (``NET.STA.LOC.CHA``). Default: all.

    Returns
    -------
    list of Record
        Each with ``metadata["source"] = str(path)`` and ``metadata["format"]``.

    Raises
    ------
    simulate.errors.RecordError
        For a missing or unreadable file, an unknown format, an option the
        format does not take, or any content problem; the message names the
        file and, where it applies, the line.
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
    given = {"skip": skip, "layout": layout, "column": column, "time_column": time_column,
             "select": select}
    options = {key: value for key, value in given.items() if value is not None}
    allowed = getattr(reader, "options", frozenset())
    for key in options:
        if key not in allowed:
            takers = sorted(f for f, r in READERS.items() if key in getattr(r, "options", ()))
            raise RecordError(
                f"{source}: option {key}= does not apply to {format!r} files "
                f"(only to: {', '.join(takers)})"
            )
    return reader(path, dt, units, name, options)


def read_record(path, dt=None, units=None, name=None, *, format=None, skip=None, layout=None,
                column=None, time_column=None, select=None) -> Record:
    """Read one ground-motion record from a file.

    Takes the same arguments as :func:`read_records`; a file holding several
    records (a results file, several traces) needs ``select`` to pick one.

    Returns
    -------
    Record
        With ``metadata["source"] = str(path)``.

    Raises
    ------
    simulate.errors.RecordError
        As :func:`read_records`, and when the file holds more than one record
        and none was selected.
    """
    records = read_records(path, dt, units, name, format=format, skip=skip, layout=layout,
                           column=column, time_column=time_column, select=select)
    if len(records) != 1:
        names = ", ".join(repr(rec.name) for rec in records)
        raise RecordError(
            f"{path}: holds {len(records)} records ({names}); pick one with select= "
            "or read them all with read_records()"
        )
    return records[0]
