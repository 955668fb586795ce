"""Covalent bonds inferred from distances, and steric clashes between heavy atoms.

Bonds
-----
Two atoms are bonded when their distance is at most the sum of their covalent
radii plus 0.4 Å (a usual tolerance, common practice), and they belong to the
same residue, to consecutive residues of the same chain (the peptide link), are
two cysteine SG atoms (a disulfide), or one of them is not polymer (a ligand,
ion or water bound to the protein). Covalent radii are gemmi's element table
(Cordero et al. 2008, Dalton Trans. 2832, as recalled from memory); 0.76 Å
where the table has no value.

Clash
-----
Two heavy atoms clash when they are not within three bonds of each other
(1-2, 1-3 and 1-4 pairs are excluded) and their distance is below
``clash_fraction`` times the sum of their van der Waals radii. The default,
0.75, is our choice: it lies below the closest approach of hydrogen-bonded N
and O atoms (about 2.6-3.0 Å, 0.85-0.98 of their Bondi sum; typical values
recalled from memory), so only real overlaps count; for two carbons with Bondi
radii it means closer than 2.55 Å.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import sparse
from scipy.spatial import cKDTree

from poreprobe._validate import check_range
from poreprobe.io.structure import Atoms

BOND_TOLERANCE_A = 0.4
CLASH_FRACTION = 0.75
_FALLBACK_COVALENT_A = 0.76


def covalent_radii_A(elements) -> np.ndarray:  # noqa: N802 (unit suffix)
    """Covalent radii (Å) per element from gemmi's table."""
    import gemmi

    elements = np.asarray(elements).astype(str)
    uniq, inverse = np.unique(elements, return_inverse=True)
    values = np.empty(len(uniq))
    for j, elem in enumerate(uniq):
        try:
            el = gemmi.Element(elem.capitalize())
            value = float(el.covalent_r) if el.atomic_number > 0 else 0.0
        except (RuntimeError, ValueError):
            value = 0.0
        values[j] = value if value > 0 else _FALLBACK_COVALENT_A
    return values[inverse]


def _residue_index(atoms: Atoms) -> np.ndarray:
    key = np.char.add(
        np.char.add(atoms.chain, "|"), np.char.add(atoms.resid.astype(str), atoms.icode)
    )
    change = np.r_[True, key[1:] != key[:-1]]
    return np.cumsum(change) - 1


def bond_graph(atoms: Atoms) -> sparse.csr_matrix:
    """Symmetric boolean adjacency matrix of inferred covalent bonds (see module docstring)."""
    n = len(atoms)
    cov = covalent_radii_A(atoms.element)
    tree = cKDTree(atoms.coords_A)
    pairs = tree.query_pairs(2 * float(cov.max()) + BOND_TOLERANCE_A, output_type="ndarray")
    if len(pairs) == 0:
        return sparse.csr_matrix((n, n), dtype=bool)
    i, j = pairs[:, 0], pairs[:, 1]
    dist = np.linalg.norm(atoms.coords_A[i] - atoms.coords_A[j], axis=1)
    close = dist <= cov[i] + cov[j] + BOND_TOLERANCE_A
    res = _residue_index(atoms)
    same_chain = atoms.chain[i] == atoms.chain[j]
    linked = (res[i] == res[j]) | (same_chain & (np.abs(res[i] - res[j]) == 1))
    disulfide = (atoms.name[i] == "SG") & (atoms.name[j] == "SG")
    nonpoly = (atoms.kind[i] != "polymer") | (atoms.kind[j] != "polymer")
    keep = close & (linked | disulfide | nonpoly)
    i, j = i[keep], j[keep]
    data = np.ones(2 * len(i), dtype=bool)
    return sparse.csr_matrix((data, (np.r_[i, j], np.r_[j, i])), shape=(n, n))


@dataclass(frozen=True)
class Clash:
    """One clashing heavy-atom pair.

    Attributes
    ----------
    atom_i, atom_j : int
        Indices into the atoms checked.
    labels : tuple of str
        ``("A:LEU12:CD2", "B:LEU12:CD1")``.
    distance_A : float
    radius_sum_A : float
        Sum of the two van der Waals radii (Å).
    """

    atom_i: int
    atom_j: int
    labels: tuple[str, str]
    distance_A: float
    radius_sum_A: float

    @property
    def fraction(self) -> float:
        """Distance as a fraction of the radius sum."""
        return self.distance_A / self.radius_sum_A

    def to_dict(self) -> dict:
        return {
            "atoms": list(self.labels),
            "distance_A": self.distance_A,
            "radius_sum_A": self.radius_sum_A,
            "fraction": self.fraction,
        }


def find_clashes(
    atoms: Atoms, radii_A: np.ndarray, *, clash_fraction: float = CLASH_FRACTION, only=None
) -> list[Clash]:
    """Heavy-atom pairs closer than ``clash_fraction`` x (sum of radii), bonded pairs excluded.

    Parameters
    ----------
    atoms : Atoms
    radii_A : ndarray of shape (n,)
        Van der Waals radii (Å) of the atoms.
    clash_fraction : float
        Between 0.1 and 1 (default 0.75, see module docstring).
    only : array_like of bool or int, optional
        Report only pairs with at least one atom in this selection.

    Returns
    -------
    list of Clash
        Closest (by fraction) first.
    """
    fraction = check_range(clash_fraction, "clash_fraction", 0.1, 1.0)
    radii_A = np.asarray(radii_A, dtype=float)
    heavy = np.flatnonzero(~atoms.is_hydrogen)
    if len(heavy) < 2:
        return []
    tree = cKDTree(atoms.coords_A[heavy])
    reach = fraction * 2 * float(radii_A[heavy].max())
    pairs = tree.query_pairs(reach, output_type="ndarray")
    if len(pairs) == 0:
        return []
    i, j = heavy[pairs[:, 0]], heavy[pairs[:, 1]]
    dist = np.linalg.norm(atoms.coords_A[i] - atoms.coords_A[j], axis=1)
    rsum = radii_A[i] + radii_A[j]
    hit = dist < fraction * rsum
    if only is not None:
        mask = np.zeros(len(atoms), dtype=bool)
        mask[np.asarray(only)] = True
        hit &= mask[i] | mask[j]
    i, j, dist, rsum = i[hit], j[hit], dist[hit], rsum[hit]
    if len(i) == 0:
        return []
    bonds = bond_graph(atoms).astype(np.int32)
    # atoms within three bonds of each candidate's first atom (only those rows are needed)
    starts, row_of = np.unique(i, return_inverse=True)
    one = bonds[starts]
    two = one @ bonds
    within = one + two + two @ bonds
    near = np.asarray(within[row_of, j]).reshape(-1) > 0
    labels = np.char.add(np.char.add(atoms.residue_labels(), ":"), atoms.name)
    out = [
        Clash(int(a), int(b), (str(labels[a]), str(labels[b])), float(d), float(s))
        for a, b, d, s, skip in zip(i, j, dist, rsum, near, strict=True)
        if not skip
    ]
    out.sort(key=lambda c: c.fraction)
    return out
