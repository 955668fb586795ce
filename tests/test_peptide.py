"""Tests of the polypeptide builder (poreprobe.demo.peptide)."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from poreprobe.demo.peptide import (
    C_N_A,
    CA_C_A,
    N_CA_A,
    N_CA_C_DEG,
    ONE_TO_THREE,
    backbone_dihedrals_deg,
    build_chain,
    dihedral_deg,
    place_atom,
    side_chain_atoms,
)
from poreprobe.errors import InputError


def _angle_deg(a, b, c):
    u, v = a - b, c - b
    return np.degrees(np.arccos(u @ v / np.linalg.norm(u) / np.linalg.norm(v)))


def _screw(ca):
    """Residues per turn and rise per residue (Å) of a helix from its CA atoms."""
    a, b = ca[:-1], ca[1:]
    ac, bc = a - a.mean(0), b - b.mean(0)
    u, _, vt = np.linalg.svd(ac.T @ bc)
    d = np.sign(np.linalg.det(vt.T @ u.T))
    rot = vt.T @ np.diag([1.0, 1.0, d]) @ u.T
    vals, vecs = np.linalg.eigh(0.5 * (rot + rot.T))
    axis = vecs[:, np.argmax(vals)]
    angle = np.degrees(np.arccos((np.trace(rot) - 1) / 2))
    shift = b.mean(0) - rot @ a.mean(0)
    return 360.0 / angle, abs(shift @ axis)


@settings(max_examples=50, deadline=None)
@given(
    st.lists(st.floats(-10, 10), min_size=9, max_size=9),
    st.floats(0.8, 2.0),
    st.floats(60, 170),
    st.floats(-180, 180),
)
def test_place_atom_honours_bond_angle_and_dihedral(xyz, bond, angle, dihedral):
    a, b, c = np.reshape(xyz, (3, 3))
    if np.linalg.norm(np.cross(b - a, c - b)) < 1e-2 or np.linalg.norm(c - b) < 0.1:
        return
    d = place_atom(a, b, c, bond, angle, dihedral)
    assert np.linalg.norm(d - c) == pytest.approx(bond, abs=1e-9)
    assert _angle_deg(b, c, d) == pytest.approx(angle, abs=1e-6)
    diff = (dihedral_deg(a, b, c, d) - dihedral + 180) % 360 - 180
    assert abs(diff) < 1e-6


def test_backbone_dihedrals_round_trip():
    rng = np.random.default_rng(7)
    n = 15
    phi = rng.uniform(-180, 180, n)
    psi = rng.uniform(-180, 180, n)
    omega = rng.uniform(170, 190, n)
    chain = build_chain("ACDEFGHIKLMNQRS", phi, psi, omega)
    p, s, o = backbone_dihedrals_deg(chain)
    wrap = lambda x: (x + 180) % 360 - 180  # noqa: E731
    np.testing.assert_allclose(wrap(p[1:] - phi[1:]), 0, atol=1e-7)
    np.testing.assert_allclose(wrap(s[:-1] - psi[:-1]), 0, atol=1e-7)
    np.testing.assert_allclose(wrap(o[:-1] - omega[:-1]), 0, atol=1e-7)


def test_backbone_bond_lengths_and_angle_are_the_ideal_ones():
    chain = build_chain("GAVLIG", -70, 140)
    n, ca, c = (chain.coords_A[chain.name == k] for k in ("N", "CA", "C"))
    np.testing.assert_allclose(np.linalg.norm(ca - n, axis=1), N_CA_A, atol=1e-9)
    np.testing.assert_allclose(np.linalg.norm(c - ca, axis=1), CA_C_A, atol=1e-9)
    np.testing.assert_allclose(np.linalg.norm(n[1:] - c[:-1], axis=1), C_N_A, atol=1e-9)
    angles = [_angle_deg(n[i], ca[i], c[i]) for i in range(len(n))]
    np.testing.assert_allclose(angles, N_CA_C_DEG, atol=1e-6)


def test_alpha_helix_has_3_6_residues_per_turn_and_1_5_angstrom_rise():
    # Pauling, Corey & Branson 1951, PNAS 37:205: 3.6 residues per turn, 1.5 Å rise
    # per residue (values recalled from memory); phi/psi -57/-47 (common practice).
    chain = build_chain("A" * 20, -57, -47)
    per_turn, rise = _screw(chain.coords_A[chain.name == "CA"])
    assert per_turn == pytest.approx(3.6, abs=0.05)
    assert rise == pytest.approx(1.5, abs=0.1)


@pytest.mark.parametrize("resname", sorted(ONE_TO_THREE.values()))
def test_side_chains_match_the_chemical_component_dictionary(resname):
    # Reference: ideal coordinates of the wwPDB Chemical Component Dictionary as
    # bundled with biotite; built from its own N, CA, C with its own chi angles,
    # every heavy side-chain atom lands where the CCD puts it.
    info = pytest.importorskip("biotite.structure.info")
    ref = info.residue(resname)
    heavy = ref.element != "H"
    xyz = {str(n): ref.coord[i].astype(float) for i, n in enumerate(ref.atom_name) if heavy[i]}
    built = side_chain_atoms(resname, {k: xyz[k] for k in ("N", "CA", "C")})
    expected = sorted(set(xyz) - {"N", "CA", "C", "O", "OXT"})
    assert sorted(name for name, _, _ in built) == expected
    for name, element, pos in built:
        assert element == str(ref.element[list(ref.atom_name).index(name)])
        assert np.linalg.norm(pos - xyz[name]) < 0.01, name


def test_chi_angles_are_set_as_asked():
    chain = build_chain("GFG", -60, 140, chi_deg={1: (-170.0, 75.0)})
    pos = {
        n: chain.coords_A[(chain.resid == 2) & (chain.name == n)][0]
        for n in ("N", "CA", "CB", "CG", "CD1")
    }
    assert dihedral_deg(pos["N"], pos["CA"], pos["CB"], pos["CG"]) == pytest.approx(
        -170.0, abs=1e-6
    )
    assert dihedral_deg(pos["CA"], pos["CB"], pos["CG"], pos["CD1"]) == pytest.approx(
        75.0, abs=1e-6
    )


def test_terminal_oxygen_and_atom_order():
    chain = build_chain("GS", -60, 140)
    assert chain.name.tolist() == ["N", "CA", "C", "O", "N", "CA", "C", "O", "CB", "OG", "OXT"]
    assert chain.resname.tolist()[-1] == "SER"


def test_bad_input_is_rejected_with_a_clear_message():
    with pytest.raises(InputError, match="unknown one-letter codes"):
        build_chain("AXB", -60, -45)
    with pytest.raises(InputError, match="one value per residue"):
        build_chain("AAA", [-60, -60], -45)
    with pytest.raises(InputError, match="2 chi angles"):
        build_chain("AFA", -60, -45, chi_deg={1: (60.0,)})
    with pytest.raises(InputError, match="outside"):
        build_chain("AAA", -60, -45, chi_deg={5: (60.0,)})
    with pytest.raises(InputError, match="empty"):
        build_chain("", -60, -45)
