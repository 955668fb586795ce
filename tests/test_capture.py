"""Diffusion-limited capture radius from a current: constants, formula, units, uncertainty."""

import math
import warnings

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st
from scipy import constants

from poreprobe.bench.capture import (
    FARADAY_C_PER_MOL,
    A_to_pA,
    angstrom_to_m,
    capture_radius_from_current_A,
    diffusion_limited_current_pA,
    estimate_capture_radius,
    geometry_factor,
    m_to_angstrom,
    mM_to_mol_per_m3,
    mol_per_m3_to_mM,
    pA_to_A,
)
from poreprobe.bench.ions import IONS, nernst_einstein_diffusion_m2_per_s
from poreprobe.errors import InputError, QualityWarning

# --- constants and ion data -----------------------------------------------------------


def test_faraday_and_gas_constants_codata():
    # CODATA 2018 (exact in the 2019 SI): F = 96 485.332 12... C/mol, R = 8.314 462 618...
    # J/(mol K); REFERENCE_VALUES §7, read from scipy.constants.
    assert FARADAY_C_PER_MOL == pytest.approx(96485.33212331001, rel=1e-15)
    assert constants.R == pytest.approx(8.31446261815324, rel=1e-15)
    # Both are exact products of defined constants: F = N_A e, R = N_A k.
    assert FARADAY_C_PER_MOL == pytest.approx(constants.N_A * constants.e, rel=1e-15)
    assert constants.R == pytest.approx(constants.N_A * constants.k, rel=1e-15)


@pytest.mark.parametrize("name", sorted(IONS))
def test_nernst_einstein_matches_crc_diffusion(name):
    # CRC Handbook (Vanýsek), "Ionic conductivity and diffusion at infinite dilution",
    # 25 °C: D from the tabulated λ° by D = R T λ / (z² F²) agrees with the tabulated D
    # (REFERENCE_VALUES §2: within 0.05 %); the check asks for 1 %.
    ion = IONS[name]
    d = nernst_einstein_diffusion_m2_per_s(ion.limiting_conductivity_S_cm2_per_mol, ion.charge)
    assert d == pytest.approx(ion.diffusion_m2_per_s, rel=0.01)
    assert d == pytest.approx(ion.diffusion_m2_per_s, rel=1e-3)


@pytest.mark.parametrize("name, lam", [("Li", 38.6), ("Na", 50.10), ("Cs", 77.2), ("Cl", 76.35)])
def test_nernst_einstein_robinson_stokes(name, lam):
    # Robinson & Stokes, Electrolyte Solutions (1959), App. 6.2 λ° at 25 °C
    # (REFERENCE_VALUES §2), against the CRC tracer D, to 1 %.
    ion = IONS[name]
    d = nernst_einstein_diffusion_m2_per_s(lam, ion.charge)
    assert d == pytest.approx(ion.diffusion_m2_per_s, rel=0.01)


# --- the formula ----------------------------------------------------------------------


def test_worked_example_hemisphere():
    # REFERENCE_VALUES §6 (derived there): D = 1.957e-9 m²/s, a = 5 Å, c = 150 mM, z = 1,
    # J = 2π D a c -> I = 88.98 pA.
    assert diffusion_limited_current_pA(5.0, 1.957e-9, 150.0) == pytest.approx(88.98, abs=0.005)
    assert capture_radius_from_current_A(88.98, 1.957e-9, 150.0) == pytest.approx(5.0, rel=1e-4)


def test_worked_example_disk():
    # REFERENCE_VALUES §6: same inputs, J = 4 D a c (Berg & Purcell 1977) -> I = 56.65 pA.
    i = diffusion_limited_current_pA(5.0, 1.957e-9, 150.0, geometry="disk")
    assert i == pytest.approx(56.65, abs=0.005)
    r = capture_radius_from_current_A(56.65, 1.957e-9, 150.0, geometry="disk")
    assert r == pytest.approx(5.0, rel=1e-4)


def test_by_hand():
    # r = I / (g z F D c) written out in SI units by hand, with F = 96485.33212 C/mol
    # (CODATA 2018, REFERENCE_VALUES §7) and g = 2π.
    i_A, d, c_mol_m3, z = 20e-12, 1.0e-9, 100.0, 2
    expected_m = i_A / (2 * math.pi * z * 96485.33212 * d * c_mol_m3)
    r = capture_radius_from_current_A(20.0, d, 100.0, charge=-2)
    assert r == pytest.approx(expected_m * 1e10, rel=1e-9)


def test_geometry_factors():
    assert geometry_factor("hemisphere") == pytest.approx(2 * math.pi, rel=1e-15)
    assert geometry_factor("disk") == 4.0
    r_h = capture_radius_from_current_A(10.0, 2e-9, 100.0)
    r_d = capture_radius_from_current_A(10.0, 2e-9, 100.0, geometry="disk")
    assert r_d / r_h == pytest.approx(math.pi / 2, rel=1e-12)


@given(
    i=st.floats(1e-3, 1e4),
    d=st.floats(1e-11, 1e-8),
    c=st.floats(1e-2, 3e3),
    z=st.sampled_from([1, -1, 2, 3]),
    geometry=st.sampled_from(["hemisphere", "disk"]),
)
def test_current_radius_round_trip(i, d, c, z, geometry):
    r = capture_radius_from_current_A(i, d, c, charge=z, geometry=geometry)
    back = diffusion_limited_current_pA(r, d, c, charge=z, geometry=geometry)
    assert back == pytest.approx(i, rel=1e-12)


@given(x=st.floats(1e-6, 1e6))
def test_unit_round_trips(x):
    assert float(A_to_pA(pA_to_A(x))) == pytest.approx(x, rel=1e-14)
    assert float(mol_per_m3_to_mM(mM_to_mol_per_m3(x))) == pytest.approx(x, rel=1e-14)
    assert float(m_to_angstrom(angstrom_to_m(x))) == pytest.approx(x, rel=1e-14)


def test_unit_factors():
    # SI prefixes (common practice): 1 pA = 1e-12 A; 1 mM = 1 mol/m³; 1 Å = 1e-10 m.
    assert float(pA_to_A(1.0)) == pytest.approx(1e-12, rel=1e-15)
    assert float(mM_to_mol_per_m3(1.0)) == pytest.approx(1.0, rel=1e-15)
    assert float(angstrom_to_m(1.0)) == pytest.approx(1e-10, rel=1e-15)


@pytest.mark.parametrize(
    "args, kwargs, name",
    [
        ((0.0, 1e-9, 100.0), {}, "current_pA"),
        ((-1.0, 1e-9, 100.0), {}, "current_pA"),
        ((1.0, 0.0, 100.0), {}, "diffusion_m2_per_s"),
        ((1.0, 1e-9, 0.0), {}, "conc_mM"),
        ((1.0, 1e-9, -5.0), {}, "conc_mM"),
        ((1.0, 1e-9, 100.0), {"charge": 0}, "charge"),
        ((1.0, 1e-9, 100.0), {"geometry": "sphere"}, "geometry"),
        ((float("nan"), 1e-9, 100.0), {}, "current_pA"),
    ],
)
def test_bad_input(args, kwargs, name):
    with pytest.raises(InputError, match=name):
        capture_radius_from_current_A(*args, **kwargs)


# --- uncertainty ----------------------------------------------------------------------


def test_first_order_sd_formula():
    est = estimate_capture_radius(
        10.0,
        100.0,
        1e-9,
        current_sd_pA=0.5,
        conc_sd_mM=3.0,
        diffusion_sd_m2_per_s=4e-11,
        mc_samples=1000,
    )
    rel = math.sqrt(0.05**2 + 0.03**2 + 0.04**2)
    assert est.capture_radius_sd_A == pytest.approx(est.capture_radius_A * rel, rel=1e-12)
    shares = est.variance_shares
    assert sum(shares.values()) == pytest.approx(1.0, rel=1e-12)
    assert shares["current"] == pytest.approx(0.05**2 / rel**2, rel=1e-12)


def test_monte_carlo_agrees_with_first_order():
    # Small relative SDs (5 %, 2 %, 3 %): the linear propagation is accurate, so the
    # Monte Carlo SD (200k draws, sampling error ~0.2 %) must agree within 2 %.
    with warnings.catch_warnings():
        warnings.simplefilter("error", QualityWarning)
        est = estimate_capture_radius(
            12.0,
            150.0,
            1.957e-9,
            current_sd_pA=0.6,
            conc_sd_mM=3.0,
            diffusion_sd_m2_per_s=0.03 * 1.957e-9,
            mc_samples=200_000,
        )
    assert est.capture_radius_mc_sd_A == pytest.approx(est.capture_radius_sd_A, rel=0.02)
    assert est.capture_radius_mc_halfwidth68_A == pytest.approx(est.capture_radius_sd_A, rel=0.03)
    assert est.capture_radius_mc_mean_A == pytest.approx(est.capture_radius_A, rel=0.01)
    lo, hi = est.capture_radius_mc_interval_A
    assert lo < est.capture_radius_A < hi
    # A 95 % interval of a near-normal spread is about ±1.96 SD.
    assert (hi - lo) / (2 * 1.96 * est.capture_radius_sd_A) == pytest.approx(1.0, rel=0.05)


def test_monte_carlo_repeats_with_seed():
    kw = dict(current_sd_pA=0.3, conc_sd_mM=5.0, mc_samples=5000)
    a = estimate_capture_radius(5.0, 100.0, 1e-9, seed=7, **kw)
    b = estimate_capture_radius(5.0, 100.0, 1e-9, seed=7, **kw)
    c = estimate_capture_radius(5.0, 100.0, 1e-9, seed=8, **kw)
    assert a.capture_radius_mc_sd_A == b.capture_radius_mc_sd_A
    assert a.capture_radius_mc_sd_A != c.capture_radius_mc_sd_A


def test_no_uncertainty_gives_zero_sd():
    est = estimate_capture_radius(5.0, 100.0, 1e-9, mc_samples=1000)
    assert est.capture_radius_sd_A == 0.0
    assert est.capture_radius_mc_sd_A == pytest.approx(0.0, abs=1e-15)
    assert est.variance_shares == {"current": 0.0, "concentration": 0.0, "diffusion": 0.0}


def test_large_uncertainty_warns():
    # 40 % SD on the concentration: 1/c is strongly non-linear, the two SDs part ways.
    with pytest.warns(QualityWarning):
        est = estimate_capture_radius(5.0, 100.0, 1e-9, conc_sd_mM=40.0, mc_samples=20_000)
    assert est.capture_radius_mc_sd_A > 1.1 * est.capture_radius_sd_A
    assert est.mc_rejected > 0
    # The 68 % half-width stays close to the core spread while the SD is inflated.
    assert est.capture_radius_mc_halfwidth68_A < est.capture_radius_mc_sd_A


def test_capture_rate():
    # 1 pA of a monovalent ion = 1e-12 / e ions per second (common practice).
    est = estimate_capture_radius(1.0, 100.0, 1e-9, mc_samples=1000)
    assert est.capture_rate_per_s == pytest.approx(1e-12 / constants.e, rel=1e-12)


@pytest.mark.parametrize(
    "kwargs",
    [
        {"current_sd_pA": -0.1},
        {"conc_sd_mM": -1.0},
        {"mc_samples": 10},
        {"current_uncertainty": "var"},
        {"seed": -1},
    ],
)
def test_estimate_bad_input(kwargs):
    with pytest.raises(InputError):
        estimate_capture_radius(5.0, 100.0, 1e-9, **kwargs)


def test_estimate_to_dict_is_plain():
    d = estimate_capture_radius(5.0, 100.0, 1e-9, current_sd_pA=0.2, mc_samples=1000).to_dict()
    for key in (
        "capture_radius_A",
        "capture_radius_sd_A",
        "capture_radius_mc_sd_A",
        "diffusion_m2_per_s",
        "geometry",
    ):
        assert key in d
    assert all(not isinstance(v, np.ndarray) for v in d.values())
