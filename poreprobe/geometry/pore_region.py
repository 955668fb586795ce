"""Find the model's body first: atoms far from everything else are reported and ignored.

A deposited or converted model may hold a few atoms far from the protein (a misplaced
ligand, a dummy atom, coordinates of 9999.0). Planes and grids laid over the whole
extent of the atoms would then span tens of thousands of Å. Rule:

* the model's centre is the per-axis median of the atom positions;
* an atom is **stray** when its distance from that centre exceeds
  ``3 x d90 + 20 Å``, where d90 is the 90th percentile of all atoms' distances from
  the centre. Our choice: for any compact or elongated protein the farthest atom lies
  within about 1.1-1.5 x d90 of the centre (a uniform rod: 1.1 x), so real atoms are
  never dropped, while atoms hundreds of Å away are.

Stray atoms are left out of the axis, the profile and every grid, with a warning and a
note that says how many and how far.
"""

from __future__ import annotations

import warnings

import numpy as np

from poreprobe.errors import QualityWarning
from poreprobe.io.structure import Atoms

STRAY_FACTOR = 3.0
STRAY_MARGIN_A = 20.0


def stray_mask(coords_A) -> tuple[np.ndarray, float]:
    """Boolean mask of stray atoms and the distance cut-off used (Å)."""
    coords = np.asarray(coords_A, dtype=np.float64)
    if len(coords) < 10:
        return np.zeros(len(coords), dtype=bool), float("inf")
    centre = np.median(coords, axis=0)
    dist = np.linalg.norm(coords - centre, axis=1)
    cut = STRAY_FACTOR * float(np.quantile(dist, 0.9)) + STRAY_MARGIN_A
    return dist > cut, cut


def drop_stray_atoms(atoms: Atoms, *, warn: bool = True) -> Atoms:
    """``atoms`` without stray atoms (see the module docstring), with a note and a warning."""
    mask, cut = stray_mask(atoms.coords_A)
    if not mask.any():
        return atoms
    centre = np.median(atoms.coords_A, axis=0)
    farthest = float(np.linalg.norm(atoms.coords_A[mask] - centre, axis=1).max())
    labels = atoms.residue_labels()[mask]
    shown = ", ".join(dict.fromkeys(labels.tolist()[:5]))
    note = (
        f"ignored {int(mask.sum())} stray atoms more than {cut:.0f} Å from the model's "
        f"centre (farthest {farthest:.0f} Å; {shown})"
    )
    if warn:
        warnings.warn(f"{atoms.source or 'model'}: {note}", QualityWarning, stacklevel=2)
    return atoms.subset(~mask, note)
