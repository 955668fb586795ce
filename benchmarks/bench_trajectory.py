"""Speed and memory of trajectory profiles (PoreProfileAnalysis) on a 5,000-atom pore region.

The pore region is invented (poreprobe.geometry.synthetic.shell_channel: 5,000 random atoms at
protein density around a 45 Å pore with a constriction). The trajectory is invented too:
every frame breathes (radial scale 1 + 0.03 sin(2 pi t / 10)) and jitters (Gaussian,
0.25 Å per coordinate, seeded per frame); it is written as PDB + DCD with MDAnalysis.

Prints
  * the cost of one frame: reading + fit, and the radius profile alone;
  * frames per second, serial and on N workers (multiprocessing, and a dask LocalCluster
    through poreprobe.scale.parallel.DaskClientBackend), and the speed-up;
  * peak resident memory of serial runs of two lengths, each in a fresh process, the
    growth per frame, and the extrapolation to a 10,000-frame run.
Targets (issue 9): >= 20 frames/s serial at 0.25 Å; >= 1.7x with 2 workers.
The machine may be shared: wall-clock figures are noisy, and so is the speed-up.

Run: python benchmarks/bench_trajectory.py [--frames 24] [--workers 2] [--step-A 0.25]
"""

from __future__ import annotations

import argparse
import json
import logging
import os
import subprocess
import sys
import tempfile
import time
import warnings

import numpy as np

N_ATOMS = 5_000
LENGTH_A = 45.0


def write_trajectory(folder: str, n_frames: int) -> tuple[str, str]:
    """The invented pore region as PDB + DCD with ``n_frames`` frames."""
    import MDAnalysis

    from poreprobe.geometry import synthetic
    from poreprobe.io.structure_writer import write_structure

    region = synthetic.shell_channel(N_ATOMS, length_A=LENGTH_A, seed=1)
    pdb, dcd = os.path.join(folder, "region.pdb"), os.path.join(folder, "region.dcd")
    write_structure(region, pdb)
    base = region.coords_A
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        universe = MDAnalysis.Universe(pdb)
        with MDAnalysis.Writer(dcd, n_atoms=N_ATOMS) as out:
            for t in range(n_frames):
                rng = np.random.default_rng(10_000 + t)
                scale = np.array([1.0, 1.0, 0.0]) * 0.03 * np.sin(2 * np.pi * t / 10) + 1.0
                universe.atoms.positions = base * scale + rng.normal(0, 0.25, base.shape)
                out.write(universe.atoms)
    return pdb, dcd


def open_region(pdb: str, dcd: str):
    import MDAnalysis

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return MDAnalysis.Universe(pdb, dcd)


def frame_costs(pdb, dcd, step_A, repeat=3):
    """Seconds per frame: reading a frame + the fit, and the radius profile alone."""
    from poreprobe import radius_profile
    from poreprobe.scale.trajectory import PoreProfileAnalysis

    universe = open_region(pdb, dcd)
    ana = PoreProfileAnalysis(universe.atoms, step_A=step_A)
    read_fit, prof = [], []
    for frame in range(repeat):
        t0 = time.perf_counter()
        universe.trajectory[frame + 1]
        atoms, axis, _, _ = ana.frame_atoms_and_axis()
        t1 = time.perf_counter()
        radius_profile(
            atoms, axis, radii_A=ana._radii_A, step_A=step_A, s_range_A=(ana.s_A[0], ana.s_A[-1])
        )
        t2 = time.perf_counter()
        read_fit.append(t1 - t0)
        prof.append(t2 - t1)
    return min(read_fit), min(prof), len(ana.s_A)


def cpu_seconds() -> float:
    """CPU time of this process and its finished child processes (s)."""
    import resource

    own = resource.getrusage(resource.RUSAGE_SELF)
    kids = resource.getrusage(resource.RUSAGE_CHILDREN)
    return own.ru_utime + own.ru_stime + kids.ru_utime + kids.ru_stime


def own_cpu_seconds() -> float:
    """CPU time of the calling process alone (s); run on dask workers with client.run."""
    import resource

    own = resource.getrusage(resource.RUSAGE_SELF)
    return own.ru_utime + own.ru_stime


def _warm_up() -> None:
    import poreprobe.scale.trajectory  # noqa: F401  (MDAnalysis analysis machinery)


def timed_run(pdb, dcd, step_A, n_frames, **run_kwargs) -> tuple[float, float]:
    """Wall-clock and CPU seconds (this process + pool workers) of one run."""
    from poreprobe.scale.trajectory import PoreProfileAnalysis

    ana = PoreProfileAnalysis(open_region(pdb, dcd).atoms, step_A=step_A)
    t0, c0 = time.perf_counter(), cpu_seconds()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        ana.run(stop=n_frames, **run_kwargs)
    elapsed, cpu = time.perf_counter() - t0, cpu_seconds() - c0
    assert ana.n_frames == n_frames
    return elapsed, cpu


def memory_child(pdb: str, dcd: str, step_A: float, n_frames: int) -> None:
    """In a fresh process: run n_frames serially, print peak RSS (MiB) as JSON."""
    import resource

    from poreprobe.scale.trajectory import PoreProfileAnalysis

    universe = open_region(pdb, dcd)
    ana = PoreProfileAnalysis(universe.atoms, step_A=step_A)
    if n_frames:
        ana.run(stop=n_frames)
        result = ana.summary()
        n_planes = len(result.s_A)
    else:
        n_planes = len(ana.s_A)
    peak_mib = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    print(json.dumps({"frames": n_frames, "peak_mib": peak_mib, "planes": n_planes}))


def measure_memory(pdb, dcd, step_A, n_frames) -> dict:
    out = subprocess.run(
        [
            sys.executable,
            __file__,
            "--memory-child",
            str(n_frames),
            "--step-A",
            str(step_A),
            "--files",
            pdb,
            dcd,
        ],
        check=True,
        capture_output=True,
        text=True,
    )
    return json.loads(out.stdout.strip().splitlines()[-1])


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--frames", type=int, default=24, help="frames per timed run")
    parser.add_argument("--workers", type=int, default=2, help="workers of parallel runs")
    parser.add_argument("--step-A", type=float, default=0.25, help="plane spacing (Å)")
    parser.add_argument(
        "--memory-frames",
        type=int,
        nargs=2,
        default=(8, 40),
        help="lengths of the two memory runs (frames)",
    )
    parser.add_argument("--memory-child", type=int, default=None, help=argparse.SUPPRESS)
    parser.add_argument("--files", nargs=2, default=None, help=argparse.SUPPRESS)
    args = parser.parse_args()
    if args.memory_child is not None:
        memory_child(*args.files, args.step_A, args.memory_child)
        return

    import poreprobe
    from poreprobe.scale.parallel import DaskClientBackend

    n_frames, workers = args.frames, args.workers
    load = os.getloadavg()[0]
    print(
        f"poreprobe {poreprobe.__version__}; {os.cpu_count()} cores; load average "
        f"{load:.1f} at start (shared machine: timings are noisy)"
    )
    with tempfile.TemporaryDirectory() as tmp:
        t0 = time.perf_counter()
        pdb, dcd = write_trajectory(tmp, max(n_frames, *args.memory_frames) + 4)
        print(
            f"invented pore region: {N_ATOMS} atoms, {LENGTH_A:g} Å long; trajectory "
            f"written in {time.perf_counter() - t0:.1f} s"
        )

        read_fit, prof, n_planes = frame_costs(pdb, dcd, args.step_A)
        print(
            f"\none frame at {args.step_A:g} Å ({n_planes} planes): read + fit "
            f"{1e3 * read_fit:.1f} ms, radius profile {1e3 * prof:.0f} ms "
            f"-> at most {1 / (read_fit + prof):.1f} frames/s serial"
        )

        serial = timed_run(pdb, dcd, args.step_A, n_frames)
        pool = timed_run(
            pdb,
            dcd,
            args.step_A,
            n_frames,
            backend="multiprocessing",
            n_workers=workers,
            n_parts=2 * workers,
        )
        from distributed import Client, LocalCluster

        t0 = time.perf_counter()
        with (
            LocalCluster(
                n_workers=workers,
                threads_per_worker=1,
                processes=True,
                dashboard_address=None,
                scheduler_kwargs={"dashboard": False},
                silence_logs=logging.ERROR,
            ) as cluster,
            Client(cluster.scheduler_address) as client,
        ):
            client.wait_for_workers(workers)
            startup = time.perf_counter() - t0
            client.run(_warm_up)  # imports on the workers, once per cluster, not timed
            workers_cpu0 = sum(client.run(own_cpu_seconds).values())
            dask_wall, dask_cpu = timed_run(
                pdb,
                dcd,
                args.step_A,
                n_frames,
                backend=DaskClientBackend(client),
                unsupported_backend=True,
                n_parts=2 * workers,
            )
            dask = dask_wall, dask_cpu + sum(client.run(own_cpu_seconds).values()) - workers_cpu0
        print(f"\n{'run':<34} {'wall s':>7} {'frames/s':>9} {'speed-up':>9} {'CPU s':>7}")
        for label, (seconds, cpu) in (
            ("serial", serial),
            (f"multiprocessing, {workers} workers", pool),
            (f"dask LocalCluster, {workers} workers", dask),
        ):
            cpu_text = f"{cpu:>7.1f}"
            print(
                f"{label:<34} {seconds:>7.2f} {n_frames / seconds:>9.2f} "
                f"{serial[0] / seconds:>8.2f}x {cpu_text}"
            )
        print(
            f"(not included: dask cluster start-up {startup:.1f} s and the workers' first "
            f"imports; {n_frames} frames per run, {2 * workers} blocks; CPU s: this process "
            f"plus its workers; load average now {os.getloadavg()[0]:.1f})"
        )

        short, long_ = (measure_memory(pdb, dcd, args.step_A, n) for n in args.memory_frames)
        base = measure_memory(pdb, dcd, args.step_A, 0)
        per_frame_kib = (
            1024 * (long_["peak_mib"] - short["peak_mib"]) / (long_["frames"] - short["frames"])
        )
        results_kib = (short["planes"] + 10) * 8 / 1024  # radius row + 10 per-frame numbers
        # the merge of a parallel run holds the blocks and the stacked copy: twice this
        extrapolated = (
            long_["peak_mib"] + max(per_frame_kib, results_kib) * (10_000 - long_["frames"]) / 1024
        )
        print(
            f"\npeak RSS, serial, fresh process: set-up only {base['peak_mib']:.0f} MiB; "
            f"{short['frames']} frames {short['peak_mib']:.0f} MiB; "
            f"{long_['frames']} frames {long_['peak_mib']:.0f} MiB"
        )
        print(
            f"growth {per_frame_kib:.1f} KiB/frame measured; per-frame results are "
            f"{results_kib:.1f} KiB/frame"
        )
        print(
            f"10,000 frames (extrapolated from these runs, not measured): about "
            f"{extrapolated:.0f} MiB peak"
        )


if __name__ == "__main__":
    main()
