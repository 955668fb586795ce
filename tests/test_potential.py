"""Screened Coulomb potential: analytic ring of charges and the Debye length."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import constants

from poreprobe.chemistry.potential import (
    debye_length_nm,
    ion_energy,
    ionic_strength_M,
    screened_potential_mV,
)
from poreprobe.errors import InputError


def _ring(n, radius_A, phase=0.3):
    angles = phase + 2 * np.pi * np.arange(n) / n
    return np.stack([radius_A * np.cos(angles), radius_A * np.sin(angles), np.zeros(n)], axis=1)


@pytest.mark.parametrize(
    "n, q, radius_A, eps, lam_A", [(4, -1.0, 4.0, 40.0, 9.6), (5, 0.5, 7.5, 2.0, 3.0)]
)
def test_ring_on_axis_matches_closed_form(n, q, radius_A, eps, lam_A):
    # analytic: phi(z) = n q e exp(-kappa d) / (4 pi eps0 eps_r d), d = sqrt(R^2 + z^2)
    # (Coulomb's law with Debye-Hueckel screening; any electrostatics text)
    z = np.linspace(-20, 20, 81)
    points = np.stack([np.zeros_like(z), np.zeros_like(z), z], axis=1)
    got = screened_potential_mV(
        points, _ring(n, radius_A), np.full(n, q), dielectric=eps, debye_length_A=lam_A
    )
    d_m = np.sqrt(radius_A**2 + z**2) * 1e-10
    kappa = 1 / (lam_A * 1e-10)
    expected_V = (
        n * q * constants.e * np.exp(-kappa * d_m) / (4 * np.pi * constants.epsilon_0 * eps * d_m)
    )
    np.testing.assert_allclose(got, expected_V * 1e3, rtol=1e-6)


def test_unscreened_limit_and_nan_points():
    points = np.array([[0, 0, 3.0], [np.nan, 0, 0]])
    got = screened_potential_mV(points, _ring(4, 4.0), [1, 1, 1, 1], dielectric=1.0)
    d = 5e-10  # 3-4-5 triangle
    expected = 4 * constants.e / (4 * np.pi * constants.epsilon_0 * d) * 1e3
    assert got[0] == pytest.approx(expected, rel=1e-9)
    assert np.isnan(got[1])


def test_debye_length_of_a_tenth_molar_salt():
    # 1:1 electrolyte, 0.1 M, 25 °C: about 0.96 nm (any physical chemistry text;
    # lambda_D = 0.304 / sqrt(I) nm, common practice); computed here from scipy.constants
    # with water's permittivity 78.4 at 25 °C (value from memory)
    eps0, kB, e, NA = constants.epsilon_0, constants.k, constants.e, constants.N_A
    expected_m = np.sqrt(eps0 * 78.4 * kB * 298.15 / (2 * NA * e**2 * 0.1 * 1000))
    assert debye_length_nm(0.1) == pytest.approx(expected_m * 1e9, rel=1e-12)
    assert debye_length_nm(0.1) == pytest.approx(0.96, abs=0.005)
    assert debye_length_nm(0.4) == pytest.approx(debye_length_nm(0.1) / 2, rel=1e-12)


def test_ionic_strength_of_bath_salts():
    assert ionic_strength_M("KCl", 150) == pytest.approx(0.150)
    assert ionic_strength_M("NaCl", 100) == pytest.approx(0.100)
    with pytest.raises(InputError, match="electrolyte must be one of"):
        ionic_strength_M("CaCl2", 100)
    with pytest.raises(InputError, match="conc_mM must be > 0"):
        ionic_strength_M("KCl", -1)


def test_ion_energy_units():
    # 25.693 mV is k_B T / e at 298.15 K (CODATA constants via scipy)
    kt_mV = constants.k * 298.15 / constants.e * 1e3
    kj, kt = ion_energy([kt_mV, -kt_mV], 1)
    np.testing.assert_allclose(kt, [1.0, -1.0], rtol=1e-12)
    np.testing.assert_allclose(kj, np.array([1, -1]) * constants.R * 298.15 / 1e3, rtol=1e-9)


def test_bad_input_is_refused():
    with pytest.raises(InputError, match="dielectric must be between"):
        screened_potential_mV([[0, 0, 0]], [[1, 0, 0]], [1.0], dielectric=0.5)
    with pytest.raises(InputError, match="2 charge positions but 1 charges"):
        screened_potential_mV([[0, 0, 0]], [[1, 0, 0], [2, 0, 0]], [1.0])
    with pytest.raises(InputError, match="points_A must have shape"):
        screened_potential_mV([0, 0, 0], [[1, 0, 0]], [1.0])
