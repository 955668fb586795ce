"""``poreprobe export``: the pore as a map, a surface and a centre line for molecular viewers."""

from __future__ import annotations

from dataclasses import replace

from poreprobe._validate import check_positive, check_range
from poreprobe.cli.common import (
    add_axis_args,
    add_profile_args,
    add_structure_args,
    radius_set_from_args,
    say,
)
from poreprobe.cli.profile import compute as compute_profile
from poreprobe.errors import InputError
from poreprobe.io.radii import atom_radii_A


def register(sub) -> None:
    p = sub.add_parser(
        "export",
        help="pore map (CCP4/MRC), surface (PLY/OBJ) and centre line (mmCIF) for molecular viewers",
        description="Write the pore in the model's own coordinates for any molecular viewer: "
        "the reach (or clearance) field as a CCP4/MRC map (its isosurface at "
        "level p bounds where the centre of a probe of radius p gets from the "
        "entry, or fits), the probe-centre surface for one probe radius as a PLY "
        "or OBJ mesh, and the profile's centre line as mmCIF. Model-based "
        "estimates: they depend on the radius set.",
    )
    add_structure_args(p)
    add_axis_args(p)
    add_profile_args(p)
    g = p.add_argument_group("exports (at least one)")
    g.add_argument(
        "--map", metavar="FILE", help="reach (or clearance) map, .map/.ccp4/.mrc (values in Å)"
    )
    g.add_argument(
        "--mesh",
        metavar="FILE",
        help="pore surface for --probe-radius-A, .ply or .obj (coordinates in Å)",
    )
    g.add_argument(
        "--centerline",
        metavar="FILE",
        help="centre line with radius and lining residues per point, .cif",
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
    o.add_argument(
        "--from",
        dest="from_end",
        choices=("low", "high"),
        default="low",
        help="end of the axis where probes enter, for the reach map (default low: the --entry end)",
    )
    o.add_argument(
        "--probe-radius-A",
        "--probe-radius",
        dest="probe_radius_A",
        type=float,
        metavar="P",
        help="probe radius for --mesh in Å (required with --mesh; "
        "0 gives the atoms' van der Waals surface)",
    )
    o.add_argument(
        "--spacing-A",
        type=float,
        default=0.5,
        help="grid spacing of the map and mesh in Å (default 0.5)",
    )
    o.add_argument(
        "--region-radius-A",
        type=float,
        default=None,
        help="radius in Å of the cylinder around the pore axis that the map and "
        "mesh cover (default: the widest enclosed profile sphere plus 2 Å)",
    )
    o.add_argument(
        "--no-mesh-colors",
        dest="mesh_colors",
        action="store_false",
        help="do not colour the mesh by the local pore radius",
    )
    o.add_argument(
        "--radius-range-A",
        type=float,
        nargs=2,
        metavar=("LOW", "HIGH"),
        help="radii (Å) at the two ends of the mesh colour map (default: the mesh's own range)",
    )
    o.add_argument(
        "--contact-tol-A",
        type=float,
        default=0.3,
        help="atoms within this distance (Å) of a profile sphere line it "
        "(centre line; default 0.3)",
    )
    o.add_argument(
        "--quiet", action="store_true", help="no summary, progress bars or warnings on the terminal"
    )
    p.set_defaults(func=run)


def _check_request(args) -> None:
    from poreprobe.figures.viewer_export import (
        CENTERLINE_SUFFIXES,
        MAP_SUFFIXES,
        MESH_SUFFIXES,
        check_suffix,
    )

    if not (args.map or args.mesh or args.centerline):
        raise InputError("nothing to export: give --map, --mesh and/or --centerline")
    check_range(args.spacing_A, "spacing_A", 0.05, 5.0)
    if args.region_radius_A is not None:
        check_positive(args.region_radius_A, "region_radius_A")
    if args.map:
        check_suffix(args.map, MAP_SUFFIXES, "--map")
    if args.mesh:
        check_suffix(args.mesh, MESH_SUFFIXES, "--mesh")
        if args.probe_radius_A is None:
            raise InputError("--mesh needs --probe-radius-A (the probe radius in Å)")
    if args.centerline:
        check_suffix(args.centerline, CENTERLINE_SUFFIXES, "--centerline")


def _reach_map(atoms, prof, radii_A, args):
    """The reach field around the pore, resampled onto a Cartesian grid."""
    from poreprobe.figures import viewer_export as ve
    from poreprobe.geometry.reach import reach_field

    region = (
        ve.default_region_radius_A(prof) if args.region_radius_A is None else args.region_radius_A
    )
    field = reach_field(
        atoms,
        prof.axis,
        radii_A=radii_A,
        spacing_A=args.spacing_A,
        from_end=args.from_end,
        pore_radius_A=region,
        max_probe_A=max(6.0, args.probe_radius_A or 0.0),
    )
    field = replace(field, radius_set=prof.radius_set, source=atoms.source)
    return ve.reach_grid(field, quiet=args.quiet)


def run(args) -> int:
    from poreprobe.figures import viewer_export as ve

    _check_request(args)
    atoms, _, prof = compute_profile(args)
    radii_A = atom_radii_A(atoms, radius_set_from_args(args))
    say(
        args,
        f"poreprobe {prof.version}: pore of {atoms.source} ({len(atoms)} atoms), "
        f"radius set {prof.radius_set}, narrowest: {prof.narrowest_text()} "
        "- a model-based estimate",
    )
    grid = map_grid = surface = line = None
    if args.mesh or (args.map and args.map_field == "clearance"):
        grid = ve.clearance_grid(
            atoms,
            prof,
            radii_A=radii_A,
            spacing_A=args.spacing_A,
            region_radius_A=args.region_radius_A,
            quiet=args.quiet,
        )
        map_grid = grid
    if args.map and args.map_field == "reach":
        map_grid = _reach_map(atoms, prof, radii_A, args)
    if args.mesh:
        surface = ve.pore_surface(grid, prof, probe_radius_A=args.probe_radius_A)
    if args.centerline:
        line = ve.center_line(atoms, prof, radii_A=radii_A, contact_tol_A=args.contact_tol_A)
    # everything is computed before the first file is written
    if args.map:
        ve.write_map(map_grid, args.map)
        what = (
            "reach from the " + args.from_end + " end" if map_grid.field == "reach" else "clearance"
        )
        say(
            args,
            f"{args.map}: {what} (Å) on {'x'.join(map(str, map_grid.shape))} points "
            f"every {map_grid.spacing_A:g} Å; the isosurface at level p bounds where "
            "the centre of a probe of radius p "
            + ("gets from the entry" if map_grid.field == "reach" else "fits"),
        )
    if surface is not None:
        ve.write_mesh(
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
    if line is not None:
        ve.write_center_line(line, args.centerline)
        say(args, f"{args.centerline}: {len(line.s_A)} centre-line points")
    return 0
