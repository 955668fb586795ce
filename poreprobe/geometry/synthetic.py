"""Invented test geometries with known answers.

Rings of atoms (residues named ALA, so readers treat them as protein) stacked
along z around the z axis: a cylinder (constant ring radius), a cone (radius
linear in z) and an hourglass (radius quadratic in z).
For such a stack the largest sphere centred in the plane at height z sits on
the axis, so the exact profile radius is
``min_k (sqrt(R_k**2 + (z - z_k)**2) - r_atom)`` over the rings k.
"""

from __future__ import annotations

import numpy as np

from poreprobe._validate import check_int, check_positive
from poreprobe.io.structure import Atoms, make_atoms


def ring_stack(
    ring_radii_A,
    ring_z_A,
    *,
    atoms_per_ring: int = 24,
    element: str = "C",
    twist: bool = True,
    chains: int = 1,
) -> Atoms:
    """Rings of atoms around the z axis.

    Parameters
    ----------
    ring_radii_A, ring_z_A : array_like of shape (k,)
        Radius (Å) and height (Å) of each ring's atom centres.
    atoms_per_ring : int
        Atoms per ring (>= 3).
    element : str
        Element of every atom (its radius comes from the radius set).
    twist : bool
        Rotate alternate rings by half the angular spacing.
    chains : int
        Split every ring into this many chains (equal angular sectors), named
        A, B, C, ..., so that the stack has ``chains``-fold symmetry.

    Returns
    -------
    Atoms
    """
    radii = np.asarray(ring_radii_A, dtype=float).reshape(-1)
    z = np.asarray(ring_z_A, dtype=float).reshape(-1)
    n = check_int(atoms_per_ring, "atoms_per_ring", minimum=3)
    chains = check_int(chains, "chains", minimum=1)
    if radii.shape != z.shape or radii.size == 0:
        raise ValueError("ring_radii_A and ring_z_A must have the same non-zero length")
    angles = 2 * np.pi * np.arange(n) / n
    rows, chain_ids, resids, names = [], [], [], []
    for k, (rk, zk) in enumerate(zip(radii, z, strict=True)):
        phase = np.pi / n if (twist and k % 2) else 0.0
        a = angles + phase
        rows.append(np.column_stack([rk * np.cos(a), rk * np.sin(a), np.full(n, zk)]))
        sector = (np.arange(n) * chains) // n
        chain_ids += [chr(ord("A") + s) for s in sector]
        resids += [k + 1] * n
        names += [_atom_name(int(i - (sector == sector[i]).argmax())) for i in range(n)]
    return make_atoms(
        np.vstack(rows),
        element=[element] * len(chain_ids),
        name=names,
        resname=["ALA"] * len(chain_ids),
        resid=resids,
        chain=chain_ids,
        source="synthetic ring stack",
    )


def _atom_name(j: int) -> str:
    """Backbone-like names first (so symmetry detection finds N, CA, C), then C4, C5, ..."""
    return ("N", "CA", "C")[j] if j < 3 else f"C{j + 1}"


def expected_radius_A(ring_radii_A, ring_z_A, s_A, atom_radius_A: float) -> np.ndarray:
    """Exact on-axis profile radius of a ring stack at heights ``s_A``."""
    radii = np.asarray(ring_radii_A, dtype=float)[None, :]
    z = np.asarray(ring_z_A, dtype=float)[None, :]
    s = np.asarray(s_A, dtype=float)[:, None]
    return (np.sqrt(radii**2 + (s - z) ** 2) - atom_radius_A).min(axis=1)


def cylinder(
    radius_A: float = 6.0,
    length_A: float = 20.0,
    *,
    spacing_A: float = 1.0,
    atoms_per_ring: int = 24,
) -> tuple[Atoms, np.ndarray, np.ndarray]:
    """A cylinder of rings; returns (atoms, ring radii, ring heights)."""
    check_positive(radius_A, "radius_A")
    z = np.arange(-length_A / 2, length_A / 2 + 1e-9, spacing_A)
    radii = np.full(z.shape, float(radius_A))
    return ring_stack(radii, z, atoms_per_ring=atoms_per_ring), radii, z


def cone(
    r_low_A: float = 4.0,
    r_high_A: float = 10.0,
    length_A: float = 20.0,
    *,
    spacing_A: float = 1.0,
    atoms_per_ring: int = 32,
) -> tuple[Atoms, np.ndarray, np.ndarray]:
    """A funnel: ring radius grows linearly from ``r_low_A`` (low z) to ``r_high_A``."""
    z = np.arange(-length_A / 2, length_A / 2 + 1e-9, spacing_A)
    radii = r_low_A + (r_high_A - r_low_A) * (z - z[0]) / (z[-1] - z[0])
    return ring_stack(radii, z, atoms_per_ring=atoms_per_ring), radii, z


def hourglass(
    r_waist_A: float = 4.0,
    r_end_A: float = 9.0,
    length_A: float = 20.0,
    *,
    spacing_A: float = 1.0,
    atoms_per_ring: int = 32,
) -> tuple[Atoms, np.ndarray, np.ndarray]:
    """An hourglass: ring radius quadratic in z, narrowest at z = 0."""
    z = np.arange(-length_A / 2, length_A / 2 + 1e-9, spacing_A)
    radii = r_waist_A + (r_end_A - r_waist_A) * (2 * z / length_A) ** 2
    return ring_stack(radii, z, atoms_per_ring=atoms_per_ring), radii, z


def shell_channel(
    n_atoms: int = 40_000,
    *,
    pore_radius_A: float = 4.0,
    length_A: float = 60.0,
    waist_radius_A: float = 2.0,
    density_per_A3: float = 0.055,
    chains: int = 4,
    seed: int = 0,
) -> Atoms:
    """A large invented channel: random protein-density atoms in a thick shell around a pore.

    The pore wall (atom centres) sits at ``pore_radius_A + 1.7`` Å from the z axis, narrowing
    to ``waist_radius_A + 1.7`` Å at z = 0 (a Gaussian constriction 6 Å wide); the outer
    radius follows from the atom count and ``density_per_A3`` (0.055 Å⁻³ is about one heavy
    atom per 18 Å³, typical of protein). Atoms are split into ``chains`` angular sectors.
    Used for benchmarks; the geometry is invented.
    """
    n_atoms = check_int(n_atoms, "n_atoms", minimum=10)
    rng = np.random.default_rng(seed)
    wall = pore_radius_A + 1.7
    volume = n_atoms / density_per_A3
    outer = np.sqrt(volume / (np.pi * length_A) + wall**2)
    z = rng.uniform(-length_A / 2, length_A / 2, n_atoms)
    inner = wall - (pore_radius_A - waist_radius_A) * np.exp(-0.5 * (z / 3.0) ** 2)
    r = np.sqrt(rng.uniform(inner**2, outer**2))
    phi = rng.uniform(0, 2 * np.pi, n_atoms)
    order = np.argsort(phi, kind="stable")
    coords = np.column_stack([r * np.cos(phi), r * np.sin(phi), z])[order]
    sector = (phi[order] // (2 * np.pi / chains)).astype(int)
    elements = rng.choice(["C", "N", "O", "S"], n_atoms, p=[0.63, 0.17, 0.19, 0.01])
    return make_atoms(
        coords,
        element=elements,
        name=np.where(elements == "C", "CX", elements),
        resname=["GLY"] * n_atoms,
        resid=np.arange(n_atoms) // 8 + 1,
        chain=[chr(ord("A") + s) for s in sector],
        source="invented shell channel",
    )
