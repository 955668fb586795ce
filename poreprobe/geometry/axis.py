"""Finding and orienting the pore axis.

``method="auto"`` (default):

1. Chains with the same residue sequence (at least 90 % of the shorter chain
   aligned with identical residue names, so a missing loop in one subunit is
   tolerated) form a group of equivalent subunits (the largest group wins).
   Their matched backbone atoms (N, CA, C) give, by least-squares
   superposition of the first subunit onto each other one, a set of
   rotations; the common rotation axis through the group's centroid is the
   n-fold symmetry axis. ``symmetry_rmsd_A`` is the RMSD between each subunit
   and the first subunit carried onto it by the ideal n-fold rotation about
   that axis (the deviation from perfect C_n symmetry).
2. For n >= 3 that axis is used. For n = 2 (a two-fold axis may run across the
   pore, as in a head-to-head dimer) and without symmetry, the candidates are
   the symmetry axis (if any) and the three principal axes of the atoms
   through their centroid; the one whose line is most open (largest smallest
   clearance along the line within the middle 80 % of the protein) is used.

Sign convention: with an entry selection, s increases from the entry end. Without
one, the direction is chosen so that the chains' N-terminal residues lie at
negative s; where that is ambiguous (|mean s| < 1 Å), the largest Cartesian
component of the direction is made positive. The axis point is always the
centroid of the atoms projected onto the axis, so s = 0 at the protein's centre.
"""

from __future__ import annotations

import difflib
from dataclasses import dataclass

import numpy as np

from poreprobe._validate import as_unit_vector, as_vector3, check_choice
from poreprobe.errors import InputError
from poreprobe.geometry.superpose import kabsch_rotation, rotate_about, rotation_axis_angle
from poreprobe.io.cleaning import select_indices
from poreprobe.io.structure import Atoms

AXIS_METHODS = ("auto", "symmetry", "principal", "user", "selections")
BACKBONE = ("N", "CA", "C")


@dataclass(frozen=True)
class PoreAxis:
    """A pore axis: a point and a unit direction.

    Attributes
    ----------
    point_A : ndarray of shape (3,)
        A point on the axis (Å); s = 0 there.
    direction : ndarray of shape (3,)
        Unit vector along which s increases.
    method : str
        How it was found: ``"symmetry C4"``, ``"principal"``, ``"user"``,
        ``"selections"``.
    n_fold : int or None
        Order of the symmetry used, if any.
    symmetry_rmsd_A : float or None
        Deviation from ideal n-fold symmetry (Å), if symmetry was analysed.
    oriented_by : str
        What fixed the sign of ``direction``.
    """

    point_A: np.ndarray
    direction: np.ndarray
    method: str
    n_fold: int | None = None
    symmetry_rmsd_A: float | None = None
    oriented_by: str = "default"

    def __post_init__(self):
        object.__setattr__(self, "point_A", as_vector3(self.point_A, "point_A"))
        object.__setattr__(self, "direction", as_unit_vector(self.direction, "direction"))
        self.point_A.setflags(write=False)
        self.direction.setflags(write=False)

    def basis(self) -> tuple[np.ndarray, np.ndarray]:
        """Two unit vectors (e1, e2) completing a right-handed frame with the direction."""
        d = self.direction
        ref = np.eye(3)[int(np.argmin(np.abs(d)))]
        e1 = np.cross(d, ref)
        e1 /= np.linalg.norm(e1)
        return e1, np.cross(d, e1)

    def s_A(self, coords_A) -> np.ndarray:
        """Axial coordinate of points (Å)."""
        return (np.asarray(coords_A, dtype=np.float64) - self.point_A) @ self.direction

    def to_frame(self, coords_A) -> np.ndarray:
        """Coordinates in the axis frame, columns (u, v, s) in Å."""
        e1, e2 = self.basis()
        rel = np.asarray(coords_A, dtype=np.float64) - self.point_A
        return np.stack([rel @ e1, rel @ e2, rel @ self.direction], axis=-1)

    def from_frame(self, uvs_A) -> np.ndarray:
        """Cartesian coordinates from axis-frame (u, v, s) coordinates."""
        e1, e2 = self.basis()
        uvs = np.asarray(uvs_A, dtype=np.float64)
        return (
            self.point_A + uvs[..., :1] * e1 + uvs[..., 1:2] * e2 + uvs[..., 2:3] * self.direction
        )

    def flipped(self, oriented_by: str) -> PoreAxis:
        """The same line with the opposite direction."""
        return PoreAxis(
            self.point_A,
            -self.direction,
            self.method,
            self.n_fold,
            self.symmetry_rmsd_A,
            oriented_by,
        )

    def to_dict(self) -> dict:
        return {
            "point_A": self.point_A.tolist(),
            "direction": self.direction.tolist(),
            "method": self.method,
            "n_fold": self.n_fold,
            "symmetry_rmsd_A": self.symmetry_rmsd_A,
            "oriented_by": self.oriented_by,
        }


SEQUENCE_MATCH = 0.9


def chain_residues(atoms: Atoms, chain: str) -> tuple[list[tuple[int, str]], list[str]]:
    """(resid, icode) keys and names of a chain's polymer residues that have a CA, in order."""
    mask = (atoms.kind == "polymer") & (atoms.chain == chain) & (atoms.name == "CA")
    keys = list(
        dict.fromkeys(zip(atoms.resid[mask].tolist(), atoms.icode[mask].tolist(), strict=True))
    )
    first = {}
    for key, name in zip(
        zip(atoms.resid[mask].tolist(), atoms.icode[mask].tolist(), strict=True),
        atoms.resname[mask].tolist(),
        strict=True,
    ):
        first.setdefault(key, name)
    return keys, [first[k] for k in keys]


def _alignment(ref_names: list[str], names: list[str]) -> dict[int, int]:
    """Residue index in ``ref_names`` -> index in ``names`` for the matching blocks."""
    if ref_names == names:
        return dict(zip(range(len(names)), range(len(names)), strict=True))
    matcher = difflib.SequenceMatcher(None, ref_names, names, autojunk=False)
    return {a + t: b + t for a, b, size in matcher.get_matching_blocks() for t in range(size)}


def aligned_residues(atoms: Atoms, chains: list[str]) -> list[list[tuple[int, str]]]:
    """Residue keys of equivalent chains, aligned column by column.

    The sequences (residue names of residues with a CA) are aligned to the first
    chain's with :class:`difflib.SequenceMatcher`, so missing residues and
    different numbering are tolerated; only residues present in every chain are
    kept.

    Returns
    -------
    list of list of (int, str)
        ``out[k][j]``: (resid, icode) of column j in chain ``chains[k]``.
    """
    ref_keys, ref_names = chain_residues(atoms, chains[0])
    common = set(range(len(ref_keys)))
    maps = []
    for ch in chains[1:]:
        keys, names = chain_residues(atoms, ch)
        mapping = _alignment(ref_names, names)
        maps.append((keys, mapping))
        common &= set(mapping)
    cols = sorted(common)
    return [[ref_keys[j] for j in cols]] + [[keys[m[j]] for j in cols] for keys, m in maps]


def equivalent_chains(atoms: Atoms) -> tuple[list[str], np.ndarray]:
    """The largest group of chains with the same polymer sequence.

    Two chains are equivalent when at least 90 % of the shorter one's residues
    (those with a CA) align with identical names to the other's (a missing loop
    or a different numbering in one subunit is tolerated).

    Returns
    -------
    chains : list of str
        Chain ids of the group (at least 2), or an empty list.
    matched : ndarray of shape (n_chains, m, 3)
        Coordinates of the backbone atoms present in every chain of the group
        (residues matched through the alignment).
    """
    poly = atoms.kind == "polymer"
    seqs = {}
    for ch in dict.fromkeys(atoms.chain[poly].tolist()):
        keys, names = chain_residues(atoms, ch)
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
    if not groups:
        return [], np.empty((0, 0, 3))
    group = max(groups, key=lambda g: (len(g), -groups.index(g)))
    columns = aligned_residues(atoms, group)
    coords_per_chain = []
    for ch in group:
        mask = poly & (atoms.chain == ch) & np.isin(atoms.name, BACKBONE)
        coords_per_chain.append(
            {
                (r, i, n): xyz
                for r, i, n, xyz in zip(
                    atoms.resid[mask].tolist(),
                    atoms.icode[mask].tolist(),
                    atoms.name[mask].tolist(),
                    atoms.coords_A[mask],
                    strict=True,
                )
            }
        )
    matched_rows = []
    for j in range(len(columns[0])):
        for name in BACKBONE:
            keys = [(*columns[k][j], name) for k in range(len(group))]
            if all(key in kc for key, kc in zip(keys, coords_per_chain, strict=True)):
                matched_rows.append(
                    [kc[key] for key, kc in zip(keys, coords_per_chain, strict=True)]
                )
    if len(matched_rows) < 3:
        return [], np.empty((0, 0, 3))
    return group, np.array(matched_rows).transpose(1, 0, 2)


def symmetry_axis(atoms: Atoms) -> PoreAxis | None:
    """The n-fold axis of the largest group of equivalent chains, or None."""
    chains, matched = equivalent_chains(atoms)
    if not chains:
        return None
    n = len(chains)
    centre = matched.reshape(-1, 3).mean(0)
    axes, weights = [], []
    for k in range(1, n):
        axis, angle = rotation_axis_angle(kabsch_rotation(matched[0], matched[k]))
        axes.append(axis)
        weights.append(max(np.sin(angle / 2), 1e-6))
    ref = axes[int(np.argmax(weights))]
    total = sum(w * (a if a @ ref >= 0 else -a) for a, w in zip(axes, weights, strict=True))
    direction = total / np.linalg.norm(total)
    deviations = []
    for k in range(1, n):
        best = np.inf
        for m in range(1, n):
            moved = rotate_about(matched[0], centre, direction, 2 * np.pi * m / n)
            best = min(best, float(np.sqrt(((moved - matched[k]) ** 2).sum(1).mean())))
        deviations.append(best)
    return PoreAxis(
        centre, direction, f"symmetry C{n}", n_fold=n, symmetry_rmsd_A=float(np.mean(deviations))
    )


def principal_axes(atoms: Atoms) -> list[PoreAxis]:
    """The three principal axes of the atoms through their centroid (largest variance first)."""
    coords = atoms.coords_A
    centre = coords.mean(0)
    _, vecs = np.linalg.eigh(np.cov((coords - centre).T))
    return [PoreAxis(centre, vecs[:, j], "principal") for j in (2, 1, 0)]


def line_openness_A(atoms: Atoms, axis: PoreAxis, radii_A: np.ndarray) -> float:
    """Smallest clearance along the axis line within the middle 80 % of the atoms (Å)."""
    from poreprobe.geometry.kernel import AtomSpheres

    s = axis.s_A(atoms.coords_A)
    lo, hi = np.quantile(s, [0.1, 0.9])
    samples = np.linspace(lo, hi, max(int((hi - lo) / 0.25), 2))
    pts = axis.point_A + samples[:, None] * axis.direction
    return float(AtomSpheres(atoms.coords_A, radii_A).clearance_A(pts).min())


def _recentre(axis: PoreAxis, atoms: Atoms) -> PoreAxis:
    centre = atoms.coords_A.mean(0)
    point = axis.point_A + ((centre - axis.point_A) @ axis.direction) * axis.direction
    return PoreAxis(
        point, axis.direction, axis.method, axis.n_fold, axis.symmetry_rmsd_A, axis.oriented_by
    )


def orient_axis(axis: PoreAxis, atoms: Atoms, entry: str | None = None) -> PoreAxis:
    """Fix the sign of the axis direction (see module docstring).

    Parameters
    ----------
    axis : PoreAxis
    atoms : Atoms
    entry : str, optional
        MDAnalysis selection of atoms at the end of the pore where ions enter;
        s then increases from that end.

    Raises
    ------
    InputError
        If the entry selection matches nothing or lies in the middle third of
        the protein's axial extent.
    """
    s = axis.s_A(atoms.coords_A)
    if entry is not None:
        idx = select_indices(atoms, entry)
        s_entry = float(s[idx].mean())
        lo, hi = float(s.min()), float(s.max())
        third = (hi - lo) / 3
        if lo + third < s_entry < hi - third:
            raise InputError(
                f"entry selection {entry!r} lies in the middle of the pore "
                f"(s = {s_entry:.1f} Å within {lo:.1f}..{hi:.1f} Å); "
                "select atoms at one end"
            )
        mid = 0.5 * (lo + hi)
        if s_entry > mid:
            return axis.flipped(f"entry {entry!r}")
        return PoreAxis(
            axis.point_A,
            axis.direction,
            axis.method,
            axis.n_fold,
            axis.symmetry_rmsd_A,
            f"entry {entry!r}",
        )
    poly = atoms.kind == "polymer"
    firsts = []
    for ch in np.unique(atoms.chain[poly]):
        in_chain = poly & (atoms.chain == ch)
        first_res = atoms.resid[in_chain].min()
        firsts.append(s[in_chain & (atoms.resid == first_res)].mean())
    mean_first = float(np.mean(firsts)) if firsts else 0.0
    if abs(mean_first) >= 1.0:
        if mean_first > 0:
            return axis.flipped("N-termini at negative s")
        return PoreAxis(
            axis.point_A,
            axis.direction,
            axis.method,
            axis.n_fold,
            axis.symmetry_rmsd_A,
            "N-termini at negative s",
        )
    if axis.direction[int(np.argmax(np.abs(axis.direction)))] < 0:
        return axis.flipped("largest component positive")
    return PoreAxis(
        axis.point_A,
        axis.direction,
        axis.method,
        axis.n_fold,
        axis.symmetry_rmsd_A,
        "largest component positive",
    )


def find_pore_axis(
    atoms: Atoms,
    *,
    method: str = "auto",
    point_A=None,
    direction=None,
    selections: tuple[str, str] | None = None,
    entry: str | None = None,
    radii_A: np.ndarray | None = None,
) -> PoreAxis:
    """Find the pore axis of a channel model.

    Parameters
    ----------
    atoms : Atoms
        The channel (at least 2 atoms).
    method : {"auto", "symmetry", "principal", "user", "selections"}
        See module docstring. ``"user"`` needs ``point_A`` and ``direction``;
        ``"selections"`` needs two selections whose centroids define the axis
        (s increases from the first to the second). Giving ``direction`` or
        ``selections`` with ``"auto"`` implies that method.
    point_A, direction : array_like of shape (3,), optional
        User axis (Å; direction need not be normalised, but must be non-zero).
    selections : (str, str), optional
        Two MDAnalysis selections.
    entry : str, optional
        Selection at the entry end; orients s (see :func:`orient_axis`).
    radii_A : ndarray, optional
        Atom radii used to compare candidate axes (default: Bondi).

    Returns
    -------
    PoreAxis

    Raises
    ------
    InputError
        Bad method, zero-length direction, too few atoms, or selections that
        match nothing or coincide.
    """
    method = check_choice(method, "method", AXIS_METHODS)
    if len(atoms) < 2:
        raise InputError(f"need at least 2 atoms to find a pore axis, got {len(atoms)}")
    if method == "auto" and direction is not None:
        method = "user"
    if method == "auto" and selections is not None:
        method = "selections"
    if method == "user":
        if direction is None:
            raise InputError("method 'user' needs a direction")
        point = atoms.coords_A.mean(0) if point_A is None else as_vector3(point_A, "point_A")
        axis = PoreAxis(point, as_unit_vector(direction, "direction"), "user")
        axis = _recentre(axis, atoms)
        if entry is None:
            return PoreAxis(axis.point_A, axis.direction, "user", oriented_by="user direction")
        return orient_axis(axis, atoms, entry)
    if method == "selections":
        if selections is None or len(selections) != 2:
            raise InputError("method 'selections' needs two selections")
        a = atoms.coords_A[select_indices(atoms, selections[0])].mean(0)
        b = atoms.coords_A[select_indices(atoms, selections[1])].mean(0)
        if np.linalg.norm(b - a) < 1e-6:
            raise InputError("the two axis selections have the same centroid")
        axis = _recentre(PoreAxis(a, b - a, "selections"), atoms)
        if entry is None:
            return PoreAxis(
                axis.point_A, axis.direction, "selections", oriented_by="first to second selection"
            )
        return orient_axis(axis, atoms, entry)
    if radii_A is None:
        from poreprobe.io.radii import atom_radii_A

        radii_A = atom_radii_A(atoms)
    sym = symmetry_axis(atoms)
    if method == "symmetry":
        if sym is None:
            raise InputError(
                "no group of two or more chains with identical sequence found; "
                "use method 'principal' or give the axis"
            )
        chosen = sym
    elif method == "principal":
        chosen = max(principal_axes(atoms), key=lambda ax: line_openness_A(atoms, ax, radii_A))
    elif sym is not None and sym.n_fold >= 3:
        chosen = sym
    else:
        candidates = ([sym] if sym is not None else []) + principal_axes(atoms)
        openness = [line_openness_A(atoms, ax, radii_A) for ax in candidates]
        chosen = candidates[int(np.argmax(openness))]
    return orient_axis(_recentre(chosen, atoms), atoms, entry)
