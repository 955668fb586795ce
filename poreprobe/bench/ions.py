"""Reference data for permeant ions (25 °C, infinite dilution).

Sources (see also the project's reference-value notes):

* Limiting molar conductivity λ° (S cm² mol⁻¹): CRC Handbook of Chemistry and
  Physics, "Ionic conductivity and diffusion at infinite dilution" (Vanýsek),
  92nd ed., pp. 5-77 to 5-79.
* Tracer diffusion coefficient D (10⁻⁹ m² s⁻¹): the same CRC table.
* Crystal (ionic) radius: Shannon 1976, Acta Cryst. A32:751, coordination number 6.
* Hydrated radius: Nightingale 1959, J. Phys. Chem. 63:1381.
* Stokes radius: computed here from D with the Stokes-Einstein relation
  ``r = k_B T / (6 π η D)``, T = 298.15 K, η(water, 25 °C) = 0.8903 mPa s
  (the value used with Robinson & Stokes' data).

Ca²⁺ is not listed: no checked source was at hand for all five quantities.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass

import numpy as np
from scipy import constants

from poreprobe.errors import InputError

#: Borderline band around an ion radius (Å): half the 0.50 Å RMS displacement of atoms
#: with B = 20 Å² (sqrt(B / 8 pi^2), common practice); our choice. Used by the permeation
#: verdict and the trajectory "closed" count (poreprobe.checks.verdict).
BORDERLINE_BAND_A = 0.25

T_REF_K = 298.15
ETA_WATER_25C_MPA_S = 0.8903


@dataclass(frozen=True)
class Ion:
    """Reference properties of one ion.

    Attributes
    ----------
    symbol : str
        ``"K+"``, ``"Cl-"``, ...
    charge : int
        Valence z.
    limiting_conductivity_S_cm2_per_mol : float
        λ° at 25 °C (per mole of ions).
    diffusion_m2_per_s : float
        Tracer diffusion coefficient at 25 °C.
    crystal_radius_A : float
        Shannon ionic radius, CN 6.
    hydrated_radius_A : float
        Nightingale hydrated radius.
    """

    symbol: str
    charge: int
    limiting_conductivity_S_cm2_per_mol: float
    diffusion_m2_per_s: float
    crystal_radius_A: float
    hydrated_radius_A: float

    @property
    def stokes_radius_A(self) -> float:
        """Stokes radius from D at 25 °C: ``k_B T / (6 π η D)`` in Å."""
        eta = ETA_WATER_25C_MPA_S * 1e-3
        return constants.k * T_REF_K / (6 * np.pi * eta * self.diffusion_m2_per_s) * 1e10

    def to_dict(self) -> dict:
        out = asdict(self)
        out["stokes_radius_A"] = self.stokes_radius_A
        return out


#: The table. λ° and D from CRC; radii from Shannon 1976 (CN 6) and Nightingale 1959.
IONS: dict[str, Ion] = {
    "K": Ion("K+", 1, 73.48, 1.957e-9, 1.38, 3.31),
    "Na": Ion("Na+", 1, 50.08, 1.334e-9, 1.02, 3.58),
    "Li": Ion("Li+", 1, 38.66, 1.029e-9, 0.76, 3.82),
    "Rb": Ion("Rb+", 1, 77.8, 2.072e-9, 1.52, 3.29),
    "Cs": Ion("Cs+", 1, 77.2, 2.056e-9, 1.67, 3.29),
    "Cl": Ion("Cl-", -1, 76.31, 2.032e-9, 1.81, 3.32),
}
_ALIASES = {name.lower(): name for name in IONS}
_ALIASES.update({ion.symbol.lower(): name for name, ion in IONS.items()})


def get_ion(name: str) -> Ion:
    """Look up an ion by name (``"K"``, ``"K+"``, ``"cl-"``, case-insensitive)."""
    key = _ALIASES.get(str(name).strip().lower())
    if key is None:
        raise InputError(f"unknown ion {name!r}; known: {', '.join(IONS)}")
    return IONS[key]


def nernst_einstein_diffusion_m2_per_s(
    limiting_conductivity_S_cm2_per_mol: float, charge: int, temperature_K: float = T_REF_K
) -> float:
    """D = R T λ / (z² F²), with λ converted from S cm² mol⁻¹ to S m² mol⁻¹."""
    lam = limiting_conductivity_S_cm2_per_mol * 1e-4
    return (
        constants.R
        * temperature_K
        * lam
        / (charge**2 * constants.physical_constants["Faraday constant"][0] ** 2)
    )
