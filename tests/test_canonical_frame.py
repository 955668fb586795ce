"""The canonical pore frame does not depend on chain order, atom order or the lab frame.

Real structures from the MDAnalysisTests data folder, reached by their own file names:

* ``2r9r-1b.psf`` + ``2r9r-1b.xyz``: inner-helix fragment of a K+ channel tetramer (four
  chains), derived from PDB 2R9R (Long, Tao, Campbell and MacKinnon 2007, Nature 450:376;
  citation from memory).
* ``1grm_single.pdb``: gramicidin A, PDB 1GRM (Ketchem, Roux and Cross 1997, Structure
  5:1655; citation from memory), a head-to-head dimer of two chains.

Properties (issue 14 item 2): the axis direction (angle < 0.5 degree), the sign of s, the
origin and the in-plane reference direction map with any rigid motion and stay put under
any reordering of chains or atoms; the narrowest radius of the profile stays within 0.02 Å.
"""

from __future__ import annotations

import itertools
import warnings

import numpy as np
import pytest
from conftest import mdanalysis_test_file
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from scipy.spatial.transform import Rotation

import poreprobe as pp

ANGLE_DEG = 0.5
RADIUS_TOL_A = 0.02


def _read(name):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        if name == "kfrag":
            return pp.read_structure(
                mdanalysis_test_file("2r9r-1b.psf"),
                trajectory=mdanalysis_test_file("2r9r-1b.xyz"),
            )
        return pp.read_structure(mdanalysis_test_file("1grm_single.pdb"))


@pytest.fixture(scope="module", params=["kfrag", "gramicidin"])
def model(request):
    atoms = _read(request.param)
    axis = pp.find_pore_axis(atoms)
    prof = pp.radius_profile(atoms, axis, step_A=0.5)
    return request.param, atoms, axis, prof


def _reordered(atoms, chain_order):
    idx = np.concatenate([np.flatnonzero(atoms.chain == c) for c in chain_order])
    return atoms.subset(idx)


def _angle_deg(a, b):
    return float(np.degrees(np.arccos(np.clip(a @ b, -1.0, 1.0))))


def _same_frame(axis, ref, rot=None, shift=None):
    rot = np.eye(3) if rot is None else rot
    shift = np.zeros(3) if shift is None else shift
    want_dir = rot @ ref.direction
    assert _angle_deg(axis.direction, want_dir) < ANGLE_DEG  # same sign: angle near 0, not 180
    want_point = rot @ ref.point_A + shift
    off = axis.point_A - want_point
    assert abs(off @ axis.direction) < 0.05  # same s = 0
    assert np.linalg.norm(off - (off @ axis.direction) * axis.direction) < 0.1  # same line
    assert axis.chains == ref.chains
    if ref.reference_direction is not None:
        assert _angle_deg(axis.reference_direction, rot @ ref.reference_direction) < ANGLE_DEG


def test_axis_chains_and_reference_are_reported(model):
    name, atoms, axis, _ = model
    if name == "kfrag":
        assert axis.method == "symmetry C4" and set(axis.chains) == {"A", "B", "C", "D"}
        assert axis.chains[0] == "A"  # canonical order starts at the smallest id
        assert axis.symmetry_rmsd_A < 4.0
    else:
        assert axis.method == "principal"
        assert axis.oriented_by == "chain A runs N to C towards +s"
    e1, e2 = axis.reference_basis()
    np.testing.assert_allclose(np.cross(e1, e2), axis.direction, atol=1e-12)


def test_every_chain_order_gives_the_same_frame_and_profile(model):
    _, atoms, ref, prof = model
    chains = sorted(set(atoms.chain.tolist()))
    for order in itertools.permutations(chains):
        moved = _reordered(atoms, order)
        axis = pp.find_pore_axis(moved)
        _same_frame(axis, ref)
        got = pp.radius_profile(moved, axis, step_A=0.5)
        assert abs(got.min_radius_A - prof.min_radius_A) < RADIUS_TOL_A


@settings(
    max_examples=6, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture]
)
@given(seed=st.integers(0, 2**31 - 1))
def test_atom_shuffle_gives_the_same_frame_and_profile(model, seed):
    _, atoms, ref, prof = model
    perm = np.random.default_rng(seed).permutation(len(atoms))
    moved = atoms.subset(perm)
    axis = pp.find_pore_axis(moved)
    _same_frame(axis, ref)
    assert abs(pp.radius_profile(moved, axis, step_A=0.5).min_radius_A - prof.min_radius_A) < (
        RADIUS_TOL_A
    )


@settings(
    max_examples=6, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture]
)
@given(
    quat=st.tuples(*[st.floats(-1, 1)] * 4).filter(lambda q: np.linalg.norm(q) > 0.2),
    shift=st.tuples(*[st.floats(-50, 50)] * 3),
)
def test_rigid_motion_moves_the_frame_with_the_model(model, quat, shift):
    _, atoms, ref, prof = model
    rot = Rotation.from_quat(np.array(quat) / np.linalg.norm(quat)).as_matrix()
    moved = atoms.with_coords(atoms.coords_A @ rot.T + np.array(shift))
    axis = pp.find_pore_axis(moved)
    _same_frame(axis, ref, rot, np.array(shift))
    got = pp.radius_profile(moved, axis, step_A=0.5)
    assert abs(got.min_radius_A - prof.min_radius_A) < RADIUS_TOL_A
    assert abs(got.min_s_A - prof.min_s_A) < 0.51  # the same plane (s of the same sign)
