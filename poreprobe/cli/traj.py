"""``poreprobe traj``: pore radius profiles over the frames of a trajectory."""

from __future__ import annotations

import numpy as np

from poreprobe.cli.common import (
    add_axis_args,
    add_backend_args,
    add_entry_end_arg,
    add_figure_args,
    add_grid_args,
    add_output_args,
    add_probe_radius_arg,
    add_profile_args,
    add_structure_args,
    backend_from_args,
    check_figure_path,
    cleaning_from_args,
    radius_set_from_args,
    save_figure,
    say,
)
from poreprobe.cli.outputs import InputPath, OutputPath
from poreprobe.io.export import to_json
from poreprobe.scale.defaults import AXIS_MODES, DEFAULT_PERCENTILES, default_closing_threshold


def register(sub) -> None:
    p = sub.add_parser(
        "traj",
        help="radius profiles over trajectory frames or models, with statistics",
        description="Radius profile of every frame on one common grid along the pore axis, "
        "the narrowest radius per frame, statistics per level and the frames "
        "where the pore closes. Runs serially, on local processes or on a dask "
        "cluster. Model-based estimates: they depend on the radius set.",
    )
    p.add_argument(
        "structure",
        metavar="STRUCTURE",
        type=InputPath,
        help="topology or multi-model file (anything MDAnalysis reads: PDB, PSF, GRO, "
        "TPR, ...); its frames, or those of --trajectory, are profiled",
    )
    add_structure_args(p, positional=False, single_frame=False)
    g = p.add_argument_group("frames")
    g.add_argument(
        "--frame-start",
        type=int,
        default=None,
        metavar="N",
        help="first frame, 0-based (default 0)",
    )
    g.add_argument(
        "--frame-stop",
        type=int,
        default=None,
        metavar="N",
        help="stop before this frame (default: after the last frame)",
    )
    g.add_argument(
        "--frame-step",
        type=int,
        default=None,
        metavar="N",
        help="use every N-th frame (frames; default 1)",
    )
    add_axis_args(p)
    g = p.add_argument_group("axis over frames")
    g.add_argument(
        "--axis-mode",
        default="fixed",
        choices=AXIS_MODES,
        help="fixed: axis from the reference frame, each frame fitted onto it "
        "(default); per-frame: axis found again on every frame",
    )
    g.add_argument(
        "--reference-frame",
        type=int,
        default=0,
        metavar="N",
        help="0-based frame that fixes the axis and the grid (default 0)",
    )
    g.add_argument(
        "--align",
        metavar="SEL",
        help="selection the frames are fitted on in fixed mode (default: the --select atoms)",
    )
    g = add_profile_args(p)
    g.add_argument(
        "--s-range-A",
        type=float,
        nargs=2,
        metavar=("LOW", "HIGH"),
        help="explicit grid range along the axis, Å",
    )
    g = p.add_argument_group("statistics")
    g.add_argument(
        "--closed-below-A",
        type=float,
        default=None,
        help="a frame is closed when its narrowest radius is below this, Å "
        f"(default {default_closing_threshold():g}: K+ crystal radius 1.38 Å, "
        "Shannon 1976, less the 0.25 Å borderline band of the verdict)",
    )
    g.add_argument(
        "--percentiles",
        type=float,
        nargs="+",
        default=list(DEFAULT_PERCENTILES),
        metavar="Q",
        help="percentile levels, %% (default 5 25 50 75 95)",
    )
    g = p.add_argument_group("capture radius (probe-size scan per frame)")
    add_probe_radius_arg(
        g,
        purpose="whose capture radius is also given per frame (default: none; costs "
        "about one more profile per frame)",
    )
    add_entry_end_arg(g)
    add_grid_args(g)
    g = add_backend_args(p)
    g.add_argument(
        "--parts",
        type=int,
        default=None,
        metavar="N",
        help="blocks of frames for parallel runs (count; default 4 per worker)",
    )
    add_output_args(p)
    p.add_argument_group("per-frame output").add_argument(
        "--frames-csv",
        metavar="FILE",
        type=OutputPath,
        help="write one row per frame (narrowest radius, its position, capture radius, "
        "closed flag) as CSV",
    )
    add_figure_args(p, ion_bands=True, kinds=("kymograph", "overlay"))
    p.set_defaults(func=run)


def run(args) -> int:
    from poreprobe.scale.trajectory import profile_trajectory
    from poreprobe.scale.trajectory_profiles import frames_csv, planes_csv

    backend, workers = backend_from_args(args)
    check_figure_path(args)
    result = profile_trajectory(
        args.structure,
        args.trajectory,
        start=args.frame_start,
        stop=args.frame_stop,
        step=args.frame_step,
        **cleaning_from_args(args),
        backend=backend,
        n_workers=workers,
        scheduler=args.scheduler,
        n_parts=args.parts,
        quiet=args.quiet,
        axis_mode=args.axis_mode,
        reference_frame=args.reference_frame,
        align_selection=args.align,
        step_A=args.step_A,
        margin_A=args.margin_A,
        max_radius_A=args.max_radius_A,
        s_range_A=args.s_range_A,
        radii=radius_set_from_args(args),
        axis_method=args.axis_method,
        axis_point_A=args.axis_point,
        axis_direction=args.axis_direction,
        axis_selections=args.axis_selections,
        entry=args.entry,
        closed_below_A=args.closed_below_A,
        percentiles=args.percentiles,
        capture_probe_radius_A=args.probe_radius_A,
        capture_from_end=args.entry_end,
        capture_spacing_A=args.spacing_A,
        capture_pore_radius_A=args.search_radius_A,
    )
    if args.json:
        to_json(result, args.json)
    if args.csv:
        planes_csv(result, args.csv)
    if args.frames_csv:
        frames_csv(result, args.frames_csv)
    for line in summary_lines(result, backend):
        say(args, line)
    save_figure(args, args.figure_kind, result)
    return 0


def summary_lines(result, backend: str) -> list[str]:
    """Human summary of a trajectory run."""
    ax = result.reference_axis
    mins = result.min_radius_A
    lines = [
        f"poreprobe {result.version}: radius profiles of {result.source} "
        f"{result.trajectory}".rstrip()
        + f" ({result.n_atoms} atoms, {result.n_frames} frames,"
        f" {backend}) - model-based estimates",
        f"axis: {result.axis_mode} ({ax.method}, reference frame {result.reference_frame}); "
        f"radius set {result.radius_set}; {len(result.s_A)} planes every {result.step_A:g} Å "
        f"from s = {result.s_A[0]:.1f} to {result.s_A[-1]:.1f} Å",
    ]
    if np.isfinite(mins).any():
        k = int(np.nanargmin(mins))
        pct = ", ".join(
            f"p{q:g} {v:.2f}"
            for q, v in zip(result.percentiles, result.min_radius_percentiles_A, strict=True)
        )
        lines += [
            f"narrowest radius per frame: mean {result.min_radius_mean_A:.2f} Å, "
            f"SD {result.min_radius_sd_A:.2f} Å; {pct} Å",
            "narrowest of all: "
            + ("occluded (radius 0)" if mins[k] <= 0 else f"{mins[k]:.2f} Å")
            + f" at s = {result.min_s_A[k]:.1f} Å in frame {int(result.frames[k])}",
        ]
        n_occ = int(np.count_nonzero(mins <= 0))
        if n_occ:
            lines.append(
                f"occluded in {n_occ} of {len(mins)} frames: no free point at their narrowest "
                "plane (radius 0, counted in the statistics above)"
            )
    if result.capture_radius_A is not None:
        lines.append(
            f"capture radius for a {result.capture_probe_radius_A:g} Å probe: mean "
            f"{result.capture_mean_A:.2f} Å, SD {result.capture_sd_A:.2f} Å"
        )
    closed = result.closed_frames.tolist()
    shown = ", ".join(map(str, closed[:20])) + (" ..." if len(closed) > 20 else "")
    lines.append(
        f"closed below {result.closed_below_A:g} Å: {len(closed)} of "
        f"{result.n_frames} frames" + (f" ({shown})" if closed else "")
    )
    border = result.borderline_frames.tolist()
    lines.append(
        f"borderline ({result.closed_below_A:g} to {result.closed_below_A + 0.5:g} Å): "
        f"{len(border)} of {result.n_frames} frames"
    )
    open_frames = int((~np.isfinite(mins)).sum())
    if open_frames:
        lines.append(f"note: {open_frames} frames had no enclosed plane (open everywhere)")
    return lines
