"""Published hydropathy scales for the 20 standard amino acids.

* ``"kyte-doolittle"`` (default): Kyte and Doolittle 1982, J. Mol. Biol. 157:105-132,
  Table 2 (hydropathy index; positive = hydrophobic, Ile 4.5 to Arg -4.5).
* ``"wimley-white"``: Wimley and White 1996, Nat. Struct. Biol. 3:842-848, the
  whole-residue free energies of transfer from water to the interface of a POPC
  bilayer (ΔG_wif, kcal/mol; negative = prefers the interface, i.e. hydrophobic).
  Asp, Glu, His, Lys and Arg take the values of their charged forms. The values agree
  with our recollection of the paper and with a published transcription; check them
  against the paper before quantitative use.

Every value is reported in the scale's own units and sign. ``hydrophobicity`` turns
them into one sense (positive = hydrophobic) where a comparison needs it.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from poreprobe._validate import check_choice
from poreprobe.io.residues import standard_name

DEFAULT_SCALE = "kyte-doolittle"


@dataclass(frozen=True)
class HydropathyScale:
    """One published scale.

    Attributes
    ----------
    name : str
    values : dict of str to float
        Residue (three-letter code) -> value.
    unit : str
    hydrophobic_sign : float
        +1 if larger values are more hydrophobic, -1 if smaller ones are.
    source : str
    """

    name: str
    values: dict[str, float]
    unit: str
    hydrophobic_sign: float
    source: str

    def to_dict(self) -> dict:
        return {
            "name": self.name,
            "unit": self.unit,
            "hydrophobic_sign": self.hydrophobic_sign,
            "source": self.source,
        }


SCALES: dict[str, HydropathyScale] = {
    "kyte-doolittle": HydropathyScale(
        "kyte-doolittle",
        {
            "ALA": 1.8,
            "ARG": -4.5,
            "ASN": -3.5,
            "ASP": -3.5,
            "CYS": 2.5,
            "GLN": -3.5,
            "GLU": -3.5,
            "GLY": -0.4,
            "HIS": -3.2,
            "ILE": 4.5,
            "LEU": 3.8,
            "LYS": -3.9,
            "MET": 1.9,
            "PHE": 2.8,
            "PRO": -1.6,
            "SER": -0.8,
            "THR": -0.7,
            "TRP": -0.9,
            "TYR": -1.3,
            "VAL": 4.2,
        },
        "hydropathy index (dimensionless)",
        1.0,
        "Kyte & Doolittle 1982, J. Mol. Biol. 157:105, Table 2",
    ),
    "wimley-white": HydropathyScale(
        "wimley-white",
        {
            "ALA": 0.17,
            "ARG": 0.81,
            "ASN": 0.42,
            "ASP": 1.23,
            "CYS": -0.24,
            "GLN": 0.58,
            "GLU": 2.02,
            "GLY": 0.01,
            "HIS": 0.96,
            "ILE": -0.31,
            "LEU": -0.56,
            "LYS": 0.99,
            "MET": -0.23,
            "PHE": -1.13,
            "PRO": 0.45,
            "SER": 0.13,
            "THR": 0.14,
            "TRP": -1.85,
            "TYR": -0.94,
            "VAL": 0.07,
        },
        "kcal/mol (water to POPC interface)",
        -1.0,
        "Wimley & White 1996, Nat. Struct. Biol. 3:842 (whole-residue interface scale, "
        "charged Asp, Glu, His, Lys, Arg)",
    ),
}


def get_scale(scale: str | HydropathyScale) -> HydropathyScale:
    """A scale by name (``"kyte-doolittle"``, ``"wimley-white"``) or the scale itself."""
    if isinstance(scale, HydropathyScale):
        return scale
    return SCALES[check_choice(scale, "hydropathy_scale", SCALES)]


def residue_hydropathy(resnames, scale: str | HydropathyScale = DEFAULT_SCALE) -> np.ndarray:
    """Scale values of residues by name (NaN for anything but the 20 standard ones).

    Parameters
    ----------
    resnames : array_like of str
        Residue names; force-field variants (``HIE``, ``CYX``) count as their parent.
    scale : str or HydropathyScale

    Returns
    -------
    ndarray of float

    Examples
    --------
    >>> residue_hydropathy(["ILE", "ARG", "HOH"]).tolist()
    [4.5, -4.5, nan]
    """
    table = get_scale(scale).values
    names = np.asarray(resnames).astype(str).reshape(-1)
    cache = {n: table.get(standard_name(n) or "", np.nan) for n in np.unique(names)}
    return np.array([cache[n] for n in names], dtype=float)


def hydrophobicity(values, scale: str | HydropathyScale = DEFAULT_SCALE) -> np.ndarray:
    """Scale values turned so that positive always means hydrophobic."""
    return get_scale(scale).hydrophobic_sign * np.asarray(values, dtype=float)


def smooth_profile(s_A, values, window_A: float) -> np.ndarray:
    """Running mean of a per-plane quantity over a window along s, ignoring NaN planes.

    Planes whose window holds no finite value stay NaN. A window no wider than one
    plane spacing returns the values unchanged.
    """
    from scipy.ndimage import uniform_filter1d

    values = np.asarray(values, dtype=float)
    s = np.asarray(s_A, dtype=float)
    if len(s) < 2:
        return values.copy()
    step = float(np.median(np.diff(s)))
    width = int(round(window_A / step))
    if width <= 1:
        return values.copy()
    ok = np.isfinite(values)
    num = uniform_filter1d(np.where(ok, values, 0.0), width, mode="constant")
    den = uniform_filter1d(ok.astype(float), width, mode="constant")
    with np.errstate(invalid="ignore", divide="ignore"):
        out = num / den
    out[den < 1e-9] = np.nan
    return out
