"""``poreprobe compare``: two or more models on one axial frame."""

from __future__ import annotations

import numpy as np

from poreprobe.checks.compare import MATCH_WINDOW_A, compare_models
from poreprobe.cli.check import add_lining_profile_args
from poreprobe.cli.common import (
    add_axis_args,
    add_output_args,
    add_structure_args,
    load_atoms,
    load_axis,
    radius_set_from_args,
    say,
)
from poreprobe.cli.outputs import InputPath
from poreprobe.errors import InputError
from poreprobe.io.export import to_json
from poreprobe.io.radii import atom_radii_A


def register(sub) -> None:
    p = sub.add_parser(
        "compare",
        help="compare the pores of two or more models on one axial frame",
        description="Superpose every model onto the first (on --reference atoms, default "
        "all common CA atoms), profile each along the first model's pore axis on "
        "the same planes, and report the difference profile and how each "
        "constriction moved. Model-based estimates, not measurements.",
    )
    p.add_argument(
        "structures",
        nargs="+",
        metavar="STRUCTURE",
        type=InputPath,
        help="two or more models (PDB/mmCIF or any file MDAnalysis reads); the "
        "first is the reference",
    )
    add_structure_args(p, positional=False)
    add_axis_args(p)
    add_lining_profile_args(p)
    g = p.add_argument_group("comparison")
    g.add_argument(
        "--reference",
        metavar="SEL",
        help="MDAnalysis selection of the atoms to superpose on (e.g. a part that "
        "does not move between the models); default all common CA atoms",
    )
    g.add_argument(
        "--match-window-A",
        type=float,
        default=MATCH_WINDOW_A,
        help="largest axial distance (Å) to match a constriction between models "
        f"(default {MATCH_WINDOW_A:g})",
    )
    add_output_args(p)
    p.set_defaults(func=run)


def _fmt(value, spec="+.2f"):
    return "   n/a" if value is None else format(round(value, 3) + 0.0, spec)


def summary_lines(result) -> list[str]:
    lines = [
        f"poreprobe {result.version}: {len(result.models)} models on one axial frame "
        f"(reference {result.labels[0]}; model-based estimates, not measurements)",
        f"radius set {result.radius_set}; planes every {result.step_A:g} Å; fitted on "
        f"{result.reference_selection or 'common CA atoms'}; axis {result.axis.method}",
        "",
        "model                              fit RMSD (Å)  atoms  own axis (deg, Å)"
        "  narrowest (Å) at s (Å)",
    ]
    for m, diff in zip(result.models, result.difference_A, strict=True):
        finite = np.isfinite(diff)
        lines.append(
            f"  {m.label:32} {m.transform.rmsd_A:10.2f} {m.transform.n_points:6d}"
            f"  {m.own_axis_angle_deg:6.1f} {m.own_axis_offset_A:5.1f}"
            f"  {m.min_radius_A:10.2f} {m.min_s_A:8.1f}"
        )
        if m is not result.models[0] and finite.any():
            k = int(np.nanargmax(np.abs(diff)))
            lines.append(
                f"      largest difference {round(diff[k], 2) + 0.0:+.2f} Å at s = "
                f"{result.s_A[k]:.1f} Å"
            )
    lines += ["", "constrictions of the reference and their shifts (model - reference):"]
    for s in result.shifts:
        lines.append(
            f"  s = {s.reference_s_A:6.1f} Å, r = {s.reference_radius_A:.2f} Å "
            f"({s.lined_by}) in {s.model}: delta s {_fmt(s.delta_s_A, '+.1f')} Å, "
            f"delta r {_fmt(s.delta_radius_A)} Å, at the same level "
            f"{_fmt(s.delta_radius_at_level_A)} Å"
        )
    if not result.shifts:
        lines.append("  none")
    return lines


def run(args) -> int:
    if len(args.structures) < 2:
        raise InputError(f"compare needs at least two structures, got {len(args.structures)}")
    models = [load_atoms(args, path) for path in args.structures]
    rset = radius_set_from_args(args)
    axis = load_axis(args, models[0], atom_radii_A(models[0], rset))
    result = compare_models(
        models,
        reference_selection=args.reference,
        axis=axis,
        radii=rset,
        step_A=args.step_A,
        margin_A=args.margin_A,
        max_radius_A=args.max_radius_A,
        constriction_radius_A=args.constriction_radius_A,
        match_window_A=args.match_window_A,
        labels=args.structures,
    )
    if args.json:
        to_json(result, args.json)
    if args.csv:
        result.to_csv(args.csv)
    for line in summary_lines(result):
        say(args, line)
    return 0
