"""The pore surface as a triangle mesh for molecular viewers (PLY, OBJ or glTF binary).

Triangulated by marching cubes from scikit-image: the part of the isosurface
``clearance = p`` that bounds the probe-centre region connected to the pore's
centre line, inside a cylinder around the pore axis. Where the pore is closed to
the probe the surface closes; it is open only where the region meets the cylinder
(the mouths). Vertices can carry the local pore radius (the profile radius at the
vertex's axial position) as a colour on the same perceptual map as the figures
(:func:`poreprobe.figures.style.radius_colors`). Coordinates are in the input
model's Cartesian frame (Å). :func:`write_mesh` writes this surface or the pore tube
(:mod:`poreprobe.figures.viewer_tube`).

All values are model-based estimates that depend on the radius set.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from scipy import ndimage

from poreprobe._validate import check_positive
from poreprobe._version import __version__
from poreprobe.errors import InputError, PoreNotFoundError
from poreprobe.figures.mesh_files import MESH_SUFFIXES, mesh_file_data, radius_mesh_colors
from poreprobe.figures.viewer_map import FieldGrid
from poreprobe.figures.viewer_tube import PoreTube
from poreprobe.geometry.profile import RadiusProfile
from poreprobe.io.export import check_suffix, write_atomic


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

    @property
    def color_radius_A(self) -> np.ndarray:  # noqa: N802
        """The radius each vertex is coloured by: the local pore radius."""
        return self.local_radius_A

    def vertex_properties(self) -> dict[str, np.ndarray]:
        """Per-vertex floats written to PLY: ``s_A`` and ``local_radius_A``."""
        return {"s_A": self.s_A, "local_radius_A": self.local_radius_A}

    def describe(self) -> list[str]:
        """Header lines of a mesh file: what the surface is, radius set, frame."""
        return [
            f"poreprobe {self.version}: pore surface traced by the centre of a probe of "
            f"radius {self.probe_radius_A:g} A (isosurface clearance = probe radius)",
            f"model-based estimate; radius set {self.radius_set}; grid spacing "
            f"{self.spacing_A:g} A; coordinates in angstrom in the frame of "
            f"{self.source or 'the input model'}",
            "s_A: axial position (A); local_radius_A: profile radius there (A)",
        ]

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


def write_mesh(
    mesh: PoreSurface | PoreTube,
    path,
    *,
    color_by_radius: bool = True,
    radius_range_A: tuple[float, float] | None = None,
) -> None:
    """Write a pore surface or a pore tube as ASCII PLY, Wavefront OBJ or glTF binary.

    Parameters
    ----------
    mesh : PoreSurface or PoreTube
    path : str or os.PathLike
        ``.ply``, ``.obj`` or ``.glb`` (the suffix picks the format); written atomically.
    color_by_radius : bool
        Colour vertices by the pore radius on the figures' colour map (grey where
        open): the local radius for a surface, the ring's radius for a tube.
    radius_range_A : (float, float), optional
        Radii mapped to the two ends of the colour map (default: the data's range).

    Notes
    -----
    PLY vertices carry x, y, z, the normal, red/green/blue (uchar, with colour)
    and float properties of our own (:meth:`PoreSurface.vertex_properties`:
    ``s_A`` and ``local_radius_A``, NaN where open; a tube: ``s_A`` and
    ``radius_A``). OBJ vertices carry colours as three extra floats (0 to 1) after
    the coordinates, as many viewers read them. The glTF file (written with
    trimesh; one unit = 1 Å) holds one mesh with normals and vertex colours, and
    the header lines in its ``extras``. Neither OBJ nor glTF has a place for the
    radius itself.
    """
    suffix = check_suffix(path, MESH_SUFFIXES, "mesh")
    if not isinstance(mesh, PoreSurface | PoreTube):
        raise InputError(f"mesh must be a PoreSurface or a PoreTube, got {type(mesh).__name__}")
    colors = radius_mesh_colors(mesh.color_radius_A, radius_range_A) if color_by_radius else None
    header = mesh.describe()
    if colors is not None:
        header.append("colour: pore radius on the cividis colour map; grey: open")
    data = mesh_file_data(
        suffix, mesh.vertices_A, mesh.normals, mesh.faces, colors, mesh.vertex_properties(), header
    )
    write_atomic(path, data)
