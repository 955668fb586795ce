"""Walled water-sized lumen per entry: the lengths behind the pore-presence threshold.

Prints, for the real entries in tests/data/ and the two small channels of the
MDAnalysisTests data folder, the walled-lumen length (geometry.pore_presence) at plane
spacings of 0.2, 0.5 and 1 Å, the time it takes, and whether a pore is found (threshold
MIN_LENGTH_A = 17 Å). Entries: 5VKE, 3PJS (KcsA), 6F7A (GLIC), 5KLG (CavAb), 4XNW (P2Y1
receptor; assembly 1 and as deposited), 9LYZ (lysozyme), 1GRM (gramicidin A), and the K+
channel inner-helix fragment 2r9r-1b.

Run: python benchmarks/bench_pore_presence.py
"""

from __future__ import annotations

import os
import time
import warnings

import poreprobe as pp
from poreprobe.geometry.pore_presence import MIN_LENGTH_A, pore_presence

HERE = os.path.dirname(os.path.abspath(__file__))
DATA = os.path.join(HERE, "..", "tests", "data")


def cases():
    for name in ("5vke", "3pjs", "6f7a", "5klg", "9lyz"):
        yield name, os.path.join(DATA, f"{name}.pdb.gz"), {}
    yield "4xnw", os.path.join(DATA, "4xnw.pdb.gz"), {}
    yield "4xnw dep.", os.path.join(DATA, "4xnw.pdb.gz"), {"assembly": "deposited"}
    try:
        import MDAnalysisTests
    except ImportError:
        return
    folder = os.path.join(os.path.dirname(MDAnalysisTests.__file__), "data")
    yield "1grm", os.path.join(folder, "1grm_single.pdb"), {}
    yield (
        "2r9r-1b",
        os.path.join(folder, "2r9r-1b.psf"),
        {"trajectory": os.path.join(folder, "2r9r-1b.xyz")},
    )


def main() -> None:
    warnings.simplefilter("ignore")
    print(f"poreprobe {pp.__version__}; pore needs >= {MIN_LENGTH_A:g} Å of walled lumen")
    print(f"{'entry':>10} {'0.2 Å':>7} {'0.5 Å':>7} {'1 Å':>7} {'time s':>7}  pore")
    for name, path, kw in cases():
        atoms = pp.read_structure(path, **kw)
        radii = pp.atom_radii_A(atoms)
        axis = pp.find_pore_axis(atoms, radii_A=radii)
        lengths, found, t_total = [], set(), 0.0
        for step in (0.2, 0.5, 1.0):
            prof = pp.radius_profile(atoms, axis, radii_A=radii, step_A=step)
            t0 = time.perf_counter()
            got = pore_presence(prof, atoms.coords_A, radii)
            t_total += time.perf_counter() - t0
            lengths.append(got.walled_length_A)
            found.add(got.pore_found)
        cells = " ".join(f"{v:7.1f}" for v in lengths)
        print(f"{name:>10} {cells} {t_total:7.2f}  {'/'.join(str(f) for f in sorted(found))}")


if __name__ == "__main__":
    main()
