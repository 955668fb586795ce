"""``poreprobe profile``: the radius profile of one structure."""

from __future__ import annotations

from poreprobe.cli import chemistry_options as chem_opts
from poreprobe.cli import ensemble_options as ens_opts
from poreprobe.cli.common import (
    add_axis_args,
    add_figure_args,
    add_ion_arg,
    add_output_args,
    add_profile_args,
    add_structure_args,
    check_figure_path,
    load_model,
    radius_set_from_args,
    save_figure,
    say,
    with_assembly,
)
from poreprobe.cli.pore_gate import require_pore
from poreprobe.geometry.profile import radius_profile
from poreprobe.io.export import profile_csv, to_json


def register(sub) -> None:
    p = sub.add_parser(
        "profile",
        help="radius profile along the pore axis (Å)",
        description="Largest empty sphere per plane along the pore axis. "
        "A model-based estimate: it depends on the radius set.",
    )
    add_structure_args(p)
    add_axis_args(p)
    g = add_profile_args(p)
    add_ion_arg(g, purpose="its charge gives the potential energy of the pore chemistry")
    add_output_args(p)
    add_figure_args(p, ion_bands=True)
    chem_opts.add_chemistry_args(p)
    ens_opts.add_ensemble_args(p)
    p.set_defaults(func=run)


def compute(args):
    """Atoms, axis and profile as the options ask (shared with other commands).

    Raises :class:`~poreprobe.cli.pore_gate.NoPoreFound` when the model encloses no pore;
    the :class:`PorePresence` is kept on ``args`` for the command's JSON.
    """
    atoms, rset, radii_A, axis = load_model(args)
    prof = radius_profile(
        atoms,
        axis,
        radii_A=radii_A,
        step_A=args.step_A,
        margin_A=args.margin_A,
        max_radius_A=args.max_radius_A,
    )
    prof = _with_set_name(prof, rset.name)
    args._pore_presence = require_pore(args, atoms, radii_A, axis, prof, rset.name)
    return atoms, axis, prof


def _with_set_name(prof, name):
    from dataclasses import replace

    return replace(prof, radius_set=name)


def summary_lines(atoms, prof, ensemble=None) -> list[str]:
    ax = prof.axis
    finite = prof.radius_A[~(prof.radius_A != prof.radius_A)]
    lines = [
        f"poreprobe {prof.version}: radius profile of {atoms.source} ({len(atoms)} atoms) "
        "- a model-based estimate",
        f"axis: {ax.method}"
        + (f" (symmetry RMSD {ax.symmetry_rmsd_A:.2f} Å)" if ax.symmetry_rmsd_A is not None else "")
        + f", point {_fmt(ax.point_A)} Å, direction {_fmt(ax.direction, 3)}, "
        f"oriented by {ax.oriented_by}",
        f"radius set: {prof.radius_set}; {len(prof.s_A)} planes every {prof.step_A:g} Å "
        f"from s = {prof.s_A[0]:.1f} to {prof.s_A[-1]:.1f} Å; {len(finite)} enclosed",
        f"narrowest: {prof.narrowest_text()}, "
        f"lined by {_lined_by(prof.min_residues)}" + ens_opts.narrowest_line_suffix(ensemble),
    ]
    if ensemble is not None:
        lines += ensemble.report_lines()
    lines += [f"note: {n}" for n in atoms.notes]
    return lines


def _lined_by(labels) -> str:
    from poreprobe.figures.data import residue_summary

    return residue_summary(labels, limit=6) if len(labels) else "n/a"


def _fmt(vec, digits=2):
    return "(" + ", ".join(f"{v:.{digits}f}" for v in vec) + ")"


def run(args) -> int:
    check_figure_path(args)
    chem_opts.check_chemistry_args(args)
    ens_opts.check_ensemble_args(args)
    atoms, axis, prof = compute(args)
    presence = args._pore_presence
    chem = chem_opts.chemistry_from_args(args, atoms, prof, radii=radius_set_from_args(args))
    ensemble = ens_opts.ensemble_from_args(args, atoms, axis)
    if args.json:
        to_json(
            ens_opts.with_ensemble(
                with_assembly(chem_opts.with_chemistry(prof, chem), atoms, presence), ensemble
            ),
            args.json,
        )
    if args.csv:
        profile_csv(prof, args.csv)
    if chem is not None and args.chemistry_csv:
        chem_opts.chemistry_csv(chem, args.chemistry_csv)
    lines = summary_lines(atoms, prof, ensemble)
    lines.insert(3, presence.message())
    for line in lines + ([] if chem is None else chem.report_lines()):
        say(args, line)
    if ensemble is not None and args.figure:
        ens_opts.save_band_figure(args, ensemble)
    elif chem is None:
        save_figure(args, "profile", prof)
    elif args.figure:
        chem_opts.save_chemistry_figure(args, chem_opts.with_chemistry(prof, chem))
    return 0
