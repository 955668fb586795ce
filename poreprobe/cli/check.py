"""``poreprobe check``: is this model ready? Lining residues, findings and a verdict."""

from __future__ import annotations

import numpy as np

from poreprobe.checks.quality import (
    B_FACTOR_SIGMAS,
    NEAR_DISTANCE_A,
    SYMMETRY_TOLERANCE_A,
    check_model,
)
from poreprobe.cli import chemistry_options as chem_opts
from poreprobe.cli import ensemble_options as ens_opts
from poreprobe.cli import map_options as map_opts
from poreprobe.cli.common import (
    add_axis_args,
    add_figure_args,
    add_ion_arg,
    add_lining_distance_arg,
    add_output_args,
    add_profile_args,
    add_structure_args,
    check_figure_path,
    load_all_atoms,
    load_axis,
    radius_set_from_args,
    save_figure,
    say,
    with_assembly,
)
from poreprobe.cli.pore_gate import require_pore
from poreprobe.geometry.clashes import CLASH_FRACTION
from poreprobe.geometry.lining import CONSTRICTION_RADIUS_A
from poreprobe.io.export import to_csv, to_json
from poreprobe.io.radii import atom_radii_A


def add_lining_profile_args(parser) -> None:
    """The shared profile options plus --constriction-radius-A (also used by ``compare``)."""
    g = add_profile_args(parser)
    g.add_argument(
        "--constriction-radius-A",
        type=float,
        default=CONSTRICTION_RADIUS_A,
        help="local minima of the radius at or below this (Å) are constrictions "
        f"(default {CONSTRICTION_RADIUS_A:g})",
    )


def register(sub) -> None:
    p = sub.add_parser(
        "check",
        help="is this model ready? lining residues, model checks, permeation verdict",
        description="Readiness report for the residues around the pore: lining residues and "
        "constrictions, findings sorted by severity, the permeation verdict for "
        "an ion and the sensitivity of the narrowest radius. Waters, ions and "
        "hetero groups are always read (to find those inside the pore); "
        "--keep-waters/--keep-ions/--keep-hetero count them as pore walls. "
        "Model-based estimates, not measurements.",
    )
    add_structure_args(p)
    add_axis_args(p)
    add_lining_profile_args(p)
    g = p.add_argument_group("checks")
    add_ion_arg(
        g,
        purpose="its crystal and hydrated radii (Å; Shannon 1976, Nightingale 1959) set the "
        "permeation verdict, its charge the potential energy",
    )
    add_lining_distance_arg(g)
    g.add_argument(
        "--near-distance-A",
        type=float,
        default=NEAR_DISTANCE_A,
        help="residues within this distance (Å) of the profile spheres are "
        f"checked (default {NEAR_DISTANCE_A:g})",
    )
    g.add_argument(
        "--clash-fraction",
        type=float,
        default=CLASH_FRACTION,
        help="heavy atoms closer than this fraction of their radius sum clash "
        f"(dimensionless, default {CLASH_FRACTION:g})",
    )
    g.add_argument(
        "--b-factor-sigmas",
        type=float,
        default=B_FACTOR_SIGMAS,
        help="flag residues whose mean B-factor (Å²) exceeds the chain median by "
        f"this many robust SDs (dimensionless, default {B_FACTOR_SIGMAS:g})",
    )
    g.add_argument(
        "--symmetry-tolerance-A",
        type=float,
        default=SYMMETRY_TOLERANCE_A,
        help="report residues deviating more than this (Å) from the symmetric "
        f"consensus (default {SYMMETRY_TOLERANCE_A:g})",
    )
    add_output_args(p)
    add_figure_args(p, ion_bands=False)
    chem_opts.add_chemistry_args(p)
    map_opts.add_map_args(p, with_file=True)
    ens_opts.add_ensemble_args(p)
    p.set_defaults(func=run)


def walls_from_args(args) -> tuple[str, ...]:
    """Atom kinds counted as pore walls: polymer plus whatever --keep-* asks for."""
    return ("polymer",) + tuple(
        kind
        for kind, keep in (
            ("hetero", args.keep_hetero),
            ("ion", args.keep_ions),
            ("water", args.keep_waters),
        )
        if keep
    )


def wall_atoms_from_args(args, atoms):
    """The atoms that make the pore walls (``walls_from_args``, less hydrogens with
    --no-hydrogens) out of a structure read with everything kept (``load_all_atoms``)."""
    mask = np.isin(atoms.kind, walls_from_args(args))
    if args.no_hydrogens:
        mask &= ~atoms.is_hydrogen
    return atoms.subset(mask)


def lining_csv(report, path=None) -> str:
    """CSV of the per-residue lining table (lengths in Å)."""
    rows = (
        (
            r.chain,
            r.resname,
            r.resid,
            r.icode,
            r.s_min_A,
            r.s_max_A,
            r.closest_A,
            r.closest_atom,
            r.part,
        )
        for r in report.lining.residues
    )
    comments = (
        f"poreprobe {report.version} pore-lining residues of {report.source}",
        f"radius set {report.profile.radius_set}; lining distance "
        f"{report.lining.lining_distance_A:g} Å; model-based estimates; lengths in Å",
    )
    return to_csv(
        (
            "chain",
            "resname",
            "resid",
            "icode",
            "s_min_A",
            "s_max_A",
            "closest_A",
            "closest_atom",
            "part",
        ),
        rows,
        path,
        comments,
    )


def run(args) -> int:
    check_figure_path(args)
    chem_opts.check_chemistry_args(args)
    ens_opts.check_ensemble_args(args)
    if args.density_map:
        from poreprobe.io.density_map import _check_map_path

        if args.resolution_A is None:
            from poreprobe.errors import InputError

            raise InputError("--density-map needs --resolution-A (the map's resolution, Å)")
        _check_map_path(args.density_map)
    atoms = load_all_atoms(args)
    rset = radius_set_from_args(args)
    walls = walls_from_args(args)
    wall_atoms = wall_atoms_from_args(args, atoms)
    axis = load_axis(args, wall_atoms, atom_radii_A(wall_atoms, rset))
    report = check_model(
        atoms,
        axis=axis,
        ion=args.ion,
        radii=rset,
        walls=walls,
        hydrogens=not args.no_hydrogens,
        step_A=args.step_A,
        margin_A=args.margin_A,
        max_radius_A=args.max_radius_A,
        lining_distance_A=args.lining_distance_A,
        near_distance_A=args.near_distance_A,
        constriction_radius_A=args.constriction_radius_A,
        clash_fraction=args.clash_fraction,
        b_factor_sigmas=args.b_factor_sigmas,
        symmetry_tolerance_A=args.symmetry_tolerance_A,
        warn=False,
    )
    presence = require_pore(
        args, wall_atoms, atom_radii_A(wall_atoms, rset), axis, report.profile, rset.name
    )
    chem = chem_opts.chemistry_from_args(args, wall_atoms, report.profile, report.lining)
    ensemble = ens_opts.ensemble_from_args(args, wall_atoms, axis, ion=args.ion)
    density = None
    if args.density_map:
        from dataclasses import replace

        from poreprobe.checks.model_checks import sorted_findings

        density = map_opts.map_check_from_args(
            args, args.density_map, wall_atoms, report.profile, report.lining
        )
        report = replace(report, findings=sorted_findings(report.findings + density.findings))
    result = chem_opts.with_chemistry(report, chem)
    if density is not None:
        result["density_map"] = density.to_dict()
    result = ens_opts.with_ensemble(result, ensemble)
    if args.json:
        to_json(with_assembly(result, atoms, presence), args.json)
    if args.csv:
        lining_csv(report, args.csv)
    if chem is not None and args.chemistry_csv:
        chem_opts.chemistry_csv(chem, args.chemistry_csv)
    lines = report.report_lines()
    lines.insert(1, presence.message())
    if ensemble is not None:
        lines = [
            line + ens_opts.narrowest_line_suffix(ensemble)
            if line.startswith("narrowest:")
            else line
            for line in lines
        ]
        lines += [""] + ensemble.report_lines()
    lines += ([""] + chem.report_lines()) if chem else []
    for line in lines + ([""] + density.report_lines() if density else []):
        say(args, line)
    if args.figure:
        if density is not None:
            map_opts.save_map_figure(args, density)
        elif chem is None:
            save_figure(args, "profile", report)
        else:
            chem_opts.save_chemistry_figure(args, chem_opts.with_chemistry(report, chem))
    return 0
