"""Per-residue deviation of equivalent subunits from their symmetric consensus.

Method
------
1. The largest group of chains with the same sequence (see
   :func:`poreprobe.geometry.axis.equivalent_chains`) is taken as n equivalent subunits;
   residues are matched through the sequence alignment
   (:func:`poreprobe.geometry.axis.aligned_residues`: residues missing from any subunit
   are skipped), atoms by name (heavy atoms present in every subunit).
2. The n-fold axis direction comes from the rotations that superpose the first
   subunit's backbone onto each other one (:func:`poreprobe.geometry.axis.symmetry_axis`);
   each subunit k is assigned the ideal angle ``2 pi m_k / n`` nearest to its
   superposition angle.
3. Each subunit is rotated back by its ideal angle about the axis onto the first
   one's place; the per-atom median over the subunits is the consensus. The
   axis position is fitted by least squares to all subunits and, in turn, to all
   but one; the fit whose n - 1 best subunits deviate least is kept, then refitted
   to the subunits within twice the median deviation. The median and the
   trimmed fit make the consensus robust: one displaced subunit does not drag the
   consensus (or the axis) towards itself, so the deviation shows up in that
   subunit alone.
4. The deviation of residue j of subunit k is the RMS distance of its matched
   heavy atoms from the consensus (Å). Chemically equivalent atom pairs (e.g. PHE
   CD1/CD2, ASP OD1/OD2) are swapped where that matches the consensus better.

For two subunits the median is the mean, so a deviation is shared equally
between them.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from poreprobe.geometry.axis import aligned_residues, equivalent_chains, symmetry_axis
from poreprobe.geometry.superpose import (
    kabsch_rotation,
    rotate_about,
    rotation_matrix,
    signed_rotation_angle,
)
from poreprobe.io.residues import EQUIVALENT_ATOM_PAIRS, standard_name
from poreprobe.io.structure import Atoms


@dataclass(frozen=True)
class SubunitDeviation:
    """Deviation of equivalent subunits from their symmetric consensus.

    Attributes
    ----------
    chains : tuple of str
        The equivalent subunits (first one is the reference place).
    n_fold : int
    angles_deg : tuple of float
        Ideal rotation of each subunit about the axis (degrees).
    axis_point_A, axis_direction : ndarray of shape (3,)
        The fitted symmetry axis.
    residue_labels : tuple of tuple of str
        ``residue_labels[k][j]``: label (``"A:LEU12"``) of residue j in subunit k.
    deviation_A : ndarray of shape (n_chains, n_residues)
        Per-residue RMS deviation from the consensus (Å); NaN where a residue
        has no atom common to all subunits.
    chain_rmsd_A : ndarray of shape (n_chains,)
        Whole-subunit RMS deviation (Å).
    """

    chains: tuple[str, ...]
    n_fold: int
    angles_deg: tuple[float, ...]
    axis_point_A: np.ndarray
    axis_direction: np.ndarray
    residue_labels: tuple[tuple[str, ...], ...]
    deviation_A: np.ndarray
    chain_rmsd_A: np.ndarray

    def __post_init__(self):
        for name in ("axis_point_A", "axis_direction", "deviation_A", "chain_rmsd_A"):
            getattr(self, name).setflags(write=False)

    def by_label(self) -> dict[str, float]:
        """Residue label -> deviation (Å)."""
        return {
            lab: float(dev)
            for labels, devs in zip(self.residue_labels, self.deviation_A, strict=True)
            for lab, dev in zip(labels, devs, strict=True)
        }

    def to_dict(self) -> dict:
        return {
            "chains": list(self.chains),
            "n_fold": self.n_fold,
            "angles_deg": list(self.angles_deg),
            "axis_point_A": self.axis_point_A.tolist(),
            "axis_direction": self.axis_direction.tolist(),
            "chain_rmsd_A": self.chain_rmsd_A.tolist(),
        }


def _matched_atoms(atoms: Atoms, chains: list[str]):
    """Row indices (n_chains, m), residue column per atom, labels per chain and residue."""
    columns = aligned_residues(atoms, chains)
    heavy_poly = (atoms.kind == "polymer") & ~atoms.is_hydrogen
    lookup = []
    for ch in chains:
        rows = np.flatnonzero(heavy_poly & (atoms.chain == ch))
        table: dict[tuple, dict[str, int]] = {}
        for i, r, ic, name in zip(
            rows,
            atoms.resid[rows].tolist(),
            atoms.icode[rows].tolist(),
            atoms.name[rows].tolist(),
            strict=True,
        ):
            table.setdefault((r, ic), {}).setdefault(name, int(i))
        lookup.append(table)
    rows_out, ordinal = [], []
    for j in range(len(columns[0])):
        per_chain = [lookup[k][columns[k][j]] for k in range(len(chains))]
        for name in per_chain[0]:
            if all(name in p for p in per_chain[1:]):
                rows_out.append([p[name] for p in per_chain])
                ordinal.append(j)
    all_labels = atoms.residue_labels()
    labels = tuple(
        tuple(str(all_labels[next(iter(lookup[k][key].values()))]) for key in columns[k])
        for k in range(len(chains))
    )
    resnames = [str(atoms.resname[next(iter(lookup[0][key].values()))]) for key in columns[0]]
    return np.array(rows_out, dtype=np.int64).T, np.array(ordinal), labels, resnames


def _swap_columns(atoms: Atoms, rows: np.ndarray, ordinal: np.ndarray, resnames):
    """Column pairs (a, b) of chemically equivalent atoms, per residue."""
    pairs = []
    names = atoms.name[rows[0]]
    for j, resname in enumerate(resnames):
        parent = standard_name(resname)
        for a, b in EQUIVALENT_ATOM_PAIRS.get(parent or "", ()):
            cols = np.flatnonzero(ordinal == j)
            ca = cols[names[cols] == a]
            cb = cols[names[cols] == b]
            if len(ca) and len(cb):
                pairs.append((j, int(ca[0]), int(cb[0])))
    return pairs


def _fit_centre(coords, angles, direction, keep, centre):
    """Axis point minimising sum_k |R_k u + c - x_k|^2 over c and a common template u.

    Uses the subunits in ``keep``; for a fixed c the best u is the mean of
    ``R_k^T (x_k - c)``, which leaves a linear least-squares problem in c. The
    component of c along the axis is undetermined and kept from ``centre``.
    """
    idx = np.flatnonzero(keep)
    rots = [rotation_matrix(direction, angles[k]) for k in idx]
    mean_rt = sum(r.T for r in rots) / len(idx)
    mean_back = sum(coords[k] @ r for k, r in zip(idx, rots, strict=True)) / len(idx)
    lhs = np.zeros((3, 3))
    rhs = np.zeros(3)
    m = coords.shape[1]
    for k, rot in zip(idx, rots, strict=True):
        a = np.eye(3) - rot @ mean_rt
        b = mean_back @ rot.T - coords[k]  # (m, 3): R_k mean_j R_j^T x_j - x_k
        lhs += m * a.T @ a
        rhs -= a.T @ b.sum(0)
    sol = np.linalg.lstsq(lhs, rhs, rcond=None)[0]
    return sol - (sol @ direction) * direction + (centre @ direction) * direction


def _swap_equivalent_atoms(coords, centre, direction, angles, swaps) -> None:
    """Rename chemically equivalent atom pairs in place where that matches subunit 0 better."""
    n = coords.shape[0]
    for _j, a, b in swaps:
        ref = coords[0, [a, b]]
        for k in range(1, n):
            back = rotate_about(coords[k, [a, b]], centre, direction, -angles[k])
            if np.linalg.norm(back[::-1] - ref) < np.linalg.norm(back - ref):
                coords[k, [a, b]] = coords[k, [b, a]]


def subunit_deviation(atoms: Atoms) -> SubunitDeviation | None:
    """Per-residue deviation of equivalent subunits from their symmetric consensus.

    Parameters
    ----------
    atoms : Atoms
        The model (polymer atoms are used; hydrogens are ignored).

    Returns
    -------
    SubunitDeviation or None
        None when the model has no two chains with the same sequence.
    """
    chains, _ = equivalent_chains(atoms)
    axis = symmetry_axis(atoms)
    if not chains or axis is None:
        return None
    n = len(chains)
    rows, ordinal, labels, resnames = _matched_atoms(atoms, chains)
    if rows.size == 0:
        return None
    coords = atoms.coords_A[rows]  # (n, m, 3)
    direction = axis.direction
    centre = axis.point_A.copy()
    backbone = np.isin(atoms.name[rows[0]], ("N", "CA", "C"))
    step = 2 * np.pi / n
    angles = np.zeros(n)
    for k in range(1, n):
        rot = kabsch_rotation(coords[0][backbone], coords[k][backbone])
        angles[k] = step * np.round(signed_rotation_angle(rot, direction) / step)
    swaps = _swap_columns(atoms, rows, ordinal, resnames)
    _swap_equivalent_atoms(coords, centre, direction, angles, swaps)

    def deviations(c):
        mapped = np.stack([rotate_about(coords[k], c, direction, -angles[k]) for k in range(n)])
        return np.linalg.norm(mapped - np.median(mapped, axis=0), axis=2)  # (n, m)

    def score(c):
        rms = np.sqrt((deviations(c) ** 2).mean(1))
        return float(np.sort(rms**2)[: max(n - 1, 1)].sum()), rms

    # candidate axis points: fitted to all subunits and to all but one (a displaced
    # subunit must not drag the axis); the best trimmed score wins, then one refit to
    # the subunits within twice the median deviation
    subsets = [np.ones(n, dtype=bool)]
    if n >= 3:
        subsets += [np.arange(n) != k for k in range(n)]
    fits = [
        (score(c), c)
        for c in (_fit_centre(coords, angles, direction, keep, centre) for keep in subsets)
    ]
    (best_score, rms), centre = min(fits, key=lambda f: f[0][0])
    med = float(np.median(rms))
    keep = rms <= max(2.0 * med, med + 1e-9)
    if keep.sum() >= 2:
        refit = _fit_centre(coords, angles, direction, keep, centre)
        if score(refit)[0] <= best_score:
            centre = refit
    per_atom = deviations(centre)
    n_res = len(labels[0])
    sums = np.zeros((n, n_res))
    counts = np.bincount(ordinal, minlength=n_res)
    for k in range(n):
        sums[k] = np.bincount(ordinal, weights=per_atom[k] ** 2, minlength=n_res)
    with np.errstate(invalid="ignore", divide="ignore"):
        deviation = np.where(counts > 0, np.sqrt(sums / np.maximum(counts, 1)), np.nan)
    return SubunitDeviation(
        chains=tuple(chains),
        n_fold=n,
        angles_deg=tuple(float(np.degrees(a)) for a in angles),
        axis_point_A=centre,
        axis_direction=np.array(direction, dtype=float),
        residue_labels=labels,
        deviation_A=deviation,
        chain_rmsd_A=np.sqrt((per_atom**2).mean(1)),
    )
