"""The standard amino acids: heavy atoms, backbone names and naming variants.

Heavy-atom names follow the PDB Chemical Component Dictionary (CCD) for the 20
standard amino acids, without the terminal ``OXT`` (present only on a chain's
last residue). The tests cross-check every list, atom by atom and element by
element, against the CCD copy shipped with biotite.

Molecular-dynamics force fields rename some residues by protonation state
(``HID``/``HIE``/``HIP``, ``HSD``/``HSE``/``HSP``, ``CYX``, ``ASH``, ``GLH``, ``LYN``,
...). Those names are read as their standard parent (common practice), so they
are neither "non-standard" nor incomplete when their heavy atoms are all there.
"""

from __future__ import annotations

import numpy as np

#: Heavy atoms of the 20 standard amino acids (CCD names, CCD order, no OXT).
STANDARD_HEAVY_ATOMS: dict[str, tuple[str, ...]] = {
    "ALA": ("N", "CA", "C", "O", "CB"),
    "ARG": ("N", "CA", "C", "O", "CB", "CG", "CD", "NE", "CZ", "NH1", "NH2"),
    "ASN": ("N", "CA", "C", "O", "CB", "CG", "OD1", "ND2"),
    "ASP": ("N", "CA", "C", "O", "CB", "CG", "OD1", "OD2"),
    "CYS": ("N", "CA", "C", "O", "CB", "SG"),
    "GLN": ("N", "CA", "C", "O", "CB", "CG", "CD", "OE1", "NE2"),
    "GLU": ("N", "CA", "C", "O", "CB", "CG", "CD", "OE1", "OE2"),
    "GLY": ("N", "CA", "C", "O"),
    "HIS": ("N", "CA", "C", "O", "CB", "CG", "ND1", "CD2", "CE1", "NE2"),
    "ILE": ("N", "CA", "C", "O", "CB", "CG1", "CG2", "CD1"),
    "LEU": ("N", "CA", "C", "O", "CB", "CG", "CD1", "CD2"),
    "LYS": ("N", "CA", "C", "O", "CB", "CG", "CD", "CE", "NZ"),
    "MET": ("N", "CA", "C", "O", "CB", "CG", "SD", "CE"),
    "PHE": ("N", "CA", "C", "O", "CB", "CG", "CD1", "CD2", "CE1", "CE2", "CZ"),
    "PRO": ("N", "CA", "C", "O", "CB", "CG", "CD"),
    "SER": ("N", "CA", "C", "O", "CB", "OG"),
    "THR": ("N", "CA", "C", "O", "CB", "OG1", "CG2"),
    "TRP": (
        "N",
        "CA",
        "C",
        "O",
        "CB",
        "CG",
        "CD1",
        "CD2",
        "NE1",
        "CE2",
        "CE3",
        "CZ2",
        "CZ3",
        "CH2",
    ),
    "TYR": ("N", "CA", "C", "O", "CB", "CG", "CD1", "CD2", "CE1", "CE2", "CZ", "OH"),
    "VAL": ("N", "CA", "C", "O", "CB", "CG1", "CG2"),
}

#: Backbone heavy atoms of an amino acid (plus the terminal oxygens).
BACKBONE_HEAVY_ATOMS = frozenset({"N", "CA", "C", "O", "OXT", "OT1", "OT2"})

#: Hydrogen names that sit on the backbone (PDB and common force-field spellings).
BACKBONE_HYDROGENS = frozenset(
    {"H", "HN", "HA", "HA2", "HA3", "H1", "H2", "H3", "HT1", "HT2", "HT3", "HXT"}
)

#: Force-field protonation-state names and the standard residue they stand for.
RESIDUE_ALIASES: dict[str, str] = {
    "HID": "HIS",
    "HIE": "HIS",
    "HIP": "HIS",
    "HSD": "HIS",
    "HSE": "HIS",
    "HSP": "HIS",
    "HISD": "HIS",
    "HISE": "HIS",
    "HISH": "HIS",
    "CYX": "CYS",
    "CYM": "CYS",
    "ASH": "ASP",
    "GLH": "GLU",
    "LYN": "LYS",
}

#: Side-chain atom pairs that are chemically equivalent (a swap is the same molecule).
EQUIVALENT_ATOM_PAIRS: dict[str, tuple[tuple[str, str], ...]] = {
    "ARG": (("NH1", "NH2"),),
    "ASP": (("OD1", "OD2"),),
    "GLU": (("OE1", "OE2"),),
    "PHE": (("CD1", "CD2"), ("CE1", "CE2")),
    "TYR": (("CD1", "CD2"), ("CE1", "CE2")),
}


def standard_name(resname: str) -> str | None:
    """The standard residue a name stands for (``"HIE"`` -> ``"HIS"``), or None."""
    name = str(resname).strip().upper()
    if name in STANDARD_HEAVY_ATOMS:
        return name
    return RESIDUE_ALIASES.get(name)


def is_backbone(names, elements) -> np.ndarray:
    """Boolean mask: backbone heavy atoms and backbone hydrogens.

    Parameters
    ----------
    names, elements : array_like of str, shape (n,)
        Atom names and element symbols.

    Returns
    -------
    ndarray of bool, shape (n,)
    """
    names = np.char.upper(np.asarray(names).astype(str))
    hydrogen = np.isin(np.char.upper(np.asarray(elements).astype(str)), ("H", "D"))
    return np.where(
        hydrogen,
        np.isin(names, list(BACKBONE_HYDROGENS)),
        np.isin(names, list(BACKBONE_HEAVY_ATOMS)),
    )


def missing_heavy_atoms(resname: str, present) -> tuple[tuple[str, ...], tuple[str, ...]]:
    """Standard heavy atoms absent from a residue.

    Parameters
    ----------
    resname : str
        Residue name (aliases accepted).
    present : iterable of str
        Atom names found in the residue.

    Returns
    -------
    (backbone, side_chain) : tuple of tuple of str
        Missing backbone and side-chain atom names (empty for a non-standard
        residue, which has no reference list).
    """
    parent = standard_name(resname)
    if parent is None:
        return (), ()
    have = {str(n).strip().upper() for n in present}
    if parent == "ILE" and "CD" in have:
        have.add("CD1")  # force fields often call ILE's delta carbon CD
    if "OT1" in have:
        have.add("O")  # a C-terminal carboxylate named OT1/OT2 (CHARMM style)
    missing = [a for a in STANDARD_HEAVY_ATOMS[parent] if a not in have]
    backbone = tuple(a for a in missing if a in BACKBONE_HEAVY_ATOMS)
    side = tuple(a for a in missing if a not in BACKBONE_HEAVY_ATOMS)
    return backbone, side
