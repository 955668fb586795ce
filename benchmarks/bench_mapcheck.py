"""Speed and memory of the density-map check on a large map and model.

Model: the invented demo channel (poreprobe.demo.channels, 2,220 atoms) and eight copies
of it placed around it on a 3 x 3 lattice 64 Å apart (a crowded field of channels),
19,980 atoms; the centre channel's pore is checked. Map: computed from all of them with
gemmi (poreprobe.density.model_map.simulate_map, d = 3 Å, noise 0.2 RMS) on a 300^3 grid
and written as MRC. Prints the wall-clock time of reading the map (gemmi), of the
radius profile (not part of the map check), of the map check itself (model density on
the box around the pore, fit, blobs, side-chain support, map radius profile), and the
peak resident memory of the process. Target (issue 18): read + check under 10 s on 2
cores, memory under 3 GiB. ``--size 200`` runs a 200^3 map of a 2 x 3 lattice (13,320
atoms, at least the 12,000 asked for that case).

Run: python benchmarks/bench_mapcheck.py [--size N] [--repeat N]
"""

from __future__ import annotations

import argparse
import os
import resource
import tempfile
import time
from dataclasses import replace

import numpy as np

import poreprobe as pp
from poreprobe.demo.channels import demo_channel
from poreprobe.density.mapcheck import map_check
from poreprobe.density.model_map import simulate_map
from poreprobe.io.density_map import read_density_map, write_density_map
from poreprobe.io.structure import concatenate_atoms

SPACING_A = 64.0


def crowded_model(n_side: int, n_rows: int | None = None):
    """The demo channel at the centre of an n x m lattice of its copies."""
    one = demo_channel("open")
    parts = [one]
    half = n_side // 2
    n_rows = n_side if n_rows is None else n_rows
    names = iter("EFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz")
    for i in range(-half, n_side - half):
        for j in range(-(n_rows // 2), n_rows - n_rows // 2):
            if i == 0 and j == 0:
                continue
            moved = one.with_coords(one.coords_A + [i * SPACING_A, j * SPACING_A, 0.0])
            chains = {c: next(names) for c in np.unique(one.chain)}
            parts.append(replace(moved, chain=np.array([chains[c] for c in one.chain])))
    return one, concatenate_atoms(parts, source="crowded demo channels (invented)")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--size", type=int, default=300, help="map voxels per side")
    parser.add_argument("--repeat", type=int, default=3)
    args = parser.parse_args()
    centre, model = crowded_model(3) if args.size >= 300 else crowded_model(2, 3)
    lo = model.coords_A.min(axis=0) - 6.0
    hi = model.coords_A.max(axis=0) + 6.0
    voxel = float((hi - lo).max() / (args.size - 1))
    box = (lo, lo + voxel * (args.size - 1))
    t0 = time.perf_counter()
    dmap = simulate_map(model, 3.0, voxel_A=voxel, noise_rms=0.2, box_A=box)
    print(
        f"model: {len(model)} atoms; map {dmap.shape} voxels of {voxel:.3f} Å "
        f"(computed with gemmi in {time.perf_counter() - t0:.1f} s)"
    )
    axis = pp.find_pore_axis(centre)
    with tempfile.TemporaryDirectory() as tmp:
        path = os.path.join(tmp, "crowded.mrc")
        write_density_map(dmap, path)
        del dmap
        t0 = time.perf_counter()
        profile = pp.radius_profile(model, axis, step_A=0.2)
        t_profile = time.perf_counter() - t0
        reads, checks = [], []
        for _ in range(args.repeat):
            t0 = time.perf_counter()
            dmap = read_density_map(path)
            reads.append(time.perf_counter() - t0)
            t0 = time.perf_counter()
            result = map_check(dmap, model, profile, resolution_A=3.0)
            checks.append(time.perf_counter() - t0)
            del dmap
    peak_gib = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024**2
    print(f"radius profile (0.2 Å, {len(profile.s_A)} planes): {t_profile:.2f} s")
    print(f"read map: best {min(reads):.2f} s")
    print(f"map check: best {min(checks):.2f} s (box {result.settings['box_shape']} voxels)")
    print(f"read + check: {min(reads) + min(checks):.2f} s; target < 10 s")
    print(f"peak resident memory: {peak_gib:.2f} GiB; target < 3 GiB")
    print(
        f"blobs {len(result.blobs)}, side chains scored {len(result.support)}, "
        f"unsupported {sum(s.unsupported for s in result.support)}, "
        f"planes outside band {int(np.sum(result.disagree))}"
    )


if __name__ == "__main__":
    main()
