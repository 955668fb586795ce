"""Pore-lining residues and constrictions of a radius profile.

Definitions
-----------
**Lining atom.** At every enclosed plane of a :class:`~poreprobe.geometry.profile.RadiusProfile`
(radius R, sphere centre c), an atom of radius r at x lines the pore when its van
der Waals surface lies within ``lining_distance_A`` of the sphere's surface:
``|x - c| - r - R <= lining_distance_A``. The default, 1.0 Å, is our choice: it
takes in the atoms that touch the sphere (gap 0) and those set back from it by
less than about a third of a water molecule's diameter (2.8 Å, common practice),
so a wall atom next to the one that sets the radius still counts.

**Per-residue table.** For every residue with at least one lining atom: the s
range of the planes it lines, its **closest approach** ``closest_A`` (the smallest
distance from a profile sphere centre to the residue's van der Waals surface;
equal to the pore radius where the residue sets it), the atom that makes it, and
whether side-chain atoms, backbone atoms or both line the pore.

**Constriction.** A local minimum of the radius (scipy's ``find_peaks`` on the
negated profile, open planes counted as wide) whose radius is at most
``constriction_radius_A`` and whose prominence is at least
``min_prominence_A``. The default threshold, 4.0 Å, lies a little above the
hydrated radii of the common monovalent ions (3.3-3.8 Å; Nightingale 1959, as in
:mod:`poreprobe.bench.ions`), so a constriction is a place where an ion would have to
shed water. Its lining residues are those lining the constriction's plane;
copies of the same residue (name and number) in different chains are grouped,
e.g. "ring of 4 x LEU 12 side chains".
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from scipy.spatial import cKDTree

from poreprobe._validate import check_positive
from poreprobe._version import __version__
from poreprobe.errors import InputError
from poreprobe.geometry.profile import RadiusProfile
from poreprobe.io.radii import RADIUS_SETS, RadiusSet, atom_radii_A
from poreprobe.io.residues import is_backbone
from poreprobe.io.structure import Atoms

LINING_DISTANCE_A = 1.0
CONSTRICTION_RADIUS_A = 4.0
MIN_PROMINENCE_A = 0.25

PARTS = ("side chain", "backbone", "side chain and backbone")


@dataclass(frozen=True)
class LiningResidue:
    """One residue lining the pore.

    Attributes
    ----------
    chain, resname : str
    resid : int
    icode : str
    s_min_A, s_max_A : float
        Range of plane positions s where the residue lines the pore (Å).
    closest_A : float
        Smallest distance from a profile sphere centre to the residue's van der
        Waals surface (Å).
    closest_s_A : float
        Plane where that happens (Å).
    closest_atom : str
        Name of the atom that makes the closest approach.
    part : str
        ``"side chain"``, ``"backbone"`` or ``"side chain and backbone"``: which
        atoms of the residue line the pore.
    n_planes : int
        Number of planes the residue lines.
    """

    chain: str
    resname: str
    resid: int
    icode: str
    s_min_A: float
    s_max_A: float
    closest_A: float
    closest_s_A: float
    closest_atom: str
    part: str
    n_planes: int

    @property
    def label(self) -> str:
        """``"A:LEU12"`` (chain, name, number, insertion code)."""
        return f"{self.chain}:{self.resname}{self.resid}{self.icode}"

    def to_dict(self) -> dict:
        return {
            "chain": self.chain,
            "resname": self.resname,
            "resid": self.resid,
            "icode": self.icode,
            "s_min_A": self.s_min_A,
            "s_max_A": self.s_max_A,
            "closest_A": self.closest_A,
            "closest_s_A": self.closest_s_A,
            "closest_atom": self.closest_atom,
            "part": self.part,
            "n_planes": self.n_planes,
        }


@dataclass(frozen=True)
class ResidueGroup:
    """Copies of one residue (same name and number) in several chains, e.g. a ring.

    Attributes
    ----------
    resname : str
    resid : int
    icode : str
    chains : tuple of str
    part : str
        Which atoms line the pore across the copies.
    """

    resname: str
    resid: int
    icode: str
    chains: tuple[str, ...]
    part: str

    @property
    def label(self) -> str:
        """Chain-aware label: ``"Leu12 (A-D)"`` (:mod:`poreprobe.io.labels`)."""
        from poreprobe.io.labels import chain_span, residue_name

        return f"{residue_name(self.resname, f'{self.resid}{self.icode}')} " + (
            f"({chain_span(self.chains)})"
        )

    @property
    def text(self) -> str:
        """Plain description: ``"ring of 4 x LEU 12 side chains"``."""
        name = f"{self.resname} {self.resid}{self.icode}"
        if len(self.chains) == 1:
            return f"{name} {self.part} (chain {self.chains[0]})"
        return f"ring of {len(self.chains)} x {name} {self.parts}"

    @property
    def parts(self) -> str:
        """The lining part, plural for copies in several chains (``"side chains"``)."""
        if len(self.chains) == 1:
            return self.part
        return {
            "side chain": "side chains",
            "backbone": "backbone",
            "side chain and backbone": "side chains and backbone",
        }[self.part]

    def to_dict(self) -> dict:
        return {
            "resname": self.resname,
            "resid": self.resid,
            "icode": self.icode,
            "chains": list(self.chains),
            "part": self.part,
            "text": self.text,
            "label": self.label,
        }


@dataclass(frozen=True)
class Constriction:
    """A local minimum of the pore radius below the threshold.

    Attributes
    ----------
    s_A, radius_A : float
        Position and radius of the minimum (Å).
    prominence_A : float
        How far the radius rises on both sides before a lower minimum (Å).
    residues : tuple of str
        Labels (``"A:LEU12"``) of the residues lining this plane, closest first.
    groups : tuple of ResidueGroup
        The same residues, copies in different chains grouped.
    """

    s_A: float
    radius_A: float
    prominence_A: float
    residues: tuple[str, ...]
    groups: tuple[ResidueGroup, ...]

    @property
    def text(self) -> str:
        """``"s = -1.0 Å, radius 2.77 Å: Leu12 (A-D) side chains"`` (chain-aware labels)."""
        lined = "; ".join(f"{g.label} {g.parts}" for g in self.groups) or "no residue within reach"
        return f"s = {self.s_A:.1f} Å, radius {self.radius_A:.2f} Å: {lined}"

    def to_dict(self) -> dict:
        return {
            "s_A": self.s_A,
            "radius_A": self.radius_A,
            "prominence_A": self.prominence_A,
            "residues": list(self.residues),
            "groups": [g.to_dict() for g in self.groups],
            "text": self.text,
        }


@dataclass(frozen=True)
class PoreLining:
    """Atoms and residues lining the pore, level by level, and the constrictions.

    Attributes
    ----------
    residues : tuple of LiningResidue
        Per-residue table, ordered by ``s_min_A``.
    constrictions : tuple of Constriction
        Ordered by s.
    plane_index, atom_index : ndarray of int, shape (n_contacts,)
        Every (plane, atom) lining contact: index into ``s_A`` and into the atoms.
    gap_A : ndarray of shape (n_contacts,)
        Distance from the atom's surface to the sphere's surface (Å, <= the
        lining distance; ~0 for the atom that sets the radius).
    contact_residue : ndarray of str, shape (n_contacts,)
        Residue label (``"A:LEU12"``) of each contact's atom.
    s_A : ndarray of shape (n_planes,)
        The profile's plane positions (Å).
    lining_distance_A, constriction_radius_A, min_prominence_A : float
        The settings used.
    radius_set : str
    source : str
    version : str
    """

    residues: tuple[LiningResidue, ...]
    constrictions: tuple[Constriction, ...]
    plane_index: np.ndarray
    atom_index: np.ndarray
    gap_A: np.ndarray
    contact_residue: np.ndarray
    s_A: np.ndarray
    lining_distance_A: float
    constriction_radius_A: float
    min_prominence_A: float
    radius_set: str
    source: str = ""
    version: str = field(default=__version__)

    def __post_init__(self):
        for name in ("plane_index", "atom_index", "gap_A", "contact_residue", "s_A"):
            getattr(self, name).setflags(write=False)

    def atoms_at(self, s_A: float) -> np.ndarray:
        """Indices of the atoms lining the plane nearest to ``s_A``."""
        k = int(np.argmin(np.abs(self.s_A - float(s_A))))
        return self.atom_index[self.plane_index == k]

    def levels(self) -> list[dict]:
        """Per enclosed plane: s and the residues lining it, closest first."""
        out = []
        for k in np.unique(self.plane_index):
            here = self.plane_index == k
            out.append(
                {
                    "s_A": float(self.s_A[k]),
                    "residues": list(
                        dict.fromkeys(
                            self.contact_residue[here][
                                np.argsort(self.gap_A[here], kind="stable")
                            ].tolist()
                        )
                    ),
                }
            )
        return out

    def labels(self) -> tuple[str, ...]:
        """Labels of all lining residues."""
        return tuple(r.label for r in self.residues)

    def to_dict(self) -> dict:
        return {
            "version": self.version,
            "source": self.source,
            "radius_set": self.radius_set,
            "lining_distance_A": self.lining_distance_A,
            "constriction_radius_A": self.constriction_radius_A,
            "min_prominence_A": self.min_prominence_A,
            "lining": [r.to_dict() for r in self.residues],
            "constrictions": [c.to_dict() for c in self.constrictions],
            "levels": self.levels(),
        }


def _resolve_radii(atoms: Atoms, profile: RadiusProfile, radii, radii_A) -> np.ndarray:
    if radii_A is not None:
        radii_A = np.asarray(radii_A, dtype=np.float64)
        if radii_A.shape != (len(atoms),):
            raise InputError(f"radii_A must have {len(atoms)} values, got {radii_A.shape}")
        return radii_A
    if radii is None:
        if profile.radius_set not in RADIUS_SETS:
            raise InputError(
                f"the profile used radius set {profile.radius_set!r}; pass the "
                "same radii (radii= or radii_A=) to find the lining atoms"
            )
        radii = profile.radius_set
    return atom_radii_A(atoms, radii)


def lining_contacts(
    coords_A: np.ndarray,
    radii_A: np.ndarray,
    centres_A: np.ndarray,
    radius_A: np.ndarray,
    distance_A: float,
):
    """All (plane, atom) pairs with ``|x - c| - r - R <= distance_A``.

    Parameters
    ----------
    coords_A : ndarray of shape (n, 3)
    radii_A : ndarray of shape (n,)
    centres_A : ndarray of shape (m, 3)
        Sphere centres; rows with NaN radius are skipped.
    radius_A : ndarray of shape (m,)
    distance_A : float

    Returns
    -------
    plane_index, atom_index : ndarray of int
    gap_A : ndarray of float
        ``|x - c| - r - R`` for each pair.
    """
    ok = np.flatnonzero(np.isfinite(radius_A))
    if ok.size == 0:
        empty = np.empty(0, dtype=np.int64)
        return empty, empty, np.empty(0)
    tree = cKDTree(coords_A)
    reach = radius_A[ok] + distance_A + float(radii_A.max())
    found = tree.query_ball_point(centres_A[ok], reach)
    counts = np.array([len(f) for f in found])
    plane = np.repeat(ok, counts)
    atom = np.fromiter((i for f in found for i in f), dtype=np.int64, count=int(counts.sum()))
    gap = (
        np.linalg.norm(coords_A[atom] - centres_A[plane], axis=1) - radii_A[atom] - radius_A[plane]
    )
    keep = gap <= distance_A
    order = np.lexsort((gap[keep], plane[keep]))
    return plane[keep][order], atom[keep][order], gap[keep][order]


def _part(backbone_flags: np.ndarray) -> str:
    if backbone_flags.all():
        return "backbone"
    if not backbone_flags.any():
        return "side chain"
    return "side chain and backbone"


def _residue_keys(atoms: Atoms) -> np.ndarray:
    return np.char.add(
        np.char.add(atoms.chain, "|"),
        np.char.add(atoms.resid.astype(str), np.char.add("|", atoms.icode)),
    )


def _residue_table(atoms, s_A, radius_A, plane, atom, gap, backbone):
    keys = _residue_keys(atoms)
    table = []
    res_keys = keys[atom]
    for key in dict.fromkeys(res_keys.tolist()):
        sel = res_keys == key
        p, a, g = plane[sel], atom[sel], gap[sel]
        approach = g + radius_A[p]  # distance centre -> atom surface
        best = int(np.argmin(approach))
        i0 = a[best]
        table.append(
            LiningResidue(
                chain=str(atoms.chain[i0]),
                resname=str(atoms.resname[i0]),
                resid=int(atoms.resid[i0]),
                icode=str(atoms.icode[i0]),
                s_min_A=float(s_A[p].min()),
                s_max_A=float(s_A[p].max()),
                closest_A=float(approach[best]),
                closest_s_A=float(s_A[p[best]]),
                closest_atom=str(atoms.name[i0]),
                part=_part(backbone[np.unique(a)]),
                n_planes=int(np.unique(p).size),
            )
        )
    table.sort(key=lambda r: (r.s_min_A, r.chain, r.resid, r.icode))
    return tuple(table)


def group_copies(
    atoms: Atoms, atom_index: np.ndarray, backbone: np.ndarray
) -> tuple[ResidueGroup, ...]:
    """Group lining atoms into residues, copies of the same residue in other chains together.

    Groups keep the order in which ``atom_index`` first meets them (closest first).
    """
    groups: dict[tuple, dict] = {}
    for i in atom_index:
        key = (str(atoms.resname[i]), int(atoms.resid[i]), str(atoms.icode[i]))
        entry = groups.setdefault(key, {"chains": {}, "flags": []})
        entry["chains"].setdefault(str(atoms.chain[i]), None)
        entry["flags"].append(bool(backbone[i]))
    return tuple(
        ResidueGroup(
            resname=k[0],
            resid=k[1],
            icode=k[2],
            chains=tuple(sorted(v["chains"])),
            part=_part(np.array(v["flags"])),
        )
        for k, v in groups.items()
    )


def find_constrictions(
    profile: RadiusProfile,
    *,
    constriction_radius_A: float = CONSTRICTION_RADIUS_A,
    min_prominence_A: float = MIN_PROMINENCE_A,
) -> list[tuple[int, float]]:
    """Plane indices and prominences of the constrictions of a profile.

    Parameters
    ----------
    profile : RadiusProfile
    constriction_radius_A : float
        Only minima with radius <= this count (Å, > 0).
    min_prominence_A : float
        Smallest prominence of a minimum (Å, >= 0).

    Returns
    -------
    list of (int, float)
        (plane index, prominence in Å), ordered by s.
    """
    threshold = check_positive(constriction_radius_A, "constriction_radius_A")
    prominence = check_positive(min_prominence_A, "min_prominence_A", allow_zero=True)
    radius = np.asarray(profile.radius_A, dtype=float)
    wide = max(float(np.nanmax(radius)) if np.isfinite(radius).any() else 0.0, profile.max_radius_A)
    filled = np.where(np.isfinite(radius), radius, wide)
    # pad with open bulk so that a minimum at either end of the grid is found too
    padded = np.r_[wide, filled, wide]
    from scipy.signal import find_peaks  # about 1 s to import: only where it is used

    peaks, props = find_peaks(-padded, prominence=(prominence if prominence > 0 else None))
    proms = props.get("prominences", np.zeros(len(peaks)))
    out = []
    for k, prom in zip(peaks - 1, proms, strict=True):
        if 0 <= k < len(radius) and np.isfinite(radius[k]) and radius[k] <= threshold:
            out.append((int(k), float(prom)))
    return out


def pore_lining(
    atoms: Atoms,
    profile: RadiusProfile,
    *,
    radii: str | RadiusSet | None = None,
    radii_A: np.ndarray | None = None,
    lining_distance_A: float = LINING_DISTANCE_A,
    constriction_radius_A: float = CONSTRICTION_RADIUS_A,
    min_prominence_A: float = MIN_PROMINENCE_A,
) -> PoreLining:
    """Residues lining the pore at every level of a profile, and the constrictions.

    Parameters
    ----------
    atoms : Atoms
        The atoms the profile was computed from (same order).
    profile : RadiusProfile
        From :func:`poreprobe.radius_profile`.
    radii : str or RadiusSet, optional
        Radius set; default the profile's own (named) set.
    radii_A : ndarray of shape (n,), optional
        Explicit per-atom radii (Å), as given to the profile.
    lining_distance_A : float
        Largest gap between an atom's surface and the sphere's surface for the
        atom to line the pore (Å, >= 0; default 1.0, see module docstring).
    constriction_radius_A : float
        Radius threshold of a constriction (Å; default 4.0).
    min_prominence_A : float
        Smallest prominence of a constriction (Å; default 0.25).

    Returns
    -------
    PoreLining

    Raises
    ------
    InputError
        Bad settings, or atoms that do not match the profile.

    Examples
    --------
    >>> import numpy as np, poreprobe
    >>> from poreprobe.geometry.synthetic import hourglass
    >>> atoms, _, _ = hourglass()
    >>> axis = poreprobe.PoreAxis([0, 0, 0], [0, 0, 1], "user")
    >>> prof = poreprobe.radius_profile(atoms, axis, step_A=0.5)
    >>> lining = pore_lining(atoms, prof)
    >>> [round(c.s_A, 1) for c in lining.constrictions]
    [0.0]
    """
    distance = check_positive(lining_distance_A, "lining_distance_A", allow_zero=True)
    if len(profile.nearest_atom) and int(profile.nearest_atom.max()) >= len(atoms):
        raise InputError(
            f"the profile refers to atom {int(profile.nearest_atom.max())} but "
            f"only {len(atoms)} atoms were given; pass the atoms it was computed "
            "from"
        )
    radii_arr = _resolve_radii(atoms, profile, radii, radii_A)
    backbone = is_backbone(atoms.name, atoms.element)
    plane, atom, gap = lining_contacts(
        atoms.coords_A, radii_arr, profile.center_A, profile.radius_A, distance
    )
    table = _residue_table(atoms, profile.s_A, profile.radius_A, plane, atom, gap, backbone)
    constrictions = []
    for k, prom in find_constrictions(
        profile, constriction_radius_A=constriction_radius_A, min_prominence_A=min_prominence_A
    ):
        here = atom[plane == k]
        labels = tuple(dict.fromkeys(atoms.residue_labels()[here].tolist()))
        constrictions.append(
            Constriction(
                s_A=float(profile.s_A[k]),
                radius_A=float(profile.radius_A[k]),
                prominence_A=prom,
                residues=labels,
                groups=group_copies(atoms, here, backbone),
            )
        )
    return PoreLining(
        residues=table,
        constrictions=tuple(constrictions),
        plane_index=plane,
        atom_index=atom,
        gap_A=gap,
        contact_residue=atoms.residue_labels()[atom].astype(str),
        s_A=np.asarray(profile.s_A, dtype=float).copy(),
        lining_distance_A=distance,
        constriction_radius_A=float(constriction_radius_A),
        min_prominence_A=float(min_prominence_A),
        radius_set=profile.radius_set,
        source=atoms.source,
    )
