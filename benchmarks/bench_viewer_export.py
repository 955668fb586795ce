"""Speed and size of the 3-D exports on large invented channels.

For invented channels of 10k and 40k atoms (poreprobe.geometry.synthetic.shell_channel: random atoms
at protein density around a 60 Å pore with a constriction), prints the time to build the
clearance grid around the pore at 1.0, 0.5 and 0.25 Å spacing, to triangulate the pore
surface for a 1 Å probe, and to write the map, the PLY mesh and the centre line, with
the grid and file sizes; then the time to build the pore tube and write it as PLY and
glTF. Timings on a shared machine are noisy; the best of --repeat runs is shown.

Run: python benchmarks/bench_viewer_export.py [--repeat N]
"""

from __future__ import annotations

import argparse
import os
import tempfile
import time

import numpy as np

import poreprobe as pp
from poreprobe.geometry import synthetic


def best_of(repeat: int, func):
    times, result = [], None
    for _ in range(repeat):
        t0 = time.perf_counter()
        result = func()
        times.append(time.perf_counter() - t0)
    return min(times), result


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=2, help="timing repeats (best is shown)")
    args = parser.parse_args()
    print(f"poreprobe {pp.__version__}; {os.cpu_count()} cores; best of {args.repeat}")
    print(
        f"{'atoms':>7} {'spacing':>8} {'grid points':>12} {'grid s':>7} {'mesh s':>7} "
        f"{'vertices':>9} {'map MB':>7} {'write s':>8} {'ply MB':>7} {'centre s':>8}"
    )
    axis = pp.PoreAxis([0, 0, 0], [0, 0, 1], "user")
    with tempfile.TemporaryDirectory() as tmp:
        for n_atoms in (10_000, 40_000):
            atoms = synthetic.shell_channel(n_atoms)
            radii = pp.atom_radii_A(atoms)
            prof = pp.radius_profile(atoms, axis, radii_A=radii, step_A=0.2)
            t_line, line = best_of(
                args.repeat, lambda a=atoms, p=prof, r=radii: pp.center_line(a, p, radii_A=r)
            )
            for spacing in (1.0, 0.5, 0.25):
                t_grid, grid = best_of(
                    args.repeat,
                    lambda a=atoms, p=prof, r=radii, h=spacing: pp.clearance_grid(
                        a, p, radii_A=r, spacing_A=h
                    ),
                )
                t_mesh, surf = best_of(
                    args.repeat, lambda g=grid, p=prof: pp.pore_surface(g, p, probe_radius_A=1.0)
                )
                map_path = os.path.join(tmp, "pore.ccp4")
                ply_path = os.path.join(tmp, "pore.ply")
                t0 = time.perf_counter()
                pp.write_map(grid, map_path)
                pp.write_mesh(surf, ply_path)
                pp.write_center_line(line, os.path.join(tmp, "centre.cif"))
                t_write = time.perf_counter() - t0
                print(
                    f"{n_atoms:>7} {spacing:>8.2f} {int(np.prod(grid.shape)):>12,} "
                    f"{t_grid:>7.2f} {t_mesh:>7.2f} {len(surf.vertices_A):>9,} "
                    f"{os.path.getsize(map_path) / 1e6:>7.1f} {t_write:>8.2f} "
                    f"{os.path.getsize(ply_path) / 1e6:>7.1f} {t_line:>8.3f}"
                )
            t_tube, tube = best_of(args.repeat, lambda w=line: pp.pore_tube(w))
            sizes = []
            t0 = time.perf_counter()
            for suffix in (".ply", ".glb"):
                path = os.path.join(tmp, "tube" + suffix)
                pp.write_mesh(tube, path)
                sizes.append(f"{suffix[1:]} {os.path.getsize(path) / 1e3:.0f} kB")
            print(
                f"{n_atoms:>7} tube: {len(tube.vertices_A):,} vertices in {t_tube:.3f} s, "
                f"PLY + GLB written in {time.perf_counter() - t0:.2f} s ({', '.join(sizes)})"
            )


if __name__ == "__main__":
    main()
