"""Rings of equivalent pore-lining residues.

Definition
----------
Start from the lining contacts of :func:`poreprobe.geometry.lining.pore_lining` (atoms
whose surface lies within the lining distance of a profile sphere). For each lining
residue take its **level**, the plane of its closest approach to the profile spheres.
Residues are **equivalent** when they share residue type and number (insertion code
included) in different chains: the copies of one residue in the subunits of a
homo-oligomer. Equivalent residues whose levels lie within ``ring_tolerance_A``
(default 3 Å, about one turn of a helix is 5.4 Å: our choice) of their neighbours
along s form one **ring**; the ring's level is the mean of its members' levels and
its count the number of members. A residue without equivalents is a ring of one.
Subunits of a hetero-oligomer numbered differently therefore give rings of one.

**Faces.** At every plane a residue lines, the atom of that residue nearest to the
sphere is either a backbone atom (N, CA, C, O, terminal oxygens and their
hydrogens) or a side-chain atom. A ring faces the pore with its ``"backbone"`` when
backbone atoms are nearest at two thirds or more of the (residue, plane) pairs, with
its ``"side chain"`` when they are at one third or fewer, and with ``"side chain and
backbone"`` otherwise (thresholds our choice).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from poreprobe._validate import check_positive
from poreprobe.geometry.lining import PoreLining
from poreprobe.io.residues import is_backbone, standard_name
from poreprobe.io.structure import Atoms

RING_TOLERANCE_A = 3.0
BACKBONE_FACING = 2.0 / 3.0
SIDE_CHAIN_FACING = 1.0 / 3.0


@dataclass(frozen=True)
class Ring:
    """Equivalent lining residues of several subunits at one level.

    Attributes
    ----------
    s_A : float
        Mean level of the members (Å along the axis).
    s_min_A, s_max_A : float
        Range of the members' levels (Å).
    residue : str
        Residue type and number, ``"GLU71"``.
    resname : str
    resid : int
    icode : str
    count : int
        Number of members (subunits).
    members : tuple of str
        Residue labels ``"A:GLU71"``.
    faces : str
        ``"side chain"``, ``"backbone"`` or ``"side chain and backbone"``.
    backbone_fraction : float
        Share of (residue, plane) pairs whose nearest atom is a backbone atom.
    closest_A : float
        Smallest distance from a profile sphere centre to a member's surface (Å).
    charge_e : float
        Net charge of the ring at the chosen pH (e).
    hydropathy : float
        Value of the residue type on the chosen scale (NaN for non-standard residues).
    """

    s_A: float
    s_min_A: float
    s_max_A: float
    residue: str
    resname: str
    resid: int
    icode: str
    count: int
    members: tuple[str, ...]
    faces: str
    backbone_fraction: float
    closest_A: float
    charge_e: float = 0.0
    hydropathy: float = float("nan")

    @property
    def text(self) -> str:
        """``"s = 12.3 Å: ring of 4 x GLU71, side chain, -3.96 e"``."""
        what = f"ring of {self.count} x {self.residue}" if self.count > 1 else self.residue
        return (
            f"s = {self.s_A:6.1f} Å: {what}, {self.faces}, {self.charge_e:+.2f} e, "
            f"hydropathy {self.hydropathy:+.2f}"
        )

    def to_dict(self) -> dict:
        return {
            "s_A": self.s_A,
            "s_min_A": self.s_min_A,
            "s_max_A": self.s_max_A,
            "residue": self.residue,
            "resname": self.resname,
            "resid": self.resid,
            "icode": self.icode,
            "count": self.count,
            "members": list(self.members),
            "faces": self.faces,
            "backbone_fraction": self.backbone_fraction,
            "closest_A": self.closest_A,
            "charge_e": self.charge_e,
            "hydropathy": self.hydropathy,
        }


def _faces(fraction: float) -> str:
    if fraction >= BACKBONE_FACING:
        return "backbone"
    if fraction <= SIDE_CHAIN_FACING:
        return "side chain"
    return "side chain and backbone"


@dataclass(frozen=True)
class ResidueContacts:
    """Per (residue, plane) lining facts, shared by rings and per-level profiles.

    Attributes
    ----------
    label : ndarray of str, shape (n_res,)
        Residue labels ``"A:GLU71"``.
    resname : ndarray of str, shape (n_res,)
        Standard residue names where known.
    resid : ndarray of int, shape (n_res,)
    icode, chain : ndarray of str, shape (n_res,)
    pair_plane, pair_residue : ndarray of int, shape (n_pairs,)
        Every (plane, residue) the lining holds.
    pair_backbone : ndarray of bool, shape (n_pairs,)
        Whether the residue's atom nearest to that plane's sphere is a backbone atom.
    pair_side_chain : ndarray of bool, shape (n_pairs,)
        Whether any side-chain atom of the residue lines that plane.
    pair_approach_A : ndarray of shape (n_pairs,)
        Distance from the plane's sphere centre to the residue's nearest surface (Å).
    """

    label: np.ndarray
    resname: np.ndarray
    resid: np.ndarray
    icode: np.ndarray
    chain: np.ndarray
    pair_plane: np.ndarray
    pair_residue: np.ndarray
    pair_backbone: np.ndarray
    pair_side_chain: np.ndarray
    pair_approach_A: np.ndarray


def residue_contacts(atoms: Atoms, lining: PoreLining, radius_A) -> ResidueContacts:
    """Collapse the lining's (plane, atom) contacts to (plane, residue) pairs."""
    atom = np.asarray(lining.atom_index)
    plane = np.asarray(lining.plane_index)
    gap = np.asarray(lining.gap_A)
    # work on the distinct lining atoms, then spread back over the contacts
    uatom, atom_of = np.unique(atom, return_inverse=True)
    first_contact = np.zeros(len(uatom), dtype=np.int64)
    first_contact[atom_of[::-1]] = np.arange(len(atom))[::-1]
    atom_labels = np.asarray(lining.contact_residue).astype(str)[first_contact]
    res_label, res_of_atom = np.unique(atom_labels, return_inverse=True)
    res_of = res_of_atom[atom_of]
    backbone = (
        is_backbone(atoms.name[uatom], atoms.element[uatom])[atom_of]
        if len(atom)
        else np.zeros(0, bool)
    )
    n_res = len(res_label)
    pair_key = plane.astype(np.int64) * max(n_res, 1) + res_of
    # contacts are sorted by (plane, gap): the first contact of a pair is its nearest atom
    order = np.lexsort((gap, pair_key))
    pair_key_sorted = pair_key[order]
    first = np.r_[True, pair_key_sorted[1:] != pair_key_sorted[:-1]] if len(order) else order
    head = order[first]
    pair_id = np.cumsum(first) - 1
    side_any = np.bincount(pair_id, weights=~backbone[order], minlength=int(first.sum())) > 0
    first_atom = np.zeros(n_res, dtype=np.int64)
    first_atom[res_of[::-1]] = atom[::-1]
    resname = atoms.resname[first_atom].astype(str)
    std = np.array([standard_name(r) or r for r in resname], dtype=str)
    radius = np.asarray(radius_A, dtype=float)
    return ResidueContacts(
        label=res_label,
        resname=std,
        resid=atoms.resid[first_atom].astype(int),
        icode=atoms.icode[first_atom].astype(str),
        chain=atoms.chain[first_atom].astype(str),
        pair_plane=plane[head],
        pair_residue=res_of[head],
        pair_backbone=backbone[head],
        pair_side_chain=side_any,
        pair_approach_A=gap[head] + radius[plane[head]],
    )


def find_rings(
    contacts: ResidueContacts,
    s_A,
    *,
    ring_tolerance_A: float = RING_TOLERANCE_A,
    charge_of: dict[str, float] | None = None,
    hydropathy_of: dict[str, float] | None = None,
) -> tuple[Ring, ...]:
    """Group lining residues into rings of equivalent residues at one level.

    Parameters
    ----------
    contacts : ResidueContacts
        From :func:`residue_contacts`.
    s_A : ndarray of shape (n_planes,)
        The profile's plane positions (Å).
    ring_tolerance_A : float
        Largest gap in level between neighbouring members of one ring (Å, > 0).
    charge_of : dict, optional
        Residue label -> charge (e); residues not listed count as neutral.
    hydropathy_of : dict, optional
        Residue type -> scale value.

    Returns
    -------
    tuple of Ring
        Ordered by level s (entry to exit).
    """
    tol = check_positive(ring_tolerance_A, "ring_tolerance_A")
    s = np.asarray(s_A, dtype=float)
    charge_of = charge_of or {}
    hydropathy_of = hydropathy_of or {}
    n_res = len(contacts.label)
    if n_res == 0:
        return ()
    res = contacts.pair_residue
    approach = contacts.pair_approach_A
    # level of each residue: plane of closest approach
    order = np.lexsort((approach, res))
    first = np.r_[True, res[order][1:] != res[order][:-1]]
    best = order[first]
    level = np.full(n_res, np.nan)
    closest = np.full(n_res, np.nan)
    level[res[best]] = s[contacts.pair_plane[best]]
    closest[res[best]] = approach[best]
    n_pairs = np.bincount(res, minlength=n_res)
    n_bb = np.bincount(res, weights=contacts.pair_backbone.astype(float), minlength=n_res)
    level_l, closest_l = level.tolist(), closest.tolist()
    pairs_l, bb_l = n_pairs.tolist(), n_bb.tolist()
    names, ids, codes = (
        contacts.resname.tolist(),
        contacts.resid.tolist(),
        contacts.icode.tolist(),
    )
    labels_l = contacts.label.tolist()
    groups: dict[tuple, list[int]] = {}
    for k in range(n_res):
        groups.setdefault((names[k], int(ids[k]), codes[k]), []).append(k)
    rings = []
    for (resname, resid, icode), members in groups.items():
        members.sort(key=level_l.__getitem__)
        clusters = [[members[0]]]
        for m in members[1:]:
            if level_l[m] - level_l[clusters[-1][-1]] <= tol:
                clusters[-1].append(m)
            else:
                clusters.append([m])
        for cl in clusters:
            levels_cl = [level_l[m] for m in cl]
            frac = sum(bb_l[m] for m in cl) / max(sum(pairs_l[m] for m in cl), 1)
            labels = tuple(labels_l[m] for m in cl)
            rings.append(
                Ring(
                    s_A=sum(levels_cl) / len(cl),
                    s_min_A=min(levels_cl),
                    s_max_A=max(levels_cl),
                    residue=f"{resname}{resid}{icode}",
                    resname=resname,
                    resid=resid,
                    icode=icode,
                    count=len(cl),
                    members=labels,
                    faces=_faces(frac),
                    backbone_fraction=float(frac),
                    closest_A=min(closest_l[m] for m in cl),
                    charge_e=float(sum(charge_of.get(lab, 0.0) for lab in labels)),
                    hydropathy=float(hydropathy_of.get(resname, np.nan)),
                )
            )
    rings.sort(key=lambda r: (r.s_A, r.resid, r.icode))
    return tuple(rings)
