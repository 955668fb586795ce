"""Building polypeptide chains from internal coordinates (heavy atoms).

A chain is grown atom by atom with the natural-extension reference frame
(NeRF) method: each new atom is placed from three earlier atoms, a bond length,
a bond angle and a dihedral. The backbone uses fixed ideal bond lengths and
angles and the user's dihedrals (phi, psi, omega); side chains use the ideal
internal coordinates of the standard residues derived from the wwPDB Chemical
Component Dictionary (``poreprobe.demo._residue_geometry``) with the user's chi
angles. Used to build the invented demo channels (:mod:`poreprobe.demo.channels`) and
test structures with real residue and atom names.

Backbone geometry
-----------------
Bond lengths N-CA 1.458 Å, CA-C 1.525 Å, C-N 1.329 Å, C=O 1.231 Å; angles
N-CA-C 111.2°, CA-C-N 116.2°, C-N-CA 121.7°, CA-C=O 120.1° (Engh & Huber
1991, Acta Cryst. A47:392, Table 3; values recalled from memory).
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from poreprobe._validate import check_finite
from poreprobe.demo._residue_geometry import CCD_CHI_DEG, SIDE_CHAINS
from poreprobe.errors import InputError
from poreprobe.io.structure import Atoms, make_atoms

N_CA_A = 1.458
CA_C_A = 1.525
C_N_A = 1.329
C_O_A = 1.231
N_CA_C_DEG = 111.2
CA_C_N_DEG = 116.2
C_N_CA_DEG = 121.7
CA_C_O_DEG = 120.1
CA_C_OXT_DEG = 117.0

#: One-letter codes of the 20 standard amino acids.
ONE_TO_THREE = {
    "A": "ALA",
    "R": "ARG",
    "N": "ASN",
    "D": "ASP",
    "C": "CYS",
    "Q": "GLN",
    "E": "GLU",
    "G": "GLY",
    "H": "HIS",
    "I": "ILE",
    "L": "LEU",
    "K": "LYS",
    "M": "MET",
    "F": "PHE",
    "P": "PRO",
    "S": "SER",
    "T": "THR",
    "W": "TRP",
    "Y": "TYR",
    "V": "VAL",
}


def place_atom(a, b, c, bond_A: float, angle_deg: float, dihedral_deg: float) -> np.ndarray:
    """Position of atom d with |cd| = bond, angle b-c-d and dihedral a-b-c-d (NeRF).

    Parameters
    ----------
    a, b, c : array_like of shape (3,)
        The three reference atoms (Å).
    bond_A : float
        Distance c-d (Å).
    angle_deg, dihedral_deg : float
        Bond angle b-c-d and dihedral a-b-c-d (degrees, IUPAC sign convention).

    Returns
    -------
    ndarray of shape (3,)
    """
    a, b, c = (np.asarray(v, dtype=np.float64) for v in (a, b, c))
    bc = c - b
    bc /= np.linalg.norm(bc)
    n = np.cross(b - a, bc)
    norm = np.linalg.norm(n)
    if norm < 1e-12:
        raise InputError("place_atom: reference atoms a, b, c are collinear")
    n /= norm
    m = np.cross(n, bc)
    theta = np.radians(angle_deg)
    tau = np.radians(dihedral_deg)
    return c + bond_A * (
        -np.cos(theta) * bc + np.sin(theta) * np.cos(tau) * m + np.sin(theta) * np.sin(tau) * n
    )


def dihedral_deg(a, b, c, d) -> float:
    """Dihedral angle a-b-c-d in degrees (IUPAC sign convention)."""
    a, b, c, d = (np.asarray(v, dtype=np.float64) for v in (a, b, c, d))
    b0, b1, b2 = a - b, c - b, d - c
    b1 = b1 / np.linalg.norm(b1)
    v = b0 - (b0 @ b1) * b1
    w = b2 - (b2 @ b1) * b1
    return float(np.degrees(np.arctan2(np.cross(b1, v) @ w, v @ w)))


def three_letter(sequence: str | Sequence[str]) -> list[str]:
    """Residue names from a one-letter string or a list of three-letter names."""
    if isinstance(sequence, str):
        bad = sorted({ch for ch in sequence if ch not in ONE_TO_THREE})
        if bad:
            raise InputError(
                f"sequence holds unknown one-letter codes {bad}; allowed: {''.join(ONE_TO_THREE)}"
            )
        return [ONE_TO_THREE[ch] for ch in sequence]
    names = [str(s).upper() for s in sequence]
    bad = sorted(set(names) - set(SIDE_CHAINS))
    if bad:
        raise InputError(f"sequence holds non-standard residues {bad}")
    return names


def _per_residue(values, n: int, default: float, name: str) -> np.ndarray:
    if values is None:
        return np.full(n, default, dtype=np.float64)
    arr = np.asarray(values, dtype=np.float64).reshape(-1)
    if arr.size == 1:
        arr = np.full(n, float(arr[0]))
    if arr.shape != (n,):
        raise InputError(f"{name} must have one value per residue ({n}), got {arr.size}")
    if not np.isfinite(arr).all():
        raise InputError(f"{name} holds NaN or infinite values")
    return arr


def side_chain_atoms(
    resname: str, backbone: dict[str, np.ndarray], chi_deg: Sequence[float] | None = None
) -> list[tuple[str, str, np.ndarray]]:
    """Side-chain heavy atoms of one residue from its N, CA and C positions.

    Parameters
    ----------
    resname : str
        Standard three-letter residue name.
    backbone : dict
        ``{"N": xyz, "CA": xyz, "C": xyz}`` in Å.
    chi_deg : sequence of float, optional
        chi1, chi2, ... in degrees (default: the CCD ideal conformer's values).
        Proline's ring is always built as in the CCD.

    Returns
    -------
    list of (name, element, xyz)
    """
    rows = SIDE_CHAINS[resname]
    defaults = CCD_CHI_DEG[resname]
    chis = list(defaults) if chi_deg is None else [float(v) for v in chi_deg]
    if len(chis) != len(defaults):
        raise InputError(f"{resname} has {len(defaults)} chi angles, got {len(chis)}")
    pos = dict(backbone)
    out = []
    for name, element, (ra, rb, rc), bond, angle, dihedral, chi in rows:
        tau = dihedral + (chis[chi - 1] if chi is not None else 0.0)
        xyz = place_atom(pos[ra], pos[rb], pos[rc], bond, angle, tau)
        pos[name] = xyz
        out.append((name, element, xyz))
    return out


def build_chain(
    sequence: str | Sequence[str],
    phi_deg,
    psi_deg,
    omega_deg=None,
    *,
    chi_deg: dict[int, Sequence[float]] | None = None,
    chain: str = "A",
    first_resid: int = 1,
    oxt: bool = True,
) -> Atoms:
    """Build a polypeptide chain (heavy atoms) from its dihedral angles.

    Parameters
    ----------
    sequence : str or sequence of str
        One-letter string (``"MKLV..."``) or three-letter residue names.
    phi_deg, psi_deg : array_like of shape (n,)
        Backbone dihedrals per residue (degrees). The first residue's phi has no
        effect (there is no preceding C).
    omega_deg : array_like of shape (n,), optional
        Peptide dihedral CA(i)-C(i)-N(i+1)-CA(i+1) (default 180, trans).
    chi_deg : dict, optional
        ``{residue index (0-based): (chi1, chi2, ...)}``; residues not listed get
        the CCD ideal conformer's chi angles.
    chain : str
        Chain identifier.
    first_resid : int
        Number of the first residue.
    oxt : bool
        Add the terminal OXT oxygen to the last residue.

    Returns
    -------
    Atoms
        The chain in a local frame: the first N at the origin, the first CA on
        +x, the first C in the xy plane. Atoms per residue in the order N, CA,
        C, O, side chain (CCD order), then OXT.

    Examples
    --------
    >>> atoms = build_chain("AAAA", phi_deg=-57, psi_deg=-47)
    >>> len(atoms), atoms.name[:5].tolist()
    (21, ['N', 'CA', 'C', 'O', 'CB'])
    """
    names3 = three_letter(sequence)
    n = len(names3)
    if n == 0:
        raise InputError("sequence is empty")
    phi = _per_residue(phi_deg, n, -57.0, "phi_deg")
    psi = _per_residue(psi_deg, n, -47.0, "psi_deg")
    omega = _per_residue(omega_deg, n, 180.0, "omega_deg")
    chi_deg = dict(chi_deg or {})
    bad = [k for k in chi_deg if not 0 <= int(k) < n]
    if bad:
        raise InputError(f"chi_deg has residue indices {bad} outside 0..{n - 1}")
    first_resid = int(check_finite(first_resid, "first_resid"))
    n_at = np.zeros(3)
    ca_at = np.array([N_CA_A, 0.0, 0.0])
    theta = np.radians(180.0 - N_CA_C_DEG)
    c_at = ca_at + CA_C_A * np.array([np.cos(theta), np.sin(theta), 0.0])
    coords, names, elements, resnames, resids = [], [], [], [], []
    for i, res in enumerate(names3):
        if i > 0:
            prev_n, prev_ca, prev_c = n_at, ca_at, c_at
            n_at = place_atom(prev_n, prev_ca, prev_c, C_N_A, CA_C_N_DEG, psi[i - 1])
            ca_at = place_atom(prev_ca, prev_c, n_at, N_CA_A, C_N_CA_DEG, omega[i - 1])
            c_at = place_atom(prev_c, n_at, ca_at, CA_C_A, N_CA_C_DEG, phi[i])
        o_at = place_atom(n_at, ca_at, c_at, C_O_A, CA_C_O_DEG, psi[i] + 180.0)
        residue = [("N", "N", n_at), ("CA", "C", ca_at), ("C", "C", c_at), ("O", "O", o_at)]
        residue += side_chain_atoms(res, {"N": n_at, "CA": ca_at, "C": c_at}, chi_deg.get(i))
        if oxt and i == n - 1:
            residue.append(("OXT", "O", place_atom(n_at, ca_at, c_at, 1.25, CA_C_OXT_DEG, psi[i])))
        for name, element, xyz in residue:
            names.append(name)
            elements.append(element)
            coords.append(xyz)
            resnames.append(res)
            resids.append(first_resid + i)
    return make_atoms(
        np.array(coords),
        element=elements,
        name=names,
        resname=resnames,
        resid=resids,
        chain=[chain] * len(names),
        source="built chain",
    )


def backbone_dihedrals_deg(atoms: Atoms) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """phi, psi and omega (degrees) per residue of one chain; NaN where undefined."""

    def pick(name):
        return atoms.coords_A[atoms.name == name]

    n_at, ca_at, c_at = pick("N"), pick("CA"), pick("C")
    m = len(ca_at)
    if not len(n_at) == len(c_at) == m:
        raise InputError("every residue needs N, CA and C")
    phi = np.full(m, np.nan)
    psi = np.full(m, np.nan)
    omega = np.full(m, np.nan)
    for i in range(m):
        if i > 0:
            phi[i] = dihedral_deg(c_at[i - 1], n_at[i], ca_at[i], c_at[i])
        if i < m - 1:
            psi[i] = dihedral_deg(n_at[i], ca_at[i], c_at[i], n_at[i + 1])
            omega[i] = dihedral_deg(ca_at[i], c_at[i], n_at[i + 1], ca_at[i + 1])
    return phi, psi, omega
