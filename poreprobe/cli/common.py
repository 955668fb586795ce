"""Options shared by several commands, and the loaders behind them."""

from __future__ import annotations

import argparse
import math
import sys

import numpy as np

from poreprobe.cli.outputs import InputPath, OutputPath
from poreprobe.geometry.axis import AXIS_METHODS, PoreAxis, find_pore_axis
from poreprobe.io.radii import DEFAULT_RADIUS_SET, RADIUS_SETS, atom_radii_A, get_radius_set
from poreprobe.io.structure import Atoms, read_structure


def add_structure_args(
    parser: argparse.ArgumentParser, *, positional: bool = True, single_frame: bool = True
) -> None:
    """STRUCTURE and the options that control reading and cleaning it.

    One definition for every command that reads a structure. ``single_frame``
    False (``traj``) leaves out --model and --frame: that command reads every
    frame, chosen with --frame-start, --frame-stop and --frame-step.
    """
    if positional:
        parser.add_argument(
            "structure",
            metavar="STRUCTURE",
            type=InputPath,
            help="channel model: PDB/mmCIF (optionally .gz) or any file "
            "MDAnalysis reads (GRO, PSF, XYZ, ...)",
        )
    g = parser.add_argument_group("structure input")
    g.add_argument(
        "--trajectory",
        metavar="FILE",
        type=InputPath,
        help="coordinates for a topology-only STRUCTURE (e.g. PSF + DCD, XTC, TRR)",
    )
    if single_frame:
        g.add_argument(
            "--model",
            type=int,
            default=0,
            metavar="N",
            help="0-based model index of a multi-model PDB/mmCIF (default 0)",
        )
        g.add_argument(
            "--frame",
            type=int,
            default=0,
            metavar="N",
            help="0-based frame of --trajectory (default 0)",
        )
        g.add_argument(
            "--assembly",
            default="auto",
            metavar="ID",
            help="biological assembly of a PDB/mmCIF file: 'auto' (default: build the first "
            "declared assembly when it differs from the deposited model, and say so), "
            "'deposited' (coordinates as they are) or an assembly id such as 1",
        )
    g.add_argument(
        "--altloc",
        default="occupancy",
        metavar="POLICY",
        help="alternate locations: 'occupancy' (highest, default), 'first', or one altloc letter",
    )
    g.add_argument(
        "--no-hydrogens",
        action="store_true",
        help="drop hydrogen atoms (default: keep those in the file)",
    )
    g.add_argument("--keep-waters", action="store_true", help="keep water molecules")
    g.add_argument("--keep-ions", action="store_true", help="keep ions")
    g.add_argument(
        "--keep-hetero", action="store_true", help="keep ligands, lipids and other hetero groups"
    )
    g.add_argument(
        "--select",
        metavar="SEL",
        help="MDAnalysis selection limiting the atoms that count (default: all polymer atoms)",
    )
    add_radii_args(g)


def cleaning_from_args(args: argparse.Namespace) -> dict:
    """Keyword options of the structure readers for the shared cleaning options."""
    return {
        "altloc": args.altloc,
        "hydrogens": not args.no_hydrogens,
        "waters": args.keep_waters,
        "ions": args.keep_ions,
        "hetero": args.keep_hetero,
        "selection": args.select,
    }


def add_radii_args(group) -> None:
    """--radii and --radii-file."""
    group.add_argument(
        "--radii",
        default=DEFAULT_RADIUS_SET,
        choices=sorted(RADIUS_SETS),
        help="van der Waals radius set (Å), default bondi (Bondi 1964)",
    )
    group.add_argument(
        "--radii-file",
        metavar="TOML",
        type=InputPath,
        help="TOML file overriding radii ([elements] / [residues.RESNAME] tables, Å)",
    )


def add_axis_args(parser: argparse.ArgumentParser) -> None:
    """Options that choose and orient the pore axis."""
    g = parser.add_argument_group("pore axis")
    g.add_argument(
        "--axis-method",
        default="auto",
        choices=AXIS_METHODS,
        help="how to find the axis (default auto: n-fold symmetry axis of "
        "equivalent chains, else the most open principal axis)",
    )
    g.add_argument(
        "--axis-point",
        nargs=3,
        type=float,
        metavar=("X", "Y", "Z"),
        help="a point on a user axis (Å)",
    )
    g.add_argument(
        "--axis-direction",
        nargs=3,
        type=float,
        metavar=("DX", "DY", "DZ"),
        help="direction of a user axis (unitless; any length but zero, only the direction counts)",
    )
    g.add_argument(
        "--axis-selections",
        nargs=2,
        metavar=("SEL1", "SEL2"),
        help="two selections whose centroids define the axis (s grows 1 -> 2)",
    )
    g.add_argument(
        "--entry",
        metavar="SEL",
        help="atoms at the pore end where ions enter; s increases from there",
    )


def add_profile_args(parser: argparse.ArgumentParser, *, step_A: float = 0.2):
    """--step-A, --margin-A and --max-radius-A; returns the argument group for more."""
    g = parser.add_argument_group("profile")
    g.add_argument(
        "--step-A", type=float, default=step_A, help=f"plane spacing in Å (default {step_A:g})"
    )
    g.add_argument(
        "--margin-A",
        type=float,
        default=2.0,
        help="extension beyond the protein along the axis, Å (default 2)",
    )
    g.add_argument(
        "--max-radius-A",
        type=float,
        default=20.0,
        help="planes wider than this (Å) count as open bulk (default 20)",
    )
    return g


def add_output_args(parser: argparse.ArgumentParser, *, csv: bool = True) -> None:
    """--json, --csv and --quiet."""
    g = parser.add_argument_group("output")
    g.add_argument("--json", metavar="FILE", type=OutputPath, help="write the result as JSON")
    if csv:
        g.add_argument("--csv", metavar="FILE", type=OutputPath, help="write the table as CSV")
    g.add_argument(
        "--quiet", action="store_true", help="no summary, progress bars or warnings on the terminal"
    )


def load_atoms(args: argparse.Namespace, path: str | None = None) -> Atoms:
    """Read the structure named on the command line with its cleaning options."""
    return read_structure(
        path or args.structure,
        trajectory=args.trajectory,
        model=args.model,
        frame=args.frame,
        **cleaning_from_args(args),
        assembly=getattr(args, "assembly", "auto"),
    )


def load_all_atoms(args: argparse.Namespace) -> Atoms:
    """Read the structure with waters, ions, hetero groups and hydrogens kept.

    For commands that look at what sits in the pore (``check``, ``report``) and choose
    the walls themselves from --keep-* and --no-hydrogens afterwards.
    """
    cleaning = cleaning_from_args(args)
    cleaning.update(hydrogens=True, waters=True, ions=True, hetero=True)
    return read_structure(
        args.structure,
        trajectory=args.trajectory,
        model=args.model,
        frame=args.frame,
        assembly=args.assembly,
        **cleaning,
    )


def with_assembly(result, atoms: Atoms, presence=None) -> dict:
    """The result as a JSON dictionary with an ``assembly`` entry (which one, how built).

    With a :class:`~poreprobe.geometry.pore_presence.PorePresence`, ``pore_found`` and
    ``pore_presence`` are added too.
    """
    out = dict(result) if isinstance(result, dict) else result.to_dict()
    out["assembly"] = None if atoms.assembly is None else atoms.assembly.to_dict()
    if presence is not None:
        out["pore_found"] = presence.pore_found
        out["pore_presence"] = presence.to_dict()
    return out


def radius_set_from_args(args: argparse.Namespace):
    """The radius set named by --radii and --radii-file."""
    return get_radius_set(args.radii, args.radii_file)


def load_axis(args: argparse.Namespace, atoms: Atoms, radii_A=None) -> PoreAxis:
    """Find the pore axis as the command-line options ask."""
    if radii_A is None:
        radii_A = atom_radii_A(atoms, radius_set_from_args(args))
    return find_pore_axis(
        atoms,
        method=args.axis_method,
        point_A=args.axis_point,
        direction=args.axis_direction,
        selections=args.axis_selections,
        entry=args.entry,
        radii_A=radii_A,
    )


def load_model(args: argparse.Namespace):
    """Atoms, radius set, per-atom radii and pore axis, as the command-line options ask."""
    atoms = load_atoms(args)
    rset = radius_set_from_args(args)
    radii_A = atom_radii_A(atoms, rset)
    return atoms, rset, radii_A, load_axis(args, atoms, radii_A)


def say(args: argparse.Namespace, text: str = "") -> None:
    """Print a summary line unless --quiet."""
    if not getattr(args, "quiet", False):
        sys.stdout.write(text + "\n")


def add_backend_args(parser: argparse.ArgumentParser):
    """--backend, --workers and --scheduler: where the work runs. Returns the option group."""
    g = parser.add_argument_group("where it runs")
    g.add_argument(
        "--backend",
        default="serial",
        choices=("serial", "multiprocessing", "dask"),
        help="serial (default), a local process pool, or dask (a local cluster, "
        "or the scheduler given by --scheduler)",
    )
    g.add_argument(
        "--workers",
        type=int,
        default=None,
        metavar="N",
        help="worker processes for local runs (count; default 2, or all the "
        "workers of the --scheduler cluster)",
    )
    g.add_argument(
        "--scheduler",
        metavar="ADDRESS",
        help="address of a running dask scheduler, e.g. tcp://10.0.0.5:8786 "
        "(implies --backend dask; files must be readable by every worker). Only a "
        "cluster you control: dask exchanges pickled data, which can run code",
    )
    return g


def backend_from_args(args: argparse.Namespace) -> tuple[str, int | None]:
    """The backend name and worker count (None: all workers of the --scheduler cluster)."""
    backend = "dask" if args.scheduler else args.backend
    if args.scheduler and args.backend not in ("serial", "dask"):
        from poreprobe.errors import InputError

        raise InputError(f"--scheduler needs --backend dask, got --backend {args.backend}")
    workers = args.workers
    if workers is None and not args.scheduler:
        workers = 1 if backend == "serial" else 2
    if workers is not None and workers < 1:
        from poreprobe.errors import InputError

        raise InputError(f"--workers must be >= 1, got {workers}")
    return backend, workers


DEFAULT_PROBE_RADII = "0.5:6:0.25"
MAX_PROBES = 1000


def add_probe_args(group, *, probe_radii: str | None = DEFAULT_PROBE_RADII) -> None:
    """--probe-radii-A, --entry-end, --spacing-A and --search-radius-A.

    The probe-size scan's options, the same in ``scan``, ``match`` and ``batch``.
    ``probe_radii`` None (``batch``): no scan unless --probe-radii-A is given.
    """
    shown = probe_radii or "none: no scan"
    group.add_argument(
        "--probe-radii-A",
        default=probe_radii,
        metavar="RADII",
        help="probe radii in Å: START:STOP:STEP (STOP included) or a comma-separated "
        f"list (default {shown})",
    )
    add_entry_end_arg(group)
    add_grid_args(group)


def add_entry_end_arg(group) -> None:
    """--entry-end: the end of the axis where probes enter."""
    group.add_argument(
        "--entry-end",
        choices=("low", "high"),
        default="low",
        help="end of the axis (in s) where probes enter; default low, which is "
        "the --entry end when --entry is given",
    )


def add_grid_args(group) -> None:
    """--spacing-A and --search-radius-A: the grid of the probe scan and the reach map."""
    group.add_argument(
        "--spacing-A",
        type=float,
        default=0.5,
        help="grid spacing of the probe scan and maps in Å (default 0.5)",
    )
    group.add_argument(
        "--search-radius-A",
        type=float,
        default=15.0,
        help="radius in Å of the cylinder around the axis that the grid covers; "
        "free space reaching it counts as open bulk (default 15)",
    )


def scan_options_from_args(args: argparse.Namespace) -> dict:
    """Keyword options of the probe scan for --spacing-A, --entry-end and --search-radius-A."""
    return {
        "spacing_A": args.spacing_A,
        "from_end": args.entry_end,
        "pore_radius_A": args.search_radius_A,
    }


def add_probe_radius_arg(group, *, purpose: str) -> None:
    """--probe-radius-A: one probe radius (``export``'s mesh, ``traj``'s capture radius)."""
    group.add_argument(
        "--probe-radius-A",
        type=float,
        metavar="P",
        help=f"probe radius in Å {purpose}",
    )


def add_ion_arg(group, *, purpose: str) -> None:
    """--ion: the permeant ion (``match``, ``check``, ``batch``, and ``profile``'s potential)."""
    from poreprobe.bench.ions import IONS

    group.add_argument(
        "--ion",
        default="K",
        metavar="ION",
        help=f"permeant ion: {', '.join(IONS)} (default K); {purpose}",
    )


def add_lining_distance_arg(group) -> None:
    """--lining-distance-A: how close an atom's surface comes to a profile sphere to line it."""
    from poreprobe.geometry.lining import LINING_DISTANCE_A

    group.add_argument(
        "--lining-distance-A",
        type=float,
        default=LINING_DISTANCE_A,
        help="atoms whose surface is within this distance (Å) of a profile sphere "
        f"line the pore (default {LINING_DISTANCE_A:g})",
    )


def parse_probe_radii(text: str) -> np.ndarray:
    """Probe radii (Å) from ``START:STOP:STEP`` (STOP included), ``START:STOP`` (step 0.25)
    or a comma-separated list.

    Raises
    ------
    InputError
        Not numbers, a radius <= 0, STOP < START, STEP <= 0, a list not
        increasing, or too many probes.
    """
    from poreprobe.errors import InputError

    name = "--probe-radii-A"
    text = str(text).strip()
    if ":" not in text:
        try:
            radii = np.array([float(v) for v in text.split(",")], dtype=float)
        except ValueError as exc:
            raise InputError(
                f"{name} must be START:STOP:STEP or a comma-separated list in Å, got {text!r}"
            ) from exc
        if not np.isfinite(radii).all() or (radii <= 0).any():
            raise InputError(f"{name} must be finite radii > 0 Å, got {text!r}")
        if (np.diff(radii) <= 0).any():
            raise InputError(f"{name} must be increasing, got {text!r}")
        if len(radii) > MAX_PROBES:
            raise InputError(f"{name} gives {len(radii)} probes (limit {MAX_PROBES})")
        return radii
    parts = text.split(":")
    if len(parts) not in (2, 3):
        raise InputError(f"{name} must be START:STOP:STEP in Å, got {text!r}")
    try:
        start, stop = float(parts[0]), float(parts[1])
        step = float(parts[2]) if len(parts) == 3 else 0.25
    except ValueError as exc:
        raise InputError(f"{name} must be numbers START:STOP:STEP in Å, got {text!r}") from exc
    if not all(math.isfinite(v) for v in (start, stop, step)):
        raise InputError(f"{name} must be finite, got {text!r}")
    if start <= 0:
        raise InputError(f"{name} START must be > 0 Å, got {start:g}")
    if stop < start:
        raise InputError(f"{name} STOP must be >= START, got {start:g}:{stop:g}")
    if step <= 0:
        raise InputError(f"{name} STEP must be > 0 Å, got {step:g}")
    count = int(math.floor((stop - start) / step + 1e-9)) + 1
    if count > MAX_PROBES:
        raise InputError(f"{name} gives {count} probes (limit {MAX_PROBES}); use a larger STEP")
    return np.round(start + step * np.arange(count), 10)


def add_figure_size_args(group) -> None:
    """--dpi, --width-mm and --height-mm (shared by ``plot`` and every --figure)."""
    group.add_argument(
        "--dpi",
        type=float,
        default=300,
        help="resolution of PNG output in dots per inch (default 300)",
    )
    group.add_argument(
        "--width-mm",
        type=float,
        default=None,
        help="figure width in mm (default 85, one journal column; 114 and "
        "174 mm for 1.5 and 2 columns)",
    )
    group.add_argument(
        "--height-mm",
        type=float,
        default=None,
        help="figure height in mm (default 62; 78 for the capture figure)",
    )


def add_ion_band_args(group) -> None:
    """--figure-ion and --figure-ion-radii: reference ion radii drawn on figures.

    Not --ion, which names the permeant ion of ``match``, ``check`` and ``batch``.
    """
    group.add_argument(
        "--figure-ion",
        action="append",
        metavar="ION",
        help="draw this ion's reference radii (K, Na, Li, Rb, Cs, Cl); repeat for several ions",
    )
    group.add_argument(
        "--figure-ion-radii",
        default="crystal,hydrated",
        metavar="KINDS",
        help="which radii of --figure-ion, comma-separated: crystal (Shannon 1976), "
        "hydrated (Nightingale 1959), stokes (from D); "
        "default crystal,hydrated (Å)",
    )


def add_figure_args(
    parser: argparse.ArgumentParser, *, ion_bands: bool = False, kinds: tuple[str, ...] = ()
) -> None:
    """--figure FILE plus the figure size options, for commands that can draw their result.

    With several ``kinds``, --figure-kind picks one (default the first).
    """
    g = parser.add_argument_group("figure")
    g.add_argument(
        "--figure",
        metavar="FILE",
        type=OutputPath,
        help="also draw this command's figure: PNG, SVG or PDF by the suffix",
    )
    if kinds:
        g.add_argument(
            "--figure-kind",
            choices=kinds,
            default=kinds[0],
            help=f"which figure --figure draws (default {kinds[0]})",
        )
    add_figure_size_args(g)
    if ion_bands:
        add_ion_band_args(g)


def check_figure_path(args: argparse.Namespace) -> None:
    """Reject a bad --figure suffix, size or ion before any long computation."""
    if getattr(args, "figure", None):
        from poreprobe.figures.style import check_figure_options

        check_figure_options(
            args.figure, width_mm=args.width_mm, height_mm=args.height_mm, dpi=args.dpi
        )
        figure_ion_radii(args)


def figure_ion_radii(args: argparse.Namespace) -> list[tuple[str, float]]:
    """Labelled reference radii named by --figure-ion / --figure-ion-radii (empty without them)."""
    if not getattr(args, "figure_ion", None):
        return []
    from poreprobe.figures.references import ion_reference_radii

    return ion_reference_radii(args.figure_ion, args.figure_ion_radii)


def save_figure(args: argparse.Namespace, kind: str, *results, **options) -> None:
    """Draw figure ``kind`` from results and write it to --figure (if given).

    The results go through their JSON form, so the figure is the one
    ``poreprobe plot KIND`` draws later from the saved JSON files.
    """
    path = getattr(args, "figure", None)
    if not path:
        return
    from poreprobe.figures import style
    from poreprobe.figures.draw import draw_figure

    if "ion_radii" not in options:
        options["ion_radii"] = figure_ion_radii(args)
    ax = draw_figure(kind, results, width_mm=args.width_mm, height_mm=args.height_mm, **options)
    style.save_figure(ax, path, dpi=args.dpi)
    say(args, f"figure: {path}")
