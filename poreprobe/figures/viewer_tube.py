"""The pore as a tube mesh along its centre line, for viewers that show surfaces.

Around each centre-line point (:class:`~poreprobe.figures.viewer_line.CenterLine`)
a ring of vertices lies in the plane across the pore axis, at exactly the profile
radius from the point; consecutive rings are joined by triangles. Where the profile
is open (no enclosed sphere) the tube breaks, and its ends stay open (the mouths).
:func:`poreprobe.figures.viewer_mesh.write_mesh` writes it as ASCII PLY (with the
axial position and radius per vertex), OBJ or glTF binary (``.glb``, with trimesh).
Coordinates are the input model's Cartesian frame in Å (in a glTF file one unit is
one Å), so the tube overlays the model without moving anything.

All values are model-based estimates that depend on the radius set.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from poreprobe._validate import check_int, check_range
from poreprobe._version import __version__
from poreprobe.errors import InputError
from poreprobe.figures.viewer_line import CenterLine

#: Vertices per ring unless asked otherwise.
DEFAULT_TUBE_SIDES = 32
#: Consecutive points further apart than this many median steps start a new piece.
_BREAK_STEPS = 1.5


@dataclass(frozen=True)
class PoreTube:
    """A tube of triangles whose cross-sections are the profile's circles.

    Attributes
    ----------
    vertices_A : ndarray of shape (n, 3)
        Vertex positions in the model's Cartesian frame (Å).
    faces : ndarray of int, shape (m, 3)
        Triangles (indices into ``vertices_A``), wound so normals point outwards.
    normals : ndarray of shape (n, 3)
        Unit vectors from the ring's centre to the vertex (across the axis).
    point : ndarray of int, shape (n,)
        Index of the centre-line point whose ring holds the vertex.
    s_A, radius_A : ndarray of shape (n,)
        Axial position and pore radius of that point (Å).
    n_sides : int
        Vertices per ring.
    radius_set, source, version : str
    """

    vertices_A: np.ndarray
    faces: np.ndarray
    normals: np.ndarray
    point: np.ndarray
    s_A: np.ndarray
    radius_A: np.ndarray
    n_sides: int
    radius_set: str = ""
    source: str = ""
    version: str = field(default=__version__)

    def __post_init__(self):
        for name in ("vertices_A", "faces", "normals", "point", "s_A", "radius_A"):
            getattr(self, name).setflags(write=False)

    @property
    def color_radius_A(self) -> np.ndarray:  # noqa: N802
        """The radius each vertex is coloured by: its ring's pore radius."""
        return self.radius_A

    def vertex_properties(self) -> dict[str, np.ndarray]:
        """Per-vertex floats written to PLY: ``s_A`` and ``radius_A`` of the ring."""
        return {"s_A": self.s_A, "radius_A": self.radius_A}

    def describe(self) -> list[str]:
        """Header lines of a mesh file: what the tube is, radius set, frame."""
        return [
            f"poreprobe {self.version}: pore tube, each ring a profile circle (largest "
            "empty sphere in a plane across the pore axis) at its centre-line point",
            f"model-based estimate; radius set {self.radius_set}; coordinates in angstrom "
            f"in the frame of {self.source or 'the input model'}",
            "s_A: axial position (A); radius_A: pore radius of the ring (A)",
        ]

    def to_dict(self) -> dict:
        return {
            "n_vertices": len(self.vertices_A),
            "n_faces": len(self.faces),
            "n_sides": self.n_sides,
            "radius_set": self.radius_set,
            "source": self.source,
            "version": self.version,
        }


def _across(direction: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Two unit vectors u, v across ``direction`` with (u, v, direction) right-handed."""
    e = direction / np.linalg.norm(direction)
    ref = np.eye(3)[int(np.argmin(np.abs(e)))]
    u = np.cross(e, ref)
    u /= np.linalg.norm(u)
    return u, np.cross(e, u)


def _pieces(s_A: np.ndarray) -> list[np.ndarray]:
    """Index runs of consecutive points (a gap wider than 1.5 median steps breaks a run)."""
    if len(s_A) < 2:
        return []
    gaps = np.diff(s_A)
    breaks = np.flatnonzero(gaps > _BREAK_STEPS * float(np.median(gaps))) + 1
    return [run for run in np.split(np.arange(len(s_A)), breaks) if len(run) >= 2]


def pore_tube(line: CenterLine, *, n_sides: int = DEFAULT_TUBE_SIDES) -> PoreTube:
    """The tube whose ring at each centre-line point has that point's pore radius.

    Parameters
    ----------
    line : CenterLine
        From :func:`poreprobe.center_line`.
    n_sides : int
        Vertices per ring (6 to 256).

    Returns
    -------
    PoreTube

    Raises
    ------
    InputError
        If no two consecutive points make a piece of tube.
    """
    if not isinstance(line, CenterLine):
        raise InputError(f"line must be a CenterLine, got {type(line).__name__}")
    n_sides = int(check_range(check_int(n_sides, "n_sides"), "n_sides", 6, 256))
    pieces = _pieces(np.asarray(line.s_A, dtype=float))
    if not pieces:
        raise InputError("the centre line needs two consecutive points to make a tube")
    u, v = _across(np.asarray(line.axis.direction, dtype=float))
    theta = 2 * np.pi * np.arange(n_sides) / n_sides
    ring = np.cos(theta)[:, None] * u + np.sin(theta)[:, None] * v  # (n_sides, 3)
    points = np.concatenate(pieces)
    verts = line.center_A[points][:, None, :] + line.radius_A[points][:, None, None] * ring
    faces, start = [], 0
    j = np.arange(n_sides)
    jn = (j + 1) % n_sides
    for run in pieces:
        for k in range(len(run) - 1):
            a, b = start + k * n_sides, start + (k + 1) * n_sides
            faces.append(np.column_stack([a + j, a + jn, b + j]))
            faces.append(np.column_stack([a + jn, b + jn, b + j]))
        start += len(run) * n_sides
    point = np.repeat(points, n_sides)
    return PoreTube(
        vertices_A=verts.reshape(-1, 3),
        faces=np.concatenate(faces).astype(np.int64),
        normals=np.tile(ring, (len(points), 1)),
        point=point,
        s_A=np.asarray(line.s_A, dtype=float)[point],
        radius_A=np.asarray(line.radius_A, dtype=float)[point],
        n_sides=n_sides,
        radius_set=line.radius_set,
        source=line.source,
    )
