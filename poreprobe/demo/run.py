"""The demo: the main job end to end on the invented HalK channels.

``poreprobe demo`` (and :func:`run_demo`) profiles the invented channel, scans probe
sizes for it and for its widened-entrance mutant, matches an invented diffusion-limited
current against the capture curve, breaks the pore's resistance down, checks the model
and its closed state, compares the three models and summarises the breathing
trajectory. Every number is a model-based estimate on invented models with invented bench
numbers (see :mod:`poreprobe.demo.channels`); nothing is a measurement.
"""

from __future__ import annotations

import importlib.resources
import os
import warnings

from poreprobe.demo.channels import ENTRY_SELECTION
from poreprobe.errors import InputError

#: Atoms at the intracellular end of the inner helices, where ions enter.
ENTRY = ENTRY_SELECTION
#: Invented bench numbers for the demo's capture match (not a measurement).
DEMO_CURRENT_PA, DEMO_CURRENT_SD_PA, DEMO_CONC_MM = 20.0, 2.0, 150.0
DEMO_FILES = ("demo_channel", "demo_widened", "demo_closed", "demo_breathing")
MIDDLE_PROBE_A = 2.5
#: Members of the coordinate-error band in the demo's report (small: the demo stays quick).
DEMO_ENSEMBLE_MEMBERS = 8


def demo_path(name: str = "demo_channel", suffix: str | None = None) -> str:
    """Path of a bundled demo file, e.g. ``demo_path("demo_closed", "pdb")``.

    The models come as ``cif`` (default) or ``pdb``; ``demo_breathing`` is an XTC
    trajectory (suffix ``xtc``, the default for it) whose topology is
    ``demo_path("demo_channel", "pdb")``.
    """
    if suffix is None:
        suffix = "xtc" if name == "demo_breathing" else "cif"
    allowed = ("xtc",) if name == "demo_breathing" else ("cif", "pdb")
    if name not in DEMO_FILES or suffix not in allowed:
        raise InputError(
            f"demo files are {', '.join(DEMO_FILES)} (.cif or .pdb; the "
            f"trajectory demo_breathing is .xtc); got {name}.{suffix}"
        )
    file_name = f"{name}.{suffix}"
    try:  # installed: the files ship as package data
        path = importlib.resources.files("poreprobe.demo_structures") / file_name
    except ModuleNotFoundError:  # running from a source checkout
        path = os.path.join(
            os.path.dirname(os.path.dirname(os.path.dirname(__file__))),
            "structures_demo",
            file_name,
        )
    if not os.path.isfile(path):
        raise InputError(f"demo file {file_name} is not installed")
    return os.fspath(path)


def _load(name: str):
    from poreprobe.geometry.axis import find_pore_axis
    from poreprobe.io.structure import read_structure

    atoms = read_structure(demo_path(name))
    return atoms, find_pore_axis(atoms, entry=ENTRY)


def run_demo(out_dir, *, quiet: bool = True, trajectory: bool = True) -> dict:
    """Run the demo, writing JSON, CSV and figures into ``out_dir`` (created if needed).

    Returns
    -------
    dict
        Headline numbers (all model-based estimates) and the files written.
    """
    import numpy as np

    from poreprobe.bench.capture import estimate_capture_radius
    from poreprobe.bench.conductance import series_resistance
    from poreprobe.bench.match import match_scan
    from poreprobe.bench.viscosity import diffusion_coefficient
    from poreprobe.checks.compare import compare_models
    from poreprobe.checks.quality import check_model
    from poreprobe.figures.capture_plot import plot_capture
    from poreprobe.figures.kymograph_plot import plot_kymograph
    from poreprobe.figures.overlay_plot import plot_overlay
    from poreprobe.figures.profile_plot import plot_profile
    from poreprobe.figures.references import ion_reference_radii
    from poreprobe.figures.resistance_plot import plot_resistance
    from poreprobe.figures.style import save_figure
    from poreprobe.geometry.probes import capture_radius_at, probe_scan
    from poreprobe.geometry.profile import radius_profile
    from poreprobe.io.export import profile_csv, to_json

    out_dir = os.fspath(out_dir)
    os.makedirs(out_dir, exist_ok=True)
    written = []

    def out(name):
        path = os.path.join(out_dir, name)
        written.append(name)
        return path

    def figure(ax, name):
        import matplotlib.pyplot as plt

        save_figure(ax, out(name))
        plt.close(ax if hasattr(ax, "add_subplot") else ax.figure)

    summary: dict = {
        "note": "model-based estimates on invented channels; invented bench "
        "numbers; not measurements"
    }
    atoms, axis = _load("demo_channel")
    prof = radius_profile(atoms, axis)
    to_json(prof, out("profile.json"))
    profile_csv(prof, out("profile.csv"))
    summary["min_radius_A"] = prof.min_radius_A
    summary["min_s_A"] = prof.min_s_A

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        report = check_model(atoms, axis=axis, ion="K")
    to_json(report, out("check.json"))
    summary["verdict"] = report.verdict.verdict
    bands = ion_reference_radii("K", ("crystal", "hydrated"))
    figure(
        plot_profile(prof, ion_radii=bands, constrictions=report.to_dict().get("constrictions")),
        "profile.png",
    )

    scans = {}
    for name in ("demo_channel", "demo_widened"):
        model, model_axis = (atoms, axis) if name == "demo_channel" else _load(name)
        scans[name] = probe_scan(model, model_axis, quiet=quiet)
        to_json(scans[name], out(f"scan_{name.removeprefix('demo_')}.json"))
    from poreprobe.figures.probe_profiles import plot_probe_profiles

    figure(plot_probe_profiles(scans["demo_channel"], ion_radii=bands[:1]), "probes.png")
    summary["capture_radius_at_middle_probe_A"] = {
        name.removeprefix("demo_"): float(capture_radius_at(scan, MIDDLE_PROBE_A))
        for name, scan in scans.items()
    }
    summary["middle_probe_radius_A"] = MIDDLE_PROBE_A
    k_mid = {
        name: int(np.argmin(np.abs(s.probe_radius_A - MIDDLE_PROBE_A))) for name, s in scans.items()
    }
    summary["stop_s_at_middle_probe_A"] = {
        name.removeprefix("demo_"): float(scans[name].stop_s_A[k]) for name, k in k_mid.items()
    }

    diffusion = diffusion_coefficient("K")
    bench = estimate_capture_radius(
        DEMO_CURRENT_PA,
        DEMO_CONC_MM,
        diffusion.diffusion_m2_per_s,
        current_sd_pA=DEMO_CURRENT_SD_PA,
    )
    with warnings.catch_warnings():  # several crossings: the smallest is reported as best
        warnings.simplefilter("ignore")
        match = match_scan(
            scans["demo_channel"], bench.capture_radius_A, bench.capture_radius_sd_A, ion="K"
        )
    match_json = {  # the layout of `poreprobe match --json`
        "note": "invented bench numbers (a demo, not a measurement); model estimates",
        "capture_radius_A": bench.capture_radius_A,
        "capture_radius_sd_A": bench.capture_radius_sd_A,
        "diffusion_m2_s": diffusion.diffusion_m2_per_s,
        "probe_radius_A_best": match.best_probe_radius_A,
        "probe_radius_A_intervals": [list(iv) for iv in match.intervals_A],
        "capture": bench.to_dict(),
        "diffusion": diffusion.to_dict(),
        "match": match.to_dict(),
    }
    to_json(match_json, out("match.json"))
    figure(plot_capture(scans["demo_channel"], match=match_json), "capture.png")
    summary["measured_capture_radius_A"] = bench.capture_radius_A
    summary["best_probe_radius_A"] = match.best_probe_radius_A

    resistance = series_resistance(prof, atoms=atoms, electrolyte="KCl", conc_mM=150.0)
    to_json(resistance, out("resistance.json"))
    figure(plot_resistance(resistance), "resistance.png")
    summary["conductance_pS"] = resistance.conductance_pS

    closed, closed_axis = _load("demo_closed")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        closed_report = check_model(closed, axis=closed_axis, ion="K")
    to_json(closed_report, out("check_closed.json"))
    summary["closed_min_radius_A"] = closed_report.verdict.min_radius_A
    summary["closed_verdict"] = closed_report.verdict.verdict

    widened, _ = _load("demo_widened")
    labels = ("channel", "widened F73A", "closed")
    comparison = compare_models([atoms, widened, closed], labels=labels)
    to_json(comparison, out("compare.json"))
    overlay = [{"profile": {"s_A": comparison.s_A, "radius_A": row}} for row in comparison.radius_A]
    figure(plot_overlay(overlay, labels=labels, ion_radii=bands), "overlay.png")

    if trajectory:
        from poreprobe.scale.trajectory import profile_trajectory

        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            traj = profile_trajectory(
                demo_path("demo_channel", "pdb"),
                demo_path("demo_breathing"),
                step=2,
                quiet=quiet,
                entry=ENTRY,
            )
        to_json(traj, out("trajectory.json"))
        figure(plot_kymograph(traj), "kymograph.png")
        summary["trajectory_min_radius_mean_A"] = traj.min_radius_mean_A
    summary.update(
        _write_report(
            out("report.html"), atoms, axis, report, scans["demo_channel"], match_json, resistance
        )
    )
    summary["files"] = sorted(written)
    to_json(summary, out("summary.json"))
    return summary


def _write_report(path, atoms, axis, report, scan, match_json, resistance) -> dict:
    """The shared report of the demo channel, with an 8-member B-factor band."""
    from poreprobe.report.build import provenance_of, report_from_results
    from poreprobe.report.render import write_html
    from poreprobe.scale.ensemble import profile_ensemble

    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        ensemble = profile_ensemble(atoms, axis, n_members=DEMO_ENSEMBLE_MEMBERS, seed=0, ion="K")
    provenance = provenance_of(
        demo_path("demo_channel"),
        command_line="poreprobe demo",
        settings={"radius set": report.profile.radius_set, "ion": "K", "entry": ENTRY},
    )
    data = report_from_results(
        provenance,
        report,
        scan=scan,
        match=match_json,
        resistance=resistance,
        ensemble=ensemble,
        warnings_seen=[w.message for w in caught],
        title="Pore report: the invented HalK demo channel",
        notes=("invented channel and invented bench numbers (a demo, not a measurement)",),
    )
    write_html(data, path)
    return {
        "ensemble_members": ensemble.n_members,
        "ensemble_min_radius_A": ensemble.min_radius.to_dict(),
        "ensemble_verdict_shares": dict(ensemble.verdict_shares),
    }
