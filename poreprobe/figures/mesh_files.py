"""Triangle meshes as files (ASCII PLY, Wavefront OBJ, glTF binary) and their radius colours.

Shared by the pore surface (:mod:`poreprobe.figures.viewer_mesh`) and the pore tube
(:mod:`poreprobe.figures.viewer_tube`); :func:`poreprobe.figures.viewer_mesh.write_mesh`
writes either. PLY and OBJ are written here; glTF binary with trimesh.
"""

from __future__ import annotations

import io
from collections.abc import Mapping, Sequence

import numpy as np

from poreprobe.errors import InputError

#: Mesh file formats by suffix.
MESH_SUFFIXES = (".ply", ".obj", ".glb")


def radius_mesh_colors(radius_A, radius_range_A=None) -> np.ndarray:  # noqa: N802
    """RGB colours (uint8, (n, 3)) of per-vertex radii on the figures' radius map.

    Parameters
    ----------
    radius_A : array of float
        Radius per vertex (Å); NaN (open) is grey.
    radius_range_A : (float, float), optional
        Radii at the two ends of the map (default: the data's range).
    """
    from poreprobe.figures.style import radius_colors

    radius_A = np.asarray(radius_A, dtype=float)
    if radius_range_A is None:
        finite = radius_A[np.isfinite(radius_A)]
        if finite.size == 0:
            raise InputError("no vertex has a local radius to colour by")
        lo, hi = float(finite.min()), float(finite.max())
        hi = hi if hi > lo else lo + 1.0
    else:
        if len(radius_range_A) != 2:
            raise InputError(f"radius_range_A must be (low, high), got {radius_range_A!r}")
        lo, hi = (float(v) for v in radius_range_A)
    return radius_colors(radius_A, vmin_A=lo, vmax_A=hi)


def text_rows(arr: np.ndarray, fmt: str) -> str:
    """Rows of an array as text, one line each (``numpy.savetxt`` format)."""
    buf = io.StringIO()
    np.savetxt(buf, arr, fmt=fmt)
    return buf.getvalue()


def ply_text(
    vertices_A: np.ndarray,
    normals: np.ndarray,
    faces: np.ndarray,
    colors: np.ndarray | None,
    properties: Mapping[str, np.ndarray],
    header: Sequence[str],
) -> str:
    """ASCII PLY: vertices with normal, optional colour and float properties; triangles.

    ``properties`` maps a property name to one float per vertex; ``header`` lines
    become PLY comments.
    """
    n, m = len(vertices_A), len(faces)
    lines = [
        "ply",
        "format ascii 1.0",
        *[f"comment {h}" for h in header],
        f"element vertex {n}",
        *[f"property float {p}" for p in ("x", "y", "z", "nx", "ny", "nz")],
    ]
    cols = [vertices_A, normals]
    fmt = ["%.4f"] * 6
    if colors is not None:
        lines += ["property uchar red", "property uchar green", "property uchar blue"]
        cols.append(colors)
        fmt += ["%d"] * 3
    lines += [f"property float {name}" for name in properties]
    lines += [f"element face {m}", "property list uchar int vertex_indices", "end_header"]
    cols += [np.asarray(v, dtype=np.float64)[:, None] for v in properties.values()]
    fmt += ["%.4f"] * len(properties)
    table = np.hstack([np.asarray(c, dtype=np.float64) for c in cols])
    face_rows = np.column_stack([np.full(m, 3), faces])
    return "\n".join(lines) + "\n" + text_rows(table, " ".join(fmt)) + text_rows(face_rows, "%d")


def obj_text(vertices_A, normals, faces, colors, header: Sequence[str]) -> str:
    """Wavefront OBJ with vertex normals; colours as three floats (0 to 1) after x y z."""
    lines = [f"# {h}" for h in header]
    if colors is not None:
        vtable = np.hstack([vertices_A, colors / 255.0])
        vtext = text_rows(vtable, "v %.4f %.4f %.4f %.4f %.4f %.4f")
    else:
        vtext = text_rows(vertices_A, "v %.4f %.4f %.4f")
    ntext = text_rows(normals, "vn %.4f %.4f %.4f")
    f = np.asarray(faces) + 1
    ftext = text_rows(
        np.column_stack([f[:, 0], f[:, 0], f[:, 1], f[:, 1], f[:, 2], f[:, 2]]),
        "f %d//%d %d//%d %d//%d",
    )
    return "\n".join(lines) + "\n" + vtext + ntext + ftext


def glb_bytes(vertices_A, normals, faces, colors, header: Sequence[str]) -> bytes:
    """glTF binary of one triangle mesh (one unit = 1 Å), with ``header`` in its extras."""
    import trimesh

    rgba = None if colors is None else np.column_stack([colors, np.full(len(colors), 255)])
    mesh = trimesh.Trimesh(
        vertices=vertices_A, faces=faces, vertex_normals=normals, vertex_colors=rgba, process=False
    )
    mesh.metadata["poreprobe"] = {"description": list(header), "length_unit": "angstrom"}
    return trimesh.Scene(mesh).export(file_type="glb")


def mesh_file_data(
    suffix: str,
    vertices_A,
    normals,
    faces,
    colors,
    properties: Mapping[str, np.ndarray],
    header: Sequence[str],
) -> str | bytes:
    """The content of a mesh file of the given suffix (``.ply``, ``.obj`` or ``.glb``).

    ``properties`` (one float per vertex) are written to PLY only; the other formats
    have no place for them.
    """
    if suffix == ".ply":
        return ply_text(vertices_A, normals, faces, colors, properties, header)
    if suffix == ".obj":
        return obj_text(vertices_A, normals, faces, colors, header)
    if suffix == ".glb":
        return glb_bytes(vertices_A, normals, faces, colors, header)
    raise InputError(f"mesh file suffix must be one of {', '.join(MESH_SUFFIXES)}, got {suffix!r}")
