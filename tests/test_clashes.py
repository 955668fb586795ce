"""Bond inference and steric clashes."""

import numpy as np
import pytest
from helix_channel import build_channel

from poreprobe.errors import InputError
from poreprobe.geometry.clashes import bond_graph, find_clashes
from poreprobe.io.radii import atom_radii_A
from poreprobe.io.residues import STANDARD_HEAVY_ATOMS


@pytest.fixture(scope="module")
def channel():
    return build_channel()


def test_bonds_of_a_helix(channel):
    chain_a = channel.subset(channel.chain == "A")
    bonds = bond_graph(chain_a)
    n_bonds = bonds.nnz // 2
    # heavy-atom bonds of each residue: atoms - 1 (trees) + rings (PHE, TYR, HIS, TRP x2),
    # plus one peptide bond between consecutive residues (common chemistry)
    residues = [str(r) for r in chain_a.resname[chain_a.name == "CA"]]
    rings = {"PHE": 1, "TYR": 1, "HIS": 1, "TRP": 2, "PRO": 1}
    expected = sum(len(STANDARD_HEAVY_ATOMS[r]) - 1 + rings.get(r, 0) for r in residues)
    expected += len(residues) - 1
    assert n_bonds == expected


def test_clean_model_has_no_clash(channel):
    assert find_clashes(channel, atom_radii_A(channel)) == []


def test_planted_clash_is_found(channel):
    coords = channel.coords_A.copy()
    i = np.flatnonzero((channel.chain == "A") & (channel.resid == 19) & (channel.name == "CG1"))[0]
    j = np.flatnonzero((channel.chain == "B") & (channel.resid == 19) & (channel.name == "CG1"))[0]
    direction = (coords[i] - coords[j]) / np.linalg.norm(coords[i] - coords[j])
    coords[i] = coords[j] + 2.0 * direction
    clashes = find_clashes(channel.with_coords(coords), atom_radii_A(channel))
    assert clashes[0].labels == ("A:VAL19:CG1", "B:VAL19:CG1")
    assert clashes[0].distance_A == pytest.approx(2.0)
    assert clashes[0].fraction == pytest.approx(2.0 / 3.4)  # Bondi 1964 C-C sum 3.40 Å
    # a stricter fraction no longer counts it
    assert (
        find_clashes(channel.with_coords(coords), atom_radii_A(channel), clash_fraction=0.5) == []
    )


def test_bad_fraction(channel):
    with pytest.raises(InputError, match="clash_fraction"):
        find_clashes(channel, atom_radii_A(channel), clash_fraction=0)
