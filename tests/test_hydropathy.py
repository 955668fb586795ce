"""Hydropathy scales against their published tables, and the running mean."""

from __future__ import annotations

import numpy as np
import pytest

from poreprobe.chemistry.hydropathy import (
    SCALES,
    hydrophobicity,
    residue_hydropathy,
    smooth_profile,
)
from poreprobe.io.residues import STANDARD_HEAVY_ATOMS

# Kyte & Doolittle 1982, J. Mol. Biol. 157:105-132, Table 2 (hydropathy index)
KYTE_DOOLITTLE_1982_TABLE_2 = {
    "ILE": 4.5, "VAL": 4.2, "LEU": 3.8, "PHE": 2.8, "CYS": 2.5, "MET": 1.9, "ALA": 1.8,
    "GLY": -0.4, "THR": -0.7, "SER": -0.8, "TRP": -0.9, "TYR": -1.3, "PRO": -1.6,
    "HIS": -3.2, "GLU": -3.5, "GLN": -3.5, "ASP": -3.5, "ASN": -3.5, "LYS": -3.9, "ARG": -4.5,
}  # fmt: skip

# Wimley & White 1996, Nat. Struct. Biol. 3:842-848, whole-residue free energies of
# transfer water -> POPC interface (kcal/mol), charged Asp, Glu, His, Lys, Arg; entries
# as we recall them, cross-checked with a published transcription
WIMLEY_WHITE_1996_INTERFACE = {
    "ALA": 0.17, "ARG": 0.81, "ASN": 0.42, "ASP": 1.23, "CYS": -0.24, "GLN": 0.58,
    "GLU": 2.02, "GLY": 0.01, "HIS": 0.96, "ILE": -0.31, "LEU": -0.56, "LYS": 0.99,
    "MET": -0.23, "PHE": -1.13, "PRO": 0.45, "SER": 0.13, "THR": 0.14, "TRP": -1.85,
    "TYR": -0.94, "VAL": 0.07,
}  # fmt: skip


@pytest.mark.parametrize(
    "scale, table",
    [
        ("kyte-doolittle", KYTE_DOOLITTLE_1982_TABLE_2),
        ("wimley-white", WIMLEY_WHITE_1996_INTERFACE),
    ],
)
def test_scale_equals_published_table_for_all_20(scale, table):
    assert set(table) == set(STANDARD_HEAVY_ATOMS)  # the 20 standard amino acids
    names = sorted(table)
    np.testing.assert_array_equal(residue_hydropathy(names, scale), [table[n] for n in names])
    assert SCALES[scale].values == table


def test_variants_and_unknowns():
    got = residue_hydropathy(["HIE", "CYX", "HOH"], "kyte-doolittle")
    assert got[:2].tolist() == [-3.2, 2.5]
    assert np.isnan(got[2])


def test_hydrophobic_sense():
    # Ile hydrophobic, Arg hydrophilic on both (Kyte & Doolittle 1982; Wimley & White 1996)
    for scale in SCALES:
        ile, arg = hydrophobicity(residue_hydropathy(["ILE", "ARG"], scale), scale)
        assert ile > 0 > arg


def test_running_mean_ignores_empty_planes():
    s = np.arange(0, 10, 1.0)
    v = np.array([1, 1, np.nan, 3, 3, 3, np.nan, np.nan, np.nan, np.nan])
    out = smooth_profile(s, v, 3.0)
    assert out[0] == pytest.approx(1.0)
    assert out[2] == pytest.approx(2.0)  # mean of 1 and 3, the NaN plane left out
    assert np.isnan(out[8])
    np.testing.assert_array_equal(smooth_profile(s, v, 0.5), v)
