"""Field maps of the pore for molecular viewers (CCP4/MRC, written with gemmi).

On a cubic grid around the pore, in the input model's Cartesian frame (Å), so the
map overlays the model in any viewer without moving anything: the clearance
``min_i (|x - a_i| - r_i)`` (:func:`clearance_grid`; a probe of radius p can hold
its centre where it is >= p, so the isosurface at level p is everywhere that
probe's centre fits, including, within the box, along the protein's outer
surface), or the reach of a probe-size scan (:func:`reach_grid`; the isosurface at
p bounds where probe p gets from the entry). Grid points sit at integer multiples
of the spacing; the box is placed with the header's start indices (words 5-7), the
sampling equals the box size (words 8-10 = words 1-3) and the MRC origin (words
50-52) is zero, so readers that use either convention place it alike.

All values are model-based estimates that depend on the radius set.
"""

from __future__ import annotations

import os
import tempfile
from dataclasses import dataclass

import numpy as np

from poreprobe._progress import progress
from poreprobe._validate import check_positive, check_range
from poreprobe._version import __version__
from poreprobe.errors import InputError, PoreNotFoundError
from poreprobe.geometry.kernel import AtomSpheres
from poreprobe.geometry.profile import RadiusProfile
from poreprobe.io.export import check_suffix, write_atomic
from poreprobe.io.radii import DEFAULT_RADIUS_SET, RadiusSet, atom_radii_A
from poreprobe.io.structure import Atoms

MAP_SUFFIXES = (".map", ".ccp4", ".mrc")
#: Largest grid (points) built without complaint; beyond it, ask for a coarser spacing.
MAX_GRID_POINTS = 60_000_000
_CHUNK_POINTS = 1_000_000


@dataclass(frozen=True)
class FieldGrid:
    """A scalar field on a cubic grid aligned with the model's Cartesian axes.

    Attributes
    ----------
    values_A : ndarray of shape (nx, ny, nz)
        Field value (Å) at each grid point; index 0 runs along x.
    start : ndarray of int, shape (3,)
        Grid index of ``values_A[0, 0, 0]``: its position is ``start * spacing_A``.
    spacing_A : float
        Distance between neighbouring grid points (Å).
    field : str
        What the values are: ``"clearance"`` or ``"reach"``.
    axis : PoreAxis
        The pore axis the grid was built around.
    region_radius_A : float
        Radius of the cylinder around the axis that the box encloses (Å).
    s_range_A : (float, float)
        Axial extent of that cylinder (Å).
    radius_set, source, version : str
    """

    values_A: np.ndarray
    start: np.ndarray
    spacing_A: float
    field: str
    axis: object
    region_radius_A: float
    s_range_A: tuple[float, float]
    radius_set: str = ""
    source: str = ""
    version: str = __version__

    def __post_init__(self):
        self.values_A.setflags(write=False)
        self.start.setflags(write=False)

    @property
    def origin_A(self) -> np.ndarray:  # noqa: N802
        """Position of ``values_A[0, 0, 0]`` (Å)."""
        return self.start * self.spacing_A

    @property
    def shape(self) -> tuple[int, int, int]:
        return tuple(int(n) for n in self.values_A.shape)

    def positions_A(self, index) -> np.ndarray:  # noqa: N802
        """Cartesian positions (Å) of grid indices, array_like of shape (..., 3)."""
        return (np.asarray(index, dtype=float) + self.start) * self.spacing_A

    def axes_A(self) -> tuple[np.ndarray, np.ndarray, np.ndarray]:  # noqa: N802
        """The x, y and z coordinates of the grid planes (Å)."""
        return tuple((self.start[k] + np.arange(self.shape[k])) * self.spacing_A for k in range(3))

    def region_mask(self) -> np.ndarray:
        """Boolean (nx, ny, nz): grid points inside the cylinder around the pore axis."""
        x, y, z = self.axes_A()
        p, d = self.axis.point_A, self.axis.direction
        rx, ry, rz = x[:, None, None] - p[0], y[None, :, None] - p[1], z[None, None, :] - p[2]
        s = rx * d[0] + ry * d[1] + rz * d[2]
        lateral2 = rx**2 + ry**2 + rz**2 - s**2
        lo, hi = self.s_range_A
        return (s >= lo) & (s <= hi) & (lateral2 <= self.region_radius_A**2)

    def to_dict(self) -> dict:
        """Metadata (not the values) for reports."""
        return {
            "field": self.field,
            "shape": list(self.shape),
            "spacing_A": self.spacing_A,
            "origin_A": self.origin_A.tolist(),
            "region_radius_A": self.region_radius_A,
            "s_range_A": list(self.s_range_A),
            "radius_set": self.radius_set,
            "source": self.source,
            "version": self.version,
        }


def default_region_radius_A(profile: RadiusProfile, *, padding_A: float = 2.0) -> float:  # noqa: N802
    """Cylinder radius that holds every enclosed profile sphere, plus ``padding_A``.

    The largest ``radius + distance of the centre from the axis`` over the enclosed
    planes, so that the probe-centre region of any probe lies inside.
    """
    ok = np.isfinite(profile.radius_A)
    if not ok.any():
        raise PoreNotFoundError("the profile has no enclosed plane")
    offset = np.linalg.norm(profile.axis.to_frame(profile.center_A[ok])[:, :2], axis=1)
    return float(np.max(profile.radius_A[ok] + offset)) + padding_A


def clearance_grid(
    atoms: Atoms,
    profile: RadiusProfile,
    *,
    radii: str | RadiusSet = DEFAULT_RADIUS_SET,
    radii_A: np.ndarray | None = None,
    spacing_A: float = 0.5,
    region_radius_A: float | None = None,
    quiet: bool = True,
) -> FieldGrid:
    """Clearance on a Cartesian grid around the pore.

    Parameters
    ----------
    atoms : Atoms
        The model the profile was computed on.
    profile : RadiusProfile
        Gives the axis, the axial extent (the profile's s range) and, by default,
        the lateral extent (:func:`default_region_radius_A`).
    radii : str or RadiusSet
        Radius set (ignored when ``radii_A`` is given).
    radii_A : ndarray of shape (n,), optional
        Per-atom radii (Å); use the same as for the profile.
    spacing_A : float
        Grid spacing (Å), 0.05 to 5.
    region_radius_A : float, optional
        Radius (Å) of the cylinder around the axis the box must enclose.
    quiet : bool
        No progress bar.

    Returns
    -------
    FieldGrid
        ``values_A[i, j, k]`` is the exact clearance at ``(start + (i, j, k)) * spacing_A``.

    Raises
    ------
    InputError
        Bad spacing or region, or a grid above :data:`MAX_GRID_POINTS`.
    """
    if not isinstance(profile, RadiusProfile):
        raise InputError(f"profile must be a RadiusProfile, got {type(profile).__name__}")
    spacing_A = check_range(spacing_A, "spacing_A", 0.05, 5.0)
    region_radius_A = (
        default_region_radius_A(profile)
        if region_radius_A is None
        else check_positive(region_radius_A, "region_radius_A")
    )
    if radii_A is None:
        radii_A = atom_radii_A(atoms, radii)
        radius_set = radii.name if isinstance(radii, RadiusSet) else str(radii)
    else:
        radius_set = profile.radius_set
    spheres = AtomSpheres(atoms.coords_A, radii_A)
    axis = profile.axis
    s_lo, s_hi = float(profile.s_A[0]), float(profile.s_A[-1])
    start, shape = _cartesian_box(axis, (s_lo, s_hi), region_radius_A, spacing_A)
    values = np.empty(shape, dtype=np.float64)
    for rows, pts in progress(
        _point_blocks(start, shape, spacing_A),
        desc="clearance grid",
        quiet=quiet,
        total=_n_blocks(shape),
    ):
        values[rows] = spheres.clearance_A(pts).reshape(-1, shape[1], shape[2])
    return FieldGrid(
        values_A=values,
        start=start,
        spacing_A=spacing_A,
        field="clearance",
        axis=axis,
        region_radius_A=region_radius_A,
        s_range_A=(s_lo, s_hi),
        radius_set=radius_set,
        source=atoms.source,
    )


def _cartesian_box(axis, s_range_A, radius_A: float, spacing_A: float):
    """Start index and shape of the grid (multiples of the spacing) holding a cylinder."""
    s_lo, s_hi = s_range_A
    ends = np.array([axis.point_A + s_lo * axis.direction, axis.point_A + s_hi * axis.direction])
    half = radius_A * np.sqrt(np.clip(1.0 - axis.direction**2, 0.0, 1.0))
    start = np.floor((ends.min(0) - half) / spacing_A).astype(np.int64)
    stop = np.ceil((ends.max(0) + half) / spacing_A).astype(np.int64)
    shape = tuple(int(n) for n in stop - start + 1)
    n_points = int(np.prod(shape))
    if n_points > MAX_GRID_POINTS:
        raise InputError(
            f"the grid would hold {n_points:,} points (limit {MAX_GRID_POINTS:,}); "
            f"use a larger spacing_A than {spacing_A} or a smaller region"
        )
    return start, shape


def _rows_per_block(shape) -> int:
    return max(1, _CHUNK_POINTS // (shape[1] * shape[2]))


def _n_blocks(shape) -> int:
    return -(-shape[0] // _rows_per_block(shape))


def _point_blocks(start, shape, spacing_A: float):
    """Blocks of x rows of the grid: (row slice, their points (m, 3) in Å)."""
    x, y, z = ((start[k] + np.arange(shape[k])) * spacing_A for k in range(3))
    yz = np.stack(np.meshgrid(y, z, indexing="ij"), axis=-1).reshape(-1, 2)
    step = _rows_per_block(shape)
    for i0 in range(0, shape[0], step):
        xs = x[i0 : i0 + step]
        yield (
            slice(i0, i0 + len(xs)),
            np.column_stack([np.repeat(xs, len(yz)), np.tile(yz, (len(xs), 1))]),
        )


def reach_grid(field, *, spacing_A: float | None = None, quiet: bool = True) -> FieldGrid:
    """The reach field of a probe-size scan, resampled onto a Cartesian grid for a map.

    Parameters
    ----------
    field : ReachField
        From :func:`poreprobe.reach_field` (its grid lies in the pore-axis frame).
    spacing_A : float, optional
        Spacing of the Cartesian grid (Å, 0.05 to 5); default the field's own.
    quiet : bool
        No progress bar.

    Returns
    -------
    FieldGrid
        ``field="reach"``: the largest probe radius (Å) whose centre gets from the
        entry bulk to each grid point, so the isosurface at level p bounds the
        region probe p reaches. Values are trilinear in the field's voxels; where
        no probe gets (reach -inf) a voxel counts as its own clearance inside atoms
        and as minus one spacing elsewhere, as does everything outside the field's
        pore region. Reach above the field's clearance cap is reported as the cap.

    Notes
    -----
    Where the Cartesian grid points coincide with the field's voxels (an axis
    along x, y or z through a grid point, same spacing) the values are the
    field's own, exactly.
    """
    from scipy.ndimage import map_coordinates

    from poreprobe.geometry.reach import ReachField

    if not isinstance(field, ReachField):
        raise InputError(f"field must be a ReachField, got {type(field).__name__}")
    h = field.spacing_A if spacing_A is None else check_range(spacing_A, "spacing_A", 0.05, 5.0)
    low = -field.spacing_A
    reach = np.asarray(field.reach_A)
    clearance = np.asarray(field.clearance_A)
    voxels = np.where(
        np.isfinite(reach),
        reach,
        np.where(np.isfinite(clearance) & (clearance < 0), clearance, low),
    )
    voxels = np.where(field.inside, voxels, low)
    s_range = (float(field.s_A[0]), float(field.s_A[-1]))
    start, shape = _cartesian_box(field.axis, s_range, field.pore_radius_A, h)
    values = np.empty(shape, dtype=np.float64)
    for rows, pts in progress(
        _point_blocks(start, shape, h), desc="reach map", quiet=quiet, total=_n_blocks(shape)
    ):
        index = (field.to_grid_frame(pts) - field.origin_A) / field.spacing_A
        values[rows] = map_coordinates(voxels, index.T, order=1, mode="constant", cval=low).reshape(
            -1, shape[1], shape[2]
        )
    return FieldGrid(
        values_A=values,
        start=start,
        spacing_A=h,
        field="reach",
        axis=field.axis,
        region_radius_A=field.pore_radius_A,
        s_range_A=s_range,
        radius_set=field.radius_set,
        source=field.source,
    )


def _bytes_from_writer(write, suffix: str) -> bytes:
    """Run a writer that needs a file name, and return what it wrote."""
    with tempfile.TemporaryDirectory(prefix="poreprobe-") as tmp:
        path = os.path.join(tmp, "out" + suffix)
        write(path)
        with open(path, "rb") as fh:
            return fh.read()


def write_map(grid: FieldGrid, path) -> None:
    """Write a field grid as a CCP4/MRC map (mode 2, float32), atomically.

    Parameters
    ----------
    grid : FieldGrid
    path : str or os.PathLike
        ``.map``, ``.ccp4`` or ``.mrc``.

    Notes
    -----
    The cell is the box (``nx * spacing`` by ...), space group P1, axes in x, y, z
    order; the start indices place point (i, j, k) at ``(start + (i, j, k)) *
    spacing`` Å. A header label names the field, the radius set and the source.
    """
    import gemmi

    suffix = check_suffix(path, MAP_SUFFIXES, "map")
    if not isinstance(grid, FieldGrid):
        raise InputError(f"grid must be a FieldGrid, got {type(grid).__name__}")
    g = gemmi.FloatGrid(np.ascontiguousarray(grid.values_A, dtype=np.float32))
    nx, ny, nz = grid.shape
    h = grid.spacing_A
    g.set_unit_cell(gemmi.UnitCell(nx * h, ny * h, nz * h, 90.0, 90.0, 90.0))
    g.spacegroup = gemmi.find_spacegroup_by_name("P1")
    ccp4 = gemmi.Ccp4Map()
    ccp4.grid = g
    ccp4.update_ccp4_header(2, True)
    for word, value in zip((5, 6, 7), grid.start, strict=True):
        ccp4.set_header_i32(word, int(value))
    for word in (50, 51, 52):
        ccp4.set_header_float(word, 0.0)
    labels = [
        f"poreprobe {grid.version}: {grid.field} in angstrom (model-based estimate)",
        f"radius set {grid.radius_set}; source {grid.source}"[:80],
    ]
    ccp4.set_header_i32(56, len(labels))
    for k, label in enumerate(labels):
        ccp4.set_header_str(57 + 20 * k, label[:80].ljust(80))
    write_atomic(path, _bytes_from_writer(ccp4.write_ccp4_map, suffix))
