"""``poreprobe batch``: one summary row per structure file, for many files."""

from __future__ import annotations

import glob
import os

from poreprobe.cli.common import (
    add_axis_args,
    add_backend_args,
    add_ion_arg,
    add_output_args,
    add_probe_args,
    add_profile_args,
    add_structure_args,
    backend_from_args,
    parse_probe_radii,
    say,
)
from poreprobe.cli.outputs import InputPath
from poreprobe.errors import InputError
from poreprobe.io.export import to_json
from poreprobe.scale.batch import batch_csv, profile_files


def register(sub) -> None:
    p = sub.add_parser(
        "batch",
        help="narrowest radius of many models, one summary table",
        description="Profile many structure files (names or glob patterns) with the same "
        "options and write one summary row per file. A file that fails is "
        "reported with its error and the batch goes on; the exit code is 1 "
        "when any file failed. Model-based estimates: they depend on the "
        "radius set.",
    )
    p.add_argument(
        "files",
        metavar="FILES",
        type=InputPath,
        nargs="+",
        help="structure files or quoted glob patterns, e.g. 'models/*.cif'",
    )
    add_structure_args(p, positional=False)
    add_axis_args(p)
    add_profile_args(p)
    add_probe_args(
        p.add_argument_group("capture radius (probe-size scan per file)"), probe_radii=None
    )
    g = p.add_argument_group("readiness check")
    g.add_argument(
        "--check",
        action="store_true",
        help="also run the readiness check of each file (as 'poreprobe check'; "
        "about three more profiles per file) and give its findings per "
        "severity and the permeation verdict",
    )
    add_ion_arg(
        g,
        purpose="the permeation verdict of --check (crystal and hydrated radii in Å from "
        "Shannon 1976 and Nightingale 1959)",
    )
    add_backend_args(p)
    add_output_args(p)
    p.set_defaults(func=run)


def run(args) -> int:
    if args.trajectory or args.frame:
        raise InputError(
            "--trajectory and --frame do not apply to batch; use 'poreprobe traj' for a trajectory"
        )
    for item in args.files:  # a pattern that matches nothing is a bad command line
        is_pattern = set("*?[") & set(item) and not os.path.exists(item)
        if is_pattern and not glob.glob(item, recursive=True):
            raise InputError(f"pattern {item} matches no files")
    backend, workers = backend_from_args(args)
    summary = profile_files(
        args.files,
        backend=backend,
        n_workers=workers,
        scheduler=args.scheduler,
        quiet=args.quiet,
        radii=args.radii,
        radii_file=args.radii_file,
        step_A=args.step_A,
        margin_A=args.margin_A,
        max_radius_A=args.max_radius_A,
        model=args.model,
        altloc=args.altloc,
        hydrogens=not args.no_hydrogens,
        waters=args.keep_waters,
        ions=args.keep_ions,
        hetero=args.keep_hetero,
        selection=args.select,
        axis_method=args.axis_method,
        axis_point_A=args.axis_point,
        axis_direction=args.axis_direction,
        axis_selections=args.axis_selections,
        entry=args.entry,
        capture_probe_radii_A=(
            None if args.probe_radii_A is None else parse_probe_radii(args.probe_radii_A)
        ),
        capture_from_end=args.entry_end,
        capture_spacing_A=args.spacing_A,
        capture_pore_radius_A=args.search_radius_A,
        check=args.check,
        ion=args.ion,
    )
    if args.json:
        to_json(summary, args.json)
    if args.csv:
        batch_csv(summary, args.csv)
    say(
        args,
        f"poreprobe {summary.version}: {len(summary.rows)} files, "
        f"{summary.n_failed} failed; radius set {summary.radius_set} "
        "- model-based estimates",
    )
    width = max(len(row.path) for row in summary.rows)
    for row in summary.rows:
        if row.ok:
            capture = "".join(
                f", capture {c:.2f} Å (probe {p:g} Å)"
                for p, c in zip(summary.capture_probe_radii_A, row.capture_radius_A, strict=True)
            )
            checked = (
                f"; {row.findings[0]} high-severity findings, {row.verdict} for {summary.check_ion}"
                if row.findings
                else ""
            )
            say(
                args,
                f"  {row.path:<{width}}  min radius {row.min_radius_A:6.2f} Å at "
                f"s = {row.min_s_A:6.1f} Å{capture}{checked}",
            )
        else:
            say(args, f"  {row.path:<{width}}  FAILED: {row.error}")
    return 1 if summary.n_failed else 0
