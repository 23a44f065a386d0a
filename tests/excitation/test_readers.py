"""Reading plain text record files: layouts, comments and every error a user can cause."""

import math

import numpy as np
import pytest

from simulate.errors import RecordError
from simulate.excitation import read_record
from simulate.excitation.readers import READERS, SUFFIXES


def write(tmp_path, text, name="quake.txt"):
    path = tmp_path / name
    path.write_text(text)
    return path


def test_one_value_per_line_with_dt(tmp_path):
    """One value per line: sample k sits at k dt (common practice for uniformly sampled records)."""
    path = write(tmp_path, "# header\n0.0\n0.1\n-0.2\n0.05\n")
    rec = read_record(path, dt=0.02)
    np.testing.assert_array_equal(rec.acceleration, [0.0, 0.1, -0.2, 0.05])
    assert rec.dt == 0.02 and rec.units == "g"
    assert rec.name == "quake"
    assert rec.metadata["source"] == str(path)


def test_two_columns_dt_from_time_column(tmp_path):
    """Two columns (time, acceleration): dt is the spacing of the time column, which may start late."""
    path = write(tmp_path, "5.00 0.1\n5.02 0.2\n5.04 -0.3\n5.06 0.0\n")
    rec = read_record(path, units="m/s2", name="late")
    assert rec.dt == pytest.approx(0.02, rel=1e-12)
    np.testing.assert_array_equal(rec.acceleration, [0.1, 0.2, -0.3, 0.0])
    assert rec.metadata["start_time"] == 5.0
    assert rec.name == "late" and rec.units == "m/s2"


@pytest.mark.parametrize("separator", [",", ";", ", ", " ; ", "\t"])
def test_separators(tmp_path, separator):
    """Columns may be separated by blanks, a comma or a semicolon."""
    lines = [f"{0.01 * k:.2f}{separator}{v}" for k, v in enumerate([0.5, -0.25, 0.125])]
    rec = read_record(write(tmp_path, "\n".join(lines) + "\n", "q.csv"))
    np.testing.assert_array_equal(rec.acceleration, [0.5, -0.25, 0.125])
    assert rec.dt == pytest.approx(0.01)


def test_comments_and_blank_lines(tmp_path):
    """Lines starting with #, %, ! or // (after blanks) and blank lines are skipped."""
    text = "# a\n% b\n! c\n// d\n\n   # indented\n0 1\n\n0.5 2\n   \n1.0 3\n"
    rec = read_record(write(tmp_path, text))
    np.testing.assert_array_equal(rec.acceleration, [1.0, 2.0, 3.0])
    assert rec.dt == 0.5


def test_windows_line_endings(tmp_path):
    path = tmp_path / "crlf.dat"
    path.write_bytes(b"# c\r\n0.0 1\r\n0.1 2\r\n0.2 3\r\n")
    np.testing.assert_array_equal(read_record(path).acceleration, [1.0, 2.0, 3.0])


def test_round_trip_savetxt(tmp_path):
    """A sine written with numpy.savetxt (full precision, %.18e) reads back bit for bit."""
    dt = 0.005
    t = np.arange(2001) * dt
    a = 0.3 * np.sin(2 * np.pi * 1.7 * t)
    one = tmp_path / "one.txt"
    two = tmp_path / "two.csv"
    np.savetxt(one, a, header="sine, one value per line")
    np.savetxt(two, np.column_stack([t, a]), delimiter=",", header="time,acc")
    rec_one = read_record(one, dt=dt)
    rec_two = read_record(two)
    np.testing.assert_array_equal(rec_one.acceleration, a)
    np.testing.assert_array_equal(rec_two.acceleration, a)
    assert rec_two.dt == pytest.approx(dt, rel=1e-12)
    assert rec_two.n_steps == 2001


@pytest.mark.parametrize(
    "text, line, fragment",
    [
        ("0.1\n0.2\nabc\n", 3, "cannot read 'abc' as a number"),
        ("# c\n0 0.1\n0.01 x1\n", 3, "cannot read 'x1' as a number"),
        ("0.1\n\n0.2\nnan\n", 4, "value is not finite"),
        ("# c\n0 0.1\n0.01 inf\n", 3, "value is not finite"),
        ("0 0.1\n0.01 -inf\n0.02 abc\n", 2, "value is not finite"),
        ("0 0.1 7\n", 1, "3 columns found"),
        ("# c\n0 0.1\n0.01 0.2\n0.3\n", 4, "1 column(s) found but line 2 has 2"),
        ("0.1\n0.2\n0.02 0.3\n", 3, "2 column(s) found but line 1 has 1"),
        ("0 1\n0.01 2\n0.02 3\n0.04 4\n0.05 5\n", 4, "records must be uniformly sampled"),
    ],
)
def test_bad_content_names_file_and_line(tmp_path, text, line, fragment):
    """Each content error names the file and the 1-based physical line."""
    path = write(tmp_path, text)
    with pytest.raises(RecordError) as info:
        read_record(path, dt=0.01)
    message = str(info.value)
    assert f"{path}:{line}: " in message
    assert fragment in message


@pytest.mark.parametrize(
    "text, dt, fragment",
    [
        ("", None, "no acceleration values found"),
        ("# only\n% comments\n\n", 0.01, "no acceleration values found"),
        ("0.1\n0.2\n", None, "one value per line needs dt (none given)"),
        ("# c\n0.1\n", 0.01, "only 1 acceleration value found"),
        ("0 0.1\n", None, "only 1 acceleration value found"),
        ("0 1\n0.01 2\n0.02 3\n", 0.02, "dt = 0.02 s was given but the time column has a step of 0.01"),
        ("0.02 1\n0.01 2\n0.0 3\n", None, "does not increase"),
        ("0.1\n0.2\n", -1.0, "dt"),
    ],
)
def test_bad_files_name_the_file(tmp_path, text, dt, fragment):
    path = write(tmp_path, text)
    with pytest.raises(RecordError) as info:
        read_record(path, dt=dt)
    assert str(info.value).startswith(f"{path}: ")
    assert fragment in str(info.value)


def test_missing_file(tmp_path):
    path = tmp_path / "absent.txt"
    with pytest.raises(RecordError, match="no such file") as info:
        read_record(path, dt=0.01)
    assert str(info.value) == f"{path}: no such file"


def test_unknown_suffix_and_format(tmp_path):
    path = write(tmp_path, "0 1\n0.01 2\n", "quake.xyz")
    with pytest.raises(RecordError, match="unknown record file suffix '.xyz'"):
        read_record(path)
    assert read_record(path, format="text").n_steps == 2
    with pytest.raises(RecordError, match="unknown record format 'binary'"):
        read_record(path, format="binary")


def test_all_suffixes_registered_to_a_reader():
    assert set(SUFFIXES.values()) <= set(READERS)
    for suffix in (".txt", ".dat", ".csv", ".acc", ".at2"):
        assert SUFFIXES[suffix] == "text"


def test_bad_units_name_the_file(tmp_path):
    path = write(tmp_path, "0 1\n0.01 2\n")
    with pytest.raises(RecordError) as info:
        read_record(path, units="inch/s2")
    assert str(path) in str(info.value) and "inch/s2" in str(info.value)


def test_time_step_tolerance(tmp_path):
    """Spacings within 1e-3 relative of the median pass (e.g. times printed with 4 digits);
    a spacing 2e-3 off is refused on the line where it ends (tolerance as documented in
    the reader's module docstring)."""
    tolerance = 1e-3
    dt = 0.01
    t = np.arange(50) * dt
    jittered = t.copy()
    jittered[20] += 0.4 * tolerance * dt
    ok = tmp_path / "ok.txt"
    np.savetxt(ok, np.column_stack([jittered, np.ones(50)]))
    assert read_record(ok).dt == pytest.approx(dt, rel=1e-12)
    # a given dt within the tolerance is accepted, the column's mean spacing is kept
    assert read_record(ok, dt=dt * (1 + 0.5 * tolerance)).dt == pytest.approx(dt, rel=1e-12)

    shifted = t.copy()
    shifted[30:] += 2 * tolerance * dt
    bad = tmp_path / "bad.txt"
    np.savetxt(bad, np.column_stack([shifted, np.ones(50)]), header="two header lines\nsecond")
    with pytest.raises(RecordError) as info:
        read_record(bad)
    # two comment lines, then sample k on line k + 3; spacing 29 -> 30 ends at sample 30
    assert f"{bad}:33: " in str(info.value)


def test_long_file(tmp_path):
    """100 000 lines with times printed to 4 decimals read back with the right dt and values."""
    t = np.arange(100_000) * 0.005
    path = tmp_path / "long.txt"
    np.savetxt(path, np.column_stack([t, np.sin(t)]), fmt="%.4f %.6g")
    rec = read_record(path)
    assert rec.n_steps == 100_000 and math.isclose(rec.dt, 0.005, rel_tol=1e-9)
    np.testing.assert_allclose(rec.acceleration, np.sin(t), rtol=1e-5, atol=1e-6)
