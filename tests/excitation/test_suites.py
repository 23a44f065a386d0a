"""Suite files (TOML and CSV) and glob expansion: every record, in order, with its options,
and every mistake named with the suite file and its line or entry."""

import glob
import os

import numpy as np
import pytest

from simulate.errors import ConfigError, InputError, RecordError
from simulate.excitation import expand_records, read_suite


@pytest.fixture
def motions(tmp_path):
    """Invented record files in a 'records' folder beside the suite files."""
    folder = tmp_path / "records"
    folder.mkdir()
    for i, name in enumerate(["set_b_2.txt", "set_b_1.txt", "set_b_10.txt"]):
        (folder / name).write_text("".join(f"{k * 0.01:.2f} {0.1 * (i + 1) * k}\n" for k in range(5)))
    (folder / "single.txt").write_text("# dt = 0.02\n# units = cm/s2\n1\n2\n3\n")
    (folder / "table.csv").write_text("time,NS,EW\n0,1,2\n0.01,3,4\n0.02,5,6\n")
    return folder


def write(tmp_path, name, text):
    path = tmp_path / name
    path.write_text(text)
    return path


def test_toml_suite_with_defaults_globs_scale_and_component(tmp_path, motions):
    """Globs expand in sorted order (Python's sorted(glob.glob) as the reference), paths are
    relative to the suite file, [defaults] apply unless an entry overrides them, scale goes
    through Record.scaled and component into the metadata."""
    suite = write(tmp_path, "suite.toml", """
title = "Invented far-field set"

[defaults]
units = "m/s2"
component = "H1"

[[record]]
file = "records/single.txt"
scale = 2.0
name = "one"

[[record]]
file = "records/set_b_*.txt"
component = "H2"

[[record]]
file = "records/table.csv"
column = "EW"
units = "g"
""")
    records = read_suite(suite)
    expected = sorted(glob.glob(os.path.join(motions, "set_b_*.txt")))
    assert [r.metadata["source"] for r in records[1:4]] == expected
    assert [r.name for r in records] == ["one", "set_b_1", "set_b_10", "set_b_2", "table"]
    one = records[0]
    np.testing.assert_array_equal(one.acceleration, [2.0, 4.0, 6.0])
    assert one.units == "m/s2" and one.dt == 0.02          # the suite's units win over the header
    assert one.metadata["processing"] == [{"step": "scale", "factor": 2.0}]
    assert one.metadata["scale_factor"] == 2.0
    assert one.metadata["component"] == "H1" and one.metadata["suite"] == str(suite)
    assert {r.metadata["component"] for r in records[1:4]} == {"H2"}
    assert "processing" not in records[1].metadata
    np.testing.assert_array_equal(records[4].acceleration, [2.0, 4.0, 6.0])
    assert records[4].units == "g"


def test_csv_suite(tmp_path, motions):
    """Blank cells take no value, '#' lines are comments, columns in any order."""
    suite = write(tmp_path, "suite.csv", """# invented suite
component,file,scale,units,dt,name
H1,records/single.txt,,,,

# the set
H2,records/set_b_1*.txt,0.5,m/s2,,
,records/table.csv,,,0.01,
""")
    with pytest.raises(RecordError) as info:   # table.csv has 3 columns: no column picked
        read_suite(suite)
    assert str(info.value).startswith(f"{suite}:7: {motions / 'table.csv'}:2: 3 columns found")
    suite = write(tmp_path, "suite2.csv", """component;file;scale;units;dt;name;column
H1;records/single.txt;;;;;
H2;records/set_b_1*.txt;0.5;m/s2;;;
;records/table.csv;;;0.01;ew;2
""")
    records = read_suite(suite)
    assert [r.name for r in records] == ["single", "set_b_1", "set_b_10", "ew"]
    assert records[0].units == "cm/s2" and records[0].dt == 0.02     # from the file's header
    assert records[1].metadata["scale_factor"] == 0.5 and records[1].units == "m/s2"
    np.testing.assert_array_equal(records[1].acceleration, 0.5 * 0.2 * np.arange(5))
    np.testing.assert_array_equal(records[3].acceleration, [2.0, 4.0, 6.0])
    assert records[3].dt == pytest.approx(0.01) and "component" not in records[3].metadata


@pytest.mark.parametrize("text, fragment", [
    ("[[record]]\nfile = 'records/single.txt'\nsclae = 2.0\n",
     ":1: [[record]] 1: unknown key 'sclae'; did you mean 'scale'?"),
    ("[defaults]\nunit = 'g'\n[[record]]\nfile = 'records/single.txt'\n",
     ":1: [defaults]: unknown key 'unit'; did you mean 'units'?"),
    ("[defaults]\nname = 'x'\n[[record]]\nfile = 'records/single.txt'\n",
     "[defaults]: unknown key 'name'"),
    ("[[records]]\nfile = 'records/single.txt'\n", "unknown top-level key 'records'; did you mean 'record'?"),
    ("[[record]]\nfile = 'records/single.txt'\n\n# second\n[[record]]\nfile = 'records/nothing_*.txt'\n",
     ":5: [[record]] 2: file 'records/nothing_*.txt' matches no file"),
    ("[[record]]\nfile = 'records/absent.txt'\n", ":1: [[record]] 1: file 'records/absent.txt' not found"),
    ("[[record]]\nfile = 'records'\n", "file 'records' is a folder"),
    ("[[record]]\nscale = 2.0\n", "[[record]] 1: file: missing"),
    ("[[record]]\nfile = 'records/single.txt'\nscale = 'big'\n", "scale: expected a number, got 'big'"),
    ("[[record]]\nfile = 'records/single.txt'\nscale = 0\n", "a scale factor of 0 removes the record"),
    ("[[record]]\nfile = 'records/single.txt'\ndt = -1\n", "dt: expected a time step > 0 s"),
    ("[[record]]\nfile = 'records/set_b_*.txt'\nname = 'b'\n",
     "name 'b' is given but file 'records/set_b_*.txt' matches 3 files"),
    ("[[record]]\nfile = 'records/single.txt'\nunits = 'furlong/s2'\n",
     ":1: [[record]] 1: "),
    ("[[record]\nfile = 1\n", "not valid TOML"),
    ("title = 'empty'\n", "lists no records"),
])
def test_toml_suite_errors(tmp_path, motions, text, fragment):
    suite = write(tmp_path, "suite.toml", text)
    with pytest.raises(InputError) as info:
        read_suite(suite)
    message = str(info.value)
    assert message.startswith(str(suite)) and fragment in message
    assert "\n" not in message


@pytest.mark.parametrize("text, fragment", [
    ("file,sclae\nrecords/single.txt,2\n", ":1: unknown column 'sclae'; did you mean 'scale'?"),
    ("name,scale\nx,2\n", ":1: the header row has no 'file' column"),
    ("file,file\na,b\n", "column 'file' appears twice"),
    ("# c\nfile,scale\nrecords/single.txt,2\n\nrecords/absent.txt,1\n",
     ":5: file 'records/absent.txt' not found"),
    ("file,scale\nrecords/none_*.txt,1\n", ":2: file 'records/none_*.txt' matches no file"),
    ("file,scale\nrecords/single.txt,two\n", ":2: scale: expected a number, got 'two'"),
    ("file,scale\n,2\n", ":2: file: empty"),
    ("file,scale\nrecords/single.txt,1,3\n", ":2: 3 cells but the header row names 2 columns"),
    ("file,skip\nrecords/single.txt,x\n", ":2: skip: expected a whole number of lines"),
    ("# only a comment\n", "lists no records (no header row)"),
])
def test_csv_suite_errors_name_the_line(tmp_path, motions, text, fragment):
    suite = write(tmp_path, "suite.csv", text)
    with pytest.raises(InputError) as info:
        read_suite(suite)
    assert str(info.value).startswith(str(suite)) and fragment in str(info.value)


def test_record_file_errors_name_the_suite_entry_and_the_record_file(tmp_path, motions):
    (motions / "broken.txt").write_text("0 1\n0.01 x\n")
    suite = write(tmp_path, "suite.toml", "[[record]]\nfile = 'records/broken.txt'\n")
    with pytest.raises(RecordError) as info:
        read_suite(suite)
    assert str(info.value) == (f"{suite}:1: [[record]] 1: {motions / 'broken.txt'}:2: "
                               "cannot read 'x' as a number")


def test_suite_file_problems(tmp_path):
    with pytest.raises(ConfigError, match="no such file"):
        read_suite(tmp_path / "absent.toml")
    with pytest.raises(ConfigError, match="unknown suite file suffix '.yaml'"):
        read_suite(write(tmp_path, "suite.yaml", "x"))


def test_expand_records_with_defaults(tmp_path, motions):
    """The glob form used by configs: patterns relative to base_dir, sorted matches, defaults
    for every file."""
    records = expand_records(["records/set_b_1*.txt", "records/single.txt"], tmp_path,
                             units="m/s2", scale=3.0, component="Z")
    assert [r.name for r in records] == ["set_b_1", "set_b_10", "single"]
    assert all(r.units == "m/s2" and r.metadata["component"] == "Z" for r in records)
    assert all(r.metadata["processing"] == [{"step": "scale", "factor": 3.0}] for r in records)
    assert "suite" not in records[0].metadata
    assert len(expand_records("records/single.txt", base_dir=tmp_path)) == 1


def test_expand_records_errors(tmp_path, motions):
    with pytest.raises(ConfigError) as info:
        expand_records(["records/single.txt", "records/zz*.txt"], tmp_path, source="demo.toml: [records] files")
    assert str(info.value).startswith("demo.toml: [records] files: pattern 2: file 'records/zz*.txt' matches no file")
    with pytest.raises(ConfigError, match="defaults: unknown key 'scal'; did you mean 'scale'?"):
        expand_records("records/single.txt", tmp_path, scal=2.0)
    with pytest.raises(ConfigError, match="expected a non-empty list"):
        expand_records([], tmp_path)
