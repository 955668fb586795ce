"""Writing :class:`~poreprobe.io.structure.Atoms` back out as PDB or mmCIF (gemmi)."""

from __future__ import annotations

import os

import numpy as np

from poreprobe.io.export import write_atomic
from poreprobe.io.structure import Atoms


def to_gemmi_structure(atoms: Atoms, *, name: str = "poreprobe"):
    """Build a ``gemmi.Structure`` (one model) from atoms, chain by chain, residue by residue."""
    import gemmi

    st = gemmi.Structure()
    st.name = name
    model = gemmi.Model(1) if _model_takes_int() else gemmi.Model("1")
    chain = residue = None
    last_chain = last_res = None
    for i in range(len(atoms)):
        ch = str(atoms.chain[i])
        res_key = (ch, int(atoms.resid[i]), str(atoms.icode[i]), str(atoms.resname[i]))
        if ch != last_chain:
            if chain is not None:
                if residue is not None:
                    chain.add_residue(residue)
                model.add_chain(chain)
            chain, residue, last_res = gemmi.Chain(ch), None, None
            last_chain = ch
        if res_key != last_res:
            if residue is not None:
                chain.add_residue(residue)
            residue = gemmi.Residue()
            residue.name = res_key[3]
            residue.seqid = gemmi.SeqId(res_key[1], res_key[2] or " ")
            residue.het_flag = "A" if atoms.kind[i] == "polymer" else "H"
            last_res = res_key
        atom = gemmi.Atom()
        atom.name = str(atoms.name[i])
        atom.element = gemmi.Element(str(atoms.element[i]).capitalize())
        atom.pos = gemmi.Position(*map(float, atoms.coords_A[i]))
        atom.occ = float(atoms.occupancy[i])
        atom.b_iso = float(atoms.b_factor[i])
        if atoms.altloc[i]:
            atom.altloc = str(atoms.altloc[i])
        atom.serial = i + 1
        residue.add_atom(atom)
    if residue is not None:
        chain.add_residue(residue)
    if chain is not None:
        model.add_chain(chain)
    st.add_model(model)
    st.setup_entities()
    return st


def _model_takes_int() -> bool:
    import gemmi

    try:
        gemmi.Model(1)
        return True
    except TypeError:
        return False


def write_structure(atoms: Atoms, path, *, name: str | None = None) -> None:
    """Write atoms as PDB (``.pdb``) or mmCIF (``.cif``), atomically.

    Coordinates are written with the formats' fixed precision (0.001 Å).
    """
    path = os.fspath(path)
    st = to_gemmi_structure(atoms, name=name or os.path.splitext(os.path.basename(path))[0])
    if path.lower().endswith((".cif", ".mmcif")):
        doc = st.make_mmcif_document()
        text = doc.as_string()
    else:
        text = st.make_pdb_string()
    write_atomic(path, text)


def coords_rounded(atoms: Atoms) -> np.ndarray:
    """Coordinates rounded as PDB/mmCIF store them (0.001 Å)."""
    return np.round(atoms.coords_A, 3)
