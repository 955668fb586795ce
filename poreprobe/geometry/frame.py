"""The canonical pore frame: origin, sign of s and in-plane reference from the structure.

Everything here depends only on the atoms (their chain ids, residue numbers and
positions), never on the order of chains, residues or atoms in the file, nor on the
lab frame, so a rigid motion of the input moves the frame with it.

* **Pore-forming chains**: the chains that define the axis (``PoreAxis.chains``);
  without a symmetry group, every polymer chain.
* **Origin** (s = 0): the projection onto the axis of the centroid of the
  pore-forming chains' polymer atoms (of all atoms when no chain is known).
* **Sign of s**, first rule that decides:

  1. the N-terminal residues (lowest residue number) of the pore-forming chains lie
     at negative s (mean over the chains at least 1 Å from 0);
  2. else (e.g. a head-to-head dimer, whose N-termini meet in the middle) the chain
     with the smallest id runs from its N-terminal half to its C-terminal half
     (residue centroids) towards +s, when those halves are at least 1 Å apart in s;
  3. else, as a last resort that does depend on the lab frame, the largest
     Cartesian component of the direction is positive.

* **In-plane reference** (``PoreAxis.reference_direction``): from the axis towards
  the centroid of the first pore-forming chain (the smallest id); where that centroid
  lies within 1 Å of the axis, towards the CA of its N-terminal residue.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from poreprobe.geometry.chain_groups import cyclic_order, sorted_chains
from poreprobe.io.structure import Atoms

DECIDES_A = 1.0


def pore_chains(atoms: Atoms, axis) -> list[str]:
    """The chains that make the pore: ``axis.chains``, else every polymer chain (sorted)."""
    if axis.chains:
        return sorted_chains(axis.chains)
    return sorted_chains(atoms.chain[atoms.kind == "polymer"].tolist())


def _chain_mask(atoms: Atoms, chains) -> np.ndarray:
    return (atoms.kind == "polymer") & np.isin(atoms.chain, list(chains))


def canonical_point(axis, atoms: Atoms):
    """The axis with s = 0 at the projection of the pore-forming chains' centroid."""
    mask = _chain_mask(atoms, axis.chains) if axis.chains else np.ones(len(atoms), bool)
    if not mask.any():
        mask = np.ones(len(atoms), dtype=bool)
    centre = atoms.coords_A[mask].mean(0)
    point = axis.point_A + ((centre - axis.point_A) @ axis.direction) * axis.direction
    return replace(axis, point_A=point)


def _first_residue(atoms: Atoms, in_chain: np.ndarray) -> np.ndarray:
    first = atoms.resid[in_chain].min()
    return in_chain & (atoms.resid == first)


def _n_to_c_A(atoms: Atoms, in_chain: np.ndarray, s: np.ndarray) -> float:
    """s of the C-terminal half's centroid minus that of the N-terminal half (Å)."""
    res = np.unique(atoms.resid[in_chain])
    if len(res) < 2:
        return 0.0
    half = res[len(res) // 2]
    n_half = in_chain & (atoms.resid < half)
    c_half = in_chain & (atoms.resid >= half)
    return float(s[c_half].mean() - s[n_half].mean())


def canonical_sign(axis, atoms: Atoms):
    """The axis with its sign fixed by the rules of the module docstring."""
    s = axis.s_A(atoms.coords_A)
    chains = pore_chains(atoms, axis)
    masks = [_chain_mask(atoms, [c]) for c in chains]
    masks = [m for m in masks if m.any()]
    if masks:
        mean_first = float(np.mean([s[_first_residue(atoms, m)].mean() for m in masks]))
        if abs(mean_first) >= DECIDES_A:
            if mean_first > 0:
                return axis.flipped("N-termini at negative s")
            return replace(axis, oriented_by="N-termini at negative s")
        run = _n_to_c_A(atoms, masks[0], s)
        if abs(run) >= DECIDES_A:
            label = f"chain {chains[0]} runs N to C towards +s"
            return axis.flipped(label) if run < 0 else replace(axis, oriented_by=label)
    if axis.direction[int(np.argmax(np.abs(axis.direction)))] < 0:
        return axis.flipped("largest component positive")
    return replace(axis, oriented_by="largest component positive")


def reference_direction(axis, atoms: Atoms) -> np.ndarray | None:
    """Unit in-plane vector from the axis towards the first pore-forming chain (or None)."""
    chains = pore_chains(atoms, axis)
    if not chains:
        return None
    first = axis.chains[0] if axis.chains else chains[0]
    in_chain = _chain_mask(atoms, [first])
    if not in_chain.any():
        return None
    d = axis.direction
    for target in (
        atoms.coords_A[in_chain].mean(0),
        atoms.coords_A[_first_residue(atoms, in_chain)].mean(0),
    ):
        rel = target - axis.point_A
        rel = rel - (rel @ d) * d
        if np.linalg.norm(rel) >= DECIDES_A:
            return rel / np.linalg.norm(rel)
    return None


def canonical_frame(axis, atoms: Atoms, *, orient: bool = True):
    """Origin, sign (when ``orient``), chain order and in-plane reference of an axis."""
    axis = canonical_point(axis, atoms)
    if orient:
        axis = canonical_sign(axis, atoms)
    if axis.chains:
        axis = replace(axis, chains=cyclic_order(atoms, axis.chains, axis.point_A, axis.direction))
    return replace(axis, reference_direction=reference_direction(axis, atoms))
