"""Pore-lining residues and constrictions on analytic ring stacks and the helix tetramer."""

import numpy as np
import pytest
from helix_channel import build_channel

import poreprobe
from poreprobe.errors import InputError
from poreprobe.geometry.lining import find_constrictions, lining_contacts, pore_lining
from poreprobe.geometry.synthetic import expected_radius_A, ring_stack

AXIS = poreprobe.PoreAxis([0, 0, 0], [0, 0, 1], "user")
CARBON_A = 1.70  # Bondi 1964, Table I (carbon)


@pytest.fixture(scope="module")
def hourglass4():
    """Rings of 24 carbons, split into 4 chains; ring radius 4 Å at z = 0, 9 Å at the ends."""
    z = np.arange(-10.0, 10.5, 1.0)
    radii = 4.0 + 5.0 * (z / 10.0) ** 2
    atoms = ring_stack(radii, z, atoms_per_ring=24, chains=4)
    prof = poreprobe.radius_profile(atoms, AXIS, step_A=0.25, margin_A=0.0)
    return atoms, radii, z, prof


def test_profile_matches_closed_form(hourglass4):
    atoms, radii, z, prof = hourglass4
    inner = np.abs(prof.s_A) <= 9.0
    np.testing.assert_allclose(
        prof.radius_A[inner], expected_radius_A(radii, z, prof.s_A[inner], CARBON_A), atol=0.05
    )


def test_waist_is_the_only_constriction(hourglass4):
    atoms, radii, z, prof = hourglass4
    lining = pore_lining(atoms, prof, constriction_radius_A=4.0)
    assert len(lining.constrictions) == 1
    waist = lining.constrictions[0]
    assert waist.s_A == pytest.approx(0.0, abs=1e-9)
    assert waist.radius_A == pytest.approx(4.0 - CARBON_A, abs=1e-4)
    # the ring at z = 0 is residue 11 in every chain: one group of four copies
    assert [g.text for g in waist.groups][0] == "ring of 4 x ALA 11 side chains and backbone"
    assert waist.groups[0].chains == ("A", "B", "C", "D")


def test_per_residue_table(hourglass4):
    atoms, radii, z, prof = hourglass4
    lining = pore_lining(atoms, prof, lining_distance_A=0.5)
    table = {(r.chain, r.resid): r for r in lining.residues}
    waist = table[("A", 11)]
    assert waist.closest_A == pytest.approx(4.0 - CARBON_A, abs=1e-4)
    assert waist.closest_s_A == pytest.approx(0.0, abs=1e-9)
    assert waist.s_min_A < 0.0 < waist.s_max_A
    # the closest approach of every lining residue is its ring's distance minus the radius
    for r in lining.residues:
        assert r.closest_A >= (radii[r.resid - 1] - CARBON_A) - 1e-6
    # every lining contact obeys the definition
    centres = prof.center_A[lining.plane_index]
    gaps = (
        np.linalg.norm(atoms.coords_A[lining.atom_index] - centres, axis=1)
        - CARBON_A
        - prof.radius_A[lining.plane_index]
    )
    np.testing.assert_allclose(gaps, lining.gap_A, atol=1e-12)
    assert gaps.max() <= 0.5 + 1e-12 and gaps.min() >= -1e-6
    # level by level: at the waist plane the ring at z = 0 (residue 11) lines it first
    levels = {round(lv["s_A"], 6): lv["residues"] for lv in lining.levels()}
    assert levels[0.0][0].endswith(":ALA11")
    assert {lab.split(":")[0] for lab in levels[0.0] if lab.endswith(":ALA11")} == set("ABCD")


def test_contacts_against_brute_force(hourglass4):
    atoms, _, _, prof = hourglass4
    radii = np.full(len(atoms), CARBON_A)
    plane, atom, _ = lining_contacts(atoms.coords_A, radii, prof.center_A, prof.radius_A, 1.0)
    ok = np.isfinite(prof.radius_A)
    d = np.linalg.norm(atoms.coords_A[None] - prof.center_A[ok][:, None], axis=2) - CARBON_A
    brute = np.argwhere(d - prof.radius_A[ok][:, None] <= 1.0)
    expect = {(int(np.flatnonzero(ok)[p]), int(a)) for p, a in brute}
    assert set(zip(plane.tolist(), atom.tolist(), strict=True)) == expect


def test_threshold_and_prominence(hourglass4):
    atoms, _, _, prof = hourglass4
    assert find_constrictions(prof, constriction_radius_A=2.0) == []
    assert len(find_constrictions(prof, constriction_radius_A=2.4)) == 1
    with pytest.raises(InputError, match="constriction_radius_A"):
        find_constrictions(prof, constriction_radius_A=-1)


def test_helix_tetramer_rings():
    atoms = build_channel()
    axis = poreprobe.find_pore_axis(atoms)
    prof = poreprobe.radius_profile(atoms, axis)
    lining = pore_lining(atoms, prof)
    texts = [c.groups[0].text for c in lining.constrictions]
    assert texts == [
        "ring of 4 x SER 1 side chains",
        "ring of 4 x LEU 12 side chains",
        "ring of 4 x VAL 19 side chains",
    ]
    assert min(c.radius_A for c in lining.constrictions) == prof.min_radius_A
    # atom-order invariance: reversing the atoms gives the same residue table
    rev = atoms.subset(np.arange(len(atoms))[::-1])
    lining_rev = pore_lining(rev, poreprobe.radius_profile(rev, axis))
    key = lambda r: (r.chain, r.resid)  # noqa: E731
    for a, b in zip(
        sorted(lining.residues, key=key), sorted(lining_rev.residues, key=key), strict=True
    ):
        assert (a.label, a.part, a.closest_atom) == (b.label, b.part, b.closest_atom)
        assert a.closest_A == pytest.approx(b.closest_A, abs=1e-6)


def test_mismatched_atoms_rejected(hourglass4):
    atoms, _, _, prof = hourglass4
    with pytest.raises(InputError, match="atoms"):
        pore_lining(atoms.subset(np.arange(10)), prof)
