"""Finding and orienting the pore axis.

``method="auto"`` (default):

1. The chains that make the pore are found as in
   :mod:`poreprobe.geometry.chain_groups`: groups of chains with the same sequence
   (>= 90 % identity), each group's n-fold axis from all its subunits treated alike
   (order-free), fits with a symmetry RMSD above 4 Å rejected and reported, and the
   accepted group of highest order closest to its axis chosen; accessory chains
   (Fabs, beta subunits, toxins) neither break the symmetry nor decide the axis.
   ``PoreAxis.chains`` lists the chains that define the axis. A single chain of four
   homologous repeats (eukaryotic Na+ and Ca2+ channels) gets a pseudo-four-fold axis
   from its repeats (:mod:`poreprobe.geometry.repeats`; method ``"pseudo-C4 (repeats)"``).
2. For n >= 3 that axis is used. For n = 2 (a two-fold axis may run across the
   pore, as in a head-to-head dimer) and without symmetry, the candidates are
   the symmetry axis (if any) and the three principal axes of the atoms
   through their centroid; the one whose line is most open (largest smallest
   clearance along the line within the middle 80 % of the protein) is used.

Canonical frame (the same for any order of chains, residues and atoms and for any
rigid motion of the input; see :mod:`poreprobe.geometry.frame`): s = 0 at the
projection of the centroid of the pore-forming chains; the sign of s from the
structure (an entry selection, else the N-termini of the pore-forming chains at
negative s, else the N-to-C direction of the chain with the smallest id); an
in-plane reference direction towards the first pore-forming chain
(``PoreAxis.reference_basis``).
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from poreprobe._validate import as_unit_vector, as_vector3, check_choice
from poreprobe.errors import InputError
from poreprobe.geometry.chain_groups import (
    MAX_SYMMETRY_RMSD_A,
    aligned_residues,
    chain_groups,
    chain_residues,
    choose_symmetry,
    matched_backbone,
)
from poreprobe.geometry.frame import canonical_frame, canonical_point
from poreprobe.io.cleaning import select_indices
from poreprobe.io.structure import Atoms

__all__ = [
    "AXIS_METHODS",
    "MAX_SYMMETRY_RMSD_A",
    "PoreAxis",
    "aligned_residues",
    "chain_residues",
    "equivalent_chains",
    "find_pore_axis",
    "orient_axis",
    "principal_axes",
    "symmetry_axis",
]

AXIS_METHODS = ("auto", "symmetry", "principal", "user", "selections")


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
    chains : tuple of str
        Chains that define the axis (the pore-forming group, in order around the
        axis, starting at the smallest id); empty when no symmetry group is used.
    reference_direction : ndarray of shape (3,) or None
        Canonical in-plane unit vector (perpendicular to ``direction``) from the
        axis towards the first pore-forming chain; see :meth:`reference_basis`.
    notes : tuple of str
        How the axis was chosen: rejected symmetry fits, accessory chains.
    """

    point_A: np.ndarray
    direction: np.ndarray
    method: str
    n_fold: int | None = None
    symmetry_rmsd_A: float | None = None
    oriented_by: str = "default"
    chains: tuple[str, ...] = ()
    reference_direction: np.ndarray | None = None
    notes: tuple[str, ...] = ()

    def __post_init__(self):
        object.__setattr__(self, "point_A", as_vector3(self.point_A, "point_A"))
        object.__setattr__(self, "direction", as_unit_vector(self.direction, "direction"))
        object.__setattr__(self, "chains", tuple(str(c) for c in self.chains))
        object.__setattr__(self, "notes", tuple(str(n) for n in self.notes))
        self.point_A.setflags(write=False)
        self.direction.setflags(write=False)
        if self.reference_direction is not None:
            ref = as_vector3(self.reference_direction, "reference_direction")
            ref = ref - (ref @ self.direction) * self.direction
            if np.linalg.norm(ref) < 1e-9:
                raise InputError("reference_direction must not be parallel to the direction")
            ref = ref / np.linalg.norm(ref)
            ref.setflags(write=False)
            object.__setattr__(self, "reference_direction", ref)

    def basis(self) -> tuple[np.ndarray, np.ndarray]:
        """Two unit vectors (e1, e2) completing a right-handed frame with the direction."""
        d = self.direction
        ref = np.eye(3)[int(np.argmin(np.abs(d)))]
        e1 = np.cross(d, ref)
        e1 /= np.linalg.norm(e1)
        return e1, np.cross(d, e1)

    def reference_basis(self) -> tuple[np.ndarray, np.ndarray]:
        """Canonical in-plane frame (e1, e2): e1 the reference direction, e2 = direction x e1.

        Defined from the structure (see :mod:`poreprobe.geometry.frame`), so a grid laid
        out in it turns with the model; falls back to :meth:`basis` without a reference.
        """
        if self.reference_direction is None:
            return self.basis()
        e1 = np.array(self.reference_direction)
        return e1, np.cross(self.direction, e1)

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
        return replace(self, direction=-self.direction, oriented_by=oriented_by)

    def to_dict(self) -> dict:
        return {
            "point_A": self.point_A.tolist(),
            "direction": self.direction.tolist(),
            "method": self.method,
            "n_fold": self.n_fold,
            "symmetry_rmsd_A": self.symmetry_rmsd_A,
            "oriented_by": self.oriented_by,
            "chains": list(self.chains),
            "reference_direction": (
                None if self.reference_direction is None else self.reference_direction.tolist()
            ),
            "notes": list(self.notes),
        }


def equivalent_chains(atoms: Atoms) -> tuple[list[str], np.ndarray]:
    """The group of equivalent chains that makes the pore, and their matched backbone.

    See :mod:`poreprobe.geometry.chain_groups`: the accepted n-fold group of highest
    order closest to its axis, or, when no group's symmetry is accepted, the
    largest group of chains with the same sequence.

    Returns
    -------
    chains : list of str
        Chain ids of the group (at least 2) in natural sorted order, or an empty list.
    matched : ndarray of shape (n_chains, m, 3)
        Coordinates of the backbone atoms present in every chain of the group.
    """
    fit, _ = choose_symmetry(atoms)
    if fit is not None:
        chains = list(fit.chains)
    else:
        groups = chain_groups(atoms)
        if not groups:
            return [], np.empty((0, 0, 3))
        chains = groups[0]
    matched = matched_backbone(atoms, chains)
    if matched.shape[1] < 3:
        return [], np.empty((0, 0, 3))
    return chains, matched


def symmetry_axis(atoms: Atoms) -> PoreAxis | None:
    """The n-fold axis of the chains that make the pore, or None (see :func:`choose_symmetry`).

    The axis point is the centroid of the group's matched backbone atoms; the sign
    of the direction is not yet fixed (see :func:`orient_axis`). Notes on rejected
    fits and accessory chains are kept in ``PoreAxis.notes``.
    """
    fit, notes = choose_symmetry(atoms)
    if fit is None:
        return None
    return PoreAxis(
        fit.point_A,
        fit.direction,
        f"symmetry C{fit.n_fold}",
        n_fold=fit.n_fold,
        symmetry_rmsd_A=fit.rmsd_A,
        chains=fit.chains,
        notes=notes,
    )


def principal_axes(atoms: Atoms) -> list[PoreAxis]:
    """The three principal axes of the atoms through their centroid (largest variance first)."""
    coords = atoms.coords_A
    centre = coords.mean(0)
    _, vecs = np.linalg.eigh(np.cov((coords - centre).T))
    return [PoreAxis(centre, vecs[:, j], "principal") for j in (2, 1, 0)]


def line_openness_A(atoms: Atoms, axis: PoreAxis, radii_A: np.ndarray, spheres=None) -> float:
    """Smallest clearance along the axis line within the middle 80 % of the atoms (Å).

    ``spheres`` (an :class:`~poreprobe.geometry.kernel.AtomSpheres` of the same atoms)
    saves building the search tree again when several lines are compared.
    """
    if spheres is None:
        from poreprobe.geometry.kernel import AtomSpheres

        spheres = AtomSpheres(atoms.coords_A, radii_A)
    s = axis.s_A(atoms.coords_A)
    lo, hi = np.quantile(s, [0.1, 0.9])
    samples = np.linspace(lo, hi, max(int((hi - lo) / 0.25), 2))
    pts = axis.point_A + samples[:, None] * axis.direction
    return float(spheres.clearance_A(pts).min())


def orient_axis(axis: PoreAxis, atoms: Atoms, entry: str | None = None) -> PoreAxis:
    """Put an axis in its canonical frame and fix the sign of its direction.

    Parameters
    ----------
    axis : PoreAxis
    atoms : Atoms
    entry : str, optional
        MDAnalysis selection of atoms at the end of the pore where ions enter;
        s then increases from that end. Without it, the sign comes from the
        structure (see :mod:`poreprobe.geometry.frame`).

    Raises
    ------
    InputError
        If the entry selection matches nothing or lies in the middle third of
        the protein's axial extent.
    """
    if entry is None:
        return canonical_frame(axis, atoms)
    axis = canonical_point(axis, atoms)
    s = axis.s_A(atoms.coords_A)
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
    if s_entry > 0.5 * (lo + hi):
        axis = axis.flipped(f"entry {entry!r}")
    else:
        axis = replace(axis, oriented_by=f"entry {entry!r}")
    return canonical_frame(axis, atoms, orient=False)


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
        if entry is None:
            axis = replace(axis, oriented_by="user direction")
            return canonical_frame(axis, atoms, orient=False)
        return orient_axis(axis, atoms, entry)
    if method == "selections":
        if selections is None or len(selections) != 2:
            raise InputError("method 'selections' needs two selections")
        a = atoms.coords_A[select_indices(atoms, selections[0])].mean(0)
        b = atoms.coords_A[select_indices(atoms, selections[1])].mean(0)
        if np.linalg.norm(b - a) < 1e-6:
            raise InputError("the two axis selections have the same centroid")
        axis = PoreAxis(a, b - a, "selections", oriented_by="first to second selection")
        if entry is None:
            return canonical_frame(axis, atoms, orient=False)
        return orient_axis(axis, atoms, entry)
    if radii_A is None:
        from poreprobe.io.radii import atom_radii_A

        radii_A = atom_radii_A(atoms)
    from poreprobe.geometry.kernel import AtomSpheres

    sym = symmetry_axis(atoms)
    repeat_notes: tuple[str, ...] = ()
    if sym is None:
        sym, repeat_notes = _repeat_axis(atoms)
    if method == "symmetry":
        if sym is None:
            raise InputError(
                "no group of two or more chains with identical sequence found; "
                "use method 'principal' or give the axis"
            )
        chosen = sym
    elif method == "principal":
        spheres = AtomSpheres(atoms.coords_A, radii_A)
        chosen = max(
            principal_axes(atoms), key=lambda ax: line_openness_A(atoms, ax, radii_A, spheres)
        )
    elif sym is not None and sym.n_fold >= 3:
        chosen = sym
    else:
        candidates = ([sym] if sym is not None else []) + principal_axes(atoms)
        spheres = AtomSpheres(atoms.coords_A, radii_A)
        openness = [line_openness_A(atoms, ax, radii_A, spheres) for ax in candidates]
        chosen = candidates[int(np.argmax(openness))]
    if sym is not None and chosen is not sym:
        # a rejected two-fold: the pore runs across it, keep the notes on the choice
        chosen = replace(chosen, notes=sym.notes + (f"{sym.method} axis not along the pore",))
    elif sym is None:
        _, notes = choose_symmetry(atoms)
        chosen = replace(chosen, notes=notes + repeat_notes)
    return orient_axis(chosen, atoms, entry)


def _repeat_axis(atoms: Atoms) -> tuple[PoreAxis | None, tuple[str, ...]]:
    """Pseudo-four-fold axis of a single chain of four repeats (geometry.repeats), if accepted."""
    from poreprobe.geometry.repeats import fit_repeats

    fit = fit_repeats(atoms)
    if fit is None:
        return None, ()
    if not fit.accepted:
        return None, (
            f"{fit.describe()} > {MAX_SYMMETRY_RMSD_A:g} Å: not a four-repeat channel, ignored",
        )
    axis = PoreAxis(
        fit.point_A,
        fit.direction,
        "pseudo-C4 (repeats)",
        n_fold=4,
        symmetry_rmsd_A=fit.deviation_A,
        chains=(fit.chain,),
        notes=(fit.describe(),),
    )
    return axis, ()
