"""Serial, multiprocessing and dask times (and speed-ups) for a trajectory and an ensemble.

1. ``traj`` of a 600-frame trajectory of the invented demo channel (the bundled
   50-frame XTC written 12 times over, 2,220 atoms), as the command runs it:
   :func:`poreprobe.scale.trajectory.profile_trajectory` with backend
   ``"serial"``, ``"multiprocessing"`` and ``"dask"`` (a local cluster of the same
   worker count, started and closed inside the timing, as the command does).
2. A 64-member coordinate-error ensemble of the demo channel (B-factor source):
   :func:`poreprobe.scale.ensemble.profile_ensemble` on the same three backends.

Each figure is the best of ``--repeat`` runs: wall clock (s) and CPU time (s, this
process plus its finished worker processes, user + system). Target (issue 17): at least
1.8x on 2 workers for both multiprocessing and dask. The machine may be shared with other
jobs, which makes wall-clock speed-ups noisy (the load average is printed with them);
the CPU times are not: "CPU bound" is ``workers x serial CPU / parallel CPU``, the speed-up
the run would reach on otherwise idle cores (start-up and shipping are in the CPU time).

Run: PYTHONPATH=. python benchmarks/bench_scale_out.py [--workers 2] [--repeat 2]
"""

from __future__ import annotations

import argparse
import os
import tempfile
import time
import warnings

BACKENDS = ("serial", "multiprocessing", "dask")


def write_600_frames(folder: str, copies: int = 12) -> tuple[str, str]:
    """The demo topology and a trajectory of ``copies`` x the bundled XTC."""
    import MDAnalysis

    from poreprobe.demo.run import demo_path

    top = demo_path("demo_channel", "pdb")
    xtc = os.path.join(folder, f"demo_x{copies}.xtc")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        universe = MDAnalysis.Universe(top, demo_path("demo_breathing"))
        with MDAnalysis.Writer(xtc, n_atoms=len(universe.atoms)) as out:
            for _ in range(copies):
                for _ts in universe.trajectory:
                    out.write(universe.atoms)
    return top, xtc


def _cpu_s() -> float:
    t = os.times()
    return t.user + t.system + t.children_user + t.children_system


def best_of(func, repeat: int) -> tuple[float, float]:
    """(wall s, CPU s) of the fastest of ``repeat`` runs."""
    runs = []
    for _ in range(repeat):
        c0, t0 = _cpu_s(), time.perf_counter()
        func()
        runs.append((time.perf_counter() - t0, _cpu_s() - c0))
    return min(runs)


def table(title: str, times: dict[str, tuple[float, float]], workers: int) -> None:
    print(title)
    wall_serial, cpu_serial = times["serial"]
    for name in BACKENDS:
        wall, cpu = times[name]
        n = 1 if name == "serial" else workers
        label = name if name == "serial" else f"{name} ({workers} workers)"
        print(
            f"  {label:<28} {wall:7.2f} s wall, {cpu:7.2f} s CPU   speed-up "
            f"{wall_serial / wall:5.2f}x wall, CPU bound {n * cpu_serial / cpu:5.2f}x"
        )


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--workers", type=int, default=2)
    parser.add_argument("--repeat", type=int, default=2)
    parser.add_argument("--members", type=int, default=64)
    args = parser.parse_args()

    from poreprobe.demo.run import ENTRY, demo_path
    from poreprobe.geometry.axis import find_pore_axis
    from poreprobe.io.structure import read_structure
    from poreprobe.scale.ensemble import profile_ensemble
    from poreprobe.scale.parallel import default_start_method
    from poreprobe.scale.trajectory import profile_trajectory

    print(f"load average at start: {os.getloadavg()[0]:.2f} (2 cores; shared machine)")
    print(f"local worker processes start by: {default_start_method()}")
    warnings.simplefilter("ignore")
    with tempfile.TemporaryDirectory() as folder:
        top, xtc = write_600_frames(folder)
        frames = {}
        for name in BACKENDS:
            frames[name] = best_of(
                lambda name=name: profile_trajectory(
                    top, xtc, backend=name, n_workers=1 if name == "serial" else args.workers
                ),
                args.repeat,
            )
        table("traj, 600 frames of the demo channel (2,220 atoms):", frames, args.workers)

    atoms = read_structure(demo_path("demo_channel"))
    axis = find_pore_axis(atoms, entry=ENTRY)
    members = {}
    for name in BACKENDS:
        members[name] = best_of(
            lambda name=name: profile_ensemble(
                atoms,
                axis,
                n_members=args.members,
                backend=name,
                n_workers=1 if name == "serial" else args.workers,
            ),
            args.repeat,
        )
    table(f"ensemble, {args.members} members of the demo channel:", members, args.workers)
    print(f"load average at end: {os.getloadavg()[0]:.2f}")


if __name__ == "__main__":
    main()
