"""The pore tube (PLY and glTF binary): every ring lies across the axis at the pore radius."""

from __future__ import annotations

import numpy as np
import pytest
import trimesh

import poreprobe
from poreprobe.errors import InputError
from poreprobe.figures import viewer_line, viewer_mesh, viewer_tube
from poreprobe.geometry import synthetic


def _rotation(seed: int) -> np.ndarray:
    q, r = np.linalg.qr(np.random.default_rng(seed).standard_normal((3, 3)))
    q = q * np.sign(np.diag(r))
    return q if np.linalg.det(q) > 0 else -q


@pytest.fixture(scope="module")
def pore():
    """An hourglass pore (waist 2.3 Å) in a general pose: atoms, profile and centre line."""
    z = np.arange(-8, 8.1, 1.0)
    atoms = synthetic.ring_stack(4.0 + 4.0 * (z / 8) ** 2, z, atoms_per_ring=24, chains=4)
    rot, shift = _rotation(7), np.array([5.0, -12.0, 3.5])
    atoms = atoms.with_coords(atoms.coords_A @ rot.T + shift)
    axis = poreprobe.PoreAxis(shift, rot @ [0.0, 0.0, 1.0], "user")
    prof = poreprobe.radius_profile(atoms, axis, step_A=0.5, margin_A=2.0, max_radius_A=8.0)
    return atoms, prof, poreprobe.center_line(atoms, prof)


def read_ascii_ply(path):
    """Vertex properties (name -> array) and triangles of an ASCII PLY file."""
    lines = path.read_text().splitlines()
    end = lines.index("end_header")
    header = lines[:end]
    assert header[:2] == ["ply", "format ascii 1.0"]
    n_v = n_f = 0
    names = []
    for line in header:
        words = line.split()
        if words[:2] == ["element", "vertex"]:
            n_v = int(words[2])
        elif words[:2] == ["element", "face"]:
            n_f = int(words[2])
        elif words[0] == "property" and words[1] != "list":
            names.append(words[2])
    table = np.loadtxt(lines[end + 1 : end + 1 + n_v], ndmin=2)
    faces = np.loadtxt(lines[end + 1 + n_v : end + 1 + n_v + n_f], dtype=np.int64, ndmin=2)
    assert np.all(faces[:, 0] == 3)
    return {name: table[:, k] for k, name in enumerate(names)}, faces[:, 1:]


def _check_rings(vertices, prof):
    """Each vertex sits in the plane of a profile point, at that point's radius from it."""
    ok = np.isfinite(prof.radius_A)
    s_points, centres, radii = prof.s_A[ok], prof.center_A[ok], prof.radius_A[ok]
    s = (vertices - prof.axis.point_A) @ prof.axis.direction
    k = np.abs(s[:, None] - s_points[None, :]).argmin(axis=1)
    np.testing.assert_allclose(s, s_points[k], atol=2e-4)  # in the plane across the axis
    dist = np.linalg.norm(vertices - centres[k], axis=1)
    np.testing.assert_allclose(dist, radii[k], atol=2e-4)
    return k


def test_tube_rings_are_the_profile_circles(pore):
    _, prof, line = pore
    tube = viewer_tube.pore_tube(line, n_sides=24)
    k = _check_rings(tube.vertices_A, prof)
    ok = np.isfinite(prof.radius_A)
    assert np.bincount(k, minlength=ok.sum()).tolist() == [24] * ok.sum()
    # triangles wound outwards: the face normal points away from the ring centres
    tri = tube.vertices_A[tube.faces]
    normal = np.cross(tri[:, 1] - tri[:, 0], tri[:, 2] - tri[:, 0])
    centre = line.center_A[tube.point[tube.faces[:, 0]]]
    assert np.all(np.einsum("ij,ij->i", normal, tri.mean(axis=1) - centre) > 0)


def test_tube_ply_reads_back_at_the_pore_radius(pore, tmp_path):
    _, prof, line = pore
    path = tmp_path / "tube.ply"
    viewer_mesh.write_mesh(viewer_tube.pore_tube(line), path)
    props, faces = read_ascii_ply(path)
    vertices = np.column_stack([props["x"], props["y"], props["z"]])
    k = _check_rings(vertices, prof)
    ok = np.isfinite(prof.radius_A)
    np.testing.assert_allclose(props["radius_A"], prof.radius_A[ok][k], atol=1e-4)
    np.testing.assert_allclose(props["s_A"], prof.s_A[ok][k], atol=1e-4)
    assert faces.max() < len(vertices)
    assert {"red", "green", "blue"} <= set(props)
    assert "model-based estimate" in path.read_text()[:2000]


def test_tube_glb_reads_back_at_the_pore_radius(pore, tmp_path):
    _, prof, line = pore
    tube = viewer_tube.pore_tube(line)
    path = tmp_path / "tube.glb"
    viewer_mesh.write_mesh(tube, path, radius_range_A=(2.0, 6.0))
    assert path.read_bytes()[:4] == b"glTF"
    mesh = trimesh.load(path, force="mesh", process=False)
    _check_rings(np.asarray(mesh.vertices), prof)
    assert len(mesh.faces) == len(tube.faces)
    assert mesh.visual.vertex_colors.shape == (len(tube.vertices_A), 4)


def test_tube_breaks_where_the_profile_is_open(pore):
    _, _, line = pore
    keep = np.ones(len(line.s_A), bool)
    keep[10:13] = False  # three planes open in the middle
    gapped = viewer_line.CenterLine(
        s_A=line.s_A[keep],
        center_A=line.center_A[keep],
        radius_A=line.radius_A[keep],
        lining=tuple(x for x, k in zip(line.lining, keep, strict=True) if k),
        contact_tol_A=line.contact_tol_A,
        axis=line.axis,
    )
    tube = viewer_tube.pore_tube(gapped, n_sides=8)
    # no triangle joins a ring before the gap to one after it
    s_face = tube.s_A[tube.faces]
    assert np.ptp(s_face, axis=1).max() <= 1.5 * np.median(np.diff(line.s_A)) + 1e-9
    assert len(tube.faces) == 2 * 8 * (keep.sum() - 2)


def test_tube_input_errors(pore, tmp_path):
    _, _, line = pore
    with pytest.raises(InputError, match="n_sides"):
        viewer_tube.pore_tube(line, n_sides=3)
    with pytest.raises(InputError, match="n_sides"):
        viewer_tube.pore_tube(line, n_sides=True)
    with pytest.raises(InputError, match="CenterLine"):
        viewer_tube.pore_tube(object())
    with pytest.raises(InputError, match="must end in"):
        viewer_mesh.write_mesh(viewer_tube.pore_tube(line), tmp_path / "tube.stl")
    assert list(tmp_path.iterdir()) == []
