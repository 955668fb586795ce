"""``poreprobe demo``: the main job end to end on the bundled invented channels."""

from __future__ import annotations

import time

from poreprobe.cli.common import say
from poreprobe.cli.outputs import OutputFolder


def register(sub) -> None:
    p = sub.add_parser(
        "demo",
        help="run the main job on the bundled invented demo channels",
        description="Profile, probe-size scan, capture match (invented bench numbers), "
        "resistance breakdown, readiness check, comparison and trajectory "
        "statistics on the bundled invented HalK channels. Writes JSON, CSV and "
        "figures. Model-based estimates on invented models, not measurements.",
    )
    p.add_argument(
        "--out",
        default="poreprobe-demo-output",
        metavar="FOLDER",
        type=OutputFolder,
        help="folder for the results (created; default poreprobe-demo-output)",
    )
    p.add_argument(
        "--no-trajectory",
        action="store_true",
        help="skip the breathing trajectory (every 2nd of its 50 frames; saves a few seconds)",
    )
    p.add_argument("--quiet", action="store_true", help="no summary or progress on the terminal")
    p.set_defaults(func=run)


def run(args) -> int:
    import os

    from poreprobe.demo.run import (
        DEMO_CONC_MM,
        DEMO_CURRENT_PA,
        DEMO_CURRENT_SD_PA,
        ENTRY,
        demo_path,
        run_demo,
    )

    start = time.perf_counter()
    say(
        args,
        "poreprobe demo: invented HalK channels (see README 'The demo scenario'); "
        "all numbers are model-based estimates",
    )
    out = run_demo(args.out, quiet=args.quiet, trajectory=not args.no_trajectory)
    cap = out["capture_radius_at_middle_probe_A"]
    lines = [
        f"profile: narrowest radius {out['min_radius_A']:.2f} Å at s = {out['min_s_A']:.1f} Å "
        f"(Bondi radii); K+ verdict: {out['verdict']}",
        f"scan: capture radius at p = {out['middle_probe_radius_A']:g} Å: channel "
        f"{cap['channel']:.2f} Å, widened F73A {cap['widened']:.2f} Å",
        f"match: invented current {DEMO_CURRENT_PA:g} ± {DEMO_CURRENT_SD_PA:g} pA at "
        f"{DEMO_CONC_MM:g} mM K+ -> capture radius {out['measured_capture_radius_A']:.2f} Å; "
        f"best probe radius {out['best_probe_radius_A']:.2f} Å",
        f"resistance: {out['conductance_pS']:.0f} pS in 150 mM KCl (series model)",
        f"closed state: narrowest radius {out['closed_min_radius_A']:.2f} Å, verdict "
        f"{out['closed_verdict']}",
    ]
    if "trajectory_min_radius_mean_A" in out:
        lines.append(
            f"trajectory: mean narrowest radius {out['trajectory_min_radius_mean_A']:.2f}"
            " Å over the breathing frames"
        )
    band = out["ensemble_min_radius_A"]
    lines.append(
        f"uncertainty: narrowest radius over {out['ensemble_members']} B-factor-perturbed "
        f"copies {band['median']:.2f} Å (5-95 %: {band['p5']:.2f}-{band['p95']:.2f} Å)"
    )
    lines.append(
        f"wrote {len(out['files'])} files to {args.out}/ in {time.perf_counter() - start:.0f} s; "
        f"open {os.path.join(args.out, 'report.html')} to read or share them all in one page"
    )
    model = demo_path("demo_channel")
    lines += [
        f"the invented models are in {os.path.dirname(model)}/ (open them in any viewer)",
        f'next: poreprobe profile {model} --entry "{ENTRY}" --json profile.json',
    ]
    for line in lines:
        say(args, line)
    return 0
