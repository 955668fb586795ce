"""Density a model predicts at a resolution, and maps simulated from a model.

Expected density of the model (:func:`model_density`)
-----------------------------------------------------
Each atom is a 3-D Gaussian of weight equal to its atomic number Z (a count of its
electrons; weighting by Z is common practice for a model's expected density) and width

    sigma = d / (pi * sqrt(2)),

the Gaussian whose Fourier transform falls to 1/e at the resolution frequency 1/d
(our definition of "at resolution d"; equivalent to a blur of B = 8 pi^2 sigma^2 = 4 d^2).
The atoms are spread onto the grid by trilinear weights and the grid is filtered with a
Gaussian of width ``sqrt(sigma^2 - h^2 / 6)`` voxels, since trilinear spreading itself
blurs by variance h^2 / 6 per axis (h the voxel size). Values are in electrons per Å^3.
Only the atoms within 4 sigma of the requested box are used: the box is what is sampled.

Simulated maps (:func:`simulate_map`, for tests, the demo and benchmarks)
------------------------------------------------------------------------
gemmi's density calculator for electron scattering (``gemmi.DensityCalculatorE``: the
five-Gaussian electron scattering factors of International Tables for Crystallography
Vol. C, Table 4.3.2.2), atoms at B = 0 blurred by B = 4 d^2, on a box around the model,
plus Gaussian noise of a chosen RMS. A model computed map, not an experimental one.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from poreprobe._validate import check_positive
from poreprobe.errors import InputError
from poreprobe.io.density_map import DensityMap, density_map_from_array
from poreprobe.io.structure import Atoms

#: Atomic numbers of the elements found in channel models (others: looked up in gemmi).
_Z = {"H": 1, "D": 1, "C": 6, "N": 7, "O": 8, "F": 9, "NA": 11, "MG": 12, "P": 15, "S": 16}
_Z.update({"CL": 17, "K": 19, "CA": 20, "MN": 25, "FE": 26, "ZN": 30, "SE": 34, "BR": 35})


def gaussian_sigma_A(resolution_A: float) -> float:
    """Width of the Gaussian atom at resolution d: ``d / (pi * sqrt(2))`` (Å)."""
    d = check_positive(resolution_A, "resolution_A")
    return d / (np.pi * np.sqrt(2.0))


def atomic_numbers(elements) -> np.ndarray:
    """Atomic number per element symbol (6, carbon, for symbols gemmi does not know)."""
    elements = np.asarray(elements).astype(str)
    names, inverse = np.unique(elements, return_inverse=True)
    z = np.empty(len(names), dtype=np.float64)
    for k, name in enumerate(names):
        key = name.upper()
        if key not in _Z:
            import gemmi

            _Z[key] = gemmi.Element(key.capitalize()).atomic_number or 6
        z[k] = _Z[key]
    return z[inverse]


def model_density(
    atoms: Atoms, grid: DensityMap, resolution_A: float, *, weights=None
) -> np.ndarray:
    """The density the model predicts on the voxels of ``grid`` (electrons per Å^3).

    Parameters
    ----------
    atoms : Atoms
    grid : DensityMap
        Only its shape, voxel size and origin are used.
    resolution_A : float
        Resolution d (Å, > 0); sets the Gaussian width (module docstring).
    weights : array_like, optional
        Weight per atom (default the atomic number, times the occupancy).

    Returns
    -------
    ndarray of float32, shape ``grid.shape``
    """
    from scipy.ndimage import gaussian_filter

    if not isinstance(atoms, Atoms):
        raise InputError(f"atoms must be an Atoms table, got {type(atoms).__name__}")
    if not isinstance(grid, DensityMap):
        raise InputError(f"grid must be a DensityMap, got {type(grid).__name__}")
    sigma = gaussian_sigma_A(resolution_A)
    if weights is None:
        w = atomic_numbers(atoms.element) * np.clip(atoms.occupancy, 0.0, 1.0)
    else:
        w = np.asarray(weights, dtype=np.float64)
        if w.shape != (len(atoms),) or not np.all(np.isfinite(w)):
            raise InputError(f"weights must be {len(atoms)} finite numbers")
    shape = np.array(grid.shape)
    h = grid.voxel_A
    idx = grid.index_of(atoms.coords_A)
    reach = 4.0 * sigma / h
    keep = np.all((idx > -reach) & (idx < shape - 1 + reach), axis=1)
    idx, w = idx[keep], w[keep]
    pad = np.ceil(reach).astype(int) + 1
    big = shape + 2 * pad
    idx = idx + pad
    base = np.floor(idx).astype(np.int64)
    frac = idx - base
    flat_size = int(np.prod(big))
    acc = np.zeros(flat_size, dtype=np.float64)
    for corner in range(8):
        off = np.array([(corner >> 2) & 1, (corner >> 1) & 1, corner & 1])
        wc = w * np.prod(np.where(off, frac, 1.0 - frac), axis=1)
        pos = base + off
        flat = np.ravel_multi_index(pos.T, big, mode="clip")
        acc += np.bincount(flat, weights=wc, minlength=flat_size)
    spread = acc.reshape(big) / float(np.prod(h))
    width = np.sqrt(np.maximum(sigma**2 - h**2 / 6.0, (0.3 * h) ** 2)) / h
    smooth = gaussian_filter(spread, sigma=width, mode="constant", truncate=4.0)
    inner = smooth[
        pad[0] : pad[0] + shape[0], pad[1] : pad[1] + shape[1], pad[2] : pad[2] + shape[2]
    ]
    return inner.astype(np.float32)


def simulate_map(
    atoms: Atoms,
    resolution_A: float,
    *,
    voxel_A: float = 1.0,
    padding_A: float = 8.0,
    noise_rms: float = 0.0,
    seed: int = 0,
    box_A=None,
) -> DensityMap:
    """A map computed from a model with gemmi (electron scattering), plus Gaussian noise.

    Parameters
    ----------
    atoms : Atoms
    resolution_A : float
        Resolution d (Å): the atoms (B = 0) are blurred by B = 4 d^2.
    voxel_A : float
        Voxel size (Å).
    padding_A : float
        Box margin around the atoms (Å), at least 3 d so the periodic cell does not wrap.
    noise_rms : float
        RMS of independent Gaussian noise per voxel, in units of the noise-free map's RMS.
    seed : int
        Seed of the noise.
    box_A : (lo, hi), optional
        Corners of the box (Å) instead of the atoms' box plus padding.

    Returns
    -------
    DensityMap
    """
    import gemmi

    from poreprobe.io.writer import to_gemmi_structure

    d = check_positive(resolution_A, "resolution_A")
    h = check_positive(voxel_A, "voxel_A")
    check_positive(noise_rms, "noise_rms", allow_zero=True)
    if box_A is None:
        pad = check_positive(padding_A, "padding_A")
        lo = atoms.coords_A.min(axis=0) - pad
        hi = atoms.coords_A.max(axis=0) + pad
    else:
        lo, hi = (np.asarray(c, dtype=np.float64) for c in box_A)
    n = np.ceil((hi - lo) / h).astype(int) + 1
    shifted = replace(atoms.with_coords(atoms.coords_A - lo), b_factor=np.zeros(len(atoms)))
    st = to_gemmi_structure(shifted)
    calc = gemmi.DensityCalculatorE()
    calc.d_min = 0.0
    calc.blur = 4.0 * d * d
    calc.grid.set_unit_cell(gemmi.UnitCell(*(n * h).tolist(), 90.0, 90.0, 90.0))
    calc.grid.set_size(*map(int, n))
    calc.grid.spacegroup = gemmi.find_spacegroup_by_name("P1")
    calc.put_model_density_on_grid(st[0])
    values = np.array(calc.grid, copy=True).astype(np.float64)
    if noise_rms > 0:
        rng = np.random.default_rng(seed)
        values += rng.normal(0.0, noise_rms * values.std(), size=values.shape)
    return density_map_from_array(
        values, voxel_A=h, origin_A=lo, source=f"map computed from {atoms.source or 'a model'}"
    )
