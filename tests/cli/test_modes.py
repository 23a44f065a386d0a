"""``swaysim modes``: modal table, eigenvalues, shapes, caution."""

from __future__ import annotations

import numpy as np
import scipy.linalg
from click.testing import CliRunner

from simulate import load_config
from simulate.cli import main
from simulate.cli.tables import sig
from simulate.settings import CAUTION

from . import write_tiny_case


def table_rows(stdout: str, title: str) -> list[list[str]]:
    """Data rows (split on blanks) of the table whose title line starts with ``title``."""
    lines = stdout.splitlines()
    start = next(i for i, line in enumerate(lines) if line.startswith(title))
    rule = next(i for i in range(start, len(lines)) if lines[i] and set(lines[i]) == {"-"})
    rows = []
    for line in lines[rule + 1:]:
        fields = line.split()
        if not fields or not fields[0].isdigit():
            break
        rows.append(fields)
    return rows


def test_modes_table_matches_frame_modes(tmp_path):
    """Printed periods equal frame.modes(); those equal scipy.linalg.eigh(K, M)."""
    config = write_tiny_case(tmp_path)
    result = CliRunner().invoke(main, ["modes", str(config)])
    assert result.exit_code == 0, result.output
    frame = load_config(config).frame
    ds = frame.modes()
    rows = table_rows(result.stdout, "Natural modes")
    assert [int(r[0]) for r in rows] == [1, 2, 3]
    for r, period, freq in zip(rows, ds["period"].values, ds["frequency"].values):
        assert r[1] == sig(period, 4)
        assert r[2] == sig(freq, 4)
    w2 = scipy.linalg.eigh(frame.stiffness_matrix(), np.diag(frame.mass), eigvals_only=True)
    np.testing.assert_allclose(ds["period"].values, 2 * np.pi / np.sqrt(np.sort(w2)), rtol=1e-12)

    eig = table_rows(result.stdout, "State-space eigenvalues")
    for r, lam in zip(eig, ds["eigenvalue"].values):
        assert r[1] == sig(lam.real, 4) and r[2] == sig(lam.imag, 4)
    shapes = table_rows(result.stdout, "Mode shapes")
    assert [int(r[0]) for r in shapes] == [3, 2, 1]
    assert all(r[1:] == ["1.0000"] * 3 for r in shapes[:1])      # roof-normalised
    assert " ".join(CAUTION.split()) in " ".join(result.stdout.split())


def test_modes_does_not_read_records(tmp_path):
    """A broken record file does not stop `modes` (records are read only by `run`)."""
    config = write_tiny_case(tmp_path, record_text="0.0 0.1\n0.01 oops\n")
    assert CliRunner().invoke(main, ["modes", str(config)]).exit_code == 0
    assert CliRunner().invoke(main, ["run", str(config), "-o", str(tmp_path / "x.nc")]).exit_code == 2


def test_shapes_limited_unless_all(tmp_path):
    config = tmp_path / "tall.toml"
    config.write_text("""
[building]
storeys = 8
mass = 3e5
height = 3.2
period = 1.1
stiffness_profile = "linear"
[[harmonic]]
mode = 1
amplitude = 0.01
duration = 5.0
""")
    runner = CliRunner()
    short = runner.invoke(main, ["modes", str(config)])
    assert short.exit_code == 0
    assert "mode 6" in short.stdout and "mode 7" not in short.stdout and "--all" in short.stdout
    full = runner.invoke(main, ["modes", "--all", str(config)])
    assert full.exit_code == 0
    assert "mode 8" in full.stdout
    assert len(table_rows(full.stdout, "Natural modes")) == 8
    assert table_rows(full.stdout, "Natural modes")[0][1] == sig(1.1, 4)
