"""Record: validation, units, scaling."""

import numpy as np
import pytest

from simulate.errors import InputError, RecordError
from simulate.excitation import Record

#: Standard acceleration of gravity, m/s^2: 3rd CGPM (1901), also ISO 80000-3.
#: Written here from the published value, not read from simulate.settings.
G_CGPM = 9.80665


def test_stored_as_contiguous_read_only_float64_copy():
    """The record keeps its own float64 copy; changing the input later must not change it."""
    source = [0, 1, 2, 3]
    values = np.array(source, dtype=np.int32)
    rec = Record(values, dt=0.02)
    values[0] = 99
    assert rec.acceleration.dtype == np.float64
    assert rec.acceleration.flags.c_contiguous
    np.testing.assert_array_equal(rec.acceleration, source)
    with pytest.raises(ValueError):
        rec.acceleration[0] = 1.0


def test_time_axis_and_duration():
    """n samples at dt span (n - 1) dt seconds (common practice for sampled records)."""
    rec = Record(np.zeros(501), dt=0.02)
    assert rec.n_steps == 501
    assert rec.duration == pytest.approx(10.0, rel=1e-15)
    np.testing.assert_allclose(rec.time, np.linspace(0.0, 10.0, 501), rtol=0, atol=1e-12)


def test_pga_is_absolute_peak():
    """PGA is the largest absolute acceleration (common practice), sign ignored."""
    rec = Record([0.1, -0.4, 0.3], dt=0.01)
    assert rec.pga == 0.4


def test_cm_s2_and_g_give_same_si_values():
    """g = 9.80665 m/s^2 (standard gravity, 3rd CGPM 1901); 1 cm/s^2 = 0.01 m/s^2 (SI prefix)."""
    rng = np.random.default_rng(3)
    in_g = rng.uniform(-0.5, 0.5, 200)
    rec_g = Record(in_g, dt=0.01, units="g")
    rec_cm = Record(in_g * G_CGPM * 100.0, dt=0.01, units="cm/s2")
    np.testing.assert_allclose(rec_g.to_si(), in_g * G_CGPM, rtol=1e-15)
    np.testing.assert_allclose(rec_cm.to_si(), rec_g.to_si(), rtol=1e-14)


@pytest.mark.parametrize(
    "alias, canonical",
    [("gal", "cm/s2"), ("Gal", "cm/s2"), ("m/s^2", "m/s2"), (" G ", "g"), ("cm/s**2", "cm/s2")],
)
def test_unit_aliases_normalised(alias, canonical):
    """1 Gal = 1 cm/s^2 (the gal, BIPM SI Brochure, non-SI units table); other spellings as written."""
    assert Record([0.0, 1.0], dt=0.01, units=alias).units == canonical


def test_in_units_round_trip():
    """Converting g -> cm/s2 multiplies by 980.665 (standard gravity, CGPM 1901)."""
    rec = Record([0.1, -0.2, 0.05], dt=0.01, units="g", name="r")
    cm = rec.in_units("gal")
    assert cm.units == "cm/s2"
    np.testing.assert_allclose(cm.acceleration, rec.acceleration * G_CGPM * 100, rtol=1e-15)
    np.testing.assert_allclose(cm.in_units("g").acceleration, rec.acceleration, rtol=1e-15)


def test_scaled_records_factor_in_metadata():
    """Scaling multiplies every sample and leaves dt and units alone; the factor stays in provenance."""
    rec = Record([0.1, -0.2], dt=0.01, name="r", metadata={"source": "r.txt"})
    twice = rec.scaled(2.0).scaled(1.5)
    np.testing.assert_allclose(twice.acceleration, [0.3, -0.6], rtol=1e-15)
    assert twice.metadata["processing"] == [
        {"step": "scale", "factor": 2.0},
        {"step": "scale", "factor": 1.5},
    ]
    assert twice.metadata["scale_factor"] == pytest.approx(3.0)
    assert twice.metadata["source"] == "r.txt"
    assert "processing" not in rec.metadata
    with pytest.raises(RecordError, match="scale factor"):
        rec.scaled(float("nan"))


@pytest.mark.parametrize(
    "kwargs, fragment",
    [
        (dict(acceleration=[0.0, np.nan, 1.0], dt=0.01), "not finite at step 1"),
        (dict(acceleration=[0.0, np.inf], dt=0.01), "not finite at step 1"),
        (dict(acceleration=[[0.0, 1.0], [2.0, 3.0]], dt=0.01), "1-D"),
        (dict(acceleration=[0.5], dt=0.01), "at least 2"),
        (dict(acceleration=[0.0, 1.0], dt=0.0), "dt"),
        (dict(acceleration=[0.0, 1.0], dt=-0.01), "dt"),
        (dict(acceleration=[0.0, 1.0], dt=float("inf")), "dt"),
        (dict(acceleration=[0.0, 1.0], dt="0.01"), "dt"),
        (dict(acceleration=[0.0, 1.0], dt=0.01, units="ft/s2"), "unknown acceleration units"),
        (dict(acceleration=["a", "b"], dt=0.01), "numbers"),
    ],
)
def test_invalid_records_name_the_record_and_file(kwargs, fragment):
    """Every invalid input raises RecordError (an InputError) naming the record and its source file."""
    with pytest.raises(RecordError) as info:
        Record(**kwargs, name="quake7", metadata={"source": "quake7.txt"})
    message = str(info.value)
    assert fragment in message
    assert "quake7" in message and "quake7.txt" in message
    assert isinstance(info.value, InputError)


def test_equality_is_identity():
    """Records compare by identity (eq=False), so arrays are never compared element-wise."""
    a = Record([0.0, 1.0], dt=0.01)
    b = Record([0.0, 1.0], dt=0.01)
    assert a != b and a == a
    assert len({a, b}) == 2
