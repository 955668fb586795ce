"""Comparing models on one axial frame."""

import numpy as np
import pytest
from helix_channel import build_channel

import poreprobe
from poreprobe.checks.compare import align_model, compare_models
from poreprobe.errors import InputError
from poreprobe.geometry.superpose import rotation_matrix


@pytest.fixture(scope="module")
def channel():
    return build_channel()


def _move_ring(atoms, resid, vector_for):
    """Translate residue ``resid`` of every chain by vector_for(chain, residue rows)."""
    coords = atoms.coords_A.copy()
    for ch in "ABCD":
        rows = (atoms.chain == ch) & (atoms.resid == resid)
        coords[rows] += vector_for(ch, rows)
    return atoms.with_coords(coords)


def test_model_against_itself_is_zero(channel):
    result = compare_models([channel, channel])
    assert result.labels == ("invented helix tetramer", "invented helix tetramer#2")
    np.testing.assert_allclose(np.nan_to_num(result.difference_A), 0.0, atol=1e-9)
    assert np.isnan(result.radius_A[0]).tolist() == np.isnan(result.radius_A[1]).tolist()
    assert len(result.shifts) == 3
    for shift in result.shifts:
        assert shift.delta_s_A == 0.0
        assert shift.delta_radius_A == pytest.approx(0.0, abs=1e-9)


def test_rigidly_moved_copy_is_realigned(channel):
    rot = rotation_matrix(np.array([1.0, 2.0, 0.5]) / np.linalg.norm([1.0, 2.0, 0.5]), 0.9)
    moved = channel.with_coords(channel.coords_A @ rot.T + [12.0, -7.0, 30.0])
    result = compare_models([channel, moved])
    assert result.models[1].transform.rmsd_A < 1e-9
    assert result.models[1].own_axis_angle_deg < 1e-6
    np.testing.assert_allclose(np.nan_to_num(result.difference_A[1]), 0.0, atol=1e-6)


def test_widened_ring_shows_its_shift_at_its_level(channel):
    prof = poreprobe.radius_profile(channel, poreprobe.find_pore_axis(channel))
    centre = prof.min_center_A  # on the axis, in the plane of the LEU 12 ring
    widen_A = 0.8

    def outward(ch, rows):
        cd1 = channel.coords_A[rows & (channel.name == "CD1")][0]
        return widen_A * (cd1 - centre) / np.linalg.norm(cd1 - centre)

    wide = _move_ring(channel, 12, outward)
    result = compare_models([channel, wide], reference_selection="name CA and not resid 12")
    assert result.models[1].transform.rmsd_A < 1e-9
    leu = [s for s in result.shifts if "LEU 12" in s.lined_by]
    assert len(leu) == 1
    # each LEU 12 atom moved 0.8 Å straight away from the sphere centre: the sphere grows
    # by exactly 0.8 Å while the ring still limits it (geometry, no outside source needed)
    assert leu[0].delta_radius_at_level_A == pytest.approx(widen_A, abs=1e-6)
    assert leu[0].delta_radius_A == pytest.approx(widen_A, abs=1e-6)
    assert leu[0].delta_s_A == 0.0
    assert result.difference_at(1, leu[0].reference_s_A) == pytest.approx(widen_A, abs=1e-6)
    # other rings do not move, and far from the ring nothing changes
    for s in result.shifts:
        if s is not leu[0]:
            assert s.delta_radius_A == pytest.approx(0.0, abs=1e-9)
    far = np.abs(result.s_A - leu[0].reference_s_A) > 8.0
    np.testing.assert_allclose(np.nan_to_num(result.difference_A[1][far]), 0.0, atol=1e-9)


def test_ring_moved_along_the_axis(channel):
    axis = poreprobe.find_pore_axis(channel)
    up = _move_ring(channel, 12, lambda ch, rows: 1.0 * axis.direction)
    result = compare_models([channel, up], reference_selection="name CA and not resid 12")
    leu = [s for s in result.shifts if "LEU 12" in s.lined_by][0]
    # the constriction follows its ring: +1.0 Å, on a 0.2 Å plane grid
    assert leu.delta_s_A == pytest.approx(1.0, abs=0.2 + 1e-9)
    assert abs(leu.delta_radius_A) < 0.2


def test_three_models(channel):
    result = compare_models([channel, channel, channel], labels=["wt", "mut", "open"])
    assert result.labels == ("wt", "mut", "open")
    assert result.radius_A.shape == (3, len(result.s_A))
    assert len(result.shifts) == 2 * 3
    data = result.to_dict()
    assert set(data["profile"]["difference_A"]) == {"wt", "mut", "open"}
    text = result.to_csv()
    assert text.splitlines()[1].startswith("s_A,radius_A[wt],radius_A[mut],radius_A[open]")


def test_bad_input(channel):
    with pytest.raises(InputError, match="at least two"):
        compare_models([channel])
    renamed = channel.subset(channel.chain == "A")
    other = renamed.with_coords(renamed.coords_A)
    from dataclasses import replace

    other = replace(other, chain=np.full(len(other), "Z"))
    with pytest.raises(InputError, match="at least 3"):
        align_model(other, channel)
    with pytest.raises(InputError, match="matches no atoms"):
        compare_models([channel, channel], reference_selection="resname ZZZ")
