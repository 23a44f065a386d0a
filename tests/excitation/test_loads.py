"""FloorForces: validation and shape conventions."""

import numpy as np
import pytest

from simulate.errors import RecordError
from simulate.excitation import FloorForces


def test_shape_properties():
    """Column j holds floor j + 1; n samples at dt span (n - 1) dt (common practice)."""
    force = np.arange(30.0).reshape(10, 3)
    loads = FloorForces(force, dt=0.05, name="wind")
    assert (loads.n_steps, loads.n_floors) == (10, 3)
    assert loads.duration == pytest.approx(0.45)
    np.testing.assert_allclose(loads.time, np.arange(10) * 0.05)
    np.testing.assert_array_equal(loads.force[:, 2], force[:, 2])
    assert loads.force.flags.c_contiguous and not loads.force.flags.writeable


@pytest.mark.parametrize(
    "force, dt, fragment",
    [
        (np.zeros(10), 0.01, "2-D"),
        (np.zeros((1, 3)), 0.01, "at least 2"),
        (np.zeros((5, 0)), 0.01, "floor column"),
        (np.array([[0.0, 1.0], [np.nan, 0.0]]), 0.01, "not finite at step 1"),
        (np.zeros((5, 2)), 0.0, "dt"),
        (np.zeros((5, 2)), float("nan"), "dt"),
    ],
)
def test_invalid_forces(force, dt, fragment):
    """Bad arrays or time steps raise RecordError naming the load and its file."""
    with pytest.raises(RecordError) as info:
        FloorForces(force, dt=dt, name="gusts", metadata={"source": "gusts.csv"})
    assert fragment in str(info.value)
    assert "gusts" in str(info.value) and "gusts.csv" in str(info.value)
