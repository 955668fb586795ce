"""Data for the trajectory tests: an invented breathing pore, and an open multi-model file.

The invented trajectory: a breathing hourglass pore on the move.

Frame t is the hourglass ring stack of :func:`poreprobe.geometry.synthetic.hourglass`
(waist 4 Å, ends 9 Å, 21 rings 1 Å apart, 32 carbon atoms per ring, four chains),
with every ring radius shifted by ``-AMPLITUDE_A * sin(2 pi t / PERIOD)`` (the
breathing), then turned and shifted by a rigid motion drawn from a seeded
generator. Written as a PDB topology plus a DCD trajectory with MDAnalysis.
"""

from __future__ import annotations

import os

import numpy as np

from poreprobe.geometry.synthetic import ring_stack

AMPLITUDE_A = 1.2
PERIOD = 8
N_FRAMES = 12
RING_Z_A = np.arange(-10.0, 10.0 + 1e-9, 1.0)
BASE_RADII_A = 4.0 + 5.0 * (RING_Z_A / 10.0) ** 2


def grm_models_path() -> str:
    """1grm_elNemo_mode7.pdb.bz2 (11 models of gramicidin A along one normal mode), from
    the MDAnalysisTests data folder, reached by its file name."""
    import MDAnalysisTests

    return os.path.join(
        os.path.dirname(MDAnalysisTests.__file__), "data", "1grm_elNemo_mode7.pdb.bz2"
    )


def ring_radii(t: int) -> np.ndarray:
    """Ring radii (Å) of frame ``t``."""
    return BASE_RADII_A - AMPLITUDE_A * np.sin(2 * np.pi * t / PERIOD)


def rigid_motion(t: int) -> tuple[np.ndarray, np.ndarray]:
    """Rotation matrix and translation (Å) of frame ``t`` (seeded, deterministic)."""
    rng = np.random.default_rng(1000 + t)
    axis = rng.normal(size=3)
    axis /= np.linalg.norm(axis)
    angle = rng.uniform(0, np.pi)
    k = np.array([[0, -axis[2], axis[1]], [axis[2], 0, -axis[0]], [-axis[1], axis[0], 0]])
    rot = np.eye(3) + np.sin(angle) * k + (1 - np.cos(angle)) * (k @ k)
    return rot, rng.uniform(-15, 15, size=3)


def frame_coords(t: int) -> np.ndarray:
    """Coordinates of frame ``t`` (after the rigid motion)."""
    stack = ring_stack(ring_radii(t), RING_Z_A, atoms_per_ring=32, chains=4)
    rot, shift = rigid_motion(t)
    return stack.coords_A @ rot.T + shift


def write_trajectory(folder) -> tuple[str, str]:
    """Write ``breathing.pdb`` and ``breathing.dcd`` into ``folder``; return their paths."""
    import warnings

    import MDAnalysis

    from poreprobe.io.structure_writer import write_structure

    stack = ring_stack(ring_radii(0), RING_Z_A, atoms_per_ring=32, chains=4)
    pdb = str(folder / "breathing.pdb")
    dcd = str(folder / "breathing.dcd")
    write_structure(stack.with_coords(frame_coords(0)), pdb)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        universe = MDAnalysis.Universe(pdb)
        with MDAnalysis.Writer(dcd, n_atoms=len(stack)) as out:
            for t in range(N_FRAMES):
                universe.atoms.positions = frame_coords(t)
                out.write(universe.atoms)
    return pdb, dcd
