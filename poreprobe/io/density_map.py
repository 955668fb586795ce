"""Density maps (CCP4/MRC) on the model's Cartesian frame: read, validate, sample, write.

A :class:`DensityMap` holds the map values indexed ``[i, j, k]`` along x, y, z, the voxel
size per axis and the Cartesian position of voxel ``(0, 0, 0)``, so that voxel
``(i, j, k)`` sits at ``origin_A + (i, j, k) * voxel_A``.

Reading (:func:`read_density_map`, gemmi's CCP4 reader, gzipped files too)
--------------------------------------------------------------------------
* Only mode 2 (32-bit float) maps are read, the mode cryo-EM software writes.
* The stored axes (header words MAPC, MAPR, MAPS) must be a permutation of x, y, z;
  the values are transposed to x, y, z order here.
* The cell must be orthogonal (angles 90 degrees within 0.01, as every cryo-EM map box is) and
  the voxel size (cell length / sampling, words 11-13 over 8-10) positive and finite.
* Position of the first voxel: the start indices (words 5-7, per stored axis) times the
  voxel size, plus the ORIGIN field (words 50-52). Programs differ on how to combine the
  two when both are set; we add them and warn.
* Non-finite values (NaN, infinity) are an error: the map is corrupt or masked badly.

Sampling (:meth:`DensityMap.sample`) is trilinear interpolation with
``scipy.ndimage.map_coordinates`` on the index transform; points outside the map get NaN.
"""

from __future__ import annotations

import os
import tempfile
import warnings
from dataclasses import dataclass, field

import numpy as np

from poreprobe._version import __version__
from poreprobe.errors import InputError, QualityWarning

#: File name endings read as maps (each optionally followed by ``.gz``).
MAP_SUFFIXES = (".map", ".mrc", ".ccp4")
#: Largest deviation of a cell angle from 90 degrees still read as orthogonal (degrees).
ANGLE_TOLERANCE_DEG = 0.01


@dataclass(frozen=True)
class DensityMap:
    """A density map on a Cartesian grid.

    Attributes
    ----------
    values : ndarray of float32, shape (nx, ny, nz)
        Map values indexed along x, y, z (map units, arbitrary).
    voxel_A : ndarray of shape (3,)
        Voxel size along x, y, z (Å).
    origin_A : ndarray of shape (3,)
        Cartesian position of voxel (0, 0, 0) (Å).
    mean, rms : float
        Mean and standard deviation of all values (map units).
    source : str
        File name or description.
    notes : tuple of str
        What was read or assumed (axis order, origin convention).
    """

    values: np.ndarray
    voxel_A: np.ndarray
    origin_A: np.ndarray
    mean: float
    rms: float
    source: str = ""
    notes: tuple[str, ...] = ()
    version: str = field(default=__version__)

    def __post_init__(self):
        for name in ("values", "voxel_A", "origin_A"):
            getattr(self, name).setflags(write=False)

    @property
    def shape(self) -> tuple[int, int, int]:
        return tuple(int(n) for n in self.values.shape)

    @property
    def voxel_volume_A3(self) -> float:
        return float(np.prod(self.voxel_A))

    def extent_A(self) -> tuple[np.ndarray, np.ndarray]:
        """Cartesian positions of the first and the last voxel (Å)."""
        return self.origin_A.copy(), self.origin_A + (np.array(self.shape) - 1) * self.voxel_A

    def index_of(self, points_A) -> np.ndarray:
        """Fractional voxel indices (i, j, k) of Cartesian points, shape (n, 3)."""
        pts = np.asarray(points_A, dtype=np.float64).reshape(-1, 3)
        return (pts - self.origin_A) / self.voxel_A

    def covers(self, points_A) -> np.ndarray:
        """Boolean mask: which points lie inside the map box."""
        idx = self.index_of(points_A)
        return np.all((idx >= 0) & (idx <= np.array(self.shape) - 1), axis=1)

    def sample(self, points_A) -> np.ndarray:
        """Trilinear map values at Cartesian points (NaN outside the map), shape (n,)."""
        from scipy.ndimage import map_coordinates

        idx = self.index_of(points_A)
        out = map_coordinates(self.values, idx.T, order=1, mode="nearest")
        inside = np.all((idx >= 0) & (idx <= np.array(self.shape) - 1), axis=1)
        out[~inside] = np.nan
        return out

    def crop(self, lo_A, hi_A) -> DensityMap:
        """The part of the map between two Cartesian corners (whole voxels, clipped to the map)."""
        lo = np.floor((np.asarray(lo_A, float) - self.origin_A) / self.voxel_A).astype(int)
        hi = np.ceil((np.asarray(hi_A, float) - self.origin_A) / self.voxel_A).astype(int) + 1
        lo = np.clip(lo, 0, self.shape)
        hi = np.clip(hi, 0, self.shape)
        if np.any(hi - lo < 2):
            raise InputError(f"the map {self.source} does not reach the region asked for")
        part = self.values[lo[0] : hi[0], lo[1] : hi[1], lo[2] : hi[2]]
        return DensityMap(
            values=np.ascontiguousarray(part),
            voxel_A=self.voxel_A.copy(),
            origin_A=self.origin_A + lo * self.voxel_A,
            mean=self.mean,
            rms=self.rms,
            source=self.source,
            notes=self.notes,
        )

    def positions_A(self) -> np.ndarray:
        """Cartesian position of every voxel, shape (nx * ny * nz, 3), x slowest."""
        axes = [self.origin_A[d] + np.arange(self.shape[d]) * self.voxel_A[d] for d in range(3)]
        grids = np.meshgrid(*axes, indexing="ij")
        return np.stack([g.ravel() for g in grids], axis=1)

    def to_dict(self) -> dict:
        lo, hi = self.extent_A()
        return {
            "source": self.source,
            "shape": list(self.shape),
            "voxel_A": self.voxel_A.tolist(),
            "origin_A": self.origin_A.tolist(),
            "extent_A": [lo.tolist(), hi.tolist()],
            "mean": self.mean,
            "rms": self.rms,
            "notes": list(self.notes),
        }


def density_map_from_array(values, *, voxel_A, origin_A=(0.0, 0.0, 0.0), source: str = "array"):
    """A :class:`DensityMap` from an array indexed along x, y, z, with validation.

    Parameters
    ----------
    values : array_like, shape (nx, ny, nz)
        Map values; every value finite, each axis at least 2 voxels long.
    voxel_A : float or sequence of 3 floats
        Voxel size (Å, > 0).
    origin_A : sequence of 3 floats
        Position of voxel (0, 0, 0) (Å).
    source : str

    Returns
    -------
    DensityMap

    Raises
    ------
    InputError
        A non-3-D array, a short axis, non-finite values or a bad voxel size or origin.
    """
    arr = np.asarray(values, dtype=np.float32)
    if arr.ndim != 3 or min(arr.shape) < 2:
        raise InputError(f"map {source}: values must be a 3-D grid, at least 2 voxels a side")
    voxel = np.broadcast_to(np.asarray(voxel_A, dtype=np.float64), (3,)).copy()
    if not np.all(np.isfinite(voxel)) or np.any(voxel <= 0):
        raise InputError(f"map {source}: voxel size must be positive and finite, got {voxel} Å")
    origin = np.asarray(origin_A, dtype=np.float64).reshape(-1)
    if origin.shape != (3,) or not np.all(np.isfinite(origin)):
        raise InputError(f"map {source}: origin must be 3 finite numbers (Å), got {origin_A}")
    finite = np.isfinite(arr)
    if not finite.all():
        bad = int(arr.size - np.count_nonzero(finite))
        raise InputError(
            f"map {source} holds {bad} non-finite values (NaN or infinity): a corrupt or "
            "badly masked map"
        )
    mean = float(arr.mean(dtype=np.float64))
    rms = float(arr.std(dtype=np.float64))
    if not rms > 0:
        raise InputError(f"map {source} is flat (every value {mean:g}): nothing to compare")
    return DensityMap(
        values=np.ascontiguousarray(arr),
        voxel_A=voxel,
        origin_A=origin,
        mean=mean,
        rms=rms,
        source=source,
    )


def _check_map_path(path) -> str:
    path = os.fspath(path)
    name = os.path.basename(path).lower()
    if name.endswith(".gz"):
        name = name[:-3]
    if not name.endswith(MAP_SUFFIXES):
        raise InputError(f"map file {path} must end in {', '.join(MAP_SUFFIXES)} (optionally .gz)")
    if not os.path.exists(path):
        raise InputError(f"map file {path} does not exist")
    if not os.path.isfile(path):
        raise InputError(f"map file {path} is not a regular file")
    return path


def read_density_map(path) -> DensityMap:
    """Read a CCP4/MRC map (mode 2, optionally gzipped) onto the Cartesian frame.

    Parameters
    ----------
    path : str or os.PathLike
        ``.map``, ``.mrc`` or ``.ccp4``, optionally ``.gz``.

    Returns
    -------
    DensityMap

    Raises
    ------
    InputError
        An unreadable or corrupt file, another data mode, an axis order that is not a
        permutation of x, y, z, a non-orthogonal cell, a zero or non-finite voxel size,
        or non-finite values.
    """
    import gemmi

    path = _check_map_path(path)
    try:
        ccp4 = gemmi.read_ccp4_map(path, setup=False)
    except (RuntimeError, ValueError, OSError) as exc:
        raise InputError(f"cannot read {path} as a CCP4/MRC map: {exc}") from None
    head = ccp4.header_i32
    mode = head(4)
    if mode != 2:
        raise InputError(f"map {path} has data mode {mode}; only mode 2 (32-bit float) is read")
    axes = [head(17), head(18), head(19)]
    if sorted(axes) != [1, 2, 3]:
        raise InputError(
            f"map {path}: axis order (MAPC, MAPR, MAPS) = {axes} is not a permutation of 1, 2, 3"
        )
    cell = np.array([ccp4.header_float(w) for w in range(11, 17)], dtype=np.float64)
    sampling = np.array([head(8), head(9), head(10)], dtype=np.float64)
    if not np.all(np.isfinite(cell)) or np.any(cell[:3] <= 0) or np.any(sampling <= 0):
        raise InputError(
            f"map {path}: zero or invalid voxel size (cell {cell[:3].tolist()} Å over "
            f"sampling {sampling.astype(int).tolist()})"
        )
    if np.any(np.abs(cell[3:] - 90.0) > ANGLE_TOLERANCE_DEG):
        raise InputError(
            f"map {path}: cell angles {cell[3:].tolist()} are not 90 degrees; only orthogonal "
            "maps are read"
        )
    voxel = cell[:3] / sampling
    raw = np.array(ccp4.grid, copy=False)
    stored = [head(1), head(2), head(3)]
    if list(raw.shape) != stored:
        raise InputError(f"map {path}: data of shape {list(raw.shape)}, header says {stored}")
    # raw axis k runs along Cartesian axis axes[k] - 1; put x, y, z first, second, third
    order = [axes.index(d) for d in (1, 2, 3)]
    values = np.transpose(raw, order)
    starts = np.array([head(5), head(6), head(7)], dtype=np.float64)[order]
    header_origin = np.array([ccp4.header_float(w) for w in (50, 51, 52)], dtype=np.float64)
    if not np.all(np.isfinite(header_origin)):
        header_origin = np.zeros(3)
    notes = [f"axis order (MAPC, MAPR, MAPS) = {tuple(axes)}; voxel {np.round(voxel, 4)} Å"]
    if np.any(starts != 0) and np.any(header_origin != 0):
        warnings.warn(
            f"map {path} sets both start indices {starts.astype(int).tolist()} and ORIGIN "
            f"{header_origin.tolist()} Å; programs combine them differently, poreprobe adds "
            "them: check that the model sits in the density",
            QualityWarning,
            stacklevel=2,
        )
        notes.append("start indices and ORIGIN both set: added")
    dmap = density_map_from_array(
        values, voxel_A=voxel, origin_A=starts * voxel + header_origin, source=path
    )
    return DensityMap(**{**dmap.__dict__, "notes": tuple(notes)})


def write_density_map(dmap: DensityMap, path) -> None:
    """Write a :class:`DensityMap` as a mode-2 CCP4/MRC map in x, y, z order, atomically.

    The cell is the box (shape x voxel size), the start indices are zero and the ORIGIN
    field holds ``origin_A``, so :func:`read_density_map` gives the same map back.
    """
    import gemmi

    from poreprobe.io.export import write_atomic

    if not isinstance(dmap, DensityMap):
        raise InputError(f"dmap must be a DensityMap, got {type(dmap).__name__}")
    name = os.path.basename(os.fspath(path)).lower()
    if not name.endswith(MAP_SUFFIXES):
        raise InputError(f"map file {path} must end in {', '.join(MAP_SUFFIXES)}")
    grid = gemmi.FloatGrid(np.asfortranarray(dmap.values, dtype=np.float32))
    cell = np.array(dmap.shape) * dmap.voxel_A
    grid.set_unit_cell(gemmi.UnitCell(*cell.tolist(), 90.0, 90.0, 90.0))
    grid.spacegroup = gemmi.find_spacegroup_by_name("P1")
    ccp4 = gemmi.Ccp4Map()
    ccp4.grid = grid
    ccp4.update_ccp4_header(2, True)
    for word, value in zip((50, 51, 52), dmap.origin_A, strict=True):
        ccp4.set_header_float(word, float(value))
    with tempfile.TemporaryDirectory(prefix="poreprobe-") as tmp:
        scratch = os.path.join(tmp, "map" + os.path.splitext(name)[1])
        ccp4.write_ccp4_map(scratch)
        with open(scratch, "rb") as fh:
            data = fh.read()
    write_atomic(path, data)
