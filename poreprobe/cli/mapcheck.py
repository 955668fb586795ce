"""``poreprobe mapcheck``: the model against its own density map at the pore."""

from __future__ import annotations

from poreprobe.cli import map_options as map_opts
from poreprobe.cli.common import (
    add_axis_args,
    add_figure_args,
    add_output_args,
    add_profile_args,
    add_structure_args,
    check_figure_path,
    load_model,
    say,
)
from poreprobe.cli.outputs import InputPath

SUMMARY = (
    "the model against its density map at the pore: unmodelled density, side-chain "
    "support, the pore radius in the map"
)


def register(sub) -> None:
    p = sub.add_parser(
        "mapcheck",
        help=SUMMARY,
        description="Puts a CCP4/MRC density map on the pore frame of the model's radius "
        "profile: blobs of density in the pore the model leaves out, support of the "
        "pore-lining side chains, and the pore radius measured in the map beside the "
        "model's. Model-based estimates, not measurements.",
    )
    add_structure_args(p)
    p.add_argument(
        "density_map",
        metavar="MAP",
        type=InputPath,
        help="CCP4/MRC map (.map, .mrc, .ccp4, .gz)",
    )
    add_axis_args(p)
    add_profile_args(p)
    map_opts.add_map_args(p, with_file=False)
    add_output_args(p)
    add_figure_args(p)
    p.set_defaults(func=run)


def run(args) -> int:
    from dataclasses import replace

    from poreprobe.errors import InputError
    from poreprobe.geometry.profile import radius_profile
    from poreprobe.io.density_map import _check_map_path
    from poreprobe.io.export import to_json

    check_figure_path(args)
    if args.resolution_A is None:
        raise InputError("mapcheck needs --resolution-A (the map's resolution, Å)")
    _check_map_path(args.density_map)
    atoms, rset, radii_A, axis = load_model(args)
    profile = replace(
        radius_profile(
            atoms,
            axis,
            radii_A=radii_A,
            step_A=args.step_A,
            margin_A=args.margin_A,
            max_radius_A=args.max_radius_A,
        ),
        radius_set=rset.name,
    )
    result = map_opts.map_check_from_args(args, args.density_map, atoms, profile)
    if args.json:
        to_json(result, args.json)
    if args.csv:
        map_opts.map_csv(result, args.csv)
    for line in result.report_lines():
        say(args, line)
    if args.figure:
        map_opts.save_map_figure(args, result)
    return 0
