"""Timings of the readiness report and the model comparison (prints figures).

Run from the repository root: ``python benchmarks/bench_check.py``. Timings on a
shared machine are noisy; each figure is the best of a few runs.
"""

from __future__ import annotations

import os
import sys
import time

import numpy as np

sys.path.insert(0, os.path.join(os.path.dirname(__file__), "..", "tests"))

from helix_channel import build_channel  # noqa: E402

from poreprobe import check_model, compare_models  # noqa: E402
from poreprobe.io.structure import make_atoms  # noqa: E402


def best_of(func, repeat=3):
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        func()
        times.append(time.perf_counter() - start)
    return min(times)


def with_waters(atoms, n_waters, seed=0):
    rng = np.random.default_rng(seed)
    lo, hi = atoms.coords_A.min(0) - 10, atoms.coords_A.max(0) + 10
    waters = rng.uniform(lo, hi, size=(n_waters, 3))
    n = len(atoms)
    return make_atoms(
        np.vstack([atoms.coords_A, waters]),
        element=np.r_[atoms.element, ["O"] * n_waters],
        name=np.r_[atoms.name, ["O"] * n_waters],
        resname=np.r_[atoms.resname, ["HOH"] * n_waters],
        resid=np.r_[atoms.resid, np.arange(n_waters) + 1000],
        chain=np.r_[atoms.chain, ["W"] * n_waters],
        b_factor=np.r_[atoms.b_factor, np.full(n_waters, 30.0)],
        kind=np.r_[atoms.kind, ["water"] * n_waters],
        source=f"{n} + {n_waters} waters",
    )


def slab(spacing_A=2.6, r_in_A=6.0, r_out_A=40.0, half_A=30.0):
    """A thick-walled cylinder of atoms on a 2.6 Å lattice (about protein density, no
    clashes), split into 4 chains; every ring of one chain is one GLY-named residue."""
    rows, chain, resid, names = [], [], [], []
    for zi, z in enumerate(np.arange(-half_A, half_A + 1e-9, spacing_A)):
        for ri, r in enumerate(np.arange(r_in_A, r_out_A + 1e-9, spacing_A)):
            n = max(int(round(2 * np.pi * r / spacing_A)) // 4 * 4, 16)
            a = 2 * np.pi * np.arange(n) / n + (np.pi / n if zi % 2 else 0)
            rows.append(np.column_stack([r * np.cos(a), r * np.sin(a), np.full(n, z)]))
            m = n // 4
            for s in range(4):
                chain += [chr(65 + s)] * m
                resid += [zi * 100 + ri + 1] * m
                names += (["N", "CA", "C", "O"] + [f"C{j}" for j in range(4, m)])[:m]
    xyz = np.vstack(rows)
    order = np.lexsort((np.arange(len(xyz)), np.array(resid), np.array(chain)))
    elem = np.array(["N" if x == "N" else "O" if x == "O" else "C" for x in names])
    return make_atoms(
        xyz[order],
        element=elem[order],
        name=np.array(names)[order],
        resname=["GLY"] * len(xyz),
        resid=np.array(resid)[order],
        chain=np.array(chain)[order],
        b_factor=np.full(len(xyz), 30.0),
        source="lattice slab",
    )


def main():
    tetramer = build_channel()
    with_h = build_channel(hydrogens=True)
    big = slab()
    cases = [
        ("helix tetramer, heavy atoms", tetramer),
        ("helix tetramer, with hydrogens", with_h),
        ("helix tetramer + 30000 waters", with_waters(tetramer, 30000)),
        ("lattice slab, 4 chains", big),
    ]
    print("check_model (profile x 5 incl. sensitivity, lining, all checks):")
    for label, atoms in cases:
        seconds = best_of(lambda a=atoms: check_model(a, warn=False))
        print(f"  {label:34} {len(atoms):7d} atoms  {seconds:6.2f} s")
    seconds = best_of(lambda: compare_models([tetramer, tetramer, tetramer]))
    print(f"compare_models, 3 x helix tetramer   {3 * len(tetramer):7d} atoms  {seconds:6.2f} s")


if __name__ == "__main__":
    main()
