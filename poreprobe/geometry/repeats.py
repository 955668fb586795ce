"""Pseudo-four-fold axis of a single-chain channel built of four homologous repeats.

Eukaryotic voltage-gated Na+ and Ca2+ channels are one chain of four similar domains
(repeats I-IV, in sequence order) arranged around the pore. No two chains share a
sequence, so the chain-group symmetry of :mod:`poreprobe.geometry.chain_groups` finds
nothing; the repeats play the role of the subunits.

Method
------
1. Applies to a polymer chain with at least :data:`MIN_RESIDUES` = 400 residues with a
   CA that holds at least 60 % of the model's CA atoms.
2. Its CA atoms, in residue-number order, are split into four consecutive segments of
   equal size (the repeats; linkers and loops of unequal length shift the boundaries a
   little, which the score below tolerates because it needs no residue correspondence).
3. For a trial axis (point and direction), each segment is rotated by +90 degrees (or,
   for the other hand, -90 degrees) about it and compared with the next segment around
   the axis (in sequence order, as in those channels, or in either other cyclic order)
   by the symmetric chamfer distance: the RMS over both clouds of the distance from each CA to
   the nearest CA of the other cloud. The axis minimising the mean over the four pairs
   is found by Nelder-Mead from each of the three principal axes of the chain's CA
   atoms (through their centroid); the best fit wins.
4. The fit is accepted when that RMS is at most 4 Å, the same bound as for the symmetry
   of equivalent chains (:data:`poreprobe.geometry.chain_groups.MAX_SYMMETRY_RMSD_A`).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from poreprobe.geometry.chain_groups import MAX_SYMMETRY_RMSD_A
from poreprobe.geometry.superpose import rotate_about
from poreprobe.io.structure import Atoms

MIN_RESIDUES = 400
MIN_SHARE = 0.6
#: the three cyclic orders of four repeats around an axis (first repeat fixed)
CYCLES = ((0, 1, 2, 3), (0, 1, 3, 2), (0, 2, 1, 3))


@dataclass(frozen=True)
class RepeatFit:
    """The pseudo-four-fold fit of a single chain's four repeats.

    Attributes
    ----------
    chain : str
    point_A, direction : ndarray of shape (3,)
    deviation_A : float
        Mean symmetric chamfer RMS between each repeat turned by 90 degrees and the next (Å).
    segments : tuple of (int, int)
        First and last residue number of each repeat.
    accepted : bool
    """

    chain: str
    point_A: np.ndarray
    direction: np.ndarray
    deviation_A: float
    segments: tuple[tuple[int, int], ...]
    accepted: bool

    def describe(self) -> str:
        """One line: chain, repeats and deviation."""
        parts = ", ".join(f"{a}-{b}" for a, b in self.segments)
        return (
            f"pseudo-four-fold axis from the four repeats of chain {self.chain} "
            f"(residues {parts}): deviation {self.deviation_A:.2f} Å"
        )


def _candidate_chain(atoms: Atoms):
    ca = (atoms.kind == "polymer") & (atoms.name == "CA")
    if ca.sum() < MIN_RESIDUES:
        return None
    chains, counts = np.unique(atoms.chain[ca], return_counts=True)
    k = int(np.argmax(counts))
    if counts[k] < MIN_RESIDUES or counts[k] < MIN_SHARE * ca.sum():
        return None
    return str(chains[k]), np.flatnonzero(ca & (atoms.chain == chains[k]))


def _unit(a: float, b: float, frame: np.ndarray) -> np.ndarray:
    """Direction tilted from the frame's third axis by (a, b) along its first two."""
    d = frame @ np.array([a, b, 1.0])
    return d / np.linalg.norm(d)


def _centroid_normal(clouds) -> np.ndarray:
    """Normal of the plane through the four repeats' centroids (a square about the axis)."""
    cents = np.array([c.mean(0) for c in clouds])
    return np.linalg.svd(cents - cents.mean(0))[2][-1]


def _index_axis(clouds) -> np.ndarray:
    """Common rotation axis of the repeats superposed residue by residue (same index)."""
    from poreprobe.geometry.superpose import kabsch_rotation, rotation_axis_angle

    m = min(len(c) for c in clouds)
    tensor = np.zeros((3, 3))
    for j in range(4):
        for k in range(j + 1, 4):
            axis, angle = rotation_axis_angle(kabsch_rotation(clouds[j][:m], clouds[k][:m]))
            tensor += np.sin(angle / 2) ** 2 * np.outer(axis, axis)
    return np.linalg.eigh(tensor)[1][:, -1]


def fit_repeats(atoms: Atoms) -> RepeatFit | None:
    """The pseudo-four-fold fit of the model's single long chain, or None (module docstring)."""
    found = _candidate_chain(atoms)
    if found is None:
        return None
    from scipy.optimize import minimize
    from scipy.spatial import cKDTree

    chain, rows = found
    order = np.lexsort((atoms.icode[rows], atoms.resid[rows]))
    rows = rows[order]
    coords = atoms.coords_A[rows]
    segs = np.array_split(np.arange(len(rows)), 4)
    clouds = [coords[s] for s in segs]
    trees = [cKDTree(c) for c in clouds]

    def pair_sq(a, b, point, direction, angle):
        moved = rotate_about(clouds[a], point, direction, angle)
        back = rotate_about(clouds[b], point, direction, -angle)
        return np.concatenate([trees[b].query(moved)[0], trees[a].query(back)[0]]) ** 2

    def deviation(point, direction, sign, cycle):
        sq = [
            pair_sq(cycle[k], cycle[(k + 1) % 4], point, direction, sign * np.pi / 2)
            for k in range(4)
        ]
        return float(np.sqrt(np.mean(np.concatenate(sq))))

    centre = coords.mean(0)
    starts = [_index_axis(clouds), _centroid_normal(clouds)]
    _, vecs = np.linalg.eigh(np.cov((coords - centre).T))
    starts += [vecs[:, j] for j in range(3)]
    # each start with its best hand and cyclic order; the two best starts are refined
    trials = sorted(
        (deviation(centre, d0, sign, cycle), k, sign, cycle)
        for k, d0 in enumerate(starts)
        for sign in (1.0, -1.0)
        for cycle in CYCLES
    )
    chosen, seen = [], set()
    for _, k, sign, cycle in trials:
        if k not in seen:
            seen.add(k)
            chosen.append((starts[k], sign, cycle))
        if len(chosen) == 2:
            break
    best = None
    for d0, sign, cycle in chosen:
        e1 = np.cross(d0, np.eye(3)[int(np.argmin(np.abs(d0)))])
        e1 /= np.linalg.norm(e1)
        frame = np.column_stack([e1, np.cross(d0, e1), d0])

        def score(x, frame=frame, sign=sign, cycle=cycle):
            direction = _unit(x[0], x[1], frame)
            point = centre + x[2] * frame[:, 0] + x[3] * frame[:, 1]
            return deviation(point, direction, sign, cycle)

        simplex = np.vstack([np.zeros(4), np.diag([0.15, 0.15, 2.0, 2.0])])
        res = minimize(
            score,
            np.zeros(4),
            method="Nelder-Mead",
            options={"xatol": 1e-3, "fatol": 1e-4, "maxiter": 400, "initial_simplex": simplex},
        )
        if best is None or res.fun < best[0]:
            direction = _unit(res.x[0], res.x[1], frame)
            point = centre + res.x[2] * frame[:, 0] + res.x[3] * frame[:, 1]
            best = (float(res.fun), point, direction)
    dev, point, direction = best
    resid = atoms.resid[rows]
    segments = tuple((int(resid[s[0]]), int(resid[s[-1]])) for s in segs)
    return RepeatFit(
        chain=chain,
        point_A=point,
        direction=direction / np.linalg.norm(direction),
        deviation_A=dev,
        segments=segments,
        accepted=dev <= MAX_SYMMETRY_RMSD_A,
    )
