"""Speed of the radius profile on large invented channels.

Prints, for invented channels of 10k, 40k and 160k atoms (geometry.synthetic.shell_channel:
random atoms at protein density around a 60 Å pore with a constriction), the time to read
the model from PDB, find the axis and compute the profile at 0.2 Å, and for the 40k-atom
channel how the profile time grows as the step shrinks. Target: profile at 0.2 Å on
~40,000 atoms in under 1 s beyond reading the file, on a 2-core machine.

Run: python benchmarks/bench_profile.py [--repeat N]
"""

from __future__ import annotations

import argparse
import os
import tempfile
import time

import numpy as np

import poreprobe as pp
from poreprobe.geometry import synthetic
from poreprobe.io.structure_writer import write_structure


def best_of(repeat: int, func):
    times, result = [], None
    for _ in range(repeat):
        t0 = time.perf_counter()
        result = func()
        times.append(time.perf_counter() - t0)
    return min(times), result


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=3, help="timing repeats (best is shown)")
    args = parser.parse_args()
    print(f"poreprobe {pp.__version__}; {os.cpu_count()} cores; best of {args.repeat}")
    print(
        f"{'atoms':>8} {'read s':>8} {'axis s':>8} {'profile s':>10} {'planes':>7} {'min r A':>8}"
    )
    with tempfile.TemporaryDirectory() as tmp:
        for n_atoms in (10_000, 40_000, 160_000):
            channel = synthetic.shell_channel(n_atoms, seed=1)
            path = os.path.join(tmp, f"channel{n_atoms}.pdb")
            if n_atoms < 100_000:
                write_structure(channel, path)
                t_read, atoms = best_of(1, lambda p=path: pp.read_structure(p))
            else:  # beyond the PDB format's 99,999 atom serials: use the arrays directly
                t_read, atoms = float("nan"), channel
            radii = pp.atom_radii_A(atoms)
            t_axis, axis = best_of(
                args.repeat, lambda a=atoms, r=radii: pp.find_pore_axis(a, radii_A=r)
            )
            t_prof, prof = best_of(
                args.repeat,
                lambda a=atoms, x=axis, r=radii: pp.radius_profile(a, x, radii_A=r, step_A=0.2),
            )
            print(
                f"{n_atoms:>8} {t_read:>8.2f} {t_axis:>8.2f} {t_prof:>10.2f} "
                f"{len(prof.s_A):>7} {prof.min_radius_A:>8.2f}"
            )
    atoms = synthetic.shell_channel(40_000, seed=1)
    axis = pp.find_pore_axis(atoms)
    radii = pp.atom_radii_A(atoms)
    print("\nstep dependence, 40,000 atoms")
    print(f"{'step A':>7} {'planes':>7} {'profile s':>10} {'ms/plane':>9}")
    for step in (1.0, 0.5, 0.2, 0.1, 0.05):
        t_prof, prof = best_of(
            args.repeat, lambda s=step: pp.radius_profile(atoms, axis, radii_A=radii, step_A=s)
        )
        print(
            f"{step:>7.2f} {len(prof.s_A):>7} {t_prof:>10.2f} {1e3 * t_prof / len(prof.s_A):>9.2f}"
        )
    finite = np.isfinite(prof.radius_A).sum()
    print(f"\n(enclosed planes at the finest step: {finite}; times are wall-clock seconds)")


if __name__ == "__main__":
    main()
