"""``poreprobe plot``: redraw a figure from the JSON files other commands wrote."""

from __future__ import annotations

import json
import os

from poreprobe.cli.common import add_figure_size_args, add_ion_band_args, figure_ion_radii, say
from poreprobe.cli.outputs import InputPath, OutputPath
from poreprobe.errors import InputError

KIND_HELP = {
    "profile": "radius along s from one `profile --json` file (add a `check --json` file to "
    "annotate its constrictions)",
    "overlay": "several profiles (and/or trajectory mean ± SD) on one axis",
    "probes": "accessible-radius profiles per probe size from one `scan --json` file",
    "capture": "capture radius versus probe radius from a `scan --json` file, plus the "
    "measured band from a `match --json` file",
    "resistance": "series-resistance shares from one `resistance --json` file",
    "kymograph": "radius over s and frames from one `traj --json` file",
}


def register(sub) -> None:
    from poreprobe.figures.kinds import FIGURE_KINDS

    p = sub.add_parser(
        "plot",
        help="draw a figure (PNG, SVG or PDF) from saved JSON results",
        description="Draw a paper figure from the JSON files other poreprobe commands "
        "write, without recomputing. Kinds: "
        + "; ".join(f"{k}: {v}" for k, v in KIND_HELP.items())
        + ". The file suffix (.png, .svg, .pdf) picks the format.",
    )
    p.add_argument(
        "kind", metavar="KIND", choices=FIGURE_KINDS, help="figure kind: " + ", ".join(FIGURE_KINDS)
    )
    p.add_argument(
        "inputs", metavar="INPUT", nargs="+", type=InputPath, help="JSON files written by poreprobe"
    )
    p.add_argument(
        "--figure",
        metavar="FILE",
        type=OutputPath,
        required=True,
        help="figure file: PNG, SVG or PDF by the suffix",
    )
    g = p.add_argument_group("figure")
    add_figure_size_args(g)
    add_ion_band_args(g)
    g.add_argument(
        "--labels",
        metavar="NAMES",
        help="overlay: comma-separated legend labels, one per input (default: each input's source)",
    )
    g.add_argument(
        "--band", action="store_true", help="overlay: also draw the mean ± 1 SD of the profiles (Å)"
    )
    g.add_argument("--quiet", action="store_true", help="print nothing on success")
    p.set_defaults(func=run)


def read_json(path: str) -> dict:
    """Load one result JSON file (InputError naming the file if it is not one)."""
    if not os.path.isfile(path):
        raise InputError(f"no such file: {path}")

    def no_constants(name):
        raise InputError(
            f"{path} holds {name}, which is not JSON (poreprobe writes null for missing values)"
        )

    try:
        with open(path, encoding="utf-8") as fh:
            data = json.load(fh, parse_constant=no_constants)
    except (UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise InputError(f"{path} is not a JSON file ({exc})") from exc
    if not isinstance(data, dict):
        raise InputError(f"{path} holds a JSON {type(data).__name__}, not a poreprobe result")
    if not data.get("source"):
        data["source"] = os.path.splitext(os.path.basename(path))[0]
    return data


def run(args) -> int:
    from poreprobe.figures.draw import draw_figure
    from poreprobe.figures.style import check_figure_options, save_figure

    check_figure_options(
        args.figure, width_mm=args.width_mm, height_mm=args.height_mm, dpi=args.dpi
    )
    labels = None
    if args.labels:
        labels = [x.strip() for x in args.labels.split(",")]
        if args.kind != "overlay":
            raise InputError("--labels applies to the overlay figure only")
    if args.band and args.kind != "overlay":
        raise InputError("--band applies to the overlay figure only")
    if args.figure_ion and args.kind in ("resistance", "kymograph"):
        raise InputError(f"--figure-ion does not apply to the {args.kind} figure")
    results = [read_json(path) for path in args.inputs]
    ax = draw_figure(
        args.kind,
        results,
        width_mm=args.width_mm,
        height_mm=args.height_mm,
        ion_radii=figure_ion_radii(args),
        labels=labels,
        band=args.band,
    )
    save_figure(ax, args.figure, dpi=args.dpi)
    say(args, f"{args.kind} figure: {args.figure}")
    return 0
