"""``poreprobe export``: the pore as a map, a surface, a centre line and a tube for viewers."""

from __future__ import annotations

from dataclasses import replace

from poreprobe._validate import check_positive, check_range
from poreprobe.cli.common import (
    add_axis_args,
    add_entry_end_arg,
    add_grid_args,
    add_lining_distance_arg,
    add_probe_radius_arg,
    add_profile_args,
    add_structure_args,
    radius_set_from_args,
    say,
)
from poreprobe.cli.outputs import OutputPath
from poreprobe.cli.profile import compute as compute_profile
from poreprobe.errors import InputError
from poreprobe.io.radii import atom_radii_A


def register(sub) -> None:
    p = sub.add_parser(
        "export",
        help="pore map (CCP4/MRC), surface and tube (PLY/OBJ/glTF), centre line (mmCIF) "
        "for molecular viewers",
        description="Write the pore in the model's own coordinates for any molecular viewer: "
        "the reach (or clearance) field as a CCP4/MRC map (its isosurface at "
        "level p bounds where the centre of a probe of radius p gets from the "
        "entry, or fits), the probe-centre surface for one probe radius as a PLY "
        "or OBJ mesh, the profile's centre line as an mmCIF table of points, and "
        "the pore as a tube whose rings are the profile's circles (PLY or glTF "
        "binary). Model-based "
        "estimates: they depend on the radius set.",
    )
    add_structure_args(p)
    add_axis_args(p)
    add_profile_args(p)
    g = p.add_argument_group("exports (at least one)")
    g.add_argument(
        "--map",
        metavar="FILE",
        type=OutputPath,
        help="reach (or clearance) map, .map/.ccp4/.mrc (values in Å)",
    )
    g.add_argument(
        "--mesh",
        metavar="FILE",
        type=OutputPath,
        help="pore surface for --probe-radius-A, .ply, .obj or .glb (coordinates in Å)",
    )
    g.add_argument(
        "--centerline",
        metavar="FILE",
        type=OutputPath,
        help="centre line: a table of points (s, centre, radius, lining residues), .cif",
    )
    g.add_argument(
        "--tube",
        metavar="FILE",
        type=OutputPath,
        help="the pore as a tube mesh along the centre line, each ring at the pore "
        "radius, .ply, .obj or .glb (coordinates in Å)",
    )
    o = p.add_argument_group("export options")
    o.add_argument(
        "--map-field",
        choices=("reach", "clearance"),
        default="reach",
        help="what the map holds (Å): reach, the largest probe radius that gets "
        "there from the entry end (default), or clearance, the radius of the "
        "largest empty sphere centred there",
    )
    add_entry_end_arg(o)
    add_probe_radius_arg(
        o, purpose="for --mesh (required with --mesh; 0 gives the atoms' van der Waals surface)"
    )
    add_grid_args(o)
    o.add_argument(
        "--no-mesh-colors",
        dest="mesh_colors",
        action="store_false",
        help="do not colour the mesh and tube by the local pore radius",
    )
    o.add_argument(
        "--radius-range-A",
        type=float,
        nargs=2,
        metavar=("LOW", "HIGH"),
        help="radii (Å) at the two ends of the mesh and tube colour map (default: their own range)",
    )
    add_lining_distance_arg(o)
    o.add_argument(
        "--quiet", action="store_true", help="no summary, progress bars or warnings on the terminal"
    )
    p.set_defaults(func=run)


def _check_request(args) -> None:
    from poreprobe.figures.mesh_files import MESH_SUFFIXES
    from poreprobe.figures.viewer_line import CENTERLINE_SUFFIXES
    from poreprobe.figures.viewer_map import MAP_SUFFIXES
    from poreprobe.io.export import check_suffix

    if not (args.map or args.mesh or args.centerline or args.tube):
        raise InputError("nothing to export: give --map, --mesh, --centerline and/or --tube")
    check_range(args.spacing_A, "spacing_A", 0.05, 5.0)
    check_positive(args.search_radius_A, "search_radius_A")
    if args.map:
        check_suffix(args.map, MAP_SUFFIXES, "--map")
    if args.mesh:
        check_suffix(args.mesh, MESH_SUFFIXES, "--mesh")
        if args.probe_radius_A is None:
            raise InputError("--mesh needs --probe-radius-A (the probe radius in Å)")
    if args.centerline:
        check_suffix(args.centerline, CENTERLINE_SUFFIXES, "--centerline")
    if args.tube:
        check_suffix(args.tube, MESH_SUFFIXES, "--tube")


def _reach_map(atoms, prof, radii_A, args):
    """The reach field around the pore, resampled onto a Cartesian grid."""
    from poreprobe.figures import viewer_map
    from poreprobe.geometry.reach import reach_field

    region = args.search_radius_A
    field = reach_field(
        atoms,
        prof.axis,
        radii_A=radii_A,
        spacing_A=args.spacing_A,
        from_end=args.entry_end,
        pore_radius_A=region,
        max_probe_A=max(6.0, args.probe_radius_A or 0.0),
    )
    field = replace(field, radius_set=prof.radius_set, source=atoms.source)
    return viewer_map.reach_grid(field, quiet=args.quiet)


def run(args) -> int:
    from poreprobe.figures import viewer_line, viewer_map, viewer_mesh, viewer_tube

    _check_request(args)
    atoms, _, prof = compute_profile(args)
    radii_A = atom_radii_A(atoms, radius_set_from_args(args))
    say(
        args,
        f"poreprobe {prof.version}: pore of {atoms.source} ({len(atoms)} atoms), "
        f"radius set {prof.radius_set}, narrowest: {prof.narrowest_text()} "
        "- a model-based estimate",
    )
    grid = map_grid = surface = line = tube = None
    if args.mesh or (args.map and args.map_field == "clearance"):
        grid = viewer_map.clearance_grid(
            atoms,
            prof,
            radii_A=radii_A,
            spacing_A=args.spacing_A,
            region_radius_A=args.search_radius_A,
            quiet=args.quiet,
        )
        map_grid = grid
    if args.map and args.map_field == "reach":
        map_grid = _reach_map(atoms, prof, radii_A, args)
    if args.mesh:
        surface = viewer_mesh.pore_surface(grid, prof, probe_radius_A=args.probe_radius_A)
    if args.centerline or args.tube:
        line = viewer_line.center_line(
            atoms, prof, radii_A=radii_A, contact_tol_A=args.lining_distance_A
        )
    if args.tube:
        tube = viewer_tube.pore_tube(line)
    # everything is computed before the first file is written
    if args.map:
        viewer_map.write_map(map_grid, args.map)
        what = (
            "reach from the " + args.entry_end + " end"
            if map_grid.field == "reach"
            else "clearance"
        )
        say(
            args,
            f"{args.map}: {what} (Å) on {'x'.join(map(str, map_grid.shape))} points "
            f"every {map_grid.spacing_A:g} Å; the isosurface at level p bounds where "
            "the centre of a probe of radius p "
            + ("gets from the entry" if map_grid.field == "reach" else "fits"),
        )
    if surface is not None:
        viewer_mesh.write_mesh(
            surface, args.mesh, color_by_radius=args.mesh_colors, radius_range_A=args.radius_range_A
        )
        n_open = len(surface.boundary_edges())
        say(
            args,
            f"{args.mesh}: {len(surface.vertices_A)} vertices, {len(surface.faces)} "
            f"triangles for p = {surface.probe_radius_A:g} Å"
            + (
                f" ({n_open} open edges, where the pore meets the covered region)"
                if n_open
                else " (closed)"
            ),
        )
    if args.centerline:
        viewer_line.write_center_line(line, args.centerline)
        say(args, f"{args.centerline}: {len(line.s_A)} centre-line points")
    if tube is not None:
        viewer_mesh.write_mesh(
            tube, args.tube, color_by_radius=args.mesh_colors, radius_range_A=args.radius_range_A
        )
        say(
            args,
            f"{args.tube}: tube of {len(tube.vertices_A)} vertices, {len(tube.faces)} "
            f"triangles, {tube.n_sides} per ring at the pore radius",
        )
    return 0
