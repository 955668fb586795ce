"""``poreprobe scan``: probe-size scan, accessible-radius profiles and capture radii."""

from __future__ import annotations

import math
import os

import numpy as np

from poreprobe.cli.common import (
    add_axis_args,
    add_figure_args,
    add_output_args,
    add_structure_args,
    check_figure_path,
    load_model,
    save_figure,
    say,
)
from poreprobe.errors import InputError
from poreprobe.geometry.probes import probe_scan, profiles_csv, scan_csv
from poreprobe.io.export import to_json, write_atomic

DEFAULT_PROBES = "0.5:6:0.25"
MAX_PROBES = 1000


def parse_probe_range(text: str) -> np.ndarray:
    """Probe radii (Å) from ``START:STOP:STEP`` (STOP included) or ``START:STOP`` (step 0.25).

    Raises
    ------
    InputError
        Not numbers, START <= 0, STOP < START, STEP <= 0, or too many probes.
    """
    parts = str(text).split(":")
    if len(parts) not in (2, 3):
        raise InputError(f"--probes must be START:STOP:STEP in Å, got {text!r}")
    try:
        start, stop = float(parts[0]), float(parts[1])
        step = float(parts[2]) if len(parts) == 3 else 0.25
    except ValueError as exc:
        raise InputError(f"--probes must be numbers START:STOP:STEP in Å, got {text!r}") from exc
    if not all(math.isfinite(v) for v in (start, stop, step)):
        raise InputError(f"--probes must be finite, got {text!r}")
    if start <= 0:
        raise InputError(f"--probes START must be > 0 Å, got {start:g}")
    if stop < start:
        raise InputError(f"--probes STOP must be >= START, got {start:g}:{stop:g}")
    if step <= 0:
        raise InputError(f"--probes STEP must be > 0 Å, got {step:g}")
    count = int(math.floor((stop - start) / step + 1e-9)) + 1
    if count > MAX_PROBES:
        raise InputError(f"--probes gives {count} probes (limit {MAX_PROBES}); use a larger STEP")
    return np.round(start + step * np.arange(count), 10)


def register(sub) -> None:
    p = sub.add_parser(
        "scan",
        help="probe-size scan: capture radius and accessible radius per probe (Å)",
        description="Roll probes of increasing radius in from the entry end: for each, how "
        "deep it gets (stop level), its accessible-radius profile and its capture "
        "radius R_open - p. A model-based estimate: it depends on the radius set.",
    )
    add_structure_args(p)
    add_axis_args(p)
    add_scan_args(p.add_argument_group("scan"))
    add_output_args(p)
    p.add_argument(
        "--profiles-csv",
        metavar="FILE",
        help="write the accessible-radius profiles as CSV (probe, s, radii in Å)",
    )
    add_figure_args(p, ion_bands=True, kinds=("probes", "capture"))
    p.set_defaults(func=run)


def add_scan_args(g) -> None:
    """--probes, --from, --spacing-A and --pore-radius-A (shared with ``match``)."""
    g.add_argument(
        "--probes",
        default=DEFAULT_PROBES,
        metavar="START:STOP:STEP",
        help=f"probe radii in Å, STOP included (default {DEFAULT_PROBES})",
    )
    g.add_argument(
        "--from",
        "--from-end",
        dest="from_end",
        choices=("low", "high"),
        default="low",
        help="end of the axis (in s) where probes enter; default low, which is "
        "the --entry end when --entry is given",
    )
    g.add_argument("--spacing-A", type=float, default=0.5, help="grid spacing in Å (default 0.5)")
    g.add_argument(
        "--pore-radius-A",
        type=float,
        default=15.0,
        help="radius in Å of the region around the axis searched; sections "
        "reaching it count as open bulk (default 15)",
    )


def _check_outputs(*paths) -> None:
    for path in paths:
        if path:
            folder = os.path.dirname(os.path.abspath(path))
            if not os.path.isdir(folder):
                raise InputError(f"cannot write {path}: folder {folder} does not exist")


def summary_lines(atoms, scan) -> list[str]:
    ax = scan.axis
    lines = [
        f"poreprobe {scan.version}: probe-size scan of {atoms.source} ({len(atoms)} atoms) "
        "- a model-based estimate",
        f"axis: {ax.method}, oriented by {ax.oriented_by}; probes enter from the "
        f"{scan.entry} end; radius set {scan.radius_set}; grid {scan.spacing_A:g} Å; "
        f"pore region {scan.pore_radius_A:g} Å around the axis",
        f"{'probe_A':>8} {'enters':>6} {'passes':>6} {'stop_s_A':>9} {'R_open_A':>9} "
        f"{'capture_A':>10} {'capture_inscribed_A':>20}",
    ]
    for i, p in enumerate(scan.probe_radius_A):
        lines.append(
            f"{p:8.2f} {'yes' if scan.enters[i] else 'no':>6} "
            f"{'yes' if scan.passes[i] else 'no':>6} {_num(scan.stop_s_A[i], 9)} "
            f"{_num(scan.open_radius_A[i], 9)} {_num(scan.capture_radius_A[i], 10)} "
            f"{_num(scan.capture_radius_inscribed_A[i], 20)}"
        )
    passing = scan.largest_passing_probe_A
    lines.append(
        "capture radius = R_open - probe radius (area-equivalent; inscribed in the "
        "last column); stop_s_A is the bottleneck level for probes that pass"
    )
    lines.append(
        "largest probe that passes: "
        + (f"{passing:.2f} Å" if math.isfinite(passing) else "none of those scanned")
    )
    if math.isfinite(scan.bottleneck_clearance_A):
        lines.append(
            f"off-grid bottleneck: probes up to {scan.bottleneck_clearance_A:.3f} Å pass "
            f"(at s = {scan.bottleneck_s_A:.2f} Å, from the atoms)"
        )
    if math.isfinite(scan.discretisation_error_A):
        lines.append(
            f"discretisation estimate: capture radii change by up to "
            f"{scan.discretisation_error_A:.3f} Å between grids of {scan.spacing_A:g} and "
            f"{scan.error_spacing_A:g} Å"
            + (
                f"; {scan.pass_changes_with_spacing} pass/enter decision(s) differ"
                if scan.pass_changes_with_spacing
                else ""
            )
        )
    lines += [f"note: {n}" for n in (*atoms.notes, *scan.notes)]
    return lines


def _num(value: float, width: int) -> str:
    return f"{value:{width}.2f}" if math.isfinite(value) else f"{'-':>{width}}"


def compute(args):
    """Atoms and probe-size scan as the options ask (shared with ``match``)."""
    probes = parse_probe_range(args.probes)
    atoms, rset, radii_A, axis = load_model(args)
    scan = probe_scan(
        atoms,
        axis,
        probe_radii_A=probes,
        radii=rset,
        radii_A=radii_A,
        spacing_A=args.spacing_A,
        from_end=args.from_end,
        pore_radius_A=args.pore_radius_A,
        quiet=args.quiet,
    )
    return atoms, scan


def run(args) -> int:
    parse_probe_range(args.probes)
    _check_outputs(args.json, args.csv, args.profiles_csv)
    check_figure_path(args)
    atoms, scan = compute(args)
    texts = []
    if args.json:
        texts.append((args.json, to_json(scan)))
    if args.csv:
        texts.append((args.csv, scan_csv(scan)))
    if args.profiles_csv:
        texts.append((args.profiles_csv, profiles_csv(scan)))
    for path, text in texts:
        write_atomic(path, text)
    for line in summary_lines(atoms, scan):
        say(args, line)
    save_figure(args, args.figure_kind, scan)
    return 0
