"""Target spectra: ASCE 7-16 design spectrum, EN 1998-1 elastic spectrum, user spectrum files."""

from __future__ import annotations

import math

import numpy as np
import pytest

from simulate.errors import InputError
from simulate.excitation.targets import (
    EC8_GROUND_TYPES,
    TARGET_CAUTION,
    TARGETS,
    ASCE7Spectrum,
    EC8Spectrum,
    FileSpectrum,
    make_target,
)

# ----------------------------------------------------------------------------- ASCE 7


def test_asce7_points_on_each_branch():
    """ASCE/SEI 7-16 section 11.4.6 (equation numbers from memory): with S_DS = 1.0 g,
    S_D1 = 0.6 g, T_L = 8 s we have T0 = 0.2 S_D1/S_DS = 0.12 s and TS = S_D1/S_DS = 0.6 s;
    Eq. 11.4-5 gives 0.4 S_DS at T = 0 and 0.7 S_DS at T = T0/2; the plateau is S_DS from
    T0 to TS; Eq. 11.4-6 gives S_D1/T = 0.3 g at 2 s; Eq. 11.4-7 gives S_D1 T_L / T^2 =
    0.048 g at 10 s. The values are worked by hand from the equations."""
    target = ASCE7Spectrum(sds=1.0, sd1=0.6, tl=8.0)
    assert target.t0 == pytest.approx(0.12)
    assert target.ts == pytest.approx(0.6)
    periods = [0.0, 0.06, 0.12, 0.3, 0.6, 1.0, 2.0, 8.0, 10.0]
    expected = [0.4, 0.7, 1.0, 1.0, 1.0, 0.6, 0.3, 0.075, 0.048]
    np.testing.assert_allclose(target(periods), expected, rtol=1e-12)


def test_asce7_continuous_at_corner_periods():
    """The four branches of ASCE/SEI 7-16 11.4.6 meet at T0, TS and T_L (a property of the
    published equations: S_DS(0.4 + 0.6) = S_DS, S_D1/TS = S_DS, S_D1/T_L = S_D1 T_L/T_L^2)."""
    target = ASCE7Spectrum(sds=0.83, sd1=0.41, tl=6.0)
    for corner in (target.t0, target.ts, target.tl):
        below, above = target([corner * (1 - 1e-9), corner * (1 + 1e-9)])
        assert below == pytest.approx(above, rel=1e-6)
    assert isinstance(target(1.0), float)


@pytest.mark.parametrize("kwargs", [dict(sds=-1, sd1=0.5, tl=8), dict(sds=1, sd1=0, tl=8),
                                    dict(sds=1, sd1=0.5, tl=float("nan")),
                                    dict(sds=1.0, sd1=0.5, tl=0.3)])
def test_asce7_rejects_bad_parameters(kwargs):
    with pytest.raises(InputError, match="ASCE 7 target"):
        ASCE7Spectrum(**kwargs)


# ----------------------------------------------------------------------------- EC8


def test_ec8_type1_ground_c_branches():
    """EN 1998-1:2004 3.2.2.2, Eq. 3.2-3.5, Type 1 ground type C with the recommended
    S = 1.15, T_B = 0.2 s, T_C = 0.6 s, T_D = 2.0 s (Table 3.2, from memory), a_g = 0.2 g,
    5 % damping (eta = 1): Eq. 3.2 gives a_g S = 0.23 g at T = 0 and a_g S (1 + 0.5 x 1.5)
    = 0.4025 g at T_B/2; Eq. 3.3 the plateau a_g S eta 2.5 = 0.575 g; Eq. 3.4 gives
    0.575 x 0.6 / 1.2 = 0.2875 g at 1.2 s; Eq. 3.5 gives 0.575 x 0.6 x 2 / 9 g at 3 s."""
    target = EC8Spectrum(ag=0.2, ground_type="C", spectrum_type=1)
    assert target.eta == 1.0
    periods = [0.0, 0.1, 0.2, 0.4, 0.6, 1.2, 2.0, 3.0, 4.0]
    plateau = 0.2 * 1.15 * 2.5
    expected = [0.23, 0.4025, plateau, plateau, plateau, plateau * 0.5, plateau * 0.6 / 2.0,
                plateau * 0.6 * 2.0 / 9.0, plateau * 0.6 * 2.0 / 16.0]
    np.testing.assert_allclose(target(periods), expected, rtol=1e-12)


@pytest.mark.parametrize("damping, eta", [(0.05, 1.0), (0.10, math.sqrt(10 / 15)),
                                          (0.02, math.sqrt(10 / 7)), (0.30, 0.55)])
def test_ec8_plateau_with_damping_correction(damping, eta):
    """EN 1998-1:2004 Eq. 3.3 (plateau a_g S eta 2.5) and Eq. 3.6 (eta = sqrt(10/(5 + xi))
    >= 0.55, xi in per cent): at 30 % damping sqrt(10/35) = 0.53 is raised to 0.55.
    Type 2 ground type D: S = 1.8 (Table 3.3, from memory)."""
    target = EC8Spectrum(ag=0.15, ground_type="D", spectrum_type=2, damping=damping)
    assert target.eta == pytest.approx(eta, rel=1e-12)
    plateau = 0.15 * 1.8 * eta * 2.5
    assert target(0.2) == pytest.approx(plateau, rel=1e-12)
    # Eq. 3.2 at T = 0 is a_g S whatever the damping
    assert target(0.0) == pytest.approx(0.15 * 1.8, rel=1e-12)


# Recommended values, EN 1998-1:2004 Tables 3.2 (Type 1) and 3.3 (Type 2), from memory.
TABLES = {
    (1, "A"): (1.0, 0.15, 0.4, 2.0), (1, "B"): (1.2, 0.15, 0.5, 2.0),
    (1, "C"): (1.15, 0.2, 0.6, 2.0), (1, "D"): (1.35, 0.2, 0.8, 2.0),
    (1, "E"): (1.4, 0.15, 0.5, 2.0),
    (2, "A"): (1.0, 0.05, 0.25, 1.2), (2, "B"): (1.35, 0.05, 0.25, 1.2),
    (2, "C"): (1.5, 0.1, 0.25, 1.2), (2, "D"): (1.8, 0.1, 0.3, 1.2),
    (2, "E"): (1.6, 0.05, 0.25, 1.2),
}


@pytest.mark.parametrize("kind, ground", sorted(TABLES))
def test_ec8_corner_periods_of_every_ground_type(kind, ground):
    """EN 1998-1:2004 Tables 3.2 and 3.3 (values from memory) and Eq. 3.2-3.5: the spectrum
    reaches the plateau at T_B, leaves it at T_C, is plateau T_C/T_D at T_D and
    plateau T_C T_D / 16 at 4 s, and starts at a_g S."""
    S, TB, TC, TD = TABLES[(kind, ground)]
    assert EC8_GROUND_TYPES[kind][ground] == pytest.approx((S, TB, TC, TD))
    ag = 0.25
    target = EC8Spectrum(ag=ag, ground_type=ground.lower(), spectrum_type=kind)
    plateau = ag * S * 2.5
    got = target([0.0, TB, 0.5 * (TB + TC), TC, TD, 4.0, 1.01 * TC])
    want = [ag * S, plateau, plateau, plateau, plateau * TC / TD, plateau * TC * TD / 16.0,
            plateau / 1.01]
    np.testing.assert_allclose(got, want, rtol=1e-12)


def test_ec8_above_four_seconds_needs_extrapolation():
    """EN 1998-1:2004 3.2.2.2(1)P states Eq. 3.5 up to T = 4 s."""
    target = EC8Spectrum(ag=0.2, ground_type="B")
    with pytest.raises(InputError, match="above 4 s"):
        target([1.0, 5.0])
    wider = EC8Spectrum(ag=0.2, ground_type="B", extrapolate=True)
    assert wider(5.0) == pytest.approx(0.2 * 1.2 * 2.5 * 0.5 * 2.0 / 25.0, rel=1e-12)


@pytest.mark.parametrize("kwargs, match", [
    (dict(ag=0.2, ground_type="F"), "ground type"),
    (dict(ag=0.2, spectrum_type=3), "spectrum type"),
    (dict(ag=0.0), "a_g"),
    (dict(ag=0.2, damping=5), "ratio"),
    (dict(ag=0.2, tb=0.7), "corner periods"),
])
def test_ec8_rejects_bad_parameters(kwargs, match):
    with pytest.raises(InputError, match=match):
        EC8Spectrum(**kwargs)


# ----------------------------------------------------------------------------- file


def write(path, text):
    path.write_text(text)
    return path


def test_file_spectrum_log_log_interpolation(tmp_path):
    """Log-log interpolation (common practice for spectra): between (1 s, 0.5 g) and
    (2 s, 0.25 g) Sa falls as 1/T, so Sa(sqrt 2) = 0.5/sqrt 2 and Sa(1.5) = 0.5/1.5;
    tabulated points are returned exactly; a comma or semicolon separates columns."""
    path = write(tmp_path / "t.txt", "# period s, Sa g\n0.5; 0.8\n\n1.0, 0.5\n2.0 0.25\n")
    target = FileSpectrum(path)
    got = target([0.5, 1.0, math.sqrt(2.0), 1.5, 2.0])
    np.testing.assert_allclose(got, [0.8, 0.5, 0.5 / math.sqrt(2.0), 0.5 / 1.5, 0.25], rtol=1e-12)
    # between 0.5 s and 1 s: Sa = 0.8 (T/0.5)^(log(0.5/0.8)/log 2)
    slope = math.log(0.5 / 0.8) / math.log(2.0)
    assert target(0.7) == pytest.approx(0.8 * (0.7 / 0.5) ** slope, rel=1e-12)
    assert target.caution == TARGET_CAUTION


def test_file_spectrum_with_period_zero(tmp_path):
    """A first row at T = 0 (the PGA) is joined linearly in T to the first positive period."""
    target = FileSpectrum(write(tmp_path / "t.txt", "0 0.3\n0.1 0.7\n1.0 0.7\n"))
    assert target(0.05) == pytest.approx(0.5, rel=1e-12)
    assert target(0.0) == pytest.approx(0.3, rel=1e-12)
    assert target(0.5) == pytest.approx(0.7, rel=1e-12)


def test_file_spectrum_outside_range(tmp_path):
    path = write(tmp_path / "t.txt", "1.0 0.5\n2.0 0.25\n")
    with pytest.raises(InputError, match=r"t\.txt: period 3 s is outside"):
        FileSpectrum(path)([1.5, 3.0])
    extended = FileSpectrum(path, extrapolate=True)
    # the last log-log segment continued: Sa = 0.5 / T
    assert extended(4.0) == pytest.approx(0.125, rel=1e-12)
    assert extended(0.5) == pytest.approx(1.0, rel=1e-12)


@pytest.mark.parametrize("text, line, match", [
    ("0.1 0.5\n0.3 0.6\n0.2 0.4\n", 3, "does not increase"),
    ("0.1 0.5\n0.1 0.6\n", 2, "does not increase"),
    ("# header\n0.1 0.5\n0.2 abc\n", 3, "cannot read"),
    ("0.1 0.5\n0.2 0.5 0.1\n", 2, "3 columns"),
    ("0.1 0.5\n0.2 0\n", 2, "must be > 0"),
    ("-0.1 0.5\n0.2 0.4\n", 1, "negative"),
    ("0.1 0.5\n0.2 nan\n", 2, "not finite"),
])
def test_file_spectrum_errors_name_file_and_line(tmp_path, text, line, match):
    path = write(tmp_path / "bad.txt", text)
    with pytest.raises(InputError, match=match) as info:
        FileSpectrum(path)
    assert str(info.value).startswith(f"{path}:{line}:")
    assert "\n" not in str(info.value)


def test_file_spectrum_missing_or_short(tmp_path):
    with pytest.raises(InputError, match="no such target spectrum file"):
        FileSpectrum(tmp_path / "none.txt")
    with pytest.raises(InputError, match="at least two points"):
        FileSpectrum(write(tmp_path / "one.txt", "# x\n1.0 0.5\n"))


# ----------------------------------------------------------------------------- registry


def test_registry_and_caution(tmp_path):
    assert set(TARGETS) == {"asce7", "ec8", "file"}
    asce = make_target("ASCE7", sds=1.0, sd1=0.5, tl=8.0)
    ec8 = make_target("ec8", ag=0.3, ground_type="B", spectrum_type="type 2")
    user = make_target("file", path=write(tmp_path / "t.txt", "1 0.5\n2 0.25\n"))
    for target in (asce, ec8, user):
        assert "building code in force" in target.caution
        assert target.damping == 0.05
        assert target.label
    assert ec8.spectrum_type == 2
    with pytest.raises(InputError, match="unknown target"):
        make_target("nz", ag=0.3)
    with pytest.raises(InputError, match="target 'asce7'"):
        make_target("asce7", sds=1.0, sd1=0.5)


def test_periods_must_be_non_negative():
    target = ASCE7Spectrum(sds=1.0, sd1=0.5, tl=8.0)
    with pytest.raises(InputError, match="periods must be finite"):
        target([0.5, -1.0])
