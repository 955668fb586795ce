"""``poreprobe scan``: probe-size scan, accessible-radius profiles and capture radii."""

from __future__ import annotations

import math

from poreprobe.cli import ensemble_options as ens_opts
from poreprobe.cli.common import (
    add_axis_args,
    add_figure_args,
    add_output_args,
    add_probe_args,
    add_structure_args,
    check_figure_path,
    load_model,
    parse_probe_radii,
    save_figure,
    say,
    scan_options_from_args,
    with_assembly,
)
from poreprobe.cli.outputs import OutputPath
from poreprobe.cli.pore_gate import require_pore
from poreprobe.geometry.probes import probe_scan, profiles_csv, scan_csv
from poreprobe.io.export import to_json


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
    add_probe_args(p.add_argument_group("scan"))
    add_output_args(p)
    p.add_argument(
        "--profiles-csv",
        metavar="FILE",
        type=OutputPath,
        help="write the accessible-radius profiles as CSV (probe, s, radii in Å)",
    )
    add_figure_args(p, ion_bands=True, kinds=("probes", "capture"))
    ens_opts.add_ensemble_args(p)
    p.set_defaults(func=run)


def summary_lines(atoms, scan, ensemble=None) -> list[str]:
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
        + (
            ens_opts.interval(ensemble.largest_passing)
            + f", {ensemble.largest_passing.n} of {ensemble.n_members} members pass"
            if ensemble is not None
            else ""
        )
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
    if ensemble is not None:
        lines += ens_opts.scan_band_lines(ensemble) + ensemble.report_lines()
    lines += [f"note: {n}" for n in (*atoms.notes, *scan.notes)]
    return lines


def _num(value: float, width: int) -> str:
    return f"{value:{width}.2f}" if math.isfinite(value) else f"{'-':>{width}}"


def compute(args):
    """Atoms and probe-size scan as the options ask (shared with ``match``)."""
    probes = parse_probe_radii(args.probe_radii_A)
    atoms, rset, radii_A, axis = load_model(args)
    require_pore(args, atoms, radii_A, axis, radius_set=rset.name)
    scan = probe_scan(
        atoms,
        axis,
        probe_radii_A=probes,
        radii=rset,
        radii_A=radii_A,
        quiet=args.quiet,
        **scan_options_from_args(args),
    )
    return atoms, scan


def scan_ensemble(args, atoms, scan):
    """The --ensemble of a scan: every member scanned with the same probes and options."""
    return ens_opts.ensemble_from_args(
        args,
        atoms,
        scan.axis,
        probe_radii_A=scan.probe_radius_A,
        scan_options=scan_options_from_args(args),
    )


def run(args) -> int:
    parse_probe_radii(args.probe_radii_A)
    ens_opts.check_ensemble_args(args)
    check_figure_path(args)
    atoms, scan = compute(args)
    ensemble = scan_ensemble(args, atoms, scan)
    # the command's output plan writes these together, after the figure (all or nothing)
    if args.json:
        to_json(ens_opts.with_ensemble(with_assembly(scan, atoms), ensemble), args.json)
    if args.csv:
        scan_csv(scan, args.csv)
    if args.profiles_csv:
        profiles_csv(scan, args.profiles_csv)
    for line in summary_lines(atoms, scan, ensemble):
        say(args, line)
    if args.figure and args.figure_kind == "probes":
        _save_probe_panels(args, scan)
    else:
        save_figure(args, args.figure_kind, scan)
    return 0


def _save_probe_panels(args, scan) -> None:
    """--figure-kind probes: small multiples of chosen probes (figures/probe_profiles.py)."""
    from poreprobe.cli.common import figure_ion_radii
    from poreprobe.figures import style
    from poreprobe.figures.probe_profiles import plot_probe_profiles

    fig = plot_probe_profiles(
        scan, ion_radii=figure_ion_radii(args), width_mm=args.width_mm, height_mm=args.height_mm
    )
    style.save_figure(fig, args.figure, dpi=args.dpi)
    say(args, f"figure: {args.figure}")
