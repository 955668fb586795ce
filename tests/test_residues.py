"""The standard residues' heavy-atom table against the PDB Chemical Component Dictionary."""

import numpy as np
import pytest

from poreprobe.io.residues import (
    EQUIVALENT_ATOM_PAIRS,
    STANDARD_HEAVY_ATOMS,
    is_backbone,
    missing_heavy_atoms,
    standard_name,
)

info = pytest.importorskip("biotite.structure.info")


@pytest.mark.parametrize("resname", sorted(STANDARD_HEAVY_ATOMS))
def test_heavy_atoms_match_ccd(resname):
    # Source: PDB Chemical Component Dictionary (wwPDB), as bundled with biotite 1.x
    # (biotite.structure.info.residue). Our lists leave out the terminal OXT.
    ccd = info.residue(resname)
    heavy = ccd.element != "H"
    ccd_names = tuple(n for n in ccd.atom_name[heavy] if n != "OXT")
    assert STANDARD_HEAVY_ATOMS[resname] == ccd_names
    # the element implied by each name agrees with the CCD's element column
    ccd_elements = dict(zip(ccd.atom_name, ccd.element, strict=True))
    for name in STANDARD_HEAVY_ATOMS[resname]:
        implied = "S" if name in ("SG", "SD") else name[0]
        assert ccd_elements[name] == implied, (resname, name)


def test_ccd_knows_exactly_twenty_standard_amino_acids():
    # Source: PDB CCD via biotite: the 20 standard residues are all L-peptide linking.
    for resname in STANDARD_HEAVY_ATOMS:
        assert "PEPTIDE" in info.link_type(resname).upper()
    assert len(STANDARD_HEAVY_ATOMS) == 20


def test_equivalent_pairs_are_real_atoms():
    for resname, pairs in EQUIVALENT_ATOM_PAIRS.items():
        for a, b in pairs:
            assert a in STANDARD_HEAVY_ATOMS[resname] and b in STANDARD_HEAVY_ATOMS[resname]


def test_missing_heavy_atoms_splits_backbone_and_side_chain():
    assert missing_heavy_atoms("LEU", ["N", "CA", "C", "O", "CB"]) == ((), ("CG", "CD1", "CD2"))
    assert missing_heavy_atoms("GLY", ["N", "CA", "C"]) == (("O",), ())
    assert missing_heavy_atoms("HIE", STANDARD_HEAVY_ATOMS["HIS"]) == ((), ())
    assert missing_heavy_atoms("ILE", ["N", "CA", "C", "O", "CB", "CG1", "CG2", "CD"]) == ((), ())
    assert missing_heavy_atoms("MSE", ["N", "CA"]) == ((), ())
    assert standard_name("hsd") == "HIS" and standard_name("MSE") is None


def test_is_backbone():
    mask = is_backbone(
        ["N", "CA", "CB", "HA", "HB2", "OXT", "H"], ["N", "C", "C", "H", "H", "O", "H"]
    )
    np.testing.assert_array_equal(mask, [True, True, False, True, False, True, True])
