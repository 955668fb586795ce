"""Bath conductivity tables (poreprobe.bench.electrolyte)."""

import warnings

import numpy as np
import pytest

from poreprobe.bench.electrolyte import (
    CONDUCTIVITY_TABLES,
    bath_conductivity,
    kcl_molarity_mol_per_L,
)
from poreprobe.errors import InputError, QualityWarning

# CRC Handbook, "Molar conductivity of aqueous electrolyte solutions", 25 °C, c in mol/L,
# κ in mS/cm, as transcribed in pyEQL's CRC_conductivity.csv (KingsburyLab/pyEQL@5a31421);
# REFERENCE_VALUES §3 lists the KCl 0.01 and 0.1 mol/L entries.
CRC_KCL = [
    (0.0005, 0.07387),
    (0.001, 0.14688),
    (0.005, 0.7169),
    (0.01, 1.412),
    (0.02, 2.7654),
    (0.05, 6.665),
    (0.1, 12.89),
]
CRC_NACL = [
    (0.0005, 0.06222),
    (0.001, 0.12368),
    (0.005, 0.60295),
    (0.01, 1.1845),
    (0.02, 2.314),
    (0.05, 5.5505),
    (0.1, 10.669),
]


@pytest.mark.parametrize(("name", "points"), [("KCl", CRC_KCL), ("NaCl", CRC_NACL)])
def test_reproduces_crc_molar_conductivity_points(name, points):
    # Source: CRC Handbook molar conductivity table, 25 °C (values above).
    for conc_mol_per_L, kappa_mS_per_cm in points:
        got = bath_conductivity(name, conc_mol_per_L * 1000).conductivity_S_per_m
        assert got == pytest.approx(kappa_mS_per_cm * 0.1, rel=1e-12)


def test_tenth_molar_kcl_gives_the_standard_value():
    # 0.1 mol/L KCl at 25 °C: 12.89 mS/cm, rho = 0.776 Ohm m
    # (CRC Handbook molar conductivity table; REFERENCE_VALUES §3).
    bath = bath_conductivity("KCl", 100)
    assert bath.conductivity_S_per_m == pytest.approx(1.289, rel=1e-9)
    assert bath.resistivity_ohm_m == pytest.approx(0.776, abs=5e-4)
    assert bath.molar_conductivity_S_cm2_per_mol == pytest.approx(128.9, rel=1e-9)


def test_reproduces_nist_one_molal_standard():
    # NIST 1.0 mol/kg KCl, 25 °C: 108 620 µS/cm (Wu, Koch, Feng et al. 1994, J. Res. NIST
    # 99:241; CRC table "Standard KCl solutions for calibrating conductivity cells").
    conc_mM = kcl_molarity_mol_per_L(1.0) * 1000
    assert bath_conductivity("KCl", conc_mM).conductivity_S_per_m == pytest.approx(
        10.862, rel=1e-12
    )


@pytest.mark.parametrize(("molality", "kappa_uS_per_cm"), [(0.01, 1408.23), (0.1, 12824.6)])
def test_matches_nist_standards_not_in_the_table(molality, kappa_uS_per_cm):
    # NIST standards at 25 °C (Wu, Koch & Pratt 1991, J. Res. NIST 96:191; CRC table
    # "Standard KCl solutions for calibrating conductivity cells"; REFERENCE_VALUES §3).
    # They are not interpolation points, so this checks the interpolation and the
    # molal -> molar conversion (water density and molar volume from memory).
    conc_mM = kcl_molarity_mol_per_L(molality) * 1000
    got = bath_conductivity("KCl", conc_mM).conductivity_S_per_m
    assert got == pytest.approx(kappa_uS_per_cm * 1e-4, rel=1e-3)


def test_one_molar_kcl_near_value_from_memory():
    # ≈ 111.9 mS/cm at 1.0 mol/L, 25 °C: CRC molar conductivity table, value from memory
    # (REFERENCE_VALUES §3, status "memory"; bracketed by 1 m = 108.62 and 1 D = 111.31).
    got = bath_conductivity("KCl", 1000).conductivity_S_per_m
    assert got == pytest.approx(11.19, rel=5e-3)


@pytest.mark.parametrize("name", sorted(CONDUCTIVITY_TABLES))
def test_conductivity_rises_and_molar_conductivity_falls_with_concentration(name):
    # Kohlrausch behaviour of strong electrolytes (common practice).
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", QualityWarning)
        baths = [bath_conductivity(name, c) for c in np.geomspace(0.5, 1000, 60)]
    kappa = np.array([b.conductivity_S_per_m for b in baths])
    lam = np.array([b.molar_conductivity_S_cm2_per_mol for b in baths])
    assert np.all(np.diff(kappa) > 0)
    assert np.all(np.diff(lam) < 0)


def test_nacl_above_tenth_molar_warns_and_says_memory():
    with pytest.warns(QualityWarning, match="memory"):
        bath = bath_conductivity("NaCl", 150)
    assert bath.from_memory
    with warnings.catch_warnings():
        warnings.simplefilter("error", QualityWarning)
        assert not bath_conductivity("NaCl", 100).from_memory
        assert not bath_conductivity("KCl", 150).from_memory


@pytest.mark.parametrize(
    ("name", "conc"),
    [("KCl", 0.1), ("KCl", 1500), ("NaCl", -5), ("CaCl2", 100), ("KCl", float("nan"))],
)
def test_bad_input_is_refused(name, conc):
    with pytest.raises(InputError):
        bath_conductivity(name, conc)


def test_case_insensitive_name():
    assert bath_conductivity("kcl", 10).electrolyte == "KCl"
