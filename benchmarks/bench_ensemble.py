"""Time of a 64-member profile ensemble of a 12,000-atom model on 2 cores.

The model is invented (poreprobe.geometry.synthetic.shell_channel: 12,000 random atoms at
protein density around a 60 Å pore with a constriction), every atom with B = 20 Å²
(0.50 Å per direction). Prints the time of one profile, and of the 64-member ensemble
serially and on 2 worker processes (multiprocessing and a dask LocalCluster, start-up
included), each the best of --repeat runs, wall clock and CPU time (this process plus
its finished workers). Target (issue 17): under 20 s on 2 cores. The machine may be
shared: the load average is printed with the figures, and "on idle cores" estimates the
wall time from the CPU time (CPU / workers).

Run: PYTHONPATH=. python benchmarks/bench_ensemble.py [--members 64] [--repeat 1]
"""

from __future__ import annotations

import argparse
import os
import time
import warnings
from dataclasses import replace

import numpy as np


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--members", type=int, default=64)
    parser.add_argument("--atoms", type=int, default=12_000)
    parser.add_argument("--workers", type=int, default=2)
    parser.add_argument("--repeat", type=int, default=1)
    parser.add_argument("--serial", action="store_true", help="also time the serial run")
    args = parser.parse_args()

    from poreprobe.geometry import synthetic
    from poreprobe.geometry.axis import find_pore_axis
    from poreprobe.geometry.profile import radius_profile
    from poreprobe.scale.ensemble import profile_ensemble

    warnings.simplefilter("ignore")
    atoms = synthetic.shell_channel(args.atoms, seed=3)
    atoms = replace(atoms, b_factor=np.full(len(atoms), 20.0))
    axis = find_pore_axis(atoms)
    print(f"load average at start: {os.getloadavg()[0]:.2f} (2 cores; shared machine)")
    t0 = time.perf_counter()
    prof = radius_profile(atoms, axis)
    print(
        f"one profile of {len(atoms)} atoms ({len(prof.s_A)} planes): "
        f"{time.perf_counter() - t0:.2f} s"
    )
    backends = (["serial"] if args.serial else []) + ["multiprocessing", "dask"]

    def cpu_s() -> float:
        t = os.times()
        return t.user + t.system + t.children_user + t.children_system

    for name in backends:
        best, best_cpu = float("inf"), float("inf")
        for _ in range(args.repeat):
            c0 = cpu_s()
            t0 = time.perf_counter()
            ens = profile_ensemble(
                atoms,
                axis,
                n_members=args.members,
                backend=name,
                n_workers=1 if name == "serial" else args.workers,
            )
            best = min(best, time.perf_counter() - t0)
            best_cpu = min(best_cpu, cpu_s() - c0)
        n = 1 if name == "serial" else args.workers
        label = name if name == "serial" else f"{name} ({args.workers} workers)"
        print(
            f"{args.members}-member ensemble, {label}: {best:.2f} s wall, {best_cpu:.2f} s CPU, "
            f"on idle cores about {best_cpu / n:.1f} s (narrowest radius {ens.min_radius.text()})"
        )
    print(f"load average at end: {os.getloadavg()[0]:.2f}")


if __name__ == "__main__":
    main()
