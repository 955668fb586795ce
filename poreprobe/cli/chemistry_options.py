"""Pore-chemistry options shared by ``profile`` and ``check``, and what they compute."""

from __future__ import annotations

import argparse

from poreprobe.bench.electrolyte import CONDUCTIVITY_TABLES
from poreprobe.cli.outputs import OutputPath


def add_chemistry_args(parser: argparse.ArgumentParser) -> None:
    """--ph, --dielectric, --hydropathy-scale, the bath and the dewetting rule."""
    from poreprobe.chemistry.chemistry import SMOOTHING_WINDOW_A
    from poreprobe.chemistry.dewetting import DEWETTING_LENGTH_A, DEWETTING_RADIUS_A
    from poreprobe.chemistry.hydropathy import DEFAULT_SCALE, SCALES
    from poreprobe.chemistry.potential import (
        DEFAULT_CONC_MM,
        DEFAULT_DIELECTRIC,
        DEFAULT_ELECTROLYTE,
    )
    from poreprobe.chemistry.titration import DEFAULT_PH, DEFAULT_PKA_TABLE, PKA_TABLES

    g = parser.add_argument_group(
        "pore chemistry (rings, charge, hydropathy, screened potential; model-based estimates)"
    )
    g.add_argument(
        "--no-chemistry", action="store_true", help="skip the pore chemistry (rings, potential)"
    )
    g.add_argument(
        "--ph",
        type=float,
        default=DEFAULT_PH,
        help=f"pH for the Henderson-Hasselbalch charges (pH units, default {DEFAULT_PH:g})",
    )
    g.add_argument(
        "--pka-table",
        choices=sorted(PKA_TABLES),
        default=DEFAULT_PKA_TABLE,
        help="side-chain pKa values: grimsley2009 (Grimsley, Scholtz & Pace 2009, folded "
        "proteins; default) or thurlkill2006 (alanine pentapeptides)",
    )
    g.add_argument(
        "--charge-state",
        action="append",
        metavar="RES=Q",
        help="fix a residue's charge (e, -1 to 1): HIS=1, GLU71=0 (every chain) or "
        "A:GLU71=-1; repeat for several",
    )
    g.add_argument(
        "--hydropathy-scale",
        choices=sorted(SCALES),
        default=DEFAULT_SCALE,
        help="kyte-doolittle (Kyte & Doolittle 1982; default) or wimley-white (Wimley & "
        "White 1996, interface, kcal/mol)",
    )
    g.add_argument(
        "--smoothing-window-A",
        type=float,
        default=SMOOTHING_WINDOW_A,
        help=f"running-mean window of the per-level profiles in Å (default {SMOOTHING_WINDOW_A:g})",
    )
    g.add_argument(
        "--dielectric",
        type=float,
        default=DEFAULT_DIELECTRIC,
        help="effective relative permittivity of the screened potential (dimensionless, "
        f"default {DEFAULT_DIELECTRIC:g}: between protein and water, see the README)",
    )
    g.add_argument(
        "--electrolyte",
        choices=sorted(CONDUCTIVITY_TABLES),
        default=DEFAULT_ELECTROLYTE,
        help=f"bath electrolyte whose ionic strength screens the potential (default "
        f"{DEFAULT_ELECTROLYTE})",
    )
    g.add_argument(
        "--conc-mM",
        type=float,
        default=DEFAULT_CONC_MM,
        help=f"bath concentration in mmol/L (default {DEFAULT_CONC_MM:g})",
    )
    g.add_argument(
        "--dewetting-radius-A",
        type=float,
        default=DEWETTING_RADIUS_A,
        help="flag hydrophobic stretches narrower than this radius in Å (default "
        f"{DEWETTING_RADIUS_A:g}; Beckstein & Sansom 2003)",
    )
    g.add_argument(
        "--dewetting-length-A",
        type=float,
        default=DEWETTING_LENGTH_A,
        help=f"... and at least this long in Å (default {DEWETTING_LENGTH_A:g})",
    )
    g.add_argument(
        "--chemistry-csv",
        metavar="FILE",
        type=OutputPath,
        help="write the per-level chemistry (charge, hydropathy, potential) as CSV",
    )


def potential_ion(args: argparse.Namespace) -> str:
    """The ion whose energy is reported: the command's --ion (default K)."""
    return args.ion


def check_chemistry_args(args: argparse.Namespace) -> None:
    """Reject bad chemistry options before any long computation."""
    if args.no_chemistry:
        return
    from poreprobe._validate import check_positive, check_range
    from poreprobe.bench.ions import get_ion
    from poreprobe.chemistry.potential import ionic_strength_M
    from poreprobe.chemistry.titration import parse_charge_states

    check_range(args.ph, "--ph", 0.0, 14.0)
    check_range(args.dielectric, "--dielectric", 1.0, 1000.0)
    check_positive(args.smoothing_window_A, "--smoothing-window-A")
    check_positive(args.dewetting_radius_A, "--dewetting-radius-A")
    check_positive(args.dewetting_length_A, "--dewetting-length-A")
    ionic_strength_M(args.electrolyte, args.conc_mM)
    parse_charge_states(args.charge_state)
    get_ion(potential_ion(args))


def chemistry_from_args(args: argparse.Namespace, atoms, profile, lining=None, radii=None):
    """The :class:`~poreprobe.chemistry.chemistry.PoreChemistry` the options ask for, or None."""
    if args.no_chemistry:
        return None
    from poreprobe.chemistry.chemistry import pore_chemistry
    from poreprobe.chemistry.titration import parse_charge_states

    return pore_chemistry(
        atoms,
        profile,
        lining,
        radii=radii,
        pH=args.ph,
        pka_table=args.pka_table,
        charge_states=parse_charge_states(args.charge_state),
        hydropathy_scale=args.hydropathy_scale,
        smoothing_window_A=args.smoothing_window_A,
        dielectric=args.dielectric,
        electrolyte=args.electrolyte,
        conc_mM=args.conc_mM,
        ion=potential_ion(args),
        dewetting_radius_A=args.dewetting_radius_A,
        dewetting_length_A=args.dewetting_length_A,
    )


def chemistry_csv(chem, path=None) -> str:
    """CSV of the per-level chemistry: s, charge, hydropathy, polar share, potential."""
    from poreprobe.io.export import to_csv

    lv, pot = chem.levels, chem.potential
    rows = zip(
        lv.s_A.tolist(),
        lv.n_residues.tolist(),
        lv.charge_e.tolist(),
        lv.charge_smoothed_e.tolist(),
        lv.hydropathy.tolist(),
        lv.hydropathy_smoothed.tolist(),
        lv.polar_fraction.tolist(),
        pot.potential_mV.tolist(),
        pot.energy_kT.tolist(),
        strict=True,
    )
    comments = (
        f"poreprobe {chem.version} pore chemistry of {chem.source}; model-based estimates",
        f"pH {chem.pH:g} (pKa {chem.pka_table}); hydropathy {chem.hydropathy_scale} "
        f"({chem.hydropathy_unit}); smoothing window {lv.smoothing_window_A:g} Å",
        f"potential: dielectric {pot.dielectric:g}, {pot.electrolyte} {pot.conc_mM:g} mM "
        f"(I = {pot.ionic_strength_M:g} M, Debye length {pot.debye_length_nm:.3f} nm), "
        f"{pot.ion} energy in kT; {pot.caveat}",
    )
    return to_csv(
        (
            "s_A",
            "n_residues",
            "charge_e",
            "charge_smoothed_e",
            "hydropathy",
            "hydropathy_smoothed",
            "polar_fraction",
            "potential_mV",
            "ion_energy_kT",
        ),
        rows,
        path,
        comments,
    )


def with_chemistry(result, chem) -> dict:
    """The result's JSON dictionary with the ``chemistry`` object added (if any)."""
    d = result.to_dict()
    if chem is not None:
        d["chemistry"] = chem.to_dict()
    return d


def save_chemistry_figure(args: argparse.Namespace, result_dict: dict) -> None:
    """Write --figure as the radius profile with the chemistry panels under it."""
    import json

    from poreprobe.cli.common import figure_ion_radii, say
    from poreprobe.figures.chemistry_panel import save_profile_chemistry
    from poreprobe.io.export import to_json

    save_profile_chemistry(
        json.loads(to_json(result_dict)),
        args.figure,
        dpi=args.dpi,
        ion_radii=figure_ion_radii(args),
        width_mm=args.width_mm,
        height_mm=args.height_mm,
    )
    say(args, f"figure: {args.figure}")
