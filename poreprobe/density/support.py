"""Side-chain support: is each pore-lining side chain in density?

Definition (our own score)
--------------------------
For a residue, let ``obs_sc`` and ``obs_bb`` be the mean map value, above the fitted
offset, at its side-chain and at its backbone heavy atoms (N, CA, C, O, OXT), and
``exp_sc`` and ``exp_bb`` the same means of the model's expected density (fitted scale x
model density; :mod:`poreprobe.density.model_map`). The **support score** is

    (obs_sc / obs_bb) / (exp_sc / exp_bb),

the side chain's density relative to its own backbone, over what the model predicts for
that ratio: about 1 when the side chain sits in density as well as its backbone does,
near 0 when its density is missing, whatever the residue type and the local resolution
the model's prediction already holds. The backbone support ``obs_bb / exp_bb`` is
reported beside it (a poorly resolved backbone makes the ratio unreliable).
A side chain is **unsupported** when its score is below ``min_support`` (default 0.5,
our choice). Atoms **outside density** are side-chain atoms where the map is below the
contour although the model's expected density there is above it.
Glycine (no side-chain heavy atoms) and residues without backbone atoms get no score.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from poreprobe.io.residues import BACKBONE_HEAVY_ATOMS
from poreprobe.io.structure import Atoms

#: Support score below which a side chain is flagged (our choice).
MIN_SUPPORT = 0.5


@dataclass(frozen=True)
class SideChainSupport:
    """Density support of one residue's side chain.

    Attributes
    ----------
    residue : str
        ``"A:LEU12"``.
    s_A : float
        Mean axial position of its side-chain atoms (of its backbone without them; Å).
    score : float
        Support score (module docstring); NaN when it cannot be defined.
    backbone_support : float
        ``obs_bb / exp_bb``.
    n_side_chain_atoms : int
    outside_density : tuple of str
        Side-chain atoms outside density.
    unsupported : bool
    """

    residue: str
    s_A: float
    score: float
    backbone_support: float
    n_side_chain_atoms: int
    outside_density: tuple[str, ...]
    unsupported: bool

    def to_dict(self) -> dict:
        return {
            "residue": self.residue,
            "s_A": self.s_A,
            "score": self.score,
            "backbone_support": self.backbone_support,
            "n_side_chain_atoms": self.n_side_chain_atoms,
            "outside_density": list(self.outside_density),
            "unsupported": self.unsupported,
        }


def side_chain_support(
    atoms: Atoms,
    residues,
    observed: np.ndarray,
    expected: np.ndarray,
    s_A: np.ndarray,
    *,
    offset: float,
    contour: float,
    min_support: float = MIN_SUPPORT,
) -> tuple[SideChainSupport, ...]:
    """Support of the listed residues' side chains.

    Parameters
    ----------
    atoms : Atoms
        The model atoms (hydrogens are skipped).
    residues : sequence of str
        Residue labels to score, in the order reported.
    observed, expected : ndarray (n_atoms,)
        Map value and scaled expected density (map units) at every atom.
    s_A : ndarray (n_atoms,)
        Axial position of every atom (Å).
    offset, contour : float
        Fitted map offset and contour (map units).
    min_support : float
    """
    labels = atoms.residue_labels()
    wanted = np.asarray(list(residues), dtype=str)
    heavy = ~atoms.is_hydrogen & np.isin(labels, wanted) & np.isfinite(observed)
    idx = np.flatnonzero(heavy)
    if len(wanted) == 0:
        return ()
    order = np.argsort(wanted)
    res = order[np.searchsorted(wanted[order], labels[idx])]
    backbone = np.isin(atoms.name[idx], list(BACKBONE_HEAVY_ATOMS))
    obs = observed[idx] - offset
    exp = expected[idx] - offset
    n = len(wanted)

    def mean(values, mask):
        cnt = np.bincount(res[mask], minlength=n)
        tot = np.bincount(res[mask], weights=values[mask], minlength=n)
        with np.errstate(invalid="ignore", divide="ignore"):
            return tot / cnt, cnt

    obs_sc, n_sc = mean(obs, ~backbone)
    obs_bb, n_bb = mean(obs, backbone)
    exp_sc, _ = mean(exp, ~backbone)
    exp_bb, _ = mean(exp, backbone)
    s_sc, _ = mean(s_A[idx], ~backbone)
    s_bb, _ = mean(s_A[idx], backbone)
    s_res = np.where(n_sc > 0, s_sc, s_bb)
    with np.errstate(invalid="ignore", divide="ignore"):
        score = (obs_sc / obs_bb) / (exp_sc / exp_bb)
        bb = obs_bb / exp_bb
    valid = (n_sc > 0) & (n_bb > 0) & (exp_sc > 0) & (exp_bb > 0) & (obs_bb > 0)
    score = np.where(valid, score, np.nan)
    outside = (~backbone) & (observed[idx] < contour) & (expected[idx] >= contour)
    out = []
    for k, lab in enumerate(wanted.tolist()):
        here = outside & (res == k)
        out.append(
            SideChainSupport(
                residue=lab,
                s_A=float(s_res[k]),
                score=float(score[k]),
                backbone_support=float(bb[k]) if n_bb[k] else float("nan"),
                n_side_chain_atoms=int(n_sc[k]),
                outside_density=tuple(atoms.name[idx[here]].tolist()),
                unsupported=bool(np.isfinite(score[k]) and score[k] < min_support),
            )
        )
    return tuple(out)
