"""How completely a model carries hydrogens: none, partial or full.

A model may hold hydrogens on only some atom types (for example only backbone
amide hydrogens, or only polar hydrogens of a united-atom force field). A profile
"with hydrogens" of such a model is neither the heavy-atom nor the all-atom
answer, so reports must say so.

Rule: each hydrogen is assigned to the nearest heavy atom (within 1.3 Å, about
1.2 x the longest X-H bond of 1.1 Å; common practice). Hydrogens are **full** when
there are at least 0.5 per polymer heavy atom and some sit on carbon; otherwise
**partial**. An all-atom protein model has about one hydrogen per heavy atom; a
model with only amide hydrogens about 0.12, one with polar hydrogens only about
0.2-0.3 (values from memory; the 0.5 cut lies well between).
"""

from __future__ import annotations

from dataclasses import dataclass

from poreprobe.io.structure import Atoms

FULL_RATIO = 0.5
BOND_A = 1.3


@dataclass(frozen=True)
class HydrogenCoverage:
    """Hydrogens of a model's polymer atoms.

    Attributes
    ----------
    status : str
        ``"none"``, ``"partial"`` or ``"full"``.
    n_hydrogens, n_heavy : int
    per_heavy : float
        Hydrogens per heavy atom.
    bonded_to : tuple of str
        Elements of the heavy atoms the hydrogens sit on (sorted).
    """

    status: str
    n_hydrogens: int
    n_heavy: int
    per_heavy: float
    bonded_to: tuple[str, ...]

    def describe(self) -> str:
        if self.status == "none":
            return "no hydrogens in the model"
        on = ", ".join(self.bonded_to) or "no heavy atom"
        text = (
            f"{self.n_hydrogens} hydrogens for {self.n_heavy} heavy atoms "
            f"({self.per_heavy:.2f} per heavy atom), on {on}"
        )
        if self.status == "partial":
            return f"partial hydrogens: {text}; an all-atom model has about one per heavy atom"
        return f"hydrogens: {text}"

    def to_dict(self) -> dict:
        return {
            "status": self.status,
            "n_hydrogens": self.n_hydrogens,
            "n_heavy": self.n_heavy,
            "per_heavy": self.per_heavy,
            "bonded_to": list(self.bonded_to),
        }


def hydrogen_coverage(atoms: Atoms) -> HydrogenCoverage:
    """Whether the polymer atoms of ``atoms`` carry no, partial or full hydrogens."""
    poly = atoms.kind == "polymer"
    h = poly & atoms.is_hydrogen
    heavy = poly & ~atoms.is_hydrogen
    n_h, n_heavy = int(h.sum()), int(heavy.sum())
    if n_h == 0 or n_heavy == 0:
        return HydrogenCoverage("none" if n_h == 0 else "partial", n_h, n_heavy, 0.0, ())
    from scipy.spatial import cKDTree

    dist, idx = cKDTree(atoms.coords_A[heavy]).query(atoms.coords_A[h], k=1)
    parents = atoms.element[heavy][idx[dist <= BOND_A]]
    bonded = tuple(sorted(set(parents.tolist())))
    ratio = n_h / n_heavy
    status = "full" if ratio >= FULL_RATIO and "C" in bonded else "partial"
    return HydrogenCoverage(status, n_h, n_heavy, float(ratio), bonded)
