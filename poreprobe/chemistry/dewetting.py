"""Flags for narrow hydrophobic stretches that may hold no liquid water.

Narrow, hydrophobic pores can be functionally closed to ions although they are wider
than a bare ion, because water evaporates from them (hydrophobic gating; Beckstein and
Sansom 2003, PNAS 100:7063, molecular dynamics of model nanopores lined by methane-like
atoms). In that study a pore 0.8 nm long was mostly empty of water below a radius of
about 0.45 nm and filled at 0.7 nm and wider (values from memory; their radius is that
of an idealised pore and maps onto a van der Waals profile radius only roughly).

Rule
----
A plane is **hydrophobic** when at most ``polar_fraction`` (default 0.25) of the heavy
atoms lining it (within the lining distance of its sphere) are nitrogen or oxygen, so
charged and polar side chains and backbone carbonyls make a plane polar. A **flagged
stretch** is a run of consecutive enclosed planes that are hydrophobic and whose
radius is at most ``radius_A`` (default 4.5 Å), at least ``length_A`` long (default
8 Å, the length of the model pores). Defaults follow the study above; the polar
fraction is our choice. A flag asks for the user's judgement (simulation of the water
in the pore, or a model with hydrogens and side-chain rotamers), it is not a verdict.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from poreprobe._validate import check_positive, check_range
from poreprobe.io.structure import Atoms

DEWETTING_RADIUS_A = 4.5
DEWETTING_LENGTH_A = 8.0
POLAR_FRACTION = 0.25
POLAR_ELEMENTS = ("N", "O")
SOURCE = "Beckstein & Sansom 2003, PNAS 100:7063 (hydrophobic gating in model nanopores)"


@dataclass(frozen=True)
class DewettingFlag:
    """One narrow hydrophobic stretch.

    Attributes
    ----------
    s_start_A, s_end_A : float
        First and last plane of the stretch (Å).
    length_A : float
        ``s_end - s_start + step`` (Å).
    min_radius_A, mean_radius_A : float
    polar_fraction : float
        Share of polar (N, O) heavy atoms among those lining the stretch.
    residues : tuple of str
        Lining residues, condensed over chains (``"LEU12 x4"``).
    """

    s_start_A: float
    s_end_A: float
    length_A: float
    min_radius_A: float
    mean_radius_A: float
    polar_fraction: float
    residues: tuple[str, ...]

    @property
    def text(self) -> str:
        return (
            f"s = {self.s_start_A:.1f} to {self.s_end_A:.1f} Å ({self.length_A:.1f} Å), radius "
            f">= {self.min_radius_A:.2f} Å, {100 * self.polar_fraction:.0f} % polar lining atoms: "
            f"{', '.join(self.residues) or 'no residue'}"
        )

    def to_dict(self) -> dict:
        return {
            "s_start_A": self.s_start_A,
            "s_end_A": self.s_end_A,
            "length_A": self.length_A,
            "min_radius_A": self.min_radius_A,
            "mean_radius_A": self.mean_radius_A,
            "polar_fraction": self.polar_fraction,
            "residues": list(self.residues),
            "text": self.text,
        }


def polar_fraction_per_plane(atoms: Atoms, plane_index, atom_index, n_planes: int):
    """Share of N/O atoms among the heavy atoms lining each plane.

    Returns
    -------
    fraction : ndarray of shape (n_planes,)
        NaN where no heavy atom lines the plane.
    n_polar, n_heavy : ndarray of int, shape (n_planes,)
        The counts behind it.
    """
    plane = np.asarray(plane_index, dtype=np.int64)
    atom = np.asarray(atom_index, dtype=np.int64)
    heavy = ~atoms.is_hydrogen[atom]
    polar = heavy & np.isin(atoms.element[atom], POLAR_ELEMENTS)
    n_heavy = np.bincount(plane[heavy], minlength=n_planes)
    n_polar = np.bincount(plane[polar], minlength=n_planes)
    with np.errstate(invalid="ignore", divide="ignore"):
        frac = n_polar / n_heavy
    frac[n_heavy == 0] = np.nan
    return frac, n_polar, n_heavy


def dewetting_flags(
    s_A,
    radius_A,
    polar_fraction,
    plane_residues,
    *,
    radius_threshold_A: float = DEWETTING_RADIUS_A,
    length_A: float = DEWETTING_LENGTH_A,
    max_polar_fraction: float = POLAR_FRACTION,
    plane_polar_counts=None,
) -> tuple[DewettingFlag, ...]:
    """Runs of narrow hydrophobic planes at least ``length_A`` long.

    Parameters
    ----------
    s_A, radius_A, polar_fraction : ndarray of shape (n_planes,)
        Plane positions, profile radius (NaN open) and polar lining fraction (NaN
        where nothing lines the plane, which counts as not hydrophobic).
    plane_residues : sequence of sequence of str
        Labels of the residues lining each plane (``"A:LEU12"``); a stretch lists
        them condensed over chains (``"LEU12 x4"``).
    radius_threshold_A, length_A : float
        Rule thresholds (Å, > 0).
    max_polar_fraction : float
        Largest polar share of a hydrophobic plane (0 to 1).
    plane_polar_counts : tuple of ndarray, optional
        (polar, heavy) atom counts per plane, for the stretch's pooled fraction.

    Returns
    -------
    tuple of DewettingFlag
    """
    r_max = check_positive(radius_threshold_A, "dewetting_radius_A")
    l_min = check_positive(length_A, "dewetting_length_A")
    p_max = check_range(max_polar_fraction, "polar_fraction", 0.0, 1.0)
    s = np.asarray(s_A, dtype=float)
    r = np.asarray(radius_A, dtype=float)
    frac = np.asarray(polar_fraction, dtype=float)
    step = float(np.median(np.diff(s))) if len(s) > 1 else 0.0
    with np.errstate(invalid="ignore"):
        hit = np.isfinite(r) & (r <= r_max) & np.isfinite(frac) & (frac <= p_max)
    edges = np.diff(np.r_[0, hit.astype(int), 0])
    starts, stops = np.flatnonzero(edges == 1), np.flatnonzero(edges == -1)
    out = []
    for i, j in zip(starts, stops, strict=True):
        length = s[j - 1] - s[i] + step
        if length + 1e-9 < l_min:
            continue
        if plane_polar_counts is not None:
            n_pol, n_heavy = (np.asarray(c)[i:j].sum() for c in plane_polar_counts)
            pooled = float(n_pol / n_heavy) if n_heavy else float("nan")
        else:
            pooled = float(np.nanmean(frac[i:j]))
        labels = dict.fromkeys(lab for k in range(i, j) for lab in plane_residues[k])
        counts: dict[str, int] = {}
        for lab in labels:
            key = str(lab).split(":", 1)[-1]
            counts[key] = counts.get(key, 0) + 1
        residues = tuple(f"{k} x{n}" if n > 1 else k for k, n in counts.items())
        out.append(
            DewettingFlag(
                s_start_A=float(s[i]),
                s_end_A=float(s[j - 1]),
                length_A=float(length),
                min_radius_A=float(np.min(r[i:j])),
                mean_radius_A=float(np.mean(r[i:j])),
                polar_fraction=pooled,
                residues=residues,
            )
        )
    return tuple(out)
