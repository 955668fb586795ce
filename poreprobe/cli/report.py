"""``poreprobe report``: one self-contained HTML file (and PDF) with everything to share."""

from __future__ import annotations

import os
import shlex
import sys

from poreprobe.cli import ensemble_options as ens_opts
from poreprobe.cli.common import (
    add_axis_args,
    add_ion_arg,
    add_probe_args,
    add_structure_args,
    say,
    scan_options_from_args,
)
from poreprobe.cli.outputs import OutputPath
from poreprobe.errors import InputError


def register(sub) -> None:
    from poreprobe.bench.electrolyte import CONDUCTIVITY_TABLES

    p = sub.add_parser(
        "report",
        help="one self-contained HTML report (and PDF) to share: provenance, checks, "
        "profile, scan, bench match, resistance, bands",
        description="Everything about one model in one file that opens offline in any "
        "browser: what was run on what, the readiness findings, the profile with its "
        "constrictions and lining residues, the probe scan and capture curve (with the "
        "bench match when bench numbers are given), the resistance breakdown, the "
        "coordinate-error bands with --ensemble, every warning, the radius set and the "
        "definitions. --pdf prints it with headless Chromium. Model-based estimates.",
    )
    add_structure_args(p)
    add_axis_args(p)
    g = p.add_argument_group("checks and scan")
    add_ion_arg(g, purpose="the permeation verdict and the bench match")
    add_probe_args(g)
    b = p.add_argument_group("bench numbers (optional)")
    b.add_argument(
        "--current-pA",
        type=float,
        metavar="I",
        help="diffusion-limited single-channel current magnitude, pA (> 0): matched "
        "against the capture curve",
    )
    b.add_argument(
        "--current-sd-pA",
        type=float,
        default=None,
        metavar="SD",
        help="standard deviation of the current, pA (default 0)",
    )
    b.add_argument(
        "--conc-mM",
        type=float,
        default=150.0,
        metavar="C",
        help="bath concentration, mM (default 150): the bench match and the resistance bath",
    )
    b.add_argument(
        "--electrolyte",
        choices=sorted(CONDUCTIVITY_TABLES),
        default="KCl",
        help="bath electrolyte of the resistance breakdown (default KCl)",
    )
    o = p.add_argument_group("output")
    o.add_argument(
        "--html", metavar="FILE", type=OutputPath, required=True, help="write the report (HTML)"
    )
    o.add_argument(
        "--pdf",
        metavar="FILE",
        type=OutputPath,
        help="also print the report to PDF (needs Chromium)",
    )
    o.add_argument(
        "--quiet", action="store_true", help="no summary, progress bars or warnings on the terminal"
    )
    ens_opts.add_ensemble_args(p)
    p.set_defaults(func=run)


def _check_output(path: str, suffix: str) -> None:
    if not path.lower().endswith(suffix):
        raise InputError(f"the {suffix[1:].upper()} file must end in {suffix}, got {path!r}")
    folder = os.path.dirname(os.path.abspath(path))
    if not os.path.isdir(folder):
        raise InputError(f"cannot write {path}: folder {folder} does not exist")


def run(args) -> int:

    from poreprobe.cli.check import wall_atoms_from_args, walls_from_args
    from poreprobe.cli.common import (
        backend_from_args,
        load_all_atoms,
        load_axis,
        parse_probe_radii,
        radius_set_from_args,
    )
    from poreprobe.io.radii import atom_radii_A

    _check_output(args.html, ".html")
    if args.pdf:
        _check_output(args.pdf, ".pdf")
        from poreprobe.report.browser import find_chromium

        if find_chromium() is None:
            raise InputError("--pdf needs headless Chromium (Debian: apt-get install chromium)")
    ens_opts.check_ensemble_args(args)
    probes = parse_probe_radii(args.probe_radii_A)
    if args.current_pA is not None and not args.current_pA > 0:
        raise InputError(f"--current-pA must be > 0 pA, got {args.current_pA:g}")
    if args.current_sd_pA is not None and args.current_pA is None:
        raise InputError("--current-sd-pA needs --current-pA")
    from poreprobe.report.build import build_report
    from poreprobe.report.render import write_html

    backend, workers = backend_from_args(args)
    rset = radius_set_from_args(args)
    atoms = load_all_atoms(args)
    walls = walls_from_args(args)
    wall_atoms = wall_atoms_from_args(args, atoms)
    axis = load_axis(args, wall_atoms, atom_radii_A(wall_atoms, rset))
    bench = None
    if args.current_pA is not None:
        bench = {
            "current_pA": args.current_pA,
            "current_sd_pA": args.current_sd_pA or 0.0,
            "conc_mM": args.conc_mM,
        }
    options = {
        "source": args.error_source,
        "coordinate_error_A": args.coordinate_error_A,
        "resolution_A": args.resolution_A,
        "seed": args.seed,
        "backend": backend,
        "n_workers": workers,
        "scheduler": args.scheduler,
    }
    data = build_report(
        args.structure,
        entry=args.entry,
        radii=rset,
        ion=args.ion,
        probe_radii_A=probes,
        bench=bench,
        electrolyte=args.electrolyte,
        conc_mM=args.conc_mM,
        ensemble=args.ensemble,
        ensemble_options=options,
        command_line=shlex.join(["poreprobe", *getattr(args, "argv", sys.argv[1:])]),
        quiet=args.quiet,
        atoms=atoms,
        axis=axis,
        walls=walls,
        hydrogens=not args.no_hydrogens,
        scan_options=scan_options_from_args(args),
    )
    html = write_html(data, args.html)  # written with the PDF when the command ends
    if args.pdf:
        from poreprobe.io.writer import write_output
        from poreprobe.report.browser import pdf_bytes

        write_output(args.pdf, pdf_bytes(html), kind="pdf")
    say(
        args,
        f"poreprobe {data.provenance.poreprobe_version}: report of "
        f"{data.provenance.source} - model-based estimates",
    )
    say(args, f"report: {args.html}")
    if args.pdf:
        say(args, f"pdf: {args.pdf}")
    return 0
