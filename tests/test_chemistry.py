"""pore_chemistry as a whole: input checks, the fast lining against pore_lining, doctests."""

from __future__ import annotations

import doctest

import numpy as np
import pytest
from _real_channels import channel

import poreprobe.chemistry.chemistry
import poreprobe.chemistry.hydropathy
import poreprobe.chemistry.potential
import poreprobe.chemistry.titration
from poreprobe.chemistry.chemistry import lining_near_pore, pore_chemistry
from poreprobe.errors import InputError
from poreprobe.geometry.lining import pore_lining


@pytest.mark.parametrize(
    "module",
    [
        poreprobe.chemistry.chemistry,
        poreprobe.chemistry.hydropathy,
        poreprobe.chemistry.potential,
        poreprobe.chemistry.titration,
    ],
)
def test_docstring_examples(module):
    result = doctest.testmod(module, optionflags=doctest.ELLIPSIS)
    assert result.attempted > 0 and result.failed == 0


def test_fast_lining_equals_pore_lining():
    # the preselection near the pore must not lose a contact that pore_lining finds
    atoms, prof = channel("6f7a")
    full = pore_lining(atoms, prof)
    fast = lining_near_pore(atoms, prof)
    np.testing.assert_array_equal(fast.plane_index, full.plane_index)
    np.testing.assert_array_equal(fast.atom_index, full.atom_index)
    np.testing.assert_allclose(fast.gap_A, full.gap_A, rtol=0, atol=1e-12)
    np.testing.assert_array_equal(fast.contact_residue, full.contact_residue)


def test_same_rings_from_either_lining():
    atoms, prof = channel("5klg")
    a = pore_chemistry(atoms, prof)
    b = pore_chemistry(atoms, prof, pore_lining(atoms, prof))
    assert [r.to_dict() for r in a.rings] == [r.to_dict() for r in b.rings]


def test_partial_charges_replace_formal_ones():
    atoms, prof = channel("5klg")
    q = np.zeros(len(atoms))
    chem = pore_chemistry(atoms, prof, partial_charges_e=q)
    assert chem.potential.charges == "partial"
    np.testing.assert_array_equal(chem.potential.potential_mV, 0.0)
    with pytest.raises(InputError, match="partial_charges_e must have"):
        pore_chemistry(atoms, prof, partial_charges_e=q[:-1])


def test_bad_input():
    atoms, prof = channel("5klg")
    with pytest.raises(InputError, match="profile must be a RadiusProfile"):
        pore_chemistry(atoms, {"profile": {}})
    with pytest.raises(InputError, match="hydropathy_scale must be one of"):
        pore_chemistry(atoms, prof, hydropathy_scale="octanol")
    with pytest.raises(InputError, match="smoothing_window_A must be > 0"):
        pore_chemistry(atoms, prof, smoothing_window_A=0)
    with pytest.raises(InputError, match="unknown ion|ion"):
        pore_chemistry(atoms, prof, ion="Xx")
