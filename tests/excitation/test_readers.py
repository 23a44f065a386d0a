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


def test_whole_block_parse_equals_line_by_line_scan(tmp_path):
    """Column files are read by numpy's parser in one call unless a comment follows the data;
    both ways give the same values bit for bit (Python's float() is the reference)."""
    rng = np.random.default_rng(3)
    t = np.arange(3000) * 0.01
    a = rng.standard_normal(3000) * 0.3
    body = "".join(f"{float(ti)!r}, {float(ai)!r}\n" for ti, ai in zip(t, a))
    fast = write(tmp_path, "time, acc\n" + body, "fast.csv")
    slow = write(tmp_path, "time, acc\n" + body + "# trailing comment\n", "slow.csv")
    expected = np.array([float(line.split(",")[1]) for line in body.splitlines()])
    for path in (fast, slow):
        np.testing.assert_array_equal(read_record(path).acceleration, expected)


@pytest.mark.parametrize("bad, fragment", [("0.5 x", "cannot read 'x'"), ("0.5 0.1 0.2", "3 column(s)"),
                                           ("0.5 nan", "not finite"), ("0.5 1_0", None)])
def test_deep_errors_still_name_their_line(tmp_path, bad, fragment):
    """A bad line far into a long column file is reported with its own line number."""
    lines = [f"{0.01 * i:.2f} {np.sin(i):.6f}" for i in range(2000)]
    lines[1500] = lines[1500].split()[0] + bad[3:]
    path = write(tmp_path, "\n".join(lines) + "\n", "deep.txt")
    if fragment is None:        # Python reads 1_0 as 10 (numpy's parser does not): the scan takes it
        assert read_record(path).acceleration[1500] == 10.0
        return
    with pytest.raises(RecordError) as info:
        read_record(path)
    assert f"{path}:1501: " in str(info.value) and fragment in str(info.value)


# ---------------------------------------------------------------- more text layouts
def test_header_declares_dt_and_units(tmp_path):
    """'# dt = ...' and '# units = ...' comment lines before the data declare step and units."""
    path = write(tmp_path, "# Record r7\n# dt = 0.005 s\n# UNITS = gal\n1.0\n2.0\n3.0\n")
    rec = read_record(path)
    assert rec.dt == 0.005 and rec.units == "cm/s2"
    assert rec.metadata["header"] == {"dt": 0.005, "units": "cm/s2"}


def test_call_arguments_win_over_the_header(tmp_path):
    path = write(tmp_path, "# dt = 0.005\n# units = cm/s2\n1.0\n2.0\n")
    rec = read_record(path, dt=0.01, units="m/s2")
    assert rec.dt == 0.01 and rec.units == "m/s2"


def test_header_key_value_comments_after_data_and_other_keys_are_free_text(tmp_path):
    """Only leading comments declare; 'dt: 0.01' (colon) and unknown keys are plain comments."""
    path = write(tmp_path, "# dt: 0.01 s\n# seed = 12\n0 1\n0.02 2\n# dt = 0.5\n0.04 3\n")
    rec = read_record(path)
    assert rec.dt == pytest.approx(0.02) and "header" not in rec.metadata


@pytest.mark.parametrize(
    "text, line, fragment",
    [
        ("# dt = fast\n1\n2\n", 1, "header dt = 'fast': expected a number of seconds > 0"),
        ("# dt = -0.01\n1\n2\n", 1, "expected a number of seconds > 0"),
        ("#\n# units = furlong\n1\n2\n", 2, "unknown acceleration units 'furlong'"),
        ("# dt = 0.01\n# dt = 0.02\n1\n2\n", 2, "contradicts line 1"),
        ("# layout = diagonal\n1\n2\n", 1, "expected one of values, columns"),
    ],
)
def test_bad_header_names_the_line(tmp_path, text, line, fragment):
    path = write(tmp_path, text)
    with pytest.raises(RecordError) as info:
        read_record(path)
    assert str(info.value).startswith(f"{path}:{line}: ")
    assert fragment in str(info.value)


def test_header_dt_conflicting_with_time_column_is_an_error(tmp_path):
    path = write(tmp_path, "# dt = 0.02\n0 1\n0.01 2\n0.02 3\n")
    with pytest.raises(RecordError, match=r"dt = 0.02 s was declared on line 1 but the time "
                                          r"column has a step of 0.01"):
        read_record(path)
    # a dt given in the call wins over the header and agrees with the column
    assert read_record(path, dt=0.01).dt == pytest.approx(0.01)


def test_several_values_per_line_read_row_by_row(tmp_path):
    """Fixed count per line, last line shorter: values follow in reading order (row by row)."""
    values = np.arange(1.0, 12.0)   # 11 values, 4 per line -> 4, 4, 3
    text = "# eleven samples\n" + "\n".join(
        "  ".join(f"{v:.1f}" for v in values[i:i + 4]) for i in range(0, 11, 4)) + "\n"
    path = write(tmp_path, text)
    rec = read_record(path, dt=0.01, layout="values")
    np.testing.assert_array_equal(rec.acceleration, values)
    assert rec.metadata["layout"] == "4 values per line"
    declared = write(tmp_path, "# layout = values\n# dt = 0.02\n" + text, "declared.txt")
    rec = read_record(declared)
    np.testing.assert_array_equal(rec.acceleration, values)
    assert rec.dt == 0.02


def test_two_values_per_line_are_not_mistaken_for_time_value(tmp_path):
    path = write(tmp_path, "0.5 0.4\n0.3 0.2\n0.1\n")
    np.testing.assert_array_equal(read_record(path, dt=0.1, layout="values").acceleration,
                                  [0.5, 0.4, 0.3, 0.2, 0.1])


@pytest.mark.parametrize(
    "text, line, fragment",
    [
        ("1 2 3\n4 5\n6 7 8\n", 2, "only the last line may hold fewer"),
        ("1 2 3\n4 5 6 7\n", 2, "every line but the last holds the same count"),
        ("1 2 3\n4 5 x\n", 2, "cannot read 'x' as a number"),
        ("1 2 3\n4 nan 6\n", 2, "value is not finite"),
    ],
)
def test_values_layout_errors_name_the_line(tmp_path, text, line, fragment):
    path = write(tmp_path, text)
    with pytest.raises(RecordError) as info:
        read_record(path, dt=0.01, layout="values")
    assert str(info.value).startswith(f"{path}:{line}: ") and fragment in str(info.value)


def test_values_layout_needs_dt(tmp_path):
    path = write(tmp_path, "1 2 3\n4 5\n")
    with pytest.raises(RecordError, match="several values per line needs dt"):
        read_record(path, layout="values")


def test_three_columns_suggest_the_options(tmp_path):
    path = write(tmp_path, "0 1 2\n0.01 3 4\n")
    with pytest.raises(RecordError, match="column=.*layout='values'"):
        read_record(path)


def test_csv_with_header_row_column_by_name_and_index(tmp_path):
    """A spreadsheet export: title line, header row of names, time column found by its name."""
    t = np.arange(6) * 0.02
    rows = "\n".join(f"{a:.2f},{0.1 * k},{-0.2 * k}" for k, a in enumerate(t))
    path = write(tmp_path, f"Invented test record, three channels\nTime (s),NS,EW\n{rows}\n",
                 "export.csv")
    rec = read_record(path, column="ew", units="m/s2")
    np.testing.assert_allclose(rec.acceleration, -0.2 * np.arange(6))
    assert rec.dt == pytest.approx(0.02)
    assert rec.metadata["column"] == "EW" and rec.metadata["time_column"] == "Time (s)"
    assert rec.metadata["header_lines"] == 2
    by_index = read_record(path, column=1)
    np.testing.assert_allclose(by_index.acceleration, 0.1 * np.arange(6))
    # the time column is checked against a given dt
    with pytest.raises(RecordError, match="time column has a step of 0.02"):
        read_record(path, column="NS", dt=0.01)


def test_csv_two_named_columns_pick_the_time_column(tmp_path):
    path = write(tmp_path, "acc_g;t\n0.1;0.0\n0.2;0.01\n0.3;0.02\n", "swapped.csv")
    rec = read_record(path)
    np.testing.assert_array_equal(rec.acceleration, [0.1, 0.2, 0.3])
    assert rec.dt == pytest.approx(0.01)


def test_two_word_title_above_time_value_data(tmp_path):
    """A title line that happens to split into two words is not taken for column names when
    the first column is a uniform time column."""
    path = write(tmp_path, "INVENTED RECORD\n0.00 0.5\n0.01 0.6\n0.02 0.7\n")
    rec = read_record(path)
    np.testing.assert_array_equal(rec.acceleration, [0.5, 0.6, 0.7])
    assert rec.dt == pytest.approx(0.01) and rec.metadata["layout"] == "time, acceleration"


def test_csv_quoted_header_and_values(tmp_path):
    path = write(tmp_path, '"time","acc"\n"0.0","1.5"\n"0.5","2.5"\n', "quoted.csv")
    rec = read_record(path)
    np.testing.assert_array_equal(rec.acceleration, [1.5, 2.5])
    assert rec.dt == 0.5


def test_csv_column_without_time_column_needs_dt(tmp_path):
    path = write(tmp_path, "ns,ew\n1,2\n3,4\n5,6\n", "pair.csv")
    with pytest.raises(RecordError) as info:
        read_record(path)
    assert str(info.value).startswith(f"{path}:1: two columns named 'ns' and 'ew'")
    with pytest.raises(RecordError, match="column 'ew' without a time column needs dt"):
        read_record(path, column="ew")
    np.testing.assert_array_equal(read_record(path, column="ew", dt=0.01).acceleration, [2, 4, 6])


@pytest.mark.parametrize(
    "options, fragment",
    [
        ({"column": "EX"}, "no column named 'EX' (columns: 'time', 'NS', 'EW'); did you mean 'EW'?"),
        ({"column": 3}, "column 3 is out of range: the file has 3 column(s) (0 to 2)"),
        ({"column": 1.5}, "column must be a column name or 0-based index"),
        ({"column": "NS", "time_column": "NS"}, "the time column and the acceleration column are the same"),
        ({"column": "NS", "layout": "values"}, "do not apply to layout='values'"),
        ({"layout": "rows"}, "layout must be one of values, columns"),
        ({"skip": -1}, "skip must be a whole number of lines >= 0"),
    ],
)
def test_column_option_errors(tmp_path, options, fragment):
    path = write(tmp_path, "time,NS,EW\n0,1,2\n0.01,3,4\n", "three.csv")
    with pytest.raises(RecordError) as info:
        read_record(path, **options)
    assert str(path) in str(info.value) and fragment in str(info.value)


def test_column_by_name_without_header_row(tmp_path):
    path = write(tmp_path, "0 1 2\n0.01 3 4\n")
    with pytest.raises(RecordError, match="given by name, but there is no header row"):
        read_record(path, column="NS")
    rec = read_record(path, column=-1, time_column=0)
    np.testing.assert_array_equal(rec.acceleration, [2, 4])
    assert rec.dt == pytest.approx(0.01)


def test_leading_non_numeric_lines_are_header_but_not_inside_the_data(tmp_path):
    """Header lines are detected before the numeric block; inside it a bad line is an error."""
    text = "INVENTED STATION, COMPONENT 090\nNPTS= 3, DT= .01 SEC\n0.1\n0.2\n0.3\n"
    rec = read_record(write(tmp_path, text), dt=0.01)
    np.testing.assert_array_equal(rec.acceleration, [0.1, 0.2, 0.3])
    assert rec.metadata["header_lines"] == 2
    path = write(tmp_path, text + "END OF DATA\n", "tail.txt")
    with pytest.raises(RecordError) as info:
        read_record(path, dt=0.01)
    assert str(info.value).startswith(f"{path}:6: cannot read 'END' as a number")


def test_skip_counts_physical_lines(tmp_path):
    """skip=N drops header lines that parse as numbers (here a count and a step)."""
    path = write(tmp_path, "4 0.02\n1.0\n2.0\n3.0\n4.0\n")
    with pytest.raises(RecordError, match=":2: 1 column"):
        read_record(path, dt=0.02)
    rec = read_record(path, dt=0.02, skip=1)
    np.testing.assert_array_equal(rec.acceleration, [1.0, 2.0, 3.0, 4.0])
    assert rec.metadata["header_lines"] == 1


def test_option_for_another_format_is_refused(tmp_path):
    path = tmp_path / "a.npy"
    np.save(path, np.ones(4))
    with pytest.raises(RecordError, match=r"option column= does not apply to 'npy' files \(only to: text\)"):
        read_record(path, dt=0.01, column=1)


# ---------------------------------------------------------------- NumPy
def test_npy_one_and_two_dimensional(tmp_path):
    """1-D: acceleration with dt given; (n, 2): time and acceleration (numpy.save as writer)."""
    a = np.sin(np.arange(50) * 0.3)
    one = tmp_path / "one.npy"
    np.save(one, a)
    rec = read_record(one, dt=0.01)
    np.testing.assert_array_equal(rec.acceleration, a)
    assert rec.units == "g" and rec.metadata["format"] == "npy" and rec.name == "one"
    two = tmp_path / "two.npy"
    np.save(two, np.column_stack([2.0 + np.arange(50) * 0.005, a]))
    rec = read_record(two, units="m/s2")
    np.testing.assert_array_equal(rec.acceleration, a)
    assert rec.dt == pytest.approx(0.005) and rec.metadata["start_time"] == 2.0
    integers = tmp_path / "ints.npy"
    np.save(integers, np.arange(5))
    assert read_record(integers, dt=0.1).acceleration.dtype == np.float64


@pytest.mark.parametrize(
    "array, dt, fragment",
    [
        (np.ones(5), None, "a 1-D array of accelerations needs dt (none given)"),
        (np.ones((5, 3)), None, "got shape (5, 3)"),
        (np.array(["a", "b"]), 0.01, "expected an array of real numbers"),
        (np.array([[0.0, 1.0], [0.01, np.inf]]), None, "row 1: value is not finite"),
        (np.array([[0.0, 1.0], [0.01, 1.0], [0.03, 1.0], [0.04, 1.0]]), None,
         "row 2: time step 0.02 s"),
        (np.column_stack([np.arange(5) * 0.01, np.ones(5)]), 0.02, "time column has a step of 0.01"),
        (np.array([1.0, np.nan, 2.0]), 0.01, "not finite at step 1"),
    ],
)
def test_npy_errors_name_the_file(tmp_path, array, dt, fragment):
    path = tmp_path / "bad.npy"
    np.save(path, array)
    with pytest.raises(RecordError) as info:
        read_record(path, dt=dt)
    assert str(info.value).startswith(str(path)) and fragment in str(info.value)


def test_npy_not_an_array_file(tmp_path):
    path = write(tmp_path, "0.1\n0.2\n", "text.npy")
    with pytest.raises(RecordError, match="cannot be read as a NumPy .npy array"):
        read_record(path, dt=0.01)


# ---------------------------------------------------------------- NetCDF
def _record_with_metadata():
    from simulate.excitation import Record

    metadata = {
        "source": "motions/invented_r1.txt",
        "format": "text",
        "start_time": 5.0,
        "count": 42,
        "processing": [{"step": "scale", "factor": 1.5}, {"step": "pad", "before": 0.0}],
        "scale_factor": 1.5,
        "flag": True,
        "nothing": None,
        "title": "clashes with the file's own title",
        "weird key": "spaces",
        "note": "ünïcode ✓",
        "big": 2**70,
    }
    a = np.random.default_rng(7).standard_normal(1234) * 0.1
    return Record(acceleration=a, dt=0.005, units="cm/s2", name="r1 (H1)", metadata=metadata)


def test_record_file_round_trip_is_exact(tmp_path):
    """write_record then read_record gives the same samples, step, units, name and metadata."""
    from simulate.excitation import write_record

    rec = _record_with_metadata()
    path = write_record(rec, tmp_path / "r1.nc")
    back = read_record(path)
    np.testing.assert_array_equal(back.acceleration, rec.acceleration)
    assert back.dt == rec.dt and back.units == rec.units and back.name == rec.name
    assert back.metadata == rec.metadata
    assert type(back.metadata["count"]) is int and type(back.metadata["start_time"]) is float
    assert not list(tmp_path.glob(".*part"))


def test_record_file_is_self_describing(tmp_path):
    """The file opened with xarray shows acceleration(time) with units and dt attributes."""
    import xarray as xr

    from simulate.excitation import write_record

    rec = _record_with_metadata()
    path = write_record(rec, tmp_path / "r1.nc")
    with xr.open_dataset(path) as ds:
        assert ds["acceleration"].dims == ("time",)
        assert ds["acceleration"].attrs["units"] == "cm/s2"
        assert ds["acceleration"].attrs["dt"] == 0.005
        np.testing.assert_allclose(ds["time"].values, np.arange(1234) * 0.005)
        assert ds.attrs["source"] == "motions/invented_r1.txt"
        assert ds.attrs["record_name"] == "r1 (H1)"


def test_record_file_refuses_other_units_or_dt(tmp_path):
    from simulate.excitation import write_record

    path = write_record(_record_with_metadata(), tmp_path / "r1.nc")
    with pytest.raises(RecordError, match="stored in cm/s2, but units = 'g' was given"):
        read_record(path, units="g")
    assert read_record(path, units="gal").units == "cm/s2"
    with pytest.raises(RecordError, match="dt = 0.01 s was given but record 'r1 \\(H1\\)' has a step"):
        read_record(path, dt=0.01)


def test_write_record_errors(tmp_path):
    from simulate.excitation import Record, write_record

    rec = Record(acceleration=[0.0, 1.0], dt=0.01, metadata={"path": tmp_path})
    with pytest.raises(RecordError, match="metadata 'path' holds a .*Path, which a record file cannot store"):
        write_record(rec, tmp_path / "x.nc")
    with pytest.raises(RecordError, match="does not exist"):
        write_record(Record(acceleration=[0.0, 1.0], dt=0.01), tmp_path / "no" / "x.nc")
    assert not list(tmp_path.glob("*.nc")) and not list(tmp_path.glob(".*"))


def _results_like(tmp_path):
    """A results file written by simulate.write_dataset with two records of different lengths."""
    import xarray as xr

    from simulate.results import write_dataset

    ag = np.full((3, 6), np.nan)
    ag[0, :] = [0.0, 0.1, 0.2, 0.1, 0.0, 0.0]
    ag[1, :4] = [0.0, -0.3, 0.3, 0.0]
    ag[2, :5] = 0.0
    ds = xr.Dataset(
        {
            "ground_acceleration": (("record", "time"), ag, {"units": "m/s2"}),
            "record_source": ("record", np.array(["a.txt", "b.txt", "harmonic"], dtype=object)),
            "scale_factor": ("record", [1.0, 2.0, 1.0]),
            "excitation": ("record", np.array(["base-acceleration", "base-acceleration",
                                               "floor-forces"], dtype=object)),
        },
        coords={"record": ("record", np.array(["a", "b", "shaker"], dtype=object)),
                "time": ("time", np.arange(6) * 0.02, {"units": "s"})},
        attrs={"analysis_dt": 0.02, "software": "swaysim test"},
    )
    return write_dataset(ds, tmp_path / "results.nc"), ag


def test_results_file_gives_one_record_per_label(tmp_path):
    """ground_acceleration rows come back trimmed of the NaN padding, in m/s2; floor-force rows
    carry no ground motion and are left out."""
    from simulate.excitation import read_records

    path, ag = _results_like(tmp_path)
    records = read_records(path)
    assert [rec.name for rec in records] == ["a", "b"]
    np.testing.assert_array_equal(records[0].acceleration, ag[0])
    np.testing.assert_array_equal(records[1].acceleration, ag[1, :4])
    assert all(rec.units == "m/s2" and rec.dt == 0.02 for rec in records)
    assert records[1].metadata["results"]["scale_factor"] == 2.0
    assert records[1].metadata["results"]["record_source"] == "b.txt"
    with pytest.raises(RecordError, match=r"holds 2 records \('a', 'b'\); pick one with select="):
        read_record(path)
    assert read_record(path, select="b", name="again").name == "again"
    with pytest.raises(RecordError, match="no record 'c' .*"):
        read_records(path, select=["a", "c"])
    assert [r.name for r in read_records(path, name="run1")] == ["run1:a", "run1:b"]


def test_results_of_a_real_run_read_back(tmp_path):
    """Records pushed through simulate.run come back from its results file as applied
    (scaled, in m/s2) -- the dataset layout of the results writer is the external reference."""
    import simulate as ss
    from simulate.excitation import Record, read_records

    t = np.arange(400) * 0.01
    short = Record(acceleration=0.2 * np.sin(2 * np.pi * 1.5 * t[:250]), dt=0.01, units="g", name="short")
    long = Record(acceleration=0.1 * np.sin(2 * np.pi * 0.8 * t), dt=0.01, units="g", name="long")
    frame = ss.ShearFrame(mass=[1e5] * 3, stiffness=[5e7] * 3, height=[3.0] * 3)
    ds = ss.run(frame, [short, long], scale=2.0)
    path = ss.write_dataset(ds, tmp_path / "run.nc")
    back = {rec.name: rec for rec in read_records(path)}
    for rec in (short, long):
        np.testing.assert_allclose(back[rec.name].acceleration, 2.0 * rec.to_si(), rtol=1e-15, atol=0)
        assert back[rec.name].dt == pytest.approx(0.01)


def test_netcdf_without_known_variables(tmp_path):
    import xarray as xr

    path = tmp_path / "other.nc"
    xr.Dataset({"pressure": ("x", [1.0, 2.0])}).to_netcdf(path)
    with pytest.raises(RecordError, match="holds neither 'ground_acceleration'"):
        read_record(path)
    garbage = write(tmp_path, "not netcdf\n", "garbage.nc")
    with pytest.raises(RecordError, match="cannot be read as NetCDF"):
        read_record(garbage)
    with pytest.raises(RecordError, match="no such file"):
        read_record(tmp_path / "absent.nc")


def test_new_suffixes_registered():
    assert SUFFIXES[".npy"] == "npy" and SUFFIXES[".nc"] == "netcdf"
    assert SUFFIXES[".mseed"] == "mseed" and SUFFIXES[".sac"] == "sac"
