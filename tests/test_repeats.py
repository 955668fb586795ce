"""Pseudo-four-fold axis of a single chain of four repeats (poreprobe.geometry.repeats).

Built from a real entry: the four identical subunits of CavAb, PDB 5KLG (Tang, El-Din,
Swanson, Pryde, Scheuer, Zheng and Catterall 2016, "Structural basis for inhibition of a
voltage-gated Ca2+ channel by Ca2+ antagonist drugs", Nature 537:117; JRNL), joined into
one chain of four repeats, as eukaryotic Na+ and Ca2+ channels are made. The repeats'
axis must be the tetramer's four-fold axis, found independently by the chain symmetry.
"""

from __future__ import annotations

import os
import warnings
from dataclasses import replace

import numpy as np
import pytest
from scipy.spatial.transform import Rotation

import poreprobe as pp
from poreprobe.geometry.repeats import fit_repeats

DATA = os.path.join(os.path.dirname(__file__), "data")


@pytest.fixture(scope="module")
def tetramer_and_single_chain():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        atoms = pp.read_structure(os.path.join(DATA, "5klg.pdb.gz"))
    resid = atoms.resid.copy()
    for k, chain in enumerate("ABCD"):
        resid[atoms.chain == chain] += 1000 * (k + 1)
    one = replace(atoms, chain=np.full(len(atoms), "A"), resid=resid)
    return atoms, one.subset(np.argsort(resid, kind="stable"))


def _angle_deg(a, b):
    return float(np.degrees(np.arccos(np.clip(abs(a @ b), -1, 1))))


def test_single_chain_of_four_repeats_gets_the_four_fold_axis(tetramer_and_single_chain):
    tetramer, one = tetramer_and_single_chain
    c4 = pp.find_pore_axis(tetramer)
    assert c4.method == "symmetry C4"
    axis = pp.find_pore_axis(one)
    assert axis.method == "pseudo-C4 (repeats)" and axis.n_fold == 4
    assert axis.chains == ("A",) and axis.symmetry_rmsd_A < 4.0
    assert "four repeats of chain A" in axis.notes[0]
    assert _angle_deg(axis.direction, c4.direction) < 0.5
    off = axis.point_A - c4.point_A
    assert np.linalg.norm(off - (off @ c4.direction) * c4.direction) < 0.1
    fit = fit_repeats(one)
    # one repeat per former subunit: each segment within one subunit's numbering
    assert len({a // 1000 for a, _ in fit.segments}) == 4
    assert all(a // 1000 == b // 1000 for a, b in fit.segments)
    r_c4 = pp.radius_profile(tetramer, c4, step_A=0.5).min_radius_A
    r_rep = pp.radius_profile(one, axis, step_A=0.5).min_radius_A
    assert abs(r_rep - r_c4) < 0.05


def test_repeat_axis_moves_with_the_model(tetramer_and_single_chain):
    _, one = tetramer_and_single_chain
    ref = pp.find_pore_axis(one)
    rot = Rotation.from_euler("xyz", [40, -25, 70], degrees=True).as_matrix()
    moved = one.with_coords(one.coords_A @ rot.T + [30.0, -12.0, 5.0])
    axis = pp.find_pore_axis(moved)
    assert axis.method == "pseudo-C4 (repeats)"
    assert _angle_deg(axis.direction, rot @ ref.direction) < 0.5
    shuffled = one.subset(np.random.default_rng(3).permutation(len(one)))
    assert _angle_deg(pp.find_pore_axis(shuffled).direction, ref.direction) < 0.5


def test_no_repeat_axis_for_short_or_unrepeated_chains():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        lysozyme = pp.read_structure(os.path.join(DATA, "9lyz.pdb.gz"))
    assert fit_repeats(lysozyme) is None  # 129 residues: too short for four repeats
    assert pp.find_pore_axis(lysozyme).method == "principal"
