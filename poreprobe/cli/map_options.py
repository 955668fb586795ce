"""Options of the density-map check, shared by ``mapcheck`` and ``check --density-map``."""

from __future__ import annotations

from poreprobe.cli.outputs import InputPath
from poreprobe.errors import InputError

#: Defaults repeated here so that ``--help`` needs no computing module.
CONTOUR_RMS = 3.0
LUMEN_MARGIN_A = 1.0
MIN_SUPPORT = 0.5


def add_map_args(parser, *, with_file: bool) -> None:
    """--contour, --resolution-A, --lumen-margin-A, --min-support (and --density-map)."""
    g = parser.add_argument_group("density map")
    if with_file:
        g.add_argument(
            "--density-map",
            metavar="FILE",
            type=InputPath,
            help="also check the model against its CCP4/MRC density map (.map, .mrc, .ccp4, "
            "optionally .gz; needs --resolution-A)",
        )
    g.add_argument(
        "--contour",
        type=float,
        metavar="LEVEL",
        help="density threshold in map units (default: map mean + "
        f"{CONTOUR_RMS:g} RMS over the whole map)",
    )
    g.add_argument(
        "--resolution-A",
        type=float,
        metavar="D",
        help="resolution of the map (Å): width of the model's expected density",
    )
    g.add_argument(
        "--lumen-margin-A",
        type=float,
        default=LUMEN_MARGIN_A,
        help="unmodelled density is searched within the profile radius plus this (Å, "
        f"default {LUMEN_MARGIN_A:g})",
    )
    g.add_argument(
        "--min-support",
        type=float,
        default=MIN_SUPPORT,
        help="side chains whose support score is below this are flagged (dimensionless, "
        f"1 = as supported as the model predicts; default {MIN_SUPPORT:g})",
    )


def map_check_from_args(args, map_path, atoms, profile, lining=None):
    """Read the map and run the check as the options ask."""
    from poreprobe.density.mapcheck import map_check
    from poreprobe.io.density_map import read_density_map

    if args.resolution_A is None:
        raise InputError("the density map check needs --resolution-A (the map's resolution, Å)")
    dmap = read_density_map(map_path)
    return map_check(
        dmap,
        atoms,
        profile,
        resolution_A=args.resolution_A,
        lining=lining,
        contour=args.contour,
        lumen_margin_A=args.lumen_margin_A,
        min_support=args.min_support,
    )


def map_csv(result, path=None) -> str:
    """CSV of the per-plane model and map radii and the centre-line density."""
    from poreprobe.io.export import to_csv

    rows = (
        (float(s), float(m), float(r), float(c), bool(x))
        for s, m, r, c, x in zip(
            result.s_A,
            result.model_radius_A,
            result.map_radius_A,
            result.centre_line_rms,
            result.disagree,
            strict=True,
        )
    )
    comments = (
        f"poreprobe {result.version} map check of {result.source} against "
        f"{result.map_info.get('source', '')}",
        f"contour {result.contour:.6g} map units ({result.contour_rule}); resolution "
        f"{result.resolution_A:g} Å; model-based estimates; lengths in Å",
        "map_radius_A: largest sphere centred in the plane free of density above the contour",
    )
    return to_csv(
        ("s_A", "model_radius_A", "map_radius_A", "centre_line_rms", "outside_band"),
        rows,
        path,
        comments,
    )


def save_map_figure(args, result) -> None:
    """Draw the map check figure to --figure."""
    from poreprobe.cli.common import say
    from poreprobe.figures.map_panel import plot_map_check
    from poreprobe.figures.style import save_figure

    fig = plot_map_check(result, width_mm=args.width_mm, height_mm=args.height_mm)
    save_figure(fig, args.figure, dpi=args.dpi)
    say(args, f"figure: {args.figure}")
