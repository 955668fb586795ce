"""Cost of the pore chemistry next to the radius profile, on the 40,000-atom channel.

The invented 40,000-atom shell channel of benchmarks/bench_profile.py
(geometry.synthetic.shell_channel, seed 1) is given residue names so that it holds
titratable groups like a protein: residues cycle through ASP, GLU, LYS, ARG, HIS, LEU,
ILE, VAL, ALA, SER, and their O and N atoms take the names of the charge-carrying atoms
of their residue type (about 2,500 charged groups). Prints the best-of-N wall-clock
time of the profile at 0.2 Å, of the chemistry (lining, rings, per-level profiles,
screened potential on every plane, dewetting flags) and their ratio; then the whole
``poreprobe profile`` command on the same model written as PDB (read, axis, profile, JSON)
with and without ``--no-chemistry``, and the share the chemistry adds. Target: chemistry
adds under 10 % to the time of ``profile``.

Run: python benchmarks/bench_chemistry.py [--repeat N]
"""

from __future__ import annotations

import argparse
import os
import tempfile

import numpy as np
from bench_profile import best_of  # same folder: run as a script

import poreprobe as pp
from poreprobe.chemistry.chemistry import pore_chemistry
from poreprobe.chemistry.potential import debye_length_nm, ionic_strength_M
from poreprobe.cli.main import main as cli_main
from poreprobe.geometry import synthetic
from poreprobe.io.structure import make_atoms
from poreprobe.io.structure_writer import write_structure

CYCLE = ("ASP", "GLU", "LYS", "ARG", "HIS", "LEU", "ILE", "VAL", "ALA", "SER")
SITE_NAMES = {"ASP": ("OD1", "NX"), "GLU": ("OE1", "NX"), "LYS": ("OX", "NZ")}
SITE_NAMES |= {"ARG": ("OX", "NH1"), "HIS": ("OX", "ND1")}


def protein_like(atoms):
    """The shell channel with residue types and charge-site atom names."""
    resname = np.array(CYCLE)[(atoms.resid - 1) % len(CYCLE)]
    name = atoms.name.astype("<U4").copy()
    for res, (o_name, n_name) in SITE_NAMES.items():
        here = resname == res
        name[here & (atoms.element == "O")] = o_name
        name[here & (atoms.element == "N")] = n_name
    return make_atoms(
        atoms.coords_A,
        element=atoms.element,
        name=name,
        resname=resname,
        resid=atoms.resid,
        chain=atoms.chain,
        source="invented shell channel with residue types",
    )


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=3, help="timing repeats (best is shown)")
    args = parser.parse_args()
    atoms = protein_like(synthetic.shell_channel(40_000, seed=1))
    radii = pp.atom_radii_A(atoms)
    axis = pp.find_pore_axis(atoms, radii_A=radii)
    t_prof, prof = best_of(
        args.repeat, lambda: pp.radius_profile(atoms, axis, radii_A=radii, step_A=0.2)
    )

    pore_chemistry(atoms, prof, radii_A=radii)  # first call: imports (scipy.ndimage)
    t_chem, chem = best_of(args.repeat, lambda: pore_chemistry(atoms, prof, radii_A=radii))
    print(f"poreprobe {pp.__version__}; {os.cpu_count()} cores; best of {args.repeat}")
    print(
        f"{len(atoms)} atoms, {len(prof.s_A)} planes, {len(chem.sites.charge_e)} titratable "
        f"groups, {len(chem.rings)} rings"
    )
    print(f"profile at 0.2 Å: {t_prof:.3f} s")
    print(f"chemistry (lining + rings + levels + potential + flags): {t_chem:.3f} s")
    print(f"ratio chemistry / radius_profile alone: {t_chem / t_prof:.3f}")
    lam = {c: debye_length_nm(ionic_strength_M("KCl", c)) for c in (100, 150)}
    print(f"Debye length of KCl: {lam[100]:.3f} nm at 100 mM, {lam[150]:.3f} nm at 150 mM")
    with tempfile.TemporaryDirectory() as tmp:
        path, out = os.path.join(tmp, "channel.pdb"), os.path.join(tmp, "out.json")
        write_structure(atoms, path)
        argv = ["profile", path, "--quiet", "--json", out]
        cli_main(argv)  # warm the imports
        plain, full = [], []
        for _ in range(args.repeat):  # interleaved, so that load from elsewhere hits both
            plain.append(best_of(1, lambda: cli_main([*argv, "--no-chemistry"]))[0])
            full.append(best_of(1, lambda: cli_main(argv))[0])
        t_plain, t_full = min(plain), min(full)
    print(f"poreprobe profile command: {t_plain:.3f} s without chemistry, {t_full:.3f} s with")
    print(f"chemistry adds {100 * (t_full / t_plain - 1):.1f} % to the command (target < 10 %)")


if __name__ == "__main__":
    main()
