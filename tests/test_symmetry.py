"""Subunit deviation from the symmetric consensus, and lenient chain equivalence."""

from dataclasses import replace

import numpy as np
import pytest
from helix_channel import build_channel
from hypothesis import given, settings
from hypothesis import strategies as st

from poreprobe.geometry.axis import aligned_residues, equivalent_chains, find_pore_axis
from poreprobe.geometry.superpose import rotate_about, rotation_matrix
from poreprobe.geometry.symmetry import subunit_deviation


@pytest.fixture(scope="module")
def channel():
    return build_channel()


def _shift_chain(atoms, chain, shift):
    coords = atoms.coords_A.copy()
    coords[atoms.chain == chain] += shift
    return atoms.with_coords(coords)


def test_ideal_tetramer_has_zero_deviation(channel):
    sym = subunit_deviation(channel)
    assert sym.chains == ("A", "B", "C", "D") and sym.n_fold == 4
    assert np.nanmax(sym.deviation_A) < 1e-9
    assert sorted(abs(a) % 360 for a in sym.angles_deg) == [0.0, 90.0, 90.0, 180.0]


@pytest.mark.parametrize("chain", ["A", "B", "C", "D"])
def test_translated_subunit_shows_its_shift_alone(channel, chain):
    shift = np.array([0.7, -1.2, 0.4])
    sym = subunit_deviation(_shift_chain(channel, chain, shift))
    k = sym.chains.index(chain)
    np.testing.assert_allclose(sym.deviation_A[k], np.linalg.norm(shift), atol=1e-9)
    others = np.delete(sym.deviation_A, k, axis=0)
    assert np.nanmax(others) < 1e-9


def test_one_side_chain_rotated(channel):
    atoms = channel
    sel = (atoms.chain == "C") & (atoms.resid == 12) & np.isin(atoms.name, ["CG", "CD1", "CD2"])
    ca = atoms.coords_A[(atoms.chain == "C") & (atoms.resid == 12) & (atoms.name == "CA")][0]
    cb = atoms.coords_A[(atoms.chain == "C") & (atoms.resid == 12) & (atoms.name == "CB")][0]
    coords = atoms.coords_A.copy()
    coords[sel] = rotate_about(coords[sel], cb, cb - ca, np.radians(120))
    sym = subunit_deviation(atoms.with_coords(coords))
    dev = sym.by_label()
    assert dev["C:LEU12"] > 1.0
    assert max(v for k, v in dev.items() if k != "C:LEU12") < 1e-9


def test_swapped_equivalent_atoms_are_not_a_deviation(channel):
    names = channel.name.copy()
    res = (channel.chain == "B") & (channel.resid == 7)  # PHE 7
    i1 = np.flatnonzero(res & (names == "CD1"))[0]
    i2 = np.flatnonzero(res & (names == "CD2"))[0]
    names[i1], names[i2] = "CD2", "CD1"
    sym = subunit_deviation(replace(channel, name=names))
    assert np.nanmax(sym.deviation_A) < 1e-9


@settings(max_examples=8, deadline=None)
@given(
    angle=st.floats(0.1, 6.2),
    axis=st.tuples(*[st.floats(-1, 1)] * 3).filter(lambda v: np.linalg.norm(v) > 0.1),
    offset=st.tuples(*[st.floats(-20, 20)] * 3),
)
def test_rigid_motion_invariance(channel, angle, axis, offset):
    moved_d = _shift_chain(channel, "D", np.array([1.0, 0.0, 0.5]))
    rot = rotation_matrix(np.array(axis) / np.linalg.norm(axis), angle)
    moved = moved_d.with_coords(moved_d.coords_A @ rot.T + np.array(offset))
    np.testing.assert_allclose(
        subunit_deviation(moved).deviation_A, subunit_deviation(moved_d).deviation_A, atol=1e-8
    )


def test_missing_residue_keeps_chain_equivalent(channel):
    gap = channel.subset(~((channel.chain == "B") & (channel.resid == 13)))
    chains, matched = equivalent_chains(gap)
    assert chains == ["A", "B", "C", "D"]
    assert matched.shape == (4, 3 * 24, 3)  # 24 residues common to all chains
    columns = aligned_residues(gap, chains)
    assert (13, "") not in columns[1] and len(columns[0]) == 24
    axis = find_pore_axis(gap)
    assert axis.method == "symmetry C4"
    np.testing.assert_allclose(np.abs(axis.direction), [0, 0, 1], atol=1e-9)
    assert np.linalg.norm(axis.point_A[:2]) < 1e-6
    assert np.nanmax(subunit_deviation(gap).deviation_A) < 1e-9


def test_renumbered_chain_still_equivalent(channel):
    resid = channel.resid.copy()
    resid[channel.chain == "C"] += 100
    chains, _ = equivalent_chains(replace(channel, resid=resid))
    assert chains == ["A", "B", "C", "D"]


def test_no_equivalent_chains(channel):
    assert subunit_deviation(channel.subset(channel.chain == "A")) is None
