"""``poreprobe report``: one self-contained HTML file (and PDF) with everything to share."""

from __future__ import annotations

import os
import shlex
import sys

from poreprobe.cli import ensemble_options as ens_opts
from poreprobe.cli.common import say
from poreprobe.errors import InputError


def register(sub) -> None:
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
    p.add_argument(
        "structure",
        metavar="STRUCTURE",
        help="channel model: PDB/mmCIF or any file MDAnalysis reads",
    )
    g = p.add_argument_group("model")
    g.add_argument("--entry", metavar="SEL", help="atoms at the pore end where ions enter")
    g.add_argument("--select", metavar="SEL", help="MDAnalysis selection of the atoms that count")
    g.add_argument("--radii", default="bondi", help="van der Waals radius set (default bondi)")
    g.add_argument("--ion", default="K", help="ion for the verdict and the bench match (default K)")
    g.add_argument(
        "--probes",
        default="0.5:6:0.25",
        metavar="START:STOP:STEP",
        help="probe radii of the scan in Å (default 0.5:6:0.25)",
    )
    b = p.add_argument_group("bench numbers (optional)")
    b.add_argument(
        "--current-pA", type=float, metavar="I", help="diffusion-limited single-channel current, pA"
    )
    b.add_argument(
        "--current-sd-pA",
        type=float,
        default=0.0,
        metavar="SD",
        help="its standard deviation, pA (default 0)",
    )
    b.add_argument(
        "--conc-mM",
        type=float,
        default=150.0,
        metavar="C",
        help="bath concentration, mM (default 150; also the resistance bath)",
    )
    b.add_argument(
        "--electrolyte",
        default="KCl",
        choices=("KCl", "NaCl"),
        help="bath salt of the resistance breakdown (default KCl)",
    )
    o = p.add_argument_group("output")
    o.add_argument("--html", metavar="FILE", required=True, help="write the report as HTML")
    o.add_argument("--pdf", metavar="FILE", help="also print it to PDF (needs chromium)")
    o.add_argument("--quiet", action="store_true", help="no summary or progress on the terminal")
    ens_opts.add_ensemble_args(p)
    p.set_defaults(func=run)


def _check_output(path: str, suffix: str) -> None:
    if not path.lower().endswith(suffix):
        raise InputError(f"the {suffix[1:].upper()} file must end in {suffix}, got {path!r}")
    folder = os.path.dirname(os.path.abspath(path))
    if not os.path.isdir(folder):
        raise InputError(f"cannot write {path}: folder {folder} does not exist")


def run(args) -> int:
    from poreprobe.cli.scan import parse_probe_range

    _check_output(args.html, ".html")
    if args.pdf:
        _check_output(args.pdf, ".pdf")
        from poreprobe.report.browser import find_chromium

        if find_chromium() is None:
            raise InputError("--pdf needs headless Chromium (Debian: apt-get install chromium)")
    ens_opts.check_ensemble_args(args)
    probes = parse_probe_range(args.probes)
    if args.current_pA is not None and not args.current_pA > 0:
        raise InputError(f"--current-pA must be > 0 pA, got {args.current_pA:g}")
    from poreprobe.cli.common import backend_from_args
    from poreprobe.report.build import build_report
    from poreprobe.report.render import write_html

    backend, workers = backend_from_args(args)
    bench = None
    if args.current_pA is not None:
        bench = {
            "current_pA": args.current_pA,
            "current_sd_pA": args.current_sd_pA,
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
        select=args.select,
        radii=args.radii,
        ion=args.ion,
        probe_radii_A=probes,
        bench=bench,
        electrolyte=args.electrolyte,
        conc_mM=args.conc_mM,
        ensemble=args.ensemble,
        ensemble_options=options,
        command_line=shlex.join(["poreprobe", *getattr(args, "argv", sys.argv[1:])]),
        quiet=args.quiet,
    )
    write_html(data, args.html)
    say(
        args,
        f"poreprobe {data.provenance.poreprobe_version}: report of {data.provenance.source}"
        " - model-based estimates",
    )
    say(args, f"report: {args.html}")
    if args.pdf:
        from poreprobe.report.browser import print_pdf

        print_pdf(args.html, args.pdf)
        say(args, f"pdf: {args.pdf}")
    return 0
