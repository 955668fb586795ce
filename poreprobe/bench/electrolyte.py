"""Electrolytic conductivity of KCl and NaCl solutions at 25 °C, from published tables.

The series-resistance model needs the bulk resistivity of the bath. Give it directly
(Ω m or S/m) or name an electrolyte and its concentration; the conductivity is then
interpolated in a tabulated published series.

Tables (25 °C, concentration c in mol/L, conductivity κ in mS/cm)
-----------------------------------------------------------------
* **KCl and NaCl, 0.0005-0.1 mol/L**: CRC Handbook of Chemistry and Physics, table
  "Molar conductivity of aqueous electrolyte solutions" (seven concentrations each);
  values as transcribed in the ``CRC_conductivity.csv`` data file of the pyEQL project
  (KingsburyLab/pyEQL, commit 5a31421; the file has no unit label, mS/cm follows from
  KCl 0.01 mol/L -> Λ = 141.2 S cm² mol⁻¹).
* **KCl, upper anchor**: the NIST primary standard for 1.0 mol/kg KCl,
  κ = 108 620 µS/cm at 25 °C (Wu, Koch, Feng et al. 1994, J. Res. NIST 99:241, as
  tabulated in the CRC table "Standard KCl solutions for calibrating conductivity
  cells"). The molality is converted to c = 0.9693 mol/L with the density of water
  (0.997047 g/cm³ at 25 °C) and an apparent molar volume of KCl
  ``26.85 + 1.9 sqrt(m)`` cm³/mol; both are values from memory, and the
  conversion changes κ by < 0.1 % per 1 cm³/mol error in the molar volume.
* **NaCl, upper anchor**: κ ≈ 85.8 mS/cm at 1.0 mol/L, 25 °C. **This value is from
  memory** (no checked source was at hand); concentrations above 0.1 mol/L interpolate
  towards it and emit a :class:`~poreprobe.errors.QualityWarning`.

Interpolation
-------------
The molar conductivity Λ = κ / c is interpolated with a monotone cubic (PCHIP) in
sqrt(c) (Kohlrausch's square-root law makes Λ nearly linear in sqrt(c) when dilute;
common practice), then κ = Λ c. Concentrations outside 0.5 mM to 1000 mM are refused.
For KCl between 969.3 mM (the last table point) and 1000 mM the cubic is continued a
short way past its end. Temperature is fixed at 25 °C.

Checks (tests/test_electrolyte.py): every tabulated point is reproduced; the NIST
standards at 0.01 and 0.1 mol/kg (Wu, Koch & Pratt 1991, J. Res. NIST 96:191), which are
not in the interpolation table, are matched within 0.1 %.
"""

from __future__ import annotations

import functools
import warnings
from dataclasses import dataclass

import numpy as np

from poreprobe._validate import check_choice, check_positive
from poreprobe.errors import InputError, QualityWarning

TEMPERATURE_C = 25.0
MIN_CONC_MM = 0.5
MAX_CONC_MM = 1000.0

#: Density of water at 25 °C (g/cm³), value from memory.
_WATER_DENSITY_25C = 0.997047
#: Molar mass of KCl (g/mol).
_KCL_MOLAR_MASS = 74.551


def kcl_molarity_mol_per_L(molality_mol_per_kg: float) -> float:  # noqa: N802 (unit suffix)
    """Convert a KCl molality (mol/kg water) to molarity (mol/L solution) at 25 °C.

    Uses the solution volume per kg of water, ``1000 / ρ_water + m φ_V`` with
    ρ_water = 0.997047 g/cm³ and the apparent molar volume
    ``φ_V = 26.85 + 1.9 sqrt(m)`` cm³/mol (both values from memory; good to ~0.1 %
    in c up to 1 mol/kg).

    Parameters
    ----------
    molality_mol_per_kg : float
        Molality (> 0).

    Returns
    -------
    float
        Molarity (mol/L).
    """
    m = check_positive(molality_mol_per_kg, "molality_mol_per_kg")
    volume_cm3 = 1000.0 / _WATER_DENSITY_25C + m * (26.85 + 1.9 * np.sqrt(m))
    return float(m / (volume_cm3 / 1000.0))


@dataclass(frozen=True)
class ConductivityPoint:
    """One tabulated point: concentration (mol/L), conductivity (mS/cm), source."""

    conc_mol_per_L: float
    conductivity_mS_per_cm: float
    source: str
    status: str  # "published" or "memory"


_CRC = "CRC Handbook molar conductivity table, 25 °C (pyEQL CRC_conductivity.csv transcription)"
_NIST_1M = "NIST 1.0 mol/kg KCl standard, 25 °C (Wu et al. 1994, J. Res. NIST 99:241), as mol/L"
_MEMORY = "NaCl 1.0 mol/L value from memory (no checked source at hand)"

#: The tables. Each entry is (c in mol/L, κ in mS/cm, source, status).
CONDUCTIVITY_TABLES: dict[str, tuple[ConductivityPoint, ...]] = {
    "KCl": tuple(
        ConductivityPoint(c, k, _CRC, "published")
        for c, k in (
            (0.0005, 0.07387),
            (0.001, 0.14688),
            (0.005, 0.7169),
            (0.01, 1.412),
            (0.02, 2.7654),
            (0.05, 6.665),
            (0.1, 12.89),
        )
    )
    + (ConductivityPoint(kcl_molarity_mol_per_L(1.0), 108.620, _NIST_1M, "published"),),
    "NaCl": tuple(
        ConductivityPoint(c, k, _CRC, "published")
        for c, k in (
            (0.0005, 0.06222),
            (0.001, 0.12368),
            (0.005, 0.60295),
            (0.01, 1.1845),
            (0.02, 2.314),
            (0.05, 5.5505),
            (0.1, 10.669),
        )
    )
    + (ConductivityPoint(1.0, 85.8, _MEMORY, "memory"),),
}


@functools.cache
def _interpolator(name: str):
    """Monotone cubic of molar conductivity against sqrt(c), built on first use."""
    table = CONDUCTIVITY_TABLES[name]
    c = np.array([p.conc_mol_per_L for p in table])
    kappa = np.array([p.conductivity_mS_per_cm for p in table])
    from scipy.interpolate import PchipInterpolator

    return PchipInterpolator(np.sqrt(c), kappa / c, extrapolate=True)


@dataclass(frozen=True)
class BathConductivity:
    """The conductivity of a named electrolyte at one concentration (25 °C).

    Attributes
    ----------
    electrolyte : str
    conc_mM : float
        Concentration (mmol/L).
    conductivity_S_per_m : float
    resistivity_ohm_m : float
    molar_conductivity_S_cm2_per_mol : float
    temperature_C : float
    source : str
        The tables the value was interpolated from.
    from_memory : bool
        True if a point recalled from memory (not a checked source) shaped the value.
    """

    electrolyte: str
    conc_mM: float
    conductivity_S_per_m: float
    resistivity_ohm_m: float
    molar_conductivity_S_cm2_per_mol: float
    temperature_C: float
    source: str
    from_memory: bool

    def to_dict(self) -> dict:
        return dict(self.__dict__)


def bath_conductivity(electrolyte: str, conc_mM: float) -> BathConductivity:
    """Conductivity of KCl or NaCl at ``conc_mM`` (mmol/L) and 25 °C.

    Parameters
    ----------
    electrolyte : {"KCl", "NaCl"}
    conc_mM : float
        Concentration in mmol/L, between 0.5 and 1000.

    Returns
    -------
    BathConductivity

    Raises
    ------
    InputError
        Unknown electrolyte or concentration out of the tabulated range.

    Warns
    -----
    QualityWarning
        NaCl above 100 mM (the value leans on a point from memory).

    Examples
    --------
    >>> round(bath_conductivity("KCl", 100).conductivity_S_per_m, 4)
    1.289
    """
    name = check_choice(electrolyte, "electrolyte", CONDUCTIVITY_TABLES)
    conc = check_positive(conc_mM, "conc_mM")
    if not MIN_CONC_MM <= conc <= MAX_CONC_MM:
        raise InputError(
            f"conc_mM must be between {MIN_CONC_MM:g} and {MAX_CONC_MM:g} mM for "
            f"{name} (the tabulated range), got {conc_mM!r}"
        )
    c = conc / 1000.0
    table = CONDUCTIVITY_TABLES[name]
    lam = float(_interpolator(name)(np.sqrt(c)))
    kappa_S_per_m = lam * c * 0.1  # mS/cm -> S/m
    upper = [p for p in table if p.conc_mol_per_L > 0.1]
    from_memory = c > 0.1 and any(p.status == "memory" for p in upper)
    if from_memory:
        warnings.warn(
            f"{name} above 100 mM is interpolated towards a value from memory "
            f"({upper[-1].conductivity_mS_per_cm:g} mS/cm at "
            f"{upper[-1].conc_mol_per_L:g} mol/L); give a measured conductivity "
            "if you have one",
            QualityWarning,
            stacklevel=2,
        )
    sources = list(dict.fromkeys(p.source for p in table))
    return BathConductivity(
        electrolyte=name,
        conc_mM=conc,
        conductivity_S_per_m=kappa_S_per_m,
        resistivity_ohm_m=1.0 / kappa_S_per_m,
        molar_conductivity_S_cm2_per_mol=lam,
        temperature_C=TEMPERATURE_C,
        source="; ".join(sources),
        from_memory=from_memory,
    )
