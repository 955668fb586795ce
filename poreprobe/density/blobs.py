"""Unmodelled density in the pore: connected blobs the model does not explain.

Definition
----------
On the map's own voxels around the pore, a voxel is **unexplained** when

* it lies in the pore lumen (:func:`poreprobe.density.pore_frame.lumen_mask`),
* the map is above the contour there, and
* the map exceeds the model's expected density there (``scale * model + offset``, fitted
  to the map around the pore by least squares; :mod:`poreprobe.density.model_map`) by at
  least half the contour's height above the offset (our choice: a voxel the model
  nearly explains is not unmodelled density).

Unexplained voxels joined through faces, edges or corners (26-connectivity,
``scipy.ndimage.label``) form a blob. Blobs smaller than ``min_volume_A3`` are dropped, and
so are blobs whose unexplained part (map minus expected density) nowhere reaches the
contour's full height above the offset: density the model almost explains, such as the
rim of a modelled atom, is not unmodelled density.

Each blob reports the position of its density-weighted centroid (s along the axis and
the distance from the axis), its volume (voxels x voxel volume), its peak in units of the
map's RMS above the map's mean, the residues with an atom within ``near_A`` of a blob
voxel (nearest first, chain-aware labels ``A:LEU12``), and a plain reading of its size in
**water equivalents**: its volume over the volume a lone water's expected density (one
Gaussian of its 10 electrons) encloses at the contour, or over 30 Å^3 (the volume of one
water molecule in liquid water, from 18.0 g/mol at 1.0 g/cm^3) when a lone water would not
reach the contour. Up to 3 equivalents reads "single ion or water" (a K+ ion, 19 electrons,
is about 2), up to 10 "several waters or ions", more "larger: lipid, detergent or ligand"
(thresholds our choice).

Symmetry (channels whose axis has an n-fold symmetry): a blob within ``max(1 Å, d / 2)``
of the axis sits **on the axis** (typical of ions); otherwise the other blobs at the same s
and distance (within d / 2) whose angle around the axis differs by a multiple of 360/n
degrees (within the arc d / 2) are its symmetry copies.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from poreprobe.geometry.profile import RadiusProfile
from poreprobe.io.structure import Atoms

#: Volume of one water molecule in liquid water (Å^3): 18.015 g/mol / (1.0 g/cm^3 x N_A).
WATER_VOLUME_A3 = 29.9
SINGLE_MAX_WATERS = 3.0
SEVERAL_MAX_WATERS = 10.0
#: Electrons of one water molecule.
WATER_ELECTRONS = 10.0


@dataclass(frozen=True)
class DensityBlob:
    """One blob of unmodelled density in the pore.

    Attributes
    ----------
    s_A : float
        Axial position of the density-weighted centroid (Å).
    radial_A : float
        Distance of the centroid from the axis (Å).
    centre_A : tuple of float
        Cartesian centroid (Å).
    volume_A3 : float
        Volume above the contour that the model leaves unexplained (Å^3).
    peak : float
        Highest map value in the blob (map units).
    peak_rms : float
        The peak as (peak - map mean) / map RMS.
    water_equivalents : float
        Volume over the volume of one lone water (module docstring).
    size_reading : str
    residues : tuple of str
        Residues within the search distance, nearest first.
    residue_distance_A : tuple of float
        Distance of each residue's nearest atom to the blob (Å).
    on_axis : bool
    symmetry : str
        "on the axis", "repeats k of n around the axis", "no symmetry copies", or
        "no symmetry axis".
    s_range_A : tuple of float
        Lowest and highest s of the blob's voxels (Å).
    """

    s_A: float
    radial_A: float
    centre_A: tuple[float, float, float]
    volume_A3: float
    peak: float
    peak_rms: float
    water_equivalents: float
    size_reading: str
    residues: tuple[str, ...]
    residue_distance_A: tuple[float, ...]
    on_axis: bool
    symmetry: str
    s_range_A: tuple[float, float]

    def to_dict(self) -> dict:
        return {
            "s_A": self.s_A,
            "radial_A": self.radial_A,
            "centre_A": list(self.centre_A),
            "volume_A3": self.volume_A3,
            "peak": self.peak,
            "peak_rms": self.peak_rms,
            "water_equivalents": self.water_equivalents,
            "size_reading": self.size_reading,
            "residues": list(self.residues),
            "residue_distance_A": list(self.residue_distance_A),
            "on_axis": self.on_axis,
            "symmetry": self.symmetry,
            "s_range_A": list(self.s_range_A),
        }


def size_reading(water_equivalents: float) -> str:
    """Plain words for a blob's size in water equivalents."""
    if water_equivalents <= SINGLE_MAX_WATERS:
        return "single ion or water"
    if water_equivalents <= SEVERAL_MAX_WATERS:
        return "several waters or ions"
    return "larger: lipid, detergent or ligand"


def single_water_volume_A3(scale: float, offset: float, contour: float, sigma_A: float) -> float:
    """Volume a lone water's expected density (``scale * 10 * Gaussian + offset``) encloses."""
    peak = scale * WATER_ELECTRONS / (2.0 * np.pi * sigma_A**2) ** 1.5
    height = contour - offset
    if not (scale > 0 and height > 0 and peak > height):
        return WATER_VOLUME_A3
    r = sigma_A * np.sqrt(2.0 * np.log(peak / height))
    return float(4.0 / 3.0 * np.pi * r**3)


def _symmetry(blobs: list[dict], n_fold: int | None, resolution_A: float) -> None:
    """Fill each blob's 'on_axis' and 'symmetry' fields."""
    tol = resolution_A / 2.0
    for b in blobs:
        b["on_axis"] = bool(b["radial_A"] <= max(1.0, tol))
    for b in blobs:
        if b["on_axis"]:
            b["symmetry"] = "on the axis"
            continue
        if not n_fold or n_fold < 2:
            b["symmetry"] = "no symmetry axis"
            continue
        copies = 1
        for o in blobs:
            if o is b or o["on_axis"]:
                continue
            if abs(o["s_A"] - b["s_A"]) > tol or abs(o["radial_A"] - b["radial_A"]) > tol:
                continue
            turn = 2.0 * np.pi / n_fold
            dphi = (o["phi"] - b["phi"]) % turn
            arc = min(dphi, turn - dphi) * b["radial_A"]
            if arc <= tol:
                copies += 1
        b["symmetry"] = (
            f"repeats {min(copies, n_fold)} of {n_fold} around the axis"
            if copies > 1
            else "no symmetry copies"
        )


def find_blobs(
    values: np.ndarray,
    positions_A: np.ndarray,
    unexplained: np.ndarray,
    residual: np.ndarray,
    *,
    voxel_volume_A3: float,
    map_mean: float,
    map_rms: float,
    profile: RadiusProfile,
    atoms: Atoms,
    single_volume_A3: float,
    resolution_A: float,
    min_volume_A3: float,
    min_peak_residual: float = 0.0,
    near_A: float = 8.0,
    max_residues: int = 6,
) -> tuple[DensityBlob, ...]:
    """Label the unexplained voxels into blobs and describe each (module docstring).

    ``values``, ``unexplained`` and ``residual`` are 3-D arrays on one grid;
    ``positions_A`` gives each voxel's Cartesian position, shape (values.size, 3);
    ``min_peak_residual`` is the height the blob's unexplained part must reach somewhere.
    """
    from scipy.ndimage import label
    from scipy.spatial import cKDTree

    labels, n = label(unexplained, structure=np.ones((3, 3, 3), dtype=bool))
    if n == 0:
        return ()
    flat = labels.ravel()
    vox = np.flatnonzero(flat)
    lab = flat[vox] - 1
    counts = np.bincount(lab, minlength=n)
    top = np.full(n, -np.inf)
    np.maximum.at(top, lab, residual.ravel()[vox])
    keep = (counts * voxel_volume_A3 >= min_volume_A3) & (top >= min_peak_residual)
    if not keep.any():
        return ()
    sel = keep[lab]
    vox, lab = vox[sel], lab[sel]
    pos = positions_A[vox]
    w = np.maximum(residual.ravel()[vox], 1e-12)
    wsum = np.bincount(lab, weights=w, minlength=n)
    centre = (
        np.stack([np.bincount(lab, weights=w * pos[:, d], minlength=n) for d in range(3)], axis=1)
        / np.maximum(wsum, 1e-300)[:, None]
    )
    peak = np.full(n, -np.inf)
    np.maximum.at(peak, lab, values.ravel()[vox])
    axis = profile.axis
    s_vox = axis.s_A(pos)
    s_lo = np.full(n, np.inf)
    s_hi = np.full(n, -np.inf)
    np.minimum.at(s_lo, lab, s_vox)
    np.maximum.at(s_hi, lab, s_vox)
    uvs = axis.to_frame(centre)
    # residues near each blob: nearest atom per (blob voxel), then per (blob, residue)
    names, res_of_atom = np.unique(atoms.residue_labels(), return_inverse=True)
    dist, nearest = cKDTree(atoms.coords_A).query(pos, distance_upper_bound=near_A)
    found = np.isfinite(dist)
    key = lab[found] * len(names) + res_of_atom[nearest[found]]
    order = np.lexsort((dist[found], key))
    key, dmin = key[order], dist[found][order]
    first = np.r_[True, key[1:] != key[:-1]]
    key, dmin = key[first], dmin[first]
    by_blob: dict[int, list[tuple[str, float]]] = {}
    for k, d in zip(key.tolist(), dmin.tolist(), strict=True):  # one per (blob, residue)
        by_blob.setdefault(k // len(names), []).append((str(names[k % len(names)]), d))
    rows = []
    for b in np.flatnonzero(keep):
        near = sorted(by_blob.get(int(b), []), key=lambda kv: kv[1])[:max_residues]
        volume = float(counts[b] * voxel_volume_A3)
        waters = volume / single_volume_A3
        rows.append(
            {
                "s_A": float(uvs[b, 2]),
                "radial_A": float(np.hypot(uvs[b, 0], uvs[b, 1])),
                "phi": float(np.arctan2(uvs[b, 1], uvs[b, 0])),
                "centre_A": tuple(float(x) for x in centre[b]),
                "volume_A3": volume,
                "peak": float(peak[b]),
                "peak_rms": float((peak[b] - map_mean) / map_rms),
                "water_equivalents": float(waters),
                "size_reading": size_reading(waters),
                "residues": tuple(k for k, _ in near),
                "residue_distance_A": tuple(round(v, 2) for _, v in near),
                "s_range_A": (float(s_lo[b]), float(s_hi[b])),
            }
        )
    _symmetry(rows, axis.n_fold, resolution_A)
    rows.sort(key=lambda r: r["s_A"])
    return tuple(DensityBlob(**{k: v for k, v in r.items() if k != "phi"}) for r in rows)
