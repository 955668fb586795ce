"""3-D exports of the pore for molecular viewers: a field map, a surface mesh, a centre line.

Three outputs, all in the input model's Cartesian frame (Å), so they overlay the
model in any viewer without moving anything:

* **Field map** (CCP4/MRC, written with gemmi) on a cubic grid around the pore:
  the clearance ``min_i (|x - a_i| - r_i)`` (:func:`clearance_grid`; a probe of
  radius p can hold its centre where it is >= p, so the isosurface at level p is
  everywhere that probe's centre fits, including, within the box, along the
  protein's outer surface), or the reach of a probe-size scan (:func:`reach_grid`;
  the isosurface at p bounds where probe p gets from the entry). Grid points sit
  at integer multiples of the spacing; the box is placed with the header's start
  indices (words 5-7),
  the sampling equals the box size (words 8-10 = words 1-3) and the MRC origin
  (words 50-52) is zero, so readers that use either convention place it alike.
* **Pore surface** (PLY or OBJ, triangulated by marching cubes from scikit-image):
  the part of the isosurface ``clearance = p`` that bounds the probe-centre region
  connected to the pore's centre line, inside a cylinder around the pore axis.
  Where the pore is closed to the probe the surface closes; it is open only where
  the region meets the cylinder (the mouths). Vertices can carry the local pore
  radius (the profile radius at the vertex's axial position) as a colour on the
  same perceptual map as the figures (:func:`poreprobe.figures.plots.radius_colors`).
* **Centre line** (mmCIF, written with gemmi): the profile's sphere centres as
  pseudo-atoms (``UNX``, element ``X``, B-factor = pore radius, so any viewer
  can show and colour them), plus our own categories ``_poreprobe_center_line``
  (definitions, units, axis, radius set) and ``_poreprobe_center_line_point``
  (per point: s, position, radius and the residues lining it).

All values are model-based estimates that depend on the radius set.
"""

from __future__ import annotations

import os
import tempfile
from dataclasses import dataclass, field

import numpy as np
from scipy import ndimage

from poreprobe._progress import progress
from poreprobe._validate import check_positive, check_range
from poreprobe._version import __version__
from poreprobe.errors import InputError, PoreNotFoundError
from poreprobe.geometry.kernel import AtomSpheres
from poreprobe.geometry.profile import RadiusProfile
from poreprobe.io.export import write_atomic
from poreprobe.io.radii import DEFAULT_RADIUS_SET, RadiusSet, atom_radii_A
from poreprobe.io.structure import Atoms, make_atoms

MAP_SUFFIXES = (".map", ".ccp4", ".mrc")
MESH_SUFFIXES = (".ply", ".obj")
CENTERLINE_SUFFIXES = (".cif", ".mmcif")
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


def check_suffix(path, suffixes, what) -> str:
    path = os.fspath(path)
    suffix = os.path.splitext(path)[1].lower()
    if suffix not in suffixes:
        raise InputError(f"{what} file must end in {', '.join(suffixes)}; got {path!r}")
    return suffix


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


# --------------------------------------------------------------------------- surface mesh


@dataclass(frozen=True)
class PoreSurface:
    """A triangulated pore surface for one probe radius.

    Attributes
    ----------
    vertices_A : ndarray of shape (n, 3)
        Vertex positions in the model's Cartesian frame (Å).
    faces : ndarray of int, shape (m, 3)
        Triangles as indices into ``vertices_A``.
    normals : ndarray of shape (n, 3)
        Unit normals at the vertices (pointing away from the pore lumen).
    s_A : ndarray of shape (n,)
        Axial position of each vertex (Å).
    local_radius_A : ndarray of shape (n,)
        Profile radius at the vertex's axial position (Å), NaN where open.
    probe_radius_A, spacing_A : float
    radius_set, source, version : str
    """

    vertices_A: np.ndarray
    faces: np.ndarray
    normals: np.ndarray
    s_A: np.ndarray
    local_radius_A: np.ndarray
    probe_radius_A: float
    spacing_A: float
    radius_set: str = ""
    source: str = ""
    version: str = field(default=__version__)

    def __post_init__(self):
        for name in ("vertices_A", "faces", "normals", "s_A", "local_radius_A"):
            getattr(self, name).setflags(write=False)

    def boundary_edges(self) -> np.ndarray:
        """Edges used by a single triangle, shape (k, 2): where the surface is open."""
        return boundary_edges(self.faces)

    def to_dict(self) -> dict:
        return {
            "n_vertices": len(self.vertices_A),
            "n_faces": len(self.faces),
            "n_boundary_edges": len(self.boundary_edges()),
            "probe_radius_A": self.probe_radius_A,
            "spacing_A": self.spacing_A,
            "radius_set": self.radius_set,
            "source": self.source,
            "version": self.version,
        }


def boundary_edges(faces) -> np.ndarray:
    """Edges (vertex index pairs, sorted) that belong to exactly one triangle."""
    f = np.asarray(faces, dtype=np.int64)
    edges = np.sort(np.concatenate([f[:, [0, 1]], f[:, [1, 2]], f[:, [2, 0]]]), axis=1)
    uniq, counts = np.unique(edges, axis=0, return_counts=True)
    return uniq[counts == 1]


def _all_corners(mask: np.ndarray) -> np.ndarray:
    """Marching-cubes mask of the cubes whose eight corners all lie in ``mask``.

    scikit-image (0.26, checked here on a single-voxel mask) computes the cube
    spanning indices ``i - 1 .. i`` (in each axis) when ``mask[i]`` is True, so
    each cube is flagged at its highest corner.
    """
    out = np.zeros_like(mask)
    core = mask[:-1, :-1, :-1].copy()
    for dx in (0, 1):
        for dy in (0, 1):
            for dz in (0, 1):
                core &= mask[
                    dx : dx + mask.shape[0] - 1,
                    dy : dy + mask.shape[1] - 1,
                    dz : dz + mask.shape[2] - 1,
                ]
    out[1:, 1:, 1:] = core
    return out


def local_radius_A(profile: RadiusProfile, s_A) -> np.ndarray:  # noqa: N802
    """Profile radius at axial positions ``s_A`` (linear in s; NaN next to open planes)."""
    return np.interp(
        np.asarray(s_A, dtype=float), profile.s_A, profile.radius_A, left=np.nan, right=np.nan
    )


def pore_surface(grid: FieldGrid, profile: RadiusProfile, *, probe_radius_A: float) -> PoreSurface:
    """Surface traced by the centre of a probe of radius p inside the pore.

    Parameters
    ----------
    grid : FieldGrid
        Clearance grid from :func:`clearance_grid` (same profile).
    profile : RadiusProfile
        Its enclosed sphere centres seed the pore region.
    probe_radius_A : float
        Probe radius p (Å, >= 0). p = 0 gives the van der Waals surface of the
        atoms lining the pore.

    Returns
    -------
    PoreSurface

    Raises
    ------
    PoreNotFoundError
        If no enclosed profile sphere admits the probe.

    Notes
    -----
    Region: grid points in the cylinder of the grid with clearance >= p, joined
    face to face (6-connectivity); the components that hold a profile centre whose
    radius is >= p are kept. Marching cubes (Lewiner) runs at level p on cubes
    whose eight corners lie in the cylinder, with the other components lowered
    below p, so vertices lie on ``clearance = p`` to within the linear
    interpolation error (below the grid spacing).
    """
    from skimage.measure import marching_cubes

    if not isinstance(grid, FieldGrid):
        raise InputError(f"grid must be a FieldGrid, got {type(grid).__name__}")
    p = check_positive(probe_radius_A, "probe_radius_A", allow_zero=True)
    region = grid.region_mask()
    inside = region & (grid.values_A >= p)
    labels, _ = ndimage.label(inside)
    ok = np.isfinite(profile.radius_A) & (profile.radius_A >= p)
    seeds = np.round(profile.center_A[ok] / grid.spacing_A).astype(np.int64) - grid.start
    in_box = np.all((seeds >= 0) & (seeds < np.array(grid.shape)), axis=1)
    seed_labels = np.unique(labels[tuple(seeds[in_box].T)])
    seed_labels = seed_labels[seed_labels > 0]
    if seed_labels.size == 0:
        raise PoreNotFoundError(
            f"no part of the pore admits a probe of radius {p:g} Å "
            f"(narrowest radius {profile.min_radius_A:.2f} Å, "
            f"grid spacing {grid.spacing_A:g} Å)"
        )
    keep = np.isin(labels, seed_labels)
    volume = np.where(inside & ~keep, p - grid.spacing_A, grid.values_A)
    verts, faces, normals, _ = marching_cubes(
        volume,
        level=p,
        spacing=(grid.spacing_A,) * 3,
        mask=_all_corners(region),
        allow_degenerate=False,
    )
    verts_A = verts + grid.origin_A
    s = grid.axis.s_A(verts_A)
    return PoreSurface(
        vertices_A=verts_A,
        faces=faces.astype(np.int64),
        normals=np.asarray(normals, dtype=np.float64),
        s_A=s,
        local_radius_A=local_radius_A(profile, s),
        probe_radius_A=p,
        spacing_A=grid.spacing_A,
        radius_set=grid.radius_set,
        source=grid.source,
    )


def _mesh_colors(surface: PoreSurface, radius_range_A) -> np.ndarray:
    from poreprobe.figures.plots import radius_colors

    if radius_range_A is None:
        finite = surface.local_radius_A[np.isfinite(surface.local_radius_A)]
        if finite.size == 0:
            raise InputError("no vertex has a local radius to colour by")
        lo, hi = float(finite.min()), float(finite.max())
        hi = hi if hi > lo else lo + 1.0
    else:
        if len(radius_range_A) != 2:
            raise InputError(f"radius_range_A must be (low, high), got {radius_range_A!r}")
        lo, hi = (float(v) for v in radius_range_A)
    return radius_colors(surface.local_radius_A, vmin_A=lo, vmax_A=hi)


def write_mesh(
    surface: PoreSurface,
    path,
    *,
    color_by_radius: bool = True,
    radius_range_A: tuple[float, float] | None = None,
) -> None:
    """Write a pore surface as ASCII PLY or Wavefront OBJ, atomically.

    Parameters
    ----------
    surface : PoreSurface
    path : str or os.PathLike
        ``.ply`` or ``.obj``.
    color_by_radius : bool
        Colour vertices by the local pore radius on the figures' colour map
        (grey where open).
    radius_range_A : (float, float), optional
        Radii mapped to the two ends of the colour map (default: the data's range).

    Notes
    -----
    PLY vertices carry x, y, z, the normal, red/green/blue (uchar, with colour)
    and two float properties of our own, ``s_A`` and ``local_radius_A`` (NaN
    where open). OBJ vertices carry colours as three extra floats (0 to 1) after
    the coordinates, as many viewers read them; OBJ has no place for the radius.
    """
    suffix = check_suffix(path, MESH_SUFFIXES, "mesh")
    if not isinstance(surface, PoreSurface):
        raise InputError(f"surface must be a PoreSurface, got {type(surface).__name__}")
    colors = _mesh_colors(surface, radius_range_A) if color_by_radius else None
    header = [
        f"poreprobe {surface.version}: pore surface traced by the centre of a probe of "
        f"radius {surface.probe_radius_A:g} A (isosurface clearance = probe radius)",
        f"model-based estimate; radius set {surface.radius_set}; grid spacing "
        f"{surface.spacing_A:g} A; coordinates in angstrom in the frame of "
        f"{surface.source or 'the input model'}",
    ]
    if colors is not None:
        header.append("colour: local pore radius on the cividis colour map; grey: open")
    text = (_ply_text if suffix == ".ply" else _obj_text)(surface, colors, header)
    write_atomic(path, text)


def _rows(arr: np.ndarray, fmt: str) -> str:
    import io

    buf = io.StringIO()
    np.savetxt(buf, arr, fmt=fmt)
    return buf.getvalue()


def _ply_text(surface, colors, header) -> str:
    n, m = len(surface.vertices_A), len(surface.faces)
    props = ["x", "y", "z", "nx", "ny", "nz"]
    lines = [
        "ply",
        "format ascii 1.0",
        *[f"comment {h}" for h in header],
        "comment s_A: axial position (A); local_radius_A: profile radius there (A)",
        f"element vertex {n}",
        *[f"property float {p}" for p in props],
    ]
    cols = [surface.vertices_A, surface.normals]
    fmt = ["%.4f"] * 6
    if colors is not None:
        lines += ["property uchar red", "property uchar green", "property uchar blue"]
        cols.append(colors)
        fmt += ["%d"] * 3
    lines += [
        "property float s_A",
        "property float local_radius_A",
        f"element face {m}",
        "property list uchar int vertex_indices",
        "end_header",
    ]
    cols += [surface.s_A[:, None], surface.local_radius_A[:, None]]
    fmt += ["%.4f", "%.4f"]
    table = np.hstack([np.asarray(c, dtype=np.float64) for c in cols])
    body = _rows(table, " ".join(fmt))
    face_rows = np.column_stack([np.full(m, 3), surface.faces])
    return "\n".join(lines) + "\n" + body + _rows(face_rows, "%d")


def _obj_text(surface, colors, header) -> str:
    lines = [f"# {h}" for h in header]
    v = surface.vertices_A
    if colors is not None:
        vtable = np.hstack([v, colors / 255.0])
        vtext = _rows(vtable, "v %.4f %.4f %.4f %.4f %.4f %.4f")
    else:
        vtext = _rows(v, "v %.4f %.4f %.4f")
    ntext = _rows(surface.normals, "vn %.4f %.4f %.4f")
    f = surface.faces + 1
    ftext = _rows(
        np.column_stack([f[:, 0], f[:, 0], f[:, 1], f[:, 1], f[:, 2], f[:, 2]]),
        "f %d//%d %d//%d %d//%d",
    )
    return "\n".join(lines) + "\n" + vtext + ntext + ftext


# --------------------------------------------------------------------------- centre line


@dataclass(frozen=True)
class CenterLine:
    """The pore's centre line: one point per enclosed profile plane.

    Attributes
    ----------
    s_A : ndarray of shape (n,)
        Axial position (Å).
    center_A : ndarray of shape (n, 3)
        Sphere centre in the model's Cartesian frame (Å).
    radius_A : ndarray of shape (n,)
        Profile radius (Å).
    lining : tuple of tuple of str
        Per point, the residues (``"A:LEU12"``) with an atom whose van der Waals
        surface lies within ``contact_tol_A`` of the sphere, closest first.
    contact_tol_A : float
    axis : PoreAxis
    radius_set, source, version : str
    """

    s_A: np.ndarray
    center_A: np.ndarray
    radius_A: np.ndarray
    lining: tuple[tuple[str, ...], ...]
    contact_tol_A: float
    axis: object
    radius_set: str = ""
    source: str = ""
    version: str = field(default=__version__)

    def __post_init__(self):
        for name in ("s_A", "center_A", "radius_A"):
            getattr(self, name).setflags(write=False)

    def to_dict(self) -> dict:
        return {
            "s_A": self.s_A.tolist(),
            "center_A": self.center_A.tolist(),
            "radius_A": self.radius_A.tolist(),
            "lining": [list(x) for x in self.lining],
            "contact_tol_A": self.contact_tol_A,
            "axis": self.axis.to_dict(),
            "radius_set": self.radius_set,
            "source": self.source,
            "version": self.version,
        }


def center_line(
    atoms: Atoms,
    profile: RadiusProfile,
    *,
    radii: str | RadiusSet = DEFAULT_RADIUS_SET,
    radii_A: np.ndarray | None = None,
    contact_tol_A: float | None = None,
) -> CenterLine:
    """The profile's enclosed sphere centres with their radii and lining residues.

    Parameters
    ----------
    atoms : Atoms
        The model the profile was computed on.
    profile : RadiusProfile
    radii, radii_A
        Radius set or per-atom radii (Å); use the profile's.
    contact_tol_A : float, optional
        Atoms whose surface is within this distance (Å) of a sphere line it
        (default: the profile's ``contact_tol_A``).

    Returns
    -------
    CenterLine
    """
    if not isinstance(profile, RadiusProfile):
        raise InputError(f"profile must be a RadiusProfile, got {type(profile).__name__}")
    tol = (
        profile.contact_tol_A
        if contact_tol_A is None
        else check_positive(contact_tol_A, "contact_tol_A", allow_zero=True)
    )
    radii_A = atom_radii_A(atoms, radii) if radii_A is None else np.asarray(radii_A, float)
    if radii_A.shape != (len(atoms),):
        raise InputError(f"radii_A must have {len(atoms)} values, got {radii_A.shape}")
    ok = np.isfinite(profile.radius_A)
    centres, radius = profile.center_A[ok], profile.radius_A[ok]
    spheres = AtomSpheres(atoms.coords_A, radii_A)
    reach = radius + tol + spheres.max_radius_A
    candidates = spheres.tree.query_ball_point(centres, reach)
    labels = atoms.residue_labels()
    lining = []
    for c, r, idx in zip(centres, radius, candidates, strict=True):
        idx = np.asarray(idx, dtype=np.int64)
        gap = np.linalg.norm(atoms.coords_A[idx] - c, axis=1) - radii_A[idx]
        close = gap <= r + tol
        order = np.argsort(gap[close], kind="stable")
        lining.append(tuple(dict.fromkeys(labels[idx[close]][order].tolist())))
    return CenterLine(
        s_A=profile.s_A[ok].copy(),
        center_A=centres.copy(),
        radius_A=radius.copy(),
        lining=tuple(lining),
        contact_tol_A=tol,
        axis=profile.axis,
        radius_set=profile.radius_set,
        source=profile.source,
    )


CENTER_LINE_CATEGORY = "_poreprobe_center_line."
CENTER_LINE_POINT_CATEGORY = "_poreprobe_center_line_point."
CENTER_LINE_CHAIN = "PORE"
CENTER_LINE_RESNAME = "UNX"


def center_line_document(line: CenterLine):
    """A ``gemmi.cif.Document`` for a centre line (see :func:`write_center_line`)."""
    import gemmi

    from poreprobe.io.writer import to_gemmi_structure

    n = len(line.s_A)
    if n == 0:
        raise InputError("the centre line has no points")
    pseudo = make_atoms(
        line.center_A,
        element=["X"] * n,
        name=["CEN"] * n,
        resname=[CENTER_LINE_RESNAME] * n,
        resid=np.arange(1, n + 1),
        chain=[CENTER_LINE_CHAIN] * n,
        b_factor=line.radius_A,
        kind=["hetero"] * n,
        source=line.source,
    )
    st = to_gemmi_structure(pseudo, name="poreprobe_center_line")
    for chain in st[0]:
        for residue in chain:
            residue.subchain = CENTER_LINE_CHAIN  # one struct_asym for all points
    st.entities.clear()
    st.setup_entities()
    doc = st.make_mmcif_document()
    block = doc.sole_block()
    q = gemmi.cif.quote
    ax = line.axis
    info = {
        "definition": "centre and radius of the largest sphere, centred in each plane "
        "across the pore axis, that overlaps no atom's van der Waals sphere",
        "length_unit": "angstrom",
        "lining_definition": "residues with an atom whose van der Waals surface lies "
        "within contact_tolerance of the sphere, closest first, "
        "written chain:RESNAMEnumber and separated by spaces",
        "contact_tolerance": f"{line.contact_tol_A:g}",
        "radius_set": line.radius_set or "?",
        "axis_point_x": f"{ax.point_A[0]:.4f}",
        "axis_point_y": f"{ax.point_A[1]:.4f}",
        "axis_point_z": f"{ax.point_A[2]:.4f}",
        "axis_direction_x": f"{ax.direction[0]:.6f}",
        "axis_direction_y": f"{ax.direction[1]:.6f}",
        "axis_direction_z": f"{ax.direction[2]:.6f}",
        "axis_method": ax.method,
        "pseudo_atoms": f"chain {CENTER_LINE_CHAIN}, residue {CENTER_LINE_RESNAME} "
        "(one per point, numbered as point id), atom CEN, element X; "
        "B-factor column = radius",
        "number_of_points": str(n),
        "source": line.source or "?",
        "software": f"poreprobe {line.version}",
        "caution": "model-based estimate: depends on the radius set and the model",
    }
    block.set_pairs(CENTER_LINE_CATEGORY, info)
    loop = block.init_loop(
        CENTER_LINE_POINT_CATEGORY,
        ["id", "s", "cartn_x", "cartn_y", "cartn_z", "radius", "lining_residues"],
    )
    for k in range(n):
        x, y, z = line.center_A[k]
        loop.add_row(
            [
                str(k + 1),
                f"{line.s_A[k]:.3f}",
                f"{x:.3f}",
                f"{y:.3f}",
                f"{z:.3f}",
                f"{line.radius_A[k]:.4f}",
                q(" ".join(line.lining[k])) if line.lining[k] else ".",
            ]
        )
    return doc


def write_center_line(line: CenterLine, path) -> None:
    """Write a centre line as mmCIF, atomically.

    The file holds the points as pseudo-atoms (``_atom_site``: chain ``PORE``,
    residue ``UNX``, atom ``CEN``, element ``X``, B-factor = radius) and two
    categories of our own:

    ``_poreprobe_center_line``
        Key-value pairs: definitions, ``length_unit`` (angstrom), contact tolerance,
        radius set, axis point and direction, number of points, source, software.
    ``_poreprobe_center_line_point``
        One row per point: ``id``, ``s``, ``cartn_x``, ``cartn_y``, ``cartn_z``,
        ``radius``, ``lining_residues`` (``.`` when none).
    """
    check_suffix(path, CENTERLINE_SUFFIXES, "centre line")
    if not isinstance(line, CenterLine):
        raise InputError(f"line must be a CenterLine, got {type(line).__name__}")
    write_atomic(path, center_line_document(line).as_string())
