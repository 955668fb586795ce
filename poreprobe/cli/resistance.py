"""``poreprobe resistance``: where the resistance lies (series-resistance model).

Forward: ``poreprobe resistance STRUCTURE [--segments ...] [--electrolyte KCl --conc-mM 150]``.
Inverse: ``poreprobe resistance --from-conductances g0:sd,g_entry:sd,g_far:sd
--raised-entry-factor F --raised-far-factor F`` (with STRUCTURE too, the forward prediction is
reported beside it).
"""

from __future__ import annotations

import argparse
import warnings

from poreprobe._validate import check_positive
from poreprobe.bench.conductance import ConductanceEstimate, series_resistance
from poreprobe.bench.electrolyte import CONDUCTIVITY_TABLES
from poreprobe.bench.side_split import SideResistanceSplit, split_side_resistances
from poreprobe.cli.common import (
    add_axis_args,
    add_figure_args,
    add_output_args,
    add_profile_args,
    add_structure_args,
    check_figure_path,
    save_figure,
    say,
)
from poreprobe.cli.outputs import InputPath
from poreprobe.errors import InputError, QualityWarning
from poreprobe.io.export import to_json

DEFAULT_ELECTROLYTE = "KCl"
DEFAULT_CONC_MM = 150.0


def register(sub) -> None:
    p = sub.add_parser(
        "resistance",
        help="series-resistance breakdown of the pore and its conductance (pS)",
        description="Series-resistance model of the pore: access resistance rho/(4a) at each "
        "mouth (Hall 1975) and Ohmic pore segments rho*int ds/(pi r^2) (Hille "
        "2001). With --from-conductances, the three-resistor split from measured "
        "conductances. All numbers are model estimates.",
    )
    p.add_argument(
        "structure",
        nargs="?",
        metavar="STRUCTURE",
        type=InputPath,
        help="channel model (PDB/mmCIF or any file MDAnalysis reads); optional "
        "with --from-conductances",
    )
    add_structure_args(p, positional=False)
    add_axis_args(p)
    add_profile_args(p)
    g = p.add_argument_group("segments")
    g.add_argument(
        "--segments",
        nargs="+",
        metavar="NAME:START:END",
        help="named pore segments by their s range in Å (s grows from the entry)",
    )
    g.add_argument(
        "--segment-selection",
        nargs=2,
        action="append",
        metavar=("NAME", "SEL"),
        help="a pore segment spanning the axial extent (Å) of the selected atoms; repeatable",
    )
    g.add_argument(
        "--cuts-A",
        nargs="+",
        type=float,
        metavar="S",
        help="cut the pore at these s positions (Å) into 'pore 1', 'pore 2', ...",
    )
    g.add_argument(
        "--constriction-margin-A",
        type=float,
        default=1.0,
        help="automatic segments: the constriction is where the radius is within "
        "this many Å of the minimum (default 1)",
    )
    g.add_argument(
        "--bathed-by",
        nargs="+",
        metavar="NAME=SIDE",
        help="which bath fills a pore segment: entry, far or neither (default: "
        "entry side of the narrowest point -> entry, far side -> far, "
        "containing it -> neither)",
    )
    g.add_argument(
        "--mobility-factor",
        nargs="+",
        metavar="F|NAME=F",
        help="dimensionless mobility scaling (0 < F <= 1) of pore segments, for all "
        "or per segment name (default 1)",
    )
    g.add_argument(
        "--mouth-radii-A",
        nargs=2,
        type=float,
        metavar=("A_ENTRY", "A_FAR"),
        help="mouth radii in Å instead of the profile's end radii",
    )
    g.add_argument(
        "--side-names",
        nargs=2,
        metavar=("ENTRY", "FAR"),
        default=("entry", "far"),
        help="labels of the two sides, e.g. intracellular extracellular",
    )
    g = p.add_argument_group("bath")
    bath = g.add_mutually_exclusive_group()
    bath.add_argument(
        "--conductivity-S-m", type=float, metavar="X", help="bulk conductivity in S/m"
    )
    bath.add_argument(
        "--resistivity-ohm-m", type=float, metavar="X", help="bulk resistivity in Ohm m"
    )
    bath.add_argument(
        "--electrolyte",
        choices=sorted(CONDUCTIVITY_TABLES),
        default=DEFAULT_ELECTROLYTE,
        help="electrolyte at 25 °C, interpolated in published tables (default "
        f"{DEFAULT_ELECTROLYTE})",
    )
    g.add_argument(
        "--conc-mM",
        type=float,
        default=DEFAULT_CONC_MM,
        metavar="C",
        help=f"electrolyte concentration in mmol/L (default {DEFAULT_CONC_MM:g})",
    )
    g.add_argument(
        "--entry-side-factor",
        type=float,
        default=1.0,
        metavar="F",
        help="resistivity factor of the entry-side bath (dimensionless, default 1)",
    )
    g.add_argument(
        "--far-side-factor",
        type=float,
        default=1.0,
        metavar="F",
        help="resistivity factor of the far-side bath (dimensionless, default 1)",
    )
    g = p.add_argument_group("inverse analysis from measured conductances")
    g.add_argument(
        "--from-conductances",
        metavar="G0:SD,GE:SD,GF:SD",
        help="conductances in pS (with SD in pS): control, entry side's resistivity "
        "raised, far side's raised",
    )
    g.add_argument(
        "--raised-entry-factor",
        type=float,
        metavar="F",
        help="factor by which the entry side's resistivity was raised in the GE "
        "measurement (dimensionless)",
    )
    g.add_argument(
        "--raised-far-factor",
        type=float,
        metavar="F",
        help="factor by which the far side's resistivity was raised in the GF "
        "measurement (dimensionless)",
    )
    add_output_args(p, csv=False)
    add_figure_args(p)
    p.set_defaults(func=run)


# --------------------------------------------------------------------------- parsing
def parse_conductances(text: str) -> list[tuple[float, float]]:
    """``"g0:sd,ge:sd,gf:sd"`` (pS; SD optional) -> three (value, sd) pairs."""
    items = [item.strip() for item in str(text).split(",")]
    if len(items) != 3:
        raise InputError(
            f"--from-conductances needs three comma-separated values "
            f"(control, entry raised, far raised), got {text!r}"
        )
    out = []
    for item in items:
        parts = item.split(":")
        if len(parts) not in (1, 2):
            raise InputError(f"--from-conductances item {item!r} must be G or G:SD (pS)")
        try:
            value = float(parts[0])
            sd = float(parts[1]) if len(parts) == 2 else 0.0
        except ValueError as exc:
            raise InputError(f"--from-conductances item {item!r} is not G or G:SD in pS") from exc
        out.append((value, sd))
    return out


def _parse_ranges(items) -> list[tuple[str, float, float]]:
    out = []
    for item in items or ():
        parts = item.rsplit(":", 2)
        if len(parts) != 3 or not parts[0]:
            raise InputError(f"--segments item {item!r} must be NAME:START:END (Å)")
        try:
            out.append((parts[0], float(parts[1]), float(parts[2])))
        except ValueError as exc:
            raise InputError(
                f"--segments item {item!r}: START and END must be numbers (Å)"
            ) from exc
    return out


def _parse_pairs(items, flag: str) -> dict[str, str]:
    out = {}
    for item in items or ():
        name, sep, value = item.rpartition("=")
        if not sep or not name:
            raise InputError(f"{flag} item {item!r} must be NAME=VALUE")
        out[name] = value
    return out


def _mobility(items):
    if not items:
        return 1.0
    if len(items) == 1 and "=" not in items[0]:
        try:
            return float(items[0])
        except ValueError as exc:
            raise InputError(f"--mobility-factor {items[0]!r} is not a number") from exc
    pairs = _parse_pairs(items, "--mobility-factor")
    try:
        return {k: float(v) for k, v in pairs.items()}
    except ValueError as exc:
        raise InputError(f"--mobility-factor values must be numbers: {items}") from exc


def _bath_kwargs(args) -> dict:
    # --conc-mM with a conductivity or resistivity is refused by poreprobe.cli.dependencies
    if args.conductivity_S_m is not None:
        return {"conductivity_S_per_m": args.conductivity_S_m}
    if args.resistivity_ohm_m is not None:
        return {"resistivity_ohm_m": args.resistivity_ohm_m}
    return {"electrolyte": args.electrolyte, "conc_mM": args.conc_mM}


# --------------------------------------------------------------------------- running
def forward(args: argparse.Namespace):
    """Atoms, profile and the forward estimate as the options ask."""
    from poreprobe.cli.profile import compute

    bath = _bath_kwargs(args)  # check cheap options before the profile
    ranges = _parse_ranges(args.segments)
    selections = [tuple(pair) for pair in (args.segment_selection or ())]
    specs = ranges + selections
    if specs and args.cuts_A:
        raise InputError("give --segments/--segment-selection or --cuts-A, not both")
    bathed = _parse_pairs(args.bathed_by, "--bathed-by")
    mobility = _mobility(args.mobility_factor)
    check_positive(args.entry_side_factor, "entry_side_factor")
    check_positive(args.far_side_factor, "far_side_factor")
    atoms, axis, prof = compute(args)
    est = series_resistance(
        prof,
        atoms=atoms,
        segments=specs or None,
        cuts_s_A=args.cuts_A,
        entry_side_factor=args.entry_side_factor,
        far_side_factor=args.far_side_factor,
        bathed_by=bathed,
        mobility_factor=mobility,
        mouth_radii_A=args.mouth_radii_A,
        side_names=tuple(args.side_names),
        constriction_margin_A=args.constriction_margin_A,
        **bath,
    )
    return atoms, prof, est


def run(args) -> int:
    inverse_opts = (args.raised_entry_factor, args.raised_far_factor)
    if args.from_conductances is None and any(v is not None for v in inverse_opts):
        raise InputError("--raised-entry-factor/--raised-far-factor go with --from-conductances")
    if args.from_conductances is not None and any(v is None for v in inverse_opts):
        raise InputError("--from-conductances needs --raised-entry-factor and --raised-far-factor")
    if args.structure is None and args.from_conductances is None:
        raise InputError(
            "give a STRUCTURE (forward model) and/or --from-conductances (inverse analysis)"
        )
    if args.figure and args.structure is None:
        raise InputError("--figure draws the forward model's breakdown: give a STRUCTURE")
    check_figure_path(args)
    measured = (
        parse_conductances(args.from_conductances) if args.from_conductances is not None else None
    )
    if measured is not None and args.structure is not None:
        # check the measurements before the (slower) profile; warnings come later
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", QualityWarning)
            split_side_resistances(
                *measured, factor_entry=args.raised_entry_factor, factor_far=args.raised_far_factor
            )
    est = prof = None
    if args.structure is not None:
        atoms, prof, est = forward(args)
    split = None
    if measured is not None:
        split = split_side_resistances(
            *measured,
            factor_entry=args.raised_entry_factor,
            factor_far=args.raised_far_factor,
            estimate=est,
        )
    if est is not None:
        out = est.to_dict()
        out["axis"] = prof.axis.to_dict()
        if split is not None:
            out["inverse"] = split.to_dict()
    else:
        out = split.to_dict()
    if args.json:
        to_json(out, args.json)
    if est is not None:
        for line in forward_lines(est):
            say(args, line)
    if split is not None:
        for line in inverse_lines(split):
            say(args, line)
    if est is not None:
        save_figure(args, "resistance", out)
    return 0


# --------------------------------------------------------------------------- summaries
def forward_lines(est: ConductanceEstimate) -> list[str]:
    """Terminal summary of a forward estimate."""
    entry, far = est.side_names
    lines = [
        f"poreprobe {est.version}: series resistance of {est.source} - a model estimate "
        f"(radius set {est.radius_set})",
        f"bath: {est.resistivity_source}; rho = {est.resistivity_ohm_m:.4g} Ohm m "
        f"(x{est.entry_side_factor:g} on the {entry} side, x{est.far_side_factor:g} on the "
        f"{far} side)",
        f"pore: s = {est.pore_start_A:.1f} .. {est.pore_end_A:.1f} Å; narrowest "
        f"{est.narrowest_radius_A:.2f} Å at s = {est.narrowest_s_A:.1f} Å; mouth radii "
        f"{est.entry_mouth_radius_A:.2f} Å ({entry}), {est.far_mouth_radius_A:.2f} Å ({far})",
        f"{'segment':<28} {'bath':<8} {'s range (Å)':<16} {'R (GOhm)':>10} {'share':>8}",
    ]
    for seg in est.segments:
        span = (
            f"{seg.s_start_A:.1f}"
            if seg.kind == "access"
            else f"{seg.s_start_A:.1f}..{seg.s_end_A:.1f}"
        )
        lines.append(
            f"{seg.name:<28} {seg.side:<8} {span:<16} {seg.resistance_Gohm:>10.4g} "
            f"{seg.share_percent:>7.1f}%"
        )
    lines.append(
        f"total {est.resistance_Gohm:.4g} GOhm -> conductance "
        f"{est.conductance_pS:.4g} pS (model estimate, not a measurement)"
    )
    return lines


def inverse_lines(split: SideResistanceSplit) -> list[str]:
    """Terminal summary of an inverse analysis, with the forward prediction if present."""
    g = split.conductances_pS
    lines = [
        f"inverse analysis: G0 = {g[0]:.4g} pS, entry raised x{split.factor_entry:g} -> "
        f"{g[1]:.4g} pS, far raised x{split.factor_far:g} -> {g[2]:.4g} pS",
        f"{'part':<10} {'R (GOhm)':>18} {'share':>16}"
        + (f" {'forward model':>24}" if split.prediction else ""),
    ]
    for key in ("entry", "middle", "far"):
        line = (
            f"{key:<10} {split.resistance_Gohm[key]:>9.4g} ± "
            f"{split.resistance_sd_Gohm[key]:<6.2g} {split.share_percent[key]:>7.1f} ± "
            f"{split.share_sd_percent[key]:<5.1f}%"
        )
        if split.prediction:
            pred = split.prediction
            line += (
                f" {pred['resistance_Gohm'][key]:>10.4g} GOhm {pred['share_percent'][key]:>6.1f}%"
            )
        lines.append(line)
    lines.append(
        f"ln(G0/G_entry) = {split.ln_ratio_kT['entry']:.3f} ± "
        f"{split.ln_ratio_sd_kT['entry']:.3f} kT; ln(G0/G_far) = "
        f"{split.ln_ratio_kT['far']:.3f} ± {split.ln_ratio_sd_kT['far']:.3f} kT"
    )
    return lines
