"""``poreprobe match``: the capture radius of a measured current, matched to a structure.

Without STRUCTURE it is a calculator: diffusion-limited current -> capture radius
(with first-order and Monte Carlo uncertainties). With STRUCTURE it also runs the
probe-size scan and reports the probe radii whose capture radius lies within the
measured band.
"""

from __future__ import annotations

import math

from poreprobe._version import __version__
from poreprobe.bench.capture import (
    DEFAULT_MC_SAMPLES,
    DEFAULT_SEED,
    GEOMETRY_FACTORS,
    estimate_capture_radius,
)
from poreprobe.bench.ions import get_ion
from poreprobe.bench.match import match_scan
from poreprobe.bench.match_intervals import MatchInterval
from poreprobe.bench.viscosity import VISCOGENS, diffusion_coefficient
from poreprobe.cli import ensemble_options as ens_opts
from poreprobe.cli.common import (
    add_axis_args,
    add_figure_args,
    add_ion_arg,
    add_output_args,
    add_probe_args,
    add_structure_args,
    check_figure_path,
    save_figure,
    say,
    scan_options_from_args,
)
from poreprobe.cli.outputs import InputPath
from poreprobe.cli.scan import compute as scan_compute
from poreprobe.errors import InputError
from poreprobe.io.export import to_json


def register(sub) -> None:
    p = sub.add_parser(
        "match",
        help="capture radius of a diffusion-limited current (Å), optionally matched "
        "against a structure's probe-size scan",
        description="Capture radius r_c = I / (g |z| F D c) implied by a diffusion-limited "
        "single-channel current, with first-order and Monte Carlo uncertainties; "
        "with STRUCTURE, the probe radii whose capture radius lies within r_c ± SD. "
        "All results are model estimates.",
    )
    p.add_argument(
        "structure",
        nargs="?",
        metavar="STRUCTURE",
        type=InputPath,
        help="channel model (optional): PDB/mmCIF or any file MDAnalysis reads; "
        "without it only the capture radius is computed",
    )
    add_structure_args(p, positional=False)
    add_axis_args(p)
    add_probe_args(p.add_argument_group("probe-size scan (with STRUCTURE)"))

    b = p.add_argument_group("bench measurement")
    b.add_argument(
        "--current-pA",
        type=float,
        required=True,
        metavar="I",
        help="diffusion-limited single-channel current magnitude, pA (> 0)",
    )
    sd = b.add_mutually_exclusive_group()
    sd.add_argument(
        "--current-sd-pA",
        type=float,
        default=None,
        metavar="SD",
        help="standard deviation of the current, pA (default 0)",
    )
    sd.add_argument(
        "--current-sem-pA",
        type=float,
        default=None,
        metavar="SEM",
        help="standard error of the mean current, pA (instead of --current-sd-pA)",
    )
    b.add_argument(
        "--conc-mM",
        type=float,
        required=True,
        metavar="C",
        help="bath concentration of the permeant ion on the entry side, mM (> 0)",
    )
    b.add_argument(
        "--conc-sd-mM",
        type=float,
        default=0.0,
        metavar="SD",
        help="uncertainty of the concentration, mM (default 0)",
    )
    add_ion_arg(
        b,
        purpose="sets the valence, D at 25 °C and the radii compared",
    )
    b.add_argument(
        "--charge",
        type=int,
        default=None,
        metavar="Z",
        help="valence z, dimensionless (default: the ion's)",
    )
    b.add_argument(
        "--geometry",
        default="hemisphere",
        choices=sorted(GEOMETRY_FACTORS),
        help="absorber at the pore mouth: hemisphere (g = 2π, default) or disk "
        "(g = 4); dimensionless factor g",
    )

    d = p.add_argument_group("diffusion coefficient")
    d.add_argument(
        "--temperature-C",
        type=float,
        default=25.0,
        metavar="T",
        help="experiment temperature, °C (default 25; 0-40 °C unless D is given)",
    )
    d.add_argument(
        "--relative-viscosity",
        type=float,
        default=None,
        metavar="ETA_REL",
        help="solution viscosity relative to water, dimensionless (default 1)",
    )
    d.add_argument(
        "--relative-viscosity-sd",
        type=float,
        default=0.0,
        metavar="SD",
        help="uncertainty of the relative viscosity, dimensionless (default 0)",
    )
    d.add_argument(
        "--viscogen",
        default=None,
        choices=sorted(VISCOGENS),
        help="viscogen whose tabulated viscosity (CRC, 20 °C) sets the relative viscosity",
    )
    d.add_argument(
        "--viscogen-percent-w-w",
        type=float,
        default=None,
        metavar="W",
        help="viscogen concentration, mass percent (%% w/w)",
    )
    d.add_argument(
        "--diffusion-m2-per-s",
        dest="diffusion_m2_per_s",
        type=float,
        default=None,
        metavar="D",
        help="explicit diffusion coefficient for the experiment's solution, m²/s "
        "(used as is instead of the ion table's scaled D; not combined "
        "with the viscosity options)",
    )
    d.add_argument(
        "--diffusion-sd-m2-per-s",
        dest="diffusion_sd_m2_per_s",
        type=float,
        default=0.0,
        metavar="SD",
        help="uncertainty of the explicit D, m²/s (default 0)",
    )

    u = p.add_argument_group("uncertainty")
    u.add_argument(
        "--mc-samples",
        type=int,
        default=DEFAULT_MC_SAMPLES,
        metavar="N",
        help=f"Monte Carlo draws, count (default {DEFAULT_MC_SAMPLES})",
    )
    u.add_argument(
        "--seed",
        type=int,
        default=DEFAULT_SEED,
        metavar="N",
        help=f"Monte Carlo seed, integer (default {DEFAULT_SEED}); also seeds --ensemble",
    )
    add_output_args(p, csv=False)
    add_figure_args(p)
    ens_opts.add_ensemble_args(p, seed=False)
    p.set_defaults(func=run)


def compute(args) -> dict:
    """Everything ``poreprobe match`` reports, as a JSON-ready dictionary."""
    ion = get_ion(args.ion)
    charge = ion.charge if args.charge is None else args.charge
    diff = diffusion_coefficient(
        ion,
        temperature_C=args.temperature_C,
        relative_viscosity=args.relative_viscosity,
        relative_viscosity_sd=args.relative_viscosity_sd,
        viscogen=args.viscogen,
        viscogen_percent_w_w=args.viscogen_percent_w_w,
        diffusion_m2_per_s=args.diffusion_m2_per_s,
        diffusion_sd_m2_per_s=args.diffusion_sd_m2_per_s,
    )
    kind, current_sd = (
        ("sem", args.current_sem_pA)
        if args.current_sem_pA is not None
        else ("sd", args.current_sd_pA or 0.0)
    )
    est = estimate_capture_radius(
        args.current_pA,
        args.conc_mM,
        diff.diffusion_m2_per_s,
        current_sd_pA=current_sd,
        conc_sd_mM=args.conc_sd_mM,
        diffusion_sd_m2_per_s=diff.diffusion_sd_m2_per_s,
        charge=charge,
        geometry=args.geometry,
        current_uncertainty=kind,
        mc_samples=args.mc_samples,
        seed=args.seed,
    )
    out = {
        "version": __version__,
        "note": "model estimates: diffusion-limited capture at the pore mouth; with a "
        "structure, the probe-size scan's capture curve (radius set as stated)",
        "capture_radius_A": est.capture_radius_A,
        "capture_radius_sd_A": est.capture_radius_sd_A,
        "capture_radius_mc_sd_A": est.capture_radius_mc_sd_A,
        "capture_radius_mc_interval_A": list(est.capture_radius_mc_interval_A),
        "capture_radius_mc_halfwidth68_A": est.capture_radius_mc_halfwidth68_A,
        "diffusion_m2_s": diff.diffusion_m2_per_s,
        "diffusion_sd_m2_s": diff.diffusion_sd_m2_per_s,
        "ion": ion.symbol,
        "geometry": est.geometry,
        "capture": est.to_dict(),
        "diffusion": diff.to_dict(),
    }
    if args.structure:
        atoms, scan = scan_compute(args)
        match = match_scan(scan, est.capture_radius_A, est.capture_radius_sd_A, ion=ion)
        out["probe_radius_A_best"] = match.best_probe_radius_A
        out["probe_radius_A_intervals"] = [list(iv) for iv in match.intervals_A]
        out["match"] = match.to_dict()
        out["structure"] = {
            "source": atoms.source,
            "atoms": len(atoms),
            "radius_set": scan.radius_set,
            "axis": scan.axis.to_dict(),
            "entry": scan.entry,
            "spacing_A": scan.spacing_A,
            "pore_radius_A": scan.pore_radius_A,
            "capture_definition": scan.capture_definition,
            "probe_radius_A": scan.probe_radius_A.tolist(),
            "capture_radius_A": scan.capture_radius_A.tolist(),
            "passes": scan.passes.tolist(),
            "enters": scan.enters.tolist(),
            "notes": [*atoms.notes, *scan.notes],
            "assembly": None if atoms.assembly is None else atoms.assembly.to_dict(),
        }
        ensemble = ens_opts.ensemble_from_args(
            args,
            atoms,
            scan.axis,
            probe_radii_A=scan.probe_radius_A,
            scan_options=scan_options_from_args(args),
            ion=args.ion,
            match_capture_radius_A=est.capture_radius_A,
            match_sd_A=est.capture_radius_sd_A,
        )
        out = ens_opts.with_ensemble(out, ensemble)
        if ensemble is not None:
            out["ensemble_lines"] = ensemble.report_lines()
    return out


def summary_lines(out: dict) -> list[str]:
    cap, diff = out["capture"], out["diffusion"]
    unc = cap["current_uncertainty"].upper()
    lines = [
        f"poreprobe {out['version']}: capture radius of a diffusion-limited current "
        "- a model estimate",
        f"input: I = {cap['current_pA']:g} ± {cap['current_sd_pA']:g} pA ({unc}), "
        f"c = {cap['conc_mM']:g} ± {cap['conc_sd_mM']:g} mM {out['ion']} (z = {cap['charge']}), "
        f"{cap['geometry']} absorber (g = {cap['geometry_factor']:.4g})",
    ]
    if diff["method"] == "explicit":
        lines.append(f"D = {diff['diffusion_m2_per_s']:.4g} m²/s (given)")
    else:
        if diff["viscogen"]:
            visc = f"{diff['viscogen']} {diff['viscogen_percent_w_w']:g} % w/w"
        else:
            visc = "plain water" if diff["relative_viscosity"] == 1 else "given"
        lines.append(
            f"D = {diff['diffusion_m2_per_s']:.4g} m²/s: {out['ion']} at 25 °C in water "
            f"({diff['reference_diffusion_m2_per_s']:.4g}) scaled by Stokes-Einstein to "
            f"{diff['temperature_C']:g} °C (water {diff['water_viscosity_mPa_s']:.4g} "
            f"mPa s) and relative viscosity {diff['relative_viscosity']:.4g} ({visc})"
        )
    lo, hi = cap["capture_radius_mc_interval_A"]
    lines.append(
        f"capture radius r_c = {cap['capture_radius_A']:.4g} ± "
        f"{cap['capture_radius_sd_A']:.2g} Å (first order); Monte Carlo "
        f"{cap['capture_radius_mc_mean_A']:.4g} ± {cap['capture_radius_mc_sd_A']:.2g} Å, "
        f"95 % interval {lo:.4g} to {hi:.4g} Å ({cap['mc_samples']} draws, "
        f"seed {cap['seed']})"
    )
    lines.append(f"capture rate {cap['capture_rate_per_s']:.3g} ions/s")
    if "match" in out:
        m = out["match"]
        ivs = ", ".join(f"{a:.2f}-{b:.2f} Å" for a, b in m["probe_radius_A_intervals"])
        ivs = ivs or "none"
        if any(lo or hi for lo, hi in m["intervals_at_scan_end"]):
            ivs += " (reaching the end of the scanned range: the band may extend further)"
        lines.append(
            f"structure {out['structure']['source']} (radius set "
            f"{out['structure']['radius_set']}): probe radii with capture radius "
            f"within r_c ± SD: {ivs}"
        )
        if m.get("intervals"):
            lines.append(
                f"{len(m['intervals'])} matching interval(s), ranked widest first (ties: "
                "centre's capture radius closest to r_c):"
            )
            lines += [f"  {MatchInterval(**_interval_args(iv)).text()}" for iv in m["intervals"]]
            how = (
                "where the capture curve crosses r_c in the top-ranked interval"
                if m["best_exact"]
                else "centre of the top-ranked interval"
            )
        elif m["best_exact"]:
            how = "where the capture curve crosses r_c"
        else:
            how = (
                f"no crossing of r_c in the scanned range: the nearest scanned probe, "
                f"capture radius {m['best_capture_radius_A']:.3g} Å"
            )
        lines.append(f"representative probe radius {m['probe_radius_A_best']:.3g} Å ({how})")
        for c in m["ion_radii"]:
            where = (
                "outside the scanned probe radii"
                if not c["in_scan_range"]
                else f"capture radius {c['capture_radius_A']:.3g} Å"
                + (f", {c['deviation_sd']:+.1f} SD" if c["deviation_sd"] is not None else "")
                + (", within the band" if c["within_band"] else "")
            )
            lines.append(f"  {m['ion']} {c['kind']} radius {c['radius_A']:.2f} Å: {where}")
    return lines


def run(args) -> int:
    if args.figure and not args.structure:
        raise InputError(
            "--figure draws the match against a structure's capture curve: give a STRUCTURE"
        )
    check_figure_path(args)
    if args.ensemble and not args.structure:
        raise InputError("--ensemble perturbs a structure's atoms: give a STRUCTURE")
    ens_opts.check_ensemble_args(args)
    out = compute(args)
    extra = out.pop("ensemble_lines", [])
    if args.json:
        to_json(out, args.json)
    for line in summary_lines(out) + extra:
        say(args, line)
    if args.figure:
        # the structure's own curve with its pass / stop / no-entry flags, so the markers
        # are those of the demo's capture figure (the match alone carries a bare curve)
        curve = {
            key: out["structure"][key]
            for key in ("probe_radius_A", "capture_radius_A", "passes", "enters")
        }
        save_figure(args, "capture", {"capture": curve}, out)
    return 0


def _interval_args(d: dict) -> dict:
    """MatchInterval fields from its JSON form (None back to NaN)."""

    def num(x):
        return math.nan if x is None else float(x)

    return {
        "rank": int(d["rank"]),
        "low_A": float(d["probe_radius_low_A"]),
        "high_A": float(d["probe_radius_high_A"]),
        "width_A": float(d["width_A"]),
        "centre_A": float(d["centre_A"]),
        "centre_capture_radius_A": float(d["centre_capture_radius_A"]),
        "crossing_A": num(d["crossing_A"]),
        "at_scan_end": tuple(d["at_scan_end"]),
        "stop_s_A": tuple(num(x) for x in d["stop_s_A"]),
        "passes": str(d["passes"]),
    }
