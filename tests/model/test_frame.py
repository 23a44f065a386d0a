"""ShearFrame: matrices against a storey-by-storey assembly, and input validation."""

import math
import re

import numpy as np
import pytest

import simulate as ss
from reference import shear_frame_matrices

from conftest import FRAME5


def test_mass_and_stiffness_matrices_match_direct_assembly():
    """K assembled from storey springs k_i [[1, -1], [-1, 1]] between floors i-1 and i
    (direct stiffness method, common practice; Chopra, Dynamics of Structures, ch. 9,
    stiffness matrix of a shear building)."""
    frame = ss.ShearFrame(**FRAME5)
    M, K = shear_frame_matrices(FRAME5["mass"], FRAME5["stiffness"])
    np.testing.assert_array_equal(frame.mass_matrix(), M)
    np.testing.assert_allclose(frame.stiffness_matrix(), K, rtol=0, atol=1e-6)
    # a storey stiffness in the wrong row would break this: the top floor only feels k_N
    assert frame.stiffness_matrix()[-1, -1] == FRAME5["stiffness"][-1]
    assert frame.stiffness_matrix()[0, 0] == FRAME5["stiffness"][0] + FRAME5["stiffness"][1]


def test_state_matrix_layout():
    """x = [u; v], x' = A x with A = [[0, I], [-M^-1 K, -M^-1 C]] (Chopra, Dynamics of
    Structures, ch. 14, state-space form; chapter from memory)."""
    frame = ss.ShearFrame(**FRAME5, damping=ss.Rayleigh(0.05, (1, 3)))
    M, K = shear_frame_matrices(FRAME5["mass"], FRAME5["stiffness"])
    C = frame.damping_matrix()
    n = 5
    A = np.zeros((2 * n, 2 * n))
    A[:n, n:] = np.eye(n)
    A[n:, :n] = -np.linalg.solve(M, K)
    A[n:, n:] = -np.linalg.solve(M, C)
    np.testing.assert_allclose(frame.state_matrix(), A, rtol=1e-13, atol=1e-12)


def test_scalars_broadcast_to_the_number_of_storeys():
    """A scalar property applies to every storey (the first list sets N)."""
    frame = ss.ShearFrame(mass=2.0e5, stiffness=[3e8, 2e8, 1e8], height=3.0)
    assert frame.n_storeys == 3
    np.testing.assert_array_equal(frame.mass, [2.0e5] * 3)
    np.testing.assert_array_equal(frame.height, [3.0] * 3)
    assert frame.total_mass == 6.0e5
    assert frame.total_height == 9.0


def test_stiffness_for_period_gives_the_target_period():
    """K scales with kappa, so omega_1^2 scales with kappa (Rayleigh quotient, common
    practice); checked against scipy.linalg.eigh on the returned stiffnesses."""
    import scipy.linalg

    mass = np.array(FRAME5["mass"])
    for profile in (np.ones(5), np.array([5.0, 4.0, 3.0, 2.0, 1.0])):
        k = ss.stiffness_for_period(mass, FRAME5["height"], 0.8, profile)
        np.testing.assert_allclose(k / k[0], profile / profile[0], rtol=1e-14)
        M, K = shear_frame_matrices(mass, k)
        w2 = scipy.linalg.eigh(K, M, eigvals_only=True)
        assert 2 * math.pi / math.sqrt(w2[0]) == pytest.approx(0.8, rel=1e-12)


@pytest.mark.parametrize("prop", ["mass", "stiffness", "height"])
@pytest.mark.parametrize("bad", [0.0, -1.0, math.nan, math.inf])
def test_bad_storey_value_names_property_and_storey(prop, bad):
    """Non-positive or non-finite storey data raise InputError naming the property and
    storey (project error convention, DESIGN.md)."""
    values = {k: list(v) for k, v in FRAME5.items()}
    values[prop][3] = bad
    with pytest.raises(ss.InputError) as err:
        ss.ShearFrame(**values)
    msg = str(err.value)
    assert prop in msg and "storey 4" in msg


@pytest.mark.parametrize("prop", ["mass", "stiffness", "height"])
def test_lists_of_different_lengths_are_refused(prop):
    """Each storey needs one value of every property (project convention). The message
    names a property and both counts (4 and 5), whichever list sets N."""
    values = {k: list(v) for k, v in FRAME5.items()}
    values[prop] = values[prop][:-1]
    with pytest.raises(ss.InputError) as err:
        ss.ShearFrame(**values)
    msg = str(err.value)
    assert re.search(r"\b(mass|stiffness|height)\b", msg)
    assert "4" in msg and "5" in msg


@pytest.mark.parametrize("value", ["heavy", [[1.0, 2.0], [3.0, 4.0]], []])
def test_malformed_property_is_refused(value):
    """Text, nested lists and empty lists are not storey data (project convention)."""
    with pytest.raises(ss.InputError, match="mass"):
        ss.ShearFrame(mass=value, stiffness=1e8, height=3.0)


def test_damping_must_be_a_damping_model():
    """A bare number is not a damping model (project convention)."""
    with pytest.raises(ss.InputError, match="damping"):
        ss.ShearFrame(**FRAME5, damping=0.05)
