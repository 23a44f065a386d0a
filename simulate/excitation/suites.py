"""Suites of ground-motion records listed in a hand-written TOML or CSV file.

TOML suite (``.toml``)::

    title = "Far-field set, invented site"      # optional, free text

    [defaults]                 # optional: values for every entry below
    units = "g"
    dt = 0.01

    [[record]]
    file = "records/quake_a.txt"   # relative to the suite file's folder
    component = "H1"
    scale = 1.25

    [[record]]
    file = "records/set_b_*.txt"   # a glob: every match, sorted
    units = "cm/s2"

CSV suite (``.csv``): a header row naming the columns, then one row per entry;
only ``file`` is required, blank cells take no value, lines starting with ``#``
are comments, and the delimiter is a comma (or a semicolon or tab when the
header row uses one)::

    file,dt,units,scale,name,component
    records/quake_a.txt,,g,1.25,a-h1,H1
    records/quake_b.txt,0.005,m/s2,,,

Keys (TOML) and columns (CSV), see :data:`RECORD_KEYS`:

``file``
    Record file or glob pattern (``*``, ``?``, ``[...]``, ``**``), relative to
    the suite file. A glob matching nothing, or a missing file, is an error.
``dt``, ``units``
    Passed to :func:`~simulate.excitation.readers.read_records`.
``scale``
    Factor applied with :meth:`Record.scaled` (recorded in the provenance).
``name``
    Record name; only for an entry that gives exactly one file.
``component``
    Free label such as ``"H1"`` or ``"NS"``, stored in ``metadata["component"]``.
``format``, ``skip``, ``layout``, ``column``, ``time_column``
    Reading options of :func:`~simulate.excitation.readers.read_records`; in a
    CSV cell, a whole number for ``column``/``time_column`` is a 0-based index.

Unknown keys or columns are errors with a "did you mean" hint. Every record
gets ``metadata["suite"]`` (the suite file) and, when given,
``metadata["component"]``.
"""

from __future__ import annotations

import csv
import difflib
import glob
import math
import os
import re
import tomllib
from dataclasses import dataclass, field
from numbers import Integral, Real
from pathlib import Path

from simulate.files import read_input
from simulate.errors import ConfigError, RecordError, where
from simulate.excitation.readers import read_records
from simulate.excitation.record import Record

__all__ = ["read_suite", "suite_entries", "SuiteEntry", "expand_records", "RECORD_KEYS", "DEFAULT_KEYS"]

#: Keys of a ``[[record]]`` entry (TOML) or columns of a CSV suite.
RECORD_KEYS = ("file", "dt", "units", "scale", "name", "component",
               "format", "skip", "layout", "column", "time_column")

#: Keys allowed in ``[defaults]`` and as ``expand_records`` defaults.
DEFAULT_KEYS = tuple(key for key in RECORD_KEYS if key not in ("file", "name"))

_TOP_LEVEL_KEYS = ("title", "defaults", "record")
_GLOB_CHARS = re.compile(r"[*?\[]")
_RECORD_HEADER = re.compile(r"^\s*\[\[\s*record\s*\]\]")
_DEFAULTS_HEADER = re.compile(r"^\s*\[\s*defaults\s*\]")


def _unknown(key, allowed, prefix: str, what: str = "key") -> ConfigError:
    hint = difflib.get_close_matches(str(key), allowed, n=1, cutoff=0.6)
    suggestion = f"; did you mean {hint[0]!r}?" if hint else f"; expected one of {', '.join(allowed)}"
    return ConfigError(f"{prefix}: unknown {what} {key!r}{suggestion}")


def _checked(entry: dict, prefix: str, allowed) -> dict:
    """Type-check the values of one entry (or of the defaults); return them normalised."""
    out = {}
    for key, value in entry.items():
        if key not in allowed:
            raise _unknown(key, allowed, prefix)
        here = f"{prefix}: {key}"
        if key in ("file", "units", "name", "component", "format", "layout"):
            if not isinstance(value, str) or not value.strip():
                raise ConfigError(f"{here}: expected text in quotes, got {value!r}")
            value = value.strip()
        elif key in ("dt", "scale"):
            if isinstance(value, bool) or not isinstance(value, Real) or not math.isfinite(value):
                raise ConfigError(f"{here}: expected a number, got {value!r}")
            value = float(value)
            if key == "dt" and value <= 0.0:
                raise ConfigError(f"{here}: expected a time step > 0 s, got {value!r}")
            if key == "scale" and value == 0.0:
                raise ConfigError(f"{here}: a scale factor of 0 removes the record")
        elif key == "skip":
            if isinstance(value, bool) or not isinstance(value, Integral) or value < 0:
                raise ConfigError(f"{here}: expected a whole number of lines >= 0, got {value!r}")
            value = int(value)
        elif key in ("column", "time_column"):
            if isinstance(value, bool) or not isinstance(value, (Integral, str)) or value == "":
                raise ConfigError(f"{here}: expected a column name or 0-based index, got {value!r}")
        out[key] = value
    return out


def _files(pattern: str, base_dir: Path, prefix: str) -> list[Path]:
    full = os.path.normpath(os.path.join(base_dir, os.path.expanduser(pattern)))
    if _GLOB_CHARS.search(pattern):
        matches = sorted(p for p in glob.glob(full, recursive=True) if os.path.isfile(p))
        if not matches:
            raise ConfigError(f"{prefix}: file {pattern!r} matches no file (looked for {full})")
        return [Path(p) for p in matches]
    if not os.path.isfile(full):
        what = "is a folder" if os.path.isdir(full) else "not found"
        raise ConfigError(f"{prefix}: file {pattern!r} {what} (looked for {full})")
    return [Path(full)]


@dataclass(frozen=True)
class SuiteEntry:
    """One record file of a suite, with its reading options; :meth:`read` reads it.

    Listing the files (and checking that they exist) is kept apart from reading
    them, so that a suite runner can turn a file that cannot be read into a
    failed analysis instead of stopping.
    """

    path: Path
    prefix: str = ""                             # where the file was listed, for messages
    options: dict = field(default_factory=dict)  # dt, units, name and the reading options
    scale: float | None = None
    component: str | None = None
    suite: str | None = None                     # the suite file that listed it

    def read(self) -> list[Record]:
        """The records of the file (RecordError naming the entry and the file)."""
        options = dict(self.options)
        dt, units, name = options.pop("dt", None), options.pop("units", None), options.pop("name", None)
        records = []
        try:
            for rec in read_records(self.path, dt, units, name, **options):
                if self.scale is not None:
                    rec = rec.scaled(self.scale)
                metadata = dict(rec.metadata)
                if self.suite is not None:
                    metadata["suite"] = self.suite
                if self.component is not None:
                    metadata["component"] = self.component
                records.append(Record(acceleration=rec.acceleration, dt=rec.dt, units=rec.units,
                                      name=rec.name, metadata=metadata))
        except RecordError as exc:
            if not self.prefix:
                raise
            raise RecordError(f"{self.prefix}: {exc}") from None
        return records


    def read_one(self) -> Record:
        """The one record of the file (RecordError when it holds several, as ``read_record``)."""
        records = self.read()
        if len(records) != 1:
            names = ", ".join(repr(rec.name) for rec in records)
            where_from = f"{self.prefix}: " if self.prefix else ""
            raise RecordError(f"{where_from}{self.path}: holds {len(records)} records ({names}); "
                              "a suite runs one record per file")
        return records[0]


def _entries(entry: dict, base_dir: Path, prefix: str, suite: str | None) -> list[SuiteEntry]:
    """The files of one checked entry (defaults already merged in); missing files are ConfigErrors."""
    if "file" not in entry:
        raise ConfigError(f"{prefix}: file: missing; expected a record file or pattern")
    paths = _files(entry["file"], base_dir, prefix)
    if "name" in entry and len(paths) > 1:
        raise ConfigError(
            f"{prefix}: name {entry['name']!r} is given but file {entry['file']!r} matches "
            f"{len(paths)} files; a name labels one record"
        )
    options = {key: entry[key] for key in ("dt", "units", "name", "format", "skip", "layout", "column",
                                           "time_column") if key in entry}
    return [SuiteEntry(path=path, prefix=prefix, options=options, scale=entry.get("scale"),
                       component=entry.get("component"), suite=suite) for path in paths]


def _entry_records(entry: dict, base_dir: Path, prefix: str, suite: str | None) -> list[Record]:
    """Read the records of one checked entry (defaults already merged in)."""
    return [rec for item in _entries(entry, base_dir, prefix, suite) for rec in item.read()]


def expand_records(patterns, base_dir=".", *, source=None, **defaults) -> list[Record]:
    """Read every record file matched by ``patterns`` (file names or globs).

    Parameters
    ----------
    patterns : str or list of str
        File names or glob patterns, relative to ``base_dir``; each glob's
        matches are taken in sorted order; a pattern matching nothing is an
        error.
    base_dir : str or os.PathLike, optional
        Folder the patterns are relative to (for a config: the config file's
        folder).
    source : str, optional
        Name used at the start of error messages (for example the config file
        and its key); default ``base_dir``.
    **defaults
        Values for every file: any of :data:`DEFAULT_KEYS` (``dt``, ``units``,
        ``scale``, ``component``, ``format``, ``skip``, ``layout``, ``column``,
        ``time_column``).

    Returns
    -------
    list of Record

    Raises
    ------
    simulate.errors.InputError
        (``ConfigError`` for patterns and values, ``RecordError`` for record
        file content), naming ``source`` and the pattern.
    """
    base_dir = Path(base_dir)
    label = str(source) if source is not None else str(base_dir)
    defaults = _checked({k: v for k, v in defaults.items() if v is not None},
                        f"{label}: defaults", DEFAULT_KEYS)
    if isinstance(patterns, (str, os.PathLike)):
        patterns = [patterns]
    if not isinstance(patterns, (list, tuple)) or not patterns:
        raise ConfigError(f"{label}: expected a non-empty list of record files or patterns, got {patterns!r}")
    records = []
    for i, pattern in enumerate(patterns, start=1):
        pattern = os.fspath(pattern) if isinstance(pattern, os.PathLike) else pattern
        prefix = f"{label}: pattern {i}"
        entry = dict(defaults)
        entry.update(_checked({"file": pattern}, prefix, RECORD_KEYS))
        records.extend(_entry_records(entry, base_dir, prefix, None))
    return records


def read_suite(path) -> list[Record]:
    """Read the records listed in a suite file (TOML or CSV, see the module docstring).

    Parameters
    ----------
    path : str or os.PathLike
        ``.toml`` or ``.csv`` suite file; record paths in it are relative to its
        folder.

    Returns
    -------
    list of Record
        In the order of the entries, each glob's matches sorted.

    Raises
    ------
    simulate.errors.InputError
        ``ConfigError`` for the suite file's own mistakes (naming the suite file
        and the CSV line or the ``[[record]]`` entry and its line),
        ``RecordError`` for record files (naming the suite entry and the record
        file).
    """
    return [rec for entry in suite_entries(path) for rec in entry.read()]


def suite_entries(path) -> list[SuiteEntry]:
    """The record files a suite file lists, with their options, checked but not read.

    Raises ``ConfigError`` for the suite file's own mistakes, a missing record file
    and a glob that matches nothing; reading the files (:meth:`SuiteEntry.read`)
    raises ``RecordError`` for their content.
    """
    path = Path(path)
    source = str(path)
    suffix = path.suffix.lower()
    if suffix not in (".toml", ".csv"):
        raise ConfigError(f"{source}: unknown suite file suffix {path.suffix or '(none)'!r} (known: .csv, .toml)")
    raw = read_input(path, ConfigError, "suite file")
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise ConfigError(f"{source}: cannot be read ({exc})") from None
    reader = _toml_suite if suffix == ".toml" else _csv_suite
    entries = reader(text, source, path.parent)
    if not entries:
        raise ConfigError(f"{source}: lists no records")
    return entries


def _toml_suite(text: str, source: str, base_dir: Path) -> list[SuiteEntry]:
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise ConfigError(f"{source}: not valid TOML ({exc})") from None
    for key in doc:
        if key not in _TOP_LEVEL_KEYS:
            raise _unknown(key, _TOP_LEVEL_KEYS, source, "top-level key")
    lines = text.splitlines()
    defaults_line = next((i for i, line in enumerate(lines, 1) if _DEFAULTS_HEADER.match(line)), None)
    raw_defaults = doc.get("defaults", {})
    if not isinstance(raw_defaults, dict):
        raise ConfigError(f"{source}: defaults must be a table [defaults], got {raw_defaults!r}")
    defaults = _checked(raw_defaults, where(source, "[defaults]", defaults_line), DEFAULT_KEYS)
    entries = doc.get("record", [])
    if isinstance(entries, dict):
        entries = [entries]
    if not isinstance(entries, list) or not all(isinstance(e, dict) for e in entries):
        raise ConfigError(f"{source}: record must be a list of [[record]] tables")
    header_lines = [i for i, line in enumerate(lines, 1) if _RECORD_HEADER.match(line)]
    if len(header_lines) != len(entries):
        header_lines = [None] * len(entries)
    records = []
    for k, (entry, line) in enumerate(zip(entries, header_lines), start=1):
        prefix = where(source, f"[[record]] {k}", line)
        merged = dict(defaults)
        merged.update(_checked(entry, prefix, RECORD_KEYS))
        records.extend(_entries(merged, base_dir, prefix, source))
    return records


def _csv_cell(key: str, cell: str, prefix: str):
    """Convert one CSV cell to the type the key expects."""
    if key in ("dt", "scale"):
        try:
            return float(cell)
        except ValueError:
            raise ConfigError(f"{prefix}: {key}: expected a number, got {cell!r}") from None
    if key == "skip":
        try:
            return int(cell)
        except ValueError:
            raise ConfigError(f"{prefix}: {key}: expected a whole number of lines, got {cell!r}") from None
    if key in ("column", "time_column") and re.fullmatch(r"[+-]?\d+", cell):
        return int(cell)
    return cell


def _csv_suite(text: str, source: str, base_dir: Path) -> list[SuiteEntry]:
    lines = text.splitlines()
    # comment lines become blank so csv.reader keeps counting physical lines
    cleaned = ["" if line.lstrip().startswith("#") else line for line in lines]
    first = next((line for line in cleaned if line.strip()), None)
    if first is None:
        raise ConfigError(f"{source}: lists no records (no header row)")
    delimiter = next((d for d in (",", ";", "\t") if d in first), ",")
    reader = csv.reader(cleaned, delimiter=delimiter, skipinitialspace=True)
    columns = None
    records = []
    for cells in reader:
        number = reader.line_num
        if not any(cell.strip() for cell in cells):
            continue
        cells = [cell.strip() for cell in cells]
        if columns is None:
            columns = [cell.lower() for cell in cells]
            for name in columns:
                if name not in RECORD_KEYS:
                    raise _unknown(name, RECORD_KEYS, where(source, line=number), "column")
                if columns.count(name) > 1:
                    raise ConfigError(f"{where(source, line=number)}: column {name!r} appears twice")
            if "file" not in columns:
                raise ConfigError(f"{where(source, line=number)}: the header row has no 'file' column")
            continue
        prefix = where(source, line=number)
        if len(cells) > len(columns):
            raise ConfigError(
                f"{prefix}: {len(cells)} cells but the header row names {len(columns)} columns"
            )
        entry = {key: _csv_cell(key, cell, prefix)
                 for key, cell in zip(columns, cells) if cell != ""}
        if "file" not in entry:
            raise ConfigError(f"{prefix}: file: empty; expected a record file or pattern")
        records.extend(_entries(_checked(entry, prefix, RECORD_KEYS), base_dir, prefix, source))
    return records

