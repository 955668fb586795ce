"""Which chains make the pore: groups of equivalent chains and their n-fold symmetry.

Method
------
1. **Groups.** Chains are compared by sequence: the residue names of a chain's
   polymer residues that have a CA, aligned with :class:`difflib.SequenceMatcher`.
   Two chains are equivalent when at least 90 % of the shorter chain's residues
   align with identical names (so a missing loop in one subunit or a different
   numbering is tolerated). Chains are visited in sorted order of their ids,
   never in file order, so the groups do not depend on the order of the chains.
2. **Symmetry of a group.** The backbone atoms (N, CA, C) of the residues present
   in every chain of the group are matched. All subunits are treated alike:
   for n >= 3, copies of one atom in the n subunits lie, for ideal C_n symmetry,
   on a circle in a plane perpendicular to the axis, so the axis direction is the
   normal of the best-fitting plane of all those polygons (each centred on its own
   mean) and passes through the centroid of the matched atoms; for n = 2 it is
   the rotation axis of the least-squares superposition of one subunit on the
   other (the same line either way round). The subunits are ordered around the
   axis by the angle of their centroids (geometry, not file order), and
   ``rmsd_A`` is the root-mean-square distance between each subunit rotated by
   360/n degrees about the axis and its neighbour in that order.
3. **Rejection.** A fit with ``rmsd_A`` above :data:`MAX_SYMMETRY_RMSD_A` (4 Å) is not
   taken as the axis of a symmetric channel and is reported as such. Our choice,
   from common practice: CA RMSDs between subunits of one symmetric channel, even in
   asymmetric gating states, are usually 1-2 Å and rarely above 3 Å, while chains
   that are not related by a rotation about a common axis (two receptors packed in a
   crystal) give 10 Å or more.
4. **Choice of the pore group.** Among the accepted groups the one with the highest
   order n wins; ties go to the group lying closest to its own axis (smallest median
   distance of its backbone atoms from the axis): accessory chains (antibody
   fragments, beta subunits, toxins, nanobodies) sit further out. Chains outside the
   chosen group neither break its symmetry nor decide the axis.
"""

from __future__ import annotations

import difflib
import re
from dataclasses import dataclass

import numpy as np

from poreprobe.geometry.superpose import kabsch_rotation, rotate_about, rotation_axis_angle
from poreprobe.io.structure import Atoms

SEQUENCE_MATCH = 0.9
MAX_SYMMETRY_RMSD_A = 4.0
BACKBONE = ("N", "CA", "C")


def natural_key(chain: str):
    """Sort key for chain ids: ``"C2"`` before ``"C10"``, letters before numbers."""
    return [(0, int(t), "") if t.isdigit() else (1, 0, t) for t in re.findall(r"\d+|\D+", chain)]


def sorted_chains(chains) -> list[str]:
    """Chain ids in natural sorted order (the canonical order of ties)."""
    return sorted(set(chains), key=natural_key)


def polymer_index(atoms: Atoms) -> dict[str, np.ndarray]:
    """Chain id -> indices of its polymer atoms (in file order), computed in one pass."""
    idx = np.flatnonzero(atoms.kind == "polymer")
    chains = atoms.chain[idx]
    order = np.argsort(chains, kind="stable")
    names, starts = np.unique(chains[order], return_index=True)
    bounds = list(starts) + [len(order)]
    return {str(n): idx[order[bounds[i] : bounds[i + 1]]] for i, n in enumerate(names.tolist())}


def chain_residues(
    atoms: Atoms, chain: str, index: dict | None = None
) -> tuple[list[tuple[int, str]], list[str]]:
    """(resid, icode) keys and names of a chain's polymer residues that have a CA, in order.

    ``index`` (from :func:`polymer_index`) saves a pass over all atoms per chain.
    """
    if index is None:
        index = {chain: np.flatnonzero((atoms.kind == "polymer") & (atoms.chain == chain))}
    rows = index.get(chain, np.zeros(0, dtype=np.int64))
    rows = rows[atoms.name[rows] == "CA"]
    keys = list(zip(atoms.resid[rows].tolist(), atoms.icode[rows].tolist(), strict=True))
    first: dict = {}
    for key, name in zip(keys, atoms.resname[rows].tolist(), strict=True):
        first.setdefault(key, name)
    order = sorted(first, key=lambda k: (k[0], k[1]))
    return order, [first[k] for k in order]


def _alignment(ref_names: list[str], names: list[str]) -> dict[int, int]:
    """Residue index in ``ref_names`` -> index in ``names`` for the matching blocks."""
    if ref_names == names:
        return dict(zip(range(len(names)), range(len(names)), strict=True))
    matcher = difflib.SequenceMatcher(None, ref_names, names, autojunk=False)
    return {a + t: b + t for a, b, size in matcher.get_matching_blocks() for t in range(size)}


def aligned_residues(
    atoms: Atoms, chains: list[str], index: dict | None = None
) -> list[list[tuple[int, str]]]:
    """Residue keys of equivalent chains, aligned column by column.

    The sequences (residue names of residues with a CA) are aligned to the first
    chain's, so missing residues and different numbering are tolerated; only
    residues present in every chain are kept.

    Returns
    -------
    list of list of (int, str)
        ``out[k][j]``: (resid, icode) of column j in chain ``chains[k]``.
    """
    index = polymer_index(atoms) if index is None else index
    ref_keys, ref_names = chain_residues(atoms, chains[0], index)
    common = set(range(len(ref_keys)))
    maps = []
    for ch in chains[1:]:
        keys, names = chain_residues(atoms, ch, index)
        mapping = _alignment(ref_names, names)
        maps.append((keys, mapping))
        common &= set(mapping)
    cols = sorted(common)
    return [[ref_keys[j] for j in cols]] + [[keys[m[j]] for j in cols] for keys, m in maps]


def chain_groups(atoms: Atoms, index: dict | None = None) -> list[list[str]]:
    """Groups of chains with the same sequence (two or more chains each).

    Returns
    -------
    list of list of str
        Chain ids of each group in natural sorted order; groups ordered by size
        (largest first), then by their first chain id.
    """
    index = polymer_index(atoms) if index is None else index
    seqs = {}
    for ch in sorted_chains(index):
        _, names = chain_residues(atoms, ch, index)
        if names:
            seqs[ch] = names
    groups: list[list[str]] = []
    for ch, names in seqs.items():
        for group in groups:
            ref = seqs[group[0]]
            shorter = min(len(ref), len(names))
            if len(_alignment(ref, names)) >= SEQUENCE_MATCH * shorter:
                group.append(ch)
                break
        else:
            groups.append([ch])
    groups = [g for g in groups if len(g) >= 2]
    return sorted(groups, key=lambda g: (-len(g), natural_key(g[0])))


def matched_backbone(atoms: Atoms, group: list[str], index: dict | None = None) -> np.ndarray:
    """Backbone (N, CA, C) coordinates present in every chain of ``group``, (n, m, 3)."""
    index = polymer_index(atoms) if index is None else index
    columns = aligned_residues(atoms, group, index)
    coords_per_chain = []
    for ch in group:
        rows = index[ch]
        rows = rows[np.isin(atoms.name[rows], BACKBONE)]
        table: dict = {}
        for r, i, n, xyz in zip(
            atoms.resid[rows].tolist(),
            atoms.icode[rows].tolist(),
            atoms.name[rows].tolist(),
            atoms.coords_A[rows],
            strict=True,
        ):
            table.setdefault((r, i, n), xyz)
        coords_per_chain.append(table)
    rows = []
    for j in range(len(columns[0])):
        for name in BACKBONE:
            keys = [(*columns[k][j], name) for k in range(len(group))]
            if all(key in kc for key, kc in zip(keys, coords_per_chain, strict=True)):
                rows.append([kc[key] for key, kc in zip(keys, coords_per_chain, strict=True)])
    if len(rows) < 3:
        return np.empty((len(group), 0, 3))
    return np.array(rows).transpose(1, 0, 2)


@dataclass(frozen=True)
class SymmetryFit:
    """The n-fold symmetry of one group of equivalent chains.

    Attributes
    ----------
    chains : tuple of str
        The group's chains in natural sorted order of their ids (their order around
        the axis needs the sign of the axis: :func:`cyclic_order`).
    n_fold : int
    point_A, direction : ndarray of shape (3,)
        A point on the axis (centroid of the matched atoms) and its unit direction
        (its sign is fixed later, by the canonical frame).
    rmsd_A : float
        Deviation from ideal C_n symmetry (Å), see the module docstring.
    radial_A : float
        Median distance of the matched backbone atoms from the axis (Å).
    accepted : bool
        ``rmsd_A <= MAX_SYMMETRY_RMSD_A``.
    """

    chains: tuple[str, ...]
    n_fold: int
    point_A: np.ndarray
    direction: np.ndarray
    rmsd_A: float
    radial_A: float
    accepted: bool

    def describe(self) -> str:
        return (
            f"C{self.n_fold} of chains {', '.join(self.chains)}: symmetry RMSD {self.rmsd_A:.2f} Å"
        )


def _direction(matched: np.ndarray) -> np.ndarray:
    """Common rotation axis of all pairwise superpositions (order-free, sign-free)."""
    n = matched.shape[0]
    tensor = np.zeros((3, 3))
    for j in range(n):
        for k in range(j + 1, n):
            axis, angle = rotation_axis_angle(kabsch_rotation(matched[j], matched[k]))
            tensor += np.sin(angle / 2) ** 2 * np.outer(axis, axis)
    return np.linalg.eigh(tensor)[1][:, -1]


def _in_plane_angles(centroids: np.ndarray, point: np.ndarray, direction: np.ndarray):
    rel = centroids - point
    rel = rel - np.outer(rel @ direction, direction)
    ref = rel[0] / max(np.linalg.norm(rel[0]), 1e-12)
    other = np.cross(direction, ref)
    angles = np.mod(np.arctan2(rel @ other, rel @ ref), 2 * np.pi)
    angles[0] = 0.0  # the reference itself (arctan2 may give -0.0 -> 2 pi)
    return angles


def cyclic_order(atoms: Atoms, chains, point, direction) -> tuple[str, ...]:
    """Chains in order of increasing angle about ``direction``, from the smallest id."""
    chains = sorted_chains(chains)
    poly = atoms.kind == "polymer"
    cents = np.array([atoms.coords_A[poly & (atoms.chain == c)].mean(0) for c in chains])
    angles = _in_plane_angles(cents, np.asarray(point), np.asarray(direction))
    return tuple(chains[i] for i in np.argsort(angles, kind="stable"))


def fit_symmetry(atoms: Atoms, group: list[str], index: dict | None = None) -> SymmetryFit | None:
    """The n-fold symmetry axis of one group of equivalent chains (None if too few atoms)."""
    group = sorted_chains(group)
    matched = matched_backbone(atoms, group, index)
    if matched.shape[1] < 3:
        return None
    n = len(group)
    centre = matched.reshape(-1, 3).mean(0)
    direction = _direction(matched)
    angles = _in_plane_angles(matched.mean(axis=1), centre, direction)
    order = np.argsort(angles, kind="stable")
    sq = []
    for a, b in zip(order, np.roll(order, -1), strict=True):
        moved = rotate_about(matched[a], centre, direction, 2 * np.pi / n)
        sq.append(((moved - matched[b]) ** 2).sum(1))
    rmsd = float(np.sqrt(np.mean(sq)))
    rel = matched.reshape(-1, 3) - centre
    radial = float(np.median(np.linalg.norm(rel - np.outer(rel @ direction, direction), axis=1)))
    return SymmetryFit(
        chains=tuple(group),
        n_fold=n,
        point_A=centre,
        direction=direction,
        rmsd_A=rmsd,
        radial_A=radial,
        accepted=rmsd <= MAX_SYMMETRY_RMSD_A,
    )


def choose_symmetry(atoms: Atoms) -> tuple[SymmetryFit | None, tuple[str, ...]]:
    """The symmetry fit of the group of chains that makes the pore, and notes on the choice.

    Returns
    -------
    fit : SymmetryFit or None
        None when no group of equivalent chains has an accepted fit.
    notes : tuple of str
        Rejected fits (with their RMSD and the threshold) and the chains left out.
    """
    index = polymer_index(atoms)
    groups = chain_groups(atoms, index)
    fits = [f for f in (fit_symmetry(atoms, g, index) for g in groups) if f is not None]
    notes = [
        f"{f.describe()} > {MAX_SYMMETRY_RMSD_A:g} Å: not the axis of a symmetric channel, ignored"
        for f in fits
        if not f.accepted
    ]
    accepted = [f for f in fits if f.accepted]
    if not accepted:
        return None, tuple(notes)
    best = max(accepted, key=lambda f: (f.n_fold, -f.radial_A))
    others = [c for c in sorted_chains(index) if c not in best.chains]
    if others:
        notes.append(
            f"axis from chains {', '.join(sorted_chains(best.chains))} (C{best.n_fold}); "
            f"chains {', '.join(others)} are accessory and do not decide it"
        )
    return best, tuple(notes)
