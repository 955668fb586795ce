"""Real channel entries copied into tests/data/, each with its symmetry axis from its chains.

* 3pjs: full-length KcsA with Fabs, PDB 3PJS; Uysal, Cuello, Cortes, Koide, Kossiakoff and
  Perozo 2011, "Mechanism of activation gating in the full-length KcsA K+ channel",
  PNAS 108:11896 (JRNL). Channel chains K, L, M, N (the Fab chains A-D are left out).
* 5klg: CavAb voltage-gated Ca2+ channel, PDB 5KLG; Tang, El-Din, Swanson, Pryde, Scheuer,
  Zheng and Catterall 2016, "Structural basis for inhibition of a voltage-gated Ca2+
  channel by Ca2+ antagonist drugs", Nature 537:117 (JRNL). Chains A-D.
* 6f7a: GLIC, PDB 6F7A; Zabara, Chong, Martiel, Stark, Cromer, Speziale, Drummond and
  Mezzenga 2018, "Design of ultra-swollen lipidic mesophases for the crystallization of
  membrane proteins with large extracellular domains", Nat. Commun. 9:544 (JRNL). Chains A-E.

The axis is passed explicitly: the normal of the polygons formed by the copies of each
residue's CA atom in the subunits, through their centroid (computed here from the chains,
independently of poreprobe's axis finder).
"""

from __future__ import annotations

import functools
import os
import warnings

import numpy as np

import poreprobe as pp

DATA = os.path.join(os.path.dirname(__file__), "data")
CHANNELS = {"3pjs": "KLMN", "5klg": "ABCD", "6f7a": "ABCDE"}


def symmetry_axis(atoms) -> tuple[np.ndarray, np.ndarray]:
    """Point and direction of the symmetry axis of equivalent chains (CA atoms)."""
    ca = atoms.name == "CA"
    chains = np.unique(atoms.chain[ca])
    common = None
    for c in chains:
        ids = set(atoms.resid[ca & (atoms.chain == c)].tolist())
        common = ids if common is None else common & ids
    polygons = []
    for r in sorted(common):
        pts = np.array(
            [atoms.coords_A[ca & (atoms.chain == c) & (atoms.resid == r)][0] for c in chains]
        )
        polygons.append(pts - pts.mean(axis=0))
    normal = np.linalg.svd(np.concatenate(polygons))[2][-1]
    centre = atoms.coords_A[ca & np.isin(atoms.resid, sorted(common))].mean(axis=0)
    return centre, normal


@functools.cache
def channel(name: str, step_A: float = 0.5):
    """(atoms, profile) of a real channel's chains on its symmetry axis."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", pp.QualityWarning)
        atoms = pp.read_structure(os.path.join(DATA, f"{name}.pdb.gz"))
    atoms = atoms.subset(np.isin(atoms.chain, list(CHANNELS[name])))
    point, direction = symmetry_axis(atoms)
    axis = pp.PoreAxis(point, direction, "user")
    return atoms, pp.radius_profile(atoms, axis, step_A=step_A)
