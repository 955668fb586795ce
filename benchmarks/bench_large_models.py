"""Speed and memory on 200,000-atom models, with and without two stray atoms 20,000 Å away.

Models:

* ``invented``: the invented channel of geometry.synthetic.shell_channel with 200,000 atoms;
* ``kcsa+fabs``: PDB 5VKE (KcsA with Fab; Cuello, Cortes and Perozo 2017, eLife 6) built as
  its tetramer (15,700 atoms) and crowded with 50 more copies of its Fab pair around the
  channel, 200,000 atoms in all: 216 chains, the Fab chains forming groups of 54 that must
  not decide the axis;
* each again with two stray atoms 20,000 Å from the model (left out by
  poreprobe.io.sanity.drop_far_atoms, as reading a file does).

Each case runs in its own process; printed: compute time of the profile (axis, pore
presence and radius profile at 0.2 Å, after reading), of the readiness check, and the
peak memory of the process. Targets (issue 15): profile under 3 s, check under 15 s,
memory under 2 GiB whatever stray atoms the file holds.

Run: python benchmarks/bench_large_models.py
"""

from __future__ import annotations

import os
import resource
import subprocess
import sys
import time
import warnings

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
KCSA = os.path.join(HERE, "..", "tests", "data", "5vke.pdb.gz")
N_ATOMS = 200_000


def build(kind: str):
    import poreprobe as pp
    from poreprobe.geometry import synthetic
    from poreprobe.io.structure import concatenate_atoms

    if kind == "invented":
        return synthetic.shell_channel(N_ATOMS, seed=1)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        channel = pp.read_structure(KCSA)
    fab = channel.subset(np.isin(channel.chain, ["A1", "B1"]))
    centre = channel.coords_A[np.char.startswith(channel.chain, "C")].mean(0)
    parts, k = [channel], 0
    rng = np.random.default_rng(0)
    while sum(len(p) for p in parts) + len(fab) <= N_ATOMS:
        k += 1
        ring, slot = divmod(k, 10)
        angle = 2 * np.pi * slot / 10 + 0.3 * ring
        shift = centre - fab.coords_A.mean(0)
        shift += (140 + 70 * ring) * np.array([np.cos(angle), np.sin(angle), 0.0])
        shift += rng.normal(0, 3, 3)
        copy = fab.with_coords(fab.coords_A + shift)
        from dataclasses import replace

        parts.append(replace(copy, chain=np.char.add(copy.chain, f"x{k}")))
    return concatenate_atoms(parts, source="5vke tetramer + Fab copies")


def with_strays(atoms):
    from poreprobe.io.structure import concatenate_atoms, make_atoms

    far = atoms.coords_A.mean(0) + 20_000.0 * np.eye(3)[[2, 0]]
    stray = make_atoms(far, name=["CA", "CA"], resname=["GLY"] * 2, resid=[9000, 9001])
    return concatenate_atoms([atoms, stray])


def run_case(kind: str, strays: bool) -> None:
    """One case in this process: print one line of figures."""
    import poreprobe as pp
    from poreprobe.checks.quality import check_model
    from poreprobe.geometry.pore_presence import pore_presence
    from poreprobe.io.sanity import drop_far_atoms

    atoms = build(kind)
    if strays:
        atoms = with_strays(atoms)
    n_in = len(atoms)
    warnings.simplefilter("ignore")
    # warm the imports (scipy.spatial, the kernel) outside the timings
    small = atoms.subset(np.arange(2000))
    pp.find_pore_axis(small)
    t0 = time.perf_counter()
    atoms = drop_far_atoms(atoms)
    radii = pp.atom_radii_A(atoms)
    axis = pp.find_pore_axis(atoms, radii_A=radii)
    prof = pp.radius_profile(atoms, axis, radii_A=radii, step_A=0.2)
    found = pore_presence(prof, atoms.coords_A, radii).pore_found
    t_prof = time.perf_counter() - t0
    t0 = time.perf_counter()
    report = check_model(atoms, axis=axis, warn=False)
    t_check = time.perf_counter() - t0
    peak_mb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    print(
        f"{kind:>10} {'yes' if strays else 'no':>6} {n_in:>8} {n_in - len(atoms):>6} "
        f"{axis.method:>12} {len(prof.s_A):>6} {prof.min_radius_A:>7.2f} {str(found):>5} "
        f"{t_prof:>9.2f} {t_check:>8.2f} {peak_mb:>8.0f}  {report.verdict.verdict}",
        flush=True,
    )


def main() -> None:
    if len(sys.argv) == 3:
        run_case(sys.argv[1], sys.argv[2] == "strays")
        return
    import poreprobe as pp

    print(f"poreprobe {pp.__version__}; {os.cpu_count()} cores; one process per case")
    print(
        f"{'model':>10} {'strays':>6} {'atoms':>8} {'left':>6} {'axis':>12} {'planes':>6} "
        f"{'min r A':>7} {'pore':>5} {'profile s':>9} {'check s':>8} {'peak MB':>8}  verdict"
    )
    env = dict(os.environ)
    for kind in ("invented", "kcsa+fabs"):
        for strays in (False, True):
            subprocess.run(
                [sys.executable, __file__, kind, "strays" if strays else "clean"],
                check=True,
                env=env,
            )
    print("targets: profile < 3 s, check < 15 s, peak memory < 2048 MB (2 GiB)")


if __name__ == "__main__":
    main()
