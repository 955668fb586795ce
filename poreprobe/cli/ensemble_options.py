"""Options and output of ``--ensemble``: coordinate-error bands for profile, scan, check, match.

One module so that every command spells the options the same way and prints the
bands the same way: the 5-95 % interval beside each headline number in the
text, and an ``"ensemble"`` object (definitions, summary, per-member values)
in the JSON.
"""

from __future__ import annotations

import argparse
import math

from poreprobe.errors import InputError

ERROR_SOURCES = ("bfactor", "uniform", "resolution")


def add_ensemble_args(
    parser: argparse.ArgumentParser, *, backend: bool = True, seed: bool = True
) -> None:
    """--ensemble, --error-source, --coordinate-error-A, --resolution-A, --seed (+ backend).

    ``seed=False`` for a command that has its own --seed (``match``: it seeds both).
    """
    g = parser.add_argument_group(
        "coordinate-error ensemble",
        "perturbed copies of the model, every atom moved by an isotropic Gaussian with its "
        "own per-direction error; the text shows the 5-95 %% range beside each headline "
        "number (model-based estimates)",
    )
    g.add_argument(
        "--ensemble",
        type=int,
        default=0,
        metavar="N",
        help="run N perturbed copies of the model (count; default 0: none)",
    )
    g.add_argument(
        "--error-source",
        choices=ERROR_SOURCES,
        default="bfactor",
        help="per-atom coordinate error: bfactor (sigma = sqrt(B / 8 pi^2) Å per "
        "direction, default), uniform (--coordinate-error-A) or resolution "
        "(--resolution-A; RMS 3-D error 0.15 x resolution, a rule of thumb)",
    )
    g.add_argument(
        "--coordinate-error-A",
        type=float,
        default=None,
        metavar="SIGMA",
        help="per-direction coordinate error of every atom, Å (with --error-source uniform)",
    )
    if "--resolution-A" not in parser._option_string_actions:  # check has it (map check)
        g.add_argument(
            "--resolution-A",
            type=float,
            default=None,
            metavar="D",
            help="resolution of the model, Å (with --error-source resolution)",
        )
    if seed:
        g.add_argument(
            "--seed",
            type=int,
            default=0,
            metavar="N",
            help="seed of the ensemble (integer >= 0, default 0); the same seed repeats it",
        )
    if backend:
        from poreprobe.cli.common import add_backend_args

        add_backend_args(parser)


def check_ensemble_args(args: argparse.Namespace) -> None:
    """Reject bad ensemble options before any computation."""
    n = getattr(args, "ensemble", 0) or 0
    if n < 0 or n > 10_000:
        raise InputError(f"--ensemble must be between 0 and 10000 members, got {n}")
    if not n:
        return
    if args.seed < 0:
        raise InputError(f"--seed must be >= 0, got {args.seed}")
    if args.error_source == "uniform":
        if args.coordinate_error_A is None:
            raise InputError("--error-source uniform needs --coordinate-error-A (Å)")
        if not math.isfinite(args.coordinate_error_A) or args.coordinate_error_A < 0:
            raise InputError(
                f"--coordinate-error-A must be >= 0 Å, got {args.coordinate_error_A:g}"
            )
    if args.error_source == "resolution":
        if args.resolution_A is None:
            raise InputError("--error-source resolution needs --resolution-A (Å)")
        if not math.isfinite(args.resolution_A) or args.resolution_A <= 0:
            raise InputError(f"--resolution-A must be > 0 Å, got {args.resolution_A:g}")
    if hasattr(args, "backend"):
        from poreprobe.cli.common import backend_from_args

        backend_from_args(args)


def ensemble_from_args(args: argparse.Namespace, atoms, axis, **options):
    """The :class:`~poreprobe.scale.ensemble_result.ProfileEnsemble` the options ask for.

    None without ``--ensemble``. ``options`` go to
    :func:`poreprobe.scale.ensemble.profile_ensemble` (probe radii, ion, match).
    """
    if not getattr(args, "ensemble", 0):
        return None
    from poreprobe.cli.common import backend_from_args, radius_set_from_args
    from poreprobe.scale.ensemble import profile_ensemble

    backend, workers = ("serial", 1)
    if hasattr(args, "backend"):
        backend, workers = backend_from_args(args)
    for name in ("step_A", "margin_A", "max_radius_A"):
        if hasattr(args, name):
            options.setdefault(name, getattr(args, name))
    return profile_ensemble(
        atoms,
        axis,
        n_members=args.ensemble,
        source=args.error_source,
        coordinate_error_A=args.coordinate_error_A,
        resolution_A=args.resolution_A,
        seed=args.seed,
        radii=radius_set_from_args(args),
        backend=backend,
        n_workers=workers,
        scheduler=getattr(args, "scheduler", None),
        quiet=getattr(args, "quiet", False),
        **options,
    )


def with_ensemble(result_dict: dict, ensemble) -> dict:
    """The result's JSON dictionary with the ``ensemble`` object added (if any)."""
    if ensemble is not None:
        result_dict = dict(result_dict)
        result_dict["ensemble"] = ensemble.to_dict()
        warnings = list(result_dict.get("warnings", []))
        result_dict["warnings"] = warnings + [w for w in ensemble.warnings if w not in warnings]
    return result_dict


def interval(band, digits: int = 2) -> str:
    """``" (5-95 %: 1.21-1.45 Å)"`` for a band, empty when undefined."""
    if band is None or not math.isfinite(band.p5):
        return ""
    return f" (5-95 %: {band.p5:.{digits}f}-{band.p95:.{digits}f} {band.unit})"


def narrowest_line_suffix(ensemble) -> str:
    """What the ``narrowest:`` headline gets appended with an ensemble."""
    if ensemble is None:
        return ""
    return (
        f"; ensemble of {ensemble.n_members}: radius {ensemble.min_radius.text()}, "
        f"s {ensemble.min_s.text(1)} (median [5-95 %])"
    )


def scan_band_lines(ensemble) -> list[str]:
    """The per-probe table of capture-radius and stop-level bands."""
    if ensemble is None or ensemble.probe_radius_A is None:
        return []
    lines = [
        f"ensemble of {ensemble.n_members} (median [5-95 %]):",
        f"{'probe_A':>8} {'passes':>7} {'capture_A':>22} {'stop_s_A':>22}",
    ]
    share = ensemble.member_passes.mean(axis=0)
    for j, p in enumerate(ensemble.probe_radius_A):
        lines.append(
            f"{p:8.2f} {share[j]:7.0%} {ensemble.capture_bands[j].text():>22} "
            f"{ensemble.stop_bands[j].text(1):>22}"
        )
    return lines


def save_band_figure(args: argparse.Namespace, ensemble) -> None:
    """Write --figure as the model's profile inside the ensemble's 5-95 % band."""
    from poreprobe.cli.common import figure_ion_radii, say
    from poreprobe.figures import style
    from poreprobe.figures.ensemble_band import plot_ensemble_band

    ax = plot_ensemble_band(
        ensemble, ion_radii=figure_ion_radii(args), width_mm=args.width_mm, height_mm=args.height_mm
    )
    style.save_figure(ax, args.figure, dpi=args.dpi)
    say(args, f"figure: {args.figure}")
