"""The invented demo channels: a fictional tetrameric K+-selective pore and its variants.

The scenario is our own invention. *Ferrokin-1* ("FK1") is a made-up tetrameric
K+-selective channel. Each subunit contributes three parts, each a chain of its own so
that no chain has missing residues:

* an **inner helix** (chains A-D, 25 residues, ideal alpha helices from
  :mod:`poreprobe.helices`): PHE 5 of the four helices forms the narrow **inner
  entrance** at the intracellular end (low s); small residues line a wide **cavity** above;
* a **filter** strand (chains E-H, five glycines) whose backbone carbonyl oxygens point at
  the axis, forming five stacked rings: the narrow **selectivity filter**;
* a short **turret helix** (chains I-L, 12 residues) farther from the axis, lining a wide
  **outer vestibule**;
* an **outer helix** (chains M-P, 25 residues) behind each gap between inner helices and
  a short **pore helix** (chains Q-T) behind each gap between filter strands, so that the
  pore is sealed laterally, as the rest of a channel and the membrane seal a real one.

Variants: ``widened`` (the entrance mutant F5A, an invented "gate-widening" mutant) and
``closed`` (the inner helices' lower ends pulled towards the axis, pinching the
entrance below the dehydrated K+ radius). A breathing trajectory scales the inner helices'
distance from the axis sinusoidally. All geometry is built by this code; no part comes
from a real structure or measurement.
"""

from __future__ import annotations

import functools
from dataclasses import replace

import numpy as np
from scipy.optimize import least_squares

from poreprobe.structure import Atoms, make_atoms

INNER_SEQUENCE = (
    "SER",
    "GLU",
    "ALA",
    "ILE",
    "PHE",
    "LYS",
    "LEU",
    "TRP",
    "ALA",
    "ILE",
    "MET",
    "ALA",
    "LEU",
    "ARG",
    "VAL",
    "GLY",
    "ASN",
    "LEU",
    "ALA",
    "ILE",
    "TYR",
    "SER",
    "THR",
    "HIS",
    "ASP",
)
INNER_FACING = 5
INNER_OFFSET_A = 9.5
CLOSED_SQUEEZE = 0.19
GATE_RESID = 5
FILTER_LENGTH = 5
FILTER_O_RADIUS_A = 2.95
FILTER_RISE_A = 3.4
TURRET_SEQUENCE = (
    "SER",
    "PRO",
    "GLU",
    "ALA",
    "LEU",
    "LYS",
    "ALA",
    "ALA",
    "GLU",
    "SER",
    "ALA",
    "LYS",
)
TURRET_FACING = 7
TURRET_OFFSET_A = 15.0
OUTER_SEQUENCE = (
    "MET",
    "ALA",
    "LEU",
    "ILE",
    "GLY",
    "ALA",
    "VAL",
    "LEU",
    "ALA",
    "PHE",
    "ILE",
    "ALA",
    "GLY",
    "LEU",
    "VAL",
    "ALA",
    "ILE",
    "LEU",
    "GLY",
    "ALA",
    "VAL",
    "PHE",
    "LEU",
    "ALA",
    "LYS",
)
OUTER_FACING = 13
OUTER_OFFSET_A = 17.0
POREHELIX_SEQUENCE = ("ALA", "ALA", "GLY", "ALA", "SER", "ALA", "ALA", "GLY", "ALA", "SER")
POREHELIX_FACING = 6
POREHELIX_OFFSET_A = 11.5
MODEL_NAMES = ("channel", "widened", "closed")

# Peptide geometry (Engh & Huber 1991, values recalled from memory).
_C_O, _C_N, _N_CA, _CA_C = 1.231, 1.329, 1.458, 1.525
_ANGLES_DEG = {"CA-C-N": 116.2, "C-N-CA": 121.7, "N-CA-C": 111.2, "CA-C-O": 120.5}


@functools.cache
def _filter_residue_geometry() -> tuple[np.ndarray, np.ndarray]:
    """N and CA of a filter residue between two carbonyls one rise apart (local frame).

    Local frame: x points away from the axis, z up. Carbonyl C_(j-1) at (r, 0, 0) and
    C_j at (r, 0, rise), both with C=O pointing at -x. N_j and CA_j are fitted so that
    bond lengths and angles are the ideal ones (least squares).
    """
    c_prev = np.array([0.0, 0.0, 0.0])
    c_next = np.array([0.0, 0.0, FILTER_RISE_A])
    o_prev = c_prev + [-_C_O, 0, 0]
    o_next = c_next + [-_C_O, 0, 0]

    def angle(a, b, c):
        u, v = a - b, c - b
        return np.degrees(np.arccos(u @ v / np.linalg.norm(u) / np.linalg.norm(v)))

    def residuals(x):
        n, ca = x[:3], x[3:]
        return np.array(
            [
                np.linalg.norm(n - c_prev) - _C_N,
                np.linalg.norm(ca - n) - _N_CA,
                np.linalg.norm(c_next - ca) - _CA_C,
                (angle(c_prev, n, ca) - _ANGLES_DEG["C-N-CA"]) / 20,
                (angle(n, ca, c_next) - _ANGLES_DEG["N-CA-C"]) / 20,
                (angle(o_prev, c_prev, n) - (360 - _ANGLES_DEG["CA-C-O"] - _ANGLES_DEG["CA-C-N"]))
                / 20,
                (angle(o_next, c_next, ca) - _ANGLES_DEG["CA-C-O"]) / 20,
            ]
        )

    start = np.array([0.7, 0.5, 1.1, 0.8, -0.4, 2.1])
    fit = least_squares(residuals, start, xtol=1e-12, ftol=1e-12)
    return fit.x[:3], fit.x[3:]


def filter_ring(
    *,
    chains=("E", "F", "G", "H"),
    z_start_A: float = 20.0,
    o_radius_A: float = FILTER_O_RADIUS_A,
    first_resid: int = 1,
) -> Atoms:
    """Glycine strands whose carbonyl oxygens form stacked rings around the z axis."""
    n_local, ca_local = _filter_residue_geometry()
    rows, names, resids = [], [], []
    c_radius = o_radius_A + _C_O
    for j in range(FILTER_LENGTH):
        z = z_start_A + j * FILTER_RISE_A
        base = np.array([c_radius, 0.0, z - FILTER_RISE_A])
        n_at, ca_at = base + n_local, base + ca_local
        c_at = np.array([c_radius, 0.0, z])
        o_at = np.array([o_radius_A, 0.0, z])
        rows += [n_at, ca_at, c_at, o_at]
        names += ["N", "CA", "C", "O"]
        resids += [first_resid + j] * 4
    local = np.array(rows)
    coords, chain_ids = [], []
    for k, ch in enumerate(chains):
        angle = 2 * np.pi * k / len(chains) + np.pi / len(chains)
        rot = np.array(
            [[np.cos(angle), -np.sin(angle), 0], [np.sin(angle), np.cos(angle), 0], [0, 0, 1]]
        )
        coords.append(local @ rot.T)
        chain_ids += [ch] * len(local)
    n = len(chain_ids)
    return make_atoms(
        np.vstack(coords),
        element=[nm[0] for nm in names] * len(chains),
        name=names * len(chains),
        resname=["GLY"] * n,
        resid=resids * len(chains),
        chain=chain_ids,
        b_factor=np.full(n, 25.0),
        source="invented filter ring",
    )


def _merge(parts: list[Atoms], source: str) -> Atoms:
    from poreprobe.structure import _ARRAY_FIELDS

    cols = {f: np.concatenate([getattr(p, f) for p in parts]) for f in _ARRAY_FIELDS}
    return replace(parts[0], **cols, source=source, notes=())


def _mutate_to_alanine(atoms: Atoms, resid: int, chains) -> Atoms:
    """Cut the side chains of ``resid`` in ``chains`` back to CB and rename them ALA."""
    target = (atoms.resid == resid) & np.isin(atoms.chain, list(chains))
    keep = ~target | np.isin(atoms.name, ("N", "CA", "C", "O", "CB"))
    out = atoms.subset(keep)
    resname = out.resname.copy()
    resname[(out.resid == resid) & np.isin(out.chain, list(chains))] = "ALA"
    return replace(out, resname=resname)


def build_model(variant: str = "channel") -> Atoms:
    """One invented FK1 model: ``"channel"``, ``"widened"`` (F5A) or ``"closed"``."""
    from poreprobe.helices import helix_bundle

    if variant not in MODEL_NAMES:
        raise ValueError(f"variant must be one of {', '.join(MODEL_NAMES)}, got {variant!r}")
    inner = helix_bundle(
        INNER_SEQUENCE, facing=INNER_FACING, offset_A=INNER_OFFSET_A, chains=("A", "B", "C", "D")
    )
    if variant == "closed":
        inner = _squeezed(inner, CLOSED_SQUEEZE)
    if variant == "widened":
        inner = _mutate_to_alanine(inner, GATE_RESID, ("A", "B", "C", "D"))
    top = inner.coords_A[:, 2].max()
    filt = filter_ring(z_start_A=top + 2.5, first_resid=101)
    turret = helix_bundle(
        TURRET_SEQUENCE,
        facing=TURRET_FACING,
        offset_A=TURRET_OFFSET_A,
        chains=("I", "J", "K", "L"),
        first_resid=201,
    )
    shift = filt.coords_A[:, 2].max() + 3.0 - turret.coords_A[:, 2].min()
    turret = turret.with_coords(turret.coords_A + [0.0, 0.0, shift])
    outer = _turned(
        helix_bundle(
            OUTER_SEQUENCE,
            facing=OUTER_FACING,
            offset_A=OUTER_OFFSET_A,
            chains=("M", "N", "O", "P"),
            first_resid=301,
        )
    )
    pore = helix_bundle(
        POREHELIX_SEQUENCE,
        facing=POREHELIX_FACING,
        offset_A=POREHELIX_OFFSET_A,
        chains=("Q", "R", "S", "T"),
        first_resid=401,
    )
    # the filter strands sit at 45 degrees from the inner helices; the pore helices fill
    # the gaps between the strands, in line with the inner helices
    pore = pore.with_coords(pore.coords_A + [0.0, 0.0, filt.coords_A[:, 2].mean() + 1.0])
    return _merge([inner, filt, turret, outer, pore], f"invented FK1 {variant}")


def _squeezed(atoms: Atoms, fraction: float) -> Atoms:
    """Pull the lower ends towards the axis: x, y scaled from 1 (top) to 1 - fraction (bottom)."""
    z = atoms.coords_A[:, 2]
    scale = 1.0 - fraction * (z.max() - z) / (z.max() - z.min())
    xyz = atoms.coords_A.copy()
    xyz[:, :2] *= scale[:, None]
    return atoms.with_coords(xyz)


def _turned(atoms: Atoms, angle_deg: float = 45.0) -> Atoms:
    """Rotate about z, so a ring of helices sits behind the gaps of another."""
    a = np.radians(angle_deg)
    rot = np.array([[np.cos(a), -np.sin(a), 0], [np.sin(a), np.cos(a), 0], [0, 0, 1]])
    return atoms.with_coords(atoms.coords_A @ rot.T)


def breathing_coordinates(
    atoms: Atoms, n_frames: int = 50, *, amplitude: float = 0.06, period_frames: int = 25
) -> np.ndarray:
    """Frames of an invented breathing motion, shape (n_frames, n_atoms, 3).

    The inner helices (chains A-D) move away from and towards the axis: their x and y
    are scaled by ``1 + amplitude * sin(2 pi t / period)``; everything else stays put.
    """
    t = np.arange(n_frames)
    scale = 1.0 + amplitude * np.sin(2 * np.pi * t / period_frames)
    inner = np.isin(atoms.chain, ["A", "B", "C", "D"])
    frames = np.repeat(atoms.coords_A[None], n_frames, axis=0)
    frames[:, inner, :2] *= scale[:, None, None]
    return frames
