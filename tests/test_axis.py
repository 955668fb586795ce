import numpy as np
import pytest
from scipy.spatial.transform import Rotation

from poreprobe import InputError, PoreAxis, find_pore_axis, read_structure
from poreprobe.geometry import synthetic as syn
from poreprobe.geometry.axis import equivalent_chains, symmetry_axis


def _hourglass_rings():
    _, radii, z = syn.hourglass(atoms_per_ring=32)
    return radii, z


def test_c4_symmetry_axis_recovered_after_rigid_motion():
    atoms = syn.ring_stack(*_hourglass_rings(), atoms_per_ring=32, chains=4)
    rot = Rotation.from_euler("xyz", [30, -50, 12], degrees=True)
    shift = np.array([12.0, -3.0, 40.0])
    moved = atoms.with_coords(rot.apply(np.array(atoms.coords_A)) + shift)
    axis = find_pore_axis(moved)
    assert axis.method == "symmetry C4"
    assert axis.n_fold == 4
    assert axis.symmetry_rmsd_A == pytest.approx(0.0, abs=1e-6)
    assert abs(axis.direction @ rot.apply([0, 0, 1])) == pytest.approx(1.0, abs=1e-9)
    # the axis line passes through the transformed origin
    offset = shift - axis.point_A
    assert np.linalg.norm(offset - (offset @ axis.direction) * axis.direction) < 1e-6


def test_symmetry_rmsd_reports_a_displaced_subunit():
    atoms = syn.ring_stack(*_hourglass_rings(), atoms_per_ring=32, chains=4)
    coords = np.array(atoms.coords_A)
    coords[atoms.chain == "B"] += [0.8, 0.0, 0.0]
    axis = symmetry_axis(atoms.with_coords(coords))
    assert axis.symmetry_rmsd_A > 0.1


def test_equivalent_chains_needs_matching_sequences():
    atoms = syn.ring_stack(*_hourglass_rings(), atoms_per_ring=32, chains=4)
    chains, matched = equivalent_chains(atoms)
    assert chains == ["A", "B", "C", "D"]
    assert matched.shape[0] == 4 and matched.shape[2] == 3


def test_single_chain_uses_most_open_principal_axis():
    atoms, _, _ = syn.hourglass()  # one chain: no symmetry group
    axis = find_pore_axis(atoms)
    assert axis.method == "principal"
    assert abs(axis.direction[2]) == pytest.approx(1.0, abs=1e-6)


def test_gramicidin_axis_runs_along_the_channel(gramicidin_pdb):
    # PDB 1GRM: a head-to-head dimer whose two-fold axis crosses the channel; the pore
    # runs along the long axis of the dimer, through the centroid.
    atoms = read_structure(gramicidin_pdb)
    axis = find_pore_axis(atoms)
    sym = symmetry_axis(atoms)
    assert sym is not None and sym.n_fold == 2
    assert abs(axis.direction @ sym.direction) < 0.1
    s = axis.s_A(atoms.coords_A)
    assert np.ptp(s) > 25  # the dimer is about 26 Å long (Finkelstein & Andersen 1981)


def test_entry_orients_s():
    atoms = syn.ring_stack(*_hourglass_rings(), atoms_per_ring=32, chains=4)
    top = find_pore_axis(atoms, entry="resid 21")
    bottom = find_pore_axis(atoms, entry="resid 1")
    assert top.s_A(atoms.coords_A)[atoms.resid == 21].mean() < 0
    assert bottom.s_A(atoms.coords_A)[atoms.resid == 1].mean() < 0
    assert top.direction @ bottom.direction == pytest.approx(-1.0)


def test_entry_in_the_middle_is_rejected():
    atoms = syn.ring_stack(*_hourglass_rings(), atoms_per_ring=32, chains=4)
    with pytest.raises(InputError, match="middle of the pore"):
        find_pore_axis(atoms, entry="resid 11")


def test_entry_matching_nothing_is_rejected():
    atoms = syn.ring_stack(*_hourglass_rings(), atoms_per_ring=32, chains=4)
    with pytest.raises(InputError, match="matches no atoms"):
        find_pore_axis(atoms, entry="resname XYZ")


def test_user_axis_and_selections():
    atoms = syn.ring_stack(*_hourglass_rings(), atoms_per_ring=32, chains=4)
    user = find_pore_axis(atoms, point_A=[0, 0, 5], direction=[0, 0, -2])
    assert user.method == "user"
    np.testing.assert_allclose(user.direction, [0, 0, -1])
    by_sel = find_pore_axis(atoms, selections=("resid 1", "resid 21"))
    assert by_sel.method == "selections"
    np.testing.assert_allclose(by_sel.direction, [0, 0, 1], atol=1e-9)


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        ({"direction": [0, 0, 0]}, "non-zero length"),
        ({"method": "guess"}, "method must be one of"),
        ({"method": "user"}, "needs a direction"),
        ({"selections": ("resid 1", "resid 1")}, "same centroid"),
        ({"direction": [0, float("nan"), 1]}, "finite"),
    ],
)
def test_bad_axis_arguments(kwargs, match):
    atoms = syn.ring_stack(*_hourglass_rings(), atoms_per_ring=32, chains=4)
    with pytest.raises(InputError, match=match):
        find_pore_axis(atoms, **kwargs)


def test_axis_frame_round_trip():
    axis = PoreAxis([1, 2, 3], [1, 1, 0], "user")
    pts = np.random.default_rng(0).normal(size=(20, 3))
    np.testing.assert_allclose(axis.from_frame(axis.to_frame(pts)), pts, atol=1e-12)
    e1, e2 = axis.basis()
    np.testing.assert_allclose(np.cross(e1, e2), axis.direction, atol=1e-12)
