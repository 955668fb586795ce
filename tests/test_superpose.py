"""Least-squares superposition (shared by axis finding, symmetry checks and comparisons)."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from poreprobe.errors import InputError
from poreprobe.geometry.superpose import (
    kabsch_rotation,
    rotation_axis_angle,
    rotation_matrix,
    signed_rotation_angle,
    superpose,
)


@settings(max_examples=25, deadline=None)
@given(
    angle=st.floats(-3.1, 3.1),
    axis=st.tuples(*[st.floats(-1, 1)] * 3).filter(lambda v: np.linalg.norm(v) > 0.1),
    shift=st.tuples(*[st.floats(-50, 50)] * 3),
)
def test_recovers_a_known_motion(angle, axis, shift):
    rng = np.random.default_rng(7)
    pts = rng.normal(size=(30, 3)) * 5
    unit = np.array(axis) / np.linalg.norm(axis)
    rot = rotation_matrix(unit, angle)
    target = pts @ rot.T + np.array(shift)
    fit = superpose(pts, target)
    np.testing.assert_allclose(fit.rotation, rot, atol=1e-9)
    np.testing.assert_allclose(fit.apply(pts), target, atol=1e-8)
    assert fit.rmsd_A < 1e-8
    assert signed_rotation_angle(fit.rotation, unit) == pytest.approx(angle, abs=1e-7)


def test_never_a_reflection():
    rng = np.random.default_rng(3)
    pts = rng.normal(size=(20, 3))
    mirrored = pts * [1, 1, -1]
    rot = kabsch_rotation(pts, mirrored)
    assert np.linalg.det(rot) == pytest.approx(1.0)


def test_half_turn_axis():
    axis, angle = rotation_axis_angle(rotation_matrix([0, 0, 1.0], np.pi))
    assert angle == pytest.approx(np.pi)
    np.testing.assert_allclose(np.abs(axis), [0, 0, 1], atol=1e-12)


def test_rmsd_of_noisy_fit():
    pts = np.array([[0.0, 0, 0], [2, 0, 0], [0, 2, 0], [0, 0, 2]])
    noisy = pts + np.array([[0.1, 0, 0], [-0.1, 0, 0], [0, 0.1, 0], [0, -0.1, 0]])
    fit = superpose(pts, noisy)
    assert 0 < fit.rmsd_A <= 0.1


def test_bad_input():
    with pytest.raises(InputError, match="same shape"):
        superpose(np.zeros((4, 3)), np.zeros((5, 3)))
    with pytest.raises(InputError, match="at least 3"):
        superpose(np.zeros((2, 3)), np.zeros((2, 3)))
