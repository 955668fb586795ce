"""Ideal alpha-helix bundles of real residues around the z axis, for invented channels.

Backbone from internal coordinates (alpha-helix phi = -57.8 deg, psi = -47.0 deg; peptide
bond lengths and angles of Engh & Huber 1991, values recalled from memory); side chains
from the PDB Chemical Component Dictionary's ideal coordinates (bundled with biotite,
imported only when a bundle is built), placed on each residue's N, CA, C; each side chain
takes, from a few staggered (chi1, chi2) choices, the one farthest from the atoms
already placed, so the bundle has no steric clashes.

The helices run parallel to z with their axes ``offset_A`` from the pore axis, each
turned so that residue ``facing`` points at the axis; the copies are related by exact
rotations about z. Used by the invented demo channels (``structures_demo/build.py``)
and the tests. Building needs biotite (a test dependency); reading the built files
does not.
"""

from __future__ import annotations

import functools

import numpy as np

from poreprobe.demo.peptide import dihedral_deg, place_atom
from poreprobe.geometry.superpose import rotate_about, superpose
from poreprobe.io.structure import Atoms, make_atoms

#: The test tetramer: 25 residues; SER 1, THR 5, LEU 12, PHE 19 and ALA 23 face the pore.
SEQUENCE = (
    "SER",
    "GLU",
    "ALA",
    "ILE",
    "THR",
    "LYS",
    "PHE",
    "ALA",
    "GLY",
    "TRP",
    "MET",
    "LEU",
    "ALA",
    "ARG",
    "ALA",
    "GLN",
    "ASN",
    "CYS",
    "VAL",
    "ALA",
    "TYR",
    "SER",
    "ALA",
    "HIS",
    "ASP",
)
FACING = 12

_BOND = {"N-CA": 1.458, "CA-C": 1.525, "C-N": 1.329, "C-O": 1.231}
_ANGLE = {"N-CA-C": 111.2, "CA-C-N": 116.2, "C-N-CA": 121.7, "CA-C-O": 120.5}
_PHI, _PSI, _OMEGA = -57.8, -47.0, 180.0
_CHI_ATOMS = {
    1: {
        "default": ("N", "CA", "CB", "CG"),
        "ILE": ("N", "CA", "CB", "CG1"),
        "VAL": ("N", "CA", "CB", "CG1"),
        "THR": ("N", "CA", "CB", "OG1"),
        "SER": ("N", "CA", "CB", "OG"),
        "CYS": ("N", "CA", "CB", "SG"),
    },
    2: {
        "default": ("CA", "CB", "CG", "CD"),
        "ILE": ("CA", "CB", "CG1", "CD1"),
        "LEU": ("CA", "CB", "CG", "CD1"),
        "PHE": ("CA", "CB", "CG", "CD1"),
        "TYR": ("CA", "CB", "CG", "CD1"),
        "TRP": ("CA", "CB", "CG", "CD1"),
        "HIS": ("CA", "CB", "CG", "ND1"),
        "MET": ("CA", "CB", "CG", "SD"),
        "ASN": ("CA", "CB", "CG", "OD1"),
        "ASP": ("CA", "CB", "CG", "OD1"),
    },
}


def _backbone(n_res: int) -> dict[str, np.ndarray]:
    n_at = np.zeros(3)
    ca = n_at + [_BOND["N-CA"], 0, 0]
    ang = np.radians(_ANGLE["N-CA-C"])
    c = ca + _BOND["CA-C"] * np.array([-np.cos(ang), np.sin(ang), 0])
    rows = {"N": [n_at], "CA": [ca], "C": [c]}
    for _ in range(1, n_res):
        n_new = place_atom(
            rows["N"][-1], rows["CA"][-1], rows["C"][-1], _BOND["C-N"], _ANGLE["CA-C-N"], _PSI
        )
        ca_new = place_atom(
            rows["CA"][-1], rows["C"][-1], n_new, _BOND["N-CA"], _ANGLE["C-N-CA"], _OMEGA
        )
        c_new = place_atom(rows["C"][-1], n_new, ca_new, _BOND["CA-C"], _ANGLE["N-CA-C"], _PHI)
        rows["N"].append(n_new)
        rows["CA"].append(ca_new)
        rows["C"].append(c_new)
    out = {k: np.array(v) for k, v in rows.items()}
    out["O"] = np.array(
        [
            place_atom(
                out["N"][i], out["CA"][i], out["C"][i], _BOND["C-O"], _ANGLE["CA-C-O"], _PSI + 180.0
            )
            for i in range(n_res)
        ]
    )
    return out


@functools.cache
def _template(resname: str):
    """CCD ideal heavy atoms (and hydrogens) of a residue, with its bond graph."""
    import biotite.structure.info as info

    res = info.residue(resname)
    keep = ~np.isin(res.atom_name, ("OXT", "HXT", "H2"))
    names = [str(n) for n in res.atom_name[keep]]
    elements = [str(e) for e in res.element[keep]]
    coords = np.array(res.coord[keep], dtype=float)
    index = {n: i for i, n in enumerate(names)}
    bonds = [
        (index[str(res.atom_name[i])], index[str(res.atom_name[j])])
        for i, j, _ in res.bonds.as_array()
        if keep[i] and keep[j]
    ]
    return names, elements, coords, bonds


def _downstream(n_atoms, bonds, b, c):
    """Atoms on c's side of the bond b-c."""
    adj = [[] for _ in range(n_atoms)]
    for i, j in bonds:
        adj[i].append(j)
        adj[j].append(i)
    seen, todo = {c}, [c]
    while todo:
        k = todo.pop()
        for nb in adj[k]:
            if nb not in seen and not (k == c and nb == b):
                seen.add(nb)
                todo.append(nb)
    return sorted(seen - {c})


def _set_chis(resname, names, bonds, coords, chis):
    """Template coordinates with the side chain turned to the given (chi1, chi2) in degrees."""
    coords = coords.copy()
    index = {n: i for i, n in enumerate(names)}
    for k, target in zip((1, 2), chis, strict=True):
        quad = _CHI_ATOMS[k].get(resname, _CHI_ATOMS[k]["default"])
        if target is None or any(q not in index for q in quad):
            continue
        idx = [index[q] for q in quad]
        now = dihedral_deg(*coords[idx])
        moving = _downstream(len(names), bonds, idx[1], idx[2])
        coords[moving] = rotate_about(
            coords[moving],
            coords[idx[2]],
            coords[idx[2]] - coords[idx[1]],
            np.radians(target - now),
        )
    return coords


def _helix_frame(bb):
    """Rigid map putting the helix axis on z (through 0, centred in z), N-terminus at low z."""
    ncac = np.stack([bb["N"], bb["CA"], bb["C"]], 1)
    step = superpose(ncac[:-1].reshape(-1, 3), ncac[1:].reshape(-1, 3))
    vals, vecs = np.linalg.eig(step.rotation)
    axis = np.real(vecs[:, int(np.argmin(np.abs(vals - 1)))])
    if axis @ (bb["CA"][-1] - bb["CA"][0]) < 0:
        axis = -axis
    # a point on the axis solves (I - R) p = t in the plane perpendicular to the axis
    point = np.linalg.lstsq(np.eye(3) - step.rotation, step.translation_A, rcond=None)[0]
    ref = np.eye(3)[int(np.argmin(np.abs(axis)))]
    e1 = np.cross(axis, ref)
    e1 /= np.linalg.norm(e1)
    rot = np.array([e1, np.cross(axis, e1), axis])  # rows: new x, y, z
    z_mid = ((bb["CA"] - point) @ axis).mean()

    def to_frame(xyz):
        out = (np.asarray(xyz) - point) @ rot.T
        out[..., 2] -= z_mid
        return out

    return to_frame


def _candidates(resname):
    chi1 = (-65.0, 180.0, 62.0)
    chi2 = {
        "PHE": (90.0, 0.0),
        "TYR": (90.0, 0.0),
        "TRP": (95.0, -90.0, 0.0, 180.0),
        "HIS": (90.0, -90.0, 180.0),
        "ASN": (-40.0, 30.0, 120.0),
        "ASP": (-40.0, 30.0, 120.0),
    }.get(resname, (180.0, 65.0, -65.0))
    if resname in ("ALA", "GLY", "PRO"):
        return [(None, None)]
    if resname in ("SER", "THR", "VAL", "CYS"):
        return [(c1, None) for c1 in chi1]
    return [(c1, c2) for c1 in chi1 for c2 in chi2]


@functools.lru_cache(maxsize=4)
def _bundle_arrays(
    offset_A: float, hydrogens: bool, sequence=SEQUENCE, facing=FACING, copies: int = 4
):
    from scipy.spatial import cKDTree

    n_res = len(sequence)
    bb = _backbone(n_res)
    to_frame = _helix_frame(bb)
    facing_ca = to_frame(bb["CA"][facing - 1])
    turn = np.pi - np.arctan2(facing_ca[1], facing_ca[0])

    def place(xyz):
        """Helix-frame coordinates -> the four chains, shape (4, m, 3)."""
        one = rotate_about(np.atleast_2d(to_frame(xyz)), np.zeros(3), [0, 0, 1], turn)
        one = one + [offset_A, 0, 0]
        return np.stack(
            [
                rotate_about(one, np.zeros(3), [0, 0, 1], 2 * k * np.pi / copies)
                for k in range(copies)
            ]
        )

    backbone_all = np.vstack([place(bb[a]).reshape(-1, 3) for a in ("N", "CA", "C", "O")])
    obstacles = [backbone_all]
    per_residue = []
    for i, resname in enumerate(sequence):
        names, elements, coords, bonds = _template(resname)
        index = {n: j for j, n in enumerate(names)}
        frame_idx = [index[a] for a in ("N", "CA", "C")]
        target = np.array([bb[a][i] for a in ("N", "CA", "C")])
        side = [
            j
            for j, n in enumerate(names)
            if n not in ("N", "CA", "C", "O", "CB") and elements[j] != "H"
        ]
        tree = cKDTree(np.vstack(obstacles))
        best, best_score = None, -np.inf
        for chis in _candidates(resname):
            cand = _set_chis(resname, names, bonds, coords, chis)
            placed = superpose(cand[frame_idx], target).apply(cand)
            if side:
                score = tree.query(place(placed[side]).reshape(-1, 3))[0].min()
            else:
                score = 0.0
            if score > best_score:
                best, best_score = placed, score
        rows = []
        for j, (name, elem) in enumerate(zip(names, elements, strict=True)):
            if name in ("N", "CA", "C", "O"):
                pos = bb[name][i]
            elif name == "H":
                if i == 0:
                    continue
                away = (bb["N"][i] - bb["C"][i - 1]) / _BOND["C-N"]
                away += (bb["N"][i] - bb["CA"][i]) / _BOND["N-CA"]
                pos = bb["N"][i] + 1.01 * away / np.linalg.norm(away)
            else:
                pos = best[j]
            if elem == "H" and not hydrogens:
                continue
            rows.append((name, elem, pos))
        heavy_side = np.array(
            [p for n, e, p in rows if e != "H" and n not in ("N", "CA", "C", "O")]
        )
        if len(heavy_side):
            obstacles.append(place(heavy_side).reshape(-1, 3))
        per_residue.append(rows)
    names = [n for rows in per_residue for n, _, _ in rows]
    elements = [e for rows in per_residue for _, e, _ in rows]
    resids = [i + 1 for i, rows in enumerate(per_residue) for _ in rows]
    resnames = [sequence[r - 1] for r in resids]
    coords = np.array([p for rows in per_residue for _, _, p in rows])
    return place(coords), names, elements, resnames, resids


def helix_bundle(
    sequence=SEQUENCE,
    *,
    facing: int = FACING,
    offset_A: float = 9.5,
    chains=("A", "B", "C", "D"),
    z_shift_A: float = 0.0,
    first_resid: int = 1,
    hydrogens: bool = False,
    source: str = "invented helix bundle",
) -> Atoms:
    """Copies of one ideal helix around the z axis, one chain each.

    Parameters
    ----------
    sequence : sequence of str
        Three-letter residue names, N- to C-terminus (N-terminus at low z).
    facing : int
        1-based residue whose CA points at the axis.
    offset_A : float
        Distance of each helix axis from the z axis (Å).
    chains : sequence of str
        Chain names; their number sets the number of copies (rotated by 360/n degrees).
    z_shift_A : float
        Shift along z of the whole bundle (the helix centre sits at z = 0 before it).
    first_resid : int
        Number of the first residue.
    hydrogens : bool
        Include the CCD hydrogens.

    Returns
    -------
    Atoms
        B-factors 20-40 Å² (a smooth invented pattern), occupancy 1.
    """
    chains = tuple(chains)
    coords, names, elements, resnames, resids = _bundle_arrays(
        float(offset_A), bool(hydrogens), tuple(sequence), int(facing), len(chains)
    )
    n = len(names)
    resid_arr = np.array(resids) + (int(first_resid) - 1)
    b_factor = 30.0 + 10.0 * np.sin(0.7 * resid_arr)
    xyz = coords.reshape(-1, 3) + [0.0, 0.0, float(z_shift_A)]
    return make_atoms(
        xyz,
        element=elements * len(chains),
        name=names * len(chains),
        resname=resnames * len(chains),
        resid=np.tile(resid_arr, len(chains)),
        chain=np.repeat(list(chains), n),
        b_factor=np.tile(b_factor, len(chains)),
        source=source,
    )
