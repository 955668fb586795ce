"""3-D exports: clearance map, pore surface mesh and centre line, read back and checked."""

from __future__ import annotations

import gemmi
import numpy as np
import pytest
import trimesh

import poreprobe
from poreprobe.cli.main import main
from poreprobe.errors import InputError, PoreNotFoundError
from poreprobe.figures import viewer_line, viewer_map, viewer_mesh
from poreprobe.geometry import synthetic
from poreprobe.geometry.kernel import AtomSpheres
from poreprobe.io.radii import atom_radii_A
from poreprobe.io.structure_writer import write_structure

SPACING_A = 0.5


def _rotation(seed: int) -> np.ndarray:
    q, r = np.linalg.qr(np.random.default_rng(seed).standard_normal((3, 3)))
    q = q * np.sign(np.diag(r))
    return q if np.linalg.det(q) > 0 else -q


def _placed(atoms, rotation, shift):
    """Move a model built around the z axis to a general pose; return atoms and its axis."""
    moved = atoms.with_coords(atoms.coords_A @ rotation.T + shift)
    return moved, poreprobe.PoreAxis(shift, rotation @ [0.0, 0.0, 1.0], "user")


class Case:
    """Atoms, radii, profile and clearance grid of one invented pore."""

    def __init__(self, ring_radii, ring_z, *, seed=3, shift=(11.3, -4.2, 7.9)):
        atoms = synthetic.ring_stack(ring_radii, ring_z, atoms_per_ring=24, chains=4)
        self.atoms, self.axis = _placed(atoms, _rotation(seed), np.array(shift))
        self.radii_A = atom_radii_A(self.atoms)
        self.spheres = AtomSpheres(self.atoms.coords_A, self.radii_A)
        self.profile = poreprobe.radius_profile(
            self.atoms, self.axis, radii="bondi", step_A=0.5, margin_A=2.0, max_radius_A=8.0
        )
        self.grid = viewer_map.clearance_grid(
            self.atoms, self.profile, radii_A=self.radii_A, spacing_A=SPACING_A
        )


@pytest.fixture(scope="module")
def hourglass():
    """Waist radius 2.3 Å on the profile (ring radius 4 Å minus carbon 1.7 Å, Bondi 1964)."""
    z = np.arange(-8, 8.1, 1.0)
    return Case(4.0 + 4.0 * (z / 8) ** 2, z)


@pytest.fixture(scope="module")
def cavity():
    """A wide chamber closed at both ends by narrow rings (ring radius 3.2 Å)."""
    z = np.arange(-6, 6.1, 1.0)
    radii = np.where(np.abs(z) >= 5, 3.2, 7.0)
    return Case(radii, z, seed=5, shift=(-3.0, 2.0, 1.0))


# --------------------------------------------------------------------------- map


def _read_map(path):
    m = gemmi.read_ccp4_map(str(path))
    n = np.array([m.header_i32(w) for w in (1, 2, 3)])
    start = np.array([m.header_i32(w) for w in (5, 6, 7)])
    sampling = np.array([m.header_i32(w) for w in (8, 9, 10)])
    cell = np.array([m.header_float(w) for w in (11, 12, 13)])
    axes = [m.header_i32(w) for w in (17, 18, 19)]
    origin = np.array([m.header_float(w) for w in (50, 51, 52)])
    values = np.array(m.grid, copy=True)
    return m, {
        "n": n,
        "start": start,
        "sampling": sampling,
        "cell": cell,
        "axes": axes,
        "origin": origin,
        "values": values,
    }


def test_map_value_at_grid_point_equals_clearance_there(hourglass, tmp_path):
    path = tmp_path / "pore.map"
    viewer_map.write_map(hourglass.grid, path)
    _, h = _read_map(path)
    assert h["axes"] == [1, 2, 3] and np.all(h["origin"] == 0)
    np.testing.assert_array_equal(h["n"], h["values"].shape)
    step = h["cell"] / h["sampling"]
    np.testing.assert_allclose(step, SPACING_A, rtol=1e-6)
    rng = np.random.default_rng(0)
    idx = np.column_stack([rng.integers(0, n, 400) for n in h["n"]])
    positions = (h["start"] + idx) * step  # where a viewer puts each voxel
    direct = hourglass.spheres.clearance_A(positions)
    np.testing.assert_allclose(h["values"][tuple(idx.T)], direct, rtol=1e-6, atol=1e-5)


def test_map_puts_pore_voxels_inside_the_pore(hourglass, tmp_path):
    path = tmp_path / "pore.mrc"
    viewer_map.write_map(hourglass.grid, path)
    m, _ = _read_map(path)
    m.setup(float("nan"))  # gemmi's own placement of the box
    prof = hourglass.profile
    ok = np.isfinite(prof.radius_A)
    at_centres = np.array([m.grid.interpolate_value(gemmi.Position(*c)) for c in prof.center_A[ok]])
    # the clearance is 1-Lipschitz: trilinear values lie within a grid diagonal of the radius
    np.testing.assert_allclose(at_centres, prof.radius_A[ok], atol=SPACING_A * np.sqrt(3))
    assert np.all(at_centres > 1.0)  # open space, not inside atoms
    at_atoms = np.array(
        [m.grid.interpolate_value(gemmi.Position(*a)) for a in hourglass.atoms.coords_A[::7]]
    )
    # inside an atom the clearance is -r at its centre (carbon 1.7 Å, Bondi 1964)
    np.testing.assert_allclose(at_atoms, -1.7, atol=SPACING_A * np.sqrt(3))


@pytest.mark.parametrize("steps", [(3, -2, 5), (-7, 0, 1)])
def test_map_moves_with_the_model(steps):
    """Rigid-motion property: moving the model by whole grid steps moves the box by
    exactly those steps and leaves every value unchanged."""
    z = np.arange(-6, 6.1, 1.0)
    atoms = synthetic.ring_stack(4.0 + 3.0 * (z / 6) ** 2, z, atoms_per_ring=16)
    shift = np.array(steps) * SPACING_A
    grids = []
    for offset in (np.zeros(3), shift):
        moved = atoms.with_coords(atoms.coords_A + offset)
        axis = poreprobe.PoreAxis(offset, [0.0, 0.0, 1.0], "user")
        prof = poreprobe.radius_profile(moved, axis, step_A=0.5, margin_A=1.0)
        grids.append(viewer_map.clearance_grid(moved, prof, spacing_A=SPACING_A))
    np.testing.assert_array_equal(grids[1].start - grids[0].start, steps)
    np.testing.assert_allclose(grids[1].values_A, grids[0].values_A, atol=1e-9)


def test_map_file_name_and_grid_size_are_checked(hourglass, tmp_path):
    with pytest.raises(InputError, match="map file must end in"):
        viewer_map.write_map(hourglass.grid, tmp_path / "pore.txt")
    with pytest.raises(InputError, match="spacing_A must be between"):
        viewer_map.clearance_grid(hourglass.atoms, hourglass.profile, spacing_A=0.0)
    with pytest.raises(InputError, match="use a larger spacing_A"):
        viewer_map.clearance_grid(
            hourglass.atoms, hourglass.profile, spacing_A=0.05, region_radius_A=60.0
        )


def test_reach_map_equals_the_reach_field_where_the_grids_coincide(tmp_path):
    """Axis along z through the origin: the field's voxels are Cartesian grid points."""
    z = np.arange(-8, 8.1, 1.0)
    atoms = synthetic.ring_stack(4.0 + 4.0 * (z / 8) ** 2, z, atoms_per_ring=24, chains=4)
    axis = poreprobe.PoreAxis([0.0, 0.0, 0.0], [0.0, 0.0, 1.0], "user")
    field = poreprobe.reach_field(atoms, axis, spacing_A=SPACING_A, pore_radius_A=9.0)
    path = tmp_path / "reach.map"
    viewer_map.write_map(viewer_map.reach_grid(field), path)
    _, h = _read_map(path)
    step = h["cell"] / h["sampling"]
    voxels = np.argwhere(field.inside & np.isfinite(field.reach_A))[::11]
    xyz = field.index_to_xyz(voxels)
    index = np.rint(xyz / step).astype(np.int64) - h["start"]
    np.testing.assert_allclose(index * step + h["start"] * step, xyz, atol=1e-9)
    np.testing.assert_allclose(
        h["values"][tuple(index.T)], field.reach_A[tuple(voxels.T)], atol=1e-5
    )
    assert len(voxels) > 100


def test_reach_map_shows_how_far_each_probe_gets_from_the_entry(hourglass, tmp_path):
    """General pose: {reach >= p} reaches past the 2.3 Å waist only for p below it."""
    field = poreprobe.reach_field(
        hourglass.atoms,
        hourglass.axis,
        radii_A=hourglass.radii_A,
        spacing_A=SPACING_A,
        pore_radius_A=9.0,
        from_end="low",
    )
    path = tmp_path / "reach.ccp4"
    viewer_map.write_map(viewer_map.reach_grid(field), path)
    _, h = _read_map(path)
    step = h["cell"] / h["sampling"]
    waist = hourglass.profile.min_radius_A
    for probe, passes in ((waist - 0.5, True), (waist + 0.5, False)):
        idx = np.argwhere(h["values"] >= probe)
        s = hourglass.axis.s_A((h["start"] + idx) * step)
        assert s.min() < -6  # in from the low (entry) end
        assert bool(s.max() > 6) == passes  # through the waist or not
        # a probe centre only sits where it fits: clearance >= p, to interpolation error
        c = hourglass.spheres.clearance_A((h["start"] + idx) * step)
        assert c.min() >= probe - SPACING_A


# --------------------------------------------------------------------------- mesh


def _components(faces):
    """Connected components of a triangle mesh (sets of vertex indices)."""
    from scipy.sparse import coo_matrix
    from scipy.sparse.csgraph import connected_components

    f = np.asarray(faces)
    rows = np.concatenate([f[:, 0], f[:, 1], f[:, 2]])
    cols = np.concatenate([f[:, 1], f[:, 2], f[:, 0]])
    n = f.max() + 1
    return connected_components(coo_matrix((np.ones(len(rows)), (rows, cols)), (n, n)))


@pytest.mark.parametrize("probe_A", [0.0, 1.0, 2.0, 3.0])
def test_mesh_vertices_lie_at_clearance_equal_to_probe(hourglass, probe_A):
    surface = viewer_mesh.pore_surface(hourglass.grid, hourglass.profile, probe_radius_A=probe_A)
    c = hourglass.spheres.clearance_A(surface.vertices_A)
    assert np.max(np.abs(c - probe_A)) <= SPACING_A
    assert np.median(np.abs(c - probe_A)) < 0.1 * SPACING_A


def test_mesh_is_open_only_at_the_mouths_when_the_probe_passes(hourglass):
    surface = viewer_mesh.pore_surface(hourglass.grid, hourglass.profile, probe_radius_A=1.5)
    edges = surface.boundary_edges()
    s_open = surface.s_A[edges.ravel()]
    s_lo, s_hi = hourglass.profile.s_A[0], hourglass.profile.s_A[-1]
    assert len(edges) > 0
    assert np.all((s_open < s_lo + SPACING_A * 2) | (s_open > s_hi - SPACING_A * 2))
    assert _components(surface.faces)[0] == 1  # one tube through the waist
    assert surface.s_A.min() < -5 and surface.s_A.max() > 5


def test_mesh_closes_where_the_pore_is_closed_to_the_probe(hourglass):
    probe = 3.0  # wider than the 2.3 Å waist
    assert hourglass.profile.min_radius_A < probe
    surface = viewer_mesh.pore_surface(hourglass.grid, hourglass.profile, probe_radius_A=probe)
    s_open = surface.s_A[surface.boundary_edges().ravel()]
    s_lo, s_hi = hourglass.profile.s_A[0], hourglass.profile.s_A[-1]
    assert np.all((s_open < s_lo + 2 * SPACING_A) | (s_open > s_hi - 2 * SPACING_A))
    n_parts, labels = _components(surface.faces)
    assert n_parts == 2  # two pockets, one from each end
    blocked = np.abs(surface.s_A) < 1.0  # no surface at the waist itself
    assert not blocked.any()
    sides = {np.sign(np.median(surface.s_A[labels == k])) for k in range(n_parts)}
    assert sides == {-1.0, 1.0}


def test_mesh_of_a_closed_cavity_is_watertight(cavity):
    probe = 2.5  # end rings admit 3.2 - 1.7 = 1.5 Å; the chamber 5.3 Å
    assert cavity.profile.min_radius_A < probe
    surface = viewer_mesh.pore_surface(cavity.grid, cavity.profile, probe_radius_A=probe)
    assert len(surface.boundary_edges()) == 0
    n_v, n_f = len(surface.vertices_A), len(surface.faces)
    n_e = 3 * n_f // 2
    assert n_v - n_e + n_f == 2  # a sphere-like closed surface
    c = cavity.spheres.clearance_A(surface.vertices_A)
    assert np.max(np.abs(c - probe)) <= SPACING_A


def test_mesh_needs_a_probe_that_fits(hourglass):
    with pytest.raises(PoreNotFoundError, match="admits a probe of radius 9"):
        viewer_mesh.pore_surface(hourglass.grid, hourglass.profile, probe_radius_A=9.0)
    with pytest.raises(InputError, match="probe_radius_A must be >= 0"):
        viewer_mesh.pore_surface(hourglass.grid, hourglass.profile, probe_radius_A=-1.0)


def _read_ply(path):
    lines = path.read_text().splitlines()
    end = lines.index("end_header")
    header = lines[:end]
    n_v = int(next(ln for ln in header if ln.startswith("element vertex")).split()[-1])
    n_f = int(next(ln for ln in header if ln.startswith("element face")).split()[-1])
    props = [ln.split()[-1] for ln in header if ln.startswith("property ") and "list" not in ln]
    vertices = np.loadtxt(lines[end + 1 : end + 1 + n_v], ndmin=2)
    faces = np.loadtxt(lines[end + 1 + n_v : end + 1 + n_v + n_f], dtype=np.int64, ndmin=2)
    return props, vertices, faces


def test_mesh_files_read_back(hourglass, tmp_path):
    from poreprobe.figures.style import radius_colors

    surface = viewer_mesh.pore_surface(hourglass.grid, hourglass.profile, probe_radius_A=1.0)
    ply, obj = tmp_path / "pore.ply", tmp_path / "pore.obj"
    viewer_mesh.write_mesh(surface, ply, radius_range_A=(2.0, 6.0))
    viewer_mesh.write_mesh(surface, obj, radius_range_A=(2.0, 6.0))
    props, v, f = _read_ply(ply)
    assert props == [
        "x",
        "y",
        "z",
        "nx",
        "ny",
        "nz",
        "red",
        "green",
        "blue",
        "s_A",
        "local_radius_A",
    ]
    np.testing.assert_allclose(v[:, :3], surface.vertices_A, atol=1e-4)
    np.testing.assert_array_equal(f[:, 0], 3)
    np.testing.assert_array_equal(f[:, 1:], surface.faces)
    colours = radius_colors(surface.local_radius_A, vmin_A=2.0, vmax_A=6.0)
    np.testing.assert_array_equal(v[:, 6:9], colours)
    np.testing.assert_allclose(v[:, 10], surface.local_radius_A, atol=1e-4)
    # the local radius is the profile radius at the vertex's axial position
    np.testing.assert_allclose(v[:, 9], hourglass.axis.s_A(surface.vertices_A), atol=1e-3)
    text = obj.read_text().splitlines()
    vs = np.array([ln.split()[1:] for ln in text if ln.startswith("v ")], dtype=float)
    fs = np.array(
        [[int(t.split("//")[0]) for t in ln.split()[1:]] for ln in text if ln.startswith("f ")]
    )
    np.testing.assert_allclose(vs[:, :3], surface.vertices_A, atol=1e-4)
    np.testing.assert_allclose(vs[:, 3:], colours / 255.0, atol=1e-4)
    np.testing.assert_array_equal(fs - 1, surface.faces)
    viewer_mesh.write_mesh(surface, ply, color_by_radius=False)
    assert _read_ply(ply)[0] == ["x", "y", "z", "nx", "ny", "nz", "s_A", "local_radius_A"]


def test_mesh_as_glb_holds_the_same_triangles(hourglass, tmp_path):
    surface = viewer_mesh.pore_surface(hourglass.grid, hourglass.profile, probe_radius_A=1.0)
    path = tmp_path / "pore.glb"
    viewer_mesh.write_mesh(surface, path)
    mesh = trimesh.load(path, force="mesh", process=False)
    np.testing.assert_allclose(mesh.vertices, surface.vertices_A, atol=1e-4)  # float32
    np.testing.assert_array_equal(mesh.faces, surface.faces)


# --------------------------------------------------------------------------- centre line


def test_center_line_mmcif_is_a_table_of_points_equal_to_the_profile(hourglass, tmp_path):
    prof = hourglass.profile
    line = viewer_line.center_line(hourglass.atoms, prof, radii_A=hourglass.radii_A)
    path = tmp_path / "centre.cif"
    viewer_line.write_center_line(line, path)
    ok = np.isfinite(prof.radius_A)
    doc = gemmi.cif.read(str(path))
    block = doc.sole_block()
    table = block.find(
        "_poreprobe_center_line_point.",
        ["id", "s", "center_x", "center_y", "center_z", "radius", "lining"],
    )
    assert len(table) == ok.sum()
    s = np.array([float(v) for v in table.column(1)])
    radius = np.array([float(v) for v in table.column(5)])
    xyz = np.array([[float(table.column(k)[i]) for k in (2, 3, 4)] for i in range(len(table))])
    np.testing.assert_allclose(s, prof.s_A[ok], atol=1e-4)
    np.testing.assert_allclose(radius, prof.radius_A[ok], atol=1e-4)
    np.testing.assert_allclose(xyz, prof.center_A[ok], atol=1e-4)
    assert [int(v) for v in table.column(0)] == list(range(1, ok.sum() + 1))
    assert block.find_value("_poreprobe_center_line.length_unit") == "angstrom"
    assert gemmi.cif.as_string(block.find_value("_poreprobe_center_line.radius_set")) == "bondi"
    assert int(block.find_value("_poreprobe_center_line.number_of_points")) == ok.sum()
    axis_dir = [
        float(block.find_value(f"_poreprobe_center_line.axis_direction_{c}")) for c in "xyz"
    ]
    np.testing.assert_allclose(axis_dir, prof.axis.direction, atol=1e-6)
    # the narrowest point is lined by the residues the profile reports there
    k = int(np.argmin(radius))
    lining = gemmi.cif.as_string(table.column(6)[k]).split()
    assert set(lining) == set(prof.min_residues)
    # poreprobe's own data only: no atoms, no other category
    assert len(doc) == 1
    assert not block.find_mmcif_category("_atom_site.")
    prefixes = {
        item.pair[0].split(".")[0] if item.pair else item.loop.tags[0].split(".")[0]
        for item in block
    }
    assert prefixes == {"_poreprobe_center_line", "_poreprobe_center_line_point"}


def test_center_line_needs_a_line_and_a_cif_name(hourglass, tmp_path):
    line = viewer_line.center_line(hourglass.atoms, hourglass.profile, radii_A=hourglass.radii_A)
    with pytest.raises(InputError, match="must end in"):
        viewer_line.write_center_line(line, tmp_path / "centre.pdb")
    with pytest.raises(InputError, match="CenterLine"):
        viewer_line.write_center_line({"s_A": []}, tmp_path / "centre.cif")
    assert list(tmp_path.iterdir()) == []


def test_center_line_lining_matches_a_direct_search(hourglass):
    line = viewer_line.center_line(
        hourglass.atoms, hourglass.profile, radii_A=hourglass.radii_A, contact_tol_A=0.5
    )
    labels = hourglass.atoms.residue_labels()
    for k in (0, len(line.s_A) // 2, len(line.s_A) - 1):
        gap = (
            np.linalg.norm(hourglass.atoms.coords_A - line.center_A[k], axis=1) - hourglass.radii_A
        )
        assert set(line.lining[k]) == set(labels[gap <= line.radius_A[k] + 0.5])


# --------------------------------------------------------------------------- command line


@pytest.fixture(scope="module")
def model_file(tmp_path_factory):
    z = np.arange(-8, 8.1, 1.0)
    atoms = synthetic.ring_stack(4.0 + 4.0 * (z / 8) ** 2, z, atoms_per_ring=24, chains=4)
    path = tmp_path_factory.mktemp("model") / "hourglass.pdb"
    write_structure(atoms, path)
    return path


AXIS = ["--axis-point", "0", "0", "0", "--axis-direction", "0", "0", "1"]


@pytest.mark.parametrize("field", ["reach", "clearance"])
def test_export_command_writes_all_three(model_file, tmp_path, capsys, field):
    out = {
        k: tmp_path / name
        for k, name in [("map", "p.ccp4"), ("mesh", "p.ply"), ("centerline", "p.cif")]
    }
    assert (
        main(
            [
                "export",
                str(model_file),
                *AXIS,
                "--map",
                str(out["map"]),
                "--map-field",
                field,
                "--mesh",
                str(out["mesh"]),
                "--probe-radius-A",
                "1.0",
                "--centerline",
                str(out["centerline"]),
            ]
        )
        == 0
    )
    text = capsys.readouterr().out
    assert "model-based estimate" in text and "centre-line points" in text
    assert f"p.ccp4: {field}" in text
    assert all(p.stat().st_size > 0 for p in out.values())
    m, h = _read_map(out["map"])
    assert m.header_float(11) / m.header_i32(8) == pytest.approx(0.5)
    # the narrowest point (ring radius 4 Å less carbon 1.7 Å) holds 2.3 Å in either field
    centre = np.rint(np.zeros(3) / 0.5).astype(int) - h["start"]
    assert h["values"][tuple(centre)] == pytest.approx(2.3, abs=0.05)


@pytest.mark.parametrize(
    "argv, message",
    [
        ([], "nothing to export"),
        (["--mesh", "{d}/p.ply"], "--mesh needs --probe-radius-A"),
        (["--map", "{d}/p.txt"], "--map file must end in"),
        (
            ["--map", "{d}/p.map", "--mesh", "{d}/p.ply", "--probe-radius-A", "9"],
            "admits a probe of radius 9",
        ),
        (["--map", "{d}/p.map", "--spacing-A", "-1"], "spacing_A must be between"),
    ],
)
def test_export_bad_input_is_one_line_exit_2_and_no_file(
    model_file, tmp_path, argv, message, capsys
):
    argv = [a.format(d=tmp_path) for a in argv]
    assert main(["export", str(model_file), *AXIS, "--quiet", *argv]) == 2
    err = capsys.readouterr().err
    assert err.startswith("poreprobe: error: ") and err.count("\n") == 1
    assert message in err
    assert list(tmp_path.iterdir()) == []  # not even the map before the mesh


@pytest.mark.parametrize("name", ["pore.ply", "pore.obj", "pore.glb"])
def test_export_command_writes_the_tube(model_file, tmp_path, capsys, name):
    path = tmp_path / name
    assert main(["export", str(model_file), *AXIS, "--tube", str(path)]) == 0
    assert f"{name}: tube of" in capsys.readouterr().out
    mesh = trimesh.load(path, force="mesh", process=False)
    # ring radius 4 Å less carbon 1.7 Å (Bondi 1964) at the waist, on the z axis here
    r = np.hypot(mesh.vertices[:, 0], mesh.vertices[:, 1])
    assert r.min() == pytest.approx(2.3, abs=0.05)


def test_export_tube_bad_suffix_is_one_line_and_no_file(model_file, tmp_path, capsys):
    argv = ["export", str(model_file), *AXIS, "--quiet", "--tube", str(tmp_path / "t.stl")]
    assert main(argv) == 2
    err = capsys.readouterr().err
    assert err.startswith("poreprobe: error: ") and err.count("\n") == 1
    assert "--tube file must end in .ply, .obj, .glb" in err
    assert list(tmp_path.iterdir()) == []
